"""Safe saving: refusals before anything is touched, the backup ring, leftovers, failures.

The guarantees tested here rest on POSIX file semantics: rename(2) replaces the
target name in one step (POSIX.1-2017, rename(): "If the link named by the new
argument exists, it shall be removed and old renamed to new ... there shall be no
point at which new does not refer to either the old or the new file"); a hard
link is a second name of the same inode (link(2)); opening a FIFO for writing
blocks until a reader opens it (POSIX.1-2017, open(), O_NONBLOCK clear); flock(2)
locks belong to the open file description and are released when the process dies
(Linux man-pages, flock(2)).
"""

from __future__ import annotations

import datetime as dt
import errno
import fcntl
import os
import stat
import threading
from pathlib import Path

import pytest

from kinematics import atomic
from kinematics.atomic import leftover_temps, temp_name_prefix, write_atomic
from kinematics.savefile import (
    BACKUPS_KEPT,
    ReadOnlyTargetError,
    SaveError,
    backup_files,
    backup_name,
    save_bytes,
)

T0 = dt.datetime(2026, 12, 4, 8, 30, 0, tzinfo=dt.timezone.utc)


def at(seconds: int) -> dt.datetime:
    return T0 + dt.timedelta(seconds=seconds)


def names(folder: Path) -> set[str]:
    return {p.name for p in folder.iterdir()}


def finishes(fn, timeout: float = 20.0):
    """Run ``fn`` in a thread; (finished, result or exception)."""
    box: list = []

    def run():
        try:
            box.append(fn())
        except BaseException as exc:  # noqa: BLE001 - handed back to the test
            box.append(exc)

    t = threading.Thread(target=run, daemon=True)
    t.start()
    t.join(timeout)
    return (not t.is_alive()), (box[0] if box else None)


# ---------------------------------------------------------------------------- backup ring


def test_ring_keeps_the_newest_backups_of_distinct_versions(tmp_path):
    f = tmp_path / "line.cell.json"
    for i in range(6):
        save_bytes(f, f"version {i}".encode(), now=at(i))
    ring = backup_files(f)
    assert BACKUPS_KEPT == 3 and len(ring) == 3
    # The three versions before the current one, oldest first, stamped with their save time.
    assert [p.read_bytes() for p in ring] == [b"version 2", b"version 3", b"version 4"]
    assert [p.name for p in ring] == [f"line.cell.json.2026120{4}-08300{i}.bak" for i in (3, 4, 5)]
    assert f.read_bytes() == b"version 5"
    assert names(tmp_path) == {"line.cell.json", *(p.name for p in ring)}


def test_backup_count_is_settable(tmp_path):
    f = tmp_path / "a.cell.json"
    for i in range(5):
        save_bytes(f, bytes([65 + i]), backups=1, now=at(i))
    assert [p.read_bytes() for p in backup_files(f)] == [b"D"]
    save_bytes(f, b"Z", backups=0, now=at(9))
    assert [p.read_bytes() for p in backup_files(f)] == [b"D"]  # 0: none made, none deleted


def test_identical_consecutive_backups_are_not_kept(tmp_path):
    f = tmp_path / "a.cell.json"
    save_bytes(f, b"one", now=at(0))
    assert save_bytes(f, b"two", now=at(1)).backup is not None
    # Saving the same content again keeps nothing new.
    assert save_bytes(f, b"two", now=at(2)).backup is None
    # The user copies the backup back by hand; its content is already kept.
    f.write_bytes(b"one")
    assert save_bytes(f, b"three", now=at(3)).backup is None
    assert [p.read_bytes() for p in backup_files(f)] == [b"one"]


def test_two_saves_in_one_second_get_numbered_names(tmp_path):
    f = tmp_path / "a.cell.json"
    for content in (b"1", b"2", b"3"):
        save_bytes(f, content, now=T0)
    assert [p.name for p in backup_files(f)] == [
        "a.cell.json.20261204-083000.bak",
        "a.cell.json.20261204-083000-2.bak",
    ]


def test_a_folder_with_a_backup_name_does_not_break_saving(tmp_path):
    f = tmp_path / "a.cell.json"
    f.write_bytes(b"old")
    (tmp_path / "a.cell.json.bak").mkdir()  # the single backup name of earlier versions
    taken = backup_name(f, T0)
    taken.mkdir()
    (taken / "keep.txt").write_text("mine")
    outcome = save_bytes(f, b"new", now=T0)
    assert f.read_bytes() == b"new"
    assert outcome.backup == backup_name(f, T0, 2) and outcome.backup.read_bytes() == b"old"
    assert (taken / "keep.txt").read_text() == "mine"  # never treated as a backup
    assert backup_files(f) == [outcome.backup]


