"""Lengths and pitches as machinists write them, and display formatting.

All lengths inside profilecheck are millimetres (``docs/conventions.md``); inch values
appear only at the edges: parsing what a user typed and formatting what a user reads.
1 in = 25.4 mm exactly (international inch, 1959).

Accepted units (case-insensitive, optional space before the unit):

========  ============================================
unit      spellings
========  ============================================
mm        ``mm``
um        ``um``, ``µm``, ``μm``, ``micron``, ``microns``
in        ``in``, ``inch``, ``inches``, ``"``
thou      ``thou``, ``mil``, ``mils`` (0.001 in)
tenths    ``tenth``, ``tenths`` (0.0001 in)
========  ============================================

Pitches: ``40tpi`` (threads per inch) or any length (``1.25mm``, ``0.05in``).

Rounding for display is decimal half-up on the shortest decimal representation of the
float, so ``format_length(parse_length('0.2491in'), 'in')`` gives ``'0.2491in'`` and not
``'0.2490in'``.
"""

from __future__ import annotations

import math
import re
from decimal import ROUND_HALF_UP, Decimal

from .errors import ProfilecheckError

__all__ = [
    "MM_PER_IN",
    "LengthFormatError",
    "UNITS",
    "parse_length",
    "parse_pitch",
    "format_length",
    "round_half_up",
    "to_unit",
]

#: Millimetres per inch, exact by definition.
MM_PER_IN = 25.4

#: Millimetres per display unit.
UNITS: dict[str, float] = {
    "mm": 1.0,
    "um": 0.001,
    "in": MM_PER_IN,
    "thou": MM_PER_IN / 1000.0,
    "tenths": MM_PER_IN / 10000.0,
}

#: The same factors as exact decimals (1 in = 25.4 mm by definition).
_EXACT_MM = {"mm": Decimal("1"), "um": Decimal("0.001"), "in": Decimal("25.4"),
             "thou": Decimal("0.0254"), "tenths": Decimal("0.00254")}

#: Default number of decimals shown per unit (a tenth of a micron is below any camera's reach).
_DEFAULT_DECIMALS = {"mm": 3, "um": 1, "in": 4, "thou": 1, "tenths": 0}

_ALIASES = {
    "mm": "mm",
    "um": "um", "µm": "um", "μm": "um", "micron": "um", "microns": "um",
    "in": "in", "inch": "in", "inches": "in", '"': "in",
    "thou": "thou", "mil": "thou", "mils": "thou",
    "tenth": "tenths", "tenths": "tenths",
}

_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_LENGTH_RE = re.compile(rf"^\s*(?P<num>{_NUMBER})\s*(?P<unit>[a-zµμ\"]+|\")\s*$", re.IGNORECASE)
_TPI_RE = re.compile(rf"^\s*(?P<num>{_NUMBER})\s*tpi\s*$", re.IGNORECASE)


class LengthFormatError(ProfilecheckError, ValueError):
    """A length or pitch text cannot be read (no unit, unknown unit, not a number)."""


def _unit_key(unit: str) -> str:
    key = _ALIASES.get(unit.strip().lower()) if isinstance(unit, str) else None
    if key is None:
        raise ValueError(f"unit must be one of {sorted(UNITS)}, got {unit!r}")
    return key


def parse_length(text: str) -> float:
    """Read a length with its unit and return millimetres.

    Parameters
    ----------
    text : str
        A number followed by a unit, e.g. ``'2.000mm'``, ``'0.0787in'``, ``'2.5um'``,
        ``'0.25"'``, ``'3 thou'``, ``'5tenths'``. A sign is allowed (offsets).

    Returns
    -------
    float
        The length in millimetres.

    Raises
    ------
    TypeError
        If `text` is not a string.
    LengthFormatError
        If there is no unit, the unit is unknown or the number is not finite.

    Examples
    --------
    >>> parse_length('0.25in')
    6.35
    >>> parse_length('2.5um')
    0.0025
    """
    if not isinstance(text, str):
        raise TypeError(f"text must be a str, got {type(text).__name__}")
    m = _LENGTH_RE.match(text)
    if m is None:
        raise LengthFormatError(
            f"cannot read the length {text!r}: write a number and a unit, "
            "e.g. 2.000mm, 0.0787in, 2.5um, 3thou")
    key = _ALIASES.get(m.group("unit").lower())
    if key is None:
        raise LengthFormatError(
            f"unknown unit {m.group('unit')!r} in {text!r}: use mm, um, in, thou or tenths")
    value = float(m.group("num"))
    if not math.isfinite(value):
        raise LengthFormatError(f"the length {text!r} is not a finite number")
    # Decimal product keeps '0.2491in' exactly 6.32714 mm before conversion to float.
    return float(Decimal(m.group("num")) * _EXACT_MM[key])


