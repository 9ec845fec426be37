"""`elbowroom export` and `elbowroom import-dxf` as a user runs them: outputs, exit codes,
one-line messages. ezdxf writes the input drawings and reads the outputs back (reference);
$INSUNITS codes per the ezdxf documentation, "DXF units" (4 millimetres, 0 unitless)."""

from __future__ import annotations

import csv
import io
import os
from pathlib import Path

import ezdxf
import pytest

from app.cli import main
from kinematics.cellfile import load_cell

ROOT = Path(__file__).resolve().parents[2]
TRAY = ROOT / "sample_cells" / "tray_loading.cell.json"


def run(capsys, *args):
    code = main(list(args))
    out, err = capsys.readouterr()
    return code, out, err


def drawing(tmp_path, insunits=4, name="plan.dxf"):
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = insunits
    msp = doc.modelspace()
    msp.add_lwpolyline(
        [(900, 0), (1100, 0), (1100, 150), (900, 150)], close=True, dxfattribs={"layer": "BINS"}
    )
    msp.add_lwpolyline([(0, 0), (10, 0), (10, 10)], dxfattribs={"layer": "BINS"})
    msp.add_text("note", dxfattribs={"layer": "TEXT"})
    path = tmp_path / name
    doc.saveas(path)
    return path


def test_export_writes_dxf_and_csv(tmp_path, capsys):
    dxf, csv_path = tmp_path / "tray.dxf", tmp_path / "tray.csv"
    code, out, err = run(capsys, "export", str(TRAY), "--dxf", str(dxf), "--csv", str(csv_path))
    assert code == 0 and not err
    assert out.splitlines() == [f"wrote {dxf}", f"wrote {csv_path}"]
    doc = ezdxf.readfile(dxf)
    assert doc.header["$INSUNITS"] == 4
    rows = list(csv.DictReader(io.StringIO(csv_path.read_text())))
    assert len(rows) == len(load_cell(TRAY).targets)


@pytest.mark.parametrize(
    "args, message",
    [
        ([], "elbowroom export: nothing to export: give --dxf and/or --csv"),
        (["--dxf", "{tmp}/no/such/x.dxf"], "--dxf: could not be written (no such folder)"),
        (["--csv", "{tmp}"], "--csv: is a folder; give a file name"),
        (["--pdf", "x.pdf", "--scale", "1:3"], 'elbowroom export: --scale: must be one of "fit"'),
    ],
)
def test_export_bad_options_exit_2_with_one_line(args, message, tmp_path, capsys):
    args = [a.replace("{tmp}", str(tmp_path)) for a in args]
    code, out, err = run(capsys, "export", str(TRAY), *args)
    assert code == 2 and len(err.strip().splitlines()) == 1 and message in err


def test_export_bad_cell_exits_2(tmp_path, capsys):
    bad = tmp_path / "bad.cell.json"
    bad.write_text("{")
    code, _, err = run(capsys, "export", str(bad), "--dxf", str(tmp_path / "x.dxf"))
    assert code == 2 and err.startswith(f"{bad}: line 1")
    assert not (tmp_path / "x.dxf").exists()


def test_import_dxf_merges_saves_and_reports(tmp_path, capsys):
    cell = tmp_path / "tray.cell.json"
    cell.write_bytes(TRAY.read_bytes())
    out_path = tmp_path / "out.cell.json"
    path = drawing(tmp_path)
    code, out, err = run(
        capsys,
        "import-dxf",
        str(cell),
        str(path),
        "--layer-kind",
        "BINS=feeder",
        "--layer-height",
        "BINS=400",
        "-o",
        str(out_path),
    )
    assert code == 1, err  # the open polyline on BINS was not imported
    assert out.splitlines()[0].startswith("plan.dxf: 1 fixture added, 0 changed")
    assert "skipped 1 LWPOLYLINE on layer BINS: open (not closed)" in out
    assert "not asked for: 1 entity on layer TEXT" in out
    new = load_cell(out_path)
    added = new.fixtures[-1]
    assert added.kind == "feeder" and added.height == 400 and len(added.outline) == 4
    assert cell.read_bytes() == TRAY.read_bytes()  # -o leaves the input alone
    # Again in place: the same outline is unchanged, so the file keeps its content and no
    # backup of an identical version is made.
    before = out_path.read_bytes()
    code, out, _ = run(
        capsys,
        "import-dxf",
        str(out_path),
        str(path),
        "--layer-kind",
        "BINS=feeder",
        "--layer-height",
        "BINS=400",
    )
    assert "0 fixtures added, 0 changed, 1 unchanged" in out
    from kinematics.savefile import backup_files

    assert out_path.read_bytes() == before and backup_files(out_path) == []