def test_local_time_zone_does_not_change_the_stamp():
    # 08:30 UTC is 10:30 in UTC+2: the name is stamped in UTC either way.
    local = T0.astimezone(dt.timezone(dt.timedelta(hours=2)))
    assert backup_name("x", local) == backup_name("x", T0)


# ---------------------------------------------------------------------------- refusals


def test_named_pipe_is_refused_at_once(tmp_path):
    fifo = tmp_path / "pipe.cell.json"
    os.mkfifo(fifo)
    done, result = finishes(lambda: save_bytes(fifo, b"x"))
    assert done, "saving onto a named pipe blocked"
    assert isinstance(result, SaveError)
    assert str(result) == "pipe.cell.json: is a named pipe, not a regular file; not saved there"
    assert stat.S_ISFIFO(os.stat(fifo).st_mode) and names(tmp_path) == {"pipe.cell.json"}


def test_device_is_refused(tmp_path):
    with pytest.raises(SaveError, match="null: is a device, not a regular file"):
        save_bytes("/dev/null", b"x")


def test_a_folder_is_refused(tmp_path):
    (tmp_path / "d.cell.json").mkdir()
    with pytest.raises(SaveError, match="d.cell.json: is a folder"):
        save_bytes(tmp_path / "d.cell.json", b"x")


def test_missing_folder_is_named(tmp_path):
    folder = tmp_path / "gone"
    with pytest.raises(SaveError) as info:
        save_bytes(folder / "a.cell.json", b"x")
    assert str(info.value) == f"a.cell.json: not saved: the folder {folder} does not exist"


def test_read_only_file_is_not_replaced_without_being_told(tmp_path):
    f = tmp_path / "signed.cell.json"
    f.write_bytes(b"approved")
    os.chmod(f, 0o444)
    with pytest.raises(ReadOnlyTargetError, match="signed.cell.json: is a read-only file"):
        save_bytes(f, b"changed")
    assert f.read_bytes() == b"approved" and names(tmp_path) == {"signed.cell.json"}
    save_bytes(f, b"changed", replace_read_only=True)
    assert f.read_bytes() == b"changed"
    assert stat.S_IMODE(f.stat().st_mode) == 0o444  # it stays read-only


# ---------------------------------------------------------------------------- failures


def _fail_temp_creation(monkeypatch, code: int) -> None:
    real_open = os.open

    def refusing_open(path, flags, *args, **kw):
        if str(path).endswith(".tmp") and flags & os.O_CREAT:
            raise OSError(code, os.strerror(code), str(path))
        return real_open(path, flags, *args, **kw)

    monkeypatch.setattr(atomic.os, "open", refusing_open)


@pytest.mark.parametrize(
    ("code", "says"),
    [
        (errno.EACCES, "the folder {} is read-only for this user (permission denied)"),
        (errno.EROFS, "the folder {} is on a read-only file system"),
        (errno.ENOSPC, "the disk holding {} is full"),
    ],
)
def test_unwritable_folder_leaves_file_and_backups_and_names_the_folder(
    tmp_path, monkeypatch, code, says
):
    f = tmp_path / "a.cell.json"
    save_bytes(f, b"one", now=at(0))
    save_bytes(f, b"two", now=at(1))
    before = {p.name: p.read_bytes() for p in tmp_path.iterdir()}
    _fail_temp_creation(monkeypatch, code)
    with pytest.raises(SaveError) as info:
        save_bytes(f, b"three", now=at(2))
    message = str(info.value)
    assert message == (
        f"a.cell.json: not saved: {says.format(tmp_path)} (the file and its backups are unchanged)"
    )
    assert "\n" not in message
    assert {p.name: p.read_bytes() for p in tmp_path.iterdir()} == before


