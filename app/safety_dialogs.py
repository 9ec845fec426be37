"""Dialogs for the data-safety questions: recovery at start-up, backups and autosave settings."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QDoubleSpinBox,
    QFormLayout,
    QLabel,
    QListWidget,
    QListWidgetItem,
    QPushButton,
    QSpinBox,
    QVBoxLayout,
    QWidget,
)

from app.recovery import RecoveryEntry, difference_text

__all__ = ["RecoveryDialog", "SafetySettingsDialog", "recovery_line"]


def recovery_line(entry: RecoveryEntry) -> str:
    """Two lines describing a recoverable document: name and file; time and what differs."""
    name = entry.cell.name if entry.cell is not None else entry.path.name
    file = str(entry.file) if entry.file is not None else "no file"
    when = entry.written.replace("T", " ") if entry.written else "unknown time"
    return f"{name} — {file}\nautosaved {when}; {difference_text(entry)}"


class RecoveryDialog(QDialog):
    """Lists recoverable documents with check boxes; Restore, Discard or Decide Later.

    :meth:`choices` gives, per entry, ``"restore"``, ``"discard"`` or ``"keep"``.
    """

    def __init__(self, entries: list[RecoveryEntry], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Recover unsaved work")
        self.entries = entries
        self._action = "keep"
        layout = QVBoxLayout(self)
        text = QLabel(
            "Elbow Room stopped without saving these documents. Checked documents are "
            "restored as unsaved changes (or discarded); unchecked ones are offered again "
            "next time."
        )
        text.setWordWrap(True)
        layout.addWidget(text)
        self.list = QListWidget(self)
        self.list.setSpacing(3)
        for entry in entries:
            item = QListWidgetItem(recovery_line(entry))
            item.setToolTip(recovery_line(entry))
            item.setFlags(item.flags() | Qt.ItemFlag.ItemIsUserCheckable)
            item.setCheckState(Qt.CheckState.Checked)
            self.list.addItem(item)
        layout.addWidget(self.list)
        buttons = QDialogButtonBox(self)
        restore = QPushButton("Restore Checked")
        discard = QPushButton("Discard Checked…")
        later = QPushButton("Decide Later")
        buttons.addButton(restore, QDialogButtonBox.ButtonRole.AcceptRole)
        buttons.addButton(discard, QDialogButtonBox.ButtonRole.DestructiveRole)
        buttons.addButton(later, QDialogButtonBox.ButtonRole.RejectRole)
        restore.setDefault(True)
        restore.clicked.connect(lambda: self._finish("restore"))
        discard.clicked.connect(lambda: self._finish("discard"))
        later.clicked.connect(lambda: self._finish("keep"))
        layout.addWidget(buttons)
        self.resize(760, 320)

    def _finish(self, action: str) -> None:
        self._action = action
        self.accept()

    def choices(self) -> list[str]:
        out = []
        for i in range(self.list.count()):
            checked = self.list.item(i).checkState() == Qt.CheckState.Checked
            out.append(self._action if checked else "keep")
        return out


class SafetySettingsDialog(QDialog):
    """Backups kept beside each saved file, and minutes between autosaves."""

    def __init__(self, backups: int, minutes: float, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Backups and Autosave")
        form = QFormLayout(self)
        self.backups = QSpinBox(self)
        self.backups.setObjectName("backup_count")
        self.backups.setRange(0, 50)
        self.backups.setValue(backups)
        self.backups.setToolTip("Earlier versions kept beside the file as NAME.<time>.bak")
        self.minutes = QDoubleSpinBox(self)
        self.minutes.setObjectName("autosave_minutes")
        self.minutes.setRange(0.5, 60.0)
        self.minutes.setDecimals(1)
        self.minutes.setSuffix(" min")
        self.minutes.setValue(min(max(minutes, 0.5), 60.0))
        self.minutes.setToolTip("Unsaved work is also autosaved after every 50 edits")
        form.addRow("Backups kept beside each file", self.backups)
        form.addRow("Autosave unsaved work every", self.minutes)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel, self
        )
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        form.addRow(buttons)
