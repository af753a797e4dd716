"""Scale calibration from a pin gauge or a gauge block, and the check-standard pin reading.

A pin gauge (or a gauge block seen edge-on) lying on the backlight gives a dark bar with
two parallel straight sides. Each side is fitted robustly with
:func:`profilecheck.imaging.fit_line`; the width in px is the mean perpendicular distance
between the lines, and the scale is the gauge size over that width.

A single width folds the edge offset b of the camera and light into the scale (the scale
reads D / (D/s + 2b)), so ``scale_absorbs_offset`` is set and widths far from the gauge's
size carry an extra term 2 b (1 - D / D_cal) (../shared/vision-notes.md section 4,
"Calibration strategy"). Combine with a pitch standard (:func:`calibrate_from_lines`,
:func:`combine`) to separate the two.
"""

from __future__ import annotations

import math
import os
from datetime import datetime, timezone
from typing import Any

import numpy as np

from ..errors import CalibrationError
from ..quantity import Measured, K_COVERAGE, combine_u
from ._pair import find_bar_edges, BarEdges
from .lens import undistort_points, cylinder_apparent_diameter_mm, cylinder_axial_diameter_mm
from .model import Calibration, Lens

__all__ = ["calibrate_from_pin", "calibrate_from_block", "measure_pin",
           "ASSUMED_EDGE_OFFSET_BOUND_PX", "utc_now"]

#: Half-width (px) of the rectangular bound assumed for an edge offset that no gauge has
#: measured, on linear (gamma-corrected, unclipped) images under incoherent backlight: the
#: residual systematics of ../shared/vision-notes.md section 0 (clipping -0.23 px, partial
#: coherence about +0.1 to +0.3 px at 3-10 um/px) stay inside it. Ours.
ASSUMED_EDGE_OFFSET_BOUND_PX = 0.5

#: The gauge picture's response is checked (:func:`profilecheck.imaging.estimate_gamma`) and a
#: note given when the estimate differs from the declared gamma by more than this and by
#: more than 4 of its standard uncertainties (on linear renders of the bundled pins the
#: estimate is 0.97-1.00 +/- 0.04; common practice, no source for the thresholds).
GAMMA_CHECK_MIN = 0.3
GAMMA_CHECK_K = 4.0

#: Edge blur sigma (px) above which a gauge image is called out of focus (ours, no source;
#: cv2.estimateChessboardSharpness's 3 px 10-90 % rise equals sigma 1.2 px, so 3 px is far
#: beyond a focused view).
MAX_FOCUSED_BLUR_PX = 3.0


#: Relative change of the fitted edge blur against the calibration's that is reported as a
#: possible focus change (ours, no source).
FOCUS_CHANGE = 0.3


def utc_now() -> str:
    """Current time, ISO 8601 UTC to the second (``2026-12-01T23:40:00+00:00``)."""
    return datetime.now(timezone.utc).isoformat(timespec="seconds")


def _load(image: Any) -> np.ndarray:
    if isinstance(image, (str, os.PathLike)):
        from ..imaging import load_image

        return load_image(image)
    img = np.asarray(image)
    if img.ndim != 2:
        raise ValueError(f"image must be a 2-D grey array or a file path, got shape {img.shape}")
    if img.dtype == np.uint8:
        return img.astype(np.float64) / 255.0
    if img.dtype == np.uint16:
        return img.astype(np.float64) / 65535.0
    return img.astype(np.float64)


def _check_size(name: str, v: Any) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float, np.floating, np.integer)):
        raise TypeError(f"{name} must be a number in mm, got {type(v).__name__}")
    f = float(v)
    if not math.isfinite(f) or f <= 0:
        raise ValueError(f"{name} must be a positive finite length in mm, got {v!r}")
    return f


def _check_u(name: str, v: Any) -> float:
    if isinstance(v, bool) or not isinstance(v, (int, float, np.floating, np.integer)):
        raise TypeError(f"{name} must be a number in mm, got {type(v).__name__}")
    f = float(v)
    if not math.isfinite(f) or f < 0:
        raise ValueError(f"{name} must be a finite length >= 0 in mm, got {v!r}")
    return f


def _check_gamma(gamma: Any) -> float:
    if isinstance(gamma, bool) or not isinstance(gamma, (int, float)) or not math.isfinite(gamma) or gamma <= 0:
        raise ValueError(f"gamma must be a positive number, got {gamma!r}")
    return float(gamma)


