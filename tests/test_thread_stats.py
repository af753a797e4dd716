"""Small-sample median and quantile helpers of the thread analysis.

Check values: numpy's own ``np.median`` and ``np.quantile`` (default 'linear' method,
Hyndman & Fan definition 7) as the reference library, and hand-worked order statistics
(common practice, no source). The helpers promise bit-identical results, so the
comparison is exact equality, not a tolerance.
"""

import math

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from profilecheck.measure._thread_stats import median1d, quantile1d

_finite = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False, allow_infinity=False)
_samples = st.lists(_finite, min_size=1, max_size=60)


@settings(max_examples=300, deadline=None)
@given(_samples)
def test_median_is_numpy_median_exactly(vals):
    a = np.array(vals)
    assert median1d(a) == np.median(a)


@settings(max_examples=300, deadline=None)
@given(_samples, st.sampled_from([0.0, 0.02, 0.05, 0.1, 0.5, 0.9, 0.95, 0.98, 1.0]))
def test_quantile_is_numpy_quantile_exactly(vals, q):
    a = np.array(vals)
    assert quantile1d(a, q) == np.quantile(a, q)


def test_hand_worked_order_statistics():
    # sorted 1, 2, 3, 4: median (2 + 3) / 2; q = 0.9 at index 2.7 -> 3 + 0.7 * (4 - 3)
    a = np.array([4.0, 1.0, 3.0, 2.0])
    assert median1d(a) == 2.5
    assert math.isclose(quantile1d(a, 0.9), 3.7, rel_tol=0, abs_tol=1e-15)
    assert quantile1d(a, 0.0) == 1.0 and quantile1d(a, 1.0) == 4.0
    assert median1d([5.0, 1.0, 3.0]) == 3.0


def test_input_is_not_reordered_and_lists_work():
    a = np.array([3.0, 1.0, 2.0])
    median1d(a)
    quantile1d(a, 0.1)
    assert a.tolist() == [3.0, 1.0, 2.0]
    assert median1d([2, 8]) == 5.0


def test_nan_propagates_like_numpy():
    a = np.array([1.0, np.nan, 2.0])
    assert math.isnan(median1d(a)) and math.isnan(np.median(a))
    assert math.isnan(quantile1d(a, 0.9)) and math.isnan(np.quantile(a, 0.9))
