"""Subpixel edge points of a backlit silhouette: ``find_edges``.

Pipeline (vision-notes section 6):

1. linearise the grey levels (camera gamma) and mark clipped samples (top or bottom code);
2. flatten the backlight and seed from the 50 % contour of the flattened image
   (:mod:`.silhouette`; marching squares, :mod:`._contours`; :mod:`._seeds`);
3. at every row (column) crossing of the contour, fit the pixel-exact blurred-step model
   (:mod:`._stepfit`) to the pixels of that row (column) of the flattened image (backlight
   divided out, so vignetting does not tilt the plateaus), with free dark level, contrast and
   blur and the pixel-box shape from the seed contour's local direction; window
   2 x 5 sigma_e along the normal, at least 16 samples, cut short before a
   neighbouring edge; clipped samples left out;
4. reject profiles where the 1-D model does not hold (corners, junctions, narrow gaps):
   high residual, blur far from the image's, position run away from the seed, too little
   contrast, or a sharp turn of the contour;
5. normals from the neighbouring fitted points.

Speed: whole-image steps run in float32 (the profiles are fitted in float64); a pilot fit
of 120-150 profiles sets the blur; profiles are fitted in groups of equal half-window, each
on its own samples only; profiles without samples enough on both sides are not fitted, and
a fit that runs more than 2.5 px from its seed is abandoned (both are rejected in step 4 in
any case); ``step=k`` fits every k-th profile only.

Least squares on the exact model is the maximum-likelihood estimate under Gaussian noise and
reaches the Cramer-Rao bound (vision-notes sections 1.3 and 2); as the samples are the
pixels themselves, it stays unbiased on exactly axis-aligned edges where interpolating
estimators lock to the pixel grid.

Known limits: on curved edges the row/column profiles cross the edge obliquely, which adds
a small orientation-dependent term to the sigma_e^2 / (2 R) shift of curved edges; corner and
junction points are dropped, never corrected, so take tips from intersected line fits.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.stats import chi2

from ._edgeset import EdgeSet, empty_edgeset
from ._seeds import Seeds, seeds_from_contours
from ._stepfit import _FOLD_T_OVER_S, StepFits, fit_steps
from ._contours import iso_contours
from .silhouette import _EDGE_CLEAR_PX, _all_finite, _flatten, linearise

__all__ = ["find_edges", "EdgeSet"]

_SEED_SMOOTH_PX = 1.0      # Gaussian smoothing of the flattened image before contouring
# seed contour level: just below 50 % so that pixels sitting exactly at 50 % (an edge through
# a row of pixel centres in a clean render) count as bright instead of hiding the contour
_SEED_LEVEL = 0.5 - 1e-9
_MIN_HALF_WINDOW = 7       # 2 * 7 + 2 = 16 samples >= 15 (vision-notes section 6, rule 1)
_MAX_HALF_WINDOW = 40
_PILOT_HALF_WINDOW = 12
_PILOT_N = 150
_PILOT_N_MIN = 120
_NU_POOL = 10.0            # prior degrees of freedom of the pooled noise in each point's std
_RESID_P = 0.999           # chi-square quantile for the residual test
_CLIP_WARN = 1e-4
_NOISE_FLOOR_REL = 3e-3     # of the (flattened, unit) contrast
# a fit that moves farther than this from its seed is abandoned (the position test below
# rejects anything beyond 2 px from the seed in any case)
_MAX_SHIFT_PX = 2.5


def _check_roi(roi, shape):
    if roi is None:
        return 0, 0, shape[1], shape[0]
    try:
        x0, y0, x1, y1 = (int(v) for v in roi)
    except (TypeError, ValueError):
        raise TypeError("roi must be (x_min, y_min, x_max, y_max) integers") from None
    if not (0 <= x0 < x1 <= shape[1] and 0 <= y0 < y1 <= shape[0]):
        raise ValueError(f"roi {tuple(roi)} is not inside the image of {shape[1]} x {shape[0]} px")
    if x1 - x0 < 8 or y1 - y0 < 8:
        raise ValueError("roi must be at least 8 x 8 pixels")
    return x0, y0, x1, y1


def _gather(img, flat, seeds: Seeds, idx, HW):
    W = 2 * HW + 2
    pos = seeds.pos[idx]
    start = np.floor(pos).astype(int) - HW
    along = start[:, None] + np.arange(W)[None, :]
    line = seeds.line[idx][:, None]
    ax = seeds.along_x[idx][:, None]
    rows = np.where(ax, line, along)
    cols = np.where(ax, along, line)
    H, Wi = img.shape
    inb = (rows >= 0) & (rows < H) & (cols >= 0) & (cols < Wi)
    rr, cc = np.clip(rows, 0, H - 1), np.clip(cols, 0, Wi - 1)
    # float64 from here on (the images may be float32): the fits and the level tests
    return (img[rr, cc].astype(np.float64), flat[rr, cc].astype(np.float64), inb, rr, cc,
            start)


def _clipped(raw, rr, cc):
    """Samples of the recorded image at the top or bottom code (clipped); ``raw`` None:
    the image has no clipped pixel."""
    if raw is None:
        return np.zeros(rr.shape, dtype=bool)
    v = raw[rr, cc]
    return (v >= 1.0 - 1e-9) | (v <= 1e-9)


def _window_mask(fvals, inb, hw, margin, HW):
    """Samples inside each profile's own window, stopping short of a neighbouring edge."""
    N, W = fvals.shape
    j = np.arange(W)[None, :]
    cls = fvals < _SEED_LEVEL
    left_ref = cls[:, HW:HW + 1]
    right_ref = cls[:, HW + 1:HW + 2]
    eq_l = (cls[:, HW::-1] == left_ref) | ~inb[:, HW::-1]
    eq_r = (cls[:, HW + 1:] == right_ref) | ~inb[:, HW + 1:]
    run_l = np.cumprod(eq_l, axis=1).sum(1)
    run_r = np.cumprod(eq_r, axis=1).sum(1)
    lo = np.where(run_l >= HW + 1, 0, HW - run_l + 1 + margin)
    hi = np.where(run_r >= W - HW - 1, W - 1, HW + run_r - margin)
    lo = np.maximum(lo, HW - hw)
    hi = np.minimum(hi, HW + 1 + hw)
    m = inb & (j >= lo[:, None]) & (j <= hi[:, None])
    direction = np.where(left_ref[:, 0], 1.0, -1.0)
    return m, direction


