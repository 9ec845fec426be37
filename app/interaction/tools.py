"""The drawing and measuring tools' state (no Qt): polygon, rectangle and measure.

Each tool takes snapped world points and says what to draw and, when it finishes, the
outline or distance it made. Outlines are checked with the cell file's rule.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from .snapping import measure, outline_problem, rectangle_outline

__all__ = ["TOOLS", "PolygonTool", "RectangleTool", "MeasureTool", "Finished"]

Point = tuple[float, float]

#: The canvas tools, in toolbar order.
TOOLS = ("select", "polygon", "rectangle", "measure", "add_target")


@dataclass(frozen=True)
class Finished:
    """A finished outline, or why there is none (``problem``)."""

    outline: tuple[Point, ...] = ()
    problem: str = ""


@dataclass
class PolygonTool:
    """Click vertices; double-click or Enter finishes, Backspace takes back the last one.

    Examples
    --------
    >>> t = PolygonTool()
    >>> for p in [(0, 0), (10, 0), (10, 10), (10, 10)]:  # a double-click repeats the last
    ...     t.click(p)
    >>> t.finish()
    Finished(outline=((0, 0), (10, 0), (10, 10)), problem='')
    >>> t.points
    []
    """

    points: list[Point] = field(default_factory=list)

    def click(self, p: Point) -> None:
        self.points.append(p)

    def undo(self) -> None:
        if self.points:
            self.points.pop()

    def preview(self, cursor: Point | None) -> list[Point]:
        """The rubber-band polyline to draw (closed once it has three points)."""
        pts = self.points + ([cursor] if cursor is not None else [])
        return pts + pts[:1] if len(pts) >= 3 else pts

    def finish(self) -> Finished:
        pts = list(self.points)
        # A double-click adds its first click as a vertex; drop an exact repeat.
        while len(pts) >= 2 and pts[-1] == pts[-2]:
            pts.pop()
        problem = outline_problem(pts)
        if problem:
            return Finished(problem=problem)
        self.points = []
        return Finished(tuple(pts))


@dataclass
class RectangleTool:
    """Press one corner, drag, release on the opposite corner."""

    start: Point | None = None

    def press(self, p: Point) -> None:
        self.start = p

    def preview(self, cursor: Point | None) -> list[Point]:
        if self.start is None or cursor is None:
            return []
        r = list(rectangle_outline(self.start, cursor))
        return r + r[:1]

    def release(self, p: Point, moved: bool) -> Finished:
        start, self.start = self.start, None
        if start is None:
            return Finished(problem="press and drag to draw a rectangle")
        outline = rectangle_outline(start, p)
        problem = outline_problem(outline) if moved else "drag to give it a size"
        return Finished(problem=problem) if problem else Finished(outline)


@dataclass
class MeasureTool:
    """Click two points; a third click starts a new measurement.

    Examples
    --------
    >>> m = MeasureTool()
    >>> m.click((0.0, 0.0)); m.click((3.0, 4.0))
    >>> m.result()
    (5.0, 53.13010235415598)
    """

    points: list[Point] = field(default_factory=list)
    fixed: bool = False

    def click(self, p: Point) -> None:
        if len(self.points) != 1 or self.fixed:
            self.points = [p]
            self.fixed = False
        else:
            self.points = [self.points[0], p]
            self.fixed = True

    def preview(self, cursor: Point | None) -> list[Point]:
        pts = list(self.points)
        if cursor is not None and len(pts) == 1 and not self.fixed:
            pts.append(cursor)
        return pts

    def result(self, cursor: Point | None = None) -> tuple[float, float] | None:
        pts = self.preview(cursor)
        return measure(pts[0], pts[1]) if len(pts) == 2 else None
