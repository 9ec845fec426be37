"""Faint ghosts of the other layout variants: their bases and the links of the engine's poses.

Reference: the engine's evaluation of each variant's layout (kinematics.evaluate.evaluate_cell
of kinematics.variants.apply_variant) and forward kinematics written out here
(x = a1 cos t1 + a2 cos(t1 + t2), y = a1 sin t1 + a2 sin(t1 + t2); any robotics text, e.g.
Spong, Hutchinson and Vidyasagar, "Robot Modeling and Control", planar elbow manipulator).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from app.canvas import CellCanvas
from app.document import Document
from kinematics.cellfile import load_cell
from kinematics.evaluate import evaluate_cell
from kinematics.layout_keys import variants
from kinematics.variants import apply_variant

PRESS = Path(__file__).resolve().parents[3] / "sample_cells" / "press_tending_variants.cell.json"

pytestmark = pytest.mark.qt_log_ignore("propagateSizeHints")


def _points(path) -> np.ndarray:
    n = path.elementCount()
    return np.array([[path.elementAt(i).x, path.elementAt(i).y] for i in range(n)])


def test_each_variant_is_drawn_where_the_engine_puts_it_and_can_be_hidden(qtbot):
    doc = Document(load_cell(PRESS))
    canvas = CellCanvas(doc)
    qtbot.addWidget(canvas)
    layer = canvas.variant_ghosts
    cell = doc.cell
    names = [v.name for v in variants(cell)]
    assert set(k[0] for k in layer.items) == set(names)
    for name in names:
        vcell = apply_variant(cell, name)
        arm = vcell.arms[0]
        base, links, label = layer.items[(name, arm.id)]
        rect = base.path().boundingRect()
        assert rect.center().x() == pytest.approx(arm.x, abs=1e-6)
        assert name in label.toPlainText()
        ev = evaluate_cell(vcell).arms[arm.id]
        idx = np.flatnonzero(ev.feasible)
        q = np.radians(ev.ik.q_deg[idx, ev.chosen[idx]])
        t1 = math.radians(arm.heading_deg) + q[:, 0]
        t12 = t1 + q[:, 1]
        elbow = np.stack([arm.x + arm.a1 * np.cos(t1), arm.y + arm.a1 * np.sin(t1)], axis=1)
        tool = elbow + arm.a2 * np.stack([np.cos(t12), np.sin(t12)], axis=1)
        want = np.stack([np.tile([arm.x, arm.y], (len(idx), 1)), elbow, tool], axis=1)
        assert np.allclose(_points(links.path()).reshape(-1, 3, 2), want, atol=1e-6)
    legend = canvas.legend.texts()
    assert "Other variants (faint)" in legend
    canvas.actions()["overlay.variants"].setChecked(False)
    assert not layer.items and "Other variants (faint)" not in canvas.legend.texts()
