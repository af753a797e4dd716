"""Putting calibrations together: scale from a bias-free standard plus edge offset from a
gauge, and a grid lens model plus a gauge in the part's plane.

../shared/vision-notes.md section 4 ("Calibration strategy"): the edge bias b cancels in
centre-to-centre distances (line pitch, checkerboard corners) but doubles in diameters, so
the scale comes from a pitch standard and b from a pin or block of known size seen in the
same plane and light: b = (W_px - D / s) / 2.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from ..errors import CalibrationError
from ..quantity import K_COVERAGE, combine_u
from .gauges import utc_now, _expected_width_mm, ASSUMED_EDGE_OFFSET_BOUND_PX
from .grid import GridCalibration
from .model import Calibration, Lens

__all__ = ["combine", "attach_lens", "grid_record", "calibrate_from_two_pins"]


def combine(scale_cal: Calibration, offset_cal: Calibration, *, label: str | None = None) -> Calibration:
    """Scale from ``scale_cal`` (lines or grid, no offset folded in) and edge offset from
    ``offset_cal`` (a pin or block calibration made in the same set-up).

    Parameters
    ----------
    scale_cal : Calibration
        ``scale_absorbs_offset`` must be False.
    offset_cal : Calibration
        A pin or block calibration (its ``gauge`` holds ``size_mm`` and ``width_px``).
    label : str, optional
        Label of the result (default: the scale calibration's).

    Returns
    -------
    Calibration
        ``mm_per_px`` of ``scale_cal``; ``edge_offset_px`` b = (W - D'/s) / 2 with D' the
        width the gauge shows in the plane (its size, or the cylinder's perspective width
        when a lens is held); U(b) combines the width fit, the gauge's U and the scale's U
        (GUM 5.1.2, sensitivities 1/2, 1/(2s), D/(2s^2)).

    Raises
    ------
    CalibrationError
        Different image sizes or gamma, a scale calibration that itself absorbs an offset,
        or an offset calibration without a gauge width.
    """
    for name, c in (("scale_cal", scale_cal), ("offset_cal", offset_cal)):
        if not isinstance(c, Calibration):
            raise TypeError(f"{name} must be a Calibration, got {type(c).__name__}")
    if scale_cal.image_size != offset_cal.image_size:
        raise CalibrationError(
            f"the scale was calibrated at {scale_cal.image_size[0]} x {scale_cal.image_size[1]} px "
            f"and the gauge at {offset_cal.image_size[0]} x {offset_cal.image_size[1]} px: use one set-up")
    if scale_cal.scale_absorbs_offset:
        raise CalibrationError("the scale calibration comes from a single gauge width and already "
                               "includes the edge offset: take the scale from a line scale or grid")
    if not math.isclose(scale_cal.gamma, offset_cal.gamma, rel_tol=1e-9):
        raise CalibrationError(f"gamma differs (scale {scale_cal.gamma}, gauge {offset_cal.gamma}): "
                               f"calibrate both with the same camera settings")
    g = offset_cal.gauge
    try:
        size = float(g["size_mm"])
        w_px = float(g["width_px"])
        std_w = float(g.get("std_width_px", 0.0))
        kind = str(g.get("kind", "pin"))
        u_d = float(g.get("u_mm", 0.0))
    except (KeyError, TypeError, ValueError):
        raise CalibrationError("the gauge calibration does not hold the gauge size and its width in px "
                               "(make it with a pin or block calibration)") from None
    if kind not in ("pin", "block"):
        raise CalibrationError(f"the edge offset needs a pin or block calibration, got {kind!r}")
    s = scale_cal.mm_per_px
    lens = scale_cal.lens if scale_cal.lens is not None else offset_cal.lens
    expected = _expected_width_mm(kind, size, s, lens, float(g.get("thickness_mm", 0.0)))
    b = 0.5 * (w_px - expected / s)
    std_b = 0.5 * combine_u(std_w, (u_d / K_COVERAGE) / s,
                            (expected / s) * (scale_cal.u_mm_per_px / K_COVERAGE) / s)
    notes = [n for n in scale_cal.notes if not n.startswith("edge offset not measured")]
    notes.append(f"edge offset {b:+.3f} px from the {size:.4f} mm {kind} "
                 f"({'dark part looks larger' if b > 0 else 'dark part looks smaller'})")
    if abs(b) > 2.0:
        notes.append("edge offset over 2 px: check gamma, clipping of the backlight and focus")
    return Calibration(
        mm_per_px=s, u_mm_per_px=scale_cal.u_mm_per_px, image_size=scale_cal.image_size,
        gauge={"kind": "combined", "scale": dict(scale_cal.gauge), "offset": dict(g)},
        created=utc_now(), label=scale_cal.label if label is None else str(label),
        edge_offset_px=float(b), u_edge_offset_px=float(K_COVERAGE * std_b),
        scale_absorbs_offset=False, gamma=scale_cal.gamma, blur_px=offset_cal.blur_px, lens=lens,
        notes=tuple(notes))


def _as_lens(grid: GridCalibration | Lens) -> Lens:
    if isinstance(grid, GridCalibration):
        return grid.lens
    if isinstance(grid, Lens):
        return grid
    raise TypeError(f"grid must be a GridCalibration or Lens, got {type(grid).__name__}")


def attach_lens(calibration: Calibration, grid: GridCalibration | Lens) -> Calibration:
    """Put a lens model into a gauge calibration made in the measurement plane.

    The working distance is Z = f * s (pinhole: an object of X mm at Z images to f X / Z
    px, so s = Z / f), with f the mean of fx and fy. The gauge calibration should have been
    made with the same lens (``lens=`` on the gauge call) so its edge points were
    undistorted; otherwise a note says the scale holds only near the image centre.

    Raises
    ------
    CalibrationError
        Image sizes differ.
    """
    if not isinstance(calibration, Calibration):
        raise TypeError(f"calibration must be a Calibration, got {type(calibration).__name__}")
    lens = _as_lens(grid)
    if isinstance(grid, GridCalibration) and tuple(grid.image_size) != tuple(calibration.image_size):
        raise CalibrationError(
            f"the grid views are {grid.image_size[0]} x {grid.image_size[1]} px but the gauge image is "
            f"{calibration.image_size[0]} x {calibration.image_size[1]} px: use one camera set-up")
    z = 0.5 * (lens.fx_px + lens.fy_px) * calibration.mm_per_px
    new_lens = replace(lens, working_distance_mm=float(z))
    notes = list(calibration.notes)
    if calibration.lens is None:
        notes.append("gauge edges were not undistorted: the scale holds near the image centre only; "
                     "recalibrate the gauge with the lens model for the whole field")
    notes.append(f"lens model: f = {lens.fx_px:.1f} px, working distance {z:.2f} mm, "
                 f"k1 = {lens.dist[0]:+.4f}, grid RMS {lens.rms_reprojection_px:.3f} px")
    return replace(calibration, lens=new_lens, notes=tuple(notes))


def grid_record(grid: GridCalibration, *, label: str = "") -> Calibration:
    """A calibration file holding only a grid's lens model.

    Its scale is the one the board itself had (median board distance over f): it is not
    the scale at the part's plane, and its uncertainty covers the spread of board distances.
    Use it with ``lens=`` in a gauge calibration (or :func:`attach_lens`).
    """
    if not isinstance(grid, GridCalibration):
        raise TypeError(f"grid must be a GridCalibration, got {type(grid).__name__}")
    f = grid.focal_px
    z = np.asarray(grid.view_distance_mm, dtype=np.float64)
    s = float(np.median(z)) / f
    half_range = 0.5 * float(z.max() - z.min()) / f
    std_s = combine_u(half_range / math.sqrt(3.0), s * grid.std_fx_px / f)
    notes = [f"lens from {len(grid.per_view_rms_px)} board views ({grid.terms}); the scale is the "
             f"board's own, not the part's: calibrate a gauge in the part's plane with this lens"]
    notes += list(grid.warnings)
    lens = replace(grid.lens, working_distance_mm=float(np.median(z)))
    gauge = {"kind": "grid", "size_mm": grid.square_mm, "pattern": list(grid.pattern)}
    gauge.update(grid.to_dict())
    return Calibration(
        mm_per_px=s, u_mm_per_px=K_COVERAGE * std_s, image_size=tuple(grid.image_size), gauge=gauge,
        created=utc_now(), label=str(label), edge_offset_px=0.0,
        u_edge_offset_px=K_COVERAGE * ASSUMED_EDGE_OFFSET_BOUND_PX / math.sqrt(3.0),
        scale_absorbs_offset=False, gamma=1.0, lens=lens, notes=tuple(notes))


def calibrate_from_two_pins(image_a, diameter_a_mm: float, image_b, diameter_b_mm: float, *,
                            u_gauge_a_mm: float = 0.0, u_gauge_b_mm: float = 0.0, gamma: float = 1.0,
                            label: str = "", roi_a=None, roi_b=None) -> Calibration:
    """Scale and edge offset from two pins of different diameter in the same set-up.

    The edge offset adds the same 2 b px to both widths, so it cancels in their
    difference: s = (D_b - D_a) / (W_b - W_a), and then b = (W_a - D_a / s) / 2
    (../shared/vision-notes.md section 4). Telecentric view assumed (no lens model).

    Parameters
    ----------
    image_a, image_b : (H, W) arrays or paths
        One pin each, same camera, focus and light.
    diameter_a_mm, diameter_b_mm : float
        Their certified diameters; they should differ by at least a third of the larger.
    u_gauge_a_mm, u_gauge_b_mm : float
        Their expanded uncertainties (k = 2).
    gamma, label
        As in :func:`calibrate_from_pin`.
    roi_a, roi_b : (x_min, y_min, x_max, y_max), optional

    Returns
    -------
    Calibration
        ``scale_absorbs_offset = False``. U(s)/s = 2 sqrt(std_Wa^2 + std_Wb^2 + (u_Da^2 +
        u_Db^2) / (4 s^2)) / (W_b - W_a) (GUM 5.1.2; u_D are the expanded gauge values).

    Raises
    ------
    CalibrationError
        Either pin not found, images of different sizes, or diameters too close together.
    """
    from .gauges import _bar, _check_size, _check_u, _check_gamma

    da = _check_size("diameter_a_mm", diameter_a_mm)
    db = _check_size("diameter_b_mm", diameter_b_mm)
    ua = _check_u("u_gauge_a_mm", u_gauge_a_mm)
    ub = _check_u("u_gauge_b_mm", u_gauge_b_mm)
    g = _check_gamma(gamma)
    if abs(db - da) < max(da, db) / 3.0:
        raise ValueError("diameter_a_mm and diameter_b_mm must differ by at least a third of the larger")
    img_a, edges_a, bar_a = _bar(image_a, "pin", roi_a, g, None)
    img_b, _, bar_b = _bar(image_b, "pin", roi_b, g, None)
    if img_a.shape != img_b.shape:
        raise CalibrationError(f"the two pin images differ in size ({img_a.shape[1]} x {img_a.shape[0]} "
                               f"and {img_b.shape[1]} x {img_b.shape[0]} px): use one set-up")
    dw = bar_b.width_px - bar_a.width_px
    if dw * (db - da) <= 0:
        raise CalibrationError("the larger pin does not look larger: check which image holds which pin")
    s = (db - da) / dw
    std_s = s * combine_u(bar_a.std_width_px, bar_b.std_width_px,
                          (ua / K_COVERAGE) / s, (ub / K_COVERAGE) / s) / abs(dw)
    b = 0.5 * (bar_a.width_px - da / s)
    std_b = 0.5 * combine_u(bar_a.std_width_px, (ua / K_COVERAGE) / s, (da / s) * std_s / s)
    notes = [str(w) for w in getattr(edges_a, "warnings", ())]
    notes.append(f"scale from the difference of two pins ({da:.4f} and {db:.4f} mm); edge offset "
                 f"{b:+.3f} px")
    gauge = {"kind": "two_pins", "size_mm": da, "u_mm": ua, "width_px": bar_a.width_px,
             "std_width_px": bar_a.std_width_px, "second_size_mm": db, "second_u_mm": ub,
             "second_width_px": bar_b.width_px, "n_points": bar_a.n_points + bar_b.n_points,
             "rms_px": max(bar_a.rms_px, bar_b.rms_px)}
    return Calibration(
        mm_per_px=s, u_mm_per_px=K_COVERAGE * std_s,
        image_size=(int(img_a.shape[1]), int(img_a.shape[0])), gauge=gauge, created=utc_now(),
        label=str(label), edge_offset_px=float(b), u_edge_offset_px=float(K_COVERAGE * std_b),
        scale_absorbs_offset=False, gamma=g, blur_px=0.5 * (bar_a.blur_px + bar_b.blur_px),
        notes=tuple(notes))