def gauge_edges(image: Any, *, roi=None, gamma: float = 1.0, lens: Lens | None = None):
    """Load the image, find its edges and return ``(img, edges, xy)`` with ``xy`` the edge
    points, undistorted when a lens is given."""
    from ..imaging import find_edges

    img = _load(image)
    edges = find_edges(img, roi=roi, gamma=gamma)
    xy = np.asarray(edges.xy, dtype=np.float64)
    if lens is not None and len(xy):
        xy = undistort_points(xy, lens)
    return img, edges, xy


def _bar(image, what, roi, gamma, lens) -> tuple[np.ndarray, Any, BarEdges]:
    img, edges, xy = gauge_edges(image, roi=roi, gamma=gamma, lens=lens)
    if len(xy) == 0:
        raise CalibrationError(f"no {what} found: the image has no edges (check backlight and focus)")
    bar = find_bar_edges(xy, np.asarray(edges.normal, float), np.asarray(edges.std_px, float),
                         blur_px=float(edges.blur_px), what=what)
    return img, edges, bar


def _expected_width_mm(kind: str, size_mm: float, mm_per_px: float, lens: Lens | None,
                       thickness_mm: float = 0.0) -> float:
    """Width the gauge should show in the measurement plane (mm): the size itself in a
    telecentric view; with a lens (Z = f * s) a cylinder shows D / sqrt(1 - (D/2Z)^2)
    (vision-notes section 4) and a block of thickness t shows W Z / (Z - t/2) (its front
    edges are t/2 nearer the projection centre)."""
    if lens is None or not math.isfinite(lens.fx_px):
        return size_mm
    z = 0.5 * (lens.fx_px + lens.fy_px) * mm_per_px
    if kind == "pin":
        return cylinder_apparent_diameter_mm(size_mm, z)
    if kind == "block" and thickness_mm > 0:
        return size_mm * z / (z - 0.5 * thickness_mm)
    return size_mm


def _scale_from_width(kind: str, size_mm: float, width_px: float, lens: Lens | None,
                      thickness_mm: float = 0.0) -> float:
    s = size_mm / width_px
    for _ in range(20):  # fixed point s = expected(s) / W; converges in a few steps
        s_new = _expected_width_mm(kind, size_mm, s, lens, thickness_mm) / width_px
        if abs(s_new - s) <= 1e-15 * s:
            break
        s = s_new
    return s


def gamma_check_note(img: np.ndarray, gamma: float, roi=None) -> str | None:
    """A note when the gauge picture's grey levels do not look like the declared gamma.

    An un-inverted gamma moves every blurred edge toward the dark side (0.81 sigma_e at
    gamma 2.2, vision-notes section 4); a gauge calibration in the same light absorbs part
    of it, but not for sizes unlike the gauge's. The response is estimated from the shape
    of the gauge's own edges (:func:`profilecheck.imaging.estimate_gamma`); None when it
    agrees, or when the edges are too sharp or too few for an estimate.
    """
    from ..errors import MeasurementError
    from ..imaging import estimate_gamma

    try:
        est = estimate_gamma(img, roi=roi)
    except (MeasurementError, ValueError):
        return None
    g, sd = float(est.gamma), float(est.std)
    if not (math.isfinite(g) and math.isfinite(sd)):
        return None
    if abs(g - gamma) <= max(GAMMA_CHECK_MIN, GAMMA_CHECK_K * sd):
        return None
    return (f"the gauge picture's grey levels look like a camera gamma of {g:.2f} +/- "
            f"{2 * sd:.2f} (k = 2), not the {gamma:g} declared: an unlinearised response moves "
            f"every edge toward the dark side; set the camera to a linear response, or "
            f"calibrate with --gamma {g:.1f} (the calibration then linearises every picture "
            f"measured with it)")


