"""Median and quantile of small 1-D samples, without the general-purpose overhead.

The thread analysis takes a median or a quantile of a few dozen values hundreds of times
per image; ``np.median`` / ``np.quantile`` spend most of that time on argument handling.
These helpers sort the sample once and return exactly what numpy returns for a 1-D
float sample: the median is the middle value (mean of the two middle values for an even
count), the quantile is numpy's default 'linear' method (Hyndman & Fan definition 7,
R. J. Hyndman and Y. Fan, The American Statistician 50(4):361-365, 1996), computed with
the same floating-point steps so results are bit-identical. NaN in the sample gives NaN,
as in numpy; an empty sample or anything not 1-D falls back to numpy itself.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["median1d", "quantile1d"]


def _sorted_1d(a) -> np.ndarray | None:
    v = np.asarray(a, dtype=np.float64)
    if v.ndim != 1 or v.size == 0:
        return None
    return np.sort(v)


def median1d(a) -> np.float64:
    """Median of a 1-D sample (same value as ``np.median``)."""
    s = _sorted_1d(a)
    if s is None:
        return np.median(a)
    n = s.size
    if math.isnan(s[-1]):
        return np.float64(np.nan)
    h = n // 2
    if n % 2:
        return s[h]
    return np.float64((s[h - 1] + s[h]) / 2.0)


def quantile1d(a, q: float) -> np.float64:
    """Quantile ``q`` in [0, 1] of a 1-D sample (same value as ``np.quantile(a, q)``)."""
    s = _sorted_1d(a)
    if s is None or not (0.0 <= q <= 1.0):
        return np.quantile(a, q)
    n = s.size
    if math.isnan(s[-1]):
        return np.float64(np.nan)
    vi = (n - 1) * float(q)                      # 'linear': virtual index (n - 1) q
    if vi >= n - 1:
        return s[-1]
    lo = math.floor(vi)
    g = vi - lo
    a0, b0 = s[lo], s[lo + 1]
    d = b0 - a0
    # numpy's lerp: a + d g below g = 0.5, b - d (1 - g) from 0.5 on
    return np.float64(b0 - d * (1.0 - g)) if g >= 0.5 else np.float64(a0 + d * g)
