"""Start the viewer (PyQt5): ``profilecheck view`` lands here.

:func:`run_viewer` builds the application and the window, loads what the command line
named, optionally runs one job and saves a screenshot (used by the real-display test), and
runs the event loop.
"""

from __future__ import annotations

import sys
from dataclasses import dataclass, field
from typing import Any

from .model import MODES

__all__ = ["ViewerOptions", "run_viewer"]


@dataclass
class ViewerOptions:
    """What ``profilecheck view`` was asked for (see profilecheck.commands.view)."""
    image: str | None = None
    camera: int | None = None
    calibration: str | None = None
    mode: str | None = None
    params: dict[str, Any] = field(default_factory=dict)
    run_mode: str | None = None
    screenshot: str | None = None
    timeout_s: float = 120.0


def run_viewer(opts: ViewerOptions) -> int:
    """Open the window and run until it is closed; returns the exit status.

    With ``run_mode`` the job runs once the window is up; with ``screenshot`` as well, the
    window is grabbed to that PNG after the job and the viewer quits (exit 0 when saved, 2
    when the job or the picture failed, the message on stderr).
    """
    from PyQt5.QtCore import QTimer
    from PyQt5.QtWidgets import QApplication

    from .frames import CameraSource
    from .window import MainWindow

    for m in (opts.mode, opts.run_mode):
        if m is not None and m not in MODES:
            raise ValueError(f"mode must be one of {MODES}, got {m!r}")
    app = QApplication.instance() or QApplication(sys.argv[:1])
    app.setApplicationName("profilecheck viewer")
    factory = None
    if opts.camera is not None:
        cam = opts.camera

        def factory():
            cal = win.model.calibration
            return CameraSource(cam, size=None if cal is None else tuple(cal.image_size))
    win = MainWindow(source_factory=factory)
    state = {"code": 0}
    if opts.calibration and not win.open_calibration(opts.calibration):
        state["code"] = 2
    if opts.image and not win.open_image(opts.image):
        state["code"] = 2
    mode = opts.run_mode or opts.mode
    if mode:
        win.model.set_mode(mode)
    if opts.params:
        win.model.set_params(**opts.params)
    win.show()

    def finish() -> None:
        if opts.screenshot:
            app.processEvents()
            win.grab().save(str(opts.screenshot), "PNG")
            if win.model.status:
                print(f"profilecheck view: {win.model.status}", file=sys.stderr)
            win.close()
            app.quit()

    def failed(_msg: str) -> None:
        state["code"] = 2
        QTimer.singleShot(200, finish)

    win.runner.finished.connect(lambda _o: QTimer.singleShot(200, finish))
    win.runner.failed.connect(failed)
    if opts.run_mode:
        def go() -> None:
            if state["code"] or not win.run_job():
                state["code"] = 2
                finish()
        QTimer.singleShot(300, go)
    elif opts.screenshot:
        QTimer.singleShot(500, finish)
    if opts.screenshot:
        def too_long() -> None:
            state["code"] = 2
            win.model.set_status("the job took too long; screenshot taken as it stands")
            finish()
        QTimer.singleShot(int(opts.timeout_s * 1000), too_long)
    if opts.camera is not None and not opts.screenshot:
        QTimer.singleShot(0, win.start_camera)
    app.exec_()
    return state["code"]
