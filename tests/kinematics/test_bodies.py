"""Arm bodies, extra cell-file keys and the 2.5-D blocking rule."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from kinematics.bodies import (
    DEFAULT_RADIUS_FRACTION,
    BodyDataError,
    arm_bodies,
    clearance_margin,
    frames,
    link_blocking,
    mechanical_limits,
    passes_over,
    tool_blocking,
    validate_cell_bodies,
)
from kinematics.cell import Arm, Cell, Fixture, Target

SQ = ((0, 0), (1, 0), (1, 1), (0, 1))


def arm(**kw):
    base = dict(link_radii=(30.0, 20.0), link_underside_height=800.0)
    base.update(kw)
    return Arm("a", "A", 0, 0, 0, 400, 250, (-170, 170), (-150, 150), **base)


def test_frames_reproduce_worked_example():
    # Numerical-methods textbook exercise (two-link arm solved by Newton's method, "Fig. 4.8",
    # as posted on a Q&A site): a1 = 1, a2 = 2, q = (4.64, 36.63) deg reaches (2.5, 1.4)
    # to the two decimals given.
    a = Arm("a", "A", 0, 0, 0, 1.0, 2.0, (-180, 180), (-180, 180))
    origin, angle = frames(a, [[4.64, 36.63]])
    assert origin[0, 3] == pytest.approx([2.5, 1.4], abs=5e-3)
    assert angle[0].tolist() == pytest.approx([0, math.radians(4.64)] + [math.radians(41.27)] * 2)


def test_default_bodies_are_capsules_and_the_shoulder_disc():
    ab = arm_bodies(arm())
    assert ab.names == ("link 1", "link 2", "base")
    assert [b.kind for b in ab.bodies] == ["capsule", "capsule", "capsule"]
    assert ab.bodies[0].b == (400.0, 0.0) and ab.bodies[1].b == (250.0, 0.0)
    assert ab.link_radii == (30.0, 20.0) and not ab.radii_assumed
    assert not ab.has_tool
    # The base is the shoulder disc of link 1's radius; link 1 moves outside it.
    base = ab.base
    assert base.a == base.b == (0.0, 0.0) and base.radius == 30.0 and not base.moving
    assert ab.bodies[0].trim == 30.0 and ab.bodies[1].trim == 0.0
    assert ab.moving_indices == (0, 1)


def test_link_one_outline_is_its_capsule_less_the_shoulder_disc():
    # Reference: shapely's difference of a finely polygonised capsule and disc; area by the
    # closed form of a capsule (2 r L + pi r^2) less the disc (pi r^2) it contains, derived.
    from kinematics.bodies import body_rings, pose

    ab = arm_bodies(arm())
    (link1,) = pose(ab, [[35.0, 0.0]], [0])
    ring = body_rings(link1, 512)[0]
    mine = shapely.Polygon(ring)
    assert mine.is_valid
    r, length = 30.0, 400.0
    assert mine.area == pytest.approx(2 * r * length, rel=1e-5)
    seg = shapely.LineString([(0, 0), 400 * np.array([math.cos(0.6109), math.sin(0.6109)])])
    ref = seg.buffer(r, quad_segs=512).difference(shapely.Point(0, 0).buffer(r, quad_segs=512))
    assert mine.symmetric_difference(ref).area < 1e-3 * mine.area


def test_missing_radii_are_assumed_wide_not_zero():
    ab = arm_bodies(arm(link_radii=None))
    assert ab.radii_assumed
    assert ab.link_radii == (DEFAULT_RADIUS_FRACTION * 650,) * 2
    assert ab.min_link_radius > 0


def test_optional_bodies():
    a = arm(
        extra={
            "link_outlines": [None, [[-30, -25], [280, -25], [280, 25], [-30, 25]]],
            "tool_body": {"radius": 25, "outline": [[0, 0], [40, -10], [40, 10]]},
            "base_footprint": [[-80, -80], [-80, 80], [80, 80], [80, -80]],  # clockwise on input
        }
    )
    ab = arm_bodies(a)
    assert ab.names == ("link 1", "link 2", "tool", "tool outline", "base")
    assert ab.has_tool
    base = ab.bodies[-1]
    # Outlines are stored counter-clockwise (positive shoelace area).
    x, y = base.outline[:, 0], base.outline[:, 1]
    assert 0.5 * np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y) > 0
    shapes = ab.shapes([0.0, 0.0])
    assert shapes["link 2"].bounds == pytest.approx((370, -25, 680, 25))
    assert shapes["tool outline"].bounds == pytest.approx((650, -10, 690, 10))


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        ({"tool_body": {"radius": -3}}, "arms[2].tool_body.radius: must be greater than 0, got -3"),
        (
            {"tool_body": {"radius": True}},
            "arms[2].tool_body.radius: must be a finite number, got True",
        ),
        (
            {"tool_body": 5},
            'arms[2].tool_body: must be an object with "radius" and/or "outline", got 5',
        ),
        ({"tool_body": {"radius": 5, "colour": 1}}, "arms[2].tool_body: unknown key 'colour'"),
        ({"link_outlines": [None]}, "arms[2].link_outlines: must be [outline1 or null"),
        (
            {"link_outlines": [None, [[0, 0], [1, 0]]]},
            "arms[2].link_outlines[1]: must be a list of at least 3 [x, y] points",
        ),
        (
            {"base_footprint": [[0, 0], [1, "x"], [0, 1]]},
            "arms[2].base_footprint[1]: must be [x, y] with two finite numbers, got [1, 'x']",
        ),
        (
            {"base_footprint": [[0, 0], [1, 1], [1, 0], [0, 1]]},
            "arms[2].base_footprint: must be a simple polygon that does not cross or touch itself",
        ),
        (
            {"mechanical_limits_deg": [[-160, 160], [-150, 150]]},
            "arms[2].mechanical_limits_deg[0]: must contain the joint limits [-170, 170]",
        ),
        (
            {"mechanical_limits_deg": [[-180, 180]]},
            "arms[2].mechanical_limits_deg: must be [[lo1, hi1], [lo2, hi2]] in degrees",
        ),
    ],
)
def test_bad_extra_keys_give_one_line_messages(extra, message):
    with pytest.raises(BodyDataError) as err:
        arm_bodies(arm(extra=extra), "arms[2]")
        mechanical_limits(arm(extra=extra), "arms[2]")
    text = str(err.value)
    assert text.startswith(message)
    assert "\n" not in text
    assert isinstance(err.value, ValueError)
    assert err.value.json_path.startswith("arms[2]")


def test_validate_cell_bodies_names_the_path():
    good = arm(extra={"mechanical_limits_deg": [[-180, 180], [-160, 160]]})
    assert mechanical_limits(good) == ((-180.0, 180.0), (-160.0, 160.0))
    cell = Cell("c", arms=(good,), targets=(Target("t", "T", 1, 1, "a", {"work_height": "hi"}),))
    with pytest.raises(BodyDataError, match=r"^targets\[0\]\.work_height: must be a finite"):
        validate_cell_bodies(cell)
    with pytest.raises(BodyDataError, match=r"^clearance_margin: must not be negative, got -1"):
        validate_cell_bodies(Cell("c", extra={"clearance_margin": -1}))
    assert clearance_margin(Cell("c")) == 0.0
    validate_cell_bodies(Cell("c", arms=(good,), extra={"clearance_margin": 12.5}))


def test_blocking_rule():
    # The 2.5-D rule as documented: blocks when height >= underside - margin, when a height
    # is missing, and always for keep-out zones; the tool by work height.
    fx = [
        Fixture("t", "Table", "table", SQ, 700.0),
        Fixture("b", "Bin", "fixture", SQ, 760.0),
        Fixture("c", "Column", "column", SQ, 2500.0),
        Fixture("k", "Zone", "keep-out", SQ, 0.0),
        Fixture("u", "Unknown", "feeder", SQ, None),
    ]
    assert link_blocking(arm(), fx).tolist() == [False, False, True, True, True]
    assert link_blocking(arm(), fx, margin=40).tolist() == [False, True, True, True, True]
    assert link_blocking(arm(link_underside_height=None), fx).tolist() == [True] * 5
    assert passes_over(arm(), fx).tolist() == [True, True, False, False, False]
    wh = tool_blocking(arm(), fx, work_height=[700.0, 800.0, np.nan])
    assert wh.tolist() == [
        [False, True, True, True, True],  # the table it works on does not block, the bin does
        [False, False, True, True, True],
        [False, False, True, True, True],  # no work height: the link rule
    ]
