"""Binding helpers between widgets and the document model, without echo.

A widget shows the model; when the model changes, the widget is updated with its
signals blocked so the update is not mistaken for the user typing. Typed text is
validated on every keystroke and committed only on Enter or focus-out.

Refused text never outlives the field's focus: Enter keeps it (with the reason) so it
can be fixed, leaving the field puts the model's value back and says what was refused.
Undo and redo in a field are the document's: typing not yet committed is thrown away by
Ctrl+Z, and with nothing typed Ctrl+Z / Ctrl+Shift+Z reach the window's undo stack, so
the field's own edit history never becomes an undo step.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager

from PySide6.QtCore import QEvent, QObject, Qt, Signal
from PySide6.QtGui import QKeySequence
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


# Focus that leaves for a menu or another window comes back: the typing waits for it.
_STAYING = (Qt.FocusReason.PopupFocusReason, Qt.FocusReason.ActiveWindowFocusReason)
_HISTORY_KEYS = (QKeySequence.StandardKey.Undo, QKeySequence.StandardKey.Redo)


class _FieldFilter(QObject):
    """Esc reverts; Ctrl+Z / Ctrl+Shift+Z are the document's; focus-out with refused text."""

    def __init__(self, binding: FieldBinding) -> None:
        super().__init__(binding)
        self._b = binding

    def eventFilter(self, obj: QObject, event: QEvent) -> bool:
        t = event.type()
        b = self._b
        if t == QEvent.Type.ShortcutOverride and any(event.matches(k) for k in _HISTORY_KEYS):
            if b.typing:
                event.accept()  # the key press comes here: it throws the typing away
            else:
                event.ignore()  # not the line edit's: the window's undo / redo shortcut
            return True
        if t == QEvent.Type.KeyPress:
            if event.key() == Qt.Key.Key_Escape:
                b.revert()
                return True
            if any(event.matches(k) for k in _HISTORY_KEYS):
                b.revert()  # the typing was never a step: nothing else to undo here
                return True
        if t == QEvent.Type.FocusOut and event.reason() not in _STAYING:
            b.leave()
        return False


class FieldBinding(QObject):
    """Ties a QLineEdit and a reason label to one model value.

    Signals
    -------
    refused(str)
        The field was left with text it refused; the text says what and what stays.

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

    refused = Signal(str)

    def __init__(
        self,
        edit: QLineEdit,
        reason: QLabel,
        check: Callable[[str], object],
        commit: Callable[[str], None],
        label: str = "",
    ) -> None:
        super().__init__(edit)
        self.label = label or edit.accessibleName() or "the field"
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
        edit.installEventFilter(_FieldFilter(self))

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

    @property
    def typing(self) -> bool:
        """True while the field holds typed text not yet committed."""
        return self.edit.isModified() and self.edit.text() != self._model_text

    def leave(self) -> None:
        """The field loses focus: refused text gives way to the model's value, and the
        reason stays beside the field saying what was refused."""
        if not self.typing or self.validate():
            return  # valid typing is committed by editingFinished, which follows
        typed, why = self.edit.text(), self.error
        self.revert()
        kept = self._model_text or "empty"
        note = f"{self.label}: {typed!r} was not taken ({why}); it stays {kept}"
        self.reason.setText(f"{INVALID_MARK} {note}")
        self.reason.setVisible(True)
        self.edit.setToolTip(note)
        self.refused.emit(note)

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
