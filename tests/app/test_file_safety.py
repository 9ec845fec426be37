"""The window never loses a layout: failed opens, replacing files, locks, outside changes.

File semantics relied on: POSIX.1-2017 rename() replaces the target name in one
step (an editor's atomic save); QFileSystemWatcher reports changes of watched files
and folders (Qt 6 documentation, QFileSystemWatcher); QLockFile holds the pid,
host and program name of its holder and a lock whose process is gone is stale
(Qt 6 documentation, QLockFile::tryLock, getLockInfo).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap
from dataclasses import replace
from pathlib import Path

import pytest

from app.document import Document
from app.filelock import LockHolder, lock_path
from app.main_window import MainWindow
from app.panels.validate import replace_arm
from kinematics.cellfile import dumps_cell, load_cell
from kinematics.savefile import backup_files

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"
KITTING = REPO / "sample_cells" / "kitting_two_arm.cell.json"

pytestmark = [
    pytest.mark.usefixtures("isolated_settings"),
    pytest.mark.qt_log_ignore("propagateSizeHints"),
]


class Answers:
    """Scripted replies to every question the window asks, and a record of them."""

    def __init__(self) -> None:
        self.unsaved = "discard"
        self.open_path: Path | None = None
        self.save_path: Path | None = None
        self.replace_file = True
        self.replace_read_only = True
        self.locked = "cancel"
        self.outside = "keep"
        self.overwrite_outside = False
        self.asked: list[str] = []
        self.errors: list[tuple[str, str]] = []
        self.notices: list[str] = []


def answer(win: MainWindow, a: Answers) -> MainWindow:
    def ask(name, value):
        def f(*args, **kw):
            a.asked.append(name)
            return value() if callable(value) else value

        return f

    win.ask_unsaved_changes = ask("unsaved", lambda: a.unsaved)
    win.ask_open_path = lambda: a.open_path
    win.ask_save_path = lambda: a.save_path
    win.ask_revert = lambda: True
    win.ask_replace_file = ask("replace_file", lambda: a.replace_file)
    win.ask_replace_read_only = ask("replace_read_only", lambda: a.replace_read_only)
    win.ask_locked_file = ask("locked", lambda: a.locked)
    win.ask_outside_change = ask("outside", lambda: a.outside)
    win.ask_overwrite_outside_change = ask("overwrite_outside", lambda: a.overwrite_outside)
    win.show_error = lambda title, message, details="": a.errors.append((title, message))
    win.show_notice = lambda title, message: a.notices.append(message)
    return win


@pytest.fixture
def answers():
    return Answers()


@pytest.fixture
def copy(tmp_path):
    def make(src: Path = TRAY, name: str | None = None) -> Path:
        dest = tmp_path / (name or src.name)
        dest.write_bytes(src.read_bytes())
        return dest

    return make


@pytest.fixture
def make_window(qtbot, answers):
    def make(path: Path | None, claim: bool = True) -> MainWindow:
        doc = Document(load_cell(path), path) if path is not None else None
        win = answer(MainWindow(doc), answers)
        qtbot.addWidget(win)
        win.show()
        qtbot.waitExposed(win)
        if claim:
            assert win.claim_file()
        return win

    return make


def move_base(win: MainWindow, x: float) -> None:
    cell = win.document.cell
    arm = cell.arms[0]
    win.document.edit("Move base", replace_arm(cell, replace(arm, x=x)))


def state(win: MainWindow) -> tuple:
    return (dumps_cell(win.document.cell), win.document.path, win.windowTitle(), win.document.dirty)


# ---------------------------------------------------------------------------- opening


def test_open_of_a_file_the_engine_fails_on_changes_nothing(
    make_window, answers, copy, monkeypatch
):
    # Issue 12, defect 1: a file that loads but makes the engine raise must be shown as a
    # failure, and Save must not then write it over the current file. The engine's move
    # sampling is made to fail the way issue 12 saw it (ZeroDivisionError in the sweep).
    import kinematics.sweep

    own = copy()
    win = make_window(own)
    move_base(win, 12.0)
    before = state(win)

    def failing(*args, **kw):
        raise ZeroDivisionError("float division by zero")

    with monkeypatch.context() as m:
        m.setattr(kinematics.sweep, "sequence_moves", failing)
        assert not win.open_file(KITTING)
    assert state(win) == before and win.undo_stack.count() == 1
    ((title, message),) = answers.errors
    assert message.startswith("kitting_two_arm.cell.json: loads but could not be evaluated: ")
    assert "internal error (ZeroDivisionError)" in message and "\n" not in message
    log = Path(message.rsplit("details in ", 1)[1])
    assert "float division by zero" in log.read_text()
    assert log.is_relative_to(os.environ["XDG_STATE_HOME"])
    assert answers.asked == []  # nothing was asked: the current document was never at stake
    assert win.save()
    assert load_cell(own).arms[0].x == 12.0  # the current document, not the failed one


def test_the_tiny_link_radius_file_of_issue_12_is_never_half_opened(
    make_window, answers, copy, tmp_path
):
    # link_radii [5e-324, 30]: 5e-324 is the smallest positive double (IEEE 754 subnormal).
    # Whether the loader refuses it or the engine fails on it, nothing may switch.
    win = make_window(copy())
    move_base(win, 12.0)
    before = state(win)
    data = json.loads(TRAY.read_text())
    data["arms"][0]["link_radii"] = [5e-324, 30]
    bad = tmp_path / "tiny_radius.cell.json"
    bad.write_text(json.dumps(data))
    assert not win.open_file(bad)
    assert state(win) == before
    ((_title, message),) = answers.errors
    assert message.startswith("tiny_radius.cell.json: ") and "\n" not in message


def test_a_failure_while_showing_the_new_document_puts_the_old_one_back(
    make_window, answers, copy, monkeypatch
):
    win = make_window(copy())
    move_base(win, 12.0)
    before = state(win)
    undo_steps = win.undo_stack.count()

    def broken(_changes):
        if win.document.cell.name == load_cell(KITTING).name:
            raise ZeroDivisionError("a view failed on the new cell")

    win.document.events.cell_changed.connect(broken)
    assert not win.open_file(KITTING)
    assert state(win) == before and win.undo_stack.count() == undo_steps
    assert "could not be shown: internal error (ZeroDivisionError)" in answers.errors[0][1]


# ---------------------------------------------------------------------------- saving


def test_save_as_asks_before_replacing_a_file_once_the_suffix_is_added(
    make_window, answers, copy, tmp_path
):
    # Issue 12, defect 2: "report" becomes report.cell.json, which exists.
    existing = copy(KITTING, "report.cell.json")
    kept = existing.read_bytes()
    win = make_window(None)
    answers.save_path = tmp_path / "report"
    answers.replace_file = False
    assert not win.save_as()
    assert answers.asked == ["replace_file"] and existing.read_bytes() == kept
    assert win.document.path is None
    answers.replace_file = True
    assert win.save_as()
    assert win.document.path == existing
    assert dumps_cell(load_cell(existing)) == dumps_cell(win.document.cell)
    assert [b.read_bytes() for b in backup_files(existing)] == [kept]


def test_a_read_only_file_is_replaced_only_when_the_user_says_so(make_window, answers, copy):
    # Issue 12, defect 3: a 0444 file was silently replaced.
    path = copy()
    os.chmod(path, 0o444)
    win = make_window(path)
    move_base(win, 20.0)
    answers.replace_read_only = False
    kept = path.read_bytes()
    assert not win.save()
    assert answers.asked == ["replace_read_only"] and path.read_bytes() == kept
    assert win.document.dirty
    answers.replace_read_only = True
    assert win.save()
    assert load_cell(path).arms[0].x == 20.0 and (path.stat().st_mode & 0o777) == 0o444


def test_hard_links_are_reported_after_saving(make_window, answers, copy, tmp_path):
    path = copy()
    os.link(path, tmp_path / "for_review.cell.json")
    win = make_window(path)
    move_base(win, 20.0)
    assert win.save()
    assert answers.notices == [
        "tray_loading.cell.json had 1 other hard link; they keep the previous version "
        "(saving writes a new file)"
    ]
    assert load_cell(tmp_path / "for_review.cell.json").arms[0].x != 20.0


def test_saving_into_a_vanished_folder_names_it_and_keeps_the_work(make_window, answers, tmp_path):
    folder = tmp_path / "project"
    folder.mkdir()
    path = folder / "cell.cell.json"
    path.write_bytes(TRAY.read_bytes())
    win = make_window(path, claim=False)
    move_base(win, 20.0)
    path.unlink()
    folder.rmdir()
    assert not win.save()
    assert answers.errors[-1][1] == (
        f"cell.cell.json: not saved: the folder {folder} does not exist"
    )
    assert win.document.dirty


# ---------------------------------------------------------------------------- outside changes


def other_program_saves(path: Path, x: float) -> None:
    """Another program writes the file the way careful editors do: new file, rename."""
    data = json.loads(path.read_text())
    data["arms"][0]["base"]["x"] = x
    tmp = path.with_name("other-editor.tmp")
    tmp.write_text(json.dumps(data, indent=2))
    os.replace(tmp, path)


def test_an_outside_change_is_noticed_across_an_atomic_rename(make_window, answers, copy, qtbot):
    # Issue 12, defect 3: a file changed by another program was overwritten by the next Save.
    path = copy()
    win = make_window(path)
    other_program_saves(path, 111.0)
    qtbot.waitUntil(lambda: "outside" in answers.asked, timeout=15000)
    assert answers.asked == ["outside"]  # kept: the window still shows its version
    assert win.document.cell.arms[0].x != 111.0
    # A second outside save is noticed too: the watch followed the renamed file.
    other_program_saves(path, 222.0)
    qtbot.waitUntil(lambda: answers.asked.count("outside") == 2, timeout=15000)
    # Saving over it asks first, even without local edits; "no" keeps their version.
    assert not win.save()
    assert answers.asked[-1] == "overwrite_outside" and load_cell(path).arms[0].x == 222.0
    answers.overwrite_outside = True
    assert win.save()
    assert load_cell(path).arms[0].x == win.document.cell.arms[0].x
    assert [load_cell(b).arms[0].x for b in backup_files(path)] == [222.0]


def test_reload_takes_the_outside_version(make_window, answers, copy, qtbot):
    path = copy()
    win = make_window(path)
    answers.outside = "reload"
    other_program_saves(path, 111.0)
    qtbot.waitUntil(lambda: win.document.cell.arms[0].x == 111.0, timeout=15000)
    assert not win.document.dirty and win.document.path == path
    move_base(win, 5.0)
    assert win.save() and "overwrite_outside" not in answers.asked


def test_our_own_saves_backups_and_locks_are_not_outside_changes(make_window, answers, copy, qtbot):
    path = copy()
    win = make_window(path)
    for x in (1.0, 2.0, 3.0):
        move_base(win, x)
        assert win.save()
    qtbot.wait(800)  # longer than the watch gathers events
    assert answers.asked == []


def test_two_windows_on_one_file_never_save_over_each_other_silently(
    make_window, answers, copy, qtbot
):
    path = copy()
    first = make_window(path)
    answers.locked = "anyway"
    second = make_window(path)
    assert answers.asked == ["locked"]
    move_base(first, 10.0)
    assert first.save()
    qtbot.waitUntil(lambda: "outside" in answers.asked, timeout=15000)  # the second one noticed
    move_base(second, 20.0)
    assert not second.save()  # asks, and the answer is no
    assert load_cell(path).arms[0].x == 10.0


# ---------------------------------------------------------------------------- locks


def test_the_lock_names_the_holder_and_read_only_protects_the_file(
    make_window, answers, copy, tmp_path
):
    path = copy()
    make_window(path)
    assert lock_path(path).exists()
    seen: list[LockHolder] = []

    def locked(p, holder, saving=False):
        seen.append(holder)
        return "read-only"

    second = make_window(None, claim=False)
    second.ask_locked_file = locked
    assert second.open_file(path)
    assert seen[0].pid == os.getpid() and seen[0].host  # which process, which host
    assert second.read_only and "(read-only)" in second.windowTitle()
    move_base(second, 44.0)
    answers.save_path = tmp_path / "my_copy"
    assert second.save()  # read-only: Save goes to Save As
    assert second.document.path == tmp_path / "my_copy.cell.json"
    assert load_cell(path).arms[0].x != 44.0
    assert not second.read_only


def test_a_stale_lock_of_a_killed_program_is_taken_over(make_window, answers, copy, tmp_path):
    path = copy()
    code = f"""
        import os, signal
        from PySide6.QtCore import QLockFile
        lock = QLockFile({str(lock_path(path))!r})
        assert lock.tryLock(0)
        os.kill(os.getpid(), signal.SIGKILL)  # dies holding the lock
    """
    proc = subprocess.run([sys.executable, "-c", textwrap.dedent(code)], timeout=60)
    assert proc.returncode == -9 and lock_path(path).exists()
    win = make_window(None, claim=False)
    assert win.open_file(path)
    assert answers.asked == [] and win.file_lock is not None and win.file_lock.held


def test_closing_releases_the_lock(make_window, copy):
    path = copy()
    win = make_window(path)
    assert lock_path(path).exists()
    assert win.close()
    assert not lock_path(path).exists()
