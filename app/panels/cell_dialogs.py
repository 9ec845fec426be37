"""Dialogs of the cell editors: a new arm, deleting an arm, the cell's properties, a new
fixture's height, and the question a change of units asks.

Each dialog only gathers values and checks them with the panels' rules
(:mod:`app.panels.validate`); the window's :class:`app.cell_actions.CellActions` makes the
edit (one undo step). Reasons for refused values are said beside their field.
"""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtWidgets import (
    QButtonGroup,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QFormLayout,
    QGridLayout,
    QGroupBox,
    QLabel,
    QLineEdit,
    QMessageBox,
    QRadioButton,
    QVBoxLayout,
    QWidget,
)

from app.bind import FIELD_STYLE, INVALID_MARK
from app.interaction.arm_edits import add_arm
from app.panels.arm_panel import ELBOW_WORDS
from app.panels.validate import (
    MAX_LIMIT_WIDTH,
    Invalid,
    arm_field,
    check_cell,
    format_number,
    parse_name,
    parse_number,
)
from kinematics.cell import ELBOW_SETTINGS, UNITS, Arm, Cell

__all__ = [
    "ArmDialog",
    "ARM_DIALOG_FIELDS",
    "DeleteArmDialog",
    "CellDialog",
    "HeightDialog",
    "ask_units_change",
]

#: Fields of the new-arm dialog (keys of :data:`app.panels.validate.ARM_FIELDS`), by group.
ARM_DIALOG_FIELDS = (
    ("Arm", ("name",)),
    ("Links", ("a1", "a2", "r1", "r2", "under")),
    ("Joint limits", ("q1_min", "q1_max", "q2_min", "q2_max")),
    ("Motion (optional)", ("w1", "w2", "al1", "al2")),
)
_LIMIT_KEYS = {"q1_min": ("q1", 0), "q1_max": ("q1", 1), "q2_min": ("q2", 0), "q2_max": ("q2", 1)}
_UNITS = {"length": None, "deg": "°", "deg/s": "°/s", "deg/s²": "°/s²"}


def _reason_label() -> QLabel:
    label = QLabel()
    label.setProperty("role", "reason")
    label.setWordWrap(True)
    label.setVisible(False)
    return label


def _show_reason(edit: QLineEdit, label: QLabel, reason: str) -> None:
    label.setText(f"{INVALID_MARK} {reason}" if reason else "")
    label.setVisible(bool(reason))
    edit.setProperty("invalid", bool(reason))
    edit.style().unpolish(edit)
    edit.style().polish(edit)