def parse_pitch(text: str) -> float:
    """Read a thread pitch and return millimetres.

    Parameters
    ----------
    text : str
        ``'<n>tpi'`` (threads per inch, pitch = 25.4/n mm) or a length (``'1.25mm'``).

    Returns
    -------
    float
        Pitch in millimetres, > 0.

    Raises
    ------
    TypeError
        If `text` is not a string.
    LengthFormatError
        If the text cannot be read or the pitch is zero or negative.

    Examples
    --------
    >>> parse_pitch('40tpi')
    0.635
    """
    if not isinstance(text, str):
        raise TypeError(f"text must be a str, got {type(text).__name__}")
    m = _TPI_RE.match(text)
    if m is not None:
        tpi = float(m.group("num"))
        if not (math.isfinite(tpi) and tpi > 0):
            raise LengthFormatError(f"threads per inch must be above zero, got {text!r}")
        return MM_PER_IN / tpi
    try:
        pitch_mm = parse_length(text)
    except LengthFormatError:
        raise LengthFormatError(
            f"cannot read the pitch {text!r}: write e.g. 40tpi or 1.25mm") from None
    if not pitch_mm > 0:
        raise LengthFormatError(f"a pitch must be above zero, got {text!r}")
    return pitch_mm


def to_unit(mm: float, unit: str) -> float:
    """Convert millimetres to `unit` (mm, um, in, thou, tenths) without rounding."""
    key = _unit_key(unit)
    if key == "mm":
        return float(mm)
    return float(Decimal(repr(float(mm))) / _EXACT_MM[key])


def round_half_up(value: float, decimals: int) -> Decimal:
    """Round half-up in decimal, from the shortest representation of `value`.

    Parameters
    ----------
    value : float
        Finite number.
    decimals : int
        Number of decimal places (may be negative, e.g. -1 for tens).

    Returns
    -------
    decimal.Decimal

    Examples
    --------
    >>> str(round_half_up(0.22235, 4))
    '0.2224'
    """
    if not isinstance(decimals, int):
        raise TypeError("decimals must be an int")
    if not math.isfinite(value):
        raise ValueError(f"value must be finite, got {value!r}")
    return Decimal(repr(float(value))).quantize(Decimal(1).scaleb(-decimals), ROUND_HALF_UP)


def format_length(mm: float, unit: str = "mm", *, decimals: int | None = None,
                  suffix: bool = True) -> str:
    """Format a length given in millimetres for display.

    Parameters
    ----------
    mm : float
        Length in millimetres.
    unit : {'mm', 'um', 'in', 'thou', 'tenths'}
        Display unit (aliases of :func:`parse_length` accepted).
    decimals : int, optional
        Decimal places; default mm 3, um 1, in 4, thou 1, tenths 0.
    suffix : bool
        Append the unit name (``'0.2491in'``); the result parses back with
        :func:`parse_length`.

    Returns
    -------
    str

    Examples
    --------
    >>> format_length(6.32714, 'in')
    '0.2491in'
    >>> format_length(0.0254, 'thou')
    '1.0thou'
    """
    key = _unit_key(unit)
    if decimals is None:
        decimals = _DEFAULT_DECIMALS[key]
    if not math.isfinite(float(mm)):
        return "n/a"
    q = round_half_up(to_unit(mm, key), decimals)
    if q == 0:
        q = abs(q)  # no '-0.000'
    text = f"{q:f}"
    return text + key if suffix else text