def _gauge_cal(kind: str, size_mm: float, bar: BarEdges, edges: Any, img: np.ndarray, *,
               u_gauge_mm: float, gamma: float, label: str, lens: Lens | None,
               thickness_mm: float = 0.0, roi=None) -> Calibration:
    s = _scale_from_width(kind, size_mm, bar.width_px, lens, thickness_mm)
    rel_std = combine_u(bar.std_width_px / bar.width_px, (u_gauge_mm / K_COVERAGE) / size_mm)
    notes = [f"scale from one {size_mm:.4f} mm {kind}: it includes the edge offset, so widths "
             f"far from {size_mm:.3f} mm carry an extra +/-{2 * ASSUMED_EDGE_OFFSET_BOUND_PX:.1f} px x "
             f"|1 - size/{size_mm:.3f}|; add a line-scale calibration (combine) to remove it"]
    notes += [str(w) for w in getattr(edges, "warnings", ())]
    if math.isfinite(bar.blur_px) and bar.blur_px > MAX_FOCUSED_BLUR_PX:
        notes.append(f"edges are soft (blur {bar.blur_px:.1f} px): refocus and recalibrate")
    if lens is not None:
        notes.append("lens model applied: edge points undistorted before the line fits")
    if u_gauge_mm == 0:
        notes.append("no gauge uncertainty given (--gauge-u): the scale uncertainty leaves out "
                     "the gauge's own tolerance")
    g_note = gamma_check_note(img, gamma, roi)
    if g_note:
        notes.append(g_note)
    gauge = {"kind": kind, "size_mm": size_mm, "u_mm": u_gauge_mm, "width_px": bar.width_px,
             "std_width_px": bar.std_width_px, "nonparallel_deg": bar.nonparallel_deg,
             "n_points": bar.n_points, "rms_px": bar.rms_px, "length_px": bar.length_px}
    if thickness_mm:
        gauge["thickness_mm"] = thickness_mm
    return Calibration(
        mm_per_px=s, u_mm_per_px=K_COVERAGE * s * rel_std,
        image_size=(int(img.shape[1]), int(img.shape[0])), gauge=gauge, created=utc_now(),
        label=str(label), edge_offset_px=0.0, u_edge_offset_px=0.0, scale_absorbs_offset=True,
        gamma=gamma, blur_px=bar.blur_px, lens=lens, notes=tuple(notes))


def calibrate_from_pin(image: Any, diameter_mm: float, *, u_gauge_mm: float = 0.0, gamma: float = 1.0,
                       label: str = "", roi=None, lens: Lens | None = None) -> Calibration:
    """Scale calibration from a pin gauge (or any cylinder of known diameter) on the backlight.

    Parameters
    ----------
    image : (H, W) array or path
        Grey image (float in [0, 1], uint8 or uint16) or an image file; the pin is a dark
        bar crossing the view, tilt and vignetting allowed.
    diameter_mm : float
        Certified diameter of the pin (mm).
    u_gauge_mm : float
        Expanded uncertainty (k = 2) of that diameter (mm), e.g. from its certificate or
        class tolerance; combined with the edge-fit uncertainty per GUM 5.1.2.
    gamma : float
        Display gamma encoded in the image; intensities are linearised as ``I ** gamma``
        before edges are found.
    label : str
        Free camera label stored in the file.
    roi : (x_min, y_min, x_max, y_max), optional
        Search only this box (px, see :func:`profilecheck.imaging.find_edges`).
    lens : Lens, optional
        Lens model from a grid calibration: edge points are undistorted first and the
        perspective enlargement of the cylinder is removed (Z = f * s).

    Returns
    -------
    Calibration
        ``scale_absorbs_offset = True``; ``gauge`` holds the size, the measured width in px
        and the fit statistics.

    Raises
    ------
    CalibrationError
        No pin found, sides out of parallel by more than 0.5 deg.

    Notes
    -----
    Width = mean perpendicular distance between the robust line fits of the two sides
    (see :mod:`profilecheck.calibration._pair`); scale = D / width. Relative standard
    uncertainty = sqrt((std_width / width)^2 + (u_gauge / 2 / D)^2) (GUM 5.1.2); the expanded
    value is twice that (k = 2). Frames and signs: docs/conventions.md.
    """
    d = _check_size("diameter_mm", diameter_mm)
    u = _check_u("u_gauge_mm", u_gauge_mm)
    g = _check_gamma(gamma)
    img, edges, bar = _bar(image, "pin", roi, g, lens)
    return _gauge_cal("pin", d, bar, edges, img, u_gauge_mm=u, gamma=g, label=label, lens=lens,
                      roi=roi)


