"""Lens calibration from checkerboard views (pinhole + radial distortion, OpenCV).

A planar checkerboard seen in several poses, some tilted 10-20 deg, gives the focal length,
principal point and distortion (Zhang, "A flexible new technique for camera calibration",
IEEE TPAMI 22(11):1330-1334, 2000, doi:10.1109/34.888718, as implemented by
``cv2.calibrateCameraExtended``). Corners come from ``cv2.findChessboardCornersSB`` with
``CALIB_CB_ACCURACY`` (Duda & Frese, BMVC 2018). Narrow-field views are nearly affine, so
only the terms the data support are fitted: k1, k2 by default (``CALIB_FIX_K3 |
CALIB_ZERO_TANGENT_DIST``); richer models are kept only when they lower the held-out error
(../shared/vision-notes.md section 3).

A small RMS does not validate the model: every view is also predicted from a lens fitted to
the *other* views (leave-one-out), and the scale in the part's plane must still come from a
gauge (:func:`profilecheck.calibration.attach_lens`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from ..errors import CalibrationError
from .model import Lens

__all__ = ["GridCalibration", "find_grid_corners", "grid_object_points",
           "calibrate_lens_from_points", "calibrate_grid", "MIN_VIEWS", "TERMS"]

#: Fewest board views accepted (each leave-one-out fit then still rests on three views).
MIN_VIEWS = 4

#: The distortion models tried, simplest first; names are used in reports.
TERMS = ("k1k2", "k1k2+tangential", "k1k2k3")

#: Views tilted less than this (deg) leave the focal length undetermined (common practice,
#: no source: Zhang 2000 section 3.3 shows the degeneracy of parallel planes; the 5 deg
#: threshold is ours).
MIN_TILT_SPREAD_DEG = 5.0

#: Largest relative standard deviation of the focal length accepted (ours, no source).
MAX_REL_STD_F = 0.01

#: A richer distortion model must lower the mean held-out error by this fraction (ours).
_RICHER_GAIN = 0.10

#: Richer models are tried only when the simple one leaves more than this RMS (px) or
#: predicts held-out views worse than this ratio times its RMS: corner detection alone
#: leaves 0.03-0.04 px (vision-notes section 0), so below these there is nothing to model.
_GOOD_RMS_PX = 0.05
_HOLDOUT_RATIO = 1.5


@dataclass(frozen=True)
class GridCalibration:
    """Result of a checkerboard lens calibration.

    Attributes
    ----------
    lens : Lens
        Intrinsics (px) and distortion (k1, k2, p1, p2, k3); ``working_distance_mm`` is NaN
        until a gauge in the part's plane fixes it (:func:`attach_lens`).
    image_size : (int, int)
        (width, height) px.
    square_mm, pattern
        Board square size and inner-corner count (cols, rows).
    terms : str
        Distortion model kept, one of :data:`TERMS`.
    rms_px : float
        RMS reprojection error over all corners of all views (px).
    per_view_rms_px : tuple of float
        RMS reprojection error of each view in the joint fit.
    holdout_rms_px : tuple of float
        RMS error of each view predicted by a lens fitted to the other views (its pose from
        ``cv2.solvePnP`` on its own corners): the leave-one-out check.
    std_fx_px, std_fy_px, std_cx_px, std_cy_px : float
        Standard deviations (k = 1) from the fit's covariance.
    view_tilt_deg : tuple of float
        Angle between each board's normal and the optical axis.
    view_distance_mm : tuple of float
        Distance along the optical axis to each board's centre.
    n_points : int
        Corners used.
    warnings : tuple of str
    """

    lens: Lens
    image_size: tuple[int, int]
    square_mm: float
    pattern: tuple[int, int]
    terms: str
    rms_px: float
    per_view_rms_px: tuple[float, ...]
    holdout_rms_px: tuple[float, ...]
    std_fx_px: float
    std_fy_px: float
    std_cx_px: float
    std_cy_px: float
    view_tilt_deg: tuple[float, ...]
    view_distance_mm: tuple[float, ...]
    n_points: int
    warnings: tuple[str, ...] = ()

    @property
    def focal_px(self) -> float:
        """Mean of fx and fy (px)."""
        return 0.5 * (self.lens.fx_px + self.lens.fy_px)

    @property
    def max_holdout_rms_px(self) -> float:
        return float(max(self.holdout_rms_px))

    def to_dict(self) -> dict:
        return {
            "terms": self.terms, "square_mm": self.square_mm, "pattern": list(self.pattern),
            "views": len(self.per_view_rms_px), "n_points": self.n_points,
            "rms_px": self.rms_px, "per_view_rms_px": list(self.per_view_rms_px),
            "holdout_rms_px": list(self.holdout_rms_px),
            "std_fx_px": self.std_fx_px, "std_fy_px": self.std_fy_px,
            "std_cx_px": self.std_cx_px, "std_cy_px": self.std_cy_px,
            "view_tilt_deg": list(self.view_tilt_deg),
            "view_distance_mm": list(self.view_distance_mm),
        }


def _parse_pattern(pattern: Sequence[int]) -> tuple[int, int]:
    try:
        cols, rows = (int(v) for v in pattern)
    except (TypeError, ValueError):
        raise ValueError(f"pattern must be (cols, rows) inner corners, got {pattern!r}") from None
    if cols < 3 or rows < 3:
        raise ValueError(f"pattern needs at least 3 x 3 inner corners, got {cols} x {rows}")
    return cols, rows


def grid_object_points(pattern: Sequence[int], square_mm: float) -> np.ndarray:
    """Board coordinates (mm, z = 0) of the inner corners in OpenCV's row-major order:
    (M, 3) float64 with x = col * square, y = row * square."""
    cols, rows = _parse_pattern(pattern)
    if not (isinstance(square_mm, (int, float)) and math.isfinite(square_mm) and square_mm > 0):
        raise ValueError(f"square_mm must be a positive length, got {square_mm!r}")
    j, i = np.mgrid[0:rows, 0:cols]
    return np.column_stack([i.ravel() * square_mm, j.ravel() * square_mm,
                            np.zeros(rows * cols)]).astype(np.float64)


def _to_uint8(image: np.ndarray) -> np.ndarray:
    img = np.asarray(image)
    if img.ndim != 2:
        raise ValueError(f"image must be a 2-D grey array, got shape {img.shape}")
    if img.dtype == np.uint8:
        return img
    if img.dtype == np.uint16:
        return (img.astype(np.float64) / 257.0).round().astype(np.uint8)
    f = img.astype(np.float64)
    if not np.all(np.isfinite(f)):
        raise ValueError("image must be finite")
    return np.clip(f * 255.0, 0, 255).round().astype(np.uint8)


def find_grid_corners(image: np.ndarray, pattern: Sequence[int], *, view: str = "image") -> np.ndarray:
    """Inner corners of a checkerboard, (M, 2) float64 (x, y) px, OpenCV row-major order.

    Parameters
    ----------
    image : (H, W) array
        Grey image, float in [0, 1] or uint8/uint16.
    pattern : (cols, rows)
        Inner-corner count (a board of 10 x 7 squares has 9 x 6 inner corners).
    view : str
        Name used in error messages.

    Raises
    ------
    CalibrationError
        The whole pattern is not found.
    """
    import cv2

    cols, rows = _parse_pattern(pattern)
    img8 = _to_uint8(image)
    # CALIB_CB_NORMALIZE_IMAGE is left out: on backlit renders it raised the corner error
    # from 0.025 px to 0.25 px RMS (benchmarks/lens.py).
    flags = cv2.CALIB_CB_ACCURACY
    ok, corners = cv2.findChessboardCornersSB(img8, (cols, rows), flags=flags)
    if not ok or corners is None or len(corners) != cols * rows:
        raise CalibrationError(
            f"{view}: no {cols} x {rows} checkerboard found (the whole board with a white "
            f"border about one square wide must be in view, in focus and evenly lit)")
    return corners.reshape(-1, 2).astype(np.float64)


def _flags(terms: str) -> int:
    import cv2

    base = cv2.CALIB_FIX_K3 | cv2.CALIB_ZERO_TANGENT_DIST
    if terms == "k1k2":
        return base
    if terms == "k1k2+tangential":
        return cv2.CALIB_FIX_K3
    if terms == "k1k2k3":
        return cv2.CALIB_ZERO_TANGENT_DIST
    raise ValueError(f"terms must be one of {TERMS} or 'auto', got {terms!r}")


def _fit(obj: list[np.ndarray], img: list[np.ndarray], size: tuple[int, int], flags: int):
    import cv2

    crit = (cv2.TERM_CRITERIA_COUNT | cv2.TERM_CRITERIA_EPS, 200, 1e-12)
    res = cv2.calibrateCameraExtended(
        [o.astype(np.float32) for o in obj], [p.astype(np.float32).reshape(-1, 1, 2) for p in img],
        size, None, None, flags=flags, criteria=crit)
    rms, k, d, rvecs, tvecs, std_in, std_ex, per_view = res
    return (float(rms), k, d.ravel(), rvecs, tvecs, std_in.ravel(), per_view.ravel(),
            std_ex.ravel())


def _holdout(obj, img, size, flags) -> list[float]:
    """RMS error of each view predicted by a lens fitted to the others (pose by solvePnP)."""
    import cv2

    out = []
    for i in range(len(obj)):
        rest_o = [o for j, o in enumerate(obj) if j != i]
        rest_i = [p for j, p in enumerate(img) if j != i]
        _, k, d, *_ = _fit(rest_o, rest_i, size, flags)
        ok, rv, tv = cv2.solvePnP(obj[i], img[i].reshape(-1, 1, 2), k, d,
                                  flags=cv2.SOLVEPNP_ITERATIVE)
        if not ok:
            out.append(float("inf"))
            continue
        proj, _ = cv2.projectPoints(obj[i], rv, tv, k, d)
        err = proj.reshape(-1, 2) - img[i]
        out.append(float(np.sqrt(np.mean(np.sum(err ** 2, axis=1)))))
    return out


def calibrate_lens_from_points(object_points: Sequence[np.ndarray], image_points: Sequence[np.ndarray],
                               image_size: tuple[int, int], *, square_mm: float = float("nan"),
                               pattern: tuple[int, int] = (0, 0), terms: str = "auto") -> GridCalibration:
    """Fit the lens to board corners already found.

    Parameters
    ----------
    object_points : sequence of (M, 3) arrays
        Board coordinates (mm, z = 0) per view.
    image_points : sequence of (M, 2) arrays
        Corner positions (x, y) px per view.
    image_size : (width, height)
    terms : {'auto', 'k1k2', 'k1k2+tangential', 'k1k2k3'}
        Distortion terms. 'auto' fits k1, k2; only when that leaves more than 0.05 px RMS
        or predicts held-out views worse than 1.5 x its RMS are the richer models tried, and
        one is kept only when it lowers the mean leave-one-out error by 10 % or more.

    Raises
    ------
    CalibrationError
        Fewer than :data:`MIN_VIEWS` views, all views nearly square to the camera, or a
        focal length the data cannot fix.
    """
    import cv2

    obj = [np.asarray(o, dtype=np.float64).reshape(-1, 3) for o in object_points]
    img = [np.asarray(p, dtype=np.float64).reshape(-1, 2) for p in image_points]
    if len(obj) != len(img):
        raise ValueError("object_points and image_points must have one entry per view")
    for o, p in zip(obj, img):
        if len(o) != len(p) or len(o) < 6:
            raise ValueError("each view needs the same number (>= 6) of object and image points")
    w, h = (int(v) for v in image_size)
    if w <= 0 or h <= 0:
        raise ValueError(f"image_size must be positive (width, height), got {image_size!r}")
    if len(obj) < MIN_VIEWS:
        raise CalibrationError(
            f"only {len(obj)} board view(s): a lens calibration needs at least {MIN_VIEWS}, "
            f"better 8-15, several tilted 10-20 deg in different directions")
    if terms == "auto":
        candidates = list(TERMS)
    else:
        _flags(terms)
        candidates = [terms]
    best = None
    for t in candidates:
        if best is not None and best[1][0] <= _GOOD_RMS_PX and best[2] <= _HOLDOUT_RATIO * best[1][0]:
            break  # the simpler model already fits to the corner noise and predicts held-out views
        flags = _flags(t)
        fit = _fit(obj, img, (w, h), flags)
        hold = _holdout(obj, img, (w, h), flags)
        score = float(np.mean(hold))
        if best is None or (score < best[2] * (1.0 - _RICHER_GAIN)):
            best = (t, fit, score, hold)
    t, (rms, k, d, rvecs, tvecs, std_in, per_view, std_ex), _, hold = best
    d5 = np.zeros(5)
    d5[:min(5, len(d))] = d[:5]

    tilts, dists = [], []
    for rv, tv, o in zip(rvecs, tvecs, obj):
        r, _ = cv2.Rodrigues(rv)
        nz = abs(float(r[2, 2]))
        tilts.append(math.degrees(math.acos(min(1.0, nz))))
        c = r @ o.mean(axis=0) + tv.ravel()
        dists.append(float(c[2]))
    spread = _normal_spread_deg(rvecs)
    fx, fy = float(k[0, 0]), float(k[1, 1])
    std_fx, std_fy = float(std_in[0]), float(std_in[1])
    if spread < MIN_TILT_SPREAD_DEG:
        raise CalibrationError(
            f"the board views differ in tilt by only {spread:.1f} deg: the focal length cannot be "
            f"found from views square to the camera; tilt the board 10-20 deg in several directions")
    if not (math.isfinite(std_fx) and std_fx / fx <= MAX_REL_STD_F):
        raise CalibrationError(
            f"the focal length is not fixed by these views (relative spread {std_fx / fx:.2%}); "
            f"add more views tilted 10-20 deg in different directions")
    warnings = []
    if len(obj) < 8:
        warnings.append(f"only {len(obj)} views: 8-15 give a steadier lens model")
    if max(hold) > 3.0 * max(rms, 0.02):
        warnings.append(f"a held-out view misses by {max(hold):.3f} px (fit RMS {rms:.3f} px): "
                        f"check that view for motion blur or a warped board")
    reach = max(float(np.max(np.hypot(p[:, 0] - k[0, 2], p[:, 1] - k[1, 2]))) for p in img)
    std_z = _std_distance_mm(dists, std_ex)
    # expanded (k = 2) like u_fx_px; standard deviations from the fit's covariance
    lens = Lens(fx_px=fx, fy_px=fy, cx_px=float(k[0, 2]), cy_px=float(k[1, 2]),
                dist=tuple(float(v) for v in d5), rms_reprojection_px=rms, u_fx_px=2.0 * std_fx,
                grid_radius_px=reach, u_fy_px=2.0 * std_fy, u_cx_px=2.0 * float(std_in[2]),
                u_cy_px=2.0 * float(std_in[3]), u_working_distance_mm=2.0 * std_z)
    return GridCalibration(
        lens=lens, image_size=(w, h), square_mm=float(square_mm), pattern=tuple(pattern),
        terms=t, rms_px=rms, per_view_rms_px=tuple(float(v) for v in per_view),
        holdout_rms_px=tuple(hold), std_fx_px=std_fx, std_fy_px=std_fy,
        std_cx_px=float(std_in[2]), std_cy_px=float(std_in[3]),
        view_tilt_deg=tuple(tilts), view_distance_mm=tuple(dists),
        n_points=int(sum(len(o) for o in obj)), warnings=tuple(warnings))


def _std_distance_mm(dists: list[float], std_ex: np.ndarray) -> float:
    """Standard uncertainty (mm) of the working distance Z the board views give.

    Z is taken as the boards' distance (the median over views, as
    :func:`profilecheck.calibration.grid_record` does; :func:`attach_lens` then fixes it
    from the gauge as f s). The views stand at different distances on purpose, so the
    measurement plane is known from them only to within their range: half of it as a
    rectangular term (GUM 4.3.7), combined (GUM 5.1.2) with the median fitted standard
    deviation of the view translations along the optical axis (``stdDeviationsExtrinsics``
    of ``cv2.calibrateCameraExtended``: rx, ry, rz, tx, ty, tz per view). For Z from a
    gauge this is a conservative figure (f s alone is known far better).
    """
    z = np.asarray(dists, dtype=np.float64)
    half_range = 0.5 * float(z.max() - z.min()) if len(z) else float("nan")
    ex = np.asarray(std_ex, dtype=np.float64).ravel()
    tz = ex[5::6] if len(ex) >= 6 else np.array([0.0])
    tz = tz[np.isfinite(tz)]
    return math.hypot(half_range / math.sqrt(3.0), float(np.median(tz)) if len(tz) else 0.0)


def _normal_spread_deg(rvecs) -> float:
    """Largest angle between the board normals of any two views (deg)."""
    import cv2

    normals = []
    for rv in rvecs:
        r, _ = cv2.Rodrigues(rv)
        normals.append(r[:, 2])
    n = np.array(normals)
    cos = np.clip(np.abs(n @ n.T), -1.0, 1.0)
    return float(np.degrees(np.arccos(cos.min())))


def calibrate_grid(images: Sequence[np.ndarray], square_mm: float, *, pattern: Sequence[int] = (9, 6),
                   terms: str = "auto", names: Sequence[str] | None = None) -> GridCalibration:
    """Lens calibration from checkerboard images.

    Parameters
    ----------
    images : sequence of (H, W) arrays
        Grey views of the same board, all the same size.
    square_mm : float
        Board square size (mm).
    pattern : (cols, rows)
        Inner corners.
    terms : str
        See :func:`calibrate_lens_from_points`.
    names : sequence of str, optional
        View names for messages (file names).

    Raises
    ------
    CalibrationError
        A view without the board, views of different sizes, too few views, or a geometry
        that cannot fix the lens.
    """
    cols, rows = _parse_pattern(pattern)
    objp = grid_object_points((cols, rows), square_mm)
    if len(images) == 0:
        raise ValueError("images must hold at least one view")
    if len(images) < MIN_VIEWS:
        raise CalibrationError(
            f"only {len(images)} board view(s): a lens calibration needs at least {MIN_VIEWS}, "
            f"better 8-15, several tilted 10-20 deg in different directions")
    names = list(names) if names is not None else [f"view {i + 1}" for i in range(len(images))]
    shape = np.asarray(images[0]).shape
    corners = []
    for img, name in zip(images, names):
        if np.asarray(img).shape != shape:
            raise CalibrationError(f"{name} is {np.asarray(img).shape[1]} x {np.asarray(img).shape[0]} px "
                                   f"but the first view is {shape[1]} x {shape[0]} px")
        corners.append(find_grid_corners(img, (cols, rows), view=name))
    return calibrate_lens_from_points([objp] * len(corners), corners, (shape[1], shape[0]),
                                      square_mm=float(square_mm), pattern=(cols, rows), terms=terms)
