"""The fixture panel: name, kind, height and the outline's vertices of one fixture.

It shows the fixture selected on the canvas (or picked from its choice list). Every
change is one undo step through ``document.edit``; refused text is said beside its field
in the field's own words and never stays once the field is left (:mod:`app.bind`). The
height is what the 2.5-D rule reads: a fixture without one blocks every body, so the
panel says so. A height given to a fixture is remembered for new fixtures of its kind
(the ``height_set`` signal; the window keeps it in the settings).
"""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import (
    QAbstractItemView,
    QComboBox,
    QFormLayout,
    QHBoxLayout,
    QHeaderView,
    QLabel,
    QLineEdit,
    QPushButton,
    QTableWidget,
    QTableWidgetItem,
    QVBoxLayout,
    QWidget,
)

from app.bind import FIELD_STYLE, EchoGuard, FieldBinding, blocked
from app.document import Changes, Document
from app.interaction import fixture_edits
from app.panels.validate import Invalid, check_cell, format_number, parse_name, parse_number
from kinematics.cell import FIXTURE_KINDS, Cell, Fixture

__all__ = ["FixturePanel", "NO_HEIGHT"]

#: Said under the height field while a fixture has none.
NO_HEIGHT = "No height: it blocks every body of every arm (give its top's height)"


