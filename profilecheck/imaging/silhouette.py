"""Backlit silhouette: separate the dark part from an unevenly lit bright field.

The backlight of a bench microscope is never flat: vignetting of 15 % and more toward the
corners, a brighter spot where the LED panel sits, mild glare. A single global threshold
then moves every edge in the dim corners. Instead:

1. a first split of a reduced copy of the image by Otsu's threshold (N. Otsu, IEEE Trans.
   SMC 9(1):62-66, 1979);
2. a smooth background surface (2-D quadratic by default) fitted by least squares to the
   bright pixels at least 10 px from the edges, trimmed iteratively at 3 robust standard deviations so
   dust and glare spots do not pull it; where it is extrapolated (over the part, or over a
   bright strip between an edge and the image border too narrow to be fitted) it is held
   between half the field level and a quarter of the contrast above the brightest field
   pixel, so such a strip still reads bright and its edge is found;
3. the dark level from the interior of the dark part (median);
4. the flattened image f = (img - dark) / (background - dark), which is ~0 in the part and
   ~1 in the field everywhere; the silhouette is f < 0.5 (the 50 % level of an incoherent
   backlit edge, vision-notes section 4). Otsu's threshold of f is reported but not used:
   with blurred edges it wanders with the ratio of dark to bright area (10-50 % measured on
   clean renders), so it is no test of the lighting.

Only seeding and masks depend on this; edge positions come from local model fits with free
levels (:mod:`profilecheck.imaging.edges`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np

__all__ = ["Silhouette", "flatten_backlight", "linearise", "clipping_fraction"]

_REDUCED_LONG_SIDE = 128
_EDGE_CLEAR_PX = 10.0
# the fitted background is held below dark + this x (brightest reduced field pixel - dark)
_BG_CEILING_REL = 1.25


def _all_finite(a: np.ndarray) -> bool:
    """True when every value is finite: one summing pass (a NaN or inf makes the sum
    non-finite), the element-wise test only when the sum overflows or is not finite."""
    with np.errstate(over="ignore", invalid="ignore"):
        total = np.sum(a)
    return bool(np.isfinite(total)) or bool(np.all(np.isfinite(a)))


def linearise(img, gamma: float) -> np.ndarray:
    """Undo a camera's gamma encoding: return ``img ** gamma``.

    Parameters
    ----------
    img : ndarray
        Grey image in [0, 1] (e.g. from :func:`load_image`).
    gamma : float
        Decoding exponent, > 0: 1.0 for a linear camera, about 2.2 for an sRGB-style
        encoding (code = linear ** (1 / 2.2)).

    Returns
    -------
    ndarray
        float32 for a float32 input, else float64.

    Notes
    -----
    An un-inverted gamma of 1/2.2 moves a blurred edge's 50 % point 0.81 sigma_e toward the
    dark side (-0.82 px at sigma_b = 1 px), for thresholds and model fits alike
    (vision-notes section 4): linearise before finding edges.
    """
    if isinstance(gamma, bool) or not isinstance(gamma, (int, float, np.floating, np.integer)):
        raise TypeError(f"gamma must be a number, got {type(gamma).__name__}")
    if not (gamma > 0) or not np.isfinite(gamma):
        raise ValueError(f"gamma must be finite and > 0, got {gamma!r}")
    a = np.asarray(img)
    a = a if a.dtype == np.float32 else a.astype(np.float64, copy=False)
    if gamma == 1.0:
        return a.copy()
    return np.power(np.clip(a, 0.0, None), a.dtype.type(gamma))


def clipping_fraction(img, *, top: float = 1.0) -> float:
    """Fraction of pixels at (or above) the top code ``top``.

    Parameters
    ----------
    img : ndarray
        Grey image in [0, 1] as returned by :func:`load_image`.
    top : float
        The top code, 1.0 for images scaled by their full bit depth.

    Returns
    -------
    float in [0, 1]

    Notes
    -----
    A clipped backlight (true 300 DN recorded as 255) moves a blurred edge by -0.23 px at
    sigma_b = 1 px and -0.42 px at sigma_b = 2 px (vision-notes section 4). Lower the exposure
    until this is zero.
    """
    a = np.asarray(img)
    if a.size == 0:
        raise ValueError("img is empty")
    return float(np.count_nonzero(a >= top - 1e-9)) / a.size


@dataclass(frozen=True, eq=False)
class Silhouette:
    """Result of :func:`flatten_backlight`.

    Attributes
    ----------
    flat : ndarray (rows, cols)
        Flattened image, ~0 in the dark part, ~1 in the bright field.
    mask : ndarray of bool
        True in the dark part (flat < 0.5); made when first asked for.
    background : ndarray
        Fitted bright-field level at every pixel (same units as the input): the bilinear
        enlargement of ``background_grid``, made when first asked for.
    dark_level : float
        Median level inside the dark part.
    contrast : float
        Median of (background - dark_level) over the image.
    otsu_level : float
        Otsu's threshold of ``flat`` (information only: it depends on the area ratio).
    vignetting : float
        1 - min(background) / max(background) over the image.
    background_grid : ndarray
        The background on a coarse grid spanning the picture (``cv2.resize`` places node j
        at x = (j + 1/2) cols / n - 1/2), or at every pixel for a small picture.
    """

    flat: np.ndarray
    dark_level: float
    contrast: float
    otsu_level: float
    vignetting: float
    background_grid: np.ndarray

    @cached_property
    def mask(self) -> np.ndarray:
        return self.flat < 0.5

    @cached_property
    def background(self) -> np.ndarray:
        g = self.background_grid
        rows, cols = self.flat.shape
        if g.shape == (rows, cols):
            return g
        import cv2
        return cv2.resize(g, (cols, rows), interpolation=cv2.INTER_LINEAR)

    def background_at(self, rows, cols) -> np.ndarray:
        """The background at integer pixels (``rows``, ``cols``), float64, without making
        the full-size ``background`` (the same bilinear rule, border nodes held)."""
        g = np.asarray(self.background_grid, dtype=np.float64)
        r = np.asarray(rows)
        c = np.asarray(cols)
        if g.shape == self.flat.shape:
            return g[r, c]

        def axis(x, n_out, n_grid):
            f = (x + 0.5) * (n_grid / n_out) - 0.5
            i = np.floor(f).astype(np.int64)
            w = f - i
            low = i < 0
            high = i >= n_grid - 1
            i = np.where(low, 0, np.where(high, n_grid - 1, i))
            w = np.where(low | high, 0.0, w)
            return i, np.minimum(i + 1, n_grid - 1), w

        r0, r1, wr = axis(r, self.flat.shape[0], g.shape[0])
        c0, c1, wc = axis(c, self.flat.shape[1], g.shape[1])
        top = g[r0, c0] * (1 - wc) + g[r0, c1] * wc
        bottom = g[r1, c0] * (1 - wc) + g[r1, c1] * wc
        return top * (1 - wr) + bottom * wr


def _poly_terms(x, y, degree):
    cols = []
    for i in range(degree + 1):
        for j in range(degree + 1 - i):
            cols.append((x ** i) * (y ** j))
    return np.stack(cols, axis=-1)


def flatten_backlight(img, *, degree: int = 2, clear_px: float = _EDGE_CLEAR_PX) -> Silhouette:
    """Estimate the backlight and the dark level, and flatten the image.

    Parameters
    ----------
    img : ndarray (rows, cols)
        Linear grey image (see :func:`linearise`).
    degree : int
        Highest degree of the background polynomial (2-6), default 2: a quadratic follows
        lens vignetting (cos^4 falloff is quadratic to first order) while higher degrees
        begin to chase glare spots and bend near the edges, which moves them (measured on
        rendered scenes: 0.002 px with degree 2, 0.03 px with degree 4 beside a glare spot).
        Lowered automatically when the bright field covers little of the image.
    clear_px : float
        The background is fitted only to bright pixels at least this far (px) from the
        first split, beyond the blurred tails of the edges: 10 px suits blur sigma up to
        2 px; use about 4 sigma + 2 for blurrier images (:func:`find_edges` does).

    Returns
    -------
    Silhouette
        ``flat`` and ``background`` are float32 for a float32 image (half the memory
        traffic on a large picture; ample for 8- to 16-bit data), else float64.

    Raises
    ------
    ValueError
        ``img`` is not a 2-D finite array of at least 8 x 8 pixels, or ``degree`` is out of range.
    """
    a = np.asarray(img)
    a = a if a.dtype == np.float32 else a.astype(np.float64, copy=False)
    if a.ndim != 2:
        raise ValueError(f"img must be 2-D, got ndim={a.ndim}")
    if min(a.shape) < 8:
        raise ValueError(f"img must be at least 8 x 8 pixels, got {a.shape}")
    if not _all_finite(a):
        raise ValueError("img contains non-finite values")
    if not (isinstance(degree, (int, np.integer)) and 2 <= degree <= 6):
        raise ValueError(f"degree must be an int in 2..6, got {degree!r}")
    if not (clear_px >= 0) or not math.isfinite(clear_px):
        raise ValueError(f"clear_px must be finite and >= 0, got {clear_px!r}")
    return _flatten(a, degree=degree, clear_px=clear_px)


def _flatten(a: np.ndarray, *, degree: int = 2, clear_px: float = _EDGE_CLEAR_PX) -> Silhouette:
    """:func:`flatten_backlight` without the checks of ``a`` (2-D, finite, float32/64)."""
    import cv2
    from skimage.filters import threshold_otsu

    rows, cols = a.shape
    # reduced copy: means of k x k blocks, k the whole number that brings the long side to
    # about _REDUCED_LONG_SIDE (an integer factor is OpenCV's fast area path); the last
    # rows % k and cols % k pixels are left out of the fit only
    k = max(1, min(-(-max(rows, cols) // _REDUCED_LONG_SIDE), min(rows, cols) // 8))
    sr, sc = rows // k, cols // k
    small = (cv2.resize(a[:sr * k, :sc * k], (sc, sr), interpolation=cv2.INTER_AREA) if k > 1
             else a).astype(np.float64)
    if np.ptp(small) <= 0:
        return Silhouette(flat=np.ones_like(a), dark_level=float(a.mean()), contrast=0.0,
                          otsu_level=0.5, vignetting=0.0, background_grid=a.copy())
    t0 = threshold_otsu(small)
    bright0 = small > t0
    dark0 = ~bright0
    # keep away from edges: erode both classes by _EDGE_CLEAR_PX full-resolution pixels
    # (at least 2 reduced pixels), beyond the blurred tails of any focused edge
    rad = max(2, int(math.ceil(clear_px / k)))
    kern = cv2.getStructuringElement(cv2.MORPH_ELLIPSE, (2 * rad + 1, 2 * rad + 1))
    bright_core = cv2.erode(bright0.astype(np.uint8), kern).astype(bool)
    dark_core = cv2.erode(dark0.astype(np.uint8), kern).astype(bool)
    if bright_core.sum() < 20:
        bright_core = bright0
    if dark_core.sum() < 5:
        dark_core = dark0
    # x, y scaled to [-1, 1] over the whole picture, at the block centres
    yy, xx = np.mgrid[0:sr, 0:sc]
    xn = (xx + 0.5) * k / cols * 2 - 1
    yn = (yy + 0.5) * k / rows * 2 - 1
    frac = bright_core.mean()
    deg = degree if frac > 0.4 else (min(degree, 3) if frac > 0.15 else 2)
    T = _poly_terms(xn, yn, deg)
    use = bright_core.copy()
    coef = None
    for _ in range(5):
        if use.sum() < T.shape[-1] * 3:
            break
        Tu = T[use]
        # normal equations: terms of x, y in [-1, 1] up to degree 6 stay well conditioned
        sol = np.linalg.solve(Tu.T @ Tu + 1e-12 * np.eye(Tu.shape[1]), Tu.T @ small[use])
        coef = sol
        res = small - T @ sol
        rs = res[use]
        scale = 1.4826 * np.median(np.abs(rs - np.median(rs))) + 1e-6
        new = bright_core & (np.abs(res) < 3 * scale)
        if np.array_equal(new, use):
            break
        use = new
    dark_level = float(np.median(small[dark_core])) if dark_core.any() else float(small.min())
    bright_med = float(np.median(small[bright0]))
    # the background on a coarse grid spanning the whole picture, for the bilinear
    # enlargement (cv2.resize puts grid node j at full-size x = (j + 1/2) cols / n - 1/2)
    f = min(1.0, _REDUCED_LONG_SIDE / max(rows, cols))
    gr, gc = (max(8, round(rows * f)), max(8, round(cols * f))) if k > 1 else (rows, cols)
    gy, gx = np.mgrid[0:gr, 0:gc]
    if coef is None:
        bg_fit = np.full_like(small, bright_med)
        bg_small = np.full((gr, gc), bright_med)
    else:
        bg_fit = T @ coef
        bg_small = _poly_terms((gx + 0.5) / gc * 2 - 1, (gy + 0.5) / gr * 2 - 1, deg) @ coef
    # the polynomial is trusted near the field; clamp wild extrapolation over the part
    floor = dark_level + 0.5 * (bright_med - dark_level)
    # and over a bright strip too narrow for the clearance (an edge a few px from the image
    # border): there the polynomial is extrapolated from the far side of the part and can
    # run to several times the field level, which would read the strip as dark and lose the
    # edge; no backlight is brighter than its brightest field pixels by a quarter of the
    # contrast (common practice, no source)
    bright_max = float(np.max(small[bright0]))
    ceiling = dark_level + _BG_CEILING_REL * (bright_max - dark_level)
    bg_small = np.clip(bg_small, floor, max(ceiling, floor))
    bg_fit = np.clip(bg_fit, floor, max(ceiling, floor))
    bg_small_a = bg_small.astype(a.dtype)
    # the denominator background - dark enlarged from the grid (bilinear weights sum to
    # one, so this is the enlarged background less the dark level); one full-size
    # temporary, freed on return
    den_small = np.maximum(bg_small - dark_level, 1e-9).astype(a.dtype)
    denom = (cv2.resize(den_small, (cols, rows), interpolation=cv2.INTER_LINEAR) if k > 1
             else den_small)
    flat = np.subtract(a, a.dtype.type(dark_level))
    flat /= denom
    del denom
    contrast = float(np.median(bg_small - dark_level))
    try:
        # on the reduced copy, flattened by the reduced background (information only)
        otsu = float(threshold_otsu((small - dark_level) / np.maximum(bg_fit - dark_level, 1e-9)
                                    if k > 1 else flat))
    except ValueError:
        otsu = 0.5
    vig = 1.0 - float(bg_small.min() / bg_small.max()) if bg_small.max() > 0 else 0.0
    return Silhouette(flat=flat, dark_level=dark_level, contrast=contrast, otsu_level=otsu,
                      vignetting=vig, background_grid=bg_small_a)
