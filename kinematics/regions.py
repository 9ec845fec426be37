"""Work envelopes of a planar two-link arm as shapely polygons in world coordinates.

For one elbow configuration the map ``(q1, q2) -> tool point`` is one-to-one on
the joint-limit box as long as the shoulder span is below a full turn, so the
image of the box is bounded by the images of its four edges. Those edges map to
circle arcs: a ``q2 = const`` edge to an arc about the base of radius
``r(q2) = sqrt(a1**2 + a2**2 + 2*a1*a2*cos(q2))``, a ``q1 = const`` edge to an
arc of radius ``a2`` about the elbow point. Each arc is replaced by a polyline
whose vertices sit slightly outside the circle so that the chords straddle it:
the polyline encloses the same area as the arc (so polygon areas match the
closed form to rounding) and stays within ``tol`` of it everywhere.

Angles are in degrees, counter-clockwise positive; q1 is measured from the base
heading, q2 from link 1. The "positive" elbow configuration uses elbow angles
in [0, 180], the "negative" one [-180, 0]; elbow limits are compared through
their representatives ``q2 + k*360``.

Pieces thinner than ``tol/1000`` (e.g. elbow intervals of a millionth of a
degree) are dropped as meaningless. Near-degenerate slivers (spans of about a
degree with link ratios beyond 1:20) may need a validity repair that keeps
the outline within ``tol`` but not the exact area.

Performance note: building every region of one arm (:func:`arm_regions`,
550-600 mm of reach, tol 0.05 mm) measured 2.6-3.8 ms on one core of the
development machine, well under the 50 ms budget for interactive redraws.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import MultiPolygon, Polygon

from kinematics.cell import ELBOW_SETTINGS, Arm
from kinematics.checks import check_choice

__all__ = [
    "CONFIGURATIONS",
    "ArmRegions",
    "reach_annulus",
    "config_region",
    "config_region_area",
    "reachable_region",
    "both_elbows_region",
    "comfort_region",
    "arm_regions",
    "RegionArcs",
    "config_region_arcs",
]

#: The two elbow configurations, each with the sign of its elbow angle.
CONFIGURATIONS = ("positive", "negative")
_SIGN = {"positive": 1.0, "negative": -1.0}

Region = Polygon | MultiPolygon

# Largest angular step of any polyline, so coarse tolerances still give sane outlines.
_MAX_STEP_DEG = 15.0
# Intervals shorter than this (degrees) enclose no area and are dropped.
_EPS_DEG = 1e-12
# Corners sharper than this (degrees) keep the next base-arc vertex on the arc.
_SHARP_DEG = 30.0
# Pieces thinner than this fraction of tol are dropped: below any physical meaning.
_SLIVER = 1e-3


# --------------------------------------------------------------------- input checks


def _check_lengths(a1: float, a2: float, tol: float | None = None) -> None:
    for name, v in (("a1", a1), ("a2", a2)):
        if not (isinstance(v, int | float) and math.isfinite(v) and v > 0):
            raise ValueError(f"link length {name} must be a finite number > 0, got {v!r}")
    if tol is not None and not (isinstance(tol, int | float) and math.isfinite(tol) and tol > 0):
        raise ValueError(f"tol must be a finite number > 0, got {tol!r}")


def _check_limits(name: str, limits: Sequence[float]) -> tuple[float, float]:
    try:
        lo, hi = (float(v) for v in limits)
    except (TypeError, ValueError):
        raise ValueError(f"{name} must be a pair (min, max) of numbers, got {limits!r}") from None
    if not (math.isfinite(lo) and math.isfinite(hi)) or lo > hi:
        raise ValueError(f"{name} must be finite with min <= max, got {limits!r}")
    return lo, hi


def _check_elbow(elbow: str, allowed: Sequence[str]) -> None:
    check_choice("elbow", elbow, allowed)


def _allowed(elbow: str) -> tuple[str, ...]:
    return CONFIGURATIONS if elbow == "any" else (elbow,)


# ------------------------------------------------------------------------ geometry


def _cosd(deg: float) -> float:
    # Exact values at quarter turns keep shared corners bit-identical across configurations.
    d = deg % 360.0
    if d in (90.0, 270.0):
        return 0.0
    return math.cos(math.radians(d))


def _sind(deg: float) -> float:
    d = deg % 360.0
    if d in (0.0, 180.0):
        return 0.0
    return math.sin(math.radians(d))


def _radius(a1: float, a2: float, u: float) -> float:
    """Distance base to tool for an elbow angle of magnitude ``u`` in [0, 180]."""
    if u == 0.0:
        return a1 + a2
    if u == 180.0:
        return abs(a1 - a2)
    # Half-angle form avoids cancellation near the inner fold.
    c = _cosd(u / 2.0)
    return math.sqrt((a1 - a2) ** 2 + 4.0 * a1 * a2 * c * c)


def _beta(a1: float, a2: float, u: float) -> float:
    """Angle (degrees) from link 1 to the base-to-tool line, for elbow magnitude ``u``."""
    if u == 0.0:
        return 0.0
    if a1 == a2:
        return u / 2.0
    if u == 180.0:
        # Same canonical value for both configurations, so the shared inner arc is identical.
        return 180.0 if a1 < a2 else 0.0
    return math.degrees(math.atan2(a2 * _sind(u), a1 + a2 * _cosd(u)))


def _arc_plan(
    radius: float, span_rad: float, tol: float, pin0: bool = False, pin1: bool = False
) -> np.ndarray:
    """Radii of the interior vertices of an arc polyline with exact end points.

    Free interior vertices lie on one circle of radius ``rho`` chosen so the
    polyline encloses exactly the sector's area about the arc's centre (its
    chords straddle the arc); ``pin0`` / ``pin1`` keep the vertex next to the
    start / end on the arc itself, for sharp corners where an outward vertex
    could cross the neighbouring edge. The count is the smallest keeping the
    polyline within ``tol`` of the arc; ``len(result) + 1`` is the segment count.
    """
    step0 = min(math.sqrt(12.0 * tol / radius), math.radians(_MAX_STEP_DEG))
    n = max(2 + int(pin0) + int(pin1), math.ceil(span_rad / step0))
    while True:
        d = span_rad / n
        free = np.ones(n - 1, dtype=bool)
        if pin0:
            free[0] = False
        if pin1:
            free[-1] = False
        # Fan area about the centre, sum of r_i * r_(i+1), as a quadratic in rho.
        f = np.concatenate(([False], free, [False]))
        n_ff = int(np.sum(f[:-1] & f[1:]))
        n_fp = int(np.sum(f[:-1] ^ f[1:]))
        n_pp = n - n_ff - n_fp
        target = radius * radius * (n * d / math.sin(d) - n_pp)
        if n_ff:
            b = n_fp * radius
            rho = (-b + math.sqrt(b * b + 4.0 * n_ff * target)) / (2.0 * n_ff)
        else:
            rho = target / (n_fp * radius)
        # Worst deviations: free vertices (outside), then chords of each kind (inside).
        fp_chord = math.hypot(rho - radius, 2.0 * math.sqrt(radius * rho) * math.sin(d / 2.0))
        dev = [rho - radius, radius - radius * rho * math.sin(d) / fp_chord]
        if n_ff:
            dev.append(radius - rho * math.cos(d / 2.0))
        if n_pp:
            dev.append(radius * (1.0 - math.cos(d / 2.0)))
        if max(dev) <= tol:
            return np.where(free, rho, radius)
        n += max(1, n // 8)


def _arc_interior(
    cx: float,
    cy: float,
    radius: float,
    start_deg: float,
    span_deg: float,
    tol: float,
    rev: bool,
    pin0: bool = False,
    pin1: bool = False,
) -> tuple[np.ndarray, float]:
    """Interior polyline vertices of the arc from ``start_deg`` through ``+span_deg``,
    and the angular step in degrees.

    Vertices are always generated in increasing angle and reversed on request,
    so the same arc traversed either way yields bit-identical points.
    """
    span = math.radians(span_deg)
    # A chord this close to its arc needs no interior vertex (and would divide by ~0).
    if radius * (1.0 - math.cos(0.5 * span)) <= 1e-6 * tol:
        return np.empty((0, 2)), span_deg
    rho = _arc_plan(radius, span, tol, pin0, pin1)
    n = len(rho) + 1
    t = math.radians(start_deg % 360.0) + span * np.arange(1, n) / n
    pts = np.column_stack((cx + rho * np.cos(t), cy + rho * np.sin(t)))
    return (pts[::-1] if rev else pts), span_deg / n


def _circle(cx: float, cy: float, radius: float, start_deg: float, tol: float) -> np.ndarray:
    """Closed regular polygon enclosing exactly the circle's area, within ``tol`` of it."""
    step0 = min(math.sqrt(12.0 * tol / radius), math.radians(_MAX_STEP_DEG))
    n = max(8, math.ceil(2.0 * math.pi / step0))
    while True:
        d = 2.0 * math.pi / n
        rho = radius * math.sqrt(d / math.sin(d))
        if max(rho - radius, radius - rho * math.cos(d / 2.0)) <= tol:
            break
        n += max(1, n // 8)
    t = math.radians(start_deg % 360.0) + d * np.arange(n)
    return np.column_stack((cx + rho * np.cos(t), cy + rho * np.sin(t)))


def _ring_polygon(
    cx: float, cy: float, r_out: float, r_in: float, start_deg: float, tol: float
) -> Polygon:
    outer = _circle(cx, cy, r_out, start_deg, tol)
    if r_in <= 0.0:
        return Polygon(outer)
    return Polygon(outer, [_circle(cx, cy, r_in, start_deg, tol)[::-1]])


def _dedupe(pts: np.ndarray) -> np.ndarray:
    keep = np.ones(len(pts), dtype=bool)
    keep[1:] = np.any(pts[1:] != pts[:-1], axis=1)
    pts = pts[keep]
    if len(pts) > 1 and np.array_equal(pts[0], pts[-1]):
        pts = pts[:-1]
    return pts


def _elbow_samples(
    a1: float,
    a2: float,
    ulo: float,
    uhi: float,
    gap: float,
    tol: float,
    end_extent: tuple[float, float] = (math.inf, math.inf),
) -> np.ndarray:
    """Interior elbow angles (degrees, increasing) at which the ``q1 = const`` edges are cut.

    The two such edges are copies of one another rotated about the base, so
    chords placed at the same elbow angles on both enclose exactly canceling
    slivers: points sit on the arc and only the sagitta bound sets the step.
    A chord whose distance from the base is not monotone (near the tangent
    ends of arms with a1 < a2) would cross its rotated copy when the copy is
    closer than the chord's angular extent, so such chords are halved until
    they are short compared with ``gap`` (the shoulder span or its
    complement, in degrees). ``end_extent`` caps the angle about the base of
    the first and last chord, so at a sharp corner they stay inside the
    neighbouring edge's first chord.
    """
    du = math.radians(uhi - ulo)
    step = min(2.0 * math.acos(max(-1.0, 1.0 - tol / a2)), math.radians(_MAX_STEP_DEG))
    u = np.linspace(ulo, uhi, max(1, math.ceil(du / step)) + 1)
    for _ in range(80):
        t = np.radians(u)
        p = np.column_stack((a1 + a2 * np.cos(t), a2 * np.sin(t)))
        d = p[1:] - p[:-1]
        d0, d1 = np.sum(d * p[:-1], axis=1), np.sum(d * p[1:], axis=1)
        extent = np.degrees(
            np.abs(np.arctan2(p[1:, 1], p[1:, 0]) - np.arctan2(p[:-1, 1], p[:-1, 0]))
        )
        bad = (d0 * d1 < 0.0) & (extent > 0.25 * gap)
        bad[0] |= extent[0] > end_extent[0]
        bad[-1] |= extent[-1] > end_extent[1]
        bad &= u[1:] - u[:-1] > 1e-9
        if not bad.any():
            break
        u = np.sort(np.concatenate((u, 0.5 * (u[:-1][bad] + u[1:][bad]))))
    return u[1:-1]


def _corner_angle(a1: float, a2: float, u: float) -> float:
    """Angle (degrees, 0..180) between the shoulder and elbow directions of motion."""
    r = _radius(a1, a2, u)
    if r == 0.0:
        return 90.0
    return math.degrees(math.acos(max(-1.0, min(1.0, (a1 * _cosd(u) + a2) / r))))


def _box_polygon(
    a1: float,
    a2: float,
    q1lo: float,
    q1hi: float,
    ulo: float,
    uhi: float,
    sign: float,
    x: float,
    y: float,
    h: float,
    tols: tuple[float, float, float],
) -> Polygon:
    """Image of the box [q1lo, q1hi] x (sign * [ulo, uhi]) for a shoulder span below a turn.

    ``tols`` are the outline tolerances of the ``q2 = lo`` edge, the ``q2 = hi``
    edge and the two ``q1 = const`` edges.
    """
    tol_lo, tol_hi, tol_el = tols
    span1 = q1hi - q1lo
    rlo, rhi = _radius(a1, a2, ulo), _radius(a1, a2, uhi)
    blo, bhi = sign * _beta(a1, a2, ulo), sign * _beta(a1, a2, uhi)
    if sign < 0 and uhi == 180.0:
        bhi = -bhi  # canonical inner-fold angle, shared with the positive configuration

    def corner(q1: float, r: float, b: float) -> np.ndarray:
        ang = h + q1 + b
        return np.array([[x + r * _cosd(ang), y + r * _sind(ang)]])

    c00, c10 = corner(q1lo, rlo, blo), corner(q1hi, rlo, blo)
    c11, c01 = corner(q1hi, rhi, bhi), corner(q1lo, rhi, bhi)
    ex_hi = (x + a1 * _cosd(h + q1hi), y + a1 * _sind(h + q1hi))
    ex_lo = (x + a1 * _cosd(h + q1lo), y + a1 * _sind(h + q1lo))
    # Corner angles between the edges: small ones (cusps at q2 = 0 or 180) need care.
    th_hi = _corner_angle(a1, a2, uhi)
    sharp11, sharp01 = th_hi < _SHARP_DEG, 180.0 - th_hi < _SHARP_DEG
    # Edge q2 = lo (about the base), then q1 = hi (about its elbow), q2 = hi, q1 = lo.
    # Outward vertices keep the outer edge's chords clear of a sharp corner; the inner edge
    # pins its vertex next to one instead, since its outward side is the region.
    e1, _ = _arc_interior(x, y, rlo, h + q1lo + blo, span1, tol_lo, rev=False)
    e3, d3 = _arc_interior(
        x, y, rhi, h + q1lo + bhi, span1, tol_hi, rev=True, pin0=sharp01, pin1=sharp11
    )
    ext = (math.inf, 0.5 * d3 if (sharp01 or sharp11) else math.inf)
    us = sign * _elbow_samples(a1, a2, ulo, uhi, min(span1, 360.0 - span1), tol_el, ext)

    def elbow_arc(ex: tuple[float, float], q1: float) -> np.ndarray:
        t = np.radians((h + q1 + us) % 360.0)
        return np.column_stack((ex[0] + a2 * np.cos(t), ex[1] + a2 * np.sin(t)))

    e2 = elbow_arc(ex_hi, q1hi)
    e4 = elbow_arc(ex_lo, q1lo)[::-1]
    ring = _dedupe(np.concatenate((c00, e1, c10, e2, c11, e3, c01, e4)))
    if len(ring) < 3:
        return Polygon()
    return Polygon(ring)


def _q2_sets(
    q2lo: float, q2hi: float, sign: float, umin: float = 0.0, umax: float = 180.0
) -> list[tuple[float, float]]:
    """Elbow magnitudes ``u`` in [umin, umax] whose angle ``sign*u`` has a representative
    ``sign*u + k*360`` inside [q2lo, q2hi]; merged, increasing intervals."""
    lo, hi = (q2lo, q2hi) if sign > 0 else (-q2hi, -q2lo)
    out: list[tuple[float, float]] = []
    k0 = math.floor((umin - hi) / 360.0)
    k1 = math.ceil((umax - lo) / 360.0)
    for k in range(k0, k1 + 1):
        a, b = max(lo + 360.0 * k, umin), min(hi + 360.0 * k, umax)
        if b - a > _EPS_DEG:
            if out and a <= out[-1][1] + _EPS_DEG:
                out[-1] = (out[-1][0], max(out[-1][1], b))
            else:
                out.append((a, b))
    return out


def _polygonal(g: shapely.Geometry) -> Region:
    """Keep only the areal part of a geometry, as a Polygon or MultiPolygon."""
    if g.is_empty:
        return Polygon()
    if isinstance(g, Polygon | MultiPolygon):
        return g
    parts = [p for p in shapely.get_parts(g) if isinstance(p, Polygon | MultiPolygon)]
    polys = [q for p in parts for q in shapely.get_parts(p)]
    if not polys:
        return Polygon()
    return polys[0] if len(polys) == 1 else MultiPolygon(polys)


def _union(geoms: Sequence[Region]) -> Region:
    geoms = [g for g in geoms if not g.is_empty]
    if not geoms:
        return Polygon()
    if len(geoms) == 1:
        return geoms[0]
    return _polygonal(shapely.union_all(geoms))


def _thin_tol(tol: float, width: float) -> float:
    # Outline error must stay well below the region's own thickness, or chords would cross.
    return min(tol, 0.25 * width)


def _piece(
    a1: float,
    a2: float,
    q1lo: float,
    q1hi: float,
    ulo: float,
    uhi: float,
    sign: float,
    x: float,
    y: float,
    h: float,
    tol: float,
    depth: int = 0,
) -> Region:
    """Region of one elbow interval, refining the outline until it is a valid polygon."""
    span1 = q1hi - q1lo
    if span1 <= _EPS_DEG:
        return Polygon()
    rlo, rhi = _radius(a1, a2, ulo), _radius(a1, a2, uhi)
    s_max = 1.0 if ulo <= 90.0 <= uhi else max(_sind(ulo), _sind(uhi))
    gap = math.radians(min(span1, 360.0 - span1))
    width = min(rlo - rhi, a1 * math.radians(min(span1, 360.0)) * s_max)
    if width < _SLIVER * tol:
        return Polygon()
    if span1 >= 360.0:
        eff = _thin_tol(tol, rlo - rhi)
        for attempt in range(4):
            poly = _ring_polygon(x, y, rlo, rhi, h, eff * 0.25**attempt)
            if poly.is_valid:
                return poly
        return _polygonal(shapely.make_valid(poly))

    def cap(u: float, r: float) -> float:
        # Thickness of the region over a q2 = const edge, where a q1 = const edge runs
        # beside it: the edges meet at an angle asin(a1 sin(u) / r) and then curve apart.
        return a1 * gap * _sind(u) + a1 * r * gap * gap / (2.0 * a2) if r > 0.0 else math.inf

    tols = (
        _thin_tol(tol, min(width, cap(ulo, rlo))),
        _thin_tol(tol, min(width, cap(uhi, rhi))),
        _thin_tol(tol, width),
    )
    for attempt in range(3):
        k = 0.25**attempt
        poly = _box_polygon(a1, a2, q1lo, q1hi, ulo, uhi, sign, x, y, h, tuple(t * k for t in tols))
        if poly.is_valid:
            return poly
    if span1 > 180.0 and depth < 3:
        # A nearly closed ring leaves a slit thinner than the tolerance: union of halves closes
        # any crossing there and stays valid.
        mid = 0.5 * (q1lo + q1hi)
        halves = [
            _piece(a1, a2, lo, hi, ulo, uhi, sign, x, y, h, tol, depth + 1)
            for lo, hi in ((q1lo, mid), (mid, q1hi))
        ]
        return _union(halves)
    return _polygonal(shapely.make_valid(poly))


def _config(
    a1: float,
    a2: float,
    q1: tuple[float, float],
    q2: tuple[float, float],
    config: str,
    x: float,
    y: float,
    h: float,
    tol: float,
    umin: float = 0.0,
    umax: float = 180.0,
) -> Region:
    sign = _SIGN[config]
    pieces = [
        _piece(a1, a2, q1[0], q1[1], lo, hi, sign, x, y, h, tol)
        for lo, hi in _q2_sets(q2[0], q2[1], sign, umin, umax)
    ]
    return _union(pieces)


# ---------------------------------------------------------------------- public API


def reach_annulus(
    a1: float, a2: float, x: float = 0.0, y: float = 0.0, tol: float = 0.05
) -> Polygon:
    """Ring of all points at distance ``|a1 - a2| <= r <= a1 + a2`` from the base.

    This is the reach of the arm ignoring joint limits; it is a disc when
    ``a1 == a2``.

    Parameters
    ----------
    a1, a2 : float
        Link lengths (shoulder to elbow, elbow to tool), > 0, in cell units.
    x, y : float
        Base position in world coordinates.
    tol : float
        Largest distance between the outline and the true circles, in cell units.

    Returns
    -------
    shapely.geometry.Polygon
        The ring (with a hole unless ``a1 == a2``); its area equals
        ``pi * ((a1 + a2)**2 - (a1 - a2)**2)`` to rounding.

    Examples
    --------
    >>> import math
    >>> ring = reach_annulus(300.0, 200.0, x=50.0)
    >>> round(ring.area / (math.pi * (500.0**2 - 100.0**2)), 9)
    1.0
    >>> len(ring.interiors), len(reach_annulus(250.0, 250.0).interiors)
    (1, 0)
    """
    _check_lengths(a1, a2, tol)
    return _ring_polygon(float(x), float(y), a1 + a2, abs(a1 - a2), 0.0, tol)


def config_region(
    a1: float,
    a2: float,
    q1_limits: Sequence[float],
    q2_limits: Sequence[float],
    elbow: str,
    x: float = 0.0,
    y: float = 0.0,
    heading_deg: float = 0.0,
    tol: float = 0.05,
) -> Region:
    """Exact set of tool points one elbow configuration reaches within the joint limits.

    The region is the image of the limit box restricted to ``q2 >= 0``
    (``elbow="positive"``) or ``q2 <= 0`` (``elbow="negative"``), elbow angles
    taken through their representatives ``q2 + k*360``. A shoulder span of a
    full turn or more gives a full ring between the two radii.

    Parameters
    ----------
    a1, a2 : float
        Link lengths, > 0, in cell units.
    q1_limits : (float, float)
        Shoulder limits (min, max) in degrees from the base heading, inclusive;
        spans beyond 360 (multi-turn shoulders) are allowed.
    q2_limits : (float, float)
        Elbow limits (min, max) in degrees from link 1, inclusive.
    elbow : {"positive", "negative"}
        The elbow configuration.
    x, y, heading_deg : float
        Base pose in world coordinates; heading in degrees, counter-clockwise.
    tol : float
        Largest distance between the outline and the true boundary, in cell
        units (0.05 suits millimetre cells; pass 0.05/25.4 for inch cells).

    Returns
    -------
    shapely.geometry.Polygon or shapely.geometry.MultiPolygon
        A valid geometry; an empty Polygon when no elbow angle of this
        configuration is allowed. Its area matches :func:`config_region_area`
        to rounding.

    Raises
    ------
    ValueError
        For non-positive lengths or tolerance, limits with min > max or not
        finite, or an unknown configuration name.

    Examples
    --------
    >>> import math
    >>> reg = config_region(300.0, 200.0, (-90.0, 90.0), (-150.0, 150.0), "positive")
    >>> exact = math.pi * 300.0 * 200.0 * (1.0 - math.cos(math.radians(150.0)))
    >>> round(reg.area / exact, 9), reg.is_valid
    (1.0, True)
    >>> config_region(300.0, 200.0, (-90.0, 90.0), (20.0, 160.0), "negative").is_empty
    True
    """
    _check_lengths(a1, a2, tol)
    _check_elbow(elbow, CONFIGURATIONS)
    q1 = _check_limits("q1_limits", q1_limits)
    q2 = _check_limits("q2_limits", q2_limits)
    return _config(a1, a2, q1, q2, elbow, float(x), float(y), float(heading_deg), tol)


def config_region_area(
    a1: float,
    a2: float,
    q1_limits: Sequence[float],
    q2_limits: Sequence[float],
    elbow: str,
) -> float:
    """Closed-form area of :func:`config_region`.

    With the elbow magnitudes allowed for the configuration written as a union
    of intervals ``[lo, hi]`` within [0, 180], the area is
    ``dq1 * a1 * a2 * sum(cos(lo) - cos(hi))`` with ``dq1`` the shoulder span in
    radians capped at ``2*pi``, since the Jacobian determinant of the map is
    ``a1 * a2 * sin(q2)``.

    Parameters
    ----------
    a1, a2 : float
        Link lengths, > 0.
    q1_limits, q2_limits : (float, float)
        Joint limits (min, max) in degrees, as for :func:`config_region`.
    elbow : {"positive", "negative"}
        The elbow configuration.

    Returns
    -------
    float
        Area in squared cell units.

    Examples
    --------
    >>> import math
    >>> a = config_region_area(1.0, 1.0, (0.0, 360.0), (0.0, 180.0), "positive")
    >>> math.isclose(a, 4.0 * math.pi)
    True
    """
    _check_lengths(a1, a2)
    _check_elbow(elbow, CONFIGURATIONS)
    q1lo, q1hi = _check_limits("q1_limits", q1_limits)
    q2lo, q2hi = _check_limits("q2_limits", q2_limits)
    dq1 = min(math.radians(q1hi - q1lo), 2.0 * math.pi)
    # cos(lo) - cos(hi) written as a product, exact also for narrow intervals.
    total = sum(
        2.0 * math.sin(math.radians(0.5 * (lo + hi))) * math.sin(math.radians(0.5 * (hi - lo)))
        for lo, hi in _q2_sets(q2lo, q2hi, _SIGN[elbow])
    )
    return dq1 * a1 * a2 * total


def reachable_region(
    a1: float,
    a2: float,
    q1_limits: Sequence[float],
    q2_limits: Sequence[float],
    elbow: str = "any",
    x: float = 0.0,
    y: float = 0.0,
    heading_deg: float = 0.0,
    tol: float = 0.05,
) -> Region:
    """Tool points reachable in at least one elbow configuration the arm may use.

    Parameters
    ----------
    a1, a2, q1_limits, q2_limits, x, y, heading_deg, tol
        As for :func:`config_region`.
    elbow : {"any", "positive", "negative"}
        The arm's elbow setting: which configurations it may use.

    Returns
    -------
    shapely.geometry.Polygon or shapely.geometry.MultiPolygon
        Union of the allowed configuration regions (valid, possibly empty).

    Examples
    --------
    >>> import math
    >>> reg = reachable_region(300.0, 200.0, (0.0, 360.0), (-150.0, 120.0))
    >>> r150 = math.sqrt(300.0**2 + 200.0**2 + 2 * 300.0 * 200.0 * math.cos(math.radians(150)))
    >>> round(reg.area / (math.pi * (500.0**2 - r150**2)), 9)
    1.0
    """
    _check_lengths(a1, a2, tol)
    _check_elbow(elbow, ELBOW_SETTINGS)
    q1 = _check_limits("q1_limits", q1_limits)
    q2 = _check_limits("q2_limits", q2_limits)
    regs = [
        _config(a1, a2, q1, q2, c, float(x), float(y), float(heading_deg), tol)
        for c in _allowed(elbow)
    ]
    return _union(regs)


def both_elbows_region(
    a1: float,
    a2: float,
    q1_limits: Sequence[float],
    q2_limits: Sequence[float],
    elbow: str = "any",
    x: float = 0.0,
    y: float = 0.0,
    heading_deg: float = 0.0,
    tol: float = 0.05,
) -> Region:
    """Tool points reachable in both elbow configurations.

    Only an arm whose elbow setting is ``"any"`` can switch configuration, so
    the region is empty for the other settings.

    Parameters
    ----------
    a1, a2, q1_limits, q2_limits, x, y, heading_deg, tol
        As for :func:`config_region`.
    elbow : {"any", "positive", "negative"}
        The arm's elbow setting.

    Returns
    -------
    shapely.geometry.Polygon or shapely.geometry.MultiPolygon
        Intersection of the two configuration regions (valid, possibly empty).

    Examples
    --------
    >>> both_elbows_region(300.0, 200.0, (-90.0, 90.0), (-150.0, 150.0)).is_empty
    False
    >>> both_elbows_region(300.0, 200.0, (-90.0, 90.0), (-150.0, 150.0), "positive").is_empty
    True
    """
    _check_lengths(a1, a2, tol)
    _check_elbow(elbow, ELBOW_SETTINGS)
    q1 = _check_limits("q1_limits", q1_limits)
    q2 = _check_limits("q2_limits", q2_limits)
    if elbow != "any":
        return Polygon()
    pos, neg = (
        _config(a1, a2, q1, q2, c, float(x), float(y), float(heading_deg), tol)
        for c in CONFIGURATIONS
    )
    return _intersection(pos, neg)


def _intersection(a: Region, b: Region) -> Region:
    if a.is_empty or b.is_empty:
        return Polygon()
    return _polygonal(shapely.intersection(a, b))


def _shrunk(limits: tuple[float, float], margin: float) -> tuple[float, float] | None:
    lo, hi = limits[0] + margin, limits[1] - margin
    return (lo, hi) if lo <= hi else None


def comfort_region(
    a1: float,
    a2: float,
    q1_limits: Sequence[float],
    q2_limits: Sequence[float],
    elbow: str = "any",
    x: float = 0.0,
    y: float = 0.0,
    heading_deg: float = 0.0,
    tol: float = 0.05,
    margin_deg: float = 5.0,
    min_abs_q2_deg: float = 10.0,
    max_abs_q2_deg: float = 170.0,
) -> Region:
    """Tool points reachable with room to spare at every joint.

    The construction of :func:`reachable_region` on the limit box shrunk by
    ``margin_deg`` on every side, with the elbow magnitude ``|q2|`` further
    kept within [min_abs_q2_deg, max_abs_q2_deg] (away from full stretch and
    from the inner fold, where the arm loses dexterity).

    Parameters
    ----------
    a1, a2, q1_limits, q2_limits, x, y, heading_deg, tol
        As for :func:`config_region`.
    elbow : {"any", "positive", "negative"}
        The arm's elbow setting.
    margin_deg : float
        Clearance from every joint limit, degrees, >= 0.
    min_abs_q2_deg, max_abs_q2_deg : float
        Allowed elbow magnitudes, ``0 <= min <= max <= 180``.

    Returns
    -------
    shapely.geometry.Polygon or shapely.geometry.MultiPolygon
        Union over the allowed configurations (valid, possibly empty).

    Examples
    --------
    >>> reach = reachable_region(300.0, 200.0, (-120.0, 120.0), (-150.0, 150.0))
    >>> comfy = comfort_region(300.0, 200.0, (-120.0, 120.0), (-150.0, 150.0))
    >>> comfy.area < reach.area and reach.buffer(1e-6).contains(comfy)
    True
    """
    _check_lengths(a1, a2, tol)
    _check_elbow(elbow, ELBOW_SETTINGS)
    q1 = _check_limits("q1_limits", q1_limits)
    q2 = _check_limits("q2_limits", q2_limits)
    if not (math.isfinite(margin_deg) and margin_deg >= 0):
        raise ValueError(f"margin_deg must be a finite number >= 0, got {margin_deg!r}")
    if not (0.0 <= min_abs_q2_deg <= max_abs_q2_deg <= 180.0):
        raise ValueError(
            "need 0 <= min_abs_q2_deg <= max_abs_q2_deg <= 180, got "
            f"{min_abs_q2_deg!r} and {max_abs_q2_deg!r}"
        )
    q1s, q2s = _shrunk(q1, margin_deg), _shrunk(q2, margin_deg)
    if q1s is None or q2s is None:
        return Polygon()
    h = float(heading_deg)
    regs = [
        _config(a1, a2, q1s, q2s, c, float(x), float(y), h, tol, min_abs_q2_deg, max_abs_q2_deg)
        for c in _allowed(elbow)
    ]
    return _union(regs)


@dataclass(frozen=True)
class ArmRegions:
    """All work-envelope regions of one arm, in world coordinates.

    Attributes
    ----------
    annulus : Polygon
        Reach ignoring joint limits.
    positive, negative : Polygon or MultiPolygon
        Configuration regions; empty when the arm's elbow setting forbids that
        configuration.
    reachable : Polygon or MultiPolygon
        Union of ``positive`` and ``negative``.
    both : Polygon or MultiPolygon
        Points reachable in both configurations (empty unless elbow is "any").
    comfort : Polygon or MultiPolygon
        See :func:`comfort_region`.
    """

    annulus: Polygon
    positive: Region
    negative: Region
    reachable: Region
    both: Region
    comfort: Region


def arm_regions(
    arm: Arm,
    tol: float = 0.05,
    *,
    margin_deg: float = 5.0,
    min_abs_q2_deg: float = 10.0,
    max_abs_q2_deg: float = 170.0,
) -> ArmRegions:
    """Every region of an :class:`~kinematics.cell.Arm`, from its base pose, links,
    limits and elbow setting.

    Parameters
    ----------
    arm : kinematics.cell.Arm
        The arm; lengths in the cell's units.
    tol : float
        Outline tolerance in the arm's units (0.05 for millimetre cells; the
        caller converts, e.g. 0.05/25.4 for inch cells).
    margin_deg, min_abs_q2_deg, max_abs_q2_deg : float
        Passed to :func:`comfort_region`.

    Returns
    -------
    ArmRegions

    Examples
    --------
    >>> from kinematics.cell import Arm
    >>> arm = Arm("r1", "Loader", 100.0, 0.0, 90.0, 325.0, 275.0,
    ...           (-130.0, 130.0), (-145.0, 145.0), elbow="negative")
    >>> regs = arm_regions(arm)
    >>> regs.positive.is_empty, regs.both.is_empty, regs.reachable.equals(regs.negative)
    (True, True, True)
    """
    a1, a2 = arm.a1, arm.a2
    _check_lengths(a1, a2, tol)
    _check_elbow(arm.elbow, ELBOW_SETTINGS)
    q1 = _check_limits("q1_limits", arm.q1_limits)
    q2 = _check_limits("q2_limits", arm.q2_limits)
    x, y, h = float(arm.x), float(arm.y), float(arm.heading_deg)
    allowed = _allowed(arm.elbow)
    cfg = {
        c: (_config(a1, a2, q1, q2, c, x, y, h, tol) if c in allowed else Polygon())
        for c in CONFIGURATIONS
    }
    both = _intersection(cfg["positive"], cfg["negative"])
    comfort = comfort_region(
        a1,
        a2,
        q1,
        q2,
        arm.elbow,
        x,
        y,
        h,
        tol,
        margin_deg=margin_deg,
        min_abs_q2_deg=min_abs_q2_deg,
        max_abs_q2_deg=max_abs_q2_deg,
    )
    return ArmRegions(
        annulus=reach_annulus(a1, a2, x, y, tol),
        positive=cfg["positive"],
        negative=cfg["negative"],
        reachable=_union([cfg["positive"], cfg["negative"]]),
        both=both,
        comfort=comfort,
    )


@dataclass(frozen=True)
class RegionArcs:
    """The exact boundary of a configuration region as circle arcs.

    Attributes
    ----------
    centres : ndarray, shape (N, 2)
    radii : ndarray, shape (N,)
    start_deg, span_deg : ndarray, shape (N,)
        Each arc runs counter-clockwise from ``start_deg`` through ``span_deg`` (360 for a
        full circle), in world degrees.
    """

    centres: np.ndarray
    radii: np.ndarray
    start_deg: np.ndarray
    span_deg: np.ndarray


def config_region_arcs(
    a1: float,
    a2: float,
    q1_limits: Sequence[float],
    q2_limits: Sequence[float],
    elbow: str,
    x: float = 0.0,
    y: float = 0.0,
    heading_deg: float = 0.0,
) -> RegionArcs:
    """The arcs that bound :func:`config_region` exactly (the polygon approximates them).

    Per elbow interval: the ``q2 = const`` edges of the limit box map to arcs about the
    base of radius ``r(q2)``, the ``q1 = const`` edges to arcs of radius ``a2`` about the
    elbow points; a shoulder span of a full turn or more gives two full circles. Arcs
    of zero radius (full fold with ``a1 == a2``) are left out.

    Parameters
    ----------
    a1, a2, q1_limits, q2_limits, elbow, x, y, heading_deg
        As for :func:`config_region`.

    Returns
    -------
    RegionArcs

    Examples
    --------
    >>> arcs = config_region_arcs(300.0, 200.0, (-90.0, 90.0), (0.0, 120.0), "positive")
    >>> arcs.radii.round(6).tolist()
    [500.0, 264.575131, 200.0, 200.0]
    >>> arcs.span_deg.round(6).tolist()
    [180.0, 180.0, 120.0, 120.0]
    """
    _check_lengths(a1, a2)
    _check_elbow(elbow, CONFIGURATIONS)
    q1lo, q1hi = _check_limits("q1_limits", q1_limits)
    q2lo, q2hi = _check_limits("q2_limits", q2_limits)
    sign = _SIGN[elbow]
    x, y, h = float(x), float(y), float(heading_deg)
    span1 = q1hi - q1lo
    rows: list[tuple[float, float, float, float, float]] = []
    if span1 > _EPS_DEG:
        for ulo, uhi in _q2_sets(q2lo, q2hi, sign):
            rlo, rhi = _radius(a1, a2, ulo), _radius(a1, a2, uhi)
            if span1 >= 360.0:
                rows += [(x, y, r, 0.0, 360.0) for r in (rlo, rhi) if r > 0.0]
                continue
            for u, r in ((ulo, rlo), (uhi, rhi)):
                if r > 0.0:
                    rows.append((x, y, r, (h + q1lo + sign * _beta(a1, a2, u)) % 360.0, span1))
            for q1 in (q1hi, q1lo):
                ex, ey = x + a1 * _cosd(h + q1), y + a1 * _sind(h + q1)
                first = ulo if sign > 0 else -uhi
                rows.append((ex, ey, a2, (h + q1 + first) % 360.0, uhi - ulo))
    table = np.array(rows, dtype=float).reshape(-1, 5)
    return RegionArcs(table[:, :2], table[:, 2], table[:, 3], table[:, 4])
