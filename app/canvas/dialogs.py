"""Small dialogs of the canvas: exact numeric position and a new name."""

from __future__ import annotations

from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QInputDialog,
    QWidget,
)

__all__ = ["PositionDialog", "ask_position", "ask_name"]

_BIG = 1e7  # spin box range in cell units; cells are metres, not kilometres, across


class PositionDialog(QDialog):
    """x, y (and optionally a heading) typed in exactly."""

    def __init__(
        self,
        title: str,
        x: float,
        y: float,
        units: str,
        heading: float | None = None,
        parent: QWidget | None = None,
    ) -> None:
        super().__init__(parent)
        self.setWindowTitle(title)
        form = QFormLayout(self)
        self.x = self._spin(x, units)
        self.y = self._spin(y, units)
        form.addRow("x", self.x)
        form.addRow("y", self.y)
        self.heading: QDoubleSpinBox | None = None
        if heading is not None:
            self.heading = QDoubleSpinBox(self)
            self.heading.setRange(-360.0, 360.0)
            self.heading.setDecimals(3)
            self.heading.setSuffix(" °")
            self.heading.setValue(heading)
            form.addRow("heading", self.heading)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel, self
        )
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        form.addRow(buttons)

    def _spin(self, value: float, units: str) -> QDoubleSpinBox:
        s = QDoubleSpinBox(self)
        s.setRange(-_BIG, _BIG)
        s.setDecimals(3)
        s.setSuffix(f" {units}")
        s.setValue(value)
        return s

    def values(self) -> tuple[float, float, float | None]:
        h = self.heading.value() if self.heading is not None else None
        return self.x.value(), self.y.value(), h


def ask_position(
    parent: QWidget,
    title: str,
    x: float,
    y: float,
    units: str,
    heading: float | None = None,
) -> tuple[float, float, float | None] | None:
    """Ask for a position (and heading); None when cancelled."""
    dlg = PositionDialog(title, x, y, units, heading, parent)
    if dlg.exec() == QDialog.DialogCode.Accepted:
        return dlg.values()
    return None


def ask_name(parent: QWidget, title: str, current: str) -> str | None:
    """Ask for a new name; None when cancelled or left empty."""
    text, ok = QInputDialog.getText(parent, title, "Name:", text=current)
    text = text.strip()
    return text if ok and text else None
