"""Side panels of the viewer window (PyQt5): the job, the readings, the live camera.

Each panel takes the model in its constructor, redraws on the model's events and turns user
actions into model changes (or calls handed to it); none of them measures anything.
"""

from __future__ import annotations

import math
from typing import Callable

from PyQt5.QtCore import Qt
from PyQt5.QtGui import QColor
from PyQt5.QtWidgets import (QCheckBox, QComboBox, QDoubleSpinBox, QFormLayout, QFrame,
                             QGroupBox, QHBoxLayout, QHeaderView, QLabel, QLineEdit,
                             QProgressBar, QPushButton, QStackedWidget, QTableWidget,
                             QTableWidgetItem, QVBoxLayout, QWidget)

from .model import GAUGE_KINDS, MODE_TITLES, MODES, REFERENCES, ViewerModel
from .readings import ACCEPTANCE_NOTE, VERDICT_LOOK, overall_look, reading_rows

__all__ = ["JobPanel", "ReadingsPanel", "CameraPanel", "SAFETY_NOTE"]

SAFETY_NOTE = (
    "\u26a0 Safety: look and measure only with the spindle stopped and the lathe isolated "
    "at the switch; keep guards in place and wear eye protection; keep hands, the camera "
    "and its cable clear of the chuck, leadscrew and tool post. The standards, local codes "
    "and licensed practice govern the work and its acceptance.")

GAUGE_WORDS = {"pin": "Pin / plug (diameter)", "block": "Gauge block (length)",
               "lines": "Ruled scale (line spacing)"}
REFERENCE_WORDS = {"point": "Centre point in the spindle", "bar": "Test bar / work (both edges)",
                   "line": "Reference line (axis drawn)"}


def _wrap_label(text: str = "") -> QLabel:
    lab = QLabel(text)
    lab.setWordWrap(True)
    lab.setTextInteractionFlags(Qt.TextSelectableByMouse)
    return lab


