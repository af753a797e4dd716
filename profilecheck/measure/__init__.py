"""Measurements that compose imaging, calibration and standards.

* :func:`measure_thread` (``thread.py``): pitch, flanks, flats, diameters of a thread;
* :func:`measure_tool` (``tool.py``) and :func:`measure_height` (``height.py``).

Loaded lazily (module ``__getattr__``) so that importing one measurement never needs the
others' modules, and ``import profilecheck.measure`` stays cheap.
"""

from __future__ import annotations

import importlib
from typing import Any

_API = {
    "measure_thread": ".thread",
    "ThreadResult": ".thread",
    "measure_tool": ".tool",
    "ToolResult": ".tool",
    "measure_squareness": ".tool",
    "SquarenessResult": ".tool",
    "measure_height": ".height",
    "HeightResult": ".height",
}

__all__ = sorted(_API)


def __getattr__(name: str) -> Any:
    try:
        mod = _API[name]
    except KeyError:
        raise AttributeError(f"module 'profilecheck.measure' has no attribute {name!r}") from None
    return getattr(importlib.import_module(mod, __name__), name)


def __dir__() -> list[str]:
    return __all__
