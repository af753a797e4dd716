"""Batched (all teeth at once) statistics and fits of the thread analysis.

The batched helpers replace per-tooth loops; they must give what the per-tooth code gives.
Check values: numpy's ``np.median`` / ``np.quantile`` (exact equality: the helpers use the
same order statistics and floating-point steps), and a straight-line TLS written out here
with ``np.linalg.eigh`` on the scatter matrix and the same 3.5-MAD trimming loop
(the reference library's eigen solver; agreement to rounding, 1e-9 relative).
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from profilecheck.measure._lines import fit_flank_line, fit_flank_lines
from profilecheck.measure._thread_stats import (quantiles1d, segment_median, segment_quantile,
                                                sorted_segments)

_finite = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False, allow_infinity=False)
_groups = st.lists(st.lists(_finite, min_size=1, max_size=40), min_size=1, max_size=8)


def _flatten(groups, shuffle_seed=None):
    v = np.concatenate([np.array(g, float) for g in groups])
    seg = np.concatenate([np.full(len(g), i) for i, g in enumerate(groups)])
    if shuffle_seed is not None:
        o = np.random.default_rng(shuffle_seed).permutation(len(v))
        v, seg = v[o], seg[o]
    return v, seg


@settings(max_examples=200, deadline=None)
@given(_groups, st.booleans())
def test_segment_median_is_numpy_median_exactly(groups, shuffled):
    v, seg = _flatten(groups, 1 if shuffled else None)
    got = segment_median(*sorted_segments(v, seg, len(groups)))
    assert got.tolist() == [float(np.median(g)) for g in groups]


@settings(max_examples=200, deadline=None)
@given(_groups, st.sampled_from([0.0, 0.02, 0.1, 0.5, 0.9, 0.98, 1.0]), st.booleans())
def test_segment_quantile_is_numpy_quantile_exactly(groups, q, shuffled):
    v, seg = _flatten(groups, 2 if shuffled else None)
    got = segment_quantile(*sorted_segments(v, seg, len(groups)), q)
    assert got.tolist() == [float(np.quantile(g, q)) for g in groups]


def test_empty_segment_gives_nan_and_quantiles1d_matches():
    rows, count = sorted_segments(np.array([3.0, 1.0]), np.array([0, 2]), 3)
    med = segment_median(rows, count)
    assert med[0] == 3.0 and math.isnan(med[1]) and med[2] == 1.0
    assert math.isnan(segment_quantile(rows, count, 0.9)[1])
    a = np.random.default_rng(3).normal(size=57)
    assert quantiles1d(a, (0.98, 0.02)) == [np.quantile(a, 0.98), np.quantile(a, 0.02)]


def _reference_tls(xy, robust):
    """The per-flank fit as it was written with np.linalg.eigh (reference)."""
    pts = xy
    for _ in range(2 if robust else 1):
        c = pts.mean(axis=0)
        d = pts - c
        _, v = np.linalg.eigh(d.T @ d)
        direction, normal = v[:, 1], v[:, 0]
        resid = d @ normal
        if not robust or len(pts) < 8:
            break
        s = 1.4826 * np.median(np.abs(resid - np.median(resid))) + 1e-12
        keep = np.abs(resid) <= 3.5 * s
        if keep.all() or keep.sum() < 3:
            break
        pts = pts[keep]
    n = len(pts)
    t = d @ direction
    sigma = math.sqrt(float(resid @ resid) / max(n - 2, 1))
    k = direction[0] / direction[1]
    std_k = sigma / math.sqrt(float(t @ t)) * (1 + k * k)
    std_x = sigma / math.sqrt(n) / abs(direction[1])
    return c[0], c[1], k, std_x, std_k, n, float(np.ptp(pts[:, 1]))


@pytest.mark.parametrize("robust", [True, False])
def test_batched_flank_fits_match_per_flank_reference(robust):
    rng = np.random.default_rng(7)
    sets = []
    for i in range(12):
        n = int(rng.integers(3, 70))
        y = rng.uniform(0.0, 0.4, n)
        x = 0.5 * i + math.tan(rng.uniform(-0.6, 0.6)) * y + rng.normal(0, 1e-3, n)
        if i % 3 == 0:  # a few burrs: the trimming must drop them set by set
            x[rng.integers(0, n, max(1, n // 8))] += 0.02
        sets.append(np.column_stack([x, y]))
    xy = np.concatenate(sets)
    seg = np.concatenate([np.full(len(s), i) for i, s in enumerate(sets)])
    lines = fit_flank_lines(xy[:, 0], xy[:, 1], seg, len(sets), robust=robust)
    for s, line in zip(sets, lines):
        x_ref, y_ref, k, std_x, std_k, n, span = _reference_tls(s, robust)
        assert line.n == n and line.y_span == span
        for got, want in ((line.x_ref, x_ref), (line.y_ref, y_ref), (line.k, k),
                          (line.std_x_ref, std_x), (line.std_k, std_k)):
            assert got == pytest.approx(want, rel=1e-9, abs=1e-15)
        one = fit_flank_line(s, robust=robust)
        assert (one.n, one.x_ref, one.k) == (line.n, line.x_ref, line.k)