class JobPanel(QGroupBox):
    """Choose the job and give what it asks for; Measure starts it (``on_run()``)."""

    def __init__(self, model: ViewerModel, on_run: Callable[[], object], *,
                 on_choose_axis: Callable[[], object] = lambda: None,
                 on_save_axis: Callable[[], object] = lambda: None, parent=None) -> None:
        super().__init__("Job", parent)
        self.model = model
        lay = QVBoxLayout(self)
        self.mode_box = QComboBox()
        for m in MODES:
            self.mode_box.addItem(MODE_TITLES[m], m)
        lay.addWidget(self.mode_box)
        self.stack = QStackedWidget()
        lay.addWidget(self.stack)

        # calibrate: gauge kind and certified size
        w = QWidget()
        f = QFormLayout(w)
        self.gauge_box = QComboBox()
        for g in GAUGE_KINDS:
            self.gauge_box.addItem(GAUGE_WORDS[g], g)
        self.size_spin = QDoubleSpinBox()
        self.size_spin.setDecimals(4)
        self.size_spin.setRange(0.0, 1000.0)
        self.size_spin.setSpecialValueText("enter size")
        self.size_unit = QComboBox()
        self.size_unit.addItems(["mm", "in"])
        row = QHBoxLayout()
        row.addWidget(self.size_spin, 1)
        row.addWidget(self.size_unit)
        self.label_edit = QLineEdit()
        self.label_edit.setPlaceholderText("e.g. bench camera, 2x lens")
        f.addRow("Gauge", self.gauge_box)
        f.addRow("Certified size", row)
        f.addRow("Camera label", self.label_edit)
        self.stack.addWidget(w)

        # thread: designation
        w = QWidget()
        f = QFormLayout(w)
        self.thread_spec_edit = QLineEdit()
        self.thread_spec_edit.setPlaceholderText("e.g. M6x1-6g, 1/4-20 UNC-2A (blank: no limits)")
        f.addRow("Designation", self.thread_spec_edit)
        self.stack.addWidget(w)

        # tool: designation and internal/external
        w = QWidget()
        f = QFormLayout(w)
        self.tool_spec_edit = QLineEdit()
        self.tool_spec_edit.setPlaceholderText("thread the tool is for (blank: no limits)")
        self.internal_box = QCheckBox("tool cuts an internal thread")
        f.addRow("Designation", self.tool_spec_edit)
        f.addRow("", self.internal_box)
        self.stack.addWidget(w)

        # height: reference kind
        w = QWidget()
        f = QFormLayout(w)
        self.reference_box = QComboBox()
        for r in REFERENCES:
            self.reference_box.addItem(REFERENCE_WORDS[r], r)
        f.addRow("Reference", self.reference_box)
        row = QHBoxLayout()
        self.axis_edit = QLineEdit()
        self.axis_edit.setPlaceholderText("saved axis file (.json)")
        self.axis_button = QPushButton("Choose\u2026")
        row.addWidget(self.axis_edit, 1)
        row.addWidget(self.axis_button)
        self.axis_row = QWidget()
        self.axis_row.setLayout(row)
        row.setContentsMargins(0, 0, 0, 0)
        f.addRow("Axis file", self.axis_row)
        self.save_axis_button = QPushButton("Save this axis for later tools\u2026")
        f.addRow(self.save_axis_button)
        f.addRow(_wrap_label("With the camera live, the height is measured on every frame."))
        self.stack.addWidget(w)

        row = QHBoxLayout()
        self.run_button = QPushButton("Measure")
        self.run_button.setDefault(True)
        self.busy_bar = QProgressBar()
        self.busy_bar.setRange(0, 0)  # indeterminate: a moving bar while the job runs
        self.busy_bar.setMaximumHeight(14)
        self.busy_bar.setTextVisible(False)
        self.busy_bar.setVisible(False)
        row.addWidget(self.run_button)
        row.addWidget(self.busy_bar, 1)
        lay.addLayout(row)

        # widget -> model
        self.mode_box.currentIndexChanged.connect(
            lambda i: model.set_mode(self.mode_box.itemData(i)))
        self.gauge_box.currentIndexChanged.connect(
            lambda i: model.set_params(gauge_kind=self.gauge_box.itemData(i)))
        self.size_spin.valueChanged.connect(self._size_changed)
        self.size_unit.currentIndexChanged.connect(self._unit_changed)
        self.label_edit.textEdited.connect(lambda t: model.set_params(camera_label=t.strip()))
        self.thread_spec_edit.textEdited.connect(lambda t: model.set_params(designation=t))
        self.tool_spec_edit.textEdited.connect(lambda t: model.set_params(designation=t))
        self.internal_box.toggled.connect(lambda b: model.set_params(internal=bool(b)))
        self.reference_box.currentIndexChanged.connect(
            lambda i: model.set_params(reference=self.reference_box.itemData(i)))
        self.run_button.clicked.connect(lambda: on_run())
        self.axis_edit.textEdited.connect(lambda t: model.set_params(axis_path=t.strip()))
        self.axis_button.clicked.connect(lambda: on_choose_axis())
        self.save_axis_button.clicked.connect(lambda: on_save_axis())
        # model -> widget
        model.subscribe("mode", self._show_mode)
        model.subscribe("params", self._show_params)
        model.subscribe("busy", self._show_busy)
        model.subscribe("result", self._show_axis)
        self._show_mode()
        self._show_params()
        self._show_busy()

    def _size_changed(self, v: float) -> None:
        if v <= 0:
            self.model.set_params(gauge_size_mm=None)
            return
        mm = v * 25.4 if self.size_unit.currentText() == "in" else v  # 1 in = 25.4 mm exactly
        self.model.set_params(gauge_size_mm=mm)

    def _unit_changed(self, _i: int) -> None:
        self._show_params()

    def _show_mode(self) -> None:
        i = MODES.index(self.model.mode)
        if self.mode_box.currentIndex() != i:
            self.mode_box.blockSignals(True)
            self.mode_box.setCurrentIndex(i)
            self.mode_box.blockSignals(False)
        self.stack.setCurrentIndex(i)
        from PyQt5.QtWidgets import QSizePolicy
        for j in range(self.stack.count()):  # size the stack to the page shown
            pol = QSizePolicy.Preferred if j == i else QSizePolicy.Ignored
            self.stack.widget(j).setSizePolicy(pol, pol)
        self.stack.adjustSize()

    def _show_params(self) -> None:
        p = self.model.params
        pairs = ((self.gauge_box, GAUGE_KINDS.index(p.gauge_kind)),
                 (self.reference_box, REFERENCES.index(p.reference)))
        for box, i in pairs:
            if box.currentIndex() != i:
                box.blockSignals(True)
                box.setCurrentIndex(i)
                box.blockSignals(False)
        shown = 0.0
        if p.gauge_size_mm is not None:
            shown = p.gauge_size_mm / 25.4 if self.size_unit.currentText() == "in" else p.gauge_size_mm
        if abs(self.size_spin.value() - shown) > 0.5e-4:
            self.size_spin.blockSignals(True)
            self.size_spin.setValue(shown)
            self.size_spin.blockSignals(False)
        for edit, text in ((self.label_edit, p.camera_label),
                           (self.thread_spec_edit, p.designation),
                           (self.tool_spec_edit, p.designation)):
            if edit.text() != text:
                edit.setText(text)
        if self.axis_edit.text() != p.axis_path:
            self.axis_edit.setText(p.axis_path)
        self.axis_row.setEnabled(p.reference == "line")
        self._show_axis()
        if self.internal_box.isChecked() != p.internal:
            self.internal_box.blockSignals(True)
            self.internal_box.setChecked(p.internal)
            self.internal_box.blockSignals(False)

    def _show_axis(self) -> None:
        out = self.model.outcome
        ok = (out is not None and out.mode == "height"
              and getattr(out.result, "axis_line", None) is not None)
        self.save_axis_button.setEnabled(ok)

    def _show_busy(self) -> None:
        self.busy_bar.setVisible(self.model.busy)
        self.run_button.setEnabled(not self.model.busy)
        self.mode_box.setEnabled(not self.model.busy)


