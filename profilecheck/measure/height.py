"""Tool centre height from a side view at the lathe.

One backlit frame holds the tool's cutting tip and a reference for the spindle axis, with
the axis running across the image (within 30 deg of the image rows) and the tool's top
(rake) face seen edge-on:

* ``reference='point'``: a 60 deg lathe centre; the axis runs through the apex of its cone
  (the intersection of its fitted flanks) along their bisector;
* ``reference='bar'``: a turned bar or pin held in the chuck; the axis is the midline of its
  two silhouette edges;
* ``reference='line'``: an axis line saved earlier from a point or bar image with the camera
  fixed (:func:`profilecheck.measure._axis_line.save_axis`), so later tools are checked with
  no reference in view.

The tool's tip is the intersection of its fitted top edge with its fitted front edge (never
a contour extreme: a blurred corner's 50 % contour recedes, ``../shared/vision-notes.md``
section 1.2). ``height_offset`` = tool tip minus axis, square to the axis, + above centre
(``docs/conventions.md``).

With ``work_diameter_mm`` the offset is also given as what it does to the work
(``../shared/standards-notes.md`` section 10): the diameter error 2 (sqrt(R^2 + e^2) - R)
when the tool is fed to the dial reading for radius R, and the change of the flank angle the
tool cuts, tan(theta_ax) = tan(theta_tool) / cos(phi), sin(phi) = e / R.

Safety: check centre height with the spindle stopped and the machine isolated; keep hands
clear of the chuck; the rule of thumb used for the verdict defers to the drawing, the
standards and licensed practice.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass

import numpy as np

from ..errors import CalibrationError, MeasurementError
from ..quantity import Measured
from ..verdict import check_limits
from . import _runs
from ._axis_line import AxisLine, load_axis, save_axis
from ._job_result import (JobResult, calibration_hash, check_roi, edge_points, load_input,
                          make_result, std_points)

__all__ = ["HeightResult", "AxisLine", "measure_height", "save_axis", "load_axis",
           "HEIGHT_TOL_MM", "REFERENCES", "cut_effects"]

#: Rule of thumb for centre height: +/- 0.1 mm (+/- 0.004 in), common practice, no source
#: (standards-notes section 10).
HEIGHT_TOL_MM = 0.1
REFERENCES = ("point", "bar", "line")


@dataclass(frozen=True)
class HeightResult(JobResult):
    """Result of :func:`measure_height` (fields of :class:`JobResult`), plus:

    reference : str
        'point', 'bar' or 'line'.
    axis_line : AxisLine or None
        The axis found (for 'point' and 'bar'), ready for :func:`save_axis`.
    """

    reference: str = "point"
    axis_line: AxisLine | None = None

    def to_dict(self):
        d = super().to_dict()
        d["reference"] = self.reference
        return d


def cut_effects(offset_mm: float, work_diameter_mm: float,
                tool_half_angle_deg: float = 30.0) -> tuple[float, float]:
    """What a tool ``offset_mm`` off centre does on work of ``work_diameter_mm``.

    Returns ``(diameter_error_mm, flank_half_angle_cut_deg)``: the diameter cut minus the
    diameter the cross-slide was set for, 2 (sqrt(R^2 + e^2) - R), and the axial flank
    half-angle a zero-rake tool of ``tool_half_angle_deg`` cuts,
    atan(tan(theta) / cos(phi)), sin(phi) = e / R (standards-notes section 10).

    Examples
    --------
    >>> round(cut_effects(0.1, 6.0)[1], 3)   # standards-notes 10: M6, e = 0.1 mm
    30.014
    """
    R = work_diameter_mm / 2
    if not (R > 0 and math.isfinite(R)):
        raise ValueError(f"work_diameter_mm must be > 0, got {work_diameter_mm!r}")
    if abs(offset_mm) >= R:
        raise ValueError(f"work_diameter_mm {work_diameter_mm} is too small for a tool "
                         f"{offset_mm:+.3f} mm off centre")
    phi = math.asin(offset_mm / R)
    theta = math.atan(math.tan(math.radians(tool_half_angle_deg)) / math.cos(phi))
    return 2 * (math.hypot(R, offset_mm) - R), math.degrees(theta)


def _axis_from_point(runs):
    """The lathe centre: a 60 deg point whose bisector runs across the image."""
    cands = []
    for w in _runs.find_wedges(runs, min_included_deg=45.0, max_included_deg=75.0):
        if abs(math.degrees(w.included_rad) - 60.0) > 6.0:
            continue
        if abs(w.bisector[1]) > math.sin(math.radians(30)):
            continue
        cands.append(w)
    if not cands:
        return None
    w = max(cands, key=lambda c: c.a.length_px + c.b.length_px)
    d = w.bisector
    nrm = np.array([-d[1], d[0]])
    std_off = math.sqrt(max(float(nrm @ w.apex_cov @ nrm), 0.0))
    std_ang = 0.5 * math.hypot(w.a.line.std_angle_rad, w.b.line.std_angle_rad)
    return (w.apex, d, std_off, std_ang), {id(w.a), id(w.b)}, w


def _axis_from_bar(runs, tool_apex):
    """The bar: parallel edges, dark between, the tool's tip well inside the pair."""
    best = None
    for a, b in _runs.find_parallel_pairs(runs, tol_deg=1.5, dark_between=True):
        if abs(a.line.direction[1]) > math.sin(math.radians(30)):
            continue
        sep = abs(float((b.line.point - a.line.point) @ a.line.normal))
        da = -float(a.line.distance(tool_apex[None, :])[0])  # + inside the pair
        db = -float(b.line.distance(tool_apex[None, :])[0])
        if min(da, db) < 0.2 * sep:
            continue  # outside the pair, or on one of its lines (the tool's own edge)
        score = abs(da - db) / sep  # 0 when the tip is on the midline
        if best is None or score < best[0]:
            best = (score, a, b)
    if best is None:
        return None
    _, a, b = best
    da = a.line.direction
    db = b.line.direction if b.line.direction @ da > 0 else -b.line.direction
    d = (da + db) / np.hypot(*(da + db))
    # midline through the mean of the two lines' feet below the tool tip
    pa = a.line.point + ((tool_apex - a.line.point) @ da) * da
    pb = b.line.point + ((tool_apex - b.line.point) @ db) * db
    mid = 0.5 * (pa + pb)
    std_off = 0.5 * math.hypot(float(a.line.fit.std_position_at(pa[None])[0]),
                               float(b.line.fit.std_position_at(pb[None])[0]))
    std_ang = 0.5 * math.hypot(a.line.std_angle_rad, b.line.std_angle_rad)
    return (mid, d, std_off, std_ang), {id(a), id(b)}, best[0]


