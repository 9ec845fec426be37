"""The program's remembered settings: recent files, window layout, canvas toggles, snap pitch,
and the layer choices made per imported DXF file.

Stored with QSettings under organisation "ElbowRoom", application "Elbow Room",
in :meth:`QSettings.defaultFormat`, so tests can redirect everything to a
temporary INI file with ``QSettings.setDefaultFormat`` and ``QSettings.setPath``.
"""

from __future__ import annotations

import math
from collections.abc import Iterable
from pathlib import Path

from PySide6.QtCore import QByteArray, QSettings

__all__ = [
    "ORGANISATION",
    "APPLICATION",
    "MAX_RECENT",
    "open_settings",
    "recent_files",
    "add_recent_file",
    "set_recent_files",
    "load_bytes",
    "save_bytes",
    "load_toggles",
    "save_toggles",
    "load_snap_pitches",
    "save_snap_pitches",
    "DEFAULT_BACKUPS",
    "DEFAULT_AUTOSAVE_MINUTES",
    "backup_count",
    "set_backup_count",
    "autosave_minutes",
    "set_autosave_minutes",
    "load_dxf_choices",
    "save_dxf_choices",
    "load_kind_heights",
    "save_kind_height",
]

ORGANISATION = "ElbowRoom"
APPLICATION = "Elbow Room"
#: Length of the Open Recent menu.
MAX_RECENT = 8

_RECENT_KEY = "files/recent"
_TOGGLE_GROUP = "canvas"
_PITCH_GROUP = "snap_pitch"
_BACKUPS_KEY = "files/backups"
_AUTOSAVE_KEY = "files/autosave_minutes"
#: Backups kept beside a saved file unless the user sets another count.
DEFAULT_BACKUPS = 3
#: Minutes between autosaves unless the user sets another interval.
DEFAULT_AUTOSAVE_MINUTES = 2.0
_BACKUPS_RANGE = (0, 50)
_AUTOSAVE_RANGE = (0.01, 24 * 60.0)


def open_settings() -> QSettings:
    """The program's settings store, in the current default format."""
    return QSettings(
        QSettings.defaultFormat(), QSettings.Scope.UserScope, ORGANISATION, APPLICATION
    )


def _as_list(value: object) -> list[str]:
    # QSettings hands back a plain string for one-item lists and None for empty ones.
    if value is None:
        return []
    if isinstance(value, str):
        return [value] if value else []
    if isinstance(value, Iterable):
        return [str(v) for v in value if v]
    return []


def recent_files(settings: QSettings | None = None) -> list[Path]:
    """Recently opened or saved files, newest first, missing files left out."""
    s = settings or open_settings()
    paths = [Path(p) for p in _as_list(s.value(_RECENT_KEY))]
    kept = [p for p in paths if p.is_file()][:MAX_RECENT]
    if len(kept) != len(paths):
        set_recent_files(kept, s)
    return kept


def set_recent_files(paths: Iterable[Path], settings: QSettings | None = None) -> None:
    """Store the recent-files list as given (at most :data:`MAX_RECENT`)."""
    s = settings or open_settings()
    unique = list(dict.fromkeys(str(Path(p)) for p in paths))[:MAX_RECENT]
    s.setValue(_RECENT_KEY, unique)
    s.sync()


def add_recent_file(path: Path, settings: QSettings | None = None) -> list[Path]:
    """Put ``path`` first in the recent-files list; returns the new list."""
    s = settings or open_settings()
    p = Path(path).resolve()
    paths = [p] + [q for q in recent_files(s) if q.resolve() != p]
    set_recent_files(paths, s)
    return recent_files(s)


def load_bytes(key: str, settings: QSettings | None = None) -> QByteArray | None:
    """A stored byte blob (window geometry or state), None when there is none."""
    value = (settings or open_settings()).value(key)
    return value if isinstance(value, QByteArray) and not value.isEmpty() else None


def save_bytes(key: str, value: QByteArray, settings: QSettings | None = None) -> None:
    """Store a byte blob (window geometry or state)."""
    s = settings or open_settings()
    s.setValue(key, value)
    s.sync()


def _as_bool(value: object) -> bool | None:
    # INI files read booleans back as the strings "true" / "false".
    if isinstance(value, bool):
        return value
    if isinstance(value, str) and value.lower() in ("true", "false"):
        return value.lower() == "true"
    return None


def load_toggles(settings: QSettings | None = None) -> dict[str, bool]:
    """Stored checked states of the canvas actions, by action name."""
    s = settings or open_settings()
    s.beginGroup(_TOGGLE_GROUP)
    try:
        out = {}
        for key in s.childKeys():
            b = _as_bool(s.value(key))
            if b is not None:
                out[key] = b
        return out
    finally:
        s.endGroup()