def _fit_group(img, flat, raw, seeds, idx, sigma_b, *, hw=None, t=None, x0=None, s0=None,
               max_shift=None):
    """Fit the step model to the profiles ``idx`` of ``img`` (``flat``: the seeding image
    for the window tests, ``raw``: the recorded image for the clipping test).

    Returns ``(fits, start, direction, enough, hw, thin)``: ``fits.x0`` is in each profile's
    own frame, whose sample 0 is pixel ``start = floor(seed) - hw`` along the profile (so
    the edge lies at ``start + x0``, and ``x0`` can seed a later call); ``enough``: samples
    enough on both sides; ``thin``: clipped samples had to be kept.
    """
    n_a = seeds.n_axis[idx]
    n_o = seeds.n_other[idx]
    se = math.sqrt(sigma_b ** 2 + 1.0 / 12.0)
    if hw is None:
        hw = np.clip(np.ceil(5.0 * se / n_a), _MIN_HALF_WINDOW, _MAX_HALF_WINDOW).astype(int)
    HW = int(hw.max()) if len(hw) else _MIN_HALF_WINDOW
    vals, fvals, inb, rr, cc, start = _gather(img, flat, seeds, idx, HW)
    margin = np.ceil(2.5 * se / n_a).astype(int)
    m_all, direction = _window_mask(fvals, inb, hw, margin, HW)
    m = m_all & ~_clipped(raw, rr, cc)
    # where leaving out clipped samples leaves a side without a plateau, fall back to all
    # samples (the clipping warning then stands for a known bias toward the dark side)
    thin = ((m[:, :HW + 1].sum(1) < 3) | (m[:, HW + 1:].sum(1) < 3)) & ~(
        (m_all[:, :HW + 1].sum(1) < 3) | (m_all[:, HW + 1:].sum(1) < 3))
    m[thin] = m_all[thin]
    # each profile's own frame: sample 0 at floor(seed) - hw (the same in every call for
    # the same profile and half-window, so a refit can start from an earlier fit's x0)
    start_own = start + (HW - hw)
    if t is None:
        t = n_o / n_a
    if x0 is None:
        x0 = seeds.pos[idx] - start_own
    if s0 is None:
        s0 = sigma_b / n_a
    n_left = (m[:, :HW + 1]).sum(1)
    n_right = (m[:, HW + 1:]).sum(1)
    enough = (n_left >= 3) & (n_right >= 3) & (m.sum(1) >= 10)
    t = np.broadcast_to(np.asarray(t, dtype=np.float64), enough.shape)
    x0 = np.broadcast_to(np.asarray(x0, dtype=np.float64), enough.shape)
    s0 = np.broadcast_to(np.asarray(s0, dtype=np.float64), enough.shape)
    # profiles without enough samples on both sides are rejected by every caller that
    # passes max_shift: leave them out of the fit (results NaN, not converged)
    fit_it = enough if max_shift is not None else np.ones(len(enough), dtype=bool)
    # fit each half-window size on its own samples only (2 hw + 2 of them, from column
    # HW - hw of the gathered rows): the same fit as on the padded rows, whose extra
    # samples lie outside the window mask, for less work
    # and apart where the model folds the second pixel box (near-axis edges, _stepfit),
    # so that each call evaluates one form of the model
    fold = t < _FOLD_T_OVER_S * s0
    groups = []
    for h in np.unique(hw[fit_it]) if len(hw) else ():
        for f in (False, True):
            ii = np.flatnonzero(fit_it & (hw == h) & (fold == f))
            if len(ii) == 0:
                continue
            cs = slice(HW - int(h), HW + int(h) + 2)
            groups.append((ii, fit_steps(vals[ii, cs], m[ii, cs], direction[ii], t[ii],
                                         x0[ii], s0[ii], max_shift=max_shift)))
    return _scatter_fits(groups, len(enough), x0), start_own, direction, enough, hw, thin


