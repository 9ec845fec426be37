"""Review sheets as a reviewer gets them: PDF read back with pypdf, pages rendered by
PDFium (pypdfium2) and, where installed, poppler's pdftoppm; SVG parsed with xml.etree.

Paper sizes ISO 216 (A3 297 x 420 mm, A4 210 x 297 mm); scales ISO 5455; title-block
fields ISO 7200; 1 inch = 25.4 mm (exact) for converting rendered pixels to millimetres.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import xml.etree.ElementTree as ET
from dataclasses import replace
from pathlib import Path

import numpy as np
import pypdf
import pypdfium2 as pdfium
import pytest

from app.sheet.content import SheetOptions, sheet_content
from app.sheet.layout import parse_scale
from app.sheet.render import pdf_bytes, plan_sheets, png_bytes, svg_bytes, write_sheets
from kinematics.caution import CAUTION_LINES
from kinematics.cell import Target
from kinematics.cellfile import load_cell
from kinematics.evaluate import evaluate_cell
from kinematics.review import with_review

REPO = Path(__file__).resolve().parents[3]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"
KIT = REPO / "sample_cells" / "kitting_two_arm.cell.json"

REVIEW = {
    "title": "Tray loading cell",
    "supplementary_title": "Layout for the design review",
    "legal_owner": "Northfield Fixtures Ltd",
    "identification_number": "NF-4471-02",
    "revision": "C",
    "date": "2026-11-30",
    "document_type": "layout drawing",
    "document_status": "under approval",
    "creator": "A. Bremer",
    "approval_person": "K. Osei",
    "technical_reference": "Cell spec 12",
}


def flat(text: str) -> str:
    """Extracted text with every run of white space as one space."""
    return " ".join(text.split())


def plan_for(path=TRAY, review=REVIEW, **opts):
    cell = load_cell(path)
    if review:
        cell = with_review(cell, review)
    return plan_sheets(sheet_content(evaluate_cell(cell), path), SheetOptions(**opts))


def pdf_pages(data: bytes) -> list[str]:
    reader = pypdf.PdfReader(__import__("io").BytesIO(data))
    return [flat(p.extract_text()) for p in reader.pages]


def render_pdfium(data: bytes, dpi: int) -> list[np.ndarray]:
    doc = pdfium.PdfDocument(data)
    out = []
    for i in range(len(doc)):
        bitmap = doc[i].render(scale=dpi / 72.0, grayscale=True)
        out.append(bitmap.to_numpy().reshape(bitmap.height, bitmap.width))
    return out


def render_pdftoppm(data: bytes, dpi: int, tmp_path: Path) -> list[np.ndarray]:
    from PySide6.QtGui import QImage

    src = tmp_path / "sheet.pdf"
    src.write_bytes(data)
    subprocess.run(["pdftoppm", "-r", str(dpi), "-gray", "-png", src, tmp_path / "p"], check=True)
    out = []
    for png in sorted(tmp_path.glob("p-*.png")):
        img = QImage(str(png)).convertToFormat(QImage.Format.Format_Grayscale8)
        a = np.frombuffer(img.constBits(), np.uint8).reshape(img.height(), img.bytesPerLine())
        out.append(a[:, : img.width()].copy())
    return out


RENDERERS = ["pdfium", "pdftoppm"]


def render(name: str, data: bytes, dpi: int, tmp_path: Path) -> list[np.ndarray]:
    if name == "pdftoppm":
        # A second, independent renderer (poppler); .ci/run installs it where it is missing.
        assert shutil.which("pdftoppm"), "pdftoppm not found: install poppler-utils"
        return render_pdftoppm(data, dpi, tmp_path)
    return render_pdfium(data, dpi)


def test_pdf_text_has_every_target_the_title_block_and_the_caution():
    plan = plan_for()
    pages = pdf_pages(pdf_bytes(plan))
    assert len(pages) == plan.sheets == 1
    text = pages[0]
    for t in load_cell(TRAY).targets:
        assert t.id in text
    for value in REVIEW.values():
        assert value in text, value
    for label in ("Legal owner", "Identification number", "Revision index", "Date of issue",
                  "Sheet", "Document type", "Creator", "Approval person",
                  "Technical reference", "Document status", "Title"):  # fmt: skip
        assert label in text, label
    assert "1 of 1" in text and "Scale 1:10" in text
    for line in CAUTION_LINES:
        assert flat(line) in text
    # The summary: counts, failing targets with reasons, cycle time, placement tolerance.
    assert "9 of 11 targets feasible, 2 fail" in text
    assert "outfeed_far Outfeed place, far end: beyond outer reach by 53.0 mm" in text
    assert re.search(r"Cycle time .*Tray loader, sequence 1 \(13 targets\): \d+\.\d\d s", text)
    assert "Placement tolerance" in text


@pytest.mark.parametrize("renderer", RENDERERS)
def test_every_page_rendered_is_not_blank(renderer, tmp_path):
    long = plan_for(path=KIT, paper="A4", orientation="portrait")
    assert long.sheets == 2
    for page in render(renderer, pdf_bytes(long), 60, tmp_path):
        h, w = page.shape
        # A4 portrait at 60 dpi: 210 x 297 mm (ISO 216).
        assert (w, h) == (round(210 / 25.4 * 60), round(297 / 25.4 * 60))
        dark = page < 128
        assert dark.mean() > 0.01
        # Ink in the title block (bottom right) and in the upper half (drawing or table).
        assert dark[int(0.85 * h) :, int(0.5 * w) :].mean() > 0.005
        assert dark[: h // 2].mean() > 0.005


def bar_length_mm(page: np.ndarray, dpi: int, plan) -> float:
    """The longest unbroken dark run in the scale strip, in mm (the bar's outline)."""
    strip = plan.parts["strip"]
    px = dpi / 25.4
    # The strip's rows clear of the drawing frame along its bottom edge.
    top, bottom = int((strip.y + 0.5) * px), int((strip.bottom - 1.5) * px)
    rows = page[top:bottom, int(strip.x * px) : int(strip.right * px)]
    best = 0
    for row in rows < 160:
        edges = np.diff(np.concatenate([[0], row.astype(np.int8), [0]]))
        starts, stops = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
        if len(starts):
            best = max(best, int((stops - starts).max()))
    return best / px


@pytest.mark.parametrize("renderer", RENDERERS)
@pytest.mark.parametrize("scale", ["1:5", "1:10", "1:20"])
def test_scale_bar_measured_on_the_page_matches_the_stated_scale(renderer, scale, tmp_path):
    plan = plan_for(scale=parse_scale(scale))
    data = pdf_bytes(plan)
    text = pdf_pages(data)[0]
    # What the sheet says: the scale and the bar's length in the cell's units (mm).
    assert f"Scale {scale} (stated)" in text
    bar_mm = float(re.search(r"scale bar (\d+(?:\.\d+)?) mm", text).group(1))
    paper_per_world = 1.0 / int(scale.split(":")[1])
    dpi = 300
    measured = bar_length_mm(render(renderer, data, dpi, tmp_path)[0], dpi, plan)
    assert measured == pytest.approx(bar_mm * paper_per_world, rel=0.01)


@pytest.mark.parametrize(
    ("paper", "orientation", "size"),
    [("A3", "landscape", (420, 297)), ("A4", "portrait", (210, 297))],
)
def test_svg_has_text_and_the_paper_size_in_mm(paper, orientation, size):
    plan = plan_for(paper=paper, orientation=orientation)
    root = ET.fromstring(svg_bytes(plan, 0))
    assert (root.get("width"), root.get("height")) == (f"{size[0]}mm", f"{size[1]}mm")
    texts = [e for e in root.iter() if e.tag.endswith("}text") or e.tag == "text"]
    assert len(texts) > 50
    words = flat(" ".join("".join(e.itertext()) for e in texts))
    for t in load_cell(TRAY).targets:
        assert t.id in words
    assert "NF-4471-02" in words and "SAFETY CAUTION" in words


def test_png_at_a_chosen_dpi_is_the_paper_size():
    from PySide6.QtGui import QImage

    plan = plan_for(paper="A4", orientation="landscape")
    img = QImage.fromData(png_bytes(plan, 0, dpi=100))
    # A4 landscape 297 x 210 mm at 100 dpi (1 in = 25.4 mm).
    assert (img.width(), img.height()) == (round(297 / 25.4 * 100), round(210 / 25.4 * 100))
    assert img.dotsPerMeterX() == round(100 / 0.0254)
    gray = img.convertToFormat(QImage.Format.Format_Grayscale8)
    a = np.frombuffer(gray.constBits(), np.uint8).reshape(gray.height(), gray.bytesPerLine())
    assert (a[:, : gray.width()] < 128).mean() > 0.01


def test_a_long_table_continues_on_further_sheets_each_with_title_block_and_caution():
    cell = load_cell(TRAY)
    extra = tuple(
        Target(f"grid_{i:02d}", f"Grid point {i}", -300.0 + 20.0 * (i % 30), 100.0 + 10 * (i // 30),
               "loader")
        for i in range(45)
    )  # fmt: skip
    cell = with_review(replace(cell, targets=cell.targets + extra), REVIEW)
    plan = plan_sheets(sheet_content(evaluate_cell(cell), TRAY), SheetOptions())
    assert plan.sheets == 2
    pages = pdf_pages(pdf_bytes(plan))
    assert len(pages) == 2
    assert "1 of 2" in pages[0] and "2 of 2" in pages[1]
    for page in pages:
        assert "NF-4471-02" in page and "Tray loading cell" in page
        assert flat(CAUTION_LINES[-1]) in page
    assert "Targets: rows 1–56 of 56" in pages[1]
    for t in cell.targets:
        assert t.id in pages[1]


def test_the_legend_lists_the_styles_drawn_and_only_those():
    shown = pdf_pages(pdf_bytes(plan_for(overlays=frozenset({"annulus"}))))[0]
    assert "reach annulus (work envelope)" in shown
    assert "keep-out (hatched, dashed edge)" in shown  # the cabinet door is a keep-out zone
    assert "feeder (dotted fill)" not in shown  # no feeder in the cell
    assert "fails: inside the inner hole" not in shown  # no target fails that way
    assert "fails: beyond outer reach" in shown
    bare = pdf_pages(pdf_bytes(plan_for(overlays=frozenset(), ghosts="none")))[0]
    assert "reach annulus" not in bare and "chosen" not in bare.split("Legend")[1]


def test_a_failed_write_keeps_the_existing_file(tmp_path, monkeypatch):
    target = tmp_path / "review.pdf"
    target.write_bytes(b"old sheet")
    plan = plan_for()
    import app.sheet.render as render_mod

    def broken(*_a, **_k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(render_mod, "write_atomic", broken)
    with pytest.raises(OSError):
        write_sheets(plan, pdf=target)
    assert target.read_bytes() == b"old sheet"
    monkeypatch.undo()
    svg = tmp_path / "review.svg"
    assert write_sheets(plan_for(path=KIT, paper="A4", orientation="portrait"), svg=svg) == [
        svg,
        tmp_path / "review-2.svg",
    ]
    assert sorted(p.name for p in tmp_path.iterdir()) == [
        "review-2.svg",
        "review.pdf",
        "review.svg",
    ]


@pytest.mark.parametrize(
    "path", sorted((REPO / "sample_cells").glob("*.cell.json")), ids=lambda p: p.stem
)
def test_every_sample_cell_exports_and_its_collisions_are_in_the_legend(path):
    # A cell whose poses hit fixtures draws the colliding bodies and contact marks; the
    # legend lists them exactly when some pose the sheet shows collides.
    cell = load_cell(path)
    ev = evaluate_cell(cell)
    colliding = any(
        bool((np.asarray(a.ik.ok) & np.asarray(a.collides)).any()) for a in ev.arms.values()
    )
    text = pdf_pages(pdf_bytes(plan_for(path=path, review=None, ghosts="all")))[0]
    assert ("contact point (circled cross)" in text) == colliding
    assert any(t.id in text for t in cell.targets)
