"""Fixture outlines from DXF drawings (read with ezdxf).

Three steps, each a pure function:

* :func:`read_dxf` loads a drawing strictly (``ezdxf.readfile``; ezdxf's recover loader
  only when the caller asks for it) and finds every closed outline in its model space:
  closed LWPOLYLINE and POLYLINE (bulges are arcs), CIRCLE, closed ELLIPSE, SOLID and
  TRACE, HATCH boundary paths, and closed chains of LINE, ARC and elliptical arcs on one
  layer. Blocks (INSERT and MINSERT, nested, scaled, rotated, mirrored) are exploded;
  an entity on layer "0" inside a block takes the layer of its INSERT. Every entity that
  gives no outline (open, unsupported, tilted out of the plan, ...) is kept as an
  :class:`EntityNote` with its handle, type, layer and reason: nothing is dropped
  silently. Outlines are kept exactly (lines and arcs) until the units are known.
* :func:`dxf_fixtures` turns the outlines on the layers the caller maps to fixture kinds
  into :class:`~kinematics.cell.Fixture` values in the cell's units. Arcs become polylines
  that cover the drawn shape and stay within ``kinematics.report.REGION_TOL_MM`` of it
  (convex arcs by tangent chords, concave ones by chords on the arc): an imported fixture
  is never smaller than the drawn one. A drawing whose ``$INSUNITS`` is unset raises
  :class:`DxfUnitsUnset` unless the caller names its units.
* :func:`merge_fixtures` merges them into a cell by fixture id (``dxf-<handle>``).

A file that cannot be read raises :class:`DxfReadError` whose lines read
``<file>: line <n>: <what broke>``; messages about entities read
``<file>: entity <handle> (<type> on layer <layer>): <reason>``.
"""

from __future__ import annotations

import math
import os
import re
import stat
from collections import Counter
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np
import shapely
from numpy.typing import NDArray

from .cell import FIXTURE_KINDS, UNITS, Cell, Fixture
from .cellfile import MAX_MAGNITUDE
from .checks import polygon_problem
from .dxf_units import IMPORT_UNITS, INSUNITS, UNITLESS, mm_per_drawing_unit, name_of, unit_label
from .report import REGION_TOL_MM

__all__ = [
    "MAX_DXF_BYTES",
    "MAX_BLOCK_DEPTH",
    "SOURCE_KEY",
    "DxfReadError",
    "DxfUnitsUnset",
    "EntityNote",
    "DrawnOutline",
    "DxfDrawing",
    "DxfImport",
    "FixtureMerge",
    "read_dxf",
    "dxf_fixtures",
    "merge_fixtures",
    "suggested_kind",
    "fixture_id",
    "outline_points",
    "UNDERLAY_TOL_MM",
    "DxfUnderlay",
    "dxf_underlay",
]

#: Largest DXF file read, in bytes.
MAX_DXF_BYTES = 200 * 1024 * 1024
#: Deepest nesting of block references exploded (deeper ones are reported).
MAX_BLOCK_DEPTH = 16
#: Fixture key (kept in ``Fixture.extra``) naming the DXF file, layer and entity an
#: imported outline came from.
SOURCE_KEY = "dxf_source"

_MAX_STEP = math.pi / 4  # largest angle per polyline step along an arc
_JOIN_REL = 1e-9  # chain end points closer than this fraction of the extent meet
_OUTLINE_TYPES = ("LWPOLYLINE", "POLYLINE", "CIRCLE", "ELLIPSE", "SOLID", "TRACE", "HATCH")
_CHAIN_TYPES = ("LINE", "ARC", "ELLIPSE")
_TEXT_TYPES = ("TEXT", "MTEXT", "ATTRIB", "ATTDEF", "DIMENSION", "LEADER", "MULTILEADER")


class DxfReadError(Exception):
    """A DXF file could not be read or used.

    Attributes
    ----------
    problems : list of str
        One line per problem, naming the file (and the line or entity); ``str(err)`` is
        the first.
    """

    def __init__(self, problems: Iterable[str] | str) -> None:
        lines = [problems] if isinstance(problems, str) else list(problems)
        self.problems: list[str] = lines or ["unknown problem"]
        super().__init__(self.problems)

    def __str__(self) -> str:
        return self.problems[0]


class DxfUnitsUnset(DxfReadError):
    """The drawing does not state its units ($INSUNITS unset) and the caller named none."""


@dataclass(frozen=True)
class EntityNote:
    """An entity that gave no outline, and why.

    Attributes
    ----------
    handle : str
        The entity's handle; ``"<insert>/<n>"`` for the n-th entity of an exploded block.
    dxftype, layer, reason : str
    """

    handle: str
    dxftype: str
    layer: str
    reason: str

    def text(self, source: str) -> str:
        """One line: ``<file>: entity <handle> (<type> on layer <layer>): <reason>``."""
        return (
            f"{source}: entity {self.handle} ({self.dxftype} on layer {self.layer}): {self.reason}"
        )


# A boundary piece in world x, y: ("L", p0, p1) or ("A", centre, u, v, t0, sweep) for the
# elliptical arc centre + u cos t + v sin t, t from t0 through t0 + sweep (radians).
Segment = tuple[Any, ...]


@dataclass(frozen=True)
class DrawnOutline:
    """One closed outline found in the drawing, exact (lines and arcs), in drawing units.

    Attributes
    ----------
    handle : str
        Entity handle (the first handle of a chain of pieces).
    dxftype : str
        Source type, ``"LINE/ARC chain"`` for a chain.
    layer : str
        Effective layer (an entity on layer "0" in a block takes its INSERT's layer).
    block : str or None
        Name of the innermost block it came from.
    thickness : float
        The entity's DXF thickness (its height when extruded), 0 when none.
    segments : tuple
        The boundary, in order; see :func:`outline_points`.
    """

    handle: str
    dxftype: str
    layer: str
    block: str | None
    thickness: float
    segments: tuple[Segment, ...]


