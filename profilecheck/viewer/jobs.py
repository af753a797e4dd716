"""The viewer's four jobs as plain function calls into the library (no Qt).

The viewer holds no measurement logic: :func:`run_job` turns the model's mode and inputs
into one call of ``profilecheck.calibration.calibrate_from_pin/block/lines`` or
``profilecheck.measure.measure_thread/tool/height`` and packs what comes back (the report
dictionary the command line would write, the overlays, the warnings) into a
:class:`JobOutcome`. :class:`LibraryBackend` is the real library; tests pass a fake with the
same five methods.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, Protocol

import numpy as np

from ..errors import ProfilecheckError
from .model import JobParams, MODES

__all__ = ["JobOutcome", "Backend", "LibraryBackend", "run_job", "calibration_report"]


@dataclass(frozen=True)
class JobOutcome:
    """What one job produced.

    Parameters
    ----------
    mode : str
        The job ('calibrate', 'thread', 'tool', 'height').
    report : dict
        The JSON-ready report, identical to the command line's for the same input
        (``result.to_dict()``; for a calibration the calibration file's content).
    overlays : tuple
        :mod:`profilecheck.overlays` primitives in image px.
    warnings : tuple of str
        Quality-gate warnings in plain language.
    calibration : Calibration or None
        The new calibration (calibrate job only).
    result : object
        The library's own result object.
    elapsed_s : float
        Wall time of the library call.
    roi : tuple or None
        The region the library was asked to search (live tracking), None = whole frame.
    """

    mode: str
    report: dict
    overlays: tuple
    warnings: tuple[str, ...]
    calibration: Any = None
    result: Any = None
    elapsed_s: float = float("nan")
    roi: Any = None

    @property
    def verdict(self) -> str:
        """Overall verdict ('pass', 'fail', 'undecided', 'none')."""
        v = self.report.get("verdict")
        if isinstance(v, dict):
            return str(v.get("overall", "none"))
        return "none"


class Backend(Protocol):
    """The library calls the viewer needs (see docs/contracts.md)."""

    def calibrate(self, kind: str, image: np.ndarray, size_mm: float, *, label: str = "") -> Any: ...
    def thread_spec(self, designation: str) -> Any: ...
    def measure_thread(self, image: np.ndarray, calibration: Any, *, spec: Any = None) -> Any: ...
    def measure_tool(self, image: np.ndarray, calibration: Any, *, spec: Any = None,
                     internal: bool = False) -> Any: ...
    def measure_height(self, image: np.ndarray, calibration: Any, *, reference: str = "point",
                       roi: Any = None, axis: Any = None) -> Any: ...


class LibraryBackend:
    """The real library, imported on first use so the viewer starts fast."""

    def calibrate(self, kind: str, image: np.ndarray, size_mm: float, *, label: str = "") -> Any:
        from .. import calibration as calib
        fn = {"pin": "calibrate_from_pin", "block": "calibrate_from_block",
              "lines": "calibrate_from_lines"}[kind]
        try:
            func = getattr(calib, fn)
        except AttributeError:
            raise ProfilecheckError(f"calibration from a {kind} gauge is not available in "
                                    f"this version") from None
        return func(image, size_mm, label=label)

    def thread_spec(self, designation: str) -> Any:
        from ..standards import thread_spec
        return thread_spec(designation)

    def measure_thread(self, image, calibration, *, spec=None):
        from ..measure import measure_thread
        return measure_thread(image, calibration, spec=spec)

    def measure_tool(self, image, calibration, *, spec=None, internal=False):
        from ..measure import measure_tool
        return measure_tool(image, calibration, spec=spec, internal=internal)

    def measure_height(self, image, calibration, *, reference="point", roi=None, axis=None):
        from ..measure import measure_height
        return measure_height(image, calibration, reference=reference, roi=roi, axis=axis)


def calibration_report(cal: Any, image_name: str = "") -> dict:
    """The report of a calibration job: the calibration file's JSON plus ``kind``."""
    d = dict(cal.to_dict()) if hasattr(cal, "to_dict") else {}
    d["kind"] = "calibration"
    if image_name:
        d.setdefault("image", image_name)
    return d


def run_job(backend: Backend, mode: str, image: np.ndarray, calibration: Any,
            params: JobParams, *, image_name: str = "", calibration_path: str = "",
            roi: Any = None) -> JobOutcome:
    """Run one job through the library.

    Parameters
    ----------
    backend : Backend
        :class:`LibraryBackend` or a fake with the same methods.
    mode : str
        One of :data:`profilecheck.viewer.model.MODES`.
    image : ndarray
        Grey picture in [0, 1], ``img[row, col]``.
    calibration : Calibration or None
        Required except for the calibrate job.
    params : JobParams
        The job's inputs.
    image_name : str
        Recorded as ``report['image']`` when the library was given an array (as the command
        line records the path it was given).
    calibration_path : str
        The calibration file, recorded as ``report['calibration']['file']`` like the
        command line does ('' = not from a file).
    roi : optional
        Passed to the height job (live tracking).

    Returns
    -------
    JobOutcome

    Raises
    ------
    ValueError, TypeError
        Unknown mode, not an array.
    ProfilecheckError
        Missing calibration or gauge size, or whatever the library raises on bad data.
    """
    if mode not in MODES:
        raise ValueError(f"mode must be one of {MODES}, got {mode!r}")
    if not isinstance(image, np.ndarray) or image.ndim != 2:
        raise TypeError("image must be a 2-D numpy array")
    if not isinstance(params, JobParams):
        raise TypeError("params must be a JobParams")
    t0 = time.perf_counter()
    if mode == "calibrate":
        if params.gauge_size_mm is None:
            raise ProfilecheckError(f"enter the {params.gauge_kind} gauge's certified size first")
        got = backend.calibrate(params.gauge_kind, image, params.gauge_size_mm,
                                label=params.camera_label)
        cal = getattr(got, "calibration", got)
        if params.camera_label and hasattr(cal, "label") and not cal.label:
            from dataclasses import replace
            try:
                cal = replace(cal, label=params.camera_label)
            except TypeError:
                pass
        overlays = tuple(getattr(got, "overlays", ()) or ())
        warnings = tuple(getattr(got, "warnings", ()) or ())
        report = calibration_report(cal, image_name)
        return JobOutcome(mode, report, overlays, warnings, calibration=cal, result=got,
                          elapsed_s=time.perf_counter() - t0)
    if calibration is None:
        raise ProfilecheckError("no calibration loaded: open a calibration file or "
                                "calibrate from a gauge first")
    spec = None
    if mode in ("thread", "tool") and params.designation.strip():
        spec = backend.thread_spec(params.designation.strip())
    if mode == "thread":
        res = backend.measure_thread(image, calibration, spec=spec)
    elif mode == "tool":
        res = backend.measure_tool(image, calibration, spec=spec, internal=params.internal)
    else:
        axis = None
        if params.reference == "line":
            if not params.axis_path:
                raise ProfilecheckError("choose the saved axis file first (save one from a "
                                        "centre-point or bar picture with the camera fixed)")
            axis = params.axis_path
        res = backend.measure_height(image, calibration, reference=params.reference, roi=roi,
                                     axis=axis)
    report = dict(res.to_dict())
    if image_name and report.get("image") in (None, "", "<array>"):
        report["image"] = image_name
    if calibration_path and isinstance(report.get("calibration"), dict):
        report["calibration"] = dict(report["calibration"], file=calibration_path)
    return JobOutcome(mode, report, tuple(getattr(res, "overlays", ()) or ()),
                      tuple(getattr(res, "warnings", ()) or ()), result=res,
                      elapsed_s=time.perf_counter() - t0, roi=roi if mode == "height" else None)
