"""The viewer's main window (PyQt5): picture area, job, readings and camera panels.

The window wires the panels to the model, the job runner and the live camera; it owns no
state of its own beyond the widgets (everything else lives in :class:`ViewerModel`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Callable

from PyQt5.QtCore import Qt
from PyQt5.QtGui import QKeySequence
from PyQt5.QtWidgets import (QAction, QFileDialog, QLabel, QMainWindow, QScrollArea,
                             QSplitter, QVBoxLayout, QWidget)

from ..errors import ProfilecheckError
from .canvas import ImageCanvas
from .frames import FrameSource
from .jobs import Backend, LibraryBackend
from .model import ViewerModel
from .panels import CameraPanel, JobPanel, ReadingsPanel
from .workers import JobRunner, LiveBridge

__all__ = ["MainWindow", "load_picture"]


def load_picture(path: str | Path):
    """(grey in [0, 1] from :func:`profilecheck.imaging.load_image`, the file's pixels as
    stored for showing and saving)."""
    from ..imaging import load_image
    grey = load_image(path)
    raw = None
    try:
        import cv2
        raw = cv2.imread(str(path), cv2.IMREAD_UNCHANGED)
    except Exception:  # the library's own loader has already accepted the file
        raw = None
    if raw is None or raw.shape[:2] != grey.shape or raw.dtype not in ("uint8", "uint16"):
        raw = grey
    elif raw.ndim == 3 and raw.shape[2] == 4:
        raw = raw[:, :, :3]
    return grey, raw


class MainWindow(QMainWindow):
    """Main window.

    Parameters
    ----------
    model : ViewerModel, optional
    backend : Backend, optional
        The library (default) or a fake.
    source_factory : callable() -> FrameSource, optional
        Makes the live camera source; None hides nothing but Start then says no camera.
    """

    def __init__(self, model: ViewerModel | None = None, backend: Backend | None = None,
                 source_factory: Callable[[], FrameSource] | None = None) -> None:
        super().__init__()
        self.model = model or ViewerModel()
        self.backend = backend or LibraryBackend()
        self.setWindowTitle("profilecheck viewer")
        self.runner = JobRunner(self.model, self.backend, self)
        self.live = LiveBridge(self.model, self.backend, source_factory or self._no_camera, self)
        self.canvas = ImageCanvas(self.model)
        self.job_panel = JobPanel(self.model, self.run_job, on_choose_axis=self._ask_axis,
                                  on_save_axis=self._ask_save_axis)
        self.readings_panel = ReadingsPanel(self.model)
        self.camera_panel = CameraPanel(self.model, on_start=self.start_camera,
                                        on_stop=self.stop_camera)
        side = QWidget()
        sl = QVBoxLayout(side)
        sl.addWidget(self.job_panel)
        sl.addWidget(self.readings_panel, 1)
        sl.addWidget(self.camera_panel)
        scroll = QScrollArea()
        scroll.setWidgetResizable(True)
        scroll.setWidget(side)
        scroll.setMinimumWidth(750)
        scroll.setMaximumWidth(820)
        left = QWidget()
        ll = QVBoxLayout(left)
        ll.setContentsMargins(0, 0, 0, 0)
        ll.addWidget(self.camera_panel.safety_label)
        ll.addWidget(self.canvas, 1)
        self.legend_label = QLabel()
        self.legend_label.setStyleSheet("background: #202428; color: #e0e0e0; padding: 3px;")
        ll.addWidget(self.legend_label)
        split = QSplitter(Qt.Horizontal)
        split.addWidget(left)
        split.addWidget(scroll)
        split.setStretchFactor(0, 1)
        split.setStretchFactor(1, 0)
        split.setSizes([820, 760])
        self.setCentralWidget(split)
        self.status_label = QLabel()
        self.statusBar().addWidget(self.status_label, 1)
        self._make_actions()
        self.model.subscribe("status", self._show_status)
        self.model.subscribe("image", self._show_title)
        self.model.subscribe("result", self._enable_save)
        self.model.subscribe("result", self._show_legend)
        self.model.subscribe("calibration", self._enable_save)
        self._show_status()
        self._show_title()
        self._enable_save()
        self._show_legend()
        self.resize(1580, 940)

    @staticmethod
    def _no_camera() -> FrameSource:
        from .frames import CameraLost
        raise CameraLost("no camera chosen: start the viewer with --camera N")

    def _make_actions(self) -> None:
        bar = self.addToolBar("Main")
        bar.setMovable(False)
        menu = self.menuBar().addMenu("&File")
        def act(text, slot, key=None, where=(bar, menu)):
            a = QAction(text, self)
            if key:
                a.setShortcut(QKeySequence(key))
            a.triggered.connect(slot)
            for w in where:
                w.addAction(a)
            return a
        self.open_action = act("Open picture\u2026", self._ask_open, QKeySequence.Open)
        self.cal_action = act("Open calibration\u2026", self._ask_calibration)
        self.save_action = act("Save results\u2026", self._ask_save, QKeySequence.Save)
        self.save_cal_action = act("Save calibration\u2026", self._ask_save_calibration)
        view = self.menuBar().addMenu("&View")
        act("Zoom in", lambda: self.canvas.zoom_by(1), QKeySequence.ZoomIn, (bar, view))
        act("Zoom out", lambda: self.canvas.zoom_by(-1), QKeySequence.ZoomOut, (bar, view))
        act("Fit", self.canvas.fit_to_window, "Ctrl+0", (bar, view))
        act("1:1", lambda: self.canvas.set_zoom(1.0), "Ctrl+1", (bar, view))
        menu.addSeparator()
        act("Quit", self.close, QKeySequence.Quit, (menu,))

    # -- model -> window -------------------------------------------------------------------
    def _show_status(self) -> None:
        self.status_label.setText(self.model.status)

    def _show_title(self) -> None:
        name = self.model.image_name
        self.setWindowTitle(f"profilecheck viewer \u2013 {name}" if name else "profilecheck viewer")

    def _show_legend(self) -> None:
        from .canvas import legend_html
        html = legend_html(self.model.overlays)
        self.legend_label.setText(html)
        self.legend_label.setVisible(bool(html))

    def _enable_save(self) -> None:
        out = self.model.outcome
        self.save_action.setEnabled(out is not None)
        self.save_cal_action.setEnabled(self.model.calibration is not None)

    # -- actions ---------------------------------------------------------------------------
    def open_image(self, path: str | Path) -> bool:
        """Load a picture file into the model; False with a status line on bad data."""
        try:
            grey, raw = load_picture(path)
        except ProfilecheckError as e:
            self.model.set_status(f"Could not open the picture: {' '.join(str(e).split())}")
            return False
        self.stop_camera()
        self.model.set_image(grey, raw=raw, name=str(path))
        self.model.set_status(f"Opened {path} ({grey.shape[1]} x {grey.shape[0]} px).")
        return True

    def open_calibration(self, path: str | Path) -> bool:
        from ..calibration import load_calibration
        try:
            cal = load_calibration(path)
        except ProfilecheckError as e:
            self.model.set_status(f"Could not open the calibration: {' '.join(str(e).split())}")
            return False
        self.model.set_calibration(cal, str(path))
        self.model.set_status(f"Calibration {path} loaded.")
        return True

    def run_job(self) -> bool:
        """Measure the current picture with the current job (off the GUI thread)."""
        return self.runner.run_current()

    def start_camera(self) -> bool:
        return self.live.start()

    def stop_camera(self) -> None:
        self.live.stop()

    def save_results(self, stem: str | Path):
        """Write STEM.png, STEM_raw.png, STEM.json and STEM.html; None with a status line
        when nothing could be saved."""
        from .save import save_outcome
        m = self.model
        out = m.outcome
        raw = m.outcome_frame if m.outcome_frame is not None else m.raw_frame
        if out is None or raw is None:
            m.set_status("Nothing to save yet: run a job first.")
            return None
        from .frames import to_unit_grey
        if raw is m.raw_frame and m.image is not None:
            grey = m.image  # what the job measured (load_image's grey for a file)
        else:
            grey = to_unit_grey(raw) if raw.dtype.kind in "ui" else raw
        from_file = m.image_name and not m.image_name.startswith("live:") and \
            Path(m.image_name).is_file()
        try:
            if out.roi is not None:
                # a tracked live frame: measure it whole, so the files are what the command
                # line writes for this picture
                from .jobs import run_job
                out = run_job(self.backend, out.mode, grey, m.calibration, m.params,
                              image_name=out.report.get("image") or m.image_name,
                              calibration_path=m.calibration_path)
            saved = save_outcome(stem, out, raw, grey,
                                 image_path=m.image_name if from_file else None,
                                 calibration_path=m.calibration_path or None)
        except ProfilecheckError as e:
            m.set_status(f"Not saved: {' '.join(str(e).split())}")
            return None
        m.set_status(f"Saved {saved.annotated.name}, {saved.raw.name}, {saved.json.name}"
                     + (f", {saved.sheet.name}" if saved.sheet else "") + ".")
        return saved

    def save_calibration(self, path: str | Path) -> bool:
        from ..calibration import save_calibration
        cal = self.model.calibration
        if cal is None:
            self.model.set_status("No calibration to save.")
            return False
        try:
            save_calibration(cal, path)
        except ProfilecheckError as e:
            self.model.set_status(f"Calibration not saved: {' '.join(str(e).split())}")
            return False
        self.model.set_calibration(cal, str(path))
        self.model.set_status(f"Calibration saved to {path}.")
        return True

    def save_axis(self, path: str | Path) -> bool:
        """Save the axis found by the last height job (point or bar) for later 'line' jobs."""
        out = self.model.outcome
        axis = None if out is None else getattr(out.result, "axis_line", None)
        if axis is None:
            self.model.set_status("No axis to save: measure the height against a centre point "
                                  "or a bar first.")
            return False
        from ..measure.height import save_axis
        try:
            save_axis(axis, path)
        except ProfilecheckError as e:
            self.model.set_status(f"Axis not saved: {' '.join(str(e).split())}")
            return False
        self.model.set_params(axis_path=str(path))
        self.model.set_status(f"Axis saved to {path}; keep the camera where it is.")
        return True

    def _ask_axis(self) -> None:
        p, _ = QFileDialog.getOpenFileName(self, "Saved axis", "", "Axis (*.json)")
        if p:
            self.model.set_params(axis_path=p)

    def _ask_save_axis(self) -> None:
        p, _ = QFileDialog.getSaveFileName(self, "Save axis", "", "Axis (*.json)")
        if p:
            self.save_axis(p)

    def _ask_open(self) -> None:
        p, _ = QFileDialog.getOpenFileName(self, "Open picture", "",
                                           "Pictures (*.png *.tif *.tiff *.jpg *.jpeg *.bmp)")
        if p:
            self.open_image(p)

    def _ask_calibration(self) -> None:
        p, _ = QFileDialog.getOpenFileName(self, "Open calibration", "", "Calibration (*.json)")
        if p:
            self.open_calibration(p)

    def _ask_save(self) -> None:
        p, _ = QFileDialog.getSaveFileName(self, "Save results (name without extension)", "",
                                           "All files (*)")
        if p:
            self.save_results(p)

    def _ask_save_calibration(self) -> None:
        p, _ = QFileDialog.getSaveFileName(self, "Save calibration", "", "Calibration (*.json)")
        if p:
            self.save_calibration(p)

    def closeEvent(self, event) -> None:  # noqa: N802 (Qt name)
        self.live.stop()
        self.runner.wait(10000)
        super().closeEvent(event)