def calibrate_from_block(image: Any, width_mm: float, *, u_gauge_mm: float = 0.0, gamma: float = 1.0,
                         label: str = "", roi=None, lens: Lens | None = None,
                         thickness_mm: float = 0.0) -> Calibration:
    """Scale calibration from a gauge block seen edge-on (its two measuring faces are the
    two parallel sides of a dark bar).

    Parameters are those of :func:`calibrate_from_pin`, with ``width_mm`` the block's
    nominal length between the measuring faces. ``thickness_mm`` (the block's depth along
    the line of sight) matters only with a ``lens``: the silhouette is then made by the
    front edges of the faces, t/2 nearer the camera.

    Notes
    -----
    When more than one pair of parallel sides is in view (a short block with its ends in
    view) the pair with the most edge points is taken: keep the measuring faces the long
    sides in the image, or pass a ``roi``.
    """
    w = _check_size("width_mm", width_mm)
    u = _check_u("u_gauge_mm", u_gauge_mm)
    g = _check_gamma(gamma)
    t = _check_u("thickness_mm", thickness_mm)
    img, edges, bar = _bar(image, "block", roi, g, lens)
    return _gauge_cal("block", w, bar, edges, img, u_gauge_mm=u, gamma=g, label=label, lens=lens,
                      thickness_mm=t, roi=roi)


def measure_pin(image: Any, calibration: Calibration, *, roi=None) -> Measured:
    """Diameter (mm) of a pin or bar with an existing calibration, edge offset corrected.

    Parameters
    ----------
    image : (H, W) array or path
        Same size as the calibration's images (refused otherwise).
    calibration : Calibration
    roi : (x_min, y_min, x_max, y_max), optional
        Search only this box (px, see :func:`profilecheck.imaging.find_edges`).

    Returns
    -------
    Measured
        ``value`` diameter mm, ``u`` expanded (k = 2) combining the width fit, the scale's
        uncertainty (relative), the edge-offset uncertainty and, when the scale came from one
        gauge of another size, the offset folded into that scale (type B, rectangular bound
        :data:`ASSUMED_EDGE_OFFSET_BOUND_PX` per edge, GUM 4.3.7); with a lens model the
        apparent width is referred to the axial plane, D = A / sqrt(1 + (A / 2Z)^2).

    Raises
    ------
    CalibrationError
        Image size differs from the calibration's.
    MeasurementError
        No pin found.
    """
    from ..errors import MeasurementError

    if not isinstance(calibration, Calibration):
        raise TypeError(f"calibration must be a Calibration, got {type(calibration).__name__}")
    img = _load(image)
    calibration.check_image(img.shape)
    try:
        _, edges, bar = _bar(img, "pin", roi, calibration.gamma, calibration.lens)
    except CalibrationError as e:
        raise MeasurementError(str(e)) from None
    s = calibration.mm_per_px
    width_px = bar.width_px + calibration.width_correction_px()
    apparent = width_px * s
    lens = calibration.lens
    note = []
    if lens is not None and math.isfinite(lens.fx_px):
        z = 0.5 * (lens.fx_px + lens.fy_px) * s
        value = cylinder_axial_diameter_mm(apparent, z)
        note.append(f"perspective of the cylinder removed (Z = {z:.1f} mm)")
    else:
        value = apparent
    std_terms = [bar.std_width_px * s,
                 value * (calibration.u_mm_per_px / K_COVERAGE) / s,
                 2.0 * (calibration.u_edge_offset_px / K_COVERAGE) * s]
    if calibration.scale_absorbs_offset:
        d_cal = float(calibration.gauge.get("size_mm", float("nan")))
        if math.isfinite(d_cal) and d_cal > 0:
            lever = abs(1.0 - value / d_cal)
            std_terms.append(2.0 * ASSUMED_EDGE_OFFSET_BOUND_PX / math.sqrt(3.0) * lever * s)
            if lever > 0.05:
                note.append(f"scale from a {d_cal:.3f} mm gauge includes the edge offset: "
                            f"extra uncertainty at this size")
    cal_blur = calibration.blur_px
    if math.isfinite(cal_blur) and cal_blur > 0 and abs(bar.blur_px / cal_blur - 1.0) > FOCUS_CHANGE:
        note.append(f"edge blur {bar.blur_px:.2f} px against {cal_blur:.2f} px at calibration: "
                    f"focus may have changed, and with it the scale; recalibrate")
    if calibration.width_correction_px():
        note.append(f"edge offset corrected ({calibration.width_correction_px():+.3f} px on the width)")
    return Measured(value=float(value), u=K_COVERAGE * combine_u(*std_terms), unit="mm",
                    n_points=bar.n_points, residual=bar.rms_px, note="; ".join(note))
