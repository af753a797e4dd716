"""Median and quantile of small 1-D samples, without the general-purpose overhead.

The thread analysis takes a median or a quantile of a few dozen values hundreds of times
per image; ``np.median`` / ``np.quantile`` spend most of that time on argument handling.
These helpers sort the sample once and return exactly what numpy returns for a 1-D
float sample: the median is the middle value (mean of the two middle values for an even
count), the quantile is numpy's default 'linear' method (Hyndman & Fan definition 7,
R. J. Hyndman and Y. Fan, The American Statistician 50(4):361-365, 1996), computed with
the same floating-point steps so results are bit-identical. NaN in the sample gives NaN,
as in numpy; an empty sample or anything not 1-D falls back to numpy itself.

The segment versions take many samples at once (one value array with a sample id per
value, e.g. the points of every flank of an edge) and give each sample's median or
quantile with the same steps, for finite values.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["median1d", "quantile1d", "quantiles1d", "sorted_segments", "segment_median",
           "segment_quantile"]


def _sorted_1d(a) -> np.ndarray | None:
    v = np.asarray(a, dtype=np.float64)
    if v.ndim != 1 or v.size == 0:
        return None
    v = v.copy()  # what np.sort does, without its argument handling
    v.sort()
    return v


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
    return _quantile_of_sorted(s, q)


def quantiles1d(a, qs) -> list[np.float64]:
    """:func:`quantile1d` at each of ``qs``, sorting the sample once."""
    s = _sorted_1d(a)
    if s is None or not all(0.0 <= q <= 1.0 for q in qs):
        return [np.quantile(a, q) for q in qs]
    return [_quantile_of_sorted(s, q) for q in qs]


def _quantile_of_sorted(s: np.ndarray, q: float) -> np.float64:
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


def sorted_segments(v, seg, n_seg: int) -> tuple[np.ndarray, np.ndarray]:
    """Each sample of ``v`` sorted: rows of an ``(n_seg, largest count)`` array padded with
    +inf, and the count of each sample (``seg``: sample id 0 .. n_seg - 1 per value;
    values finite)."""
    v = np.asarray(v, dtype=np.float64)
    seg = np.asarray(seg, dtype=np.intp)
    count = np.bincount(seg, minlength=n_seg)
    rows = np.full((n_seg, max(int(count.max()) if count.size else 0, 1)), np.inf)
    if np.all(seg[1:] >= seg[:-1]):
        ss, vs = seg, v  # already grouped (the usual case): no reordering
    else:
        order = np.argsort(seg, kind="stable")
        ss, vs = seg[order], v[order]
    rows[ss, np.arange(ss.size) - (np.cumsum(count) - count)[ss]] = vs
    rows.sort(axis=1)
    return rows, count


def segment_median(rows: np.ndarray, count: np.ndarray) -> np.ndarray:
    """:func:`median1d` of every sample of :func:`sorted_segments` (NaN where empty)."""
    r = np.arange(len(count))
    c = np.maximum(count, 1)
    out = (rows[r, (c - 1) // 2] + rows[r, c // 2]) / 2.0
    return np.where(count > 0, out, np.nan)


def segment_quantile(rows: np.ndarray, count: np.ndarray, q: float) -> np.ndarray:
    """:func:`quantile1d` of every sample of :func:`sorted_segments` (NaN where empty)."""
    r = np.arange(len(count))
    c = np.maximum(count, 1)
    vi = (c - 1) * float(q)
    lo = np.minimum(np.floor(vi).astype(np.intp), c - 1)
    g = vi - lo
    a0, b0 = rows[r, lo], rows[r, np.minimum(lo + 1, c - 1)]
    with np.errstate(invalid="ignore"):  # inf - inf in the padding of empty samples
        d = b0 - a0
        out = np.where(g >= 0.5, b0 - d * (1.0 - g), a0 + d * g)
    out = np.where(vi >= c - 1, rows[r, c - 1], out)
    return np.where(count > 0, out, np.nan)