def _bare(text: str) -> str:
    """Cell text without the length unit the column header already gives."""
    return "\n".join(t.removesuffix(" mm").removesuffix(" in") for t in text.split("\n"))


class ReadingsPanel(QGroupBox):
    """Every value with its uncertainty in mm and inch, the limits, the verdict per check in
    words, a symbol and colour, the warnings, and the calibration in use."""

    COLUMNS = ("Quantity", "mm  (or \u00b0)", "inch  (or \u00b0 ')", "Limits  (mm, in)",
               "Verdict")

    def __init__(self, model: ViewerModel, parent=None) -> None:
        super().__init__("Readings (U: expanded uncertainty, k = 2)", parent)
        self.model = model
        lay = QVBoxLayout(self)
        self.overall_label = QLabel()
        self.overall_label.setAlignment(Qt.AlignCenter)
        self.overall_label.setMinimumHeight(34)
        f = self.overall_label.font()
        f.setPointSize(f.pointSize() + 4)
        f.setBold(True)
        self.overall_label.setFont(f)
        self.overall_label.setWordWrap(True)
        lay.addWidget(self.overall_label)
        self.table = QTableWidget(0, len(self.COLUMNS))
        self.table.setHorizontalHeaderLabels(self.COLUMNS)
        self.table.verticalHeader().setVisible(False)
        self.table.setEditTriggers(QTableWidget.NoEditTriggers)
        self.table.setSelectionMode(QTableWidget.NoSelection)
        self.table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeToContents)
        self.table.horizontalHeader().setSectionResizeMode(0, QHeaderView.Stretch)
        self.table.verticalHeader().setSectionResizeMode(QHeaderView.ResizeToContents)
        self.table.setWordWrap(True)
        tf = self.table.font()
        tf.setPointSize(max(7, tf.pointSize() - 1))
        self.table.setFont(tf)
        lay.addWidget(self.table, 1)
        self.warnings_label = _wrap_label()
        self.warnings_label.setStyleSheet("color: #8a4b00;")
        lay.addWidget(self.warnings_label)
        self.calibration_label = _wrap_label()
        lay.addWidget(self.calibration_label)
        rule = _wrap_label(ACCEPTANCE_NOTE)
        rule.setStyleSheet("color: #555555; font-size: 9pt;")
        lay.addWidget(rule)
        for ev in ("result", "warnings"):
            model.subscribe(ev, self._show_result if ev == "result" else self._show_warnings)
        model.subscribe("calibration", self._show_calibration)
        model.subscribe("result", self._show_calibration)
        self._show_result()
        self._show_warnings()
        self._show_calibration()

    def _show_result(self) -> None:
        out = self.model.outcome
        report = None if out is None else out.report
        rows = reading_rows(report)
        self.table.setRowCount(len(rows))
        for i, r in enumerate(rows):
            cells = (r.name, _bare(r.value_mm), _bare(r.value_in), _bare(r.limits),
                     r.verdict_text)
            for j, text in enumerate(cells):
                item = QTableWidgetItem(text)
                if j == 4 and r.verdict != "none":
                    look = VERDICT_LOOK[r.verdict]
                    item.setBackground(QColor(look.colour))
                    item.setForeground(QColor(look.text_colour))
                item.setData(Qt.UserRole, r.key if j == 0 else r.verdict)
                self.table.setItem(i, j, item)
        if out is None:
            self.overall_label.setText("No result yet")
            self.overall_label.setStyleSheet("color: #444444;")
            return
        key, look = overall_look(report)
        if out.mode == "calibrate":
            text = "\u2714 CALIBRATED"
            self.overall_label.setStyleSheet("background: #d0d0d0; color: #000000;")
        elif key == "none":
            text = f"{look.symbol} MEASURED, {look.word}"
            self.overall_label.setStyleSheet("background: #d0d0d0; color: #000000;")
        else:
            text = f"{look.symbol} {look.word}"
            self.overall_label.setStyleSheet(f"background: {look.colour}; color: {look.text_colour};")
        self.overall_label.setText(text)

    def _show_warnings(self) -> None:
        ws = self.model.warnings
        self.warnings_label.setText("\n".join(f"\u26a0 {w}" for w in ws))
        self.warnings_label.setVisible(bool(ws))

    def _show_calibration(self) -> None:
        cal = self.model.calibration
        if cal is None:
            self.calibration_label.setText("Calibration: none loaded.")
            return
        g = cal.gauge or {}
        gauge = g.get("kind")
        size = g.get("size_mm")
        gtxt = "" if not gauge else (f", from a {gauge} of {size:.4f} mm"
                                     if isinstance(size, (int, float)) else f", from a {gauge}")
        w, h = cal.image_size
        ppm = cal.u_mm_per_px / cal.mm_per_px * 1e6 if cal.mm_per_px else math.nan
        self.calibration_label.setText(
            f"Calibration: {cal.mm_per_px:.6f} mm/px \u00b1 {ppm:.0f} ppm, {w} x {h} px"
            f"{gtxt}" + (f", camera '{cal.label}'" if cal.label else "")
            + (", telecentric view assumed" if getattr(cal, "lens", None) is None else ", lens model")
            + (". Check a new scale against a second gauge before trusting it."
               if self.model.outcome is not None and self.model.outcome.mode == "calibrate"
               else ""))


