"""Running jobs and the live camera off the GUI thread (PyQt5).

:class:`JobRunner` runs one library call at a time on a ``QThreadPool`` worker and puts the
outcome (or the error, in words) into the model on the GUI thread. :class:`LiveBridge` wraps
the Qt-free :class:`~profilecheck.viewer.live.LivePipeline` and forwards its thread
callbacks to the GUI thread through queued signals, dropping frames the screen has not yet
caught up with.
"""

from __future__ import annotations

import threading
from typing import Any, Callable

from PyQt5.QtCore import QObject, QRunnable, QThreadPool, QTimer, pyqtSignal

from ..errors import ProfilecheckError
from .frames import FrameSource, to_unit_grey
from .jobs import Backend, run_job
from .live import LivePipeline
from .tracking import REFRESH_EVERY, track_roi
from .model import ViewerModel

__all__ = ["JobRunner", "LiveBridge"]


class _Signals(QObject):
    done = pyqtSignal(object)
    failed = pyqtSignal(str)


class _Task(QRunnable):
    def __init__(self, fn: Callable[[], Any], signals: _Signals) -> None:
        super().__init__()
        self.setAutoDelete(True)
        self._fn = fn
        self.signals = signals

    def run(self) -> None:
        try:
            out = self._fn()
        except ProfilecheckError as e:
            self.signals.failed.emit(" ".join(str(e).split()))
        except (ValueError, TypeError) as e:
            self.signals.failed.emit(f"cannot run this job: {e}")
        except Exception as e:  # never leave the busy indicator spinning
            self.signals.failed.emit(f"the job stopped on an internal fault "
                                     f"({e.__class__.__name__}: {e})")
        else:
            self.signals.done.emit(out)


class JobRunner(QObject):
    """Runs the model's current job on a worker thread.

    Signals ``finished(outcome)`` and ``failed(message)`` fire on the GUI thread after the
    model has been updated.
    """

    finished = pyqtSignal(object)
    failed = pyqtSignal(str)

    def __init__(self, model: ViewerModel, backend: Backend, parent=None) -> None:
        super().__init__(parent)
        self.model = model
        self.backend = backend
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self._live: set[_Signals] = set()

    def run_current(self) -> bool:
        """Start the current job on the current picture; False (and a status line) when
        there is nothing to measure or a job is already running."""
        m = self.model
        if m.busy:
            return False
        if m.image is None:
            m.set_status("No picture: open an image or start the camera first.")
            return False
        mode, image, cal, params = m.mode, m.image, m.calibration, m.params
        name, raw, cal_path = m.image_name, m.raw_frame, m.calibration_path
        sig = _Signals()
        self._live.add(sig)
        sig.done.connect(lambda out, s=sig, r=raw, n=name: self._done(s, out, r, n))
        sig.failed.connect(lambda msg, s=sig: self._failed(s, msg))
        m.set_busy(True)
        m.set_status("Measuring\u2026")
        self.pool.start(_Task(lambda: run_job(self.backend, mode, image, cal, params,
                                              image_name=name, calibration_path=cal_path), sig))
        return True

    def _done(self, sig: _Signals, outcome, raw, name: str) -> None:
        self._live.discard(sig)
        self.model.set_busy(False)
        if self.model.image_name != name:  # another picture was opened meanwhile
            self.model.set_status("The picture changed while measuring: measure again.")
            self.failed.emit("picture changed")
            return
        self.model.set_outcome(outcome, raw=raw)
        secs = outcome.elapsed_s
        self.model.set_status(f"Done in {secs:.2f} s." if secs == secs else "Done.")
        self.finished.emit(outcome)

    def _failed(self, sig: _Signals, message: str) -> None:
        self._live.discard(sig)
        self.model.set_outcome(None)
        self.model.set_busy(False)
        self.model.set_status(f"Could not measure: {message}")
        self.failed.emit(message)

    def wait(self, msecs: int = 30000) -> bool:
        return self.pool.waitForDone(msecs)