def test_import_dxf_units_unset_needs_units(tmp_path, capsys):
    cell = tmp_path / "tray.cell.json"
    cell.write_bytes(TRAY.read_bytes())
    path = drawing(tmp_path, insunits=0)
    code, _, err = run(capsys, "import-dxf", str(cell), str(path), "--layer-kind", "BINS=feeder")
    assert (
        code == 2
        and "plan.dxf: the drawing does not state its units ($INSUNITS is unitless (0))" in err
    )
    assert cell.read_bytes() == TRAY.read_bytes()
    code, out, _ = run(
        capsys, "import-dxf", str(cell), str(path), "--layer-kind", "BINS=feeder", "--units", "mm"
    )
    assert code == 1 and "(read as mm)" in out


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--layer-kind", "BINS"], "--layer-kind must look like LAYER=VALUE, got 'BINS'"),
        (["--layer-kind", "WALLS=guard"], "layer 'WALLS' is not in the drawing"),
        (
            ["--layer-kind", "BINS=feeder", "--layer-height", "BINS=tall"],
            "--layer-height: BINS: must be a number, got 'tall'",
        ),
        (["--layer-kind", "BINS=feeder", "--units", "yard"], "argument --units: invalid choice"),
        (
            ["--layer-kind", "BINS=feeder", "-o", "{tmp}/none/out.cell.json"],
            "could not be written (no such folder)",
        ),
    ],
)
def test_import_dxf_bad_options_exit_2(extra, message, tmp_path, capsys):
    cell = tmp_path / "tray.cell.json"
    cell.write_bytes(TRAY.read_bytes())
    path = drawing(tmp_path)
    extra = [a.replace("{tmp}", str(tmp_path)) for a in extra]
    code, _, err = run(capsys, "import-dxf", str(cell), str(path), *extra)
    assert code == 2 and len(err.strip().splitlines()) == 1 and message in err, err


def test_import_dxf_truncated_file_names_the_line(tmp_path, capsys):
    cell = tmp_path / "tray.cell.json"
    cell.write_bytes(TRAY.read_bytes())
    text = drawing(tmp_path).read_text()
    lines = text[: text.index("ENTITIES") + 300].splitlines()
    cut = "\n".join(lines[: len(lines) // 2 * 2]) + "\n"
    bad = tmp_path / "cut.dxf"
    bad.write_text(cut)
    code, _, err = run(capsys, "import-dxf", str(cell), str(bad), "--layer-kind", "BINS=feeder")
    n = len(cut.splitlines())
    assert code == 2 and err.startswith(f"cut.dxf: line {n}: the file ends inside the ENTITIES")
    assert err.rstrip().endswith("(--recover reads what it can)")
    code, out, _ = run(
        capsys, "import-dxf", str(cell), str(bad), "--layer-kind", "BINS=feeder", "--recover"
    )
    assert out.startswith("recovered cut.dxf: found ")


def test_import_dxf_failed_save_keeps_the_cell(tmp_path, capsys, monkeypatch):
    cell = tmp_path / "tray.cell.json"
    cell.write_bytes(TRAY.read_bytes())
    path = drawing(tmp_path)

    def broken(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", broken)
    code, _, err = run(capsys, "import-dxf", str(cell), str(path), "--layer-kind", "BINS=feeder")
    assert code == 2 and "not saved: the disk holding" in err and "is full" in err
    assert cell.read_bytes() == TRAY.read_bytes()
