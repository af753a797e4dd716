"""The live-camera pipeline: capture and measurement on worker threads (no Qt).

Two daemon threads: the *capture* thread reads the :class:`~profilecheck.viewer.frames.
FrameSource` as fast as it delivers and hands each frame to ``on_frame``; the *measure*
thread takes the newest frame not yet measured (older ones are dropped, so the readings
never lag behind the picture) and calls ``measure(frame)``. Callbacks run on the worker
threads: the Qt side forwards them to the GUI thread through queued signals, coalescing
frames so a slow screen never backs the camera up.
"""

from __future__ import annotations

import collections
import threading
import time
from typing import Any, Callable

import numpy as np

from ..errors import ProfilecheckError
from .frames import CameraLost, FrameSource

__all__ = ["LivePipeline", "RateMeter"]


class RateMeter:
    """Events per second over a sliding window of the last ``window_s`` seconds."""

    def __init__(self, window_s: float = 2.0) -> None:
        if not window_s > 0:
            raise ValueError(f"window_s must be > 0, got {window_s!r}")
        self.window_s = float(window_s)
        self._t: collections.deque[float] = collections.deque()
        self.total = 0
        self._lock = threading.Lock()

    def tick(self, t: float | None = None) -> None:
        t = time.perf_counter() if t is None else t
        with self._lock:
            self._t.append(t)
            self.total += 1
            while self._t and t - self._t[0] > self.window_s:
                self._t.popleft()

    def rate(self, now: float | None = None) -> float:
        """Events per second in the window (NaN with fewer than two events)."""
        now = time.perf_counter() if now is None else now
        with self._lock:
            while self._t and now - self._t[0] > self.window_s:
                self._t.popleft()
            if len(self._t) < 2:
                return float("nan")
            span = self._t[-1] - self._t[0]
            return (len(self._t) - 1) / span if span > 0 else float("nan")


class LivePipeline:
    """Capture frames and (optionally) measure the newest one, off the caller's thread.

    Parameters
    ----------
    source : FrameSource
        The camera or a fake.
    on_frame : callable(frame)
        Called on the capture thread with each raw frame.
    on_lost : callable(message)
        Called once when the source ends or fails; the pipeline then stops by itself.
    measure : callable(frame) -> object, optional
        Run on the measure thread on the newest frame; its return goes to ``on_result``.
    on_result : callable(result, frame), optional
    on_error : callable(message, frame), optional
        Called when ``measure`` raises a :class:`ProfilecheckError` (e.g. tool out of view);
        the pipeline keeps going.
    workers : int
        Measure threads (each takes the newest frame; a result older than one already
        delivered is dropped, so readings never go back in time). numpy and OpenCV release
        the interpreter lock in their heavy loops, so a second worker can use a second core.
    """

    def __init__(self, source: FrameSource, *, on_frame: Callable[[np.ndarray], None],
                 on_lost: Callable[[str], None], measure: Callable[[np.ndarray], Any] | None = None,
                 on_result: Callable[[Any, np.ndarray], None] | None = None,
                 on_error: Callable[[str, np.ndarray], None] | None = None,
                 workers: int = 1) -> None:
        if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
            raise ValueError(f"workers must be an integer >= 1, got {workers!r}")
        self.workers = workers
        self.source = source
        self._on_frame = on_frame
        self._on_lost = on_lost
        self._measure = measure
        self._on_result = on_result or (lambda r, f: None)
        self._on_error = on_error or (lambda m, f: None)
        self._stop = threading.Event()
        self._cond = threading.Condition()
        self._pending: np.ndarray | None = None
        self._seq = 0            # number of the pending frame
        self._delivered = 0      # number of the newest frame whose result went out
        self._threads: list[threading.Thread] = []
        self.frames = RateMeter()
        self.measured = RateMeter()
        self.notes: tuple[str, ...] = ()

    @property
    def running(self) -> bool:
        return any(t.is_alive() for t in self._threads)

    def set_measure(self, measure: Callable[[np.ndarray], Any] | None) -> None:
        """Switch live measurement on (a callable) or off (None) while running."""
        with self._cond:
            self._measure = measure
            self._cond.notify_all()
        if measure is not None and self.running and not any(
                t.name == "profilecheck-measure" and t.is_alive() for t in self._threads):
            self._start_measure_threads()

    def start(self) -> tuple[str, ...]:
        """Open the source and start the threads; returns the source's notes.

        Raises :class:`CameraLost` when the device cannot be opened."""
        if self.running:
            raise RuntimeError("the live pipeline is already running")
        self._stop.clear()
        self.notes = tuple(self.source.open() or ())
        self._threads = []
        t = threading.Thread(target=self._capture_loop, name="profilecheck-capture", daemon=True)
        self._threads.append(t)
        t.start()
        if self._measure is not None:
            self._start_measure_threads()
        return self.notes

    def _start_measure_threads(self) -> None:
        self._threads = [t for t in self._threads if t.is_alive()]
        for _ in range(self.workers):
            t = threading.Thread(target=self._measure_loop, name="profilecheck-measure",
                                 daemon=True)
            self._threads.append(t)
            t.start()

    def stop(self, timeout_s: float = 5.0) -> None:
        """Stop both threads and release the source."""
        self._stop.set()
        with self._cond:
            self._cond.notify_all()
        me = threading.current_thread()
        for t in self._threads:
            if t is not me:
                t.join(timeout_s)
        try:
            self.source.close()
        except Exception:  # a source that fails to close must not keep the viewer open
            pass

    def _capture_loop(self) -> None:
        while not self._stop.is_set():
            try:
                frame = self.source.read()
            except CameraLost as e:
                self._lost(str(e))
                return
            except Exception as e:  # a driver error is the same as a lost camera to the user
                self._lost(f"the camera failed ({e.__class__.__name__}: {e})")
                return
            if self._stop.is_set():
                return
            self.frames.tick()
            self._on_frame(frame)  # first to the screen, so a result never precedes its frame
            with self._cond:
                self._pending = frame
                self._seq += 1
                self._cond.notify()

    def _lost(self, message: str) -> None:
        self._stop.set()
        with self._cond:
            self._cond.notify_all()
        try:
            self.source.close()
        except Exception:
            pass
        self._on_lost(message)

    def _measure_loop(self) -> None:
        while True:
            with self._cond:
                while self._pending is None and not self._stop.is_set() and self._measure is not None:
                    self._cond.wait(0.5)
                if self._stop.is_set() or self._measure is None:
                    return
                frame, self._pending, seq = self._pending, None, self._seq
                measure = self._measure
            try:
                result = measure(frame)
            except ProfilecheckError as e:
                if self._newest(seq):
                    self._on_error(" ".join(str(e).split()), frame)
                continue
            except Exception as e:  # keep the live view alive; report the fault in words
                if self._newest(seq):
                    self._on_error(f"measurement failed ({e.__class__.__name__}: {e})", frame)
                continue
            self.measured.tick()
            if self._newest(seq):
                self._on_result(result, frame)

    def _newest(self, seq: int) -> bool:
        """True (and recorded) when frame ``seq`` is newer than the last one delivered."""
        with self._cond:
            if seq <= self._delivered:
                return False
            self._delivered = seq
            return True
