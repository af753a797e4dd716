"""estimate_gamma on rendered edges recorded through a known power-law response.

Scene: a straight edge, Gaussian blur sigma_b, integrated over square pixels by 5 x 5
Gauss-Legendre quadrature (vision-notes section 2 model), noise 2 grey levels added in the
linear domain, then encoded as code = lin ** (1 / gamma) and rounded to 8 bits.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import ndtr

from profilecheck.errors import MeasurementError
from profilecheck.imaging import estimate_gamma, find_edges


def _render(shape, point, normal_deg, sigma_b, dark=30 / 255, contrast=190 / 255):
    a = math.radians(normal_deg)
    n = np.array([math.cos(a), math.sin(a)])
    yy, xx = np.mgrid[0:shape[0], 0:shape[1]].astype(float)
    xg, wg = np.polynomial.legendre.leggauss(5)
    acc = np.zeros(shape)
    for u, wu in zip(xg / 2, wg / 2):
        for v, wv in zip(xg / 2, wg / 2):
            acc += wu * wv * ndtr(((xx + u - point[0]) * n[0] + (yy + v - point[1]) * n[1]) / sigma_b)
    return dark + contrast * acc, n


@pytest.mark.parametrize("gamma_true", [1.0, 2.2])
def test_gamma_recovered_within_its_uncertainty(gamma_true):
    rng = np.random.default_rng(4)
    shape, point = (200, 150), (75.3, 100.6)
    lin, n = _render(shape, point, 20.0, 1.5)
    lin = np.clip(lin + rng.normal(0, 2 / 255, shape), 1e-6, 1)
    code = np.round(lin ** (1 / gamma_true) * 255) / 255
    est = estimate_gamma(code)
    assert est.std < 0.15 * gamma_true
    assert abs(est.gamma - gamma_true) < 3.5 * est.std
    # and the estimate, used to linearise, takes most of the gamma shift out of the edges
    e_raw = find_edges(code)
    e_fix = find_edges(code, gamma=est.gamma)
    raw = abs(np.mean((e_raw.xy - point) @ n))
    fixed = abs(np.mean((e_fix.xy - point) @ n))
    if gamma_true != 1.0:
        assert raw > 0.3 and fixed < 0.35 * raw
    else:
        assert fixed < 0.1


def test_no_silhouette_is_a_measurement_error():
    with pytest.raises(MeasurementError):
        estimate_gamma(np.full((60, 80), 0.8))
