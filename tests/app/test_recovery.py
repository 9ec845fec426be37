"""Autosave and recovery: unsaved work survives a kill of the program.

What we rely on: SIGKILL cannot be caught, so the program gets no chance to save
(POSIX.1-2017, signal.h: SIGKILL "cannot be caught or ignored"); a QLockFile whose
holder process is gone is stale and can be taken (Qt 6 documentation, QLockFile).
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import textwrap
import time
from dataclasses import replace
from pathlib import Path

import pytest

from app import recovery
from app.document import Document
from app.main_window import AUTOSAVE_EDITS, MainWindow
from app.panels.validate import replace_arm
from kinematics.cellfile import dumps_cell, load_cell

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


@pytest.fixture
def window(qtbot, tmp_path):
    def make(path: Path | None = None, **kw) -> MainWindow:
        doc = Document(load_cell(path), path) if path is not None else None
        win = MainWindow(doc, **kw)
        win.ask_unsaved_changes = lambda: "discard"
        win.show_error = lambda *a, **k: pytest.fail(f"unexpected error: {a}")
        qtbot.addWidget(win)
        return win

    return make


def tray_copy(tmp_path: Path) -> Path:
    p = tmp_path / "line_a.cell.json"
    p.write_bytes(TRAY.read_bytes())
    return p


def nudge(win: MainWindow, dx: float = 1.0) -> None:
    cell = win.document.cell
    arm = cell.arms[0]
    win.document.edit("Move base", replace_arm(cell, replace(arm, x=arm.x + dx)))


def recovery_files() -> list[Path]:
    folder = recovery.recovery_dir()
    return sorted(folder.glob(f"*{recovery.RECOVERY_SUFFIX}")) if folder.exists() else []


# ---------------------------------------------------------------------------- autosave


def test_autosave_after_every_50_edits_and_only_when_changed(window, tmp_path):
    win = window(tray_copy(tmp_path))
    assert AUTOSAVE_EDITS == 50
    for _ in range(AUTOSAVE_EDITS - 1):
        nudge(win)
    assert recovery_files() == []
    nudge(win)
    (rec,) = recovery_files()
    record = json.loads(rec.read_text())
    assert record["file"] == str(tmp_path / "line_a.cell.json")
    assert record["cell_text"] == dumps_cell(win.document.cell)
    written = rec.stat().st_mtime_ns
    assert not win.autosave()  # nothing changed since: nothing written
    assert rec.stat().st_mtime_ns == written


def test_autosave_timer_follows_the_setting(window):
    win = window(TRAY, use_settings=False)
    assert win.autosave_timer.isActive() and win.autosave_timer.interval() == 2 * 60_000
    win.set_autosave_minutes(0.5)
    assert win.autosave_timer.interval() == 30_000


def test_recovery_file_goes_after_a_save_and_after_a_close(window, tmp_path):
    win = window(tray_copy(tmp_path))
    nudge(win)
    assert win.autosave() and len(recovery_files()) == 1
    assert win.save()
    assert recovery_files() == []
    nudge(win)
    assert win.autosave() and len(recovery_files()) == 1
    assert win.close()  # discarded on purpose
    assert recovery_files() == []


def test_a_clean_document_is_never_autosaved(window):
    win = window(TRAY)
    assert not win.autosave() and recovery_files() == []


# ---------------------------------------------------------------------------- recovery


def offered(win: MainWindow, choice: str = "restore") -> list:
    seen = []

    def ask(entries):
        seen.extend(entries)
        return [choice] * len(entries)

    win.ask_recovery = ask
    return seen


def crash_with(cell, file: Path | None) -> None:
    """Leave a recovery file as a killed program would (written, lock holder gone)."""
    rf = recovery.RecoveryFile()
    rf.write(cell, file)
    lock = rf.path.with_name(rf.path.name.removesuffix(recovery.RECOVERY_SUFFIX) + ".lock")
    # The lock of a process that no longer runs: pid 2**22 + 1 is above Linux's pid_max
    # ceiling (2**22, proc(5)), so no process has it; same host, so Qt checks the pid.
    import socket

    lock.write_text(f"{2**22 + 1}\nelbowroom\n{socket.gethostname()}\n")


def test_recovery_is_offered_with_time_and_differences_and_opens_modified(window, tmp_path):
    path = tray_copy(tmp_path)
    saved = load_cell(path)
    targets = tuple(replace(t, x=t.x + 1) for t in saved.targets[:3])
    edited = replace(saved, targets=targets + saved.targets[3:])
    edited = replace_arm(edited, replace(edited.arms[0], x=edited.arms[0].x + 5))
    crash_with(edited, path)
    win = window(None)
    seen = offered(win)
    (restored,) = win.offer_recovery()
    (entry,) = seen
    assert entry.written and entry.file == path
    assert recovery.difference_text(entry) == (
        "changes 1 arm, 3 targets, 0 fixtures against the saved file"
    )
    assert restored is win
    assert dumps_cell(win.document.cell) == dumps_cell(edited)
    assert win.document.dirty and win.isWindowModified() and win.document.path == path
    # The work now lives in this window's recovery file; the old one is gone.
    assert recovery_files() == [win.recovery_file.path]


def test_declined_recovery_is_offered_again_and_discard_removes_it(window):
    crash_with(load_cell(TRAY), None)
    win = window(None)
    offered(win, "keep")
    assert win.offer_recovery() == [] and len(recovery_files()) == 1
    offered(win, "discard")
    assert win.offer_recovery() == [] and recovery_files() == []


def test_a_recovery_file_that_does_not_load_is_set_aside_and_named(window):
    folder = recovery.recovery_dir()
    folder.mkdir(parents=True)
    broken = folder / f"0123{recovery.RECOVERY_SUFFIX}"
    broken.write_text('{"format": "elbowroom-recovery", "version": 1, "cell_text": "{"}')
    win = window(None)
    errors = []
    win.show_error = lambda title, message, details="": errors.append(message)
    offered(win)
    assert win.offer_recovery() == []
    kept = folder / recovery.UNREADABLE_DIR / broken.name
    assert kept.read_text() == '{"format": "elbowroom-recovery", "version": 1, "cell_text": "{"}'
    assert errors[0].startswith(f"{broken.name}: its cell does not load")
    assert str(kept) in errors[0]


def test_a_running_windows_recovery_file_is_not_offered(window):
    other = window(TRAY)
    nudge(other)
    assert other.autosave()
    win = window(None)
    assert offered(win) == [] and win.offer_recovery() == []


def test_second_recovered_document_opens_in_its_own_window(window, tmp_path):
    crash_with(replace(load_cell(TRAY), name="first"), None)
    crash_with(replace(load_cell(TRAY), name="second"), None)
    win = window(None)
    offered(win)
    restored = win.offer_recovery()
    assert sorted(w.document.cell.name for w in restored) == ["first", "second"]
    assert win in restored and all(w.document.dirty for w in restored)
    for w in restored:
        w.ask_unsaved_changes = lambda: "discard"


# ---------------------------------------------------------------------------- killed for real


def run_env(tmp_path: Path) -> dict:
    env = dict(os.environ)
    env.update(
        QT_QPA_PLATFORM="offscreen",
        XDG_CONFIG_HOME=str(tmp_path / "config"),
        XDG_STATE_HOME=os.environ["XDG_STATE_HOME"],
        PYTHONPATH=str(REPO),
    )
    return env


def test_work_of_a_killed_window_is_recovered_at_the_next_start(window, tmp_path):
    path = tray_copy(tmp_path)
    edited_out = tmp_path / "edited.cell.json.txt"
    script = tmp_path / "edit_then_hang.py"
    script.write_text(
        textwrap.dedent(
            f"""
            import sys, time
            from pathlib import Path
            from PySide6.QtWidgets import QApplication
            from app.document import Document
            from app.main_window import MainWindow
            from kinematics.cellfile import dumps_cell, load_cell

            app = QApplication(sys.argv[:1])
            path = Path({str(path)!r})
            win = MainWindow(Document(load_cell(path), path))
            win.show()
            assert win.claim_file()
            win.set_autosave_minutes(0.005)  # 0.3 s, so the test does not wait minutes
            # Edits through the window's own commands: select all, delete, undo, redo,
            # and a delete of one target; the table row selection drives the last one.
            win.act_select_all.trigger()
            win.act_delete.trigger()
            win.act_undo.trigger()
            win.act_redo.trigger()
            win.act_undo.trigger()
            first = win.document.cell.targets[0].id
            win.document.selection.set([first])
            win.act_delete.trigger()
            assert win.document.dirty
            Path({str(edited_out)!r}).write_text(dumps_cell(win.document.cell))
            rec = win.recovery_file
            deadline = time.monotonic() + 60
            while rec.written is not win.document.cell and time.monotonic() < deadline:
                app.processEvents()
                time.sleep(0.05)
            print("autosaved", flush=True)
            while True:  # unsaved work, waiting to be killed
                app.processEvents()
                time.sleep(0.05)
            """
        )
    )
    proc = subprocess.Popen(
        [sys.executable, str(script)],
        env=run_env(tmp_path),
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        line = proc.stdout.readline()
        assert line.strip() == "autosaved", proc.stderr.read()
        time.sleep(0.2)
        os.kill(proc.pid, signal.SIGKILL)
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == -signal.SIGKILL
    edited = edited_out.read_text()
    assert edited != dumps_cell(load_cell(path))  # the edits never reached the file

    # The next start: the same file, as `elbowroom line_a.cell.json` opens it.
    win = window(path)
    assert win.claim_file()  # the killed window's lock was stale
    seen = offered(win)
    (restored,) = win.offer_recovery()
    (entry,) = seen
    # The deleted target also left its sequence.
    assert recovery.difference_text(entry) == (
        "changes 0 arms, 1 target, 0 fixtures against the saved file "
        "(and its name, units, sequences or notes)"
    )
    assert restored is win and dumps_cell(win.document.cell) == edited
    assert win.document.dirty and win.document.path == path


# ---------------------------------------------------------------------------- settings, dialog


def test_backup_count_and_autosave_interval_come_from_the_settings(window, tmp_path):
    from app import settings as app_settings
    from kinematics.savefile import backup_files

    app_settings.set_backup_count(1)
    app_settings.set_autosave_minutes(5)
    path = tray_copy(tmp_path)
    win = window(path)
    assert win.backup_count == 1 and win.autosave_timer.interval() == 5 * 60_000
    for dx in (1.0, 2.0, 3.0):
        nudge(win, dx)
        assert win.save()
    assert len(backup_files(path)) == 1


def test_recovery_dialog_restores_only_the_checked_documents(qtbot):
    from PySide6.QtCore import Qt
    from PySide6.QtWidgets import QPushButton

    from app.safety_dialogs import RecoveryDialog, recovery_line

    saved = load_cell(TRAY)
    entries = [
        recovery.RecoveryEntry(
            Path("a.recovery.json"),
            "2026-12-04T08:30:00+00:00",
            TRAY,
            replace(saved, targets=saved.targets[1:]),
            saved=saved,
        ),
        recovery.RecoveryEntry(Path("b.recovery.json"), "", None, saved),
    ]
    dialog = RecoveryDialog(entries)
    qtbot.addWidget(dialog)
    assert recovery_line(entries[0]) == (
        f"{saved.name} — {TRAY}\nautosaved 2026-12-04 08:30:00+00:00; "
        "changes 0 arms, 1 target, 0 fixtures against the saved file"
    )
    dialog.list.item(1).setCheckState(Qt.CheckState.Unchecked)
    buttons = {b.text(): b for b in dialog.findChildren(QPushButton)}
    buttons["Restore Checked"].click()
    assert dialog.choices() == ["restore", "keep"]
