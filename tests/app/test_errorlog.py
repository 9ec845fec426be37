"""Internal errors: exit 3, one line naming the file, the traceback in the state folder's log.

Exit statuses follow the convention of the Unix tools (0 success, 1 a finding such
as grep's "no match", 2 trouble with the input; common practice, no source); ours
adds 3 for a bug, so a script can tell a crash from a result. The log's place is the
XDG Base Directory Specification's $XDG_STATE_HOME (freedesktop.org, version 0.8:
"state data that should persist between application restarts"), found by platformdirs.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap
import warnings
from pathlib import Path

import pytest

from app import cli
from app.errorlog import EXIT_INTERNAL, log_path, state_dir

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"


def test_the_log_lives_in_the_users_state_folder(isolated_state):
    assert state_dir() == isolated_state / "elbowroom"
    assert log_path() == isolated_state / "elbowroom" / "errors.log"


@pytest.mark.parametrize("name", sorted(cli.SUBCOMMANDS))
def test_every_subcommand_exits_3_with_one_line_on_an_internal_error(
    name, monkeypatch, capsys, tmp_path
):
    def broken(args):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setitem(cli.SUBCOMMANDS, name, broken)
    given = str(tmp_path / "line_b.cell.json")
    code = cli.main([name, given, "--json"])
    out, err = capsys.readouterr()
    assert code == EXIT_INTERNAL == 3
    assert out == ""
    assert err == (  # the file named as given on the command line
        f"elbowroom {name}: {given}: internal error (ZeroDivisionError); "
        f"details in {log_path()}\n"
    )
    text = log_path().read_text()
    assert "Traceback (most recent call last)" in text and "float division by zero" in text


def test_an_engine_failure_in_check_is_exit_3_not_1(monkeypatch, capsys):
    import kinematics.report

    def engine_bug(cell):
        raise IndexError("list index out of range")

    monkeypatch.setattr(kinematics.report, "check_report", engine_bug)
    code = cli.main(["check", str(TRAY)])
    err = capsys.readouterr().err
    assert code == 3 and err.count("\n") == 1
    assert err.startswith(f"elbowroom check: {TRAY}: internal error (IndexError)")
    assert "Traceback" not in err


def test_engine_warnings_go_to_the_log_not_the_terminal(monkeypatch, capsys):
    import kinematics.report

    real = kinematics.report.check_report

    def noisy(cell):
        with warnings.catch_warnings():
            warnings.simplefilter("always")
            warnings.warn("overflow encountered in divide", RuntimeWarning, stacklevel=1)
        return real(cell)

    monkeypatch.setattr(kinematics.report, "check_report", noisy)
    code = cli.main(["check", str(TRAY)])
    err = capsys.readouterr().err
    assert code == 1 and err == ""  # tray_loading has two failing targets (README)
    assert "overflow encountered in divide" in log_path().read_text()


def test_an_unwritable_log_still_gives_one_line(monkeypatch, capsys, isolated_state):
    isolated_state.write_text("a file where the folder should be")

    def broken(args):
        raise RuntimeError("bug")

    monkeypatch.setitem(cli.SUBCOMMANDS, "check", broken)
    assert cli.main(["check", "x.cell.json"]) == 3
    assert capsys.readouterr().err == (
        "elbowroom check: x.cell.json: internal error (RuntimeError); "
        "the error log could not be written\n"
    )


def run(code: str, tmp_path: Path, shell: str | None = None) -> subprocess.CompletedProcess:
    env = dict(os.environ)
    env.update(
        QT_QPA_PLATFORM="offscreen",
        XDG_CONFIG_HOME=str(tmp_path / "config"),
        XDG_STATE_HOME=str(tmp_path / "state"),
        PYTHONPATH=str(REPO),
    )
    script = tmp_path / "script.py"
    script.write_text(textwrap.dedent(code))
    cmd = (
        ["bash", "-c", shell.replace("SCRIPT", f'"{sys.executable}" "{script}"')]
        if shell
        else [
            sys.executable,
            str(script),
        ]
    )
    return subprocess.run(cmd, env=env, capture_output=True, text=True, timeout=300, cwd=tmp_path)


@pytest.mark.parametrize("as_json", [False, True])
def test_check_with_its_standard_output_closed(tmp_path, as_json):
    # `>&-` closes file descriptor 1 (POSIX shell, "Duplicating an Output File Descriptor").
    args = [str(TRAY)] + (["--json"] if as_json else [])
    proc = run(
        f"""
        import sys
        from app.cli import main
        sys.exit(main(["check", *{args!r}]))
        """,
        tmp_path,
        shell="SCRIPT >&-",
    )
    assert proc.returncode == 2
    assert proc.stderr == (
        "elbowroom check: could not write the report (standard output is closed)\n"
    )


def test_check_with_both_outputs_closed_still_exits_2(tmp_path):
    proc = run(
        f"""
        import sys
        from app.cli import main
        sys.exit(main(["check", {str(TRAY)!r}]))
        """,
        tmp_path,
        shell="SCRIPT >&- 2>&-",
    )
    assert proc.returncode == 2


def test_an_error_inside_the_window_saves_the_work_and_exits_3(tmp_path):
    cell = tmp_path / "line_c.cell.json"
    cell.write_bytes(TRAY.read_bytes())
    proc = run(
        f"""
        import sys
        from dataclasses import replace
        from PySide6.QtCore import QTimer
        from PySide6.QtWidgets import QApplication
        from app.cli import main
        from app.main_window import MainWindow
        from app.panels.validate import replace_arm

        MainWindow.show_internal_error = lambda self, line: None  # no one to click OK
        MainWindow.ask_recovery = lambda self, entries: ["keep"] * len(entries)
        app = QApplication(sys.argv[:1])

        def edit_then_fail():
            (win,) = [w for w in app.topLevelWidgets() if isinstance(w, MainWindow)]
            cell = win.document.cell
            win.document.edit("Move", replace_arm(cell, replace(cell.arms[0], x=77.0)))
            raise RuntimeError("a bug in a slot")

        QTimer.singleShot(300, edit_then_fail)
        sys.exit(main([{str(cell)!r}]))
        """,
        tmp_path,
    )
    assert proc.returncode == 3, proc.stderr
    log = tmp_path / "state" / "elbowroom" / "errors.log"
    assert proc.stderr.splitlines()[-1] == (
        f"elbowroom: line_c.cell.json: internal error (RuntimeError); details in {log}"
    )
    assert "Traceback" not in proc.stderr and "a bug in a slot" in log.read_text()
    (rec,) = (tmp_path / "state" / "elbowroom" / "recovery").glob("*.recovery.json")
    record = json.loads(rec.read_text())
    assert record["file"] == str(cell) and '"x": 77' in record["cell_text"]
    assert '"x": 77' not in cell.read_text()  # the file itself is untouched
