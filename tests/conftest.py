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


# ------------------------------------------------------------------ two arms meeting head on


class HeadOn:
    """Two mirror-image arms 1000 apart (hand-built): each swings its shoulder from 90 to
    0 degrees towards the other and back, only q1 moving, so by symmetry they first touch
    on the line x = 500 at a time computable in closed form."""

    D_BASES = 1000.0
    A1, A2, Q2 = 300.0, 250.0, 30.0
    R_LINK, R_TOOL = 20.0, 25.0
    V, ACC = 90.0, 180.0  # shoulder: deg/s, deg/s^2

    def tool(self, q1: float) -> tuple[float, float]:
        import math

        t1, t2 = math.radians(q1), math.radians(q1 + self.Q2)
        return (
            self.A1 * math.cos(t1) + self.A2 * math.cos(t2),
            self.A1 * math.sin(t1) + self.A2 * math.sin(t2),
        )

    def cell(self, start_b: float = 0.0):
        from kinematics.cell import Arm, Cell, Sequence, Target

        common = dict(
            link_radii=(self.R_LINK, self.R_LINK),
            joint_speed_dps=(self.V, 500.0),
            joint_accel_dps2=(self.ACC, 2000.0),
            extra={"tool_body": {"radius": self.R_TOOL}},
        )
        a1, a2, d = self.A1, self.A2, self.D_BASES
        left = Arm("L", "Left", 0, 0, 0, a1, a2, (-100, 100), (-145, 145), "positive", **common)
        right = Arm("R", "Right", d, 0, 180, a1, a2, (-100, 100), (-145, 145), "negative", **common)
        (hx, hy), (mx, my) = self.tool(90.0), self.tool(0.0)
        ts = (
            Target("l_home", "L home", hx, hy, "L"),
            Target("l_meet", "L meet", mx, my, "L"),
            Target("r_home", "R home", d - hx, hy, "R"),
            Target("r_meet", "R meet", d - mx, my, "R"),
        )
        seqs = (
            Sequence("L", ("l_home", "l_meet")),
            Sequence("R", ("r_home", "r_meet"), {"start_s": start_b} if start_b else {}),
        )
        return Cell("head on", arms=(left, right), targets=ts, sequences=seqs)

    def q1(self, t: float) -> float:
        """Left shoulder during its first move, 90 -> 0 degrees: the trapezoid of
        Nagarajan, Introduction to Industrial Robotics, eq. 10.28."""
        dist, v, acc = 90.0, self.V, self.ACC
        ta, T = v / acc, dist / v + v / acc
        if t <= ta:
            s = 0.5 * acc * t * t
        elif t <= T - ta:
            s = 0.5 * acc * ta * ta + v * (t - ta)
        else:
            s = dist - 0.5 * acc * (T - t) ** 2
        return 90.0 - s

    def contact_time(self) -> float:
        """When the left arm's farthest body point reaches x = 500 (brentq on the closed
        form; scipy as the reference root finder)."""
        import math

        from scipy.optimize import brentq

        def max_x(q1: float) -> float:
            ex = self.A1 * math.cos(math.radians(q1))
            return max(self.R_LINK, ex + self.R_LINK, self.tool(q1)[0] + self.R_TOOL)

        T1 = 90.0 / self.V + self.V / self.ACC
        return brentq(lambda t: max_x(self.q1(t)) - self.D_BASES / 2, 0.0, T1)

    def within_one_sample(self, t: float, t_true: float, rounding_s: float = 0.0) -> bool:
        """No body point travels more than a tenth of the smallest link radius between the
        two times (the engine's sampling bound), plus what rounding ``t`` may add."""
        import math

        reach = max(math.hypot(*self.tool(q)) for q in (0.0, 90.0)) + self.R_TOOL
        moved = math.radians(abs(self.q1(t) - self.q1(t_true))) * reach
        return moved <= 0.1 * self.R_LINK + math.radians(self.V * rounding_s) * reach


@pytest.fixture
def head_on():
    """The hand-built head-on meeting of two arms (:class:`HeadOn`)."""
    return HeadOn()