@dataclass(frozen=True)
class DxfDrawing:
    """What :func:`read_dxf` found in a drawing.

    Attributes
    ----------
    source : str
        File name, used at the start of every message.
    insunits : int
        The drawing's ``$INSUNITS`` (0 when unset).
    outlines : tuple of DrawnOutline
    notes : tuple of EntityNote
        Entities that gave no outline.
    layers : tuple of str
        Every layer an entity of the model space is on (effective layers), sorted.
    entity_counts : dict
        Model-space entities per type, blocks not exploded (what the loader found).
    recovered : bool
        Read with ezdxf's recover loader.
    recovery_notes : tuple of str
        What the recover loader fixed or could not.
    """

    source: str
    insunits: int
    outlines: tuple[DrawnOutline, ...]
    notes: tuple[EntityNote, ...]
    layers: tuple[str, ...]
    entity_counts: dict[str, int]
    recovered: bool = False
    recovery_notes: tuple[str, ...] = ()

    @property
    def units(self) -> str | None:
        """Our name of the drawing's units, None when unset or not a unit we convert."""
        return name_of(self.insunits) if mm_per_drawing_unit(self.insunits) else None

    def outline_counts(self) -> dict[str, int]:
        """Outlines per layer."""
        return dict(Counter(o.layer for o in self.outlines))

    def counts_text(self) -> str:
        """The entity counts in one line, e.g. ``"12 entities: 8 LINE, 4 LWPOLYLINE"``."""
        total = sum(self.entity_counts.values())
        parts = ", ".join(f"{n} {t}" for t, n in sorted(self.entity_counts.items()))
        return f"{total} entities" + (f": {parts}" if parts else "")


@dataclass(frozen=True)
class DxfImport:
    """Fixtures made from a drawing, with what was left out.

    Attributes
    ----------
    source : str
    units : str
        The drawing units used.
    fixtures : tuple of Fixture
        In the cell's units, kind and height from the layer mapping.
    notes : tuple of EntityNote
        Entities on mapped layers that gave no fixture (findings).
    unmapped : dict
        Layer -> number of entities on layers that were not mapped to a kind.
    """

    source: str
    units: str
    fixtures: tuple[Fixture, ...]
    notes: tuple[EntityNote, ...]
    unmapped: dict[str, int] = field(default_factory=dict)

    def imported_counts(self) -> dict[str, int]:
        """Fixtures per layer."""
        return dict(Counter(f.extra[SOURCE_KEY]["layer"] for f in self.fixtures))

    def skipped_counts(self) -> dict[tuple[str, str, str], int]:
        """(type, layer, reason) -> number of entities not imported from mapped layers."""
        return dict(Counter((n.dxftype, n.layer, n.reason) for n in self.notes))

    def summary_lines(self) -> list[str]:
        """The import summary, one line each: imported per layer, skipped per type and layer."""
        lines = [
            f"imported {n} outline{'s' * (n != 1)} from layer {layer}"
            for layer, n in sorted(self.imported_counts().items())
        ]
        if not self.fixtures:
            lines.append("imported no outlines")
        for (dxftype, layer, reason), n in sorted(self.skipped_counts().items()):
            lines.append(f"skipped {n} {dxftype} on layer {layer}: {reason}")
        for layer, n in sorted(self.unmapped.items()):
            lines.append(f"not asked for: {n} entit{'ies' if n != 1 else 'y'} on layer {layer}")
        return lines


@dataclass(frozen=True)
class FixtureMerge:
    """A cell with imported fixtures merged in, and what changed (fixture ids)."""

    cell: Cell
    added: tuple[str, ...]
    changed: tuple[str, ...]
    unchanged: tuple[str, ...]
    removed: tuple[str, ...]

    def summary(self) -> str:
        """E.g. ``"3 fixtures added, 1 changed, 2 unchanged, 0 removed"``."""
        n = len(self.added)
        return (
            f"{n} fixture{'s' * (n != 1)} added, {len(self.changed)} changed, "
            f"{len(self.unchanged)} unchanged, {len(self.removed)} removed"
        )


# --------------------------------------------------------------------------- geometry


def _start(seg: Segment) -> tuple[float, float]:
    if seg[0] == "L":
        return seg[1]
    _, c, u, v, t0, _sw = seg
    return (
        c[0] + u[0] * math.cos(t0) + v[0] * math.sin(t0),
        c[1] + u[1] * math.cos(t0) + v[1] * math.sin(t0),
    )


def _end(seg: Segment) -> tuple[float, float]:
    if seg[0] == "L":
        return seg[2]
    _, c, u, v, t0, sw = seg
    t = t0 + sw
    return (
        c[0] + u[0] * math.cos(t) + v[0] * math.sin(t),
        c[1] + u[1] * math.cos(t) + v[1] * math.sin(t),
    )


def _reverse(seg: Segment) -> Segment:
    if seg[0] == "L":
        return ("L", seg[2], seg[1])
    _, c, u, v, t0, sw = seg
    return ("A", c, u, v, t0 + sw, -sw)


def _arc_points(seg: Segment, n: int, scale: float = 1.0) -> NDArray[np.float64]:
    _, c, u, v, t0, sw = seg
    t = t0 + sw * np.arange(n) / n
    return np.column_stack(
        (
            c[0] + scale * (u[0] * np.cos(t) + v[0] * np.sin(t)),
            c[1] + scale * (u[1] * np.cos(t) + v[1] * np.sin(t)),
        )
    )


def _coarse(segments: Iterable[Segment]) -> NDArray[np.float64]:
    parts = [np.array([seg[1]]) if seg[0] == "L" else _arc_points(seg, 16) for seg in segments]
    return np.concatenate(parts) if parts else np.zeros((0, 2))


