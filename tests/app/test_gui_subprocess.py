"""The program as started from the command line, each run in a fresh interpreter.

A fresh process is the only way to see how the program exits: a crash while Qt
and pyqtgraph tear down (seen with PySide6 6.12: "Fatal Python error:
none_dealloc") shows up only as the exit status of the process.
"""

from __future__ import annotations

import json
import os
import struct
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"


def run_python(code: str, tmp_path: Path, timeout: float = 300) -> subprocess.CompletedProcess:
    env = dict(os.environ)
    env["QT_QPA_PLATFORM"] = "offscreen"
    env["XDG_CONFIG_HOME"] = str(tmp_path / "config")  # never the user's settings
    env["PYTHONPATH"] = str(REPO)
    script = tmp_path / "script.py"
    script.write_text(textwrap.dedent(code))
    return subprocess.run(
        [sys.executable, str(script)],
        cwd=tmp_path,
        env=env,
        capture_output=True,
        text=True,
        timeout=timeout,
    )


def png_size(path: Path) -> tuple[int, int]:
    # PNG: 8-byte signature, then the IHDR chunk with width and height as big-endian
    # 32-bit integers at bytes 16..24 (PNG specification, W3C / ISO 15948, sec. 11.2.2).
    data = path.read_bytes()[:24]
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def test_500_base_moves_with_repaint_then_normal_exit(tmp_path):
    proc = run_python(
        """
        import math, sys
        from dataclasses import replace
        from PySide6.QtCore import QTimer
        from PySide6.QtWidgets import QApplication
        from app import gui
        from app.main_window import MainWindow
        from app.panels.validate import replace_arm

        app = QApplication(sys.argv[:1])
        report = {}

        def steps():
            win = next(w for w in QApplication.topLevelWidgets() if isinstance(w, MainWindow))
            doc = win.document
            start = doc.cell.arms[0]
            for i in range(500):
                a = i * 0.05
                arm = replace(start, x=start.x + 150 * math.cos(a), y=start.y + 150 * math.sin(a))
                doc.preview(replace_arm(doc.cell, arm))
                QApplication.processEvents()
                win.canvas.repaint()
            doc.commit_preview("Move base of " + start.name)
            report["steps"] = win.undo_stack.count()
            report["rows"] = win.target_table.source.rowCount()
            win.ask_unsaved_changes = lambda: "discard"
            win.close()

        QTimer.singleShot(0, steps)
        code = gui.run(None)
        print("undo steps", report.get("steps"), "rows", report.get("rows"), "code", code)
        sys.exit(code)
        """,
        tmp_path,
    )
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert "undo steps 1 rows 11 code 0" in proc.stdout
    assert "Fatal" not in proc.stderr and "Traceback" not in proc.stderr


def test_screenshot_is_written_at_the_default_size(tmp_path):
    shot = tmp_path / "main.png"
    proc = run_python(
        f"""
        import sys
        from pathlib import Path
        from app import gui
        sys.exit(gui.run(None, screenshot=Path({str(shot)!r})))
        """,
        tmp_path,
    )
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert png_size(shot) == (1600, 1000)


def test_screenshot_at_a_given_size_of_a_given_file(tmp_path):
    shot = tmp_path / "small.png"
    proc = run_python(
        f"""
        import sys
        from app.cli import main
        sys.exit(main([{str(TRAY)!r}, "--screenshot", {str(shot)!r}, "--size", "900x640"]))
        """,
        tmp_path,
    )
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert png_size(shot) == (900, 640)


def test_screenshot_is_the_same_picture_on_a_busy_machine(tmp_path):
    # The picture is taken once the window has settled (events, not a clock): a second run
    # with a thread hogging the interpreter (as on a loaded machine) gives the same bytes.
    shots = [tmp_path / "calm.png", tmp_path / "busy.png"]
    for shot, busy in zip(shots, (False, True), strict=True):
        proc = run_python(
            f"""
            import sys, threading
            from pathlib import Path
            from app import gui

            def spin():
                while True:
                    sum(range(10_000))

            if {busy!r}:
                threading.Thread(target=spin, daemon=True).start()
            sys.exit(gui.run(Path({str(TRAY)!r}), screenshot=Path({str(shot)!r}), size=(1000, 700)))
            """,
            tmp_path,
        )
        assert proc.returncode == 0, proc.stderr[-2000:]
    calm, busy = (p.read_bytes() for p in shots)
    assert calm == busy
    # And it is a picture of the window, not a blank one: many colours in use.
    from PySide6.QtGui import QImage

    img = QImage(str(shots[0]))
    colours = {img.pixel(x, y) for x in range(0, img.width(), 7) for y in range(0, img.height(), 7)}
    assert len(colours) > 50


@pytest.mark.parametrize("problem", ["bad value", "missing file"])
def test_bad_cell_file_gives_one_line_and_exit_code_2(tmp_path, problem):
    bad = tmp_path / "bad.cell.json"
    if problem == "bad value":
        data = json.loads(TRAY.read_text())
        data["arms"][0]["joint_limits_deg"][0] = [90, -90]
        bad.write_text(json.dumps(data))
    proc = run_python(
        f"""
        import sys
        from pathlib import Path
        from app import gui
        sys.exit(gui.run(Path({str(bad)!r})))
        """,
        tmp_path,
    )
    assert proc.returncode == 2
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    assert lines[0].startswith("bad.cell.json: ") or str(bad) in lines[0]
    if problem == "bad value":
        assert "joint_limits_deg" in lines[0] and "90" in lines[0]
    assert "Traceback" not in proc.stderr


def test_every_problem_of_a_bad_cell_file_gets_its_own_line(tmp_path):
    # Same rule as `elbowroom check`: one line per problem, each naming file, JSON path and value.
    data = json.loads(TRAY.read_text())
    data["arms"][0]["links"][0] = -5
    data["arms"][0]["elbow"] = "up"
    data["targets"][0]["x"] = "1"
    bad = tmp_path / "multi.cell.json"
    bad.write_text(json.dumps(data))
    before = bad.read_bytes()
    for argv in ([str(bad)], [str(bad), "--screenshot", str(tmp_path / "x.png")]):
        proc = run_python(
            f"""
            import sys
            from app.cli import main
            sys.exit(main({argv!r}))
            """,
            tmp_path,
        )
        assert proc.returncode == 2, proc.stderr
        assert proc.stderr.splitlines() == [  # the file named as given
            f"{bad}: arms[0].links[0]: must be a positive number, got -5",
            f'{bad}: arms[0].elbow: must be one of "any", "positive" or "negative", got "up"',
            f'{bad}: targets[0].x: must be a number, got "1"',
        ]
        assert not (tmp_path / "x.png").exists()
    assert bad.read_bytes() == before


def test_without_a_display_the_window_is_refused_with_one_line(tmp_path):
    env_code = """
        import os, sys
        from pathlib import Path
        for name in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"):
            os.environ.pop(name, None)
        from app import gui
        sys.exit(gui.run(None))
        """
    # Linux (the CI platform): a window needs X11 or Wayland unless a Qt platform is chosen.
    proc = run_python(env_code, tmp_path, timeout=120)
    assert proc.returncode == 1
    assert proc.stderr.strip().splitlines() == [
        "no display found (DISPLAY and WAYLAND_DISPLAY are not set); "
        "use --screenshot, or set QT_QPA_PLATFORM"
    ]
