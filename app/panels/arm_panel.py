"""The arm panel: every setting of one arm, validated as it is typed.

Each field shows the model's value; typed text is checked on every keystroke
(the reason for a refusal appears beside the field, marked with "✕", and the
field gets a dashed border), and a valid value is committed on Enter or
focus-out as one undo step "Change <field> of <arm>".
"""

from __future__ import annotations

from dataclasses import replace

from PySide6.QtCore import Qt, Signal
from PySide6.QtGui import QAction
from PySide6.QtWidgets import (
    QComboBox,
    QGridLayout,
    QGroupBox,
    QHBoxLayout,
    QLabel,
    QLineEdit,
    QScrollArea,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from app.bind import FIELD_STYLE, FieldBinding, blocked
from app.document import Changes, Document
from app.panels.validate import (
    ARM_FIELDS,
    ArmField,
    Invalid,
    check_cell,
    check_elbow,
    replace_arm,
)
from kinematics.cell import ELBOW_SETTINGS, Arm
from kinematics.wording import NO_ARMS

__all__ = ["ArmPanel", "GROUPS", "ELBOW_WORDS"]

#: Field keys per group box, in display order.
GROUPS = (
    ("Base", ("name", "x", "y", "heading_deg")),
    ("Links and bodies", ("a1", "a2", "r1", "r2", "under", "tool_r")),
    ("Joint limits", ("q1_min", "q1_max", "q2_min", "q2_max")),
    ("Mechanical limits", ("m1_min", "m1_max", "m2_min", "m2_max")),
    ("Motion", ("w1", "w2", "al1", "al2", "j1", "j2")),
)

#: Placeholder and tooltip of optional fields that are not a pair of joint values.
_OPTIONAL_HINTS = {
    "under": (
        "not given",
        "Height of the links' underside above the floor (0 or more): fixtures lower than it, "
        "less the cell's clearance margin, are passed over. Empty: every fixture blocks.",
    ),
    "tool_r": (
        "not given",
        "Radius of the tool body, a disc at the tool point (fixtures taller than a target's "
        "work height block it). Empty: no tool disc.",
    ),
    "m1_min": ("as the joint limit", "The full mechanical range, for the maximum space only"),
    "m1_max": ("as the joint limit", "The full mechanical range, for the maximum space only"),
    "m2_min": ("as the joint limit", "The full mechanical range, for the maximum space only"),
    "m2_max": ("as the joint limit", "The full mechanical range, for the maximum space only"),
}

#: Words for the elbow setting choices.
ELBOW_WORDS = {
    "any": "any (either configuration)",
    "positive": "positive only (q2 > 0)",
    "negative": "negative only (q2 < 0)",
}

_UNIT_TEXT = {"deg": "°", "deg/s": "°/s", "deg/s²": "°/s²", "deg/s³": "°/s³", "": ""}


class ArmPanel(QWidget):
    """Edits one arm of the document; a choice list picks the arm when there are several.

    Signals
    -------
    refused(str)
        A field was left with text it refused (what, and the value that stays).
    arm_changed(str)
        The arm being edited changed (its id).
    """

    refused = Signal(str)
    arm_changed = Signal(str)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._arm_id: str | None = None
        self.setStyleSheet(FIELD_STYLE)

        outer = QVBoxLayout(self)
        outer.setContentsMargins(4, 4, 4, 4)
        self.arm_choice = QComboBox()
        self.arm_choice.setObjectName("arm_choice")
        self.arm_choice.setToolTip("Which arm the fields below edit")
        self.arm_choice_label = QLabel("Arm")
        top = QGridLayout()
        top.addWidget(self.arm_choice_label, 0, 0)
        top.addWidget(self.arm_choice, 0, 1)
        top.setColumnStretch(1, 1)
        outer.addLayout(top)
        self.action_row = QHBoxLayout()
        self.action_row.setContentsMargins(0, 0, 0, 0)
        outer.addLayout(self.action_row)
        self.no_arms = QLabel(NO_ARMS + " (Cell > Add Arm…)")
        self.no_arms.setObjectName("no_arms")
        self.no_arms.setWordWrap(True)
        self.no_arms.setVisible(False)
        outer.addWidget(self.no_arms)

        body = QWidget()
        body_layout = QVBoxLayout(body)
        body_layout.setContentsMargins(0, 0, 0, 0)
        self.edits: dict[str, QLineEdit] = {}
        self.reasons: dict[str, QLabel] = {}
        self.units: dict[str, QLabel] = {}
        self.bindings: dict[str, FieldBinding] = {}
        fields = {f.key: f for f in ARM_FIELDS}
        for title, keys in GROUPS:
            box = QGroupBox(title)
            grid = QGridLayout(box)
            grid.setColumnStretch(1, 1)
            row = 0
            for key in keys:
                row = self._add_field(grid, row, fields[key])
            body_layout.addWidget(box)
            if title == "Joint limits":
                body_layout.addWidget(self._elbow_box())
        body_layout.addStretch(1)
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        # The fields narrow with the dock rather than scroll sideways.
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setWidget(body)
        outer.addWidget(scroll, 1)

        self.arm_choice.currentIndexChanged.connect(self._on_arm_chosen)
        self.elbow.currentIndexChanged.connect(self._on_elbow_chosen)
        document.events.cell_changed.connect(self._on_cell_changed)
        document.selection.changed.connect(self._on_selection)
        self._fill_arm_choice()
        self._show_arm()

    # ------------------------------------------------------------------ building

    def _add_field(self, grid: QGridLayout, row: int, f: ArmField) -> int:
        # Symbols (a1, q2 min) keep their case; words start with a capital.
        text = f.label if f.label[:1] in "aq" and f.label[1:2].isdigit() else f.label.capitalize()
        label = QLabel(text)
        edit = QLineEdit()
        edit.setObjectName(f"field_{f.key}")
        edit.setAccessibleName(f.label)
        if f.key in _OPTIONAL_HINTS:
            hint, tip = _OPTIONAL_HINTS[f.key]
            edit.setPlaceholderText(hint)
            edit.setToolTip(tip)
        elif f.optional:
            edit.setPlaceholderText("not given")
            edit.setToolTip("Leave empty if unknown; one value fills both joints")
        unit = QLabel()
        reason = QLabel()
        reason.setObjectName(f"reason_{f.key}")
        label.setBuddy(edit)
        grid.addWidget(label, row, 0)
        grid.addWidget(edit, row, 1)
        grid.addWidget(unit, row, 2)
        grid.addWidget(reason, row + 1, 1, 1, 2)
        self.edits[f.key] = edit
        self.reasons[f.key] = reason
        self.units[f.key] = unit
        self.bindings[f.key] = FieldBinding(
            edit,
            reason,
            check=lambda text, f=f: self._changed_cell(f, text),
            commit=lambda text, f=f: self._commit(f, text),
            label=text,
        )
        self.bindings[f.key].refused.connect(self.refused.emit)
        return row + 2

    def set_arm_actions(self, actions: list[QAction]) -> None:
        """Buttons above the fields for arm commands (add, duplicate, delete, rename)."""
        for act in actions:
            button = QToolButton()
            button.setDefaultAction(act)
            button.setToolButtonStyle(button.toolButtonStyle().ToolButtonTextOnly)
            self.action_row.addWidget(button)
        self.action_row.addStretch(1)

    def _elbow_box(self) -> QGroupBox:
        box = QGroupBox("Elbow configuration")
        grid = QGridLayout(box)
        self.elbow = QComboBox()
        self.elbow.setObjectName("field_elbow")
        for setting in ELBOW_SETTINGS:
            self.elbow.addItem(ELBOW_WORDS[setting], setting)
        label = QLabel("Allowed")
        label.setBuddy(self.elbow)
        grid.addWidget(label, 0, 0)
        grid.addWidget(self.elbow, 0, 1)
        grid.setColumnStretch(1, 1)
        return box

    # ------------------------------------------------------------------ model -> widgets

    @property
    def arm(self) -> Arm | None:
        """The arm being edited, None when the cell has no arms."""
        if self._arm_id is None:
            return None
        try:
            return self.document.cell.arm(self._arm_id)
        except KeyError:
            return None

    def select_arm(self, arm_id: str) -> None:
        """Edit the arm with this id."""
        i = self.arm_choice.findData(arm_id)
        if i >= 0:
            self.arm_choice.setCurrentIndex(i)

    def _fill_arm_choice(self) -> None:
        arms = self.document.cell.arms
        ids = [a.id for a in arms]
        if self._arm_id not in ids:
            self._arm_id = ids[0] if ids else None
            if self._arm_id is not None:
                self.arm_changed.emit(self._arm_id)
        with blocked(self.arm_choice):
            self.arm_choice.clear()
            for a in arms:
                self.arm_choice.addItem(f"{a.name} ({a.id})", a.id)
            if self._arm_id is not None:
                self.arm_choice.setCurrentIndex(ids.index(self._arm_id))
        several = len(arms) > 1
        self.arm_choice.setVisible(several)
        self.arm_choice_label.setVisible(several)
        self.no_arms.setVisible(not arms)

    def _show_arm(self) -> None:
        arm = self.arm
        units = self.document.cell.units
        for f in ARM_FIELDS:
            self.edits[f.key].setEnabled(arm is not None)
            self.units[f.key].setText(units if f.unit == "length" else _UNIT_TEXT[f.unit])
            self.bindings[f.key].show_model(f.get(arm) if arm is not None else "")
        self.elbow.setEnabled(arm is not None)
        if arm is not None:
            with blocked(self.elbow):
                self.elbow.setCurrentIndex(max(0, self.elbow.findData(arm.elbow)))

    def _on_cell_changed(self, changes: Changes) -> None:
        ids = [a.id for a in self.document.cell.arms]
        names = [self.arm_choice.itemText(i) for i in range(self.arm_choice.count())]
        wanted = [f"{a.name} ({a.id})" for a in self.document.cell.arms]
        if changes.structure or names != wanted or self._arm_id not in ids:
            self._fill_arm_choice()
        if changes.structure or changes.other or self._arm_id in changes.arms:
            self._show_arm()

    def _on_selection(self, ids: tuple[str, ...]) -> None:
        cell = self.document.cell
        arm_ids = {a.id for a in cell.arms}
        for i in ids:
            if i in arm_ids:
                self.select_arm(i)
                return
        targets = {t.id: t for t in cell.targets}
        for i in ids:
            if i in targets and targets[i].arm in arm_ids:
                self.select_arm(targets[i].arm)
                return

    # ------------------------------------------------------------------ widgets -> model

    def _on_arm_chosen(self, index: int) -> None:
        arm_id = self.arm_choice.itemData(index)
        if arm_id is not None and arm_id != self._arm_id:
            self._arm_id = arm_id
            self._show_arm()
            self.arm_changed.emit(arm_id)

    def _changed_cell(self, f: ArmField, text: str):
        arm = self.arm
        if arm is None:
            raise Invalid("the cell has no arm")
        cell = self.document.cell
        index = next(i for i, a in enumerate(cell.arms) if a.id == arm.id)
        return check_cell(replace_arm(cell, f.put(arm, text)), focus=("arms", index))

    def _commit(self, f: ArmField, text: str) -> None:
        arm = self.arm
        if arm is None:
            return
        try:
            cell = self._changed_cell(f, text)
        except Invalid:
            return  # validated just before; the model moved on in between
        self.document.edit(f"Change {f.label} of {arm.name}", cell)
        self._show_arm()

    def _on_elbow_chosen(self, index: int) -> None:
        arm = self.arm
        setting = self.elbow.itemData(index)
        if arm is None or setting is None or setting == arm.elbow:
            return
        cell = check_cell(replace_arm(self.document.cell, replace(arm, elbow=check_elbow(setting))))
        self.document.edit(f"Change elbow setting of {arm.name}", cell)
