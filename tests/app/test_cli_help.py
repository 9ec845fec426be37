"""The command line a new user meets (issue 11, defects 8 and 9): help, unknown commands,
the version, files named as given, no Qt chatter, no licence warnings, the README."""

from __future__ import annotations

import os
import subprocess
import sys
from importlib.metadata import version
from pathlib import Path

import tomllib

from app.cli import SUBCOMMANDS, main

REPO = Path(__file__).resolve().parents[2]
TRAY = REPO / "sample_cells" / "tray_loading.cell.json"
COMMANDS = ", ".join([*SUBCOMMANDS, "help"])


def test_help_lists_the_commands_and_helps_with_one(capsys):
    assert main(["help"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("usage: elbowroom")
    assert f"commands: {COMMANDS}" in out
    assert main(["help", "check"]) == 0
    assert capsys.readouterr().out.startswith("usage: elbowroom check")


def test_an_unknown_command_names_the_commands_and_prints_the_help(capsys):
    assert main(["chek", "tray.cell.json"]) == 2
    out, err = capsys.readouterr()
    first = err.splitlines()[0]
    assert first == (
        f"elbowroom: unknown command 'chek' (commands: {COMMANDS}); did you mean 'check'?"
    )
    assert "usage: elbowroom" in err and out == ""
    assert main(["help", "plac"]) == 2
    assert "unknown command 'plac'" in capsys.readouterr().err


def test_version(capsys):
    meta = tomllib.loads((REPO / "pyproject.toml").read_text())["project"]
    assert main(["--version"]) == 0
    assert capsys.readouterr().out.strip() == f"elbowroom {meta['version']}"
    assert version("elbowroom") == meta["version"]


def test_messages_name_the_file_as_given(capsys, tmp_path):
    assert main(["check", "/dev/null"]) == 2
    assert capsys.readouterr().err == "/dev/null: is not a regular file\n"
    missing = tmp_path / "sub" / "nope.cell.json"
    assert main(["check", str(missing)]) == 2
    assert capsys.readouterr().err.startswith(f"{missing}: could not be opened")


def _headless(args: list[str], tmp_path: Path) -> subprocess.CompletedProcess:
    env = {
        "PATH": str(Path(sys.executable).parent),
        "HOME": str(tmp_path),
        "XDG_CONFIG_HOME": str(tmp_path / "config"),
        "XDG_STATE_HOME": str(tmp_path / "state"),
        "PYTHONPATH": str(REPO),
    }
    return subprocess.run(
        [sys.executable, "-m", "app.cli", *args],
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
        cwd=tmp_path,
    )


def test_a_file_name_is_never_taken_for_a_command(tmp_path):
    proc = _headless(["missing.cell.json"], tmp_path)
    assert proc.returncode == 2
    assert proc.stderr.strip() == "missing.cell.json: could not be opened (no such file or folder)"


def test_without_a_display_the_notice_names_the_screenshot_option(tmp_path):
    proc = _headless([str(TRAY)], tmp_path)
    assert proc.returncode == 0, proc.stderr
    first = proc.stdout.splitlines()[0]
    assert first == (
        f"No display available: printing the check report of {TRAY} instead of a window "
        "(--screenshot FILE.png saves a picture of it)."
    )


def test_a_screenshot_run_keeps_qt_chatter_off_the_terminal(tmp_path):
    shot = tmp_path / "w.png"
    env = dict(os.environ)
    env.update(
        QT_QPA_PLATFORM="offscreen",
        XDG_CONFIG_HOME=str(tmp_path / "config"),
        XDG_STATE_HOME=str(tmp_path / "state"),
        PYTHONPATH=str(REPO),
    )
    proc = subprocess.run(
        [
            sys.executable,
            "-m",
            "app.cli",
            str(TRAY),
            "--screenshot",
            str(shot),
            "--size",
            "800x600",
        ],
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
        cwd=tmp_path,
    )
    assert proc.returncode == 0 and shot.exists()
    # The offscreen platform's "This plugin does not support propagateSizeHints()" line is
    # what every screenshot run printed; it is gone (other platforms' notes would show).
    assert "propagateSizeHints" not in proc.stderr and "Traceback" not in proc.stderr
    assert proc.stdout == ""


def test_the_licence_is_an_spdx_string():
    # PEP 639: `license` as an SPDX expression string; a table warns on every install
    # with setuptools 77 and later (the version the build requires).
    data = tomllib.loads((REPO / "pyproject.toml").read_text())
    assert isinstance(data["project"]["license"], str)
    assert data["project"]["license"].startswith("LicenseRef-")
    assert "setuptools>=77" in data["build-system"]["requires"]


def test_the_readme_says_where_the_command_lives_and_how_to_take_a_picture():
    text = (REPO / "README.md").read_text()
    assert ".venv/bin/elbowroom" in text
    assert "source .venv/bin/activate" in text
    assert "--screenshot" in text.split("## Using it")[0]  # before the reference section
