"""Measured values with their expanded uncertainty.

Every measured value in profilecheck is a :class:`Measured`: the value, its expanded
uncertainty ``u`` (coverage factor k = 2, about 95 %, JCGM 100:2008 section 6), the unit,
and what it rests on (number of edge points, fit residual). Lengths are in millimetres,
angles in degrees, unless ``unit`` says otherwise.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, asdict
from typing import Any

__all__ = ["Measured", "K_COVERAGE", "combine_u"]

#: Coverage factor for every expanded uncertainty reported (GUM, JCGM 100:2008 6.2).
K_COVERAGE = 2.0


@dataclass(frozen=True)
class Measured:
    """A measured value with its expanded uncertainty (k = 2).

    Parameters
    ----------
    value : float
        Best estimate, in ``unit``.
    u : float
        Expanded uncertainty U = k * u_c with k = 2, in ``unit``; >= 0.
    unit : str
        ``'mm'``, ``'deg'``, ``'px'``, ``'mm/px'`` or ``'1'``.
    n_points : int
        Number of edge points (or teeth, for per-tooth statistics) the value rests on.
    residual : float
        RMS residual of the fit behind the value, in the fit's own unit (px for edge fits),
        or NaN where not applicable.
    note : str
        Free text: correction applied, assumption made.
    """

    value: float
    u: float
    unit: str = "mm"
    n_points: int = 0
    residual: float = float("nan")
    note: str = ""

    def __post_init__(self) -> None:
        if not math.isfinite(self.value):
            raise ValueError(f"value must be finite, got {self.value!r}")
        if not (self.u >= 0.0) or not math.isfinite(self.u):
            raise ValueError(f"u must be finite and >= 0, got {self.u!r}")

    @property
    def low(self) -> float:
        """Lower end of the coverage interval, ``value - u``."""
        return self.value - self.u

    @property
    def high(self) -> float:
        """Upper end of the coverage interval, ``value + u``."""
        return self.value + self.u

    def to_dict(self) -> dict[str, Any]:
        """JSON form ``{value, u, unit, n_points[, residual][, note]}`` (design.md)."""
        d: dict[str, Any] = {"value": float(self.value), "u": float(self.u), "unit": self.unit,
                             "n_points": int(self.n_points)}
        if math.isfinite(self.residual):
            d["residual"] = float(self.residual)
        if self.note:
            d["note"] = self.note
        return d


def combine_u(*standard_uncertainties: float) -> float:
    """Root-sum-square of independent *standard* uncertainties (GUM 5.1.2, unit sensitivity).

    Returns the combined standard uncertainty; multiply by :data:`K_COVERAGE` for U.
    """
    return math.sqrt(sum(float(s) ** 2 for s in standard_uncertainties))
