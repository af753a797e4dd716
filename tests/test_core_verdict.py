"""Decision rule of ISO 14253-1 (conformance proven only inside the limits shrunk by U).

Check values: the worked example of ../shared/vision-notes.md section 4 (tolerance +/-25 um
with U = 10 um -> accept only within +/-15 um), and M6x1-6g pitch-diameter limits
5.212 / 5.324 mm (ISO 965-1 chart row, standards-notes section 11 [P 5]).
"""

import math

import pytest
from hypothesis import given, strategies as st

from profilecheck.verdict import check_limits, overall, PASS, FAIL, UNDECIDED


@pytest.mark.parametrize("value, expected", [
    (0.000, PASS), (0.015, PASS), (-0.015, PASS),        # inside the guard-banded zone
    (0.0151, UNDECIDED), (0.030, UNDECIDED), (-0.034, UNDECIDED),
    (0.0351, FAIL), (-0.040, FAIL),                       # wholly outside
])
def test_guard_band_example(value, expected):
    # vision-notes section 4: tolerance +/-25 um, U = 10 um -> pass only within +/-15 um
    assert check_limits("x", value, 0.010, -0.025, 0.025).result == expected


def test_m6_pitch_diameter_limits():
    lo, hi = 5.212, 5.324  # M6x1-6g d2 min/max, standards-notes section 11 [P 5]
    assert check_limits("d2", 5.268, 0.008, lo, hi).result == PASS
    assert check_limits("d2", 5.320, 0.008, lo, hi).result == UNDECIDED
    assert check_limits("d2", 5.340, 0.008, lo, hi).result == FAIL


def test_one_sided_and_bad_calls():
    assert check_limits("flat", 0.2, 0.01, 0.125, None).result == PASS
    assert check_limits("flat", 0.1, 0.01, 0.125, None).result == FAIL
    with pytest.raises(ValueError):
        check_limits("x", 1.0, 0.1, None, None)
    with pytest.raises(ValueError):
        check_limits("x", 1.0, -0.1, 0, 2)
    with pytest.raises(ValueError):
        check_limits("x", math.nan, 0.1, 0, 2)
    with pytest.raises(ValueError):
        check_limits("x", 1.0, 0.1, 2, 0)


def test_overall():
    a = check_limits("a", 1, 0.1, 0, 2)
    b = check_limits("b", 1.95, 0.1, 0, 2)
    c = check_limits("c", 3, 0.1, 0, 2)
    assert overall([a]) == PASS
    assert overall([a, b]) == UNDECIDED
    assert overall([a, b, c]) == FAIL
    assert overall([]) == "none"


@given(st.floats(-10, 10), st.floats(0, 5), st.floats(-10, 10), st.floats(0, 10))
def test_verdict_is_consistent_with_interval(value, u, lo, width):
    hi = lo + width
    r = check_limits("x", value, u, lo, hi).result
    if r == PASS:
        assert lo <= value - u and value + u <= hi
    elif r == FAIL:
        assert value + u < lo or value - u > hi
    else:
        assert not (lo <= value - u and value + u <= hi)
