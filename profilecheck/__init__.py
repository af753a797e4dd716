"""profilecheck: a calibrated camera as a measuring instrument for screw threads,
threading tools and lathe centre height.

The public API (``../shared/design.md``) is loaded lazily so ``import profilecheck`` stays
fast and never imports Qt.
"""

from __future__ import annotations

import importlib
from typing import Any

__version__ = "0.1.0"

_API = {
    "ProfilecheckError": "profilecheck.errors",
    "Measured": "profilecheck.quantity",
    "load_image": "profilecheck.imaging",
    "Calibration": "profilecheck.calibration",
    "load_calibration": "profilecheck.calibration",
    "save_calibration": "profilecheck.calibration",
    "calibrate_from_pin": "profilecheck.calibration",
    "calibrate_from_block": "profilecheck.calibration",
    "calibrate_from_lines": "profilecheck.calibration",
    "calibrate_from_two_pins": "profilecheck.calibration",
    "calibrate_grid": "profilecheck.calibration",
    "measure_pin": "profilecheck.calibration",
    "thread_spec": "profilecheck.standards",
    "measure_thread": "profilecheck.measure",
    "measure_tool": "profilecheck.measure",
    "measure_height": "profilecheck.measure",
    "measure_squareness": "profilecheck.measure",
}

__all__ = sorted(_API) + ["__version__"]


def __getattr__(name: str) -> Any:
    try:
        mod = _API[name]
    except KeyError:
        raise AttributeError(f"module 'profilecheck' has no attribute {name!r}") from None
    return getattr(importlib.import_module(mod), name)


def __dir__() -> list[str]:
    return __all__
