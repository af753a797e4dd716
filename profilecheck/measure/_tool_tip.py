"""The tip of a pointed silhouette: flat, nose radius, or too small to tell.

Private to :mod:`profilecheck.measure.tool`. Works in image pixels on the edge points that
lie between two fitted flank lines (see :mod:`profilecheck.measure._runs`).

Notes
-----
Two models are fitted to the same central tip points (the points inside both flank lines by
more than a blur margin, so the corner rounding of the 50 % contour is left out):

* *flat*: a straight line; the flat width is the distance between its intersections with
  the two flank lines;
* *nose radius*: a free circle; its radius is corrected for the inward bias of a blurred
  curved edge, ``+ sigma_e^2 / (2 R)`` (Verbeek & van Vliet, IEEE TPAMI 16(7):726-733, 1994;
  ``../shared/vision-notes.md`` section 1.2).

The model with the clearly smaller residual wins (a circle must beat the line by a factor
:data:`ROUND_RATIO` and bulge by more than :data:`MIN_SAGITTA_PX`, so a flat is never called
round on noise); the radius is then refitted with its centre on the bisector, tangent to
both flank lines. When too few points lie clear of the corners (small tips: the edge finder
gives few points where its step model fails), the tip is sized from the pixels round it: the
Gaussian-blurred coverage of a wedge of the measured angle, truncated by a flat or rounded
by an arc tangent to both flanks, is fitted with free grey levels, and the better of the two
shapes is kept; a flat or radius is reported only when it lowers the sum of squares by more
than 4 noise variances (chi-square, one parameter), otherwise the point is sharp. The model
holds the corner recession by construction (:func:`recession_px`: a sharp 60 deg point
recedes 1.29 sigma, vision-notes section 1.2).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

__all__ = ["TipForm", "recession_px", "fit_tip", "ROUND_RATIO", "MIN_SAGITTA_PX"]

#: The circle's RMS residual must be this many times smaller than the line's (common
#: practice, no source: a model choice, tuned on renders in benchmarks/tool_accuracy.py).
ROUND_RATIO = 1.6
#: ... and the arc must bulge at least this far from its chord over the central points (px).
MIN_SAGITTA_PX = 0.25
#: Fewest central points for a fit; below this the recession estimate is used.
MIN_TIP_POINTS = 6


@dataclass(frozen=True)
class TipForm:
    """The tip found between two flanks, in px (calibration applied by the caller).

    ``kind`` is 'flat', 'radius' or 'small' (sized from the recession; reported as a flat).
    ``size_px`` is the flat width or the nose radius, ``std_px`` its standard uncertainty
    (k = 1). ``rms_line_px`` / ``rms_circle_px`` are the two models' residuals on the
    ``n`` central points; ``ends`` the flat's two corners or the arc's centre (for drawing).
    """

    kind: str
    size_px: float
    std_px: float
    n: int
    rms_line_px: float
    rms_circle_px: float
    centre: tuple[float, float] | None = None
    ends: tuple[tuple[float, float], tuple[float, float]] | None = None
    note: str = ""


def _coverage_on_bisector(depth: np.ndarray, half_angle_rad: float, flat_depth: float,
                          sigma: float) -> np.ndarray:
    """Fraction of a Gaussian (sigma) centred on the bisector at ``depth`` behind the virtual
    apex that falls on a truncated wedge (half-angle beta, truncated ``flat_depth`` behind the
    apex). Numerical 1-D integral across the bisector (exact in the other direction).
    """
    t = np.linspace(-8.0, 8.0, 641) * sigma  # position across the bisector
    dt = t[1] - t[0]
    tb = math.tan(half_angle_rad)
    out = np.empty_like(np.asarray(depth, float))
    for k, d in enumerate(np.atleast_1d(depth)):
        # wedge at lateral t occupies depth coordinate z >= |t| / tan(beta) and z >= flat_depth
        z0 = np.maximum(np.abs(t) / tb, flat_depth)
        frac_z = 0.5 * special.erfc((z0 - d) / (math.sqrt(2) * sigma))
        w = np.exp(-0.5 * (t / sigma) ** 2) / (math.sqrt(2 * math.pi) * sigma)
        out.flat[k] = float((frac_z * w).sum() * dt)
    return out


def recession_px(half_angle_rad: float, sigma_px: float, flat_px: float = 0.0) -> float:
    """Depth behind the virtual apex, along the bisector, of the 50 % contour of a blurred
    dark wedge of half-angle ``half_angle_rad`` whose tip carries a flat ``flat_px`` wide.

    Gaussian blur ``sigma_px``; for ``flat_px = 0`` (a sharp point) the result is the corner
    recession of ``../shared/vision-notes.md`` section 1.2 (60 deg: 1.29 sigma).
    """
    if not (0 < half_angle_rad < math.pi / 2):
        raise ValueError(f"half_angle_rad must be in (0, pi/2), got {half_angle_rad!r}")
    if not sigma_px > 0:
        raise ValueError(f"sigma_px must be > 0, got {sigma_px!r}")
    if flat_px < 0:
        raise ValueError(f"flat_px must be >= 0, got {flat_px!r}")
    fd = flat_px / (2 * math.tan(half_angle_rad))
    lo, hi = fd - 1e-9, fd + 10 * sigma_px
    for _ in range(60):  # bisection: coverage rises monotonically with depth
        mid = 0.5 * (lo + hi)
        if _coverage_on_bisector(np.array([mid]), half_angle_rad, fd, sigma_px)[0] < 0.5:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def _flat_from_depth(depth_px: float, half_angle_rad: float, sigma_px: float) -> float:
    """Invert :func:`recession_px`: the flat width whose 50 % point sits at ``depth_px``."""
    if depth_px <= recession_px(half_angle_rad, sigma_px, 0.0):
        return 0.0
    lo, hi = 0.0, 2 * math.tan(half_angle_rad) * depth_px
    for _ in range(40):
        mid = 0.5 * (lo + hi)
        if recession_px(half_angle_rad, sigma_px, mid) < depth_px:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def fit_tip(xy: np.ndarray, left, right, apex: np.ndarray, bisector: np.ndarray,
            sigma_e_px: float, pix=None) -> TipForm:
    """Size the tip from the edge points near the apex.

    Parameters
    ----------
    xy : (N, 2) array
        Edge points of the point's contour near the apex (px).
    left, right : profilecheck.measure._runs.Line
        The two flank lines (outward normals).
    apex : (2,) array
        Their intersection (virtual sharp), px.
    bisector : (2,) unit array
        From the body out through the apex.
    sigma_e_px : float
        Effective edge blur (px), sqrt(sigma_b^2 + 1/12).
    pix : tuple, optional
        ``(linearised image, dark level, bright level)`` for tips too small to fit from edge
        points (:func:`_small_tip`).
    """
    xy = np.asarray(xy, float)
    beta = 0.5 * (math.pi - math.acos(float(np.clip(left.normal @ right.normal, -1, 1))))
    margin = max(2.5 * sigma_e_px, 1.5)  # clear of the corners' rounding (about 2 sigma)
    dl, dr = -left.distance(xy), -right.distance(xy)  # + inside the tool
    central = (dl > margin) & (dr > margin)
    pts = xy[central]
    n = len(pts)
    if n < MIN_TIP_POINTS:
        return _small_or_refuse(xy, pix, apex, bisector, beta, sigma_e_px, n)
    from ..imaging import fit_circle, fit_line

    lf = fit_line(pts, robust=True)
    rms_line = float(lf.rms_px)
    try:
        cf = fit_circle(pts, robust=True)
        rms_circle = float(cf.rms_px)
        chord = float(np.ptp(pts @ lf.direction))
        sag = chord ** 2 / (8 * cf.radius) if cf.radius > 0 else 0.0
        inside = (cf.centre - apex) @ bisector < 0  # centre of curvature inside the tool
    except (ValueError, np.linalg.LinAlgError):
        cf, rms_circle, sag, inside = None, math.inf, 0.0, False
    if (cf is not None and inside and sag > MIN_SAGITTA_PX
            and rms_line > ROUND_RATIO * rms_circle + 0.02):
        r, std, centre = _tangent_radius(pts, apex, bisector, beta, sigma_e_px, float(cf.radius))
        if not (math.isfinite(std) and math.isfinite(r)):
            return _small_or_refuse(xy, pix, apex, bisector, beta, sigma_e_px, n)
        return TipForm("radius", r, std, n, rms_line, rms_circle, centre=centre,
                       note="nose radius tangent to both flanks, corrected for blur (+sigma^2/2R)")
    # flat: intersect the flat's line with both flanks
    from ._runs import Line

    d = np.asarray(lf.direction, float)
    nf = np.array([-d[1], d[0]])
    if nf @ bisector < 0:
        nf = -nf
    flat = Line(np.asarray(lf.point, float), d, nf, float(lf.std_angle_rad),
                float(lf.std_offset_px), rms_line, int(lf.n), None)
    pl = _meet(flat, left)
    pr = _meet(flat, right)
    w = float(np.hypot(*(pl - pr)))
    # the width moves 2 tan(beta) per px of flat offset (flat normal ~ bisector)
    std = math.sqrt((2 * math.tan(beta) * lf.std_offset_px) ** 2
                    + (w * lf.std_angle_rad * math.tan(beta)) ** 2
                    + 2 * left.std_offset_px ** 2 / math.cos(beta) ** 2)
    if not (math.isfinite(std) and math.isfinite(w)):
        # too few inliers left after trimming for a covariance: size it from the pixels
        return _small_or_refuse(xy, pix, apex, bisector, beta, sigma_e_px, n)
    return TipForm("flat", w, std, n, rms_line, rms_circle,
                   ends=((float(pl[0]), float(pl[1])), (float(pr[0]), float(pr[1]))))


def _small_or_refuse(xy, pix, apex, bisector, beta, sigma_e_px, n) -> TipForm:
    if pix is None:
        from ..errors import QualityError

        raise QualityError("the tool's tip is too small to size from its edge points")
    depth0 = float(np.min(-(xy - apex) @ bisector)) if len(xy) else 0.0
    return _small_tip(pix, apex, bisector, beta, sigma_e_px, n, max(depth0, 0.0))


def _tangent_radius(pts, apex, bisector, beta, sigma_e, r_start):
    """Radius of the arc tangent to both flank lines that best fits ``pts`` (px).

    The centre lies on the bisector r / sin(beta) behind the apex, so one parameter is
    fitted; the points are first moved out by the blur bias sigma_e^2 / (2 r) of a curved
    edge (vision-notes section 1.2), iterated with r.
    """
    from scipy.optimize import minimize_scalar

    sb = math.sin(beta)

    def centre(r):
        return apex - bisector * (r / sb)

    r = max(r_start, 0.5)
    q = pts
    for _ in range(3):
        def cost(rr, q=q):
            return float(np.sum((np.hypot(*(q - centre(rr)).T) - rr) ** 2))
        r = float(minimize_scalar(cost, bounds=(0.05, 4 * r + 50), method="bounded",
                                  options={"xatol": 1e-5}).x)
        c = centre(r)
        v = pts - c
        rho = np.hypot(*v.T)
        q = c + v * ((rho + sigma_e ** 2 / (2 * r)) / rho)[:, None]
    c = centre(r)
    res = np.hypot(*(q - c).T) - r
    h = 1e-4
    J = ((np.hypot(*(q - centre(r + h)).T) - (r + h)) - res) / h
    s = float(np.sqrt(np.sum(res ** 2) / max(len(res) - 1, 1)))
    std = s / math.sqrt(float(np.sum(J ** 2))) if np.sum(J ** 2) > 0 else r
    std = math.hypot(std, 0.1 * sigma_e ** 2 / (2 * r))  # blur correction good to 10 %
    return r, std, (float(c[0]), float(c[1]))


def _meet(a, b) -> np.ndarray:
    m = np.array([a.normal, b.normal])
    return np.linalg.solve(m, np.array([a.normal @ a.point, b.normal @ b.point]))


def _boundary_depth(t: np.ndarray, half_angle_rad: float, flat_depth: float,
                    radius: float) -> np.ndarray:
    """Depth (behind the virtual apex) of the tool's outline at lateral offsets ``t`` px: a
    wedge of half-angle beta truncated by a flat at ``flat_depth`` or rounded by an arc of
    ``radius`` tangent to both flanks."""
    tb = math.tan(half_angle_rad)
    z = np.abs(t) / tb
    if radius > 0:
        c = radius / math.sin(half_angle_rad)
        on_arc = np.abs(t) < radius * math.cos(half_angle_rad)
        z = np.where(on_arc, c - np.sqrt(np.maximum(radius ** 2 - t ** 2, 0.0)), z)
    return np.maximum(z, flat_depth)


def _coverage(lat: np.ndarray, depth: np.ndarray, half_angle_rad: float, flat_depth: float,
              sigma: float, radius: float = 0.0) -> np.ndarray:
    """Blurred coverage (0..1) of a truncated or rounded wedge at points (lat, depth) px.

    Frame: origin at the virtual apex, depth measured into the tool along the bisector,
    lat across it; the tool is depth >= :func:`_boundary_depth` (lat). Gaussian blur sigma:
    exact integral along the depth, numerical (641 samples) across.
    """
    lat = np.asarray(lat, float)
    t = np.linspace(-8.0, 8.0, 641)[:, None] * sigma + lat[None, :]
    dt = 16.0 * sigma / 640
    z0 = _boundary_depth(t, half_angle_rad, flat_depth, radius)
    frac = 0.5 * special.erfc((z0 - np.asarray(depth, float)[None, :]) / (math.sqrt(2) * sigma))
    w = np.exp(-0.5 * ((t - lat[None, :]) / sigma) ** 2) / (math.sqrt(2 * math.pi) * sigma)
    return (frac * w).sum(axis=0) * dt


def _small_tip(pix, apex, bisector, beta, sigma_e, n_central, depth0=0.0) -> TipForm:
    """Fit the flat of a blurred truncated wedge to the pixels round a small tip.

    Edge points thin out at a sharp or nearly sharp point (the step model of the edge finder
    does not hold there), so the tip is sized from the pixels themselves: the model is the
    Gaussian-blurred coverage of a wedge of the measured half-angle truncated by a flat
    square to the bisector (or rounded by an arc tangent to both flanks), with free dark and
    bright levels; the flat depth (or radius) minimises the sum of squared grey-level
    residuals. The model holds the corner recession
    of vision-notes section 1.2 by construction.

    ``pix`` is ``(img_lin, dark, bright)``: the linearised image and the local levels;
    ``depth0`` the depth (px behind the apex) of the nearest edge point, which sets how far
    back the window of pixels reaches.
    """
    from scipy.optimize import minimize_scalar

    from ..errors import QualityError

    img, dark, bright = pix
    if not (math.isfinite(dark) and math.isfinite(bright) and bright - dark > 0.05):
        raise QualityError("the tool's point is not clear in the image: too little contrast "
                           "at the tip")
    tb = math.tan(beta)
    reach = depth0 + 6 * sigma_e + 4.0
    h, w = img.shape
    x0, x1 = int(max(apex[0] - 2 * reach, 0)), int(min(apex[0] + 2 * reach, w - 1))
    y0, y1 = int(max(apex[1] - 2 * reach, 0)), int(min(apex[1] + 2 * reach, h - 1))
    if x1 - x0 < 4 or y1 - y0 < 4:
        raise QualityError("the tool's point runs out of the frame: move the point into view")
    yy, xx = np.mgrid[y0:y1 + 1, x0:x1 + 1]
    p = np.c_[xx.ravel(), yy.ravel()].astype(float) - apex
    perp = np.array([-bisector[1], bisector[0]])
    lat, depth = p @ perp, -(p @ bisector)
    sel = (depth > -3 * sigma_e) & (depth < reach) & (np.abs(lat) < reach * tb + 3 * sigma_e)
    lat, depth = lat[sel], depth[sel]
    val = img[y0:y1 + 1, x0:x1 + 1].ravel()[sel]
    if len(val) < 20:
        raise QualityError("the tool's point is not clear in the image: too few pixels at the tip")

    def model(fd: float, r: float = 0.0) -> np.ndarray:
        # grey levels free (linear least squares for each shape), as in the edge finder's
        # step fits; the edge set's local levels serve only the contrast check
        c = _coverage(lat, depth, beta, fd, sigma_e, r)
        A = np.c_[np.ones_like(c), c]
        coef, *_ = np.linalg.lstsq(A, val, rcond=None)
        return A @ coef

    def fit(kind: str):
        if kind == "flat":
            f = lambda v: float(np.sum((val - model(v)) ** 2))  # noqa: E731
            hi = reach
        else:
            f = lambda v: float(np.sum((val - model(0.0, v)) ** 2))  # noqa: E731
            hi = reach * math.sin(beta) / (1 - math.sin(beta))
        res = minimize_scalar(f, bounds=(0.0, hi), method="bounded", options={"xatol": 1e-4})
        v = float(res.x) if res.fun < f(0.0) else 0.0
        return v, f(v)

    fd, cost_flat = fit("flat")
    r, cost_round = fit("radius")
    n = len(val)
    # a flat is only reported when it explains the pixels significantly better than a sharp
    # point: the drop in the sum of squares must exceed 4 noise variances (chi-square, one
    # parameter, ~95 %); otherwise the one-sided fit (flat >= 0) would read noise as a flat
    cost_sharp = float(np.sum((val - model(0.0)) ** 2))
    noise_var = cost_flat / max(n - 3, 1)
    if cost_sharp - cost_flat < 4 * noise_var:
        fd, cost_flat = 0.0, cost_sharp
    if cost_sharp - cost_round < 4 * noise_var:
        r, cost_round = 0.0, cost_sharp
    # the radius model must explain the pixels clearly better (F-like ratio; common
    # practice, no source) before a nose radius is reported
    if r > 0.5 and cost_round < 0.9 * cost_flat:
        kind, size = "radius", r
        m0 = model(0.0, r)
        J = (model(0.0, r + 1e-3) - m0) / 1e-3
        cost = cost_round
    else:
        kind, size = "small", 2 * tb * fd
        m0 = model(fd)
        # secant over half a pixel of flat width: near a sharp point the pixels respond to
        # the flat only to second order, so a tangent would overstate the uncertainty
        step = 0.5 / (2 * tb)
        J = (model(fd + step) - m0) / step / (2 * tb)  # per px of flat width
        cost = cost_flat
    s_i = math.sqrt(cost / max(n - 1, 1))
    info = float(np.sum(J ** 2))
    std_fit = s_i / math.sqrt(info) if info > 1e-18 else sigma_e
    # model term: the blur estimate taken good to 10 % (common practice, no source)
    d_sig = abs(recession_px(beta, sigma_e * 1.1, 2 * tb * fd) - recession_px(beta, sigma_e, 2 * tb * fd))
    std = math.hypot(std_fit, tb * d_sig)
    what = "nose radius" if kind == "radius" else "flat"
    centre = None
    if kind == "radius":
        c = apex - bisector * (size / math.sin(beta))
        centre = (float(c[0]), float(c[1]))
    return TipForm(kind, size, std, n, math.nan, math.nan, centre=centre,
                   note=f"tip too small to fit from edge points ({n_central} clear of the "
                        f"corners): {what} fitted with a blurred-wedge model to the tip's pixels")