class FixturePanel(QWidget):
    """Edits one fixture of the document.

    Signals
    -------
    refused(str)
        An edit was refused (what and why).
    height_set(str, float)
        A height was given to a fixture of a kind (kind, height).
    """

    refused = Signal(str)
    height_set = Signal(str, float)

    def __init__(self, document: Document, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.document = document
        self._fixture_id: str | None = None
        self._guard = EchoGuard()
        self.setStyleSheet(FIELD_STYLE)
        outer = QVBoxLayout(self)
        outer.setContentsMargins(4, 4, 4, 4)

        self.choice = QComboBox()
        # Long names must not widen the dock: the list shows them whole when opened.
        self.choice.setSizeAdjustPolicy(
            QComboBox.SizeAdjustPolicy.AdjustToMinimumContentsLengthWithIcon
        )
        self.choice.setMinimumContentsLength(14)
        self.choice.setObjectName("fixture_choice")
        self.choice.setToolTip("Which fixture the fields below edit (or select one on the canvas)")
        outer.addWidget(self.choice)
        self.empty_note = QLabel(
            "No fixtures yet: draw one with the rectangle or polygon tool on the canvas."
        )
        self.empty_note.setWordWrap(True)
        outer.addWidget(self.empty_note)

        form = QFormLayout()
        self.name = QLineEdit()
        self.name.setObjectName("fixture_name")
        self.name.setAccessibleName("name")
        self.name_reason = QLabel()
        form.addRow("Name", self.name)
        form.addRow("", self.name_reason)
        self.kind = QComboBox()
        self.kind.setObjectName("fixture_kind")
        self.kind.setEditable(True)
        self.kind.addItems(list(FIXTURE_KINDS))
        self.kind.setToolTip(
            "A keep-out zone blocks every body whatever the heights; other kinds block by "
            "height. Any word is allowed; the listed kinds have their own drawing style."
        )
        form.addRow("Kind", self.kind)
        height_row = QHBoxLayout()
        self.height = QLineEdit()
        self.height.setObjectName("fixture_height")
        self.height.setAccessibleName("height")
        self.height.setPlaceholderText("not given: blocks everything")
        self.height.setToolTip(
            "Height of the fixture's top above the floor (0 or more). Links pass over it when "
            "it is lower than their underside less the clearance margin; the tool passes over "
            "it at targets whose work height is at least as high."
        )
        self.height_unit = QLabel()
        height_row.addWidget(self.height, 1)
        height_row.addWidget(self.height_unit)
        self.height_reason = QLabel()
        form.addRow("Height", height_row)
        form.addRow("", self.height_reason)
        self.height_note = QLabel(NO_HEIGHT)
        self.height_note.setWordWrap(True)
        form.addRow("", self.height_note)
        outer.addLayout(form)

        self.vertices = QTableWidget(0, 2)
        self.vertices.setObjectName("fixture_vertices")
        self.vertices.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.vertices.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.vertices.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.vertices.setToolTip("The outline's vertices in order; edit x or y to move one")
        outer.addWidget(QLabel("Outline vertices"))
        outer.addWidget(self.vertices, 1)
        buttons = QHBoxLayout()
        self.insert_button = QPushButton("Insert After")
        self.insert_button.setToolTip(
            "A new vertex after the chosen one, halfway along the edge to the next one"
        )
        self.remove_button = QPushButton("Remove")
        self.remove_button.setToolTip("Remove the chosen vertex (an outline keeps at least three)")
        buttons.addWidget(self.insert_button)
        buttons.addWidget(self.remove_button)
        outer.addLayout(buttons)
        self.vertex_reason = QLabel()
        self.vertex_reason.setProperty("role", "reason")
        self.vertex_reason.setWordWrap(True)
        self.vertex_reason.setVisible(False)
        outer.addWidget(self.vertex_reason)

        self.name_binding = FieldBinding(
            self.name,
            self.name_reason,
            check=lambda text: self._with_name(text),
            commit=lambda text: self._commit("name", text),
            label="name",
        )
        self.height_binding = FieldBinding(
            self.height,
            self.height_reason,
            check=lambda text: self._with_height(text),
            commit=lambda text: self._commit("height", text),
            label="height",
        )
        for b in (self.name_binding, self.height_binding):
            b.refused.connect(self.refused.emit)
        self.choice.currentIndexChanged.connect(self._on_chosen)
        self.kind.activated.connect(lambda _i: self._commit_kind())
        self.kind.lineEdit().editingFinished.connect(self._commit_kind)
        self.vertices.itemChanged.connect(self._on_vertex_edited)
        self.insert_button.clicked.connect(self.insert_vertex)
        self.remove_button.clicked.connect(self.remove_vertex)
        document.events.cell_changed.connect(self._on_cell_changed)
        document.selection.changed.connect(self._on_selection)
        self._fill_choice()
        self._show()

    # ------------------------------------------------------------------ model -> widgets

    @property
    def fixture(self) -> Fixture | None:
        """The fixture being edited (None when the cell has none)."""
        if self._fixture_id is None:
            return None
        try:
            return fixture_edits.fixture(self.document.cell, self._fixture_id)
        except KeyError:
            return None

    def select_fixture(self, fixture_id: str) -> None:
        """Edit the fixture with this id."""
        i = self.choice.findData(fixture_id)
        if i >= 0:
            self.choice.setCurrentIndex(i)

    def _fill_choice(self) -> None:
        fixtures = self.document.cell.fixtures
        ids = [f.id for f in fixtures]
        if self._fixture_id not in ids:
            self._fixture_id = ids[0] if ids else None
        with blocked(self.choice):
            self.choice.clear()
            for f in fixtures:
                self.choice.addItem(f"{f.name} ({f.id})", f.id)
            if self._fixture_id is not None:
                self.choice.setCurrentIndex(ids.index(self._fixture_id))
        self.choice.setVisible(bool(fixtures))
        self.empty_note.setVisible(not fixtures)

    def _show(self) -> None:
        f = self.fixture
        on = f is not None
        for w in (self.name, self.kind, self.height, self.vertices):
            w.setEnabled(on)
        self.insert_button.setEnabled(on)
        self.remove_button.setEnabled(on and len(f.outline) > 3)
        self.height_unit.setText(self.document.cell.units)
        self.name_binding.show_model(f.name if on else "")
        self.height_binding.show_model(
            "" if not on or f.height is None else format_number(f.height)
        )
        self.height_note.setVisible(on and f.height is None and f.kind != "keep-out")
        with blocked(self.kind):
            self.kind.setCurrentText(f.kind if on else "")
        self._show_vertices(f)

    def _show_vertices(self, f: Fixture | None) -> None:
        pts = f.outline if f is not None else ()
        units = self.document.cell.units
        with self._guard, blocked(self.vertices):
            self.vertices.setHorizontalHeaderLabels([f"x ({units})", f"y ({units})"])
            keep = self.vertices.currentRow()
            self.vertices.setRowCount(len(pts))
            for r, (x, y) in enumerate(pts):
                for c, v in enumerate((x, y)):
                    item = QTableWidgetItem(format_number(v))
                    item.setTextAlignment(
                        Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter
                    )
                    self.vertices.setItem(r, c, item)
            self.vertices.setVerticalHeaderLabels([str(r + 1) for r in range(len(pts))])
            if 0 <= keep < len(pts):
                self.vertices.selectRow(keep)

    def _on_cell_changed(self, changes: Changes) -> None:
        if not (changes.fixtures or changes.structure or changes.other):
            return  # a base or a target moved: nothing shown here changed
        names = [self.choice.itemText(i) for i in range(self.choice.count())]
        wanted = [f"{f.name} ({f.id})" for f in self.document.cell.fixtures]
        if changes.structure or names != wanted or self.fixture is None:
            self._fill_choice()
        if changes.structure or changes.other or self._fixture_id in changes.fixtures:
            self._show()

    def _on_selection(self, ids: tuple[str, ...]) -> None:
        fixtures = {f.id for f in self.document.cell.fixtures}
        for i in ids:
            if i in fixtures:
                self.select_fixture(i)
                return

    def _on_chosen(self, index: int) -> None:
        fid = self.choice.itemData(index)
        if fid is not None and fid != self._fixture_id:
            self._fixture_id = fid
            self._show()

    # ------------------------------------------------------------------ widgets -> model

    def _focus(self) -> tuple[str, int]:
        ids = [f.id for f in self.document.cell.fixtures]
        return ("fixtures", ids.index(self._fixture_id))

    def _with_name(self, text: str) -> Cell:
        f = self._need()
        return check_cell(
            fixture_edits.set_name(self.document.cell, f.id, parse_name(text)), self._focus()
        )

    def _with_height(self, text: str) -> Cell:
        f = self._need()
        h = None
        if text.strip():
            h = parse_number(text)
            if h < 0:
                raise Invalid(f"must be 0 or more, got {format_number(h)}")
        return check_cell(fixture_edits.set_height(self.document.cell, f.id, h), self._focus())

    def _need(self) -> Fixture:
        f = self.fixture
        if f is None:
            raise Invalid("no fixture selected")
        return f

    def _commit(self, what: str, text: str) -> None:
        f = self.fixture
        if f is None:
            return
        try:
            cell = self._with_name(text) if what == "name" else self._with_height(text)
        except Invalid:
            return
        label = f"Rename fixture {f.name}" if what == "name" else f"Set height of {f.name}"
        self.document.edit(label, cell)
        new = fixture_edits.fixture(self.document.cell, f.id)
        if what == "height" and new.height is not None:
            self.height_set.emit(new.kind, float(new.height))
        self._show()

    def _commit_kind(self) -> None:
        f = self.fixture
        kind = self.kind.currentText().strip()
        if f is None or kind == f.kind:
            return
        try:
            cell = check_cell(fixture_edits.set_kind(self.document.cell, f.id, kind), self._focus())
        except Invalid as exc:
            self.refused.emit(f"✕ kind: {exc}")
            with blocked(self.kind):
                self.kind.setCurrentText(f.kind)
            return
        self.document.edit(f"Make {f.name} a {kind}", cell)

    def _on_vertex_edited(self, item: QTableWidgetItem) -> None:
        if self._guard:
            return
        f = self.fixture
        if f is None:
            return
        r, c = item.row(), item.column()
        x, y = f.outline[r]
        try:
            v = parse_number(item.text())
        except Invalid as exc:
            self._vertex_refused(f"vertex {r + 1} {'xy'[c]}: {exc}", f)
            return
        x, y = (v, y) if c == 0 else (x, v)
        cell, problem = fixture_edits.set_vertex(self.document.cell, f.id, r, x, y)
        if problem:
            self._vertex_refused(f"vertex {r + 1}: {problem}", f)
            return
        self._vertex_refused("", f)
        self.document.edit(f"Move vertex {r + 1} of {f.name}", cell)

    def _vertex_refused(self, reason: str, f: Fixture) -> None:
        self.vertex_reason.setText(f"✕ {reason}; the outline stays as it was" if reason else "")
        self.vertex_reason.setVisible(bool(reason))
        if reason:
            self.refused.emit(f"✕ {f.name}: {reason}")
            self._show_vertices(f)

    def _row(self) -> int:
        r = self.vertices.currentRow()
        f = self.fixture
        return r if f is not None and 0 <= r < len(f.outline) else (len(f.outline) - 1 if f else -1)

    def insert_vertex(self) -> None:
        """A vertex halfway along the edge after the current one (one undo step)."""
        f = self.fixture
        if f is None:
            return
        r = self._row()
        cell, problem = fixture_edits.insert_vertex(self.document.cell, f.id, r)
        if problem:
            self._vertex_refused(problem, f)
            return
        self.document.edit(f"Add vertex to {f.name}", cell)
        self.vertices.selectRow(r + 1)

    def remove_vertex(self) -> None:
        """Remove the current vertex (one undo step; an outline keeps three)."""
        f = self.fixture
        if f is None:
            return
        cell, problem = fixture_edits.remove_vertex(self.document.cell, f.id, self._row())
        if problem:
            self._vertex_refused(problem, f)
            return
        self.document.edit(f"Delete vertex of {f.name}", cell)
