"""Shared test setup: headless Qt and a throw-away settings location.

Runs before any test module imports Qt, so the offscreen platform is used and
QSettings never reads or writes the real user's configuration.
"""

import os
import tempfile

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# QSettings (native format on Linux) and QStandardPaths follow XDG_CONFIG_HOME.
os.environ["XDG_CONFIG_HOME"] = tempfile.mkdtemp(prefix="elbowroom-test-config-")
