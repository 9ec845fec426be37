"""Page arithmetic of the review sheet against the drawing standards.

ISO 216: A4 210 x 297, A3 297 x 420, A2 420 x 594, A1 594 x 841 mm. ISO 5455
recommended scales: 50:1, 20:1, 10:1, 5:1, 2:1, 1:1, 1:2, 1:5, 1:10, 1:20, 1:50, 1:100,
1:200, 1:500, 1:1000 (and on by tens). ISO 5457: a 20 mm filing margin at the left,
10 mm elsewhere. ISO 7200: title block 180 mm wide.
"""

from __future__ import annotations

import numpy as np
import pytest

from app.sheet.layout import (
    SCALES,
    TITLE_FIELDS,
    TITLE_W,
    Box,
    fit_scale,
    paginate,
    paper_size,
    parse_scale,
    place_labels,
    plan_mapping,
    scale_bar,
    sheet_frame,
    split_drawing,
)

ISO_216 = {"A4": (210, 297), "A3": (297, 420), "A2": (420, 594), "A1": (594, 841)}
ISO_5455 = ["50:1", "20:1", "10:1", "5:1", "2:1", "1:1", "1:2", "1:5", "1:10", "1:20", "1:50",
            "1:100", "1:200", "1:500", "1:1000"]  # fmt: skip


@pytest.mark.parametrize("paper", ISO_216)
def test_paper_sizes_are_iso_216(paper):
    w, h = ISO_216[paper]
    assert paper_size(paper, "portrait") == (w, h)
    assert paper_size(paper, "landscape") == (h, w)


def test_scales_are_the_iso_5455_series_in_order():
    names = [s.text for s in SCALES]
    assert names[: len(ISO_5455)] == ISO_5455
    assert [s.ratio for s in SCALES] == sorted((s.ratio for s in SCALES), reverse=True)
    assert parse_scale("1:10").ratio == 0.1 and parse_scale(" 1 : 20 ").world == 20
    with pytest.raises(ValueError, match='scale must be one of "fit", "50:1"'):
        parse_scale("1:3")


@pytest.mark.parametrize(
    ("extent", "area", "expected"),
    [
        ((1400.0, 1400.0), (150.0, 150.0), "1:10"),  # 140 mm fits 150
        ((1400.0, 1400.0), (139.0, 150.0), "1:20"),  # 140 mm does not fit 139
        ((20.0, 5.0), (250.0, 200.0), "10:1"),
        ((5.0e5, 1.0e5), (250.0, 200.0), "1:2000"),
    ],
)
def test_fit_picks_the_largest_standard_scale_that_fits(extent, area, expected):
    s = fit_scale(extent, area)
    assert s.text == expected
    assert extent[0] * s.ratio <= area[0] and extent[1] * s.ratio <= area[1]
    larger = SCALES[SCALES.index(s) - 1]
    assert extent[0] * larger.ratio > area[0] or extent[1] * larger.ratio > area[1]


def test_mapping_is_true_to_scale_and_y_up():
    m = plan_mapping((-700.0, 700.0, -700.0, 700.0), Box(0, 0, 200, 160), 1.0, parse_scale("1:10"))
    (x0, y0), (x1, y1) = m.to_paper(-700, -700), m.to_paper(700, 700)
    assert x1 - x0 == pytest.approx(140.0) and y0 - y1 == pytest.approx(140.0)  # y up
    # An inch cell: 1 in = 25.4 mm (exact), so 10 in at 1:1 is 254 mm on paper.
    inch = plan_mapping((0, 10, 0, 1), Box(0, 0, 300, 100), 25.4, parse_scale("1:1"))
    assert inch.to_paper(10, 0)[0] - inch.to_paper(0, 0)[0] == pytest.approx(254.0)


@pytest.mark.parametrize("paper", ISO_216)
@pytest.mark.parametrize("orientation", ["landscape", "portrait"])
def test_frame_margins_and_title_block(paper, orientation):
    f = sheet_frame(paper, orientation)
    assert (f.border.x, f.border.y) == (20.0, 10.0)  # ISO 5457
    assert f.width - f.border.right == 10.0 and f.height - f.border.bottom == 10.0
    assert f.title.w == TITLE_W == 180.0 and f.title.right == f.border.right
    assert f.title.bottom == f.border.bottom
    parts = split_drawing(f)
    for name in ("drawing", "plan", "strip", "side"):
        b = parts[name]
        assert f.border.contains(b.x, b.y) and f.border.contains(b.right, b.bottom), name
        assert b.bottom <= f.caution.y + 1e-9 or b.right <= f.caution.x, name
    # Every title field lies inside the block and none overlap.
    boxes = [b for _k, b in TITLE_FIELDS]
    assert all(b.right <= 180.0 and b.bottom <= f.title.h for b in boxes)
    for i, a in enumerate(boxes):
        for b in boxes[i + 1 :]:
            assert a.right <= b.x or b.right <= a.x or a.bottom <= b.y or b.bottom <= a.y


def test_scale_bar_is_round_and_fits():
    for k in (0.05, 0.1, 0.2, 1.0, 2.54):
        length, parts = scale_bar(k, 80.0)
        assert 80.0 / 2.5 <= length * k <= 80.0
        assert f"{length:e}"[0] in "125" and parts in (4, 5)


def test_pages_take_rows_in_order_without_loss():
    heights = [3.0, 3.0, 6.0, 3.0] * 20
    pages = paginate(heights, 20.0, 50.0)
    assert pages[0][0] == 0 and pages[-1][1] == len(heights)
    assert all(a[1] == b[0] for a, b in zip(pages, pages[1:]))
    assert sum(heights[slice(*pages[0])]) <= 20.0
    assert all(sum(heights[a:b]) <= 50.0 for a, b in pages[1:])


def test_labels_never_overlap_markers_or_each_other():
    rng = np.random.default_rng(3)
    anchors = rng.uniform(20, 180, size=(120, 2))
    sizes = np.column_stack([rng.uniform(4, 10, 120), np.full(120, 2.0)])
    blocked = np.column_stack([anchors - 1.5, anchors + 1.5])
    spots = place_labels(anchors, sizes, blocked, Box(0, 0, 200, 200), 2.0)
    boxes = [(x, y, x + w, y + h) for s, (w, h) in zip(spots, sizes) if s for x, y in [s]]
    assert len(boxes) > 40
    for i, a in enumerate(boxes):
        for b in [*boxes[i + 1 :], *map(tuple, blocked)]:
            overlap = min(a[2], b[2]) - max(a[0], b[0]), min(a[3], b[3]) - max(a[1], b[1])
            assert overlap[0] <= 1e-6 or overlap[1] <= 1e-6
