"""Frame sources for the live view (no Qt).

A :class:`FrameSource` hands out frames one at a time; the live pipeline
(:mod:`profilecheck.viewer.live`) calls it from a worker thread. :class:`CameraSource`
reads an OpenCV ``cv2.VideoCapture`` device and asks for fixed exposure and fixed focus
(a measuring camera must not re-expose or re-focus between the calibration and the job);
:class:`SequenceSource` replays given frames (synthetic renders) and then ends abruptly,
which is how tests and the rate benchmark stand in for a camera being unplugged.
"""

from __future__ import annotations

import threading
import time
from typing import Iterable, Protocol, Sequence

import numpy as np

from ..errors import ProfilecheckError

__all__ = ["FrameSource", "CameraSource", "SequenceSource", "CameraLost", "to_unit_grey"]


class CameraLost(ProfilecheckError):
    """The camera stopped delivering frames (unplugged, switched off, or in use elsewhere)."""


class FrameSource(Protocol):
    """What the live view needs from a camera."""

    #: Free name of the camera, compared with the calibration's ``label``.
    label: str

    def open(self) -> tuple[str, ...]:
        """Start the device; return plain-language notes (e.g. settings it refused)."""

    def read(self) -> np.ndarray:
        """Block until the next frame and return it (uint8/uint16, grey or BGR).

        Raises :class:`CameraLost` when no more frames will come."""

    def close(self) -> None:
        """Release the device (safe to call twice)."""


def to_unit_grey(frame: np.ndarray) -> np.ndarray:
    """Frame -> float64 grey in [0, 1] (docs/conventions.md: 8-bit / 255, 16-bit / 65535,
    colour with Rec. 601 luma weights 0.299 R + 0.587 G + 0.114 B; camera frames are BGR).
    """
    if not isinstance(frame, np.ndarray):
        raise TypeError("frame must be a numpy array")
    if frame.ndim == 3:
        if frame.shape[2] == 4:
            frame = frame[:, :, :3]
        if frame.shape[2] != 3:
            raise ValueError(f"frame must be grey or 3-channel, got shape {frame.shape}")
        # ITU-R BT.601 luma weights, applied to B, G, R channel order.
        grey = frame[:, :, 0] * 0.114 + frame[:, :, 1] * 0.587 + frame[:, :, 2] * 0.299
    elif frame.ndim == 2:
        grey = frame.astype(np.float64)
    else:
        raise ValueError(f"frame must be 2-D or 3-D, got shape {frame.shape}")
    if frame.dtype == np.uint8:
        return np.asarray(grey, dtype=np.float64) / 255.0
    if frame.dtype == np.uint16:
        return np.asarray(grey, dtype=np.float64) / 65535.0
    g = np.asarray(grey, dtype=np.float64)
    return np.clip(g, 0.0, 1.0)


class SequenceSource:
    """Replays frames, then raises :class:`CameraLost` (an abrupt end) or loops.

    Parameters
    ----------
    frames : sequence of ndarray
        The frames to hand out, in order.
    label : str
        Camera label reported to the viewer.
    fps : float or None
        Pace the frames at this rate (None = as fast as they are asked for).
    loop : bool
        Start again after the last frame instead of ending.
    count : int or None
        With ``loop``, end after this many frames in all.
    """

    def __init__(self, frames: Sequence[np.ndarray] | Iterable[np.ndarray], *, label: str = "synthetic",
                 fps: float | None = None, loop: bool = False, count: int | None = None) -> None:
        self._frames = list(frames)
        if not self._frames:
            raise ValueError("frames must hold at least one frame")
        if fps is not None and not fps > 0:
            raise ValueError(f"fps must be > 0, got {fps!r}")
        self.label = str(label)
        self._fps = fps
        self._loop = bool(loop)
        self._count = count
        self._i = 0
        self._next_t = 0.0
        self._open = False
        self.opened = 0
        self._lock = threading.Lock()

    def open(self) -> tuple[str, ...]:
        with self._lock:
            self._open = True
            self.opened += 1
            self._next_t = time.perf_counter()
        return ()

    def read(self) -> np.ndarray:
        with self._lock:
            if not self._open:
                raise CameraLost("the camera is not open")
            n = len(self._frames)
            if (not self._loop and self._i >= n) or (self._count is not None and self._i >= self._count):
                self._open = False
                raise CameraLost(f"camera '{self.label}' stopped sending pictures")
            frame = self._frames[self._i % n]
            self._i += 1
            wait = 0.0
            if self._fps is not None:
                self._next_t += 1.0 / self._fps
                wait = self._next_t - time.perf_counter()
        if wait > 0:
            time.sleep(wait)
        return frame

    def rewind(self) -> None:
        """Start the replay again (a 'reconnected' camera)."""
        with self._lock:
            self._i = 0

    def close(self) -> None:
        with self._lock:
            self._open = False


class CameraSource:
    """An OpenCV capture device with fixed exposure and focus where the camera allows it.

    Parameters
    ----------
    index : int
        Device number (0 = first camera).
    label : str
        Camera label; default 'camera N'.
    size : tuple of int or None
        Requested (width, height) in px, e.g. the calibration's ``image_size``.
    max_failures : int
        Consecutive failed reads before the camera counts as lost.
    """

    def __init__(self, index: int, *, label: str = "", size: tuple[int, int] | None = None,
                 max_failures: int = 10) -> None:
        if isinstance(index, bool) or not isinstance(index, int) or index < 0:
            raise ValueError(f"index must be a camera number >= 0, got {index!r}")
        self.index = index
        self.label = label or f"camera {index}"
        self._size = size
        self._max_failures = int(max_failures)
        self._cap = None

    def open(self) -> tuple[str, ...]:
        import cv2
        self.close()
        cap = cv2.VideoCapture(self.index)
        if not cap.isOpened():
            cap.release()
            raise CameraLost(f"no camera answers as number {self.index}: check the cable and "
                             f"that no other program is using it")
        notes: list[str] = []
        if self._size is not None:
            cap.set(cv2.CAP_PROP_FRAME_WIDTH, float(self._size[0]))
            cap.set(cv2.CAP_PROP_FRAME_HEIGHT, float(self._size[1]))
        # Manual exposure: V4L2 takes 1 (manual) / 3 (aperture priority); the DirectShow and
        # older V4L back ends take 0.25 (manual) / 0.75 (auto). Try both, keep what sticks.
        fixed = False
        for v in (1.0, 0.25):
            if cap.set(cv2.CAP_PROP_AUTO_EXPOSURE, v) and cap.get(cv2.CAP_PROP_AUTO_EXPOSURE) == v:
                fixed = True
                break
        if not fixed:
            notes.append("This camera would not fix its exposure: keep the lighting steady, "
                         "since automatic exposure shifts edges between pictures.")
        if not (cap.set(cv2.CAP_PROP_AUTOFOCUS, 0.0) and cap.get(cv2.CAP_PROP_AUTOFOCUS) == 0.0):
            notes.append("This camera would not switch off autofocus: a focus change after "
                         "calibration changes the scale; check against the gauge.")
        self._cap = cap
        return tuple(notes)

    def read(self) -> np.ndarray:
        if self._cap is None:
            raise CameraLost(f"{self.label} is not open")
        for _ in range(max(1, self._max_failures)):
            ok, frame = self._cap.read()
            if ok and frame is not None and frame.size:
                return frame
            time.sleep(0.02)
        self.close()
        raise CameraLost(f"{self.label} stopped sending pictures (unplugged or switched off?)")

    def close(self) -> None:
        if self._cap is not None:
            try:
                self._cap.release()
            finally:
                self._cap = None
