"""Shared test setup: headless Qt and a throw-away settings location.

Runs before any test module imports Qt, so the offscreen platform is used and
QSettings never reads or writes the real user's configuration.
"""

import os
import tempfile

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# QSettings (native format on Linux) and QStandardPaths follow XDG_CONFIG_HOME.
os.environ["XDG_CONFIG_HOME"] = tempfile.mkdtemp(prefix="elbowroom-test-config-")
# platformdirs follows XDG_STATE_HOME: error log and recovery files never in the real folder.
os.environ["XDG_STATE_HOME"] = tempfile.mkdtemp(prefix="elbowroom-test-state-")


@pytest.fixture
def isolated_settings(tmp_path):
    """Point QSettings at an empty INI store in ``tmp_path`` for one test."""
    from PySide6.QtCore import QSettings

    old = QSettings.defaultFormat()
    QSettings.setDefaultFormat(QSettings.Format.IniFormat)
    QSettings.setPath(
        QSettings.Format.IniFormat, QSettings.Scope.UserScope, str(tmp_path / "qsettings")
    )
    yield tmp_path / "qsettings"
    QSettings.setDefaultFormat(old)


@pytest.fixture(autouse=True)
def isolated_state(tmp_path, monkeypatch):
    """A fresh user state folder (error log, recovery files) for every test."""
    folder = tmp_path / "user-state"
    monkeypatch.setenv("XDG_STATE_HOME", str(folder))
    return folder
