"""Where the program finds its bundled files."""

from __future__ import annotations

from pathlib import Path

__all__ = ["SAMPLE_DIR", "DEFAULT_CELL_NAME", "default_cell_path"]

SAMPLE_DIR = Path(__file__).resolve().parents[1] / "sample_cells"
DEFAULT_CELL_NAME = "tray_loading.cell.json"


def default_cell_path() -> Path:
    """The bundled default cell, opened when the program starts without a file."""
    return SAMPLE_DIR / DEFAULT_CELL_NAME
