"""The viewer's state, free of Qt: what the widgets draw and what they change.

:class:`ViewerModel` holds the current picture, the calibration, the job (mode) and its
inputs, the last result, the live-camera state and the warnings. Widgets take the model in
their constructor, subscribe to its events and only draw; user actions call the model's
setters. The model never measures anything: jobs go through :mod:`profilecheck.viewer.jobs`,
which calls the library.

Events (``subscribe(name, callback)``; each callback is called with no argument, on the
thread that changed the model; the Qt side only changes the model on the GUI thread):

``image``, ``calibration``, ``mode``, ``params``, ``result``, ``busy``, ``status``,
``camera``, ``fps``, ``warnings``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import Any, Callable

import numpy as np

from .frames import to_unit_grey

__all__ = ["ViewerModel", "MODES", "MODE_TITLES", "GAUGE_KINDS", "REFERENCES", "JobParams",
           "CAMERA_STATES", "EVENTS"]

#: The four jobs, in the order the mode selector lists them.
MODES = ("calibrate", "thread", "tool", "height")
MODE_TITLES = {
    "calibrate": "Calibrate from a gauge",
    "thread": "Inspect a thread",
    "tool": "Check a threading tool",
    "height": "Check centre height",
}
#: Gauges a calibration can be made from (profilecheck.calibration.calibrate_from_*).
GAUGE_KINDS = ("pin", "block", "lines")
#: Height references (profilecheck.measure.measure_height ``reference=``).
REFERENCES = ("point", "bar", "line")
#: Live-camera states: no camera, frames arriving, camera lost (Reconnect offered).
CAMERA_STATES = ("off", "live", "lost")
EVENTS = ("image", "calibration", "mode", "params", "result", "busy", "status", "camera",
          "fps", "warnings")


@dataclass(frozen=True)
class JobParams:
    """What each job asks for; only the fields of the current mode are used.

    Parameters
    ----------
    gauge_kind : str
        'pin' (diameter), 'block' (length) or 'lines' (line spacing) for a calibration.
    gauge_size_mm : float or None
        The gauge's certified size in mm; None until entered.
    camera_label : str
        Free label stored in a new calibration (checked against live cameras).
    designation : str
        Thread designation for the thread and tool jobs ('' = measure without limits).
    internal : bool
        Tool job: the tool cuts an internal thread.
    reference : str
        Height job: 'point', 'bar' or 'line'.
    axis_path : str
        Height job with reference 'line': the axis file saved earlier from a point or bar
        picture taken with the camera fixed.
    """

    gauge_kind: str = "pin"
    gauge_size_mm: float | None = None
    camera_label: str = ""
    designation: str = ""
    internal: bool = False
    reference: str = "point"
    axis_path: str = ""

    def __post_init__(self) -> None:
        if self.gauge_kind not in GAUGE_KINDS:
            raise ValueError(f"gauge_kind must be one of {GAUGE_KINDS}, got {self.gauge_kind!r}")
        if self.reference not in REFERENCES:
            raise ValueError(f"reference must be one of {REFERENCES}, got {self.reference!r}")
        if self.gauge_size_mm is not None:
            s = self.gauge_size_mm
            if isinstance(s, bool) or not isinstance(s, (int, float)) or not math.isfinite(s) or s <= 0:
                raise ValueError(f"gauge_size_mm must be a positive number of mm, got {s!r}")


class ViewerModel:
    """Observable state of the viewer (no Qt; plain callbacks).

    Attributes are read through properties and changed through ``set_*`` methods, each of
    which emits its event only when the value actually changes.
    """

    def __init__(self) -> None:
        self._subs: dict[str, list[Callable[[], None]]] = {e: [] for e in EVENTS}
        self._image: np.ndarray | None = None
        self._raw: np.ndarray | None = None
        self._image_name = ""
        self._cal = None
        self._cal_path = ""
        self._mode = "thread"
        self._params = JobParams()
        self._outcome = None
        self._outcome_raw = None
        self._busy = False
        self._status = ""
        self._camera = "off"
        self._camera_label = ""
        self._camera_message = ""
        self._fps = float("nan")
        self._measured_fps = float("nan")

    # -- observers -----------------------------------------------------------------------
    def subscribe(self, event: str, callback: Callable[[], None]) -> Callable[[], None]:
        """Call ``callback()`` after each change of ``event``; returns an unsubscribe function."""
        if event not in self._subs:
            raise ValueError(f"event must be one of {EVENTS}, got {event!r}")
        if not callable(callback):
            raise TypeError("callback must be callable")
        self._subs[event].append(callback)
        return lambda: self._subs[event].remove(callback) if callback in self._subs[event] else None

    def _emit(self, *events: str) -> None:
        for e in events:
            for cb in list(self._subs[e]):
                cb()

    # -- picture ---------------------------------------------------------------------------
    @property
    def image(self) -> np.ndarray | None:
        """Grey picture, float in [0, 1], ``img[row, col]`` (docs/conventions.md); made from
        the raw frame on first use when only a raw frame was given."""
        if self._image is None and self._raw is not None:
            self._image = to_unit_grey(self._raw)
        return self._image

    @property
    def raw_frame(self) -> np.ndarray | None:
        """The picture as it came from the file or camera (saved beside the annotated one)."""
        return self._raw

    @property
    def image_size(self) -> tuple[int, int] | None:
        """(width, height) px of the picture, or None."""
        a = self._raw if self._raw is not None else self._image
        return None if a is None else (int(a.shape[1]), int(a.shape[0]))

    @property
    def image_name(self) -> str:
        """File path or camera name of the picture ('' when none)."""
        return self._image_name

    def set_image(self, image: np.ndarray | None = None, *, raw: np.ndarray | None = None,
                  name: str = "", keep_result: bool = False) -> None:
        """Show a new picture.

        ``image`` is grey in [0, 1]; ``raw`` the frame as read (uint8/uint16, grey or BGR).
        Give either or both. The last result is cleared unless ``keep_result`` (live view,
        where the next measurement replaces it)."""
        for nm, a in (("image", image), ("raw", raw)):
            if a is not None and not isinstance(a, np.ndarray):
                raise TypeError(f"{nm} must be a numpy array")
        if image is not None and image.ndim != 2:
            raise ValueError(f"image must be a 2-D grey array, got shape {image.shape}")
        if raw is not None and raw.ndim not in (2, 3):
            raise ValueError(f"raw must be a 2-D or 3-D array, got shape {raw.shape}")
        old_size = self.image_size
        self._image = image
        self._raw = image if raw is None else raw
        self._image_name = str(name)
        events = ["image"]
        if not keep_result and self._outcome is not None:
            self._outcome = None
            self._outcome_raw = None
            events.append("result")
        if not keep_result or self.image_size != old_size:
            events.append("warnings")
        self._emit(*events)

    # -- calibration -----------------------------------------------------------------------
    @property
    def calibration(self):
        """The :class:`profilecheck.calibration.Calibration` in use, or None."""
        return self._cal

    @property
    def calibration_path(self) -> str:
        return self._cal_path

    def set_calibration(self, cal, path: str = "") -> None:
        if cal is not None and not (hasattr(cal, "mm_per_px") and hasattr(cal, "image_size")):
            raise TypeError("cal must be a Calibration (with mm_per_px and image_size)")
        self._cal = cal
        self._cal_path = str(path)
        self._emit("calibration", "warnings")

    # -- job -------------------------------------------------------------------------------
    @property
    def mode(self) -> str:
        return self._mode

    def set_mode(self, mode: str) -> None:
        if mode not in MODES:
            raise ValueError(f"mode must be one of {MODES}, got {mode!r}")
        if mode != self._mode:
            self._mode = mode
            self._outcome = None
            self._outcome_raw = None
            self._emit("mode", "result", "warnings")

    @property
    def params(self) -> JobParams:
        return self._params

    def set_params(self, **changes: Any) -> None:
        """Change job inputs, e.g. ``set_params(designation='M6x1-6g')``."""
        new = replace(self._params, **changes)
        if new != self._params:
            self._params = new
            self._emit("params")

    # -- result ----------------------------------------------------------------------------
    @property
    def outcome(self):
        """Last :class:`profilecheck.viewer.jobs.JobOutcome` or None."""
        return self._outcome

    @property
    def overlays(self) -> tuple:
        return () if self._outcome is None else tuple(self._outcome.overlays)

    @property
    def outcome_frame(self) -> np.ndarray | None:
        """The raw frame the last result was measured on (the live view moves on)."""
        return self._outcome_raw

    def set_outcome(self, outcome, *, raw: np.ndarray | None = None) -> None:
        """Store a job's outcome (None clears); ``raw`` is the frame it was measured on
        (default: the current picture)."""
        self._outcome = outcome
        self._outcome_raw = None if outcome is None else (raw if raw is not None else self._raw)
        if outcome is not None and outcome.calibration is not None:
            self._cal = outcome.calibration
            self._cal_path = ""
            self._emit("calibration")
        self._emit("result", "warnings")

    @property
    def busy(self) -> bool:
        return self._busy

    def set_busy(self, busy: bool) -> None:
        if bool(busy) != self._busy:
            self._busy = bool(busy)
            self._emit("busy")

    @property
    def status(self) -> str:
        """One line for the status bar (errors in a machinist's words)."""
        return self._status

    def set_status(self, text: str) -> None:
        if text != self._status:
            self._status = str(text)
            self._emit("status")

    # -- live camera -----------------------------------------------------------------------
    @property
    def camera_state(self) -> str:
        return self._camera

    @property
    def camera_label(self) -> str:
        return self._camera_label

    @property
    def camera_message(self) -> str:
        return self._camera_message

    def set_camera(self, state: str, *, label: str | None = None, message: str = "") -> None:
        if state not in CAMERA_STATES:
            raise ValueError(f"state must be one of {CAMERA_STATES}, got {state!r}")
        self._camera = state
        if label is not None:
            self._camera_label = str(label)
        self._camera_message = str(message)
        if state != "live":
            self._fps = self._measured_fps = float("nan")
        self._emit("camera", "fps", "warnings")

    @property
    def fps(self) -> float:
        """Frames shown per second (NaN when not live)."""
        return self._fps

    @property
    def measured_fps(self) -> float:
        """Frames measured per second in the live height job (NaN when not measuring)."""
        return self._measured_fps

    def set_fps(self, shown: float, measured: float = float("nan")) -> None:
        self._fps = float(shown)
        self._measured_fps = float(measured)
        self._emit("fps")

    # -- warnings --------------------------------------------------------------------------
    @property
    def warnings(self) -> tuple[str, ...]:
        """Plain-language warnings: the result's quality gates, then set-up mismatches."""
        out: list[str] = []
        if self._outcome is not None:
            out.extend(self._outcome.warnings)
        out.extend(self.setup_warnings())
        return tuple(dict.fromkeys(out))

    def setup_warnings(self) -> tuple[str, ...]:
        """Mismatches between the picture/camera and the calibration in use."""
        out: list[str] = []
        cal = self._cal
        if cal is None:
            if self._mode != "calibrate":
                out.append("No calibration loaded: open a calibration file or calibrate "
                           "from a gauge first.")
            return tuple(out)
        if self.image_size is not None:
            w, h = self.image_size
            cw, ch = tuple(cal.image_size)
            if (w, h) != (cw, ch):
                out.append(f"The picture is {w} x {h} px but the calibration was made at "
                           f"{cw} x {ch} px: measurements are refused until you recalibrate "
                           f"at this size.")
        cal_label = getattr(cal, "label", "") or ""
        if self._camera != "off" and self._camera_label and cal_label \
                and self._camera_label != cal_label:
            out.append(f"This camera is '{self._camera_label}' but the calibration belongs to "
                       f"'{cal_label}': check it is the same camera, lens and zoom, or "
                       f"recalibrate.")
        return tuple(out)
