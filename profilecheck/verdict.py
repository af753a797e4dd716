"""Conformance decisions with the measurement uncertainty.

Decision rule (ISO 14253-1:2017, default rule for proving conformance, via secondary
summaries; see ``../shared/vision-notes.md`` section 4): a value conforms ("pass") only when
the whole interval ``value +/- U`` lies inside the limits; it does not conform ("fail") when
the whole interval lies outside; otherwise the result is "undecided".
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, Iterable

__all__ = ["Check", "check_limits", "overall", "DECISION_RULE", "PASS", "FAIL", "UNDECIDED"]

PASS = "pass"
FAIL = "fail"
UNDECIDED = "undecided"

DECISION_RULE = (
    "ISO 14253-1 guard band: pass only when value +/- U (k = 2) lies inside the limits; "
    "fail when it lies wholly outside; otherwise undecided"
)


@dataclass(frozen=True)
class Check:
    """One checked quantity against its limits.

    ``low``/``high`` may be ``None`` for a one-sided limit. ``source`` says where the limit
    comes from ('ASME B1.1 formula', 'ISO 965-1 table', 'formula-derived', ...).
    """

    name: str
    value: float
    u: float
    low: float | None
    high: float | None
    unit: str
    result: str
    source: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"name": self.name, "value": self.value, "u": self.u, "min": self.low,
                "max": self.high, "unit": self.unit, "result": self.result,
                "source": self.source}


def check_limits(name: str, value: float, u: float, low: float | None, high: float | None,
                 *, unit: str = "mm", source: str = "") -> Check:
    """Decide conformance of ``value +/- u`` against ``[low, high]``.

    Parameters
    ----------
    name : str
        Quantity name (report key, e.g. ``'pitch_diameter'``).
    value, u : float
        Measured value and its expanded uncertainty (k = 2), same unit as the limits.
    low, high : float or None
        Limits; ``None`` for no limit on that side. At least one must be given.

    Returns
    -------
    Check
        With ``result`` one of ``'pass'``, ``'fail'``, ``'undecided'``.

    Examples
    --------
    >>> check_limits('d2', 5.300, 0.010, 5.212, 5.324).result
    'pass'
    >>> check_limits('d2', 5.320, 0.010, 5.212, 5.324).result
    'undecided'
    >>> check_limits('d2', 5.340, 0.010, 5.212, 5.324).result
    'fail'
    """
    if low is None and high is None:
        raise ValueError("check_limits: give at least one of low, high")
    if not (math.isfinite(value) and math.isfinite(u) and u >= 0):
        raise ValueError(f"check_limits: value and u must be finite, u >= 0 (got {value}, {u})")
    if low is not None and high is not None and low > high:
        raise ValueError(f"check_limits: low {low} > high {high}")
    lo = -math.inf if low is None else low
    hi = math.inf if high is None else high
    if value - u >= lo and value + u <= hi:
        result = PASS
    elif value + u < lo or value - u > hi:
        result = FAIL
    else:
        result = UNDECIDED
    return Check(name, float(value), float(u), low, high, unit, result, source)


def overall(checks: Iterable[Check]) -> str:
    """Overall verdict: 'fail' if any check fails, else 'undecided' if any is undecided,
    else 'pass'; 'none' when there are no checks."""
    results = [c.result for c in checks]
    if not results:
        return "none"
    if FAIL in results:
        return FAIL
    if UNDECIDED in results:
        return UNDECIDED
    return PASS
