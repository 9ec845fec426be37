"""A cell as a DXF drawing (written with ezdxf) that a CAD user can overlay on the cell model.

Everything is drawn in the cell's units in the plan (x right, y up), each kind of thing on
its own layer with a colour and a line type (:data:`LAYERS`); ``$INSUNITS`` and
``$MEASUREMENT`` state the cell's units. The exact joint-limit regions are written as
true ARC and CIRCLE entities (:func:`kinematics.regions.config_region_arcs`); spaces and
overlaps, which the engine builds as polygons, as closed LWPOLYLINEs. The safety caution
is written as text on its own layer.

Layer names are ours (``ER-`` for Elbow Room); fixtures go on one layer per kind,
``ER-FIXTURE-<KIND>``, which the DXF importer maps back to that kind.
"""

from __future__ import annotations

import io
import math
import os
import re
from collections.abc import Iterable
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely

from .atomic import write_atomic
from .bodies import arm_bodies
from .caution import CAUTION_LINES
from .cell import Cell
from .dxf_units import cell_insunits, cell_measurement
from .evaluate import CellEvaluation, evaluate_cell
from .fk import joint_points
from .regions import CONFIGURATIONS, arm_regions, config_region_arcs
from .report import REGION_TOL_MM
from .spaces import CellSpaces, cell_spaces
from .sweep import MoveResult, cell_moves

__all__ = [
    "LayerStyle",
    "LAYERS",
    "FIXTURE_LAYER_PREFIX",
    "fixture_layer",
    "cell_dxf",
    "dxf_bytes",
    "write_dxf",
]


@dataclass(frozen=True)
class LayerStyle:
    """A layer of the exported drawing.

    Attributes
    ----------
    name : str
    colour : int
        AutoCAD colour index (ACI) of the layer.
    linetype : str
        One of the standard line types ezdxf sets up (``Continuous``, ``DASHED``, ...).
    what : str
        What the layer holds (for the documentation and the layer description).
    """

    name: str
    colour: int
    linetype: str
    what: str


#: Start of the name of each fixture kind's layer.
FIXTURE_LAYER_PREFIX = "ER-FIXTURE-"

#: Every layer but the fixture layers, in drawing order.
LAYERS = (
    LayerStyle("ER-BASE", 5, "Continuous", "arm bases: shoulder disc, heading line, footprint"),
    LayerStyle("ER-LINK", 5, "Continuous", "links at each feasible target's chosen pose"),
    LayerStyle("ER-TARGET", 3, "Continuous", "feasible targets: POINT and TEXT (the id)"),
    LayerStyle(
        "ER-TARGET-FAILING", 30, "Continuous", "failing targets: POINT and TEXT 'id FAILS: reason'"
    ),
    LayerStyle("ER-REACH", 8, "DASHED", "reach circles: a1 + a2 and |a1 - a2| about each base"),
    LayerStyle(
        "ER-REGION-POSITIVE", 150, "Continuous", "boundary of the positive-elbow joint-limit region"
    ),
    LayerStyle(
        "ER-REGION-NEGATIVE", 40, "DASHED2", "boundary of the negative-elbow joint-limit region"
    ),
    LayerStyle("ER-REGION-BOTH", 6, "DOT", "where both elbow configurations reach (polygon)"),
    LayerStyle("ER-SPACE-MAXIMUM", 9, "PHANTOM", "maximum space (ISO 10218 term)"),
    LayerStyle("ER-SPACE-RESTRICTED", 1, "DASHDOT", "restricted space (ISO 10218 term)"),
    LayerStyle("ER-SPACE-OPERATING", 4, "CENTER", "operating space (ISO 10218 term)"),
    LayerStyle("ER-SHARED-ZONE", 6, "HIDDEN", "overlaps of two arms' spaces (need an interlock)"),
    LayerStyle("ER-CAUTION", 7, "Continuous", "the safety caution and the cell's name"),
)

_FIXTURE_STYLE = {"keep-out": (1, "DASHED"), "guard": (2, "Continuous")}
_FIXTURE_DEFAULT = (8, "Continuous")
_BAD_LAYER_CHARS = re.compile(r'[<>/\\":;?*|=`,\s]+')


def fixture_layer(kind: str) -> str:
    """The layer of fixtures of one kind.

    Examples
    --------
    >>> fixture_layer("conveyor"), fixture_layer("keep-out"), fixture_layer("odd kind/2")
    ('ER-FIXTURE-CONVEYOR', 'ER-FIXTURE-KEEP-OUT', 'ER-FIXTURE-ODD_KIND_2')
    """
    return FIXTURE_LAYER_PREFIX + _BAD_LAYER_CHARS.sub("_", kind.strip()).upper()