class ArmDialog(QDialog):
    """The data of a new arm: name, links, radii, underside height, limits, speeds.

    Parameters
    ----------
    template : Arm
        Values shown to start with (its base pose is kept).
    cell : Cell
        The cell the arm joins (its units, and the final check).
    """

    def __init__(self, template: Arm, cell: Cell, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Add arm")
        self.setStyleSheet(FIELD_STYLE)
        self._template = template
        self._cell = cell
        self.edits: dict[str, QLineEdit] = {}
        self.reasons: dict[str, QLabel] = {}
        outer = QVBoxLayout(self)
        intro = QLabel(
            f"The new arm is bolted at the middle of the view, heading "
            f"{format_number(template.heading_deg)}°; drag it into place afterwards."
        )
        intro.setWordWrap(True)
        outer.addWidget(intro)
        for title, keys in ARM_DIALOG_FIELDS:
            box = QGroupBox(title)
            grid = QGridLayout(box)
            grid.setColumnStretch(1, 1)
            for row, key in enumerate(keys):
                f = arm_field(key)
                edit = QLineEdit(f.get(template))
                edit.setObjectName(f"new_arm_{key}")
                edit.setAccessibleName(f.label)
                if f.optional:
                    edit.setPlaceholderText("not given")
                unit = cell.units if f.unit == "length" else _UNITS.get(f.unit) or ""
                reason = _reason_label()
                grid.addWidget(QLabel(f.label), 2 * row, 0)
                grid.addWidget(edit, 2 * row, 1)
                grid.addWidget(QLabel(unit), 2 * row, 2)
                grid.addWidget(reason, 2 * row + 1, 1, 1, 2)
                self.edits[key] = edit
                self.reasons[key] = reason
                edit.textEdited.connect(lambda _t: self.validate())
            outer.addWidget(box)
            if title == "Joint limits":
                elbow_box = QGroupBox("Elbow configuration")
                form = QFormLayout(elbow_box)
                self.elbow = QComboBox()
                self.elbow.setObjectName("new_arm_elbow")
                for setting in ELBOW_SETTINGS:
                    self.elbow.addItem(ELBOW_WORDS[setting], setting)
                self.elbow.setCurrentIndex(max(0, self.elbow.findData(template.elbow)))
                form.addRow("Allowed", self.elbow)
                outer.addWidget(elbow_box)
        self.general = _reason_label()
        outer.addWidget(self.general)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel, self
        )
        buttons.button(QDialogButtonBox.StandardButton.Ok).setText("Add Arm")
        buttons.accepted.connect(self._accept)
        buttons.rejected.connect(self.reject)
        outer.addWidget(buttons)

    def arm(self) -> Arm:
        """The arm the fields describe; :class:`Invalid` with the first refusal."""
        arm, problems = self._build()
        if problems:
            raise Invalid(next(iter(problems.values())))
        return arm

    def _build(self) -> tuple[Arm, dict[str, str]]:
        arm = self._template
        problems: dict[str, str] = {}
        text = {k: e.text() for k, e in self.edits.items()}
        limits = {}
        for key, (joint, side) in _LIMIT_KEYS.items():
            try:
                limits[(joint, side)] = parse_number(text[key])
            except Invalid as exc:
                problems[key] = str(exc)
        for joint in ("q1", "q2"):
            lo, hi = limits.get((joint, 0)), limits.get((joint, 1))
            if lo is None or hi is None:
                continue
            if lo >= hi:
                problems[f"{joint}_min"] = (
                    f"min must be below max ({format_number(lo)} >= {format_number(hi)})"
                )
            elif hi - lo > MAX_LIMIT_WIDTH:
                problems[f"{joint}_min"] = (
                    f"range is {format_number(hi - lo)}°, at most {MAX_LIMIT_WIDTH:g}° allowed"
                )
            else:
                arm = replace(arm, **{f"{joint}_limits": (lo, hi)})
        for key, value in text.items():
            if key in _LIMIT_KEYS:
                continue
            try:
                arm = arm_field(key).put(arm, value)
            except Invalid as exc:
                problems[key] = str(exc)
        arm = replace(arm, elbow=self.elbow.currentData() or "any")
        if not problems:
            try:
                check_cell(add_arm(self._cell, arm)[0])  # under the id it will get
            except Invalid as exc:
                problems[""] = str(exc)
        return arm, problems

    def validate(self) -> bool:
        """Show every refusal beside its field; True when the arm can be added."""
        _arm, problems = self._build()
        for key, edit in self.edits.items():
            _show_reason(edit, self.reasons[key], problems.get(key, ""))
        general = problems.get("", "")
        self.general.setText(f"{INVALID_MARK} {general}" if general else "")
        self.general.setVisible(bool(general))
        return not problems

    def _accept(self) -> None:
        if self.validate():
            self.accept()


class DeleteArmDialog(QDialog):
    """Deleting an arm: delete its targets with it, or give them to another arm."""

    def __init__(
        self, arm: Arm, others: list[Arm], targets: int, parent: QWidget | None = None
    ) -> None:
        super().__init__(parent)
        self.setWindowTitle(f"Delete arm {arm.name}")
        outer = QVBoxLayout(self)
        what = f"{targets} target{'s' if targets != 1 else ''}" if targets else "no targets"
        outer.addWidget(QLabel(f"{arm.name} has {what}. What becomes of them?"))
        self.delete = QRadioButton(f"Delete them with the arm ({what})")
        self.reassign = QRadioButton("Give them, with the arm's sequences, to")
        self.other = QComboBox()
        for a in others:
            self.other.addItem(f"{a.name} ({a.id})", a.id)
        group = QButtonGroup(self)
        group.addButton(self.delete)
        group.addButton(self.reassign)
        self.reassign.setChecked(bool(targets) and bool(others))
        self.delete.setChecked(not (targets and others))
        # The last arm: its targets can only go with it (a cell may have no arms).
        self.reassign.setEnabled(bool(others))
        self.other.setEnabled(bool(others))
        outer.addWidget(self.delete)
        outer.addWidget(self.reassign)
        outer.addWidget(self.other)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel, self
        )
        buttons.button(QDialogButtonBox.StandardButton.Ok).setText("Delete Arm")
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        outer.addWidget(buttons)

    def choice(self) -> tuple[str, str | None]:
        """("delete", None) or ("reassign", other arm id)."""
        if self.reassign.isChecked():
            return "reassign", self.other.currentData()
        return "delete", None


