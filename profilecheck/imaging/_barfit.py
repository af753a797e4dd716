"""Pixel-exact blurred-bar model (a thin dark line) and its batched least-squares fit.

A dark line of width w centred at c, seen along a pixel row (or column) that crosses it, is
the difference of two blurred steps of the same blur and pixel box (:mod:`._stepfit`):

    mu_k = A - C * [S(k - l; s, t) - S(k - r; s, t)],   l = c - w / 2,  r = c + w / 2,

with S the pixel-integrated blurred step of :func:`._stepfit.step_model` (vision-notes
section 2), A the bright level, C the contrast (A - C is the dark level of a line wide
enough to reach it), s the Gaussian std and t the second pixel box, both in sampling-axis
units. Fitting both edges of a line jointly removes the bias a one-edge step fit takes from
the blurred tail of the line's other edge (the window of a step fit must stop short of it).

Identifiability (worked out in the module notes of :func:`fit_bars`): the centre c is
decoupled from (w, A, C, s) by the symmetry of the bar, so it is well determined at any
width. For a line narrower than about 2-3 sigma_e the bar tends to a Gaussian dip of area
C w and variance s^2 + w^2 / 12 + 1/12: only C w and s^2 + w^2 / 12 are then determined to
first order, and w itself only through the fourth cumulant of the profile (-w^4 / 120), so
w, C and s are nearly degenerate and the covariance says so. Callers must judge the width
from ``cov`` before using it; nothing here ties C or s to outside knowledge.

The fit is Levenberg-Marquardt (Marquardt, J. SIAM 11(2):431-441, 1963) on all profiles at
once, parameters (c, w, A, C, s) free per profile, t fixed from the line direction.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._stepfit import _S_MIN, _profile_model, step_model

__all__ = ["bar_model", "fit_bars", "BarFits", "fit_bar_line", "BarLineFit"]

#: Narrowest width (sampling-axis px) the fit may take: below it the model is a Gaussian dip
#: whatever w is (the fourth-cumulant term w^4 / 120 is < 1e-6 px^4) and w is undetermined.
_W_MIN = 0.05
#: Centre and width steps (px) that end the iterations: far below the per-profile noise of a
#: centre (~0.02 px at 1 % noise; common practice, no source).
_TOL_C = 1e-4
_TOL_W = 1e-3
_NP = 5         # parameters per profile: c, w, A, C, s


def _parts(c, w, s, t, W: int):
    """S of both edges and their derivatives at samples k = 0..W-1 (arrays (n, W))."""
    one = np.ones_like(c)
    Sl, dul, dsl = _profile_model(c - 0.5 * w, s, t, one, W)
    Sr, dur, dsr = _profile_model(c + 0.5 * w, s, t, one, W)
    return Sl, dul, dsl, Sr, dur, dsr


def bar_model(k, c, w, A, C, s, t):
    """The bar model at sample positions ``k`` of one profile (arrays broadcast).

    Parameters
    ----------
    k : ndarray
        Sample positions along the sampling axis (px).
    c, w : float
        Line centre and width along the sampling axis (px).
    A, C : float
        Bright level and contrast (the dark level of a wide line is A - C).
    s, t : float
        Gaussian std and second pixel box width (sampling-axis px), as in
        :func:`._stepfit.step_model`.

    Returns
    -------
    ndarray
        A - C [S(k - c + w/2) - S(k - c - w/2)].
    """
    k = np.asarray(k, dtype=np.float64)
    Sl, _, _ = step_model(k - (c - 0.5 * w), s, t)
    Sr, _, _ = step_model(k - (c + 0.5 * w), s, t)
    return A - C * (Sl - Sr)


@dataclass(frozen=True)
class BarFits:
    """Per-profile results of :func:`fit_bars` (arrays of shape (N,), ``cov_unit`` (N, 5, 5)).

    ``cov_unit`` is (J^T J)^-1 at the solution in the parameter order (c, w, A, C, s):
    multiply by the noise variance (e.g. ``rss / dof``) for the covariance (Gauss-Markov).
    ``at_w_min``: the width sits at its lower clamp (a Gaussian dip; width undetermined).
    """

    c: np.ndarray
    w: np.ndarray
    A: np.ndarray
    C: np.ndarray
    s: np.ndarray
    cov_unit: np.ndarray
    rss: np.ndarray
    dof: np.ndarray
    converged: np.ndarray
    at_w_min: np.ndarray


def _jacobian(C, Sl, dul, dsl, Sr, dur, dsr, m):
    """J (n, 5, W) of mu with respect to (c, w, A, C, s), rows weighted by the mask m."""
    n, W = Sl.shape
    J = np.empty((n, _NP, W))
    # l = c - w/2, r = c + w/2 and d S(k - x0) / d x0 = -dS/du
    J[:, 0] = C * (dul - dur) * m
    J[:, 1] = -0.5 * C * (dul + dur) * m
    J[:, 2] = m
    J[:, 3] = -(Sl - Sr) * m
    J[:, 4] = -C * (dsl - dsr) * m
    return J


def _solve(A, g):
    """Batched solve of the (n, 5, 5) systems with Jacobi scaling; rows that fail: 0, False."""
    d = np.sqrt(np.maximum(np.einsum("nii->ni", A), 1e-300))
    As = A / d[:, :, None] / d[:, None, :]
    x = np.zeros_like(g)
    ok = np.zeros(len(g), dtype=bool)
    try:
        x = np.linalg.solve(As, (g / d)[:, :, None])[:, :, 0] / d
        ok = np.all(np.isfinite(x), axis=1)
    except np.linalg.LinAlgError:
        for j in range(len(g)):
            try:
                x[j] = np.linalg.solve(As[j], g[j] / d[j]) / d[j]
                ok[j] = bool(np.all(np.isfinite(x[j])))
            except np.linalg.LinAlgError:
                x[j] = 0.0
    x[~ok] = 0.0
    return x, ok


def _cov(A):
    """(A^-1) of each 5 x 5 normal matrix (Jacobi scaled; pseudo-inverse where singular)."""
    d = np.sqrt(np.maximum(np.einsum("nii->ni", A), 1e-300))
    As = A / d[:, :, None] / d[:, None, :]
    out = np.linalg.pinv(As, hermitian=True)
    return out / d[:, :, None] / d[:, None, :]


def fit_bars(y, mask, t, c0, w0, s0, *, c_max=None, max_iter: int = 60) -> BarFits:
    """Fit the blurred-bar model to many profiles at once (Levenberg-Marquardt).

    Parameters
    ----------
    y : ndarray (N, W)
        Samples; sample k of a profile sits at position k along its sampling axis, and the
        line is dark on a bright field.
    mask : ndarray of bool or float (N, W)
        Samples to use (inside the image, not clipped, clear of neighbouring lines); float
        values weight the residuals.
    t : ndarray (N,)
        Second-box width of each profile (|n_o / n_a| of the line normal), fixed.
    c0, w0, s0 : ndarray (N,)
        Starting centre, width and blur (sampling-axis px).
    c_max : ndarray (N,), optional
        Upper bound on the contrast C (e.g. the bright level minus the zero-light level, as
        no line is darker than no light). None: unbounded.
    max_iter : int
        Iteration limit.

    Returns
    -------
    BarFits

    Notes
    -----
    Starting levels: A from the brightest quarter of each profile's valid samples, C from
    A minus the darkest sample. The width is kept >= 0.05 px and the blur >= the step fit's
    lower clamp; both clamps hold by projection (the clamped parameter is held for the
    step). The iterations end once the centre moves by less than 1e-4 px and the width by
    less than 1e-3 px, or the cost stops falling. ``cov_unit`` is the unit-noise inverse of
    J^T J at the solution (Gauss-Markov); for a thin line its (w, w) element is large and
    (w, C), (w, s) correlations are near +/-1 (module notes).
    """
    y = np.asarray(y, dtype=np.float64)
    m = np.asarray(mask, dtype=np.float64)
    N, W = y.shape
    tt = np.clip(np.asarray(t, dtype=np.float64), 0.0, 2.0)[:, None]
    cmax = np.full(N, np.inf) if c_max is None else np.asarray(c_max, dtype=np.float64).copy()
    valid = m > 0
    big = np.where(valid, y, -np.inf)
    small = np.where(valid, y, np.inf)
    nv = np.maximum(valid.sum(1), 1)
    srt = np.sort(np.where(valid, y, np.nan), axis=1)
    q = np.clip((0.75 * (nv - 1)).astype(int), 0, W - 1)
    A0 = srt[np.arange(N), q]
    A0 = np.where(np.isfinite(A0), A0, big.max(1))
    C0 = np.maximum(A0 - small.min(1), 1e-3)
    p = np.stack([np.asarray(c0, float), np.maximum(np.asarray(w0, float), 2 * _W_MIN), A0,
                  np.minimum(C0, cmax), np.maximum(np.asarray(s0, float), 0.3)], axis=1)
    p = np.where(np.isfinite(p), p, 1.0)

    def model(pp, sel):
        Sl, dul, dsl, Sr, dur, dsr = _parts(pp[:, 0:1], pp[:, 1:2], pp[:, 4:5], tt[sel], W)
        mu = pp[:, 2:3] - pp[:, 3:4] * (Sl - Sr)
        return mu, (Sl, dul, dsl, Sr, dur, dsr)

    allr = np.arange(N)
    mu, parts = model(p, allr)
    r = (y - mu) * m
    cost = (r * r).sum(1)
    lam = np.full(N, 1e-3)
    active = np.ones(N, dtype=bool)
    converged = np.zeros(N, dtype=bool)
    eye = np.eye(_NP)
    # the derivatives of every profile at its current parameters
    Sl, dul, dsl, Sr, dur, dsr = (a.copy() for a in parts)
    for _ in range(max_iter):
        ia = np.flatnonzero(active)
        if len(ia) == 0:
            break
        pa = p[ia]
        J = _jacobian(pa[:, 3:4], Sl[ia], dul[ia], dsl[ia], Sr[ia], dur[ia], dsr[ia], m[ia])
        A = J @ J.transpose(0, 2, 1)
        g = (J @ r[ia][:, :, None])[:, :, 0]
        D = np.einsum("nii->ni", A)
        Ad = A + (lam[ia][:, None] * np.maximum(D, 1e-12))[:, :, None] * eye
        # parameters at a clamp and pushed further into it are held for this step
        hold = np.zeros((len(ia), _NP), dtype=bool)
        step, _ = _solve(Ad, g)
        hold[:, 1] = (pa[:, 1] <= _W_MIN * (1 + 1e-9)) & (step[:, 1] < 0)
        hold[:, 3] = (pa[:, 3] >= cmax[ia] * (1 - 1e-9)) & (step[:, 3] > 0)
        hold[:, 4] = (pa[:, 4] <= _S_MIN * (1 + 1e-9)) & (step[:, 4] < 0)
        hh = hold.any(1)
        if hh.any():
            Ah, gh = Ad[hh].copy(), g[hh].copy()
            for j in (1, 3, 4):
                hj = hold[hh, j]
                Ah[hj, j, :] = 0.0
                Ah[hj, :, j] = 0.0
                Ah[hj, j, j] = 1.0
                gh[hj, j] = 0.0
            step[hh], _ = _solve(Ah, gh)
        step[:, 0] = np.clip(step[:, 0], -1.0, 1.0)
        step[:, 1] = np.clip(step[:, 1], -2.0, 2.0)
        pn = pa + step
        pn[:, 1] = np.maximum(pn[:, 1], _W_MIN)
        pn[:, 3] = np.clip(pn[:, 3], 1e-6, cmax[ia])
        pn[:, 4] = np.clip(pn[:, 4], _S_MIN, 50.0)
        mun, pts = model(pn, ia)
        rn = (y[ia] - mun) * m[ia]
        cn = (rn * rn).sum(1)
        better = cn <= cost[ia]
        ib = ia[better]
        dp = pn - pa
        p[ib] = pn[better]
        r[ib] = rn[better]
        for arr, new in zip((Sl, dul, dsl, Sr, dur, dsr), pts):
            arr[ib] = new[better]
        small_step = (np.abs(dp[:, 0]) < _TOL_C) & (np.abs(dp[:, 1]) < _TOL_W)
        flat = np.abs(cost[ia] - cn) <= 1e-12 * np.maximum(cost[ia], 1e-30)
        cost[ib] = cn[better]
        lam[ib] = np.maximum(lam[ib] * 0.3, 1e-9)
        lam[ia[~better]] *= 10.0
        done = (better & (small_step | flat)) | (lam[ia] > 1e8)
        converged[ia[done]] = True
        active[ia[done]] = False
    J = _jacobian(p[:, 3:4], Sl, dul, dsl, Sr, dur, dsr, m)
    A = J @ J.transpose(0, 2, 1)
    cov = _cov(A)
    dof = m.sum(1) - float(_NP)
    return BarFits(c=p[:, 0], w=p[:, 1], A=p[:, 2], C=p[:, 3], s=p[:, 4], cov_unit=cov,
                   rss=cost, dof=dof, converged=converged,
                   at_w_min=p[:, 1] <= _W_MIN * (1 + 1e-6))


@dataclass(frozen=True)
class BarLineFit:
    """Result of :func:`fit_bar_line`: one line, many profiles.

    ``c``, ``A`` (N,) per profile; ``w``, ``C``, ``s`` shared; ``cov_shared_unit`` (3, 3) the
    unit-noise covariance of (w, C, s) with the per-profile parameters eliminated (Schur
    complement); ``var_c_unit`` (N,) the unit-noise variance of each centre; ``rss`` and
    ``dof`` of the whole fit.
    """

    c: np.ndarray
    A: np.ndarray
    w: float
    C: float
    s: float
    cov_shared_unit: np.ndarray
    var_c_unit: np.ndarray
    rss: float
    dof: float
    converged: bool


def fit_bar_line(y, mask, t, c0, A0, w0: float, C0: float, s0: float, *,
                 max_iter: int = 50) -> BarLineFit:
    """Fit the bar model to all profiles of ONE line with its width, contrast and blur shared.

    Parameters
    ----------
    y, mask : ndarray (N, W)
        Samples and weights as in :func:`fit_bars`.
    t : float
        Second-box width (the same line direction for every profile).
    c0, A0 : ndarray (N,)
        Starting centre and bright level of each profile.
    w0, C0, s0 : float
        Starting width, contrast and blur (e.g. medians of :func:`fit_bars`).
    max_iter : int
        Iteration limit.

    Returns
    -------
    BarLineFit

    Notes
    -----
    Width, contrast and blur are properties of the line (its chrome, the focus), the same
    in every profile across it; only the centre (the line is tilted) and the bright level
    (backlight) change from profile to profile. Sharing them pools the information of all
    profiles on the nearly degenerate (w, C, s) direction of a thin line (module notes), so
    the width is neither pulled by each profile's noise into the thin-and-deep or the
    wide-and-shallow end of the valley, nor averaged from a skewed spread of per-profile
    widths. Levenberg-Marquardt on the normal equations reduced by the Schur complement of
    the 2 x 2 per-profile blocks (Triggs et al., "Bundle adjustment - a modern synthesis",
    LNCS 1883, 2000, section 6.1), damping on every diagonal.
    """
    y = np.asarray(y, dtype=np.float64)
    m = np.asarray(mask, dtype=np.float64)
    N, W = y.shape
    tt = np.full((N, 1), float(np.clip(t, 0.0, 2.0)))
    c = np.asarray(c0, dtype=np.float64).copy()
    A = np.asarray(A0, dtype=np.float64).copy()
    th = np.array([max(float(w0), 2 * _W_MIN), max(float(C0), 1e-3), max(float(s0), 0.3)])

    def evaluate(c, A, th):
        ww = np.full((N, 1), th[0])
        ss = np.full((N, 1), th[2])
        Sl, dul, dsl, Sr, dur, dsr = _parts(c[:, None], ww, ss, tt, W)
        r = (y - (A[:, None] - th[1] * (Sl - Sr))) * m
        return r, (Sl, dul, dsl, Sr, dur, dsr)

    r, parts = evaluate(c, A, th)
    cost = float((r * r).sum())
    lam = 1e-3
    converged = False
    for _ in range(max_iter):
        J = _jacobian(th[1], *parts, m)          # (N, 5, W): c, w, A, C, s
        Jl = J[:, [0, 2]]                        # local
        Jg = J[:, [1, 3, 4]]                     # shared
        U = Jl @ Jl.transpose(0, 2, 1)           # (N, 2, 2)
        Wc = Jl @ Jg.transpose(0, 2, 1)          # (N, 2, 3)
        V = np.einsum("nak,nbk->ab", Jg, Jg)     # (3, 3)
        gl = (Jl @ r[:, :, None])[:, :, 0]       # (N, 2)
        gg = np.einsum("nak,nk->a", Jg, r)       # (3,)
        Ud = U + lam * np.einsum("nii->ni", U)[:, :, None] * np.eye(2)
        Vd = V + lam * np.diag(np.diag(V))
        Ui = np.linalg.inv(Ud)
        UiW = Ui @ Wc                            # (N, 2, 3)
        Sred = Vd - np.einsum("nab,nac->bc", Wc, UiW)
        rhs = gg - np.einsum("nab,na->b", UiW, gl)
        try:
            dth = np.linalg.solve(Sred, rhs)
        except np.linalg.LinAlgError:
            lam *= 10.0
            continue
        dl = (Ui @ (gl - (Wc @ dth[:, None])[:, :, 0])[:, :, None])[:, :, 0]
        dl[:, 0] = np.clip(dl[:, 0], -1.0, 1.0)
        thn = th + dth
        thn[0] = max(thn[0], _W_MIN)
        thn[1] = max(thn[1], 1e-6)
        thn[2] = min(max(thn[2], _S_MIN), 50.0)
        cn, An = c + dl[:, 0], A + dl[:, 1]
        rn, pn = evaluate(cn, An, thn)
        costn = float((rn * rn).sum())
        if costn <= cost:
            small = (abs(thn[0] - th[0]) < _TOL_W) and float(np.max(np.abs(cn - c))) < _TOL_C
            flat = abs(cost - costn) <= 1e-12 * max(cost, 1e-30)
            c, A, th, r, parts, cost = cn, An, thn, rn, pn, costn
            lam = max(lam * 0.3, 1e-9)
            if small or flat:
                converged = True
                break
        else:
            lam *= 10.0
            if lam > 1e8:
                converged = True
                break
    J = _jacobian(th[1], *parts, m)
    Jl, Jg = J[:, [0, 2]], J[:, [1, 3, 4]]
    U = Jl @ Jl.transpose(0, 2, 1)
    Wc = Jl @ Jg.transpose(0, 2, 1)
    V = np.einsum("nak,nbk->ab", Jg, Jg)
    Ui = np.linalg.pinv(U, hermitian=True)
    Sred = V - np.einsum("nab,nac->bc", Wc, Ui @ Wc)
    cov_g = np.linalg.pinv(Sred, hermitian=True)
    # centre variance with the shared parameters free too: U^-1 + U^-1 W cov_g W^T U^-1
    UiW = Ui @ Wc
    var_c = Ui[:, 0, 0] + np.einsum("na,ab,nb->n", UiW[:, 0], cov_g, UiW[:, 0])
    dof = float(m.sum()) - 2.0 * N - 3.0
    return BarLineFit(c=c, A=A, w=float(th[0]), C=float(th[1]), s=float(th[2]),
                      cov_shared_unit=cov_g, var_c_unit=var_c, rss=cost, dof=dof,
                      converged=converged)
