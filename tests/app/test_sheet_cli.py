"""`elbowroom export` writing review sheets: files, exit codes, one-line messages.

Paper sizes ISO 216 (A4 210 x 297 mm); scales ISO 5455; PDFs read back with pypdf."""

from __future__ import annotations

import io
import xml.etree.ElementTree as ET
from pathlib import Path

import pypdf
import pytest
from PySide6.QtGui import QImage

from app.cli import main

ROOT = Path(__file__).resolve().parents[2]
TRAY = ROOT / "sample_cells" / "tray_loading.cell.json"


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def test_export_writes_pdf_svg_and_png_with_the_options(tmp_path, capsys):
    pdf, svg, png = tmp_path / "r.pdf", tmp_path / "r.svg", tmp_path / "r.png"
    code, out, err = run(
        capsys, "export", str(TRAY), "--pdf", str(pdf), "--svg", str(svg), "--png", str(png),
        "--dpi", "72", "--paper", "A4", "--orientation", "portrait", "--scale", "1:20",
    )  # fmt: skip
    assert code == 0 and not err
    # On A4 portrait the target table takes a second sheet: one file per sheet for SVG, PNG.
    svg2, png2 = tmp_path / "r-2.svg", tmp_path / "r-2.png"
    assert out.splitlines() == [f"wrote {p}" for p in (pdf, svg, svg2, png, png2)]
    assert len(pypdf.PdfReader(pdf).pages) == 2
    reader = pypdf.PdfReader(io.BytesIO(pdf.read_bytes()))
    box = reader.pages[0].mediabox  # PDF points, 72 per inch
    assert (round(float(box.width) / 72 * 25.4), round(float(box.height) / 72 * 25.4)) == (210, 297)
    assert "Scale 1:20 (stated)" in " ".join(reader.pages[0].extract_text().split())
    root = ET.fromstring(svg.read_bytes())
    assert (root.get("width"), root.get("height")) == ("210mm", "297mm")
    img = QImage(str(png))
    assert (img.width(), img.height()) == (round(210 / 25.4 * 72), round(297 / 25.4 * 72))


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["--pdf", "{tmp}/r.pdf", "--paper", "B4"], '--paper: must be one of "A4", "A3"'),
        (["--pdf", "{tmp}/r.pdf", "--orientation", "up"], "--orientation: must be one of"),
        (["--pdf", "{tmp}/r.pdf", "--scale", "1:3"], '--scale: must be one of "fit", "50:1"'),
        (["--pdf", "{tmp}/r.pdf", "--dpi", "300"], "--dpi applies to --png only"),
        (["--png", "{tmp}/r.png", "--dpi", "ten"], "--dpi: must be a whole number from 36"),
        (["--png", "{tmp}/r.png", "--paper", "A1", "--dpi", "600"], "more than the 100 million"),
        (["--dxf", "{tmp}/r.dxf", "--paper", "A4"], "--paper applies to --pdf or --svg or --png"),
        (["--pdf", "{tmp}/none/r.pdf"], "--pdf: could not be written (no such folder)"),
        (["--svg", "{tmp}"], "--svg: is a folder; give a file name"),
    ],
)
def test_bad_sheet_options_exit_2_with_one_line_and_write_nothing(args, message, tmp_path, capsys):
    args = [a.replace("{tmp}", str(tmp_path)) for a in args]
    code, out, err = run(capsys, "export", str(TRAY), *args)
    assert code == 2 and not out
    assert len(err.strip().splitlines()) == 1 and message in err
    assert list(tmp_path.iterdir()) == []


def test_an_unwritable_output_exits_2_and_keeps_the_old_file(tmp_path, capsys, monkeypatch):
    old = tmp_path / "r.pdf"
    old.write_bytes(b"previous sheet")
    import kinematics.atomic as atomic

    real = atomic.os.replace

    def full_disk(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(atomic.os, "replace", full_disk)
    code, _out, err = run(capsys, "export", str(TRAY), "--pdf", str(old))
    monkeypatch.setattr(atomic.os, "replace", real)
    assert code == 2
    assert err.strip() == f"{old}: --pdf: could not be written (No space left on device)"
    assert old.read_bytes() == b"previous sheet"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r.pdf"]  # no temporary file left