class CellDialog(QDialog):
    """The cell's name, length units and clearance margin.

    Title-block (review) data is edited in the review-sheet dialog.
    """

    def __init__(self, cell: Cell, margin: float | None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Cell properties")
        self.setStyleSheet(FIELD_STYLE)
        self._cell = cell
        form = QFormLayout(self)
        self.name = QLineEdit(cell.name)
        self.name.setObjectName("cell_name")
        self.name_reason = _reason_label()
        form.addRow("Name", self.name)
        form.addRow("", self.name_reason)
        self.units = QComboBox()
        self.units.setObjectName("cell_units")
        for u in UNITS:
            self.units.addItem(u, u)
        self.units.setCurrentIndex(max(0, self.units.findData(cell.units)))
        self.units.setToolTip(
            "Length units of every number in the cell; a change asks whether to convert "
            "every length or only relabel the numbers"
        )
        form.addRow("Units", self.units)
        self.margin = QLineEdit("" if margin is None else format_number(margin))
        self.margin.setObjectName("cell_margin")
        self.margin.setPlaceholderText("0")
        self.margin.setToolTip(
            "Vertical clearance margin of the 2.5-D rule (0 or more, in the cell's units): "
            "a fixture blocks the links when its height reaches their underside less this"
        )
        self.margin_reason = _reason_label()
        form.addRow("Clearance margin", self.margin)
        form.addRow("", self.margin_reason)
        note = QLabel("Title-block data is edited with the review sheet.")
        note.setWordWrap(True)
        form.addRow(note)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel, self
        )
        buttons.accepted.connect(self._accept)
        buttons.rejected.connect(self.reject)
        form.addRow(buttons)
        self.name.textEdited.connect(lambda _t: self.validate())
        self.margin.textEdited.connect(lambda _t: self.validate())

    def _margin(self) -> float | None:
        text = self.margin.text().strip()
        if not text:
            return None
        margin = parse_number(text)
        if margin < 0:
            raise Invalid(f"must be 0 or more, got {format_number(margin)}")
        return margin

    def values(self) -> tuple[str, str, float | None]:
        """(name, units, clearance margin or None); :class:`Invalid` when refused."""
        return parse_name(self.name.text()), self.units.currentData(), self._margin()

    def validate(self) -> bool:
        ok = True
        for edit, label, check in (
            (self.name, self.name_reason, lambda: parse_name(self.name.text())),
            (self.margin, self.margin_reason, self._margin),
        ):
            try:
                check()
                reason = ""
            except Invalid as exc:
                reason = str(exc)
                ok = False
            _show_reason(edit, label, reason)
        return ok

    def _accept(self) -> None:
        if self.validate():
            self.accept()


class HeightDialog(QDialog):
    """The height of a new fixture's top (its kind has none remembered yet)."""

    def __init__(self, kind: str, units: str, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Height of the new fixture")
        self.setStyleSheet(FIELD_STYLE)
        form = QFormLayout(self)
        text = QLabel(
            f"How high is the top of this {kind} above the floor? Links pass over fixtures "
            "lower than their underside; without a height it blocks every body. New "
            f"fixtures of kind '{kind}' get the same height."
        )
        text.setWordWrap(True)
        form.addRow(text)
        self.height = QLineEdit()
        self.height.setObjectName("new_fixture_height")
        self.height.setPlaceholderText(f"{units}; empty: not given")
        self.reason = _reason_label()
        form.addRow(f"Height ({units})", self.height)
        form.addRow("", self.reason)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok | QDialogButtonBox.StandardButton.Cancel, self
        )
        buttons.accepted.connect(self._accept)
        buttons.rejected.connect(self.reject)
        form.addRow(buttons)

    def value(self) -> float | None:
        text = self.height.text().strip()
        if not text:
            return None
        v = parse_number(text)
        if v < 0:
            raise Invalid(f"must be 0 or more, got {format_number(v)}")
        return v

    def _accept(self) -> None:
        try:
            self.value()
        except Invalid as exc:
            _show_reason(self.height, self.reason, str(exc))
            return
        self.accept()


def ask_units_change(parent: QWidget | None, old: str, new: str, unconverted: list[str]) -> str:
    """Units change from ``old`` to ``new``: "convert", "relabel" or "cancel"."""
    box = QMessageBox(parent)
    box.setIcon(QMessageBox.Icon.Question)
    box.setWindowTitle("Elbow Room")
    box.setText(f"Change the cell's units from {old} to {new}?")
    info = (
        f"Convert: every length is recalculated in {new}, the cell keeps its real size. "
        f"Relabel: the numbers stay and are read as {new}, so the cell changes size."
    )
    if unconverted:
        info += " Keys this version does not know are left as they are: " + ", ".join(
            unconverted[:5]
        )
    box.setInformativeText(info)
    made = {
        box.addButton(f"Convert to {new}", QMessageBox.ButtonRole.AcceptRole): "convert",
        box.addButton("Relabel Only", QMessageBox.ButtonRole.AcceptRole): "relabel",
        box.addButton(QMessageBox.StandardButton.Cancel): "cancel",
    }
    box.setDefaultButton(next(iter(made)))
    box.exec()
    return made.get(box.clickedButton(), "cancel")
