"""Stand-ins for the library, for tests and demonstrations of the viewer's wiring only.

:class:`ScriptedBackend` answers the five library calls of
:class:`profilecheck.viewer.jobs.Backend` with results built from values it is given (not
measured from the picture), decided with the real verdict rule
(:func:`profilecheck.verdict.check_limits`). It proves that a value travels from the
library into the model and onto the screen; it says nothing about measuring.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from .. import overlays as ov
from ..errors import MeasurementError
from ..quantity import Measured
from ..verdict import check_limits, overall

__all__ = ["ScriptedResult", "ScriptedBackend"]


@dataclass(frozen=True)
class ScriptedResult:
    """A result with the fields and ``to_dict()`` of a measure_* result."""
    kind: str
    measurements: dict
    checks: tuple = ()
    warnings: tuple = ()
    overlays: tuple = ()
    image: str = "<array>"

    @property
    def verdict(self) -> str:
        return overall(self.checks)

    def to_dict(self) -> dict[str, Any]:
        return {"kind": self.kind, "image": self.image, "calibration": {}, "spec": None,
                "measurements": {k: m.to_dict() for k, m in self.measurements.items()},
                "verdict": {"overall": self.verdict,
                            "checks": [c.to_dict() for c in self.checks]},
                "warnings": list(self.warnings)}


@dataclass
class ScriptedBackend:
    """Answers with the given values; records every call in ``calls``.

    ``values[mode]`` maps report keys to (value, u, unit, low, high) with low/high None for
    no limit; ``fail[mode]`` makes that job raise a MeasurementError with the given text;
    ``delay_s`` holds each call back (to see the busy indicator); ``calibration`` is what
    the calibrate job returns.
    """

    values: dict = field(default_factory=dict)
    fail: dict = field(default_factory=dict)
    warnings: dict = field(default_factory=dict)
    calibration: Any = None
    delay_s: float = 0.0
    calls: list = field(default_factory=list)
    release: threading.Event = field(default_factory=threading.Event)

    def __post_init__(self) -> None:
        self.release.set()

    def _answer(self, kind: str, image: np.ndarray) -> ScriptedResult:
        self.calls.append((kind, image.shape))
        if self.delay_s:
            self.release.wait(self.delay_s)
        if kind in self.fail:
            raise MeasurementError(self.fail[kind])
        meas, checks = {}, []
        for key, (v, u, unit, lo, hi) in self.values.get(kind, {}).items():
            meas[key] = Measured(v, u, unit, n_points=100)
            if lo is not None or hi is not None:
                checks.append(check_limits(key, v, u, lo, hi, unit=unit, source="scripted"))
        h, w = image.shape
        shapes = (ov.InfiniteLine((0.0, h / 2.0), (1.0, 0.0), "axis"),
                  ov.Segment((w * 0.25, h * 0.25), (w * 0.75, h * 0.75), "fit"),
                  ov.Marker((w / 2.0, h / 2.0), 8.0, "fit"),
                  ov.Label((5.0, 5.0), f"{kind}", "info"))
        return ScriptedResult(kind, meas, tuple(checks), tuple(self.warnings.get(kind, ())),
                              shapes)

    def calibrate(self, kind, image, size_mm, *, label=""):
        self.calls.append(("calibrate", kind, size_mm, label))
        if "calibrate" in self.fail:
            raise MeasurementError(self.fail["calibrate"])
        return self.calibration

    def thread_spec(self, designation):
        self.calls.append(("spec", designation))
        return designation

    def measure_thread(self, image, calibration, *, spec=None):
        return self._answer("thread", image)

    def measure_tool(self, image, calibration, *, spec=None, internal=False):
        return self._answer("tool", image)

    def measure_height(self, image, calibration, *, reference="point", roi=None, axis=None):
        return self._answer("height", image)