def _rings(geom: Any) -> Iterable[np.ndarray]:
    """Exterior and interior rings of every polygon in a geometry, unclosed."""
    if geom is None or geom.is_empty:
        return
    for poly in shapely.get_parts(geom):
        if not isinstance(poly, shapely.Polygon):
            if hasattr(poly, "geoms") or isinstance(poly, shapely.MultiPolygon):
                yield from _rings(poly)
            continue
        for ring in (poly.exterior, *poly.interiors):
            xy = np.asarray(ring.coords)[:-1, :2]
            if len(xy) >= 3:
                yield xy


class _Writer:
    def __init__(self, cell: Cell) -> None:
        import ezdxf

        self.cell = cell
        self.doc = ezdxf.new("R2010", setup=True, units=cell_insunits(cell.units))
        self.doc.header["$INSUNITS"] = cell_insunits(cell.units)
        self.doc.header["$MEASUREMENT"] = cell_measurement(cell.units)
        self.msp = self.doc.modelspace()
        self.count = 0

    def layer(self, style: LayerStyle) -> None:
        if style.name not in self.doc.layers:
            lay = self.doc.layers.add(style.name, color=style.colour, linetype=style.linetype)
            lay.description = style.what

    def poly(self, xy: np.ndarray, layer: str, closed: bool, thickness: float | None = None):
        attribs: dict[str, Any] = {"layer": layer}
        if thickness:
            attribs["thickness"] = float(thickness)
        self.msp.add_lwpolyline(
            [(float(x), float(y)) for x, y in xy], close=closed, dxfattribs=attribs
        )
        self.count += 1

    def text(self, text: str, x: float, y: float, height: float, layer: str) -> None:
        self.msp.add_text(
            text, height=height, dxfattribs={"layer": layer, "insert": (float(x), float(y))}
        )
        self.count += 1


def _extent(cell: Cell) -> tuple[float, float, float, float]:
    xs: list[float] = []
    ys: list[float] = []
    for a in cell.arms:
        xs += [a.x - a.reach_max, a.x + a.reach_max]
        ys += [a.y - a.reach_max, a.y + a.reach_max]
    for f in cell.fixtures:
        xs += [p[0] for p in f.outline]
        ys += [p[1] for p in f.outline]
    for t in cell.targets:
        xs.append(t.x)
        ys.append(t.y)
    if not xs:
        return (0.0, 0.0, 100.0, 100.0)
    return (min(xs), min(ys), max(xs), max(ys))