def _tool_corners(runs, exclude: set, up_hint: np.ndarray):
    """Candidate tool tips: a top edge (normal up) meeting a front edge that drops away."""
    out = []
    usable = [r for r in runs if id(r) not in exclude]
    for w in _runs.find_wedges(usable, min_included_deg=40.0, max_included_deg=130.0,
                               max_gap_frac=1.0):
        for top, front in ((w.a, w.b), (w.b, w.a)):
            if top.line.normal @ up_hint < math.cos(math.radians(45)):
                continue
            if w.bisector @ up_hint < math.sin(math.radians(10)):
                continue
            far = max((front.start_xy, front.end_xy), key=lambda p: np.hypot(*(p - w.apex)))
            if (far - w.apex) @ up_hint > -2.0:
                continue
            out.append((w, top, front))
            break
    return out


def measure_height(image, calibration, *, reference: str = "point", axis=None,
                   work_diameter_mm: float | None = None, roi=None,
                   tool_half_angle_deg: float = 30.0) -> HeightResult:
    """Measure how far the tool's tip sits above (+) or below (-) the spindle axis.

    Parameters
    ----------
    image : str, path or ndarray
        Side view (path, or a 2-D array in [0, 1]; uint8/uint16 are scaled).
    calibration : profilecheck.calibration.Calibration
        The lathe camera's calibration.
    reference : {'point', 'bar', 'line'}
        What gives the axis (module docstring).
    axis : str, path, AxisLine or dict, optional
        The saved axis line; required with ``reference='line'``, refused otherwise.
    work_diameter_mm : float, optional
        Diameter of the work: adds ``diameter_error`` (mm) and ``flank_angle_change`` (deg).
    roi : (x0, y0, x1, y1), optional
        Region of interest in px.
    tool_half_angle_deg : float
        The tool's flank half-angle for ``flank_angle_change`` (30 for 60 deg forms).

    Returns
    -------
    HeightResult
        ``measurements``: ``height_offset`` (mm, + above), ``top_slope`` (deg, + when the top
        edge rises toward the tip), and with a work diameter ``diameter_error`` and
        ``flank_angle_change``; one check of ``height_offset`` against the +/- 0.1 mm rule of
        thumb (common practice, no source).

    Raises
    ------
    MeasurementError
        No reference, or no tool tip, in the image; a damaged axis file.
    CalibrationError
        The saved axis was made at another image size.

    Notes
    -----
    Uncertainty (JCGM 100:2008 5.1.2, inputs independent): the tip's covariance from the two
    line fits, the axis line's offset and direction (lever arm = distance along the axis from
    the reference to the tip), the scale (relative) and the calibration's edge offset (the top
    edge moves out by b, so the tip by b square to the axis when the top edge is parallel to
    it; the exact shift of the two-line intersection is used). A symmetric edge bias moves
    the centre's apex along its bisector only, so the 'point' axis is immune to it.
    """
    if reference not in REFERENCES:
        raise ValueError(f"reference must be one of {', '.join(REFERENCES)}, got {reference!r}")
    from ..calibration import Calibration

    if not isinstance(calibration, Calibration):
        raise TypeError(f"calibration must be a Calibration, got {type(calibration).__name__}")
    if reference == "line" and axis is None:
        raise ValueError("axis is required with reference='line' (a saved axis file)")
    if reference != "line" and axis is not None:
        raise ValueError("axis is only used with reference='line'")
    if work_diameter_mm is not None:
        if isinstance(work_diameter_mm, bool) or not isinstance(work_diameter_mm, (int, float)):
            raise TypeError("work_diameter_mm must be a number (mm)")
        if not (math.isfinite(work_diameter_mm) and work_diameter_mm > 0):
            raise ValueError(f"work_diameter_mm must be > 0, got {work_diameter_mm!r}")
    roi = check_roi(roi)
    img, label = load_input(image)
    calibration.check_image(img.shape)
    warnings: list[str] = []
    saved = None
    if reference == "line":
        saved = _as_axis(axis)
        if tuple(saved.image_size) != (img.shape[1], img.shape[0]):
            raise CalibrationError(
                f"the saved axis was made on {saved.image_size[0]} x {saved.image_size[1]} px "
                f"images, this one is {img.shape[1]} x {img.shape[0]}: save the axis again")
        if saved.calibration_hash and saved.calibration_hash != calibration_hash(calibration):
            warnings.append("the saved axis was made with a different calibration: if the "
                            "camera was moved or refocused, save the axis again")
    edges, xy, sigma_e, ew = edge_points(img, calibration, roi)
    warnings.extend(ew)
    if len(xy) < 30:
        raise MeasurementError("nothing to measure: no clear dark-on-bright edge in the image "
                               "(check the backlight and that tool and reference are in view)")
    std = std_points(edges)
    runs = _runs.straight_runs(xy, edges.normal, edges.contour, weights=1.0 / std ** 2,
                               min_length_px=max(15.0, 10 * sigma_e), trim_px=3 * sigma_e + 2.0)
    exclude: set = set()
    axis_geom = None
    if reference == "point":
        found = _axis_from_point(runs)
        if found is None:
            raise MeasurementError("no lathe centre found: no 60 deg point with its axis across "
                                   "the image (use --reference bar or line, or bring the centre "
                                   "into view)")
        axis_geom, exclude, _w = found
    elif reference == "line":
        axis_geom = (np.asarray(saved.point_px), np.asarray(saved.direction),
                     saved.std_offset_px, saved.std_angle_rad)
    up_hint = np.array([0.0, -1.0])
    if axis_geom is not None:
        up_hint = _up(axis_geom[1])
    corners = _tool_corners(runs, exclude, up_hint)
    if not corners:
        raise MeasurementError("no tool tip found: no top edge meeting a front edge at a point "
                               "(is the tool's tip in view and its top face edge-on?)")
    if reference == "bar":
        # the tool's tip lies near the bar's midline; a bar's own end corner lies on one of
        # its edges, so the combination with the tip nearest the midline is the right one
        best = None
        for w, top, front in corners:
            found = _axis_from_bar([r for r in runs if r is not top and r is not front], w.apex)
            if found is not None and (best is None or found[2] < best[3][2]):
                best = (w, top, front, found)
        if best is None:
            raise MeasurementError("no bar found: no pair of parallel silhouette edges across "
                                   "the image with the tool's tip between them")
        w, top, front, (axis_geom, _ex, _score) = best
    else:
        # the tip nearest the axis
        p0, d0 = axis_geom[0], axis_geom[1]
        n0 = _up(d0)
        w, top, front = min(corners, key=lambda c: abs(float((c[0].apex - p0) @ n0)))
    point, direction, std_off, std_ang = axis_geom
    direction = np.asarray(direction, float)
    if direction[0] < 0:
        direction = -direction
    up = _up(direction)
    # tip and its edge-offset correction: both tool lines move out by b
    b = calibration.edge_offset_px
    N = np.array([top.line.normal, front.line.normal])
    shift_per_b = np.linalg.solve(N, np.ones(2))
    tip = w.apex - b * shift_per_b
    rel = tip - np.asarray(point, float)
    off_px = float(rel @ up)
    lever = float(rel @ direction)
    var_tip = float(up @ w.apex_cov @ up) if np.all(np.isfinite(w.apex_cov)) else 0.0
    std_axis = math.hypot(std_off, lever * std_ang)
    ub = calibration.u_edge_offset_px / 2
    if calibration.scale_absorbs_offset:
        # a one-gauge scale does not find the edge offset b of a single edge: bound b by
        # 0.5 px (the calibration's 1 px on a width, split over two edges), rectangular
        ub = math.hypot(ub, 0.5 / math.sqrt(3))
    std_b = ub * abs(float(shift_per_b @ up))
    s, us = calibration.mm_per_px, calibration.u_mm_per_px / 2
    # model term: edge location on a straight edge good to 0.02 px (vision-notes 1.3: phase
    # bias of a 50 % / model fit up to 0.015 px at sigma_b = 1), on the tip and on the axis
    std_model = 0.02 * math.sqrt(2)
    std_px = math.sqrt(var_tip + std_axis ** 2 + std_b ** 2 + std_model ** 2)
    off_mm = off_px * s
    std_mm = math.hypot(std_px * s, off_px * us)
    n_pts = top.line.n + front.line.n
    meas = {"height_offset": Measured(off_mm, 2 * std_mm, "mm", n_pts,
                                      max(top.line.rms_px, front.line.rms_px),
                                      note="tool tip minus spindle axis, + above centre")}
    # top slope: + when the top edge rises toward the tip
    heel = max((top.start_xy, top.end_xy), key=lambda p: np.hypot(*(p - w.apex)))
    to_tip = w.apex - heel
    to_tip = to_tip / np.hypot(*to_tip)
    slope = math.asin(float(np.clip(to_tip @ up, -1, 1)))
    meas["top_slope"] = Measured(math.degrees(slope),
                                 2 * math.degrees(math.hypot(top.line.std_angle_rad, std_ang)),
                                 "deg", top.line.n, top.line.rms_px,
                                 note="top edge from the axis, + rising toward the tip")
    notes = [f"axis from the {'lathe centre' if reference == 'point' else reference}",
             "tip = intersection of the fitted top and front edges"]
    if work_diameter_mm is not None:
        _add_cut_effects(meas, off_mm, 2 * std_mm, work_diameter_mm, tool_half_angle_deg)
        notes.append(f"work diameter {work_diameter_mm:g} mm; flank change for a "
                     f"{2 * tool_half_angle_deg:g} deg zero-rake tool (standards-notes 10)")
    m = meas["height_offset"]
    chk = check_limits("height_offset", m.value, m.u, -HEIGHT_TOL_MM, HEIGHT_TOL_MM, unit="mm",
                       source="+/-0.1 mm (+/-0.004 in) rule of thumb, common practice, no source")
    advice = []
    if chk.result != "pass":
        verb = "lower" if m.value > 0 else "raise"
        advice.append(f"{verb} the tool {abs(m.value):.3f} mm ({abs(m.value) / 25.4 * 1000:.1f} "
                      "thou) to bring the tip on centre (shim or adjust the holder), then re-check")
    axis_line = None
    if reference in ("point", "bar"):
        axis_line = AxisLine(tuple(np.asarray(point, float)), tuple(direction), std_off,
                             std_ang, (img.shape[1], img.shape[0]),
                             calibration_hash(calibration), reference, label)
    overlays = _overlays(point, direction, tip, top, front, w, calibration)
    details = {"tip_px": [float(v) for v in tip],
               "axis_point_px": [float(v) for v in point],
               "axis_direction": [float(v) for v in direction],
               "blur_sigma_e_px": sigma_e}
    return make_result(HeightResult, kind="height", image=label,
                       calibration=calibration.to_dict(), spec=None, measurements=meas,
                       checks=[chk], warnings=tuple(warnings), overlays=tuple(overlays),
                       notes=tuple(notes), advice=tuple(advice), details=details,
                       reference=reference, axis_line=axis_line)