def save_toggles(states: dict[str, bool], settings: QSettings | None = None) -> None:
    """Store the checked states of the canvas actions, by action name."""
    s = settings or open_settings()
    s.beginGroup(_TOGGLE_GROUP)
    for key, checked in states.items():
        s.setValue(key, bool(checked))
    s.endGroup()
    s.sync()


def load_snap_pitches(settings: QSettings | None = None) -> dict[str, float]:
    """Stored grid pitches for snapping, by unit system; unusable entries are left out."""
    s = settings or open_settings()
    s.beginGroup(_PITCH_GROUP)
    try:
        out = {}
        for units in s.childKeys():
            try:
                value = float(s.value(units))
            except (TypeError, ValueError):
                continue
            if math.isfinite(value) and value > 0:
                out[units] = value
        return out
    finally:
        s.endGroup()


def save_snap_pitches(pitches: dict[str, float], settings: QSettings | None = None) -> None:
    """Store the grid pitches for snapping, by unit system."""
    s = settings or open_settings()
    s.beginGroup(_PITCH_GROUP)
    for units, value in pitches.items():
        s.setValue(units, float(value))
    s.endGroup()
    s.sync()


def _number(key: str, default: float, lo: float, hi: float, settings: QSettings | None) -> float:
    value = (settings or open_settings()).value(key)
    try:
        number = float(value) if value is not None else default
    except (TypeError, ValueError):
        return default
    if not math.isfinite(number):
        return default
    return min(max(number, lo), hi)


def backup_count(settings: QSettings | None = None) -> int:
    """How many timestamped backups to keep beside each saved file (default 3)."""
    return int(_number(_BACKUPS_KEY, DEFAULT_BACKUPS, *_BACKUPS_RANGE, settings))


def set_backup_count(count: int, settings: QSettings | None = None) -> None:
    s = settings or open_settings()
    s.setValue(_BACKUPS_KEY, int(min(max(count, _BACKUPS_RANGE[0]), _BACKUPS_RANGE[1])))
    s.sync()


def autosave_minutes(settings: QSettings | None = None) -> float:
    """Minutes between autosaves of unsaved work to the recovery file (default 2)."""
    return _number(_AUTOSAVE_KEY, DEFAULT_AUTOSAVE_MINUTES, *_AUTOSAVE_RANGE, settings)


def set_autosave_minutes(minutes: float, settings: QSettings | None = None) -> None:
    s = settings or open_settings()
    s.setValue(_AUTOSAVE_KEY, float(min(max(minutes, _AUTOSAVE_RANGE[0]), _AUTOSAVE_RANGE[1])))
    s.sync()


_DXF_GROUP = "dxf_import"


def _dxf_key(path: Path) -> str:
    import hashlib

    return hashlib.sha1(str(Path(path).resolve()).encode("utf-8")).hexdigest()


def load_dxf_choices(path: Path, settings: QSettings | None = None) -> dict:
    """The layer kinds, heights and units last chosen for importing this DXF file ({} if none)."""
    import json

    s = settings or open_settings()
    text = s.value(f"{_DXF_GROUP}/{_dxf_key(path)}")
    try:
        value = json.loads(text) if isinstance(text, str) else None
    except ValueError:
        return {}
    return value if isinstance(value, dict) else {}


def save_dxf_choices(path: Path, choices: dict, settings: QSettings | None = None) -> None:
    """Remember the choices made for importing this DXF file (a JSON-ready dict)."""
    import json

    s = settings or open_settings()
    s.setValue(f"{_DXF_GROUP}/{_dxf_key(path)}", json.dumps(choices, sort_keys=True))
    s.sync()


_HEIGHT_GROUP = "fixture_heights"


def _kind_key(kind: str) -> str:
    # A kind is free text; "/" and "\\" would open sub-groups in QSettings.
    return kind.replace("%", "%25").replace("/", "%2F").replace("\\", "%5C")


def _kind_of(key: str) -> str:
    return key.replace("%5C", "\\").replace("%2F", "/").replace("%25", "%")


def load_kind_heights(settings: QSettings | None = None) -> dict[str, float]:
    """The height last given to a fixture of each kind (new fixtures inherit it)."""
    s = settings or open_settings()
    s.beginGroup(_HEIGHT_GROUP)
    try:
        out = {}
        for kind in s.childKeys():
            try:
                value = float(s.value(kind))
            except (TypeError, ValueError):
                continue
            if math.isfinite(value) and value >= 0:
                out[_kind_of(kind)] = value
        return out
    finally:
        s.endGroup()


def save_kind_height(kind: str, height: float, settings: QSettings | None = None) -> None:
    """Remember ``height`` for new fixtures of ``kind``."""
    s = settings or open_settings()
    s.beginGroup(_HEIGHT_GROUP)
    s.setValue(_kind_key(kind), float(height))
    s.endGroup()
    s.sync()