def _scatter_fits(groups, n: int, x0) -> StepFits:
    """One StepFits of ``n`` profiles from the fits of groups ``(rows, StepFits)``;
    profiles not fitted keep their start position, NaN values and ``converged`` False."""
    x = np.array(x0, dtype=np.float64)
    out = {"B": np.full(n, np.nan), "C": np.full(n, np.nan), "s": np.full(n, np.nan),
           "var_x0_unit": np.full(n, np.nan), "rss": np.full(n, np.nan),
           "dof": np.zeros(n), "converged": np.zeros(n, dtype=bool)}
    for ii, sub in groups:
        x[ii] = sub.x0
        for key, arr in out.items():
            arr[ii] = getattr(sub, key)
    return StepFits(x0=x, **out)


def _duplicates(along_x, line, pos, ok):
    """Profiles on the same pixel row (column) whose fits landed on the same edge.

    A noisy or very blurred seed contour can cross one row several times at one edge; every
    such seed then fits the same pixels. Keep the first, flag the rest.
    """
    dup = np.zeros(len(pos), dtype=bool)
    ii = np.flatnonzero(ok)
    if len(ii) < 2:
        return dup
    order = ii[np.lexsort((pos[ii], line[ii], along_x[ii]))]
    same = (along_x[order[1:]] == along_x[order[:-1]]) & (line[order[1:]] == line[order[:-1]])
    close = np.abs(pos[order[1:]] - pos[order[:-1]]) < 1.0
    dup[order[1:][same & close]] = True
    return dup


def _every_kth(seeds: Seeds, k: int) -> Seeds:
    """Every k-th seed along each contour (seeds are stored contour by contour, in order)."""
    n = len(seeds.pos)
    if n == 0:
        return seeds
    first = np.r_[0, np.flatnonzero(np.diff(seeds.contour)) + 1]
    lengths = np.diff(np.r_[first, n])
    ordinal = np.arange(n) - np.repeat(first, lengths)
    keep = ordinal % k == 0
    return Seeds(along_x=seeds.along_x[keep], line=seeds.line[keep], pos=seeds.pos[keep],
                 n_axis=seeds.n_axis[keep], n_other=seeds.n_other[keep],
                 contour=seeds.contour[keep], corner=seeds.corner[keep], closed=seeds.closed)


