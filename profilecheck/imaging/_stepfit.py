"""Pixel-exact blurred-step model and its vectorised least-squares fit.

A straight edge blurred by a Gaussian PSF of std sigma_b and integrated over square pixels,
sampled along a pixel row (or column), gives at sample k

    mu_k = B + C * S(dir * (k - x0); s, t),
    S(u; s, t) = E[ Phi((u + U1 + U2) / s) ],  U1 ~ U(-1/2, 1/2),  U2 ~ U(-t/2, t/2),

in units of the sampling axis: s = sigma_b / |n_a| and t = |n_o / n_a| where n = (n_a, n_o)
is the unit edge normal split into the sampling axis and the other axis (the pixel box seen
along the normal is the sum of two uniforms of widths |n_a| and |n_o|). The samples are the
pixels themselves, so no interpolation enters and nothing locks to the pixel grid; for an
axis-aligned edge t = 0 and S is the familiar pixel-integrated erf (vision-notes section 2);
for t < 0.03 s the second box is folded into the Gaussian, which changes S by less than
1.2e-10 of the contrast.

Closed form with G(z) = z Phi(z) + phi(z) and H(z) = ((z^2 + 1) Phi(z) + z phi(z)) / 2
(the first and second antiderivatives of Phi):

    S = s^2 / t * [H(z++) - H(z+-) - H(z-+) + H(z--)],  z_ab = (u + a/2 + b t/2) / s.

The fit is Levenberg-Marquardt (Marquardt, J. SIAM 11(2):431-441, 1963) on all profiles at
once: (x0, B, C, s) free per profile, t fixed from the local edge direction. Inside the fit
the model is evaluated by :func:`_profile_model`, which takes the antiderivatives at the
pixel boundaries that neighbouring samples share (same values as :func:`step_model` to
~1e-14); the iterations stop once a step moves the edge by less than 1e-3 px and close with
one Gauss-Newton step from the derivatives already at hand, which leaves the position
within ~1e-6 px of the least-squares optimum (measured: 2e-7 px median, 6e-5 px worst, over
a 2 MP thread image; the per-point noise there is 0.025 px).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.special import ndtr

__all__ = ["step_model", "fit_steps", "StepFits"]

_INV_SQRT_2PI = 1.0 / np.sqrt(2.0 * np.pi)
# where t < 0.03 s the second box is folded into the Gaussian (its variance t^2 / 12 added to
# s^2; an edge within a degree or two of a pixel axis): the model then differs from the
# two-box form by at most 1.5e-4 (t / s)^4, 1.2e-10 of the contrast (the factor computed here
# over s = 0.5-2, t = 0.1-1: the fourth-cumulant term of the box)
_FOLD_T_OVER_S = 0.03
_S_MIN = 0.05
_TOL_X0 = 1e-3  # px, step size that ends the iterations (see fit_steps)
_TOL_S = 1e-2


def _phi(z):
    return _INV_SQRT_2PI * np.exp(-0.5 * z * z)


def _G(z, Phi, phi):
    return z * Phi + phi


def _H(z, Phi, phi):
    return 0.5 * ((z * z + 1.0) * Phi + z * phi)


def _terms(u, s, t):
    """S, dS/du, dS/ds for u <= 0 (callers reflect), shapes broadcast."""
    small = t < _FOLD_T_OVER_S * s
    tt = np.where(small, 1.0, t)
    # single-box branch with the second box folded into the variance: s_eff^2 = s^2 + t^2/12
    se = np.sqrt(s * s + np.where(small, t * t / 12.0, 0.0))
    za, zb = (u + 0.5) / se, (u - 0.5) / se
    Pa, Pb = ndtr(za), ndtr(zb)
    pa, pb = _phi(za), _phi(zb)
    Ga, Gb = _G(za, Pa, pa), _G(zb, Pb, pb)
    S1 = se * (Ga - Gb)
    dS1_du = Pa - Pb
    # d/dse [se (G(c/se))] = G - z Phi = phi
    dS1_ds = (pa - pb) * (s / se)
    # two-box branch
    h = 0.5 * tt
    acc_S = 0.0
    acc_u = 0.0
    acc_s = 0.0
    for a, b, eps in ((0.5, h, 1.0), (0.5, -h, -1.0), (-0.5, h, -1.0), (-0.5, -h, 1.0)):
        z = (u + a + b) / s
        P = ndtr(z)
        p = _phi(z)
        G = _G(z, P, p)
        H = _H(z, P, p)
        acc_S = acc_S + eps * H
        acc_u = acc_u + eps * G
        acc_s = acc_s + eps * (2.0 * H - z * G)
    S2 = s * s / tt * acc_S
    dS2_du = s / tt * acc_u
    dS2_ds = s / tt * acc_s
    S = np.where(small, S1, S2)
    dS_du = np.where(small, dS1_du, dS2_du)
    dS_ds = np.where(small, dS1_ds, dS2_ds)
    return S, dS_du, dS_ds


def step_model(u, s, t):
    """Evaluate S(u; s, t) and its derivatives with respect to u and s.

    Parameters
    ----------
    u : ndarray
        Sample position minus edge position, in sampling-axis pixels (+ toward bright).
    s : ndarray or float
        Gaussian std in sampling-axis pixels (> 0).
    t : ndarray or float
        Width of the second pixel box in sampling-axis pixels, >= 0 (<= 1 when the profile
        axis is the one closer to the normal).

    Returns
    -------
    S, dS_du, dS_ds : ndarray
        S rises from 0 (dark, u -> -inf) to 1 (bright); symmetric: S(-u) = 1 - S(u).
    """
    u = np.asarray(u, dtype=np.float64)
    s = np.asarray(s, dtype=np.float64)
    t = np.asarray(t, dtype=np.float64)
    # evaluate at -|u| where every term is small, then reflect (no cancellation in the tails)
    neg = u > 0
    S, du, ds = _terms(-np.abs(u), s, t)
    S = np.where(neg, 1.0 - S, S)
    ds = np.where(neg, -ds, ds)
    return S, du, ds


@dataclass(frozen=True)
class StepFits:
    """Per-profile results of :func:`fit_steps` (all arrays of shape (N,))."""

    x0: np.ndarray        # edge position, sampling-axis px from sample 0
    B: np.ndarray         # dark level
    C: np.ndarray         # bright minus dark
    s: np.ndarray         # Gaussian std, sampling-axis px
    var_x0_unit: np.ndarray  # (J^T J)^-1_00: var(x0) per unit noise variance
    rss: np.ndarray       # residual sum of squares
    dof: np.ndarray       # valid samples minus 4
    converged: np.ndarray


def _profile_model(x0, s, t, dr, W: int):
    """S, dS/du, dS/ds at samples k = 0..W-1 of many profiles (the fitting hot path).

    Same values as :func:`step_model` at u = dr * (k - x0), computed from the W + 1 pixel
    boundaries k -/+ 1/2 that neighbouring samples share: S_k is a first difference of an
    antiderivative taken at the boundaries, so each boundary costs one (single box) or two
    (two boxes) evaluations of Phi and phi instead of two or four per sample.

    With Q(w) = H((w + t/2) / s) - H((w - t/2) / s) at the boundaries w_j = dr (j - 1/2 - x0),
    S_k = dr s^2 / t (Q_{k+1} - Q_k); dS/du takes G for H and s / t for s^2 / t; and as
    2 H(z) - z G(z) = Phi(z), dS/ds takes Phi for H (module notes). Small t (t < 0.03 s,
    within 1.2e-10 of the contrast, see ``_FOLD_T_OVER_S``): the single box
    with s_e^2 = s^2 + t^2 / 12 and s_e G(w / s_e) for Q. Boundaries on the bright side
    (w > 0), where H and G grow without bound, are evaluated at -w and carried back by the
    exact reflections H(z) = (z^2 + 1) / 2 - H(-z), G(z) = z + G(-z), Phi(z) = 1 - Phi(-z):
    Q(w) = Q(-w) + w t / s^2, so the growing part is differenced as the plain number w and
    no difference of large terms loses precision.

    Parameters
    ----------
    x0, s, t, dr : ndarray (n, 1)
        Edge position (sample units from sample 0), blur, second-box width, direction.
    W : int
        Samples per profile.

    Returns
    -------
    S, dS_du, dS_ds : ndarray (n, W)
    """
    n = x0.shape[0]
    if n == 0:
        # no profiles (e.g. none with samples enough on both sides): empty, not None
        return np.empty((0, W)), np.empty((0, W)), np.empty((0, W))
    w = dr * ((np.arange(W + 1, dtype=np.float64) - 0.5)[None, :] - x0)
    pos = w > 0
    v = -np.abs(w)
    sgn = np.where(pos, -1.0, 1.0)
    lin_S = np.diff(np.where(pos, w, 0.0), axis=1)
    lin_u = np.diff(pos.astype(np.float64), axis=1)
    small = t[:, 0] < _FOLD_T_OVER_S * s[:, 0]
    S = dSu = dSs = None
    for sel, two in ((~small, True), (small, False)):
        if not sel.any():
            continue
        whole = bool(sel.all())
        pick = (lambda q: q) if whole else (lambda q: q[sel])
        qS, qu, qs, cS, cu, cs = _boundary_terms(pick(v), pick(s), pick(t), two)
        ds = pick(dr)
        vS = ds * (cS * np.diff(qS, axis=1) + pick(lin_S))
        vu = ds * (cu * np.diff(pick(sgn) * qu, axis=1) + pick(lin_u))
        vsig = (ds * cs) * np.diff(qs, axis=1)
        if whole:
            return vS, vu, vsig
        if S is None:
            S, dSu, dSs = np.empty((n, W)), np.empty((n, W)), np.empty((n, W))
        S[sel], dSu[sel], dSs[sel] = vS, vu, vsig
    return S, dSu, dSs


def _boundary_terms(v, s, t, two: bool):
    """Antiderivative terms at pixel boundaries v (n, m) for :func:`_profile_model`.

    Returns (qS, qu, qs, cS, cu, cs): S = dr cS diff(qS), dS/du = dr cu diff(qu),
    dS/ds = dr cs diff(qs) (dr and the reflection sign applied by the caller).
    """
    if two:
        h = 0.5 * t
        zp = (v + h) / s
        zm = (v - h) / s
        Pp, Pm = ndtr(zp), ndtr(zm)
        pp, pm = _phi(zp), _phi(zm)
        Gp, Gm = _G(zp, Pp, pp), _G(zm, Pm, pm)
        # H = ((z^2 + 1) Phi + z phi) / 2 = (z G + Phi) / 2
        qS = 0.5 * ((zp * Gp + Pp) - (zm * Gm + Pm))
        c = s / t
        return qS, Gp - Gm, Pp - Pm, c * s, c, c
    se = np.sqrt(s * s + t * t / 12.0)
    z = v / se
    P = ndtr(z)
    p = _phi(z)
    return _G(z, P, p), P, p, se, 1.0, s / se


def _normal_eqs(S, dSu, dSs, C, dr, m, r):
    """J^T J (n, 4, 4) and J^T r (n, 4) of the residuals r = (y - mu) * m."""
    n, W = S.shape
    J = np.empty((n, 4, W))
    J[:, 0] = (-C * dr) * dSu * m
    J[:, 1] = m
    J[:, 2] = S * m
    J[:, 3] = C * dSs * m
    A = J @ J.transpose(0, 2, 1)
    g = (J @ r[:, :, None])[:, :, 0]
    return A, g


def fit_steps(y, mask, direction, t, x0, s0, *, max_iter: int = 40,
              max_shift: float | None = None) -> StepFits:
    """Fit the blurred-step model to many profiles at once (Levenberg-Marquardt).

    Parameters
    ----------
    y : ndarray (N, W)
        Samples; sample k of a profile sits at integer position k along its sampling axis.
    mask : ndarray of bool or float (N, W)
        Which samples to use (inside the image, not clipped, not beyond a neighbouring edge);
        float values act as weights on the residuals.
    direction : ndarray (N,)
        +1 if intensity rises (dark -> bright) with k, -1 if it falls.
    t : ndarray (N,)
        Second-box width of each profile (see module notes), fixed.
    x0, s0 : ndarray (N,)
        Starting edge position and blur.
    max_iter : int
        Iteration limit.
    max_shift : float, optional
        Abandon (``converged`` False) a profile whose edge position moves farther than this
        from its start: for callers that reject such profiles anyway, it saves the many
        iterations a profile without a clean step can take. None (default): never.

    Returns
    -------
    StepFits
    """
    y = np.asarray(y, dtype=np.float64)
    m = np.asarray(mask, dtype=np.float64)
    N, W = y.shape
    k = np.arange(W, dtype=np.float64)[None, :]
    dr = np.asarray(direction, dtype=np.float64)[:, None]
    tt = np.clip(np.asarray(t, dtype=np.float64), 0.0, 2.0)[:, None]
    # starting levels: means of the first and of the last three valid samples (the dark
    # end is the first for a rising profile)
    valid = m > 0
    first3 = valid & (np.cumsum(valid, axis=1) <= 3)
    last3 = valid & (np.cumsum(valid[:, ::-1], axis=1)[:, ::-1] <= 3)
    mean_first = (y * first3).sum(1) / np.maximum(first3.sum(1), 1)
    mean_last = (y * last3).sum(1) / np.maximum(last3.sum(1), 1)
    rising = dr[:, 0] > 0
    B = np.where(rising, mean_first, mean_last)
    Cc = np.where(rising, mean_last, mean_first) - B
    p = np.stack([np.asarray(x0, float), B, Cc, np.maximum(np.asarray(s0, float), 0.3)], axis=1)
    p_start = p[:, 0].copy()

    S, dSu, dSs = _profile_model(p[:, 0:1], p[:, 3:4], tt, dr, W)
    r = (y - (p[:, 1:2] + p[:, 2:3] * S)) * m
    cost = (r * r).sum(1)
    lam = np.full(N, 1e-3)
    active = np.ones(N, dtype=bool)
    converged = np.zeros(N, dtype=bool)
    polish = np.zeros(N, dtype=bool)
    eye = np.eye(4)
    for _ in range(max_iter):
        if not active.any():
            break
        ia = np.flatnonzero(active)
        full = len(ia) == N
        pa = p[ia]
        A, g = _normal_eqs(S if full else S[ia], dSu if full else dSu[ia],
                           dSs if full else dSs[ia], pa[:, 2:3], dr[ia],
                           m if full else m[ia], r if full else r[ia])
        D = np.einsum("nii->ni", A)
        Ad = A + (lam[ia][:, None] * np.maximum(D, 1e-12))[:, :, None] * eye
        step, ok = _spd_solve4(Ad, g)
        for j in np.flatnonzero(~ok):
            try:
                step[j] = np.linalg.solve(Ad[j], g[j])
            except np.linalg.LinAlgError:
                step[j] = 0.0
                active[ia[j]] = False
        # a blur already at its lower clamp and pushed further down: solve with it held
        # (active-set step), so the edge position keeps converging at full speed
        pin = (pa[:, 3] <= _S_MIN * (1 + 1e-9)) & (step[:, 3] < 0)
        if pin.any():
            Ap, gp = Ad[pin].copy(), g[pin].copy()
            Ap[:, 3, :] = 0.0
            Ap[:, :, 3] = 0.0
            Ap[:, 3, 3] = 1.0
            gp[:, 3] = 0.0
            sp, okp = _spd_solve4(Ap, gp)
            if not okp.all():
                sp[~okp] = np.linalg.solve(Ap[~okp], gp[~okp][:, :, None])[:, :, 0]
            step[pin] = sp
        step[:, 0] = np.clip(step[:, 0], -2.0, 2.0)
        pn = pa + step
        pn[:, 3] = np.clip(pn[:, 3], _S_MIN, 50.0)
        if max_shift is not None:
            stray = np.abs(pn[:, 0] - p_start[ia]) > max_shift
            if stray.any():
                active[ia[stray]] = False
                keep = ~stray
                ia, pa, pn, step = ia[keep], pa[keep], pn[keep], step[keep]
                if len(ia) == 0:
                    break
        full = len(ia) == N
        Sn, dSun, dSsn = _profile_model(pn[:, 0:1], pn[:, 3:4], tt if full else tt[ia],
                                        dr if full else dr[ia], W)
        rn = ((y if full else y[ia]) - (pn[:, 1:2] + pn[:, 2:3] * Sn)) * (m if full else m[ia])
        cn = (rn * rn).sum(1)
        better = cn <= cost[ia]
        ib = ia[better]
        if full and better.all():      # the first iterations: no scattering needed
            p, r, S, dSu, dSs = pn, rn, Sn, dSun, dSsn
        else:
            p[ib] = pn[better]
            r[ib], S[ib], dSu[ib], dSs[ib] = rn[better], Sn[better], dSun[better], dSsn[better]
        # converged when the edge position and blur stop moving; a blur pinned at its lower
        # clamp (an edge sharper than the pixel can show) counts as settled. Gauss-Newton
        # steps shrink at least linearly, by a factor of about noise / contrast (measured
        # 0.02 at 1 % noise), so after an accepted step under 1e-3 px the position is within
        # ~2e-5 px of the optimum; one more Gauss-Newton step from the residuals and
        # derivatives already at hand (below, no model evaluation) takes it to ~1e-6 px
        at_clamp = pn[:, 3] <= _S_MIN * (1 + 1e-12)
        small_step = (np.abs(step[:, 0]) < _TOL_X0) & ((np.abs(step[:, 3]) < _TOL_S) | at_clamp)
        rel = np.abs(cost[ia] - cn) <= 1e-10 * np.maximum(cost[ia], 1e-30)
        cost[ib] = cn[better]
        lam[ib] = np.maximum(lam[ib] * 0.2, 1e-9)
        lam[ia[~better]] *= 10.0
        done = better & (small_step | rel)
        done |= lam[ia] > 1e8
        converged[ia[done & better]] = True
        converged[ia[~better & (lam[ia] > 1e8)]] = True  # at a minimum within precision
        polish[ia[done & better & small_step]] = True
        polish[ia[~better]] = False
        active[ia[done]] = False
    # final Jacobian at the solution, and the closing Gauss-Newton step
    A, g = _normal_eqs(S, dSu, dSs, p[:, 2:3], dr, m, r)
    _polish(p, A, g, polish, cost)
    var0 = _var_x0(A)
    dof = m.sum(1) - 4.0
    return StepFits(x0=p[:, 0], B=p[:, 1], C=p[:, 2], s=p[:, 3], var_x0_unit=var0,
                    rss=cost, dof=dof, converged=converged)


def _polish(p, A, g, sel, cost) -> None:
    """One undamped Gauss-Newton step, in place, for the profiles ``sel`` (A, g at p).

    The blur stays put where it sits at its lower clamp; a step larger than the iteration
    tolerance allows (a badly conditioned profile) is not taken. ``cost`` takes the
    decrease the linearised model predicts, g . step (exact to second order in a step of
    ~1e-5 px).
    """
    ii = np.flatnonzero(sel)
    if len(ii) == 0:
        return
    Ai, gi = A[ii].copy(), g[ii].copy()
    hold = p[ii, 3] <= _S_MIN * (1 + 1e-9)
    Ai[hold, 3, :] = 0.0
    Ai[hold, :, 3] = 0.0
    Ai[hold, 3, 3] = 1.0
    gi[hold, 3] = 0.0
    d = np.sqrt(np.maximum(np.einsum("nii->ni", Ai), 1e-300))
    As = Ai / d[:, :, None] / d[:, None, :]       # Jacobi scaling
    step, solved = _spd_solve4(As, gi / d)
    step /= d
    ok = solved & np.all(np.isfinite(step), axis=1) & (np.abs(step[:, 0]) < 10 * _TOL_X0) & (
        np.abs(step[:, 3]) < 10 * _TOL_S)
    pn = p[ii[ok]] + step[ok]
    pn[:, 3] = np.clip(pn[:, 3], _S_MIN, 50.0)
    p[ii[ok]] = pn
    cost[ii[ok]] = np.maximum(cost[ii[ok]] - (gi[ok] * step[ok]).sum(1), 0.0)


def _var_x0(A):
    """(A^-1)_00 of each 4 x 4 normal matrix; NaN where A is singular.

    Solved by Cholesky on the unit-diagonal scaled matrix (Jacobi scaling); a matrix that
    factorisation refuses takes the general solve, and a non-positive result from that the
    pseudo-inverse.
    """
    n = A.shape[0]
    d = np.sqrt(np.maximum(np.einsum("nii->ni", A), 1e-300))
    As = A / d[:, :, None] / d[:, None, :]
    e0 = np.zeros((n, 4))
    e0[:, 0] = 1.0
    x, ok = _spd_solve4(As, e0)
    v = x[:, 0] / (d[:, 0] ** 2)
    bad = ~(ok & np.isfinite(v) & (v > 0))
    if not bad.any():
        return v
    # the rare matrix Cholesky refuses: the general solve, else the pseudo-inverse
    out = np.where(bad, np.nan, v)
    ii = np.flatnonzero(bad & (np.abs(np.linalg.det(A)) > 1e-300))
    if len(ii):
        Ai = A[ii]
        di = d[ii]
        Asi = As[ii]
        try:
            vi = np.linalg.solve(Asi, e0[ii][:, :, None])[:, 0, 0] / (di[:, 0] ** 2)
        except np.linalg.LinAlgError:
            vi = np.full(len(ii), np.nan)
        worse = ~(np.isfinite(vi) & (vi > 0))
        if worse.any():
            vi[worse] = np.linalg.pinv(Ai[worse])[:, 0, 0]
        out[ii] = vi
    return out


def _spd_solve4(A, b):
    """Solve A x = b for many symmetric positive definite 4 x 4 systems at once.

    Cholesky factorisation written out element by element (A = L L^T, then forward and back
    substitution; Golub & Van Loan, Matrix Computations, 4th ed., algorithm 4.2.1), which on
    thousands of small systems is several times faster than a batched general solve.

    Parameters
    ----------
    A : ndarray (n, 4, 4)
    b : ndarray (n, 4)

    Returns
    -------
    x : ndarray (n, 4)
    ok : ndarray of bool (n,)
        False where a pivot is not positive and finite (not positive definite to working
        precision): solve those rows another way.
    """
    a = [[A[:, i, j] for j in range(4)] for i in range(4)]
    with np.errstate(invalid="ignore", divide="ignore"):
        p0 = a[0][0]
        l00 = np.sqrt(p0)
        l10, l20, l30 = a[1][0] / l00, a[2][0] / l00, a[3][0] / l00
        p1 = a[1][1] - l10 * l10
        l11 = np.sqrt(p1)
        l21 = (a[2][1] - l20 * l10) / l11
        l31 = (a[3][1] - l30 * l10) / l11
        p2 = a[2][2] - l20 * l20 - l21 * l21
        l22 = np.sqrt(p2)
        l32 = (a[3][2] - l30 * l20 - l31 * l21) / l22
        p3 = a[3][3] - l30 * l30 - l31 * l31 - l32 * l32
        l33 = np.sqrt(p3)
        y0 = b[:, 0] / l00
        y1 = (b[:, 1] - l10 * y0) / l11
        y2 = (b[:, 2] - l20 * y0 - l21 * y1) / l22
        y3 = (b[:, 3] - l30 * y0 - l31 * y1 - l32 * y2) / l33
        x3 = y3 / l33
        x2 = (y2 - l32 * x3) / l22
        x1 = (y1 - l21 * x2 - l31 * x3) / l11
        x0 = (y0 - l10 * x1 - l20 * x2 - l30 * x3) / l00
    x = np.stack([x0, x1, x2, x3], axis=1)
    ok = (p0 > 0) & (p1 > 0) & (p2 > 0) & (p3 > 0) & np.isfinite(x).all(axis=1)
    x[~ok] = 0.0
    return x, ok
