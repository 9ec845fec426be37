"""Binding helpers between widgets and the document model, without echo.

A widget shows the model; when the model changes, the widget is updated with its
signals blocked so the update is not mistaken for the user typing. Typed text is
validated on every keystroke and committed only on Enter or focus-out.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager

from PySide6.QtCore import QEvent, QObject, Qt
from PySide6.QtWidgets import QLabel, QLineEdit

from app.panels.validate import Invalid

__all__ = ["blocked", "EchoGuard", "FieldBinding", "INVALID_MARK", "FIELD_STYLE"]

#: Shown before a refusal reason; the field also gets a dashed border, so colour is not the cue.
INVALID_MARK = "✕"

#: Style sheet for validated fields, keyed on their "invalid" property.
FIELD_STYLE = """
QLineEdit[invalid="true"] { border: 2px dashed #d1581a; background: #fdf1ea; }
QLabel[role="reason"] { color: #8f3a0f; }
"""


@contextmanager
def blocked(*objects: QObject) -> Iterator[None]:
    """Block the signals of ``objects`` for the duration, restoring their previous state."""
    previous = [o.blockSignals(True) for o in objects]
    try:
        yield
    finally:
        for o, was in zip(objects, previous, strict=True):
            o.blockSignals(was)


class EchoGuard:
    """A re-entrancy flag: ``with guard:`` while changing the model, ``if guard:`` to skip echo."""

    def __init__(self) -> None:
        self._depth = 0

    def __enter__(self) -> EchoGuard:
        self._depth += 1
        return self

    def __exit__(self, *exc: object) -> None:
        self._depth -= 1

    def __bool__(self) -> bool:
        return self._depth > 0


class _EscapeFilter(QObject):
    def __init__(self, on_escape: Callable[[], None], parent: QObject) -> None:
        super().__init__(parent)
        self._on_escape = on_escape

    def eventFilter(self, obj: QObject, event: QEvent) -> bool:
        if event.type() == QEvent.Type.KeyPress and event.key() == Qt.Key.Key_Escape:
            self._on_escape()
            return True
        return False


class FieldBinding(QObject):
    """Ties a QLineEdit and a reason label to one model value.

    Parameters
    ----------
    edit : QLineEdit
        The field the user types in.
    reason : QLabel
        Shows "✕ <reason>" while the typed text is refused, empty otherwise.
    check : callable
        ``check(text)`` raises :class:`~app.panels.validate.Invalid` to refuse the text.
    commit : callable
        ``commit(text)`` changes the model; called on Enter or focus-out with
        valid text the user changed.
    """

    def __init__(
        self,
        edit: QLineEdit,
        reason: QLabel,
        check: Callable[[str], object],
        commit: Callable[[str], None],
    ) -> None:
        super().__init__(edit)
        self.edit = edit
        self.reason = reason
        self._check = check
        self._commit = commit
        self._model_text = edit.text()
        reason.setProperty("role", "reason")
        reason.setWordWrap(True)
        reason.setVisible(False)
        edit.textEdited.connect(self._on_typed)
        edit.editingFinished.connect(self._on_finished)
        edit.installEventFilter(_EscapeFilter(self.revert, self))

    @property
    def error(self) -> str:
        """The reason the current text is refused, empty when it is accepted."""
        return self.reason.text().removeprefix(INVALID_MARK).strip()

    def show_model(self, text: str) -> None:
        """Show the model's value, unless the user is part-way through changing this field."""
        self._model_text = text
        if self.edit.hasFocus() and self.edit.isModified():
            return
        self._set_text(text)

    def revert(self) -> None:
        """Throw away what was typed and show the model's value again."""
        self._set_text(self._model_text)

    def _set_text(self, text: str) -> None:
        with blocked(self.edit):
            if self.edit.text() != text:
                self.edit.setText(text)
            self.edit.setModified(False)
        self._show_reason("")

    def validate(self) -> bool:
        """Check the current text, show or clear the reason; True when accepted."""
        try:
            self._check(self.edit.text())
        except Invalid as exc:
            self._show_reason(str(exc))
            return False
        self._show_reason("")
        return True

    def _on_typed(self, _text: str) -> None:
        self.validate()

    def _on_finished(self) -> None:
        if not self.edit.isModified():
            return
        if self.edit.text() == self._model_text:
            self.edit.setModified(False)
            return
        if not self.validate():
            return  # refused: the text and its reason stay so the user can fix them
        self.edit.setModified(False)
        self._commit(self.edit.text())

    def _show_reason(self, reason: str) -> None:
        invalid = bool(reason)
        self.reason.setText(f"{INVALID_MARK} {reason}" if invalid else "")
        if invalid and self.reason.wordWrap():
            # Layouts in a scroll area can under-size wrapped labels; reserve the wrapped height.
            width = max(self.edit.width(), 120)
            self.reason.setMinimumHeight(self.reason.heightForWidth(width))
        self.reason.setVisible(invalid)
        self.edit.setToolTip(reason)
        if bool(self.edit.property("invalid")) != invalid:
            self.edit.setProperty("invalid", invalid)
            # Re-apply the style sheet so the dynamic property takes effect.
            self.edit.style().unpolish(self.edit)
            self.edit.style().polish(self.edit)