class LiveBridge(QObject):
    """The live camera inside the Qt event loop.

    ``source_factory()`` makes a fresh :class:`FrameSource` for each start (so Reconnect
    reopens the device). While the model's job is 'height' and a calibration is loaded,
    every frame the measure thread can keep up with is measured.

    Frames after the first are searched only around the last tool tip and axis point
    (:mod:`profilecheck.viewer.tracking`; ``track = False`` searches every frame whole).

    Known gap: the live height target is 15 measured frames/s at 1280 x 720. The viewer's
    own path keeps up with a 30 frames/s source (``benchmarks/live_rate.py`` with an instant
    stand-in), but the library's ``measure_height`` takes about 0.28 s per whole 1280 x 720
    frame and 0.09 s in the tracked box when timed alone on the shared 2-core machine (most
    of it in the edge profile fits), and more inside the running viewer, so the live
    readings update about 3 to 10 times a second there. A second measure thread
    (``workers = 2``) does not help (the work holds the interpreter lock).
    """

    _frame = pyqtSignal(object)
    _result = pyqtSignal(object, object)
    _error = pyqtSignal(str, object)
    _lost = pyqtSignal(str)
    #: Emitted on the GUI thread after each measured live frame (for tests and benchmarks).
    measured = pyqtSignal(object)
    lost = pyqtSignal(str)

    def __init__(self, model: ViewerModel, backend: Backend,
                 source_factory: Callable[[], FrameSource], parent=None) -> None:
        super().__init__(parent)
        self.model = model
        self.backend = backend
        self.source_factory = source_factory
        self.pipeline: LivePipeline | None = None
        self._pending = threading.Event()  # a frame is queued for the screen
        self._frame.connect(self._show_frame)
        self._result.connect(self._show_result)
        self._error.connect(self._show_error)
        self._lost.connect(self._on_lost)
        self._timer = QTimer(self)
        self._timer.setInterval(500)
        self._timer.timeout.connect(self._update_rate)
        self.frames_shown = 0
        #: Measure threads for the live height job (LivePipeline ``workers``).
        self.workers = 1
        #: Search only around the last tip and axis point (profilecheck.viewer.tracking).
        self.track = True
        self._result_pending = threading.Event()  # a result is queued for the screen
        for ev in ("mode", "calibration", "params"):
            model.subscribe(ev, self._update_measure)

    @property
    def running(self) -> bool:
        return self.pipeline is not None and self.pipeline.running

    def start(self) -> bool:
        """Open the camera and start the live view; False with a message if it fails."""
        self.stop()
        try:
            source = self.source_factory()
            self.pipeline = LivePipeline(source, on_frame=self._from_capture,
                                         on_lost=self._lost.emit, measure=self._measure_fn(),
                                         on_result=self._from_measure, on_error=self._error.emit,
                                         workers=self.workers)
            notes = self.pipeline.start()
        except Exception as e:  # CameraLost, or a driver fault: a message, never a crash
            self.pipeline = None
            msg = " ".join(str(e).split()) if isinstance(e, ProfilecheckError) else \
                f"the camera could not be started ({e.__class__.__name__}: {e})"
            self.model.set_camera("lost", message=msg)
            self.lost.emit(msg)
            return False
        self.model.set_camera("live", label=getattr(source, "label", ""),
                              message=" ".join(notes))
        self._timer.start()
        return True

    def stop(self) -> None:
        self._timer.stop()
        if self.pipeline is not None:
            self.pipeline.stop()
            self.pipeline = None
            if self.model.camera_state == "live":
                self.model.set_camera("off")

    def _measure_fn(self):
        m = self.model
        if m.mode != "height" or m.calibration is None:
            return None
        cal, params, backend, track = m.calibration, m.params, self.backend, self.track
        cal_path = m.calibration_path
        state = {"roi": None, "n": 0}
        lock = threading.Lock()

        def measure(frame):
            with lock:
                roi = state["roi"] if state["n"] % REFRESH_EVERY else None
                state["n"] += 1
            try:
                out = run_job(backend, "height", to_unit_grey(frame), cal, params,
                              image_name=f"live frame from {m.camera_label or 'camera'}",
                              calibration_path=cal_path, roi=roi)
            except ProfilecheckError:
                with lock:
                    state["roi"], state["n"] = None, 0  # look at the whole frame next time
                raise
            if track:
                nxt = track_roi(getattr(out.result, "details", None),
                                (frame.shape[1], frame.shape[0]), params.reference)
                with lock:
                    state["roi"] = nxt
            return out
        return measure

    def _update_measure(self) -> None:
        if self.pipeline is not None:
            self.pipeline.set_measure(self._measure_fn())

    # -- worker threads -> GUI thread --------------------------------------------------------
    def _from_capture(self, frame) -> None:
        if not self._pending.is_set():  # drop frames the screen has not caught up with
            self._pending.set()
            self._frame.emit(frame)

    def _from_measure(self, outcome, frame) -> None:
        if not self._result_pending.is_set():  # the screen shows the newest result it can
            self._result_pending.set()
            self._result.emit(outcome, frame)

    def _show_frame(self, frame) -> None:
        self._pending.clear()
        self.frames_shown += 1
        self.model.set_image(raw=frame, name=f"live: {self.model.camera_label}",
                             keep_result=True)

    def _show_result(self, outcome, frame) -> None:
        self._result_pending.clear()
        if self.model.mode != "height" or self.pipeline is None:  # stopped or lost meanwhile
            return
        if self.model.raw_frame is None:  # the screen dropped every frame so far
            self.model.set_image(raw=frame, name=f"live: {self.model.camera_label}",
                                 keep_result=True)
        self.model.set_outcome(outcome, raw=frame)
        where = " (searched around the last tip)" if outcome.roi is not None else ""
        self.model.set_status(f"Live height: measured in {outcome.elapsed_s * 1000:.0f} ms"
                              f"{where}.")
        self.measured.emit(outcome)

    def _show_error(self, message: str, frame) -> None:
        if self.model.outcome is not None:
            self.model.set_outcome(None)
        self.model.set_status(f"Live height: {message}")

    def _on_lost(self, message: str) -> None:
        self._timer.stop()
        if self.pipeline is not None:
            self.pipeline.stop()
            self.pipeline = None
        self.model.set_camera("lost", message=f"{message}. Check the cable, then press "
                                              f"Reconnect.")
        if self.model.outcome is not None:
            self.model.set_status("Camera lost: the readings shown are from the last frame "
                                  "measured, not live.")
        self.lost.emit(message)

    def _update_rate(self) -> None:
        if self.pipeline is None:
            return
        self.model.set_fps(self.pipeline.frames.rate(), self.pipeline.measured.rate())
