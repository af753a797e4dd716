"""The fast paths of the edge fit: shared-boundary model, early stopping, profile stride.

Checked against things outside the fast code: the pixel-integrated blurred-step model
S(u; s, t) = E[Phi((u + U1 + U2) / s)] (vision-notes section 2) by 40 x 40-point
Gauss-Legendre quadrature of its double integral; the least-squares optimum by
scipy.optimize.least_squares (an independent trust-region solver, tolerances 1e-14); and
straight edges rendered here from exact geometry (8 x 8 Gauss-Legendre pixel means).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.optimize import least_squares
from scipy.special import ndtr

from profilecheck.imaging import find_edges, fit_line
from profilecheck.imaging._stepfit import _profile_model, fit_steps

XG, WG = np.polynomial.legendre.leggauss(40)


def quad_step(u, s, t):
    """S(u; s, t) by quadrature of the pixel box(es) (definition, vision-notes section 2)."""
    a, b = np.meshgrid(0.5 * XG, 0.5 * t * XG, indexing="ij")
    w = np.outer(WG, WG) / 4
    return np.array([(ndtr((ui + a + b) / s) * w).sum() for ui in np.atleast_1d(u)])


@pytest.mark.parametrize("s", [0.3, 1.0, 2.5])
@pytest.mark.parametrize("t", [0.0, 0.003, 0.2, 0.7, 1.0])
@pytest.mark.parametrize("direction", [1.0, -1.0])
def test_shared_boundary_model_matches_quadrature(s, t, direction):
    W = 24
    # edge positions on and between sample centres and pixel boundaries (straddling cases)
    x0 = np.array([[11.0], [11.5], [11.37], [3.9], [20.2]])
    n = len(x0)
    S, dSu, dSs = _profile_model(x0, np.full((n, 1), s), np.full((n, 1), t),
                                 np.full((n, 1), direction), W)
    k = np.arange(W, dtype=float)
    for i in range(n):
        u = direction * (k - x0[i, 0])
        assert_allclose(S[i], quad_step(u, s, t), rtol=0, atol=1e-9)
        h = 1e-5   # central differences of the quadrature: independent derivatives
        assert_allclose(dSu[i], (quad_step(u + h, s, t) - quad_step(u - h, s, t)) / (2 * h),
                        rtol=0, atol=2e-6)
        assert_allclose(dSs[i], (quad_step(u, s + h, t) - quad_step(u, s - h, t)) / (2 * h),
                        rtol=0, atol=2e-6)


def _noisy_profiles(n, W, rng, sigma_n=0.01):
    k = np.arange(W, dtype=float)
    x0 = W / 2 - 0.5 + rng.uniform(-0.5, 0.5, n)
    s = rng.uniform(0.7, 2.0, n)
    t = rng.uniform(0.0, 1.0, n)
    d = np.where(rng.uniform(size=n) < 0.5, 1.0, -1.0)
    clean = np.array([0.1 + 0.7 * quad_step(d[i] * (k - x0[i]), s[i], t[i]) for i in range(n)])
    return clean + rng.normal(0, sigma_n, clean.shape), x0, s, t, d


def test_early_stop_reaches_the_least_squares_optimum():
    rng = np.random.default_rng(5)
    n, W = 24, 20
    y, x0, s, t, d = _noisy_profiles(n, W, rng)
    start = x0 + rng.normal(0, 0.1, n)
    res = fit_steps(y, np.ones_like(y, bool), d, t, start, np.full(n, 1.2))
    assert res.converged.all()
    k = np.arange(W, dtype=float)
    for i in range(n):
        def resid(p, i=i):
            return y[i] - (p[1] + p[2] * quad_step(d[i] * (k - p[0]), p[3], t[i]))
        ref = least_squares(resid, [res.x0[i], res.B[i], res.C[i], res.s[i]],
                            xtol=1e-14, ftol=1e-14, gtol=1e-14)
        # the fit's stopping rule leaves ~1e-6 px; noise here is ~0.03 px per profile
        assert abs(res.x0[i] - ref.x[0]) < 2e-5
        assert abs(res.s[i] - ref.x[3]) < 2e-4
        assert res.rss[i] == pytest.approx(2 * ref.cost, rel=1e-6)


def test_max_shift_abandons_only_runaway_profiles():
    rng = np.random.default_rng(6)
    n, W = 40, 20
    y, x0, s, t, d = _noisy_profiles(n, W, rng)
    y[:4] = 0.4 + rng.normal(0, 0.01, (4, W))     # no step at all: the fit wanders off
    y[:4, :3] = 0.1                                # ... toward a fake edge at the far end
    start = x0.copy()
    free = fit_steps(y, np.ones_like(y, bool), d, t, start, np.full(n, 1.2))
    held = fit_steps(y, np.ones_like(y, bool), d, t, start, np.full(n, 1.2), max_shift=2.5)
    far = np.abs(free.x0 - start) > 2.5
    assert far[:4].any()
    assert not held.converged[far].any()
    ok = ~far[4:]
    assert_allclose(held.x0[4:][ok], free.x0[4:][ok], rtol=0, atol=1e-9)
    assert held.converged[4:][ok].all()


def _halfplane(shape, point, normal_deg, sigma_b, sigma_n, rng):
    a = math.radians(normal_deg)
    n = np.array([math.cos(a), math.sin(a)])
    yy, xx = np.mgrid[0:shape[0], 0:shape[1]].astype(float)
    xg, wg = np.polynomial.legendre.leggauss(8)
    acc = np.zeros(shape)
    for u, wu in zip(xg / 2, wg / 2):
        for v, wv in zip(xg / 2, wg / 2):
            d = (xx + u - point[0]) * n[0] + (yy + v - point[1]) * n[1]
            acc += wu * wv * ndtr(d / sigma_b)
    img = (30 + 190 * acc + rng.normal(0, sigma_n, shape)) / 255.0
    return np.clip(img, 0, 1), n


def test_step_keeps_every_kth_profile_with_honest_uncertainty():
    rng = np.random.default_rng(7)
    shape, point = (150, 120), (61.3, 74.6)
    img, n = _halfplane(shape, point, 17.0, 1.2, 2.0, rng)
    full = find_edges(img)
    half = find_edges(img, step=2)
    assert 0.4 * len(full) <= len(half) <= 0.6 * len(full)
    # the points kept are the same profiles, fitted the same way (normals from neighbours
    # farther apart may change the pixel-box shape by a hair)
    d = np.abs(half.xy[:, None, :] - full.xy[None, :, :]).sum(2).min(1)
    assert np.median(d) < 1e-3
    lf, lh = fit_line(full.xy, weights=1 / full.std_px ** 2), fit_line(half.xy,
                                                                     weights=1 / half.std_px ** 2)
    # truth: the geometric line through `point` with normal n (analytic render)
    for lf_ in (lf, lh):
        assert abs(lf_.distance(np.array([point]))[0]) < 4 * lf_.std_offset_px + 1e-3
    # fewer points: the reported uncertainty grows by about sqrt(2)
    assert 1.2 < lh.std_offset_px / lf.std_offset_px < 1.7


@pytest.mark.parametrize("bad", [0, -1, 1.5, True, "2"])
def test_step_must_be_a_positive_int(bad):
    img = np.full((40, 40), 0.8)
    img[:, :20] = 0.1
    with pytest.raises(ValueError, match="step"):
        find_edges(img, step=bad)
