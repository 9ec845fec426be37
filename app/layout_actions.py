"""The Layout menu: the placement map, the best spot, the score weights and the variants.

On a main window (``document``, ``canvas``, ``arm_panel``, ``statusBar()``): the canvas's
placement overlay (:mod:`app.canvas.layers.placement`) of the arm the arm panel shows,
"Move Base to the Best Spot" (one undo step), the placement score weights (a small
dialog; stored in the cell as one undo step), the variants dock
(:class:`app.panels.variants.VariantsPanel`) and, in the status bar, the worker's progress
with a button that stops it. Every question goes through an ``ask_*`` method that tests
replace.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import QObject, Qt
from PySide6.QtGui import QAction
from PySide6.QtWidgets import (
    QDialog,
    QDialogButtonBox,
    QDockWidget,
    QDoubleSpinBox,
    QFormLayout,
    QLabel,
    QMenu,
    QMenuBar,
    QProgressBar,
    QToolBar,
    QToolButton,
    QVBoxLayout,
    QWidget,
)

from app.panels.variants import VariantsPanel
from kinematics.layout_keys import WEIGHT_KEYS, ScoreWeights, score_weights, with_score_weights
from kinematics.placement import CLEARANCE_FULL_WIDTHS, LIMIT_MARGIN_FULL_DEG

__all__ = ["LayoutActions", "WeightsDialog", "WEIGHT_LABELS"]

#: What each weight of the score's quality weighs, for the dialog.
WEIGHT_LABELS = {
    "limit_margin": f"Worst joint-limit margin (full at {LIMIT_MARGIN_FULL_DEG:g}°)",
    "reach_margin": "Worst reach margin (full at 10 % of the reach)",
    "clearance": f"Smallest clearance (full at {CLEARANCE_FULL_WIDTHS:g} link width)",
}


class WeightsDialog(QDialog):
    """The weights of the placement score's quality terms (each 0 or more)."""

    def __init__(self, weights: ScoreWeights, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle("Placement score weights")
        lay = QVBoxLayout(self)
        intro = QLabel(
            "score = targets feasible + quality (0 to 1); the quality is the weighted mean of "
            "the terms below, so a base where more targets are feasible always scores higher."
        )
        intro.setWordWrap(True)
        lay.addWidget(intro)
        form = QFormLayout()
        self.boxes: dict[str, QDoubleSpinBox] = {}
        for key in WEIGHT_KEYS:
            box = QDoubleSpinBox()
            box.setObjectName(f"weight_{key}")
            box.setRange(0.0, 100.0)
            box.setDecimals(2)
            box.setSingleStep(0.5)
            box.setValue(float(getattr(weights, key)))
            self.boxes[key] = box
            form.addRow(WEIGHT_LABELS[key], box)
        lay.addLayout(form)
        buttons = QDialogButtonBox(
            QDialogButtonBox.StandardButton.Ok
            | QDialogButtonBox.StandardButton.Cancel
            | QDialogButtonBox.StandardButton.RestoreDefaults
        )
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        buttons.button(QDialogButtonBox.StandardButton.RestoreDefaults).clicked.connect(
            lambda: [b.setValue(1.0) for b in self.boxes.values()]
        )
        lay.addWidget(buttons)

    def weights(self) -> ScoreWeights:
        """The weights as set in the boxes."""
        return ScoreWeights(**{k: float(b.value()) for k, b in self.boxes.items()})


class LayoutActions(QObject):
    """The Layout menu and what goes with it (see the module docstring)."""

    def __init__(self, window: Any) -> None:
        super().__init__(window)
        self.window = window
        self.canvas = window.canvas
        self.layer = window.canvas.placement
        self.act_map = self.canvas.actions()["overlay.placement"]
        self.act_best = QAction("Move Base to the &Best Spot", window)
        self.act_best.setObjectName("placement.best")
        self.act_best.setIconText("Best Spot")
        self.act_best.setToolTip(
            "Move the selected arm's base to the best spot of its placement map (one undo step)"
        )
        self.act_best.triggered.connect(lambda _c=False: self.move_to_best())
        self.act_weights = QAction("Placement Score &Weights…", window)
        self.act_weights.triggered.connect(lambda _c=False: self.edit_weights())
        self.panel = VariantsPanel(window.document, shown=False)  # until its tab is in front
        self.dock = QDockWidget("Variants", window)
        self.dock.setObjectName("variants_dock")
        self.dock.setWidget(self.panel)
        self.dock.visibilityChanged.connect(self.panel.set_shown)
        self.act_new_variant = QAction("New &Variant from Current Layout", window)
        self.act_new_variant.triggered.connect(lambda _c=False: self.panel.create())
        self._build_progress()
        self.layer.changed.connect(self._update_best_action)
        self.layer.progress.connect(self._on_progress)
        self.layer.message.connect(lambda msg: window.statusBar().showMessage(msg, 8000))
        arm_panel = window.arm_panel
        arm_panel.arm_choice.currentIndexChanged.connect(lambda _i: self._follow_arm())
        self._follow_arm()
        self._update_best_action()

    # ------------------------------------------------------------------ building

    def _build_progress(self) -> None:
        self.progress = QProgressBar()
        self.progress.setObjectName("placement_progress")
        self.progress.setRange(0, 100)
        self.progress.setMaximumWidth(180)
        self.progress.setFormat("%p %")
        self.progress_label = QLabel()
        self.stop_button = QToolButton()
        self.stop_button.setObjectName("placement_stop")
        self.stop_button.setText("Stop")
        self.stop_button.setToolTip("Stop computing the placement map (what is drawn stays)")
        self.stop_button.clicked.connect(self.layer.cancel)
        bar = self.window.statusBar()
        for w in (self.progress_label, self.progress, self.stop_button):
            w.setVisible(False)
            bar.addPermanentWidget(w)

    def add_to(self, menubar: QMenuBar, before: QAction | None, view_menu: QMenu) -> QMenu:
        """Add the Layout menu (before ``before``) and the variants dock's View entry."""
        menu = QMenu("&Layout", menubar)
        menu.addAction(self.act_map)
        menu.addAction(self.act_best)
        menu.addAction(self.act_weights)
        menu.addSeparator()
        menu.addAction(self.act_new_variant)
        menu.addAction(self.dock.toggleViewAction())
        if before is not None:
            menubar.insertMenu(before, menu)
        else:
            menubar.addMenu(menu)
        view_menu.addAction(self.dock.toggleViewAction())
        self.window.addDockWidget(Qt.DockWidgetArea.BottomDockWidgetArea, self.dock)
        table_dock = getattr(self.window, "table_dock", None)
        if table_dock is not None:
            self.window.tabifyDockWidget(table_dock, self.dock)
            table_dock.raise_()
        return menu

    def add_to_toolbar(self, toolbar: QToolBar) -> None:
        self.act_map.setIconText("Placement Map")
        toolbar.addSeparator()
        toolbar.addAction(self.act_map)
        toolbar.addAction(self.act_best)

    # ------------------------------------------------------------------ actions

    def _follow_arm(self) -> None:
        arm = self.window.arm_panel.arm
        self.layer.set_arm(None if arm is None else arm.id)
        if self.layer.enabled:
            self.canvas.refresh(all_arms=True)

    def _update_best_action(self) -> None:
        ready = self.layer.best_ready()
        self.act_best.setEnabled(ready)
        if ready:
            b = self.layer.best
            self.act_best.setStatusTip(f"Best spot at ({b.x:.1f}, {b.y:.1f}), score {b.score:.2f}")

    def move_to_best(self) -> bool:
        """Move the overlay's arm to the best spot: one undo step. False when not known."""
        doc = self.window.document
        cell = self.layer.best_cell(doc.cell)
        if cell is None:
            self.window.statusBar().showMessage(
                "The best spot is not known yet: show the placement map and let it finish", 6000
            )
            return False
        arm = self.layer.best_arm_name()
        doc.edit(f"Move {arm} to the best spot", cell)
        return True

    def ask_weights(self, weights: ScoreWeights) -> ScoreWeights | None:
        """Ask for the placement score weights; None when cancelled."""
        dlg = WeightsDialog(weights, self.window)
        return dlg.weights() if dlg.exec() == QDialog.DialogCode.Accepted else None

    def edit_weights(self) -> None:
        """Set the placement score weights, stored in the cell: one undo step."""
        doc = self.window.document
        try:
            current = score_weights(doc.cell)
        except ValueError as exc:
            self.window.statusBar().showMessage(f"Placement weights: {exc}", 8000)
            return
        got = self.ask_weights(current)
        if got is None or got == current:
            return
        doc.edit("Change placement score weights", with_score_weights(doc.cell, got))

    def _on_progress(self, text: str, done: float) -> None:
        on = bool(text)
        self.progress_label.setText(text)
        self.progress.setValue(int(round(100 * max(0.0, min(1.0, done)))))
        for w in (self.progress_label, self.progress, self.stop_button):
            w.setVisible(on)

    def shutdown(self) -> None:
        """Stop the workers and wait for them (the window is closing)."""
        self.layer.shutdown()
        self.panel.runner.shutdown()