def test_disk_full_during_the_file_itself_removes_the_new_backup(tmp_path, monkeypatch):
    f = tmp_path / "a.cell.json"
    save_bytes(f, b"one", now=at(0))
    save_bytes(f, b"two", now=at(1))
    before = {p.name: p.read_bytes() for p in tmp_path.iterdir()}
    real_write = os.write

    def write(fd, data):
        if bytes(data[:5]) == b"three":  # the backup (b"two") goes through; the file fails
            raise OSError(errno.ENOSPC, "No space left on device")
        return real_write(fd, data)

    monkeypatch.setattr(atomic.os, "write", write)
    with pytest.raises(SaveError, match="is full"):
        save_bytes(f, b"three" * 1000, now=at(2))
    assert {p.name: p.read_bytes() for p in tmp_path.iterdir()} == before


def test_vanished_folder_is_named(tmp_path):
    folder = tmp_path / "project"
    folder.mkdir()
    f = folder / "a.cell.json"
    save_bytes(f, b"one")
    for p in folder.iterdir():
        p.unlink()
    folder.rmdir()
    with pytest.raises(SaveError, match=f"the folder {folder} does not exist"):
        save_bytes(f, b"two")


# ---------------------------------------------------------------------------- what is kept


def test_permissions_and_owner_are_kept(tmp_path):
    f = tmp_path / "a.cell.json"
    f.write_bytes(b"old")
    # Giving a file away needs root (POSIX chown(2)); otherwise the owner is ourselves.
    uid, gid = (4321, 4322) if os.geteuid() == 0 else (os.getuid(), os.getgid())
    os.chown(f, uid, gid)
    os.chmod(f, 0o604)
    outcome = save_bytes(f, b"new")
    info = f.stat()
    assert (info.st_uid, info.st_gid, stat.S_IMODE(info.st_mode)) == (uid, gid, 0o604)
    assert outcome.notes == ()
    b = outcome.backup.stat()
    assert (b.st_uid, b.st_gid, stat.S_IMODE(b.st_mode)) == (uid, gid, 0o604)


def test_hard_links_keep_the_previous_version_and_we_say_so(tmp_path):
    f = tmp_path / "a.cell.json"
    f.write_bytes(b"old")
    other = tmp_path / "copy-for-review.cell.json"
    os.link(f, other)
    outcome = save_bytes(f, b"new")
    assert f.read_bytes() == b"new" and other.read_bytes() == b"old"
    assert outcome.notes == (
        "a.cell.json had 1 other hard link; they keep the previous version "
        "(saving writes a new file)",
    )


def test_symbolic_link_is_followed(tmp_path):
    real = tmp_path / "real.cell.json"
    real.write_bytes(b"old")
    link = tmp_path / "link.cell.json"
    link.symlink_to(real)
    outcome = save_bytes(link, b"new")
    assert outcome.path == real and real.read_bytes() == b"new" and link.is_symlink()


# ---------------------------------------------------------------------------- leftovers


def test_leftovers_of_killed_saves_are_removed_by_the_next_save(tmp_path):
    f = tmp_path / "a.cell.json"
    f.write_bytes(b"old")
    prefix = temp_name_prefix(f.name)
    dead = [
        tmp_path / f"{prefix}0123456789ab.tmp",
        tmp_path / f"{prefix}20261204-083000.bak.ba98765432fe.tmp",
    ]
    for p in dead:
        p.write_bytes(b"half written")
    unrelated = tmp_path / f"{prefix}notes"  # not one of ours
    unrelated.write_bytes(b"keep")
    live = tmp_path / f"{prefix}aaaaaaaaaaaa.tmp"  # a write in flight elsewhere holds its lock
    fd = os.open(live, os.O_WRONLY | os.O_CREAT, 0o600)
    fcntl.flock(fd, fcntl.LOCK_EX)
    try:
        assert leftover_temps(f) == sorted(dead)
        outcome = save_bytes(f, b"new")
        assert sorted(outcome.removed_temps) == sorted(dead)
        assert names(tmp_path) == {f.name, outcome.backup.name, unrelated.name, live.name}
    finally:
        os.close(fd)
    assert leftover_temps(f) == [live]  # its writer is gone now


def test_write_atomic_failure_leaves_no_temporary_file(tmp_path, monkeypatch):
    f = tmp_path / "a.txt"
    write_atomic(f, b"old")

    def fail(*_a):
        raise OSError(errno.EIO, "Input/output error")

    monkeypatch.setattr(atomic.os, "fsync", fail)
    with pytest.raises(OSError):
        write_atomic(f, b"new")
    assert names(tmp_path) == {"a.txt"} and f.read_bytes() == b"old"