def cell_dxf(
    cell: Cell,
    evaluation: CellEvaluation | None = None,
    moves: list[MoveResult] | None = None,
    spaces: CellSpaces | None = None,
) -> Any:
    """Build the DXF drawing of a cell.

    Parameters
    ----------
    cell : Cell
    evaluation, moves, spaces : optional
        The cell's evaluation (:func:`kinematics.evaluate.evaluate_cell`), moves
        (:func:`kinematics.sweep.cell_moves`) and spaces (:func:`kinematics.spaces.cell_spaces`)
        when the caller has them; computed otherwise.

    Returns
    -------
    ezdxf.document.Drawing
        R2010; the layers of :data:`LAYERS` and one ``ER-FIXTURE-<KIND>`` layer per kind.

    Examples
    --------
    >>> from kinematics.cell import Arm, Target
    >>> arm = Arm("a", "A", 0, 0, 0, 400, 250, (0, 180), (-120, 120))
    >>> doc = cell_dxf(Cell("demo", arms=(arm,), targets=(Target("t", "T", 450, 180, "a"),)))
    >>> reach = doc.modelspace().query("CIRCLE[layer=='ER-REACH']")
    >>> doc.header["$INSUNITS"], [c.dxf.radius for c in reach]
    (4, [650.0, 150.0])
    """
    ev = evaluation if evaluation is not None else evaluate_cell(cell)
    if spaces is None:
        if moves is None:
            moves = cell_moves(cell, ev)
        spaces = cell_spaces(cell, ev, moves)
    w = _Writer(cell)
    for style in LAYERS:
        w.layer(style)
    x0, y0, x1, y1 = _extent(cell)
    size = max(x1 - x0, y1 - y0, 1e-3)
    text_h = size / 150.0
    w.doc.header["$LTSCALE"] = size / (60.0 * (1.524 if cell.units == "mm" else 0.6))
    msp = w.msp

    for f in cell.fixtures:
        colour, linetype = _FIXTURE_STYLE.get(f.kind, _FIXTURE_DEFAULT)
        name = fixture_layer(f.kind)
        w.layer(LayerStyle(name, colour, linetype, f"fixtures of kind {f.kind}"))
        w.poly(np.asarray(f.outline, dtype=float), name, True, f.height)

    tol = REGION_TOL_MM / cell.mm_per_unit
    for arm in cell.arms:
        bodies = arm_bodies(arm)
        h = math.radians(arm.heading_deg)
        msp.add_circle((arm.x, arm.y), bodies.link_radii[0], dxfattribs={"layer": "ER-BASE"})
        tip = (arm.x + 0.25 * arm.a1 * math.cos(h), arm.y + 0.25 * arm.a1 * math.sin(h))
        msp.add_line((arm.x, arm.y), tip, dxfattribs={"layer": "ER-BASE"})
        w.count += 2
        footprint = arm.extra.get("base_footprint")
        if footprint:
            c, s = math.cos(h), math.sin(h)
            pts = np.asarray(footprint, dtype=float)
            world = np.column_stack(
                (arm.x + c * pts[:, 0] - s * pts[:, 1], arm.y + s * pts[:, 0] + c * pts[:, 1])
            )
            w.poly(world, "ER-BASE", True)
        w.text(arm.name or arm.id, arm.x + text_h, arm.y - 2 * text_h, text_h, "ER-BASE")
        for r in sorted({arm.reach_max, arm.reach_min}, reverse=True):
            if r > 0:
                msp.add_circle((arm.x, arm.y), r, dxfattribs={"layer": "ER-REACH"})
                w.count += 1
        allowed = CONFIGURATIONS if arm.elbow == "any" else (arm.elbow,)
        for config in allowed:
            arcs = config_region_arcs(
                arm.a1, arm.a2, arm.q1_limits, arm.q2_limits, config, arm.x, arm.y, arm.heading_deg
            )
            layer = f"ER-REGION-{config.upper()}"
            for (cx, cy), r, a0, span in zip(
                arcs.centres, arcs.radii, arcs.start_deg, arcs.span_deg
            ):
                if span >= 360.0:
                    msp.add_circle((cx, cy), r, dxfattribs={"layer": layer})
                else:
                    msp.add_arc((cx, cy), r, a0, a0 + span, dxfattribs={"layer": layer})
                w.count += 1
        for ring in _rings(arm_regions(arm, tol=tol).both):
            w.poly(ring, "ER-REGION-BOTH", True)
        sp = spaces.arms.get(arm.id)
        if sp is not None:
            for layer, geom in (
                ("ER-SPACE-MAXIMUM", sp.maximum),
                ("ER-SPACE-RESTRICTED", sp.restricted),
                ("ER-SPACE-OPERATING", sp.operating),
            ):
                for ring in _rings(geom):
                    w.poly(ring, layer, True)

    for zone in spaces.zones:
        for ring in _rings(zone.geometry):
            w.poly(ring, "ER-SHARED-ZONE", True)
        cx, cy = zone.geometry.representative_point().coords[0]
        w.text(
            f"shared {zone.kind} space {zone.arms[0]}/{zone.arms[1]}",
            cx,
            cy,
            text_h,
            "ER-SHARED-ZONE",
        )

    for aev in ev.arms.values():
        arm = aev.arm
        ok = np.flatnonzero(aev.chosen >= 0)
        if ok.size:
            q = aev.ik.q_deg[ok, aev.chosen[ok]]
            base, elbow, tool = joint_points(
                arm.a1, arm.a2, q[:, 0], q[:, 1], arm.x, arm.y, arm.heading_deg
            )
            for b, e, t in zip(base, elbow, tool):
                w.poly(np.array([b, e, t]), "ER-LINK", False)
        for i, tid in enumerate(aev.target_ids):
            x, y = (float(v) for v in aev.xy[i])
            if bool(aev.feasible[i]):
                layer, label = "ER-TARGET", tid
            else:
                layer, label = "ER-TARGET-FAILING", f"{tid} FAILS: {aev.reason(i)}"
            msp.add_point((x, y), dxfattribs={"layer": layer})
            w.count += 1
            w.text(label, x + 0.5 * text_h, y + 0.5 * text_h, text_h, layer)

    lines = [
        f"Elbow Room cell: {cell.name} (units: {cell.units})",
        "SAFETY CAUTION",
        *CAUTION_LINES,
    ]
    for k, line in enumerate(lines):
        w.text(line, x0, y0 - (3 + 1.6 * k) * text_h, text_h, "ER-CAUTION")
    return w.doc


def dxf_bytes(
    cell: Cell,
    evaluation: CellEvaluation | None = None,
    moves: list[MoveResult] | None = None,
    spaces: CellSpaces | None = None,
) -> bytes:
    """The bytes of :func:`cell_dxf` as a DXF file (ASCII, the drawing's encoding)."""
    doc = cell_dxf(cell, evaluation, moves, spaces)
    stream = io.StringIO()
    doc.write(stream)
    return doc.encode(stream.getvalue())


def write_dxf(
    cell: Cell,
    path: str | os.PathLike[str],
    evaluation: CellEvaluation | None = None,
    moves: list[MoveResult] | None = None,
    spaces: CellSpaces | None = None,
) -> None:
    """Write the DXF drawing of a cell atomically (:func:`kinematics.atomic.write_atomic`).

    Raises
    ------
    OSError
        When the file cannot be written; an existing file is then unchanged.
    """
    write_atomic(path, dxf_bytes(cell, evaluation, moves, spaces))