def _neighbour_normals(xy, contour, closed_of, k: int = 3):
    n = len(xy)
    tan = np.zeros_like(xy)
    for c in np.unique(contour):
        ii = np.flatnonzero(contour == c)
        p = xy[ii]
        m = len(ii)
        if m < 2:
            continue
        j = np.arange(m)
        if closed_of[c] and m > 2 * k:
            a, b = p[(j + k) % m], p[(j - k) % m]
        else:
            a, b = p[np.minimum(j + k, m - 1)], p[np.maximum(j - k, 0)]
        tan[ii] = a - b
    norm = np.hypot(tan[:, 0], tan[:, 1])
    ok = norm > 0
    tan[ok] /= norm[ok, None]
    return np.c_[-tan[:, 1], tan[:, 0]], ok


def find_edges(img, *, roi=None, gamma: float = 1.0, min_contrast: float = 0.1,
               min_contour_px: int = 12, step: int = 1,
               blur_px: float | None = None) -> EdgeSet:
    """Find subpixel edge points of the dark silhouette in a backlit image.

    Parameters
    ----------
    img : ndarray (rows, cols)
        Grey image in [0, 1] as :func:`load_image` returns (values at the top code 1.0 and
        the bottom code 0.0 count as clipped).
    roi : (x_min, y_min, x_max, y_max), optional
        Search only pixels x_min <= col < x_max, y_min <= row < y_max. Points are returned in
        full-image coordinates.
    gamma : float
        Decoding exponent for :func:`linearise` (1.0: the camera is linear).
    min_contrast : float
        Minimum bright-minus-dark level ([0, 1] scale) for the image and for each profile.
    min_contour_px : int
        Contours with fewer vertices than this are ignored (a marching-squares contour has
        about 1.3 vertices per px of length, so the default 12 skips specks under ~3 px
        across; larger dust specks on the backlight still show up as small closed contours).
    step : int
        Fit every ``step``-th profile along each contour (default 1: all of them). Each
        point returned is fitted and tested exactly as with ``step=1`` and carries its own
        ``std_px``, so anything fitted to the points (lines, circles) reports the
        uncertainty of the points it used: about sqrt(step) times larger, for about 1/step
        of the fitting time (a live view that can afford fewer points).
    blur_px : float, optional
        The edge blur (Gaussian sigma, px) expected in this picture, e.g. the calibration's
        for the same set-up. It only sets the window lengths (no result depends on it
        otherwise) and saves the pilot fit that measures the blur first; where the fitted
        blur then differs from it by more than 25 %, the edges are found again as without
        it.

    Returns
    -------
    EdgeSet
        Possibly empty (then ``warnings`` says why): "nothing to measure" is a result.

    Raises
    ------
    TypeError, ValueError
        Bad arguments (named in the message).

    Notes
    -----
    See the module docstring for the method. Positions are where the fitted step is half-way
    between its levels: the geometric edge for incoherent, symmetric imaging. Partially
    coherent backlights and residual gamma shift it (vision-notes section 4); calibrate the
    edge offset with a gauge in the same light. Never use contour apexes at corners: the
    50 % contour of a blurred 60 deg point recedes by 1.29 sigma (vision-notes 1.2);
    intersect flank lines instead (:func:`intersect_lines`).

    Examples
    --------
    >>> rows, cols = np.mgrid[0:60, 0:80]
    >>> from scipy.special import ndtr
    >>> img = 0.1 + 0.7 * ndtr((cols - 40.3) / 1.0)   # point-sampled blurred step, bright right
    >>> e = find_edges(img)
    >>> bool(abs(np.median(e.xy[:, 0]) - 40.3) < 0.05)
    True
    """
    a = np.asarray(img)
    if a.ndim != 2:
        raise ValueError(f"img must be a 2-D grey image, got ndim={a.ndim}")
    if not np.issubdtype(a.dtype, np.floating):
        raise TypeError(f"img must be a float image in [0, 1] (see load_image), got {a.dtype}")
    if not _all_finite(a):
        raise ValueError("img contains non-finite values")
    if isinstance(min_contrast, bool) or not isinstance(min_contrast, (int, float, np.number)):
        raise TypeError(f"min_contrast must be a number, got {type(min_contrast).__name__}")
    if not (0 < float(min_contrast) < 1):
        raise ValueError(f"min_contrast must be in (0, 1), got {min_contrast!r}")
    if not isinstance(min_contour_px, (int, np.integer)) or min_contour_px < 3:
        raise ValueError(f"min_contour_px must be an int >= 3, got {min_contour_px!r}")
    if isinstance(step, bool) or not isinstance(step, (int, np.integer)) or step < 1:
        raise ValueError(f"step must be an int >= 1, got {step!r}")
    if blur_px is not None:
        if isinstance(blur_px, bool) or not isinstance(blur_px, (int, float, np.number)):
            raise TypeError(f"blur_px must be a number or None, got {type(blur_px).__name__}")
        if not (math.isfinite(blur_px) and blur_px > 0):
            raise ValueError(f"blur_px must be finite and > 0, got {blur_px!r}")
    args = dict(roi=roi, gamma=gamma, min_contrast=min_contrast,
                min_contour_px=min_contour_px, step=step)
    x_off, y_off, x_end, y_end = _check_roi(roi, a.shape)
    shape = a.shape
    # whole-image work in float32 (half the memory traffic of float64; the profiles are
    # fitted in float64, and float32 holds 16-bit data to 6e-8 of full scale)
    a = a[y_off:y_end, x_off:x_end].astype(np.float32, copy=False)
    warnings: list[str] = []

    n_top = np.count_nonzero(a >= 1.0 - 1e-9)
    n_bottom = np.count_nonzero(a <= 1e-9)
    f_top = n_top / a.size
    # the clipping test of each profile's samples needs the recorded image only if it holds
    # a clipped pixel
    raw = a if (n_top or n_bottom) else None
    if n_bottom / a.size > 0.01:
        warnings.append("the dark part is clipped at zero: raise the camera's black level if "
                        "it can be set (clipped samples were left out of the edge fits)")
    # linearise copies; with gamma 1 the (read-only) input serves as it is
    lin = a if (gamma == 1.0 and not isinstance(gamma, bool)) else linearise(a, gamma)
    sil = _flatten(lin)
    if sil.contrast < min_contrast:
        warnings.append(f"backlight contrast {sil.contrast:.3f} is below {min_contrast:.3f}: no "
                        "silhouette to measure (check the backlight and exposure)")
        return empty_edgeset(shape, warnings)

    import cv2

    fs = cv2.GaussianBlur(sil.flat, (0, 0), _SEED_SMOOTH_PX, borderType=cv2.BORDER_REPLICATE)
    # fits run on the flattened image: a smooth backlight gradient (vignetting) across a
    # profile window would otherwise tilt the bright plateau and pull the edge
    work = sil.flat
    seeds = seeds_from_contours(iso_contours(fs, _SEED_LEVEL), min_vertices=min_contour_px)
    if step > 1:
        seeds = _every_kth(seeds, int(step))
    n_seed = len(seeds.pos)
    if n_seed == 0:
        warnings.append("no edge found: the image shows no dark silhouette on a bright field")
        return empty_edgeset(shape, warnings)

    if blur_px is not None:
        # the blur expected (calibration): no pilot fit; checked against the fits below
        sigma_b = min(max(float(blur_px), 0.2), 8.0)
    else:
        # pilot fit on a spread-out subset, for the blur that sets the windows
        usable = np.flatnonzero(~seeds.corner)
        if len(usable) == 0:
            usable = np.arange(n_seed)
        # a fifth of the profiles, 120 to 150 of them: the median blur of 120 is within ~1 % of
        # the image's (it sets only the window lengths and the starting blur), and a small
        # search box (live view) does not pay for a large pilot
        n_pilot = min(len(usable), _PILOT_N, max(_PILOT_N_MIN, len(usable) // 5))
        pilot = usable[np.linspace(0, len(usable) - 1, n_pilot).astype(int)]
        hw_p = np.full(len(pilot), _PILOT_HALF_WINDOW)
        pr, _, _, p_enough, _, _ = _fit_group(work, fs, raw, seeds, pilot, 1.0, hw=hw_p,
                                              max_shift=_MAX_SHIFT_PX)
        sb_p = pr.s * seeds.n_axis[pilot]
        good_p = pr.converged & p_enough & np.isfinite(sb_p) & (pr.C > 0.3)
        sigma_b = float(np.median(sb_p[good_p])) if good_p.sum() >= 3 else 1.0
        sigma_b = min(max(sigma_b, 0.2), 8.0)
    if 4.0 * sigma_b + 2.0 > _EDGE_CLEAR_PX:
        # blurry: fit the backlight farther from the edges, beyond their tails
        sil = _flatten(lin, clear_px=4.0 * sigma_b + 2.0)
        work = sil.flat

    idx = np.arange(n_seed)
    res, start, direction, enough, hw, thin = _fit_group(work, fs, raw, seeds, idx, sigma_b,
                                                         max_shift=_MAX_SHIFT_PX)
    fit = {"x0": res.x0.copy(), "B": res.B.copy(), "C": res.C.copy(), "s": res.s.copy(),
           "var": res.var_x0_unit.copy(), "rss": res.rss.copy(), "dof": np.maximum(res.dof, 1.0)}
    ax_all = seeds.along_x
    line_all = seeds.line.astype(np.float64)

    def positions(ii):
        pos = start[ii] + fit["x0"][ii]
        return np.where(ax_all[ii, None], np.c_[pos, line_all[ii]], np.c_[line_all[ii], pos])

    # 1. the fit converged on a step near the seed, away from sharp contour turns
    pre = res.converged & enough & np.isfinite(res.x0) & np.isfinite(res.var_x0_unit)
    pre &= (np.abs(res.x0 - (seeds.pos - start)) <= 2.0) & ~seeds.corner
    pi = np.flatnonzero(pre)
    if len(pi) == 0:
        warnings.append("no edge point passed the edge-model checks (blur, contrast or noise too "
                        "poor): refocus and check the lighting")
        return empty_edgeset(shape, warnings, n_seed)

    # 2. normals from the neighbouring points of the same contour, oriented dark -> bright
    normal_all = np.zeros((n_seed, 2))
    # neighbours about 3 profiles away whatever the step
    nrm, n_ok = _neighbour_normals(positions(pi), seeds.contour[pi], seeds.closed,
                                   k=max(1, -(-3 // int(step))))
    dirk = direction[pi]
    axk = ax_all[pi]
    comp = np.where(axk, nrm[:, 0], nrm[:, 1])
    nrm[np.sign(comp) != np.sign(dirk)] *= -1
    bad_n = ~n_ok | (np.abs(comp) < 0.5)
    fallback = np.where(axk[:, None], np.c_[dirk, np.zeros_like(dirk)],
                        np.c_[np.zeros_like(dirk), dirk])
    nrm[bad_n] = fallback[bad_n]
    normal_all[pi] = nrm

    # (the pixel-box shape of each fit keeps the seed contour's direction: refitting with
    # these fitted normals changed no result of the edge, pin, tool or thread benchmarks,
    # measured when that refit was dropped)

    # 3. quality: contrast, blur like its neighbours', residual like the image's noise
    n_a = seeds.n_axis
    sb = fit["s"] * n_a
    seed_rc = np.where(ax_all[:, None], np.c_[seeds.line, np.round(seeds.pos)],
                       np.c_[np.round(seeds.pos), seeds.line]).astype(int)
    seed_rc = np.clip(seed_rc, 0, np.array(work.shape) - 1)
    scale_seed = np.maximum(sil.background_at(seed_rc[:, 0], seed_rc[:, 1]) - sil.dark_level,
                            1e-9)
    ok = pre & (fit["C"] >= 0.3) & (fit["C"] * scale_seed >= min_contrast)
    med_sb = float(np.median(sb[ok])) if ok.sum() >= 3 else sigma_b
    if blur_px is not None and abs(med_sb / sigma_b - 1.0) > 0.25:
        # the picture's blur is not the one expected: windows of the wrong length (and
        # perhaps the wrong backlight clearance), so start again measuring it first
        return find_edges(img, **args)
    ok &= (sb <= 2.0 * med_sb + 0.5) & (sb >= 0.4 * med_sb - 0.2)
    dof = fit["dof"]
    s2 = fit["rss"] / dof
    if ok.sum() >= 3:
        d_med = float(np.median(dof[ok]))
        # median of chi^2/dof -> mean (Wilson-Hilferty)
        pooled = float(np.median(s2[ok])) / (1.0 - 2.0 / (9.0 * d_med)) ** 3
    else:
        pooled = float(np.median(s2[pi]))
    pooled = max(pooled, 1e-14)
    # residual test, with a floor so that residuals far below any camera's noise (0.3 % of
    # the contrast, about half an 8-bit code) never reject a point (rendered, noise-free images)
    s2_test = max(pooled, _NOISE_FLOOR_REL ** 2)
    # the quantile once per distinct dof (a few dozen values among thousands of profiles)
    dof_u, dof_i = np.unique(dof, return_inverse=True)
    ok &= s2 <= s2_test * chi2.ppf(_RESID_P, dof_u)[dof_i] / dof

    ok &= ~_duplicates(ax_all, seeds.line, start + fit["x0"], ok)

    keep = np.flatnonzero(ok)
    n_dropped = n_seed - len(keep)
    if len(keep) == 0:
        warnings.append("no edge point passed the edge-model checks (blur, contrast or noise too "
                        "poor): refocus and check the lighting")
        return empty_edgeset(shape, warnings, n_dropped)

    xy = positions(keep)
    normal = normal_all[keep]
    # renumber contours 0..K-1 in order of appearance
    uniq, contour = np.unique(seeds.contour[keep], return_inverse=True)
    closed = tuple(bool(seeds.closed[u]) for u in uniq)

    if f_top > _CLIP_WARN:
        n_fb = int(thin[keep].sum())
        tail = (f"; at {n_fb} points the whole bright side is clipped and the edge reads toward "
                "the dark side (about 0.2-0.4 px)" if n_fb else "")
        warnings.append(f"{100 * f_top:.2f} % of pixels are clipped at full brightness: lower the "
                        "exposure or backlight (clipped samples were left out of the edge fits"
                        f"{tail})")
    nak = n_a[keep]
    # per-point noise: own residual pooled with the image's (nu_0 = 10 prior dof)
    s2_k = (fit["rss"][keep] + _NU_POOL * pooled) / (dof[keep] + _NU_POOL)
    std_px = np.sqrt(np.maximum(fit["var"][keep], 0.0) * s2_k) * nak
    sigma_px = fit["s"][keep] * nak
    blur = float(np.median(sigma_px))
    if blur > 3.0:
        warnings.append(f"edges are blurred (sigma {blur:.1f} px): refocus for best accuracy")
    if n_dropped > 0.25 * n_seed:
        warnings.append(f"{n_dropped} of {n_seed} edge points were dropped (corners, junctions, "
                        "narrow gaps, dust or noise): check focus, cleanliness and lighting")
    xy = xy + np.array([x_off, y_off], dtype=np.float64)
    sc = scale_seed[keep]
    B_k, C_k = fit["B"][keep], fit["C"][keep]
    return EdgeSet(xy=xy, normal=normal, sigma_px=sigma_px, std_px=std_px,
                   dark=sil.dark_level + B_k * sc, bright=sil.dark_level + (B_k + C_k) * sc,
                   contour=contour.astype(int), closed=closed, n_dropped=int(n_dropped),
                   noise_std=float(math.sqrt(pooled) * np.median(sc)),
                   warnings=tuple(warnings), image_shape=tuple(int(v) for v in shape))