class CameraPanel(QGroupBox):
    """Live camera: start/stop, Reconnect after a loss, the frame rate, and the safety note
    shown whenever the live view starts."""

    def __init__(self, model: ViewerModel, *, on_start: Callable[[], object],
                 on_stop: Callable[[], object], parent=None) -> None:
        super().__init__("Live camera", parent)
        self.model = model
        lay = QVBoxLayout(self)
        row = QHBoxLayout()
        self.start_button = QPushButton("Start camera")
        self.stop_button = QPushButton("Stop")
        self.reconnect_button = QPushButton("Reconnect")
        for b in (self.start_button, self.stop_button, self.reconnect_button):
            row.addWidget(b)
        lay.addLayout(row)
        self.fps_label = QLabel()
        lay.addWidget(self.fps_label)
        self.message_label = _wrap_label()
        lay.addWidget(self.message_label)
        self.safety_label = _wrap_label(SAFETY_NOTE)
        self.safety_label.setFrameShape(QFrame.StyledPanel)
        self.safety_label.setStyleSheet("background: #fff4d6; color: #000000; padding: 4px;")
        # placed by the window above the picture, where the eye is when the live view starts
        self.start_button.clicked.connect(lambda: on_start())
        self.reconnect_button.clicked.connect(lambda: on_start())
        self.stop_button.clicked.connect(lambda: on_stop())
        model.subscribe("camera", self._show_camera)
        model.subscribe("fps", self._show_fps)
        self._show_camera()
        self._show_fps()

    def _show_camera(self) -> None:
        st = self.model.camera_state
        self.start_button.setVisible(st == "off")
        self.stop_button.setVisible(st == "live")
        self.reconnect_button.setVisible(st == "lost")
        self.safety_label.setVisible(st == "live")
        msg = self.model.camera_message
        if st == "lost":
            self.message_label.setText(f"\u26a0 Camera lost: {msg}")
            self.message_label.setStyleSheet("color: #8a4b00; font-weight: bold;")
        else:
            self.message_label.setText(msg)
            self.message_label.setStyleSheet("")
        self.message_label.setVisible(bool(msg) or st == "lost")

    def _show_fps(self) -> None:
        f, mf = self.model.fps, self.model.measured_fps
        if self.model.camera_state != "live":
            self.fps_label.setText("Camera off" if self.model.camera_state == "off" else "No frames")
            return
        txt = f"{f:.1f} frames/s" if math.isfinite(f) else "\u2026 frames/s"
        if math.isfinite(mf):
            txt += f", {mf:.1f} measured/s"
        self.fps_label.setText(txt)