def _up(direction) -> np.ndarray:
    d = np.asarray(direction, float)
    n = np.array([-d[1], d[0]])
    return n if n[1] < 0 else -n


def _as_axis(axis) -> AxisLine:
    if isinstance(axis, AxisLine):
        return axis
    if isinstance(axis, dict):
        return AxisLine.from_dict(axis)
    if isinstance(axis, (str, os.PathLike)):
        return load_axis(axis)
    raise TypeError(f"axis must be a path, AxisLine or dict, got {type(axis).__name__}")


def _add_cut_effects(meas, e_mm, u_e, diameter_mm, half_deg) -> None:
    try:
        derr, theta = cut_effects(e_mm, diameter_mm, half_deg)
    except ValueError as ex:
        raise ValueError(str(ex)) from None
    # uncertainty by finite differences over +/- U (the functions are even in e, so use the
    # larger excursion of the two)
    vals = []
    for de in (-u_e, u_e):
        try:
            vals.append(cut_effects(e_mm + de, diameter_mm, half_deg))
        except ValueError:
            vals.append((math.nan, math.nan))
    ud = max(abs(v[0] - derr) for v in vals if math.isfinite(v[0]))
    ut = max(abs(v[1] - theta) for v in vals if math.isfinite(v[1]))
    meas["diameter_error"] = Measured(derr, ud, "mm", note="2 (sqrt(R^2 + e^2) - R), tool fed "
                                                          "to the dial reading")
    meas["flank_angle_change"] = Measured(theta - half_deg, ut, "deg",
                                          note="tan(th_ax) = tan(th_tool) / cos(phi), sin(phi) = e/R")


def _overlays(point, direction, tip, top, front, w, cal):
    from ..overlays import InfiniteLine, Label, Marker, Segment, scale_bar_for

    out = [InfiniteLine(tuple(float(v) for v in point), tuple(float(v) for v in direction),
                        "axis")]
    for run in (top, front):
        far = max((run.start_xy, run.end_xy), key=lambda p: np.hypot(*(p - w.apex)))
        out.append(Segment(tuple(float(v) for v in w.apex), (float(far[0]), float(far[1])), "fit"))
    out.append(Marker(tuple(float(v) for v in tip), 8.0, "fit"))
    out.append(Label((float(tip[0]) + 10, float(tip[1]) - 24), "tool tip", "info"))
    out.append(scale_bar_for(cal.mm_per_px, cal.image_size[0]))
    return out
