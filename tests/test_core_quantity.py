"""Measured values: expanded uncertainty bookkeeping (JCGM 100:2008)."""

import math

import pytest

from profilecheck.quantity import Measured, combine_u


def test_measured_interval_and_dict():
    m = Measured(5.300, 0.004, "mm", n_points=120, residual=0.03)
    assert m.low == pytest.approx(5.296) and m.high == pytest.approx(5.304)
    d = m.to_dict()
    assert d == {"value": 5.3, "u": 0.004, "unit": "mm", "n_points": 120, "residual": 0.03}


def test_measured_rejects_bad_values():
    with pytest.raises(ValueError):
        Measured(math.inf, 0.1)
    with pytest.raises(ValueError):
        Measured(1.0, -0.1)


def test_combine_u_is_root_sum_square():
    # GUM 5.1.2 with unit sensitivity coefficients: 3-4-5 triangle
    assert combine_u(3.0, 4.0) == pytest.approx(5.0)
