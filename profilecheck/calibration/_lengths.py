"""Length arguments for the calibrate command: ``'6.000mm'``, ``'0.2362in'``, ``'2um'``.

Parsing is :func:`profilecheck.units.parse_length` (1 in = 25.4 mm exactly); this module
only adds the sign rules of each argument.
"""

from __future__ import annotations

import math

from ..errors import ProfilecheckError
from ..units import parse_length

__all__ = ["parse_length_mm"]


def parse_length_mm(text: str, *, what: str = "length", allow_zero: bool = False) -> float:
    """Parse a length with its unit and return millimetres.

    Parameters
    ----------
    text : str
        e.g. ``'6.000mm'``, ``'0.2362in'``.
    what : str
        Argument name for messages (``'--pin'``).
    allow_zero : bool
        Accept 0 (for uncertainties); otherwise the length must be > 0.

    Raises
    ------
    ProfilecheckError
        No unit, unknown unit, negative (or zero) or non-finite value.
    """
    if not isinstance(text, str):
        raise TypeError(f"{what} must be text such as '6.000mm', got {type(text).__name__}")
    try:
        mm = float(parse_length(text))
    except ProfilecheckError as e:
        raise ProfilecheckError(f"{what}: {e}") from None
    if not math.isfinite(mm) or mm < 0 or (mm == 0 and not allow_zero):
        need = "zero or positive" if allow_zero else "positive"
        raise ProfilecheckError(f"{what} must be a {need} length, got {text!r}")
    return mm