def _signed_area(pts: NDArray[np.float64]) -> float:
    x, y = pts[:, 0], pts[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def outline_points(segments: Iterable[Segment], tol: float) -> NDArray[np.float64]:
    """Polygon vertices ``(N, 2)`` of a closed boundary of lines and arcs.

    Line ends are kept exactly. An arc that bulges out of the enclosed area gets tangent
    chords (vertices outside the arc), one that bulges in gets chords with their ends on
    the arc, so the polygon covers the drawn shape; either way it stays within ``tol``
    of the arc.

    Parameters
    ----------
    segments : iterable
        ``("L", p0, p1)`` or ``("A", centre, u, v, t0, sweep)`` (the elliptical arc
        ``centre + u cos t + v sin t``), each starting where the previous one ends.
    tol : float
        Largest distance between the polygon and an arc, > 0.

    Examples
    --------
    A unit disc as one arc: its polygon lies outside the circle by at most tol.

    >>> pts = outline_points([("A", (0, 0), (1, 0), (0, 1), 0.0, 2 * math.pi)], 1e-3)
    >>> r = np.hypot(pts[:, 0], pts[:, 1])
    >>> bool(r.min() >= 1.0), bool(r.max() <= 1.001), len(pts)
    (True, True, 72)
    """
    segs = list(segments)
    orient = 1.0 if _signed_area(_coarse(segs)) >= 0 else -1.0
    out = []
    for seg in segs:
        if seg[0] == "L":
            out.append(np.array([seg[1]], dtype=float))
            continue
        _, c, u, v, t0, sw = seg
        sigma = float(np.linalg.norm(np.array([u, v], dtype=float).T, 2))
        if sigma <= 0.0 or sw == 0.0:
            out.append(np.array([_start(seg)]))
            continue
        det = u[0] * v[1] - u[1] * v[0]
        convex = (det * sw > 0) == (orient > 0)
        if convex:  # sigma * (1 / cos(a / 2) - 1) <= tol
            step = 2.0 * math.acos(sigma / (sigma + tol))
        else:  # sigma * (1 - cos(a / 2)) <= tol
            step = 2.0 * math.acos(max(-1.0, 1.0 - tol / sigma))
        n = max(1, math.ceil(abs(sw) / min(step, _MAX_STEP)))
        if convex:
            d = sw / n
            mids = ("A", c, u, v, t0 + 0.5 * d, sw)
            out.append(np.array([_start(seg)]))
            out.append(_arc_points(mids, n, 1.0 / math.cos(0.5 * d)))
        else:
            out.append(_arc_points(seg, n))
    pts = np.concatenate(out)
    keep = np.ones(len(pts), dtype=bool)
    keep[1:] = np.any(np.abs(np.diff(pts, axis=0)) > 0, axis=1)
    pts = pts[keep]
    if len(pts) > 1 and np.array_equal(pts[0], pts[-1]):
        pts = pts[:-1]
    return pts


# --------------------------------------------------------------------------- reading


def _size_check(path: str | os.PathLike[str], source: str) -> None:
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise DxfReadError(f"{source}: could not be opened (no such file or folder)") from None
    except PermissionError:
        raise DxfReadError(f"{source}: could not be opened (permission denied)") from None
    except (OSError, ValueError) as exc:
        raise DxfReadError(f"{source}: could not be opened ({exc})") from None
    if stat.S_ISDIR(info.st_mode):
        raise DxfReadError(f"{source}: is a folder, not a DXF file")
    if info.st_size == 0:
        raise DxfReadError(f"{source}: the file is empty")
    if info.st_size > MAX_DXF_BYTES:
        raise DxfReadError(
            f"{source}: the file is {info.st_size / 2**20:.1f} MB, larger than the "
            f"{MAX_DXF_BYTES // 2**20} MB limit for DXF files"
        )


def _locate_break(path: str | os.PathLike[str]) -> tuple[int, str] | None:
    """Where an ASCII DXF stops being well formed: (line number, what is wrong)."""
    try:
        with open(path, "rb") as f:
            raw = f.read(MAX_DXF_BYTES)
    except OSError:
        return None
    if raw.startswith(b"AutoCAD Binary DXF"):
        return None
    lines = raw.decode("latin-1").splitlines()
    section: str | None = None
    i = 0
    while i < len(lines):
        code_text = lines[i].strip()
        if not re.fullmatch(r"-?\d{1,4}", code_text):
            shown = code_text if len(code_text) <= 30 else code_text[:27] + "..."
            return i + 1, f"a group code (a whole number) was expected, got {shown!r}"
        if i + 1 >= len(lines):
            inside = f" inside the {section} section" if section else ""
            return i + 1, f"the file ends{inside} after a group code, without its value"
        value = lines[i + 1].strip()
        if code_text == "0":
            if value == "SECTION":
                if section is not None:
                    return i + 2, f"a new SECTION starts inside the {section} section"
                name = lines[i + 3].strip() if i + 3 < len(lines) else "?"
                section = name
            elif value == "ENDSEC":
                section = None
            elif value == "EOF":
                return None
        i += 2
    last = len(lines)
    if section is not None:
        return last, f"the file ends inside the {section} section (no ENDSEC)"
    return last, "the file ends without EOF"


def _load(path: str | os.PathLike[str], source: str, recover: bool) -> tuple[Any, tuple[str, ...]]:
    import ezdxf
    from ezdxf import recover as ezdxf_recover
    from ezdxf.lldxf.const import DXFError

    if recover:
        try:
            doc, auditor = ezdxf_recover.readfile(str(path))
        except (OSError, DXFError) as exc:
            raise DxfReadError(f"{source}: could not be recovered ({exc})") from None
        notes = tuple(f"fixed: {e.message}" for e in auditor.fixes) + tuple(
            f"error: {e.message}" for e in auditor.errors
        )
        return doc, notes
    try:
        return ezdxf.readfile(str(path)), ()
    except Exception as exc:  # every loader failure becomes a message, never a traceback
        where = _locate_break(path)
        detail = " ".join(str(exc).removeprefix("DXFStructureError: ").split())
        detail = detail or type(exc).__name__
        if isinstance(exc, OSError) and "not a DXF file" in detail:
            at = f" (line {where[0]}: {where[1]})" if where else ""
            raise DxfReadError(f"{source}: is not a DXF file{at}") from None
        if where is None:
            raise DxfReadError(f"{source}: not a readable DXF file ({detail})") from None
        line, what = where
        raise DxfReadError(
            f"{source}: line {line}: {what}; not a readable DXF file ({detail})"
        ) from None


def _flat_ocs(entity: Any) -> Any | None:
    """The entity's OCS when its extrusion is along +z or -z (drawn in the plan), else None."""
    ex = entity.dxf.get("extrusion", (0.0, 0.0, 1.0))
    x, y, z = (float(v) for v in ex)
    n = math.sqrt(x * x + y * y + z * z)
    if n == 0 or math.hypot(x, y) > 1e-9 * n:
        return None
    return entity.ocs()


def _xy(p: Any) -> tuple[float, float]:
    return (float(p[0]), float(p[1]))


def _ocs_segments(ocs: Any, pts: list[tuple[float, float, float]], closed: bool, z: float):
    """Segments of OCS polyline vertices (x, y, bulge), transformed to world x, y."""
    from ezdxf.math import Vec3

    def world(x: float, y: float) -> tuple[float, float]:
        return _xy(ocs.to_wcs(Vec3(x, y, z)))

    def direction(x: float, y: float) -> tuple[float, float]:
        return _xy(ocs.to_wcs(Vec3(x, y, 0.0)))

    segs: list[Segment] = []
    n = len(pts)
    for k in range(n if closed else n - 1):
        (x0, y0, b), (x1, y1, _) = pts[k], pts[(k + 1) % n]
        if (x0, y0) == (x1, y1):
            continue
        if abs(b) < 1e-12:
            segs.append(("L", world(x0, y0), world(x1, y1)))
            continue
        theta = 4.0 * math.atan(b)
        dx, dy = x1 - x0, y1 - y0
        d = math.hypot(dx, dy)
        h = 0.5 * d / math.tan(0.5 * theta)
        cx, cy = 0.5 * (x0 + x1) - h * dy / d, 0.5 * (y0 + y1) + h * dx / d
        r = 0.5 * d / abs(math.sin(0.5 * theta))
        t0 = math.atan2(y0 - cy, x0 - cx)
        segs.append(("A", world(cx, cy), direction(r, 0.0), direction(0.0, r), t0, theta))
    return segs


def _arc_segment(ocs: Any, centre: Any, r: float, a0_deg: float, sweep: float, z: float):
    from ezdxf.math import Vec3

    c = _xy(ocs.to_wcs(Vec3(centre[0], centre[1], z)))
    u = _xy(ocs.to_wcs(Vec3(r, 0.0, 0.0)))
    v = _xy(ocs.to_wcs(Vec3(0.0, r, 0.0)))
    return ("A", c, u, v, math.radians(a0_deg), sweep)


def _ccw_span(a0: float, a1: float, full: float) -> float:
    span = (a1 - a0) % full
    return full if span <= 1e-12 * full else span


class _Collector:
    """Walks the model space, exploding blocks, sorting entities into outlines and notes."""

    def __init__(self) -> None:
        self.outlines: list[DrawnOutline] = []
        self.notes: list[EntityNote] = []
        self.pieces: list[tuple[str, str, str, str | None, float, Segment]] = []
        self.layers: set[str] = set()

    def note(self, handle: str, dxftype: str, layer: str, reason: str) -> None:
        self.notes.append(EntityNote(handle, dxftype, layer, reason))

    def outline(self, e: Any, handle: str, layer: str, block: str | None, segs) -> None:
        if len(segs) < 1 or (len(segs) < 3 and all(s[0] == "L" for s in segs)):
            self.note(handle, e.dxftype(), layer, "encloses no area")
            return
        th = float(e.dxf.get("thickness", 0.0) or 0.0) if e.dxf.is_supported("thickness") else 0.0
        self.outlines.append(DrawnOutline(handle, e.dxftype(), layer, block, th, tuple(segs)))

    def walk(
        self,
        entities: Iterable[Any],
        prefix: str | None,
        layer0: str | None,
        block: str | None,
        depth: int,
    ) -> None:
        for k, e in enumerate(entities):
            handle = f"{prefix}/{k}" if prefix is not None else str(e.dxf.get("handle", "?"))
            layer = str(e.dxf.get("layer", "0"))
            if layer0 is not None and layer == "0":
                layer = layer0  # block entities on layer 0 take the INSERT's layer
            self.layers.add(layer)
            try:
                self.entity(e, handle, layer, block, depth)
            except Exception as exc:  # a malformed entity is a note, not a failure of the file
                self.note(handle, e.dxftype(), layer, f"could not be read ({exc})")

    def entity(self, e: Any, handle: str, layer: str, block: str | None, depth: int) -> None:
        t = e.dxftype()
        if t == "INSERT":
            self.insert(e, handle, layer, depth)
            return
        if t in _OUTLINE_TYPES or t in _CHAIN_TYPES:
            needs_ocs = t not in ("ELLIPSE", "LINE") and not (
                t == "POLYLINE" and not e.is_2d_polyline
            )
            ocs = _flat_ocs(e) if needs_ocs or t == "ELLIPSE" else None
            if (needs_ocs or t == "ELLIPSE") and ocs is None:
                self.note(handle, t, layer, "not drawn flat in the plan (its extrusion is tilted)")
                return
            getattr(self, t.lower())(e, ocs, handle, layer, block)
            return
        if t in _TEXT_TYPES:
            self.note(handle, t, layer, "text, not an outline")
        elif t == "SPLINE":
            self.note(handle, t, layer, "SPLINE curves are not read (draw it as a polyline)")
        else:
            self.note(handle, t, layer, "not an outline type")

    def insert(self, e: Any, handle: str, layer: str, depth: int) -> None:
        if depth >= MAX_BLOCK_DEPTH:
            self.note(handle, "INSERT", layer, f"blocks nested deeper than {MAX_BLOCK_DEPTH}")
            return
        for k in range(len(getattr(e, "attribs", []))):
            self.note(f"{handle}/attrib{k}", "ATTRIB", layer, "text, not an outline")
        name = str(e.dxf.get("name", "?"))
        if e.mcount > 1:
            for m, ins in enumerate(e.multi_insert()):
                self.walk(ins.virtual_entities(), f"{handle}/{m}", layer, name, depth + 1)
        else:
            self.walk(e.virtual_entities(), handle, layer, name, depth + 1)

    def lwpolyline(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        pts = [(float(x), float(y), float(b)) for x, y, b in e.get_points("xyb")]
        self.polyline_points(
            e, ocs, pts, bool(e.closed), float(e.dxf.elevation), handle, layer, block
        )

    def polyline(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        if e.is_2d_polyline:
            pts = [
                (float(v.dxf.location[0]), float(v.dxf.location[1]), float(v.dxf.bulge or 0))
                for v in e.vertices
            ]
            z = float(e.dxf.elevation[2])
            self.polyline_points(e, ocs, pts, e.is_closed, z, handle, layer, block)
        elif e.is_3d_polyline:
            pts = [(float(v.dxf.location[0]), float(v.dxf.location[1]), 0.0) for v in e.vertices]
            from ezdxf.math import OCS

            self.polyline_points(e, OCS(), pts, e.is_closed, 0.0, handle, layer, block)
        else:
            self.note(handle, "POLYLINE", layer, "polygon meshes are not outlines")

    def polyline_points(self, e, ocs, pts, closed, z, handle, layer, block) -> None:
        if len(pts) >= 3 and not closed and pts[0][:2] == pts[-1][:2]:
            closed, pts = True, pts[:-1]  # drawn back to its start: closed in all but the flag
        if not closed:
            self.note(handle, e.dxftype(), layer, "open (not closed)")
            return
        self.outline(e, handle, layer, block, _ocs_segments(ocs, pts, True, z))

    def circle(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        c = e.dxf.center
        seg = _arc_segment(ocs, c, float(e.dxf.radius), 0.0, 2.0 * math.pi, float(c[2]))
        if e.dxf.radius <= 0:
            self.note(handle, "CIRCLE", layer, "encloses no area")
            return
        self.outline(e, handle, layer, block, [seg])

    def arc(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        c = e.dxf.center
        sweep = math.radians(_ccw_span(float(e.dxf.start_angle), float(e.dxf.end_angle), 360.0))
        seg = _arc_segment(
            ocs, c, float(e.dxf.radius), float(e.dxf.start_angle), sweep, float(c[2])
        )
        self.pieces.append((handle, "ARC", layer, block, 0.0, seg))

    def ellipse(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        c, major, minor = e.dxf.center, e.dxf.major_axis, e.minor_axis
        sweep = _ccw_span(float(e.dxf.start_param), float(e.dxf.end_param), 2.0 * math.pi)
        seg = ("A", _xy(c), _xy(major), _xy(minor), float(e.dxf.start_param), sweep)
        if abs(sweep - 2.0 * math.pi) < 1e-9:
            self.outline(e, handle, layer, block, [seg])
        else:
            self.pieces.append((handle, "ELLIPSE", layer, block, 0.0, seg))

    def line(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        p0, p1 = _xy(e.dxf.start), _xy(e.dxf.end)
        if p0 == p1:
            self.note(handle, "LINE", layer, "has zero length")
            return
        self.pieces.append((handle, "LINE", layer, block, 0.0, ("L", p0, p1)))

    def solid(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        pts = [_xy(p) for p in e.wcs_vertices()]
        pts = [p for k, p in enumerate(pts) if k == 0 or p != pts[k - 1]]
        if len(pts) > 1 and pts[0] == pts[-1]:
            pts = pts[:-1]
        segs = [("L", pts[k], pts[(k + 1) % len(pts)]) for k in range(len(pts))]
        self.outline(e, handle, layer, block, segs)

    trace = solid

    def hatch(self, e: Any, ocs: Any, handle: str, layer: str, block: str | None) -> None:
        from ezdxf.entities.boundary_paths import EdgeType

        z = float(e.dxf.elevation[2])
        loops: list[list[Segment]] = []
        for k, path in enumerate(e.paths):
            where = f"{handle}/path{k}"
            if hasattr(path, "vertices"):
                pts = [(float(x), float(y), float(b)) for x, y, b in path.vertices]
                loops.append(_ocs_segments(ocs, pts, True, z))
                continue
            pieces: list[Segment] = []
            bad = None
            for edge in path.edges:
                if edge.type == EdgeType.LINE:
                    pieces.append(
                        _ocs_segments(ocs, [(*edge.start, 0.0), (*edge.end, 0.0)], False, z)[0]
                    )
                elif edge.type == EdgeType.ARC:
                    sweep = math.radians(_ccw_span(edge.start_angle, edge.end_angle, 360.0))
                    pieces.append(
                        _arc_segment(ocs, edge.center, edge.radius, edge.start_angle, sweep, z)
                    )
                elif edge.type == EdgeType.ELLIPSE:
                    ce = edge.construction_tool()
                    from ezdxf.math import Vec3

                    cc = _xy(ocs.to_wcs(Vec3(ce.center[0], ce.center[1], z)))
                    uu, vv = _xy(ocs.to_wcs(ce.major_axis)), _xy(ocs.to_wcs(ce.minor_axis))
                    sweep = _ccw_span(ce.start_param, ce.end_param, 2.0 * math.pi)
                    pieces.append(("A", cc, uu, vv, float(ce.start_param), sweep))
                else:
                    bad = "a boundary path with a spline edge is not read"
                    break
            loop = None if bad else _loop_of(pieces)
            if loop is None:
                self.note(where, "HATCH", layer, bad or "a boundary path does not close")
            else:
                loops.append(loop)
        if len(loops) > 1:
            polys = [shapely.Polygon(_coarse(lp)) for lp in loops]
            for k, lp in enumerate(loops):
                inside = any(
                    j != k
                    and polys[j].is_valid
                    and polys[j].contains(polys[k].representative_point())
                    for j in range(len(loops))
                )
                if inside:
                    self.note(
                        f"{handle}/path{k}",
                        "HATCH",
                        layer,
                        "a hole in the hatch (fixtures have no holes; the outer "
                        "boundary is imported whole)",
                    )
                else:
                    self.outline(e, f"{handle}/path{k}", layer, block, lp)
        elif loops:
            self.outline(e, handle, layer, block, loops[0])


def _loop_of(pieces: list[Segment]) -> list[Segment] | None:
    """Order pieces (each used once, either way round) into one closed loop, or None."""
    if not pieces:
        return None
    pts = np.array([p for s in pieces for p in (_start(s), _end(s))])
    tol = max(_JOIN_REL * float(np.abs(pts).max(initial=1.0)), 1e-12)
    loops, bad = _chains(pieces, tol)
    if bad or len(loops) != 1:
        return None
    return [pieces[i] if not rev else _reverse(pieces[i]) for i, rev in loops[0]]


def _chains(
    pieces: list[Segment], tol: float
) -> tuple[list[list[tuple[int, bool]]], dict[int, str]]:
    """Closed loops among pieces whose ends meet within ``tol``; reasons for the rest."""
    ends = [(_start(s), _end(s)) for s in pieces]
    cells: dict[tuple[int, int], list[int]] = {}
    node_xy: list[tuple[float, float]] = []

    def node(p: tuple[float, float]) -> int:
        gx, gy = math.floor(p[0] / tol), math.floor(p[1] / tol)
        for dx in (-1, 0, 1):
            for dy in (-1, 0, 1):
                for n in cells.get((gx + dx, gy + dy), ()):
                    q = node_xy[n]
                    if abs(q[0] - p[0]) <= tol and abs(q[1] - p[1]) <= tol:
                        return n
        node_xy.append(p)
        cells.setdefault((gx, gy), []).append(len(node_xy) - 1)
        return len(node_xy) - 1

    piece_nodes = [(node(a), node(b)) for a, b in ends]
    at: dict[int, list[int]] = {}
    for i, (a, b) in enumerate(piece_nodes):
        at.setdefault(a, []).append(i)
        at.setdefault(b, []).append(i)
    seen: set[int] = set()
    loops: list[list[tuple[int, bool]]] = []
    bad: dict[int, str] = {}
    for first in range(len(pieces)):
        if first in seen:
            continue
        comp, stack = [], [first]
        seen.add(first)
        while stack:
            i = stack.pop()
            comp.append(i)
            for n in piece_nodes[i]:
                for j in at[n]:
                    if j not in seen:
                        seen.add(j)
                        stack.append(j)
        nodes = {n for i in comp for n in piece_nodes[i]}
        degree = {n: len(at[n]) for n in nodes}
        if all(d == 2 for d in degree.values()):
            order: list[tuple[int, bool]] = []
            i, cur = comp[0], piece_nodes[comp[0]][0]
            used: set[int] = set()
            while i not in used:
                used.add(i)
                a, b = piece_nodes[i]
                rev = a != cur
                order.append((i, rev))
                cur = a if rev else b
                nxt = [j for j in at[cur] if j not in used]
                if not nxt:
                    break
                i = nxt[0]
            loops.append(order)
            continue
        loose = [n for n, d in degree.items() if d == 1]
        if loose:
            x, y = node_xy[loose[0]]
            reason = f"part of an open chain (an end at ({x:.6g}, {y:.6g}) meets nothing)"
        else:
            x, y = node_xy[next(n for n, d in degree.items() if d > 2)]
            reason = f"part of a branching chain (more than two ends meet at ({x:.6g}, {y:.6g}))"
        for i in comp:
            bad[i] = reason
    return loops, bad


def _handle_key(handle: str) -> tuple[int, ...]:
    out = []
    for part in handle.split("/"):
        try:
            out.append(int(part, 16))
        except ValueError:
            out.append(-1)
    return tuple(out)


def _finish_chains(col: _Collector) -> None:
    by_layer: dict[str, list[int]] = {}
    for k, piece in enumerate(col.pieces):
        by_layer.setdefault(piece[2], []).append(k)
    extent = max(
        (abs(c) for piece in col.pieces for p in (_start(piece[5]), _end(piece[5])) for c in p),
        default=1.0,
    )
    tol = max(_JOIN_REL * extent, 1e-12)
    for layer, idx in by_layer.items():
        segs = [col.pieces[k][5] for k in idx]
        loops, bad = _chains(segs, tol)
        for order in loops:
            members = [col.pieces[idx[i]] for i, _ in order]
            loop = [segs[i] if not rev else _reverse(segs[i]) for i, rev in order]
            handle = min((m[0] for m in members), key=_handle_key)
            types = sorted({m[1] for m in members})
            label = "/".join(types) + " chain" if len(members) > 1 else types[0]
            blocks = {m[3] for m in members}
            block = blocks.pop() if len(blocks) == 1 else None
            if len(loop) < 3 and all(s[0] == "L" for s in loop):
                for m in members:
                    col.note(m[0], m[1], layer, "part of a chain that encloses no area")
                continue
            col.outlines.append(DrawnOutline(handle, label, layer, block, 0.0, tuple(loop)))
        for i, reason in bad.items():
            handle, dxftype = col.pieces[idx[i]][0], col.pieces[idx[i]][1]
            col.note(handle, dxftype, layer, reason)


def read_dxf(path: str | os.PathLike[str], *, recover: bool = False) -> DxfDrawing:
    """Read a DXF file and find the closed outlines in its model space.

    Parameters
    ----------
    path : str or path-like
    recover : bool, optional
        Use ezdxf's recover loader instead of the strict one. Only on the user's explicit
        choice: it reads damaged files, but a truncated file may come back empty and
        without complaint, so show :meth:`DxfDrawing.counts_text` to whoever asked.

    Returns
    -------
    DxfDrawing

    Raises
    ------
    DxfReadError
        When the file cannot be read; an unreadable ASCII file's message names the line
        where it broke, e.g. ``plan.dxf: line 812: the file ends inside the ENTITIES
        section (no ENDSEC); not a readable DXF file (missing ENDSEC tag.)``.
    """
    source = Path(path).name or str(path)
    _size_check(path, source)
    doc, recovery_notes = _load(path, source, recover)
    msp = doc.modelspace()
    col = _Collector()
    col.walk(msp, None, None, None, 0)
    _finish_chains(col)
    try:
        insunits = int(doc.header.get("$INSUNITS", UNITLESS) or UNITLESS)
    except (TypeError, ValueError):
        insunits = UNITLESS
    counts = dict(Counter(e.dxftype() for e in msp))
    outlines = sorted(col.outlines, key=lambda o: (o.layer, _handle_key(o.handle)))
    return DxfDrawing(
        source=source,
        insunits=insunits,
        outlines=tuple(outlines),
        notes=tuple(col.notes),
        layers=tuple(sorted(col.layers)),
        entity_counts=counts,
        recovered=recover,
        recovery_notes=recovery_notes,
    )


# --------------------------------------------------------------------------- fixtures


def fixture_id(outline: DrawnOutline) -> str:
    """The id a fixture imported from this outline gets: ``dxf-<handle>``."""
    return f"dxf-{outline.handle}"


def suggested_kind(layer: str) -> str | None:
    """A fixture kind a layer name suggests: a kind's own name (``Conveyor``,
    ``conveyors``) or our export's layer name (``ER-FIXTURE-CONVEYOR``).

    Examples
    --------
    >>> suggested_kind("CONVEYORS"), suggested_kind("ER-FIXTURE-KEEP-OUT"), suggested_kind("A-WALL")
    ('conveyor', 'keep-out', None)
    """
    name = layer.strip().lower()
    name = name.removeprefix("er-fixture-")
    for kind in FIXTURE_KINDS:
        if name in (kind, kind + "s"):
            return kind
    return None


def _check_kind(layer: str, kind: Any, source: str) -> str:
    if not isinstance(kind, str) or not kind.strip():
        raise DxfReadError(
            f"{source}: layer {layer}: a fixture kind must be a non-empty word, got {kind!r}"
        )
    return kind


def dxf_fixtures(
    drawing: DxfDrawing,
    layer_kinds: Mapping[str, str],
    *,
    cell_units: str = "mm",
    drawing_units: str | None = None,
    layer_heights: Mapping[str, float] | None = None,
) -> DxfImport:
    """Fixtures from the outlines on the layers mapped to fixture kinds.

    Parameters
    ----------
    drawing : DxfDrawing
        From :func:`read_dxf`.
    layer_kinds : mapping
        Layer -> fixture kind (``kinematics.cell.FIXTURE_KINDS`` or any other word).
        Entities on other layers are only counted (:attr:`DxfImport.unmapped`).
    cell_units : {"mm", "in"}
        Units of the cell the fixtures go into.
    drawing_units : str, optional
        The drawing's units (one of ``kinematics.dxf_units.IMPORT_UNITS``); needed when
        its ``$INSUNITS`` is unset, and overrides it when given.
    layer_heights : mapping, optional
        Layer -> fixture height in cell units. Without one, an entity's DXF thickness
        (converted) is its height when positive; else the fixture has no height.

    Returns
    -------
    DxfImport

    Raises
    ------
    DxfUnitsUnset
        When the drawing does not state its units and ``drawing_units`` is None.
    DxfReadError
        For a bad argument (unknown units, a layer the drawing does not have, a height
        that is not a number of 0 or more).
    """
    src = drawing.source
    if cell_units not in UNITS:
        raise DxfReadError(
            f"{src}: cell units must be one of {', '.join(UNITS)}, got {cell_units!r}"
        )
    if drawing_units is not None:
        if drawing_units not in IMPORT_UNITS:
            raise DxfReadError(
                f"{src}: drawing units must be one of {', '.join(IMPORT_UNITS)}, "
                f"got {drawing_units!r}"
            )
        units = drawing_units
    elif drawing.units is not None:
        units = drawing.units
    else:
        raise DxfUnitsUnset(
            f"{src}: the drawing does not state its units ($INSUNITS is "
            f"{unit_label(drawing.insunits)}); say which units it is drawn in "
            f"({', '.join(IMPORT_UNITS)})"
        )
    known = set(drawing.layers)
    for layer in list(layer_kinds) + list(layer_heights or {}):
        if layer not in known:
            shown = ", ".join(drawing.layers[:12]) + (" ..." if len(drawing.layers) > 12 else "")
            raise DxfReadError(
                f"{src}: layer {layer!r} is not in the drawing (its layers: {shown or 'none'})"
            )
    heights: dict[str, float] = {}
    for layer, h in (layer_heights or {}).items():
        ok = isinstance(h, (int, float)) and not isinstance(h, bool) and math.isfinite(h)
        if not ok or h < 0 or h > MAX_MAGNITUDE:
            raise DxfReadError(
                f"{src}: layer {layer}: height must be a number of 0 or more, got {h!r}"
            )
        heights[layer] = float(h)
    kinds = {layer: _check_kind(layer, k, src) for layer, k in layer_kinds.items()}
    mm = mm_per_drawing_unit(INSUNITS[units])
    assert mm is not None
    factor = mm / (25.4 if cell_units == "in" else 1.0)
    tol = REGION_TOL_MM / mm
    fixtures: list[Fixture] = []
    notes: list[EntityNote] = [n for n in drawing.notes if n.layer in kinds]
    unmapped = Counter(n.layer for n in drawing.notes if n.layer not in kinds)
    for o in drawing.outlines:
        if o.layer not in kinds:
            unmapped[o.layer] += 1
            continue
        pts = outline_points(o.segments, tol) * factor
        if len(pts) < 3:
            notes.append(EntityNote(o.handle, o.dxftype, o.layer, "encloses no area"))
            continue
        if float(np.abs(pts).max()) > MAX_MAGNITUDE:
            notes.append(
                EntityNote(
                    o.handle,
                    o.dxftype,
                    o.layer,
                    f"lies beyond {MAX_MAGNITUDE:g} {cell_units} from the origin",
                )
            )
            continue
        outline = tuple((float(x), float(y)) for x, y in pts)
        problem = polygon_problem(outline)
        if problem is not None:
            what = problem.replace("must be", "is not").replace("must enclose", "does not enclose")
            notes.append(EntityNote(o.handle, o.dxftype, o.layer, what))
            continue
        height = heights.get(o.layer)
        if height is None and o.thickness > 0:
            height = o.thickness * factor
        name = f"{o.block} ({o.layer})" if o.block else f"{o.layer} {o.handle}"
        source_info = {"file": drawing.source, "layer": o.layer, "handle": o.handle}
        fixtures.append(
            Fixture(
                id=fixture_id(o),
                name=name,
                kind=kinds[o.layer],
                outline=outline,
                height=height,
                extra={SOURCE_KEY: source_info},
            )
        )
    return DxfImport(src, units, tuple(fixtures), tuple(notes), dict(unmapped))


def merge_fixtures(
    cell: Cell,
    fixtures: Iterable[Fixture],
    *,
    drop_missing: bool = False,
) -> FixtureMerge:
    """Merge imported fixtures into a cell by id.

    A fixture whose id is new is added at the end. One that replaces an existing
    fixture takes the imported outline and kind, the imported height when there is one
    (else it keeps its own), and keeps its name and other keys (a user may have renamed
    it). With ``drop_missing``, fixtures imported earlier from the same DXF file
    (``extra["dxf_source"]["file"]``) that this import no longer has are removed.

    Examples
    --------
    >>> from kinematics.cell import Fixture
    >>> box = Fixture("dxf-1F", "Box", "table", ((0, 0), (1, 0), (1, 1)))
    >>> cell = Cell("c", fixtures=(box,))
    >>> moved = Fixture("dxf-1F", "CAD 1F", "table", ((0, 0), (2, 0), (2, 1)))
    >>> new = Fixture("dxf-20", "CAD 20", "guard", ((5, 5), (6, 5), (6, 6)))
    >>> m = merge_fixtures(cell, [moved, new])
    >>> m.summary(), m.cell.fixtures[0].name
    ('1 fixture added, 1 changed, 0 unchanged, 0 removed', 'Box')
    """
    incoming = list(fixtures)
    by_id = {f.id: f for f in incoming}
    files = {
        f.extra.get(SOURCE_KEY, {}).get("file")
        for f in incoming
        if isinstance(f.extra.get(SOURCE_KEY), dict)
    }
    out: list[Fixture] = []
    changed, unchanged, removed = [], [], []
    for f in cell.fixtures:
        new = by_id.pop(f.id, None)
        if new is None:
            src = f.extra.get(SOURCE_KEY)
            if drop_missing and isinstance(src, dict) and src.get("file") in files:
                removed.append(f.id)
                continue
            out.append(f)
            continue
        extra = dict(f.extra)
        extra.update(new.extra)
        merged = replace(
            f,
            kind=new.kind,
            outline=new.outline,
            height=new.height if new.height is not None else f.height,
            extra=extra,
        )
        (unchanged if merged == f else changed).append(f.id)
        out.append(f if merged == f else merged)
    added = [f for f in incoming if f.id in by_id]
    out.extend(added)
    return FixtureMerge(
        cell=replace(cell, fixtures=tuple(out)),
        added=tuple(f.id for f in added),
        changed=tuple(changed),
        unchanged=tuple(unchanged),
        removed=tuple(removed),
    )


# --------------------------------------------------------------------------- underlay

#: Largest distance between a drawn curve and the polyline the underlay draws, in mm.
UNDERLAY_TOL_MM = 0.2


@dataclass(frozen=True)
class DxfUnderlay:
    """A drawing's visible lines, for drawing it under the layout (never edited).

    Attributes
    ----------
    source : str
    units : str
        The drawing units used.
    layers : dict
        Layer -> tuple of polylines, each an array ``(M, 2)`` in the cell's units (a
        closed shape repeats its first point at the end).
    notes : tuple of EntityNote
        Entities that draw nothing here (text, images, unsupported types).
    """

    source: str
    units: str
    layers: dict[str, tuple[NDArray[np.float64], ...]]
    notes: tuple[EntityNote, ...] = ()

    def bounds(self) -> tuple[float, float, float, float] | None:
        """(x0, x1, y0, y1) of every line, None when there is none."""
        parts = [p for lines in self.layers.values() for p in lines]
        if not parts:
            return None
        xy = np.concatenate(parts)
        return (
            float(xy[:, 0].min()),
            float(xy[:, 0].max()),
            float(xy[:, 1].min()),
            float(xy[:, 1].max()),
        )

    def count(self) -> int:
        """Number of polylines."""
        return sum(len(lines) for lines in self.layers.values())


class _LineCollector:
    """Walks the model space like :class:`_Collector`, keeping every line as drawn."""

    def __init__(self, tol: float, layers: set[str] | None) -> None:
        self.tol = tol
        self.wanted = layers
        self.lines: dict[str, list[NDArray[np.float64]]] = {}
        self.notes: list[EntityNote] = []

    def walk(self, entities: Iterable[Any], prefix: str | None, layer0: str | None, depth: int):
        from ezdxf import path as ezpath

        for k, e in enumerate(entities):
            handle = f"{prefix}/{k}" if prefix is not None else str(e.dxf.get("handle", "?"))
            layer = str(e.dxf.get("layer", "0"))
            if layer0 is not None and layer == "0":
                layer = layer0  # block entities on layer 0 take the INSERT's layer
            t = e.dxftype()
            if t == "INSERT":
                if depth >= MAX_BLOCK_DEPTH:
                    self.notes.append(EntityNote(handle, t, layer, "blocks nested too deep"))
                    continue
                try:
                    inserts = list(e.multi_insert()) if e.mcount > 1 else [e]
                    for m, ins in enumerate(inserts):
                        sub = f"{handle}/{m}" if len(inserts) > 1 else handle
                        self.walk(ins.virtual_entities(), sub, layer, depth + 1)
                except Exception as exc:  # a malformed block is a note, not a failure
                    self.notes.append(EntityNote(handle, t, layer, f"could not be read ({exc})"))
                continue
            if self.wanted is not None and layer not in self.wanted:
                continue
            if t in _TEXT_TYPES:
                self.notes.append(EntityNote(handle, t, layer, "text is not drawn"))
                continue
            try:
                paths = ezpath.from_hatch(e) if t == "HATCH" else [ezpath.make_path(e, segments=16)]
            except TypeError:
                self.notes.append(EntityNote(handle, t, layer, "not a type the underlay draws"))
                continue
            except Exception as exc:
                self.notes.append(EntityNote(handle, t, layer, f"could not be read ({exc})"))
                continue
            for p in paths:
                for sub in p.sub_paths():
                    pts = np.array([(v.x, v.y) for v in sub.flattening(self.tol)], dtype=float)
                    if len(pts) >= 2 and np.isfinite(pts).all():
                        self.lines.setdefault(layer, []).append(pts)


def dxf_underlay(
    path: str | os.PathLike[str],
    *,
    cell_units: str = "mm",
    drawing_units: str | None = None,
    layers: Iterable[str] | None = None,
) -> DxfUnderlay:
    """Every line of a drawing's model space as polylines per layer, in the cell's units.

    Read with the same strict loader as :func:`read_dxf`; blocks are exploded the same
    way (an entity on layer "0" in a block takes its INSERT's layer). Curves (arcs,
    circles, ellipses, splines, bulges) become polylines within
    :data:`UNDERLAY_TOL_MM`; text and unsupported entities are listed in ``notes``.
    Points are seen from above (x and y of the world coordinates).

    Parameters
    ----------
    path : str or path-like
    cell_units : {"mm", "in"}
    drawing_units : str, optional
        The drawing's units (one of ``kinematics.dxf_units.IMPORT_UNITS``); needed when
        its ``$INSUNITS`` is unset, and overrides it when given.
    layers : iterable of str, optional
        Only these layers (default: all).

    Raises
    ------
    DxfReadError
        When the file cannot be read (the message names the line where it broke).
    DxfUnitsUnset
        When the drawing does not state its units and ``drawing_units`` is None.

    Examples
    --------
    >>> import ezdxf, tempfile
    >>> doc = ezdxf.new(units=6)  # metres
    >>> _ = doc.modelspace().add_line((0, 0), (2, 0), dxfattribs={"layer": "WALL"})
    >>> _ = doc.modelspace().add_circle((1, 1), 0.5, dxfattribs={"layer": "COLUMN"})
    >>> name = tempfile.mkdtemp() + "/hall.dxf"
    >>> doc.saveas(name)
    >>> u = dxf_underlay(name, cell_units="mm")
    >>> u.units, sorted(u.layers), u.layers["WALL"][0].tolist()
    ('m', ['COLUMN', 'WALL'], [[0.0, 0.0], [2000.0, 0.0]])
    >>> r = np.hypot(*(u.layers["COLUMN"][0] - [1000.0, 1000.0]).T)
    >>> bool(abs(r - 500.0).max() < UNDERLAY_TOL_MM)
    True
    """
    source = Path(path).name or str(path)
    if cell_units not in UNITS:
        raise DxfReadError(
            f"{source}: cell units must be one of {', '.join(UNITS)}, got {cell_units!r}"
        )
    if drawing_units is not None and drawing_units not in IMPORT_UNITS:
        raise DxfReadError(
            f"{source}: drawing units must be one of {', '.join(IMPORT_UNITS)}, "
            f"got {drawing_units!r}"
        )
    _size_check(path, source)
    doc, _notes = _load(path, source, recover=False)
    try:
        insunits = int(doc.header.get("$INSUNITS", UNITLESS) or UNITLESS)
    except (TypeError, ValueError):
        insunits = UNITLESS
    units = drawing_units
    if units is None:
        units = name_of(insunits) if mm_per_drawing_unit(insunits) else None
    if units is None or mm_per_drawing_unit(INSUNITS[units]) is None:
        raise DxfUnitsUnset(
            f"{source}: the drawing does not state its units ($INSUNITS is "
            f"{unit_label(insunits)}); name them in the underlay's \"units\" "
            f"({', '.join(IMPORT_UNITS)})"
        )
    mm = mm_per_drawing_unit(INSUNITS[units])
    assert mm is not None
    factor = mm / (25.4 if cell_units == "in" else 1.0)
    col = _LineCollector(UNDERLAY_TOL_MM / mm, None if layers is None else set(layers))
    col.walk(doc.modelspace(), None, None, 0)
    out = {
        layer: tuple(p * factor for p in lines) for layer, lines in sorted(col.lines.items())
    }
    return DxfUnderlay(source, units, out, tuple(col.notes))
