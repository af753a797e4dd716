"""The pixel-exact blurred-step model against direct numerical integration.

S(u; s, t) = E[Phi((u + U1 + U2) / s)], U1 ~ U(-1/2, 1/2), U2 ~ U(-t/2, t/2): the mean of a
Gaussian-blurred step over a pixel seen along a row (vision-notes section 2). Checked here
against 40 x 40-point Gauss-Legendre quadrature of the double integral and central finite
differences, independent of the closed form in the package.
"""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.special import ndtr

from profilecheck.imaging._stepfit import fit_steps, step_model

XG, WG = np.polynomial.legendre.leggauss(40)


def brute(u, s, t):
    a, b = np.meshgrid(0.5 * XG, 0.5 * t * XG, indexing="ij")
    w = np.outer(WG, WG) / 4
    return np.array([(ndtr((ui + a + b) / s) * w).sum() for ui in np.atleast_1d(u)])


@pytest.mark.parametrize("s", [0.05, 0.3, 1.0, 2.5])
@pytest.mark.parametrize("t", [0.0, 0.003, 0.2, 0.7, 1.0])
def test_closed_form_matches_quadrature_and_derivatives(s, t):
    u = np.linspace(-8 * max(s, 0.5), 8 * max(s, 0.5), 33)
    S, dS_du, dS_ds = step_model(u, s, t)
    if s >= 0.3:   # quadrature of a near-discontinuous integrand is itself poor for s = 0.05
        assert_allclose(S, brute(u, s, t), rtol=0, atol=1e-9)
    h = 1e-6
    assert_allclose(dS_du, (step_model(u + h, s, t)[0] - step_model(u - h, s, t)[0]) / (2 * h),
                    rtol=0, atol=1e-6)
    assert_allclose(dS_ds, (step_model(u, s + h, t)[0] - step_model(u, s - h, t)[0]) / (2 * h),
                    rtol=0, atol=1e-6)
    # point symmetry of the edge-spread function of a symmetric PSF
    assert_allclose(step_model(-u, s, t)[0], 1 - S, rtol=0, atol=1e-12)


def test_fit_recovers_parameters_of_exact_profiles():
    rng = np.random.default_rng(0)
    n, W = 200, 20
    k = np.arange(W, dtype=float)
    x0 = 9.0 + rng.uniform(0, 1, n)
    s = rng.uniform(0.5, 2.0, n)
    t = rng.uniform(0, 1, n)
    direction = np.where(rng.uniform(size=n) < 0.5, 1.0, -1.0)
    y = 0.1 + 0.7 * step_model(direction[:, None] * (k - x0[:, None]), s[:, None], t[:, None])[0]
    res = fit_steps(y, np.ones_like(y, bool), direction, t, x0 + rng.normal(0, 0.3, n),
                    np.full(n, 1.0))
    assert res.converged.all()
    assert_allclose(res.x0, x0, rtol=0, atol=1e-7)
    assert_allclose(res.s, s, rtol=0, atol=1e-6)
    assert_allclose(res.B, 0.1, atol=1e-8)
    assert_allclose(res.C, 0.7, atol=1e-8)
