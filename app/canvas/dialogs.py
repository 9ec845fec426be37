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
_DECIMALS = 3  # shown decimals (a micrometre in mm, a thousandth in inches)


def _kept(box: QDoubleSpinBox, start: float | None) -> float:
    # The box shows the start rounded: OK without typing must not move the item by that.
    if start is not None and not box.property("edited"):
        return float(start)
    return box.value()


def _watch(box: QDoubleSpinBox) -> None:
    box.setProperty("edited", False)
    box.valueChanged.connect(lambda _v, b=box: b.setProperty("edited", True))


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
        self._start = (x, y, heading)
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
            self.heading.setDecimals(_DECIMALS)
            self.heading.setSuffix(" °")
            self.heading.setValue(heading)
            _watch(self.heading)
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
        s.setDecimals(_DECIMALS)
        s.setSuffix(f" {units}")
        s.setValue(value)
        _watch(s)
        return s

    def values(self) -> tuple[float, float, float | None]:
        """The values entered; a field left as shown keeps its exact starting value."""
        h = _kept(self.heading, self._start[2]) if self.heading is not None else None
        return _kept(self.x, self._start[0]), _kept(self.y, self._start[1]), h


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
