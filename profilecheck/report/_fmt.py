"""Number formatting for reports: value +/- U in mm and inch, limits, verdict words.

Rounding follows JCGM 100:2008 (GUM) 7.2.6: the uncertainty is quoted to at most two
significant digits and the value is rounded to the same decimal place. 1 in = 25.4 mm
exactly (international inch, 1959); thou = 0.001 in, tenths = 0.0001 in
(``docs/conventions.md``).
"""

from __future__ import annotations

import math
from typing import Any

__all__ = ["MM_PER_IN", "decimals_for", "fmt_pair", "fmt_limit", "fmt_limits",
           "verdict_word", "num"]

#: International inch (exact by definition, 1959).
MM_PER_IN = 25.4

_PER_UNIT_MM = {"mm": 1.0, "um": 1e-3, "in": MM_PER_IN, "thou": MM_PER_IN / 1e3,
                "tenths": MM_PER_IN / 1e4}


def _length_text(mm: float, unit: str, decimals: int) -> str:
    """Digits of a length (given in mm) in a display unit, via
    :func:`profilecheck.units.format_length` (decimal half-up rounding) where that module
    is present, else Python formatting."""
    try:
        from ..units import format_length
    except ImportError:  # pragma: no cover - units module absent
        return f"{mm / _PER_UNIT_MM[unit]:.{decimals}f}"
    return format_length(mm, unit, decimals=decimals, suffix=False)


_WORDS = {"pass": "PASS", "fail": "FAIL", "undecided": "UNDECIDED", "none": "NO LIMITS"}


def num(v: Any) -> float | None:
    """A finite float from a JSON value, else None (missing, null, text, NaN)."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return None
    f = float(v)
    return f if math.isfinite(f) else None


def verdict_word(result: Any) -> str:
    """'PASS', 'FAIL', 'UNDECIDED', 'NO LIMITS' (or the text upper-cased)."""
    r = str(result or "none").lower()
    return _WORDS.get(r, r.upper())


def decimals_for(u: float, *, default: int, max_decimals: int = 8) -> int:
    """Decimal places that show ``u`` to two significant digits (GUM 7.2.6)."""
    if not (u > 0 and math.isfinite(u)):
        return default
    d = 1 - int(math.floor(math.log10(u)))
    r = round(u, d)  # 0.997 -> 1.0: rounding may carry into the next decade
    if r > 0:
        d = 1 - int(math.floor(math.log10(r)))
    return int(min(max(d, 0), max_decimals))


def _u_text(u_mm: float, unit: str, sym: dict[str, str]) -> str:
    d = decimals_for(u_mm / _PER_UNIT_MM[unit], default=1)
    return f"{_length_text(u_mm, unit, d)}{sym[unit]}"


def _syms(ascii_only: bool) -> dict[str, str]:
    if ascii_only:
        return {"pm": "+/-", "mm": " mm", "um": " um", "in": " in", "thou": " thou",
                "tenths": " tenths", "deg": " deg"}
    return {"pm": "\u00b1", "mm": " mm", "um": " \u00b5m", "in": " in", "thou": " thou",
            "tenths": " tenths", "deg": "\u00b0"}


def fmt_pair(value: float, u: float, unit: str, system: str = "mm", *,
             ascii_only: bool = False) -> str:
    """Format ``value +/- U`` for display.

    Parameters
    ----------
    value, u : float
        Value and expanded uncertainty (k = 2), in ``unit`` ('mm', 'deg', or any other).
    unit : str
        The stored unit. Lengths are stored in mm.
    system : {'mm', 'in'}
        For lengths: 'mm' gives ``5.3012 mm ± 4.2 µm``; 'in' gives ``0.20871 in ± 0.17 thou``
        (U in tenths when under 0.1 thou). Ignored for other units.

    Examples
    --------
    >>> fmt_pair(5.30123, 0.0042, 'mm', ascii_only=True)
    '5.3012 mm +/- 4.2 um'
    >>> fmt_pair(5.30123, 0.0042, 'mm', 'in', ascii_only=True)
    '0.20871 in +/- 0.17 thou'
    """
    if system not in ("mm", "in"):
        raise ValueError(f"system must be 'mm' or 'in', got {system!r}")
    sym = _syms(ascii_only)
    pm = sym["pm"]
    v, uu = float(value), abs(float(u))
    if unit == "mm":
        if system == "mm":
            d = decimals_for(uu, default=4)
            us = _u_text(uu, "um", sym)
            return f"{_length_text(v, 'mm', d)}{sym['mm']} {pm} {us}"
        ui = uu / MM_PER_IN
        d = decimals_for(ui, default=5)
        us = _u_text(uu, "thou" if (ui * 1000.0 >= 0.1 or ui == 0) else "tenths", sym)
        return f"{_length_text(v, 'in', d)}{sym['in']} {pm} {us}"
    if unit == "deg":
        d = decimals_for(uu, default=2)
        return f"{v:.{d}f}{sym['deg']} {pm} {uu:.{d}f}{sym['deg']}"
    d = decimals_for(uu, default=4) if uu > 0 else 4
    tail = "" if unit in ("", "1") else f" {unit}"
    return f"{v:.{d}f}{tail} {pm} {uu:.{d}f}{tail}"


def fmt_limit(v: float, unit: str, system: str = "mm") -> str:
    """One limit value without its unit: mm to 3-4 decimals, inch (converted from mm) to 5,
    degrees to 1-2 (trailing zeros beyond the minimum trimmed)."""
    if unit == "mm":
        lo, hi = (5, 5) if system == "in" else (3, 4)  # converted inch limits: 5 places
        text = _length_text(v, "in" if system == "in" else "mm", hi)
        while hi > lo and text.endswith("0"):
            text, hi = text[:-1], hi - 1
        return text
    elif unit == "deg":
        lo, hi = 1, 2
    else:
        lo, hi = 3, 5
    text = f"{v:.{hi}f}"
    while hi > lo and text.endswith("0"):
        text, hi = text[:-1], hi - 1
    return text


def fmt_limits(low: Any, high: Any, unit: str, system: str = "mm", *,
               ascii_only: bool = False) -> str:
    """'5.212 .. 5.324 mm', '>= 0.125 mm', '<= 30.5 deg' or '' when neither is given."""
    lo, hi = num(low), num(high)
    if unit == "mm":
        tail = " in" if system == "in" else " mm"
    elif unit == "deg":
        tail = " deg" if ascii_only else "\u00b0"
    else:
        tail = "" if unit in ("", "1") else f" {unit}"
    ge, le = (">=", "<=") if ascii_only else ("\u2265", "\u2264")
    if lo is not None and hi is not None:
        return f"{fmt_limit(lo, unit, system)} .. {fmt_limit(hi, unit, system)}{tail}"
    if lo is not None:
        return f"{ge} {fmt_limit(lo, unit, system)}{tail}"
    if hi is not None:
        return f"{le} {fmt_limit(hi, unit, system)}{tail}"
    return ""
