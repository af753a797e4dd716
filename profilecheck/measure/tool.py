"""Threading-tool form from a backlit top view: included angle, half-angles, tip flat/radius.

The camera looks square onto the tool's top (rake) face with the light behind it, so the
tool is a dark silhouette. The point may face any direction; right-hand, left-hand and
internal (boring-bar) tools are the same geometry and no symmetry is assumed.

Frame and signs (``docs/conventions.md``): image px (x, y) = (col, row); angles reported in
degrees. Half-angles ``half_left`` / ``half_right`` are measured from the tool's axis with the
point turned up, 'left' being the flank on the image left; ``bisector_tilt`` is the angle of
the point's bisector (toward the tip) from the tool's axis, + when the point leans to the
right with the point up (clockwise on screen), so ``bisector_tilt = (half_left -
half_right) / 2``.

The tool's axis is taken from the shank sides when both (or one) are in view. When the
shank is seen only with its sides square to the point (a boring bar whose point stands out
sideways), the normal to the shank is the axis. With no shank side in view the angles are
given from the bisector itself, ``bisector_tilt`` is then measured from the image's
vertical (up), and a warning says so.

Also here: :func:`measure_squareness`, the angle between a tool's bisector and the normal to
the work's axis seen in the same top view (a straight edge of the work, or a centre's
bisector).

Safety: grind and stone tools with guards and eye protection; measure with the grinder and
the lathe stopped. The limits used here defer to the thread standards named in each check;
local codes and licensed practice take precedence.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

from ..errors import MeasurementError
from ..quantity import Measured
from ..verdict import check_limits
from . import _runs
from ._job_result import JobResult, check_roi, edge_points, load_input, make_result, std_points
from ._tool_point import MAX_TOOL_INCLUDED_DEG, choose_point
from ._tool_tip import TipForm, fit_tip

__all__ = ["ToolResult", "SquarenessResult", "measure_tool", "measure_squareness",
           "ANGLE_TOL_DEG", "TILT_TOL_DEG", "SQUARENESS_TOL_DEG"]

#: Tolerance on the included angle of a ground tool: +/- 0.5 deg (common practice, no
#: source; no thread standard tolerances the tool itself).
ANGLE_TOL_DEG = 0.5
#: Tolerance on the bisector's tilt from the tool axis (symmetry): +/- 0.25 deg (common
#: practice, no source).
TILT_TOL_DEG = 0.25
#: Tolerance on the tool bisector's squareness to the work axis: +/- 0.25 deg (common
#: practice, no source).
SQUARENESS_TOL_DEG = 0.25


@dataclass(frozen=True)
class ToolResult(JobResult):
    """Result of :func:`measure_tool` (fields of :class:`JobResult`), plus:

    tip_kind : str
        'flat' or 'radius' (which model the tip data chose).
    reference : str
        'shank', 'one shank side', 'shank normal' or 'bisector' (what the half-angles are
        measured from).
    """

    tip_kind: str = "flat"
    reference: str = "shank"

    def to_dict(self):
        d = super().to_dict()
        d["tip_form"] = self.tip_kind
        d["reference"] = self.reference
        return d


@dataclass(frozen=True)
class SquarenessResult(JobResult):
    """Result of :func:`measure_squareness` (fields of :class:`JobResult`)."""


def _deg(rad: float) -> float:
    return math.degrees(rad)


def _validate(calibration, spec, internal, roi):
    from ..calibration import Calibration

    if not isinstance(calibration, Calibration):
        raise TypeError(f"calibration must be a Calibration, got {type(calibration).__name__}")
    if spec is not None and isinstance(spec, str):
        from ..standards import thread_spec

        spec = thread_spec(spec)
    if not isinstance(internal, bool):
        raise TypeError(f"internal must be True or False, got {internal!r}")
    return spec, check_roi(roi)


def _find_point(img, calibration, roi):
    """Edges, runs and the best tool point in the image."""
    edges, xy, sigma_e, warnings = edge_points(img, calibration, roi)
    if len(xy) < 30:
        raise MeasurementError("no tool found in the image: no clear dark-on-bright edge "
                               "(check the backlight and that the tool is in the frame)")
    std = std_points(edges)
    runs = _runs.straight_runs(xy, edges.normal, edges.contour, weights=1.0 / std ** 2,
                               min_length_px=max(15.0, 12 * sigma_e),
                               trim_px=3 * sigma_e + 2.0)
    wedges = _runs.find_wedges(runs, min_included_deg=15.0,
                                max_included_deg=MAX_TOOL_INCLUDED_DEG)
    return edges, xy, sigma_e, std, runs, wedges, warnings


def _tip_points(edges, xy, wedge: _runs.Wedge) -> np.ndarray:
    cids = {wedge.a.contour, wedge.b.contour}
    on = np.isin(np.asarray(edges.contour), list(cids))
    r = np.hypot(*(xy - wedge.apex).T)
    reach = max(wedge.gap_px * 1.5, 15.0)
    return xy[on & (r < reach)]


def _tip_pixels(img, calibration, edges, xy, wedge):
    """(linearised image, dark, bright): local levels from the edge points near the tip."""
    from ..imaging import linearise

    lin = linearise(img, calibration.gamma)
    r = np.hypot(*(xy - wedge.apex).T)
    near = np.argsort(r)[:40]
    dark = float(np.median(np.asarray(edges.dark, float)[near]))
    bright = float(np.median(np.asarray(edges.bright, float)[near]))
    return lin, dark, bright


def _shank(runs, wedge: _runs.Wedge):
    """The tool axis: (unit vector toward the tip, std angle rad, reference name, lines)."""
    behind = [r for r in runs if r is not wedge.a and r is not wedge.b
              and np.all((np.array([r.start_xy, r.end_xy]) - wedge.apex) @ wedge.bisector < 0)]
    pairs = _runs.find_parallel_pairs(behind, tol_deg=2.0, dark_between=True)
    u = wedge.bisector
    if pairs:
        a, b = pairs[0]
        da = a.line.direction * np.sign(a.line.direction @ (b.line.direction))
        d = da + b.line.direction
        d = d / np.hypot(*d)
        std = 0.5 * math.hypot(a.line.std_angle_rad, b.line.std_angle_rad)
        lines, name = (a.line, b.line), "shank"
    else:
        flank_len = min(wedge.a.length_px, wedge.b.length_px)
        single = [r for r in behind if r.length_px > 0.3 * flank_len]
        single = [r for r in single if abs(r.line.direction @ u) > math.cos(math.radians(15))
                  or abs(r.line.direction @ u) < math.sin(math.radians(15))]
        if not single:
            return u.copy(), 0.0, "bisector", ()
        r = single[0]
        d, std, lines, name = r.line.direction, r.line.std_angle_rad, (r.line,), "one shank side"
    if d @ u < 0:
        d = -d
    if d @ u < math.cos(math.radians(45)):
        nrm = np.array([-d[1], d[0]])
        d = nrm if nrm @ u > 0 else -nrm
        name = "shank normal"
    return d, std, name, lines


def _flank_angles(wedge: _runs.Wedge, axis: np.ndarray):
    """(phi_left, phi_right, left_run, right_run): flank angles from the axis's back
    direction, + to the right with the point turned up (rad)."""
    up = axis
    right = np.array([-up[1], up[0]])
    out = []
    for run in (wedge.a, wedge.b):
        d = run.line.direction
        mid = 0.5 * (run.start_xy + run.end_xy)
        if (mid - wedge.apex) @ d < 0:
            d = -d
        out.append((math.atan2(d @ right, -(d @ up)), run))
    out.sort(key=lambda t: t[0])
    (pl, rl), (pr, rr) = out
    return pl, pr, rl, rr


def measure_tool(image, calibration, *, spec=None, internal: bool = False,
                 roi=None) -> ToolResult:
    """Measure a threading tool's form from a backlit top view.

    Parameters
    ----------
    image : str, path or ndarray
        The image (path, or a 2-D array in [0, 1]; uint8/uint16 are scaled).
    calibration : profilecheck.calibration.Calibration
        Scale and edge offset of this camera set-up.
    spec : ThreadSpec or str, optional
        The thread the tool is for (``profilecheck.standards.thread_spec``); adds the checks.
    internal : bool
        The tool cuts an internal thread (tip checked against the internal root).
    roi : (x0, y0, x1, y1), optional
        Region of interest in px.

    Returns
    -------
    ToolResult
        ``measurements``: ``included_angle``, ``half_left``, ``half_right``,
        ``bisector_tilt`` (deg) and ``tip_flat`` or ``tip_radius`` (mm), each with its
        expanded uncertainty (k = 2).

    Raises
    ------
    MeasurementError
        No tool point in the image.
    QualityError
        A point is found but its tip cannot be sized.

    Notes
    -----
    Edges are split into straight runs; every corner and the tip are left out of the runs
    (the 50 % contour of a blurred 60 deg point recedes 1.29 sigma, vision-notes 1.2), lines
    are fitted by total least squares and the point is the intersection of the two flank
    lines. Of the points in view, corners on a shank side (square shoulders) and corners
    wider than 85 deg are never the tool's point; with a spec, points near the form's
    angle come first (:mod:`profilecheck.measure._tool_point`). Angle uncertainties come
    from the line fits (JCGM 100:2008 5.1.2, fits independent); lengths add the scale and edge-offset terms of the calibration. The tip
    model (flat or radius) is chosen from the data, see :mod:`profilecheck.measure._tool_tip`.
    Known gap: the uncertainty holds no term for a tool face that is not square to the line
    of sight (a tilted face foreshortens angles by the cosine of the tilt).
    """
    spec, roi = _validate(calibration, spec, internal, roi)
    img, label = load_input(image)
    calibration.check_image(img.shape)
    edges, xy, sigma_e, std, runs, wedges, warnings = _find_point(img, calibration, roi)
    form_angle = float(spec.included_angle_deg) if spec is not None else None
    wedge = choose_point(wedges, runs, form_angle_deg=form_angle)
    if wedge is None:
        raise MeasurementError("no tool point found: the image shows no pair of straight "
                               "flanks meeting at a point (is the tool's point in the frame?)")
    axis, std_axis, reference, shank_lines = _shank(runs, wedge)
    warnings = list(warnings)
    notes = []
    if reference == "bisector":
        warnings.append("no shank side in view: half-angles are given from the point's "
                        "bisector and bisector_tilt from the image vertical")
        up = np.array([0.0, -1.0])
        tilt_img = _runs.signed_angle(up, wedge.bisector)
    elif reference == "one shank side":
        notes.append("tool axis taken parallel to the one shank side in view")
    elif reference == "shank normal":
        notes.append("point stands out from the side of the shank: angles are measured from "
                     "the normal to the shank")
    pl, pr, rl, rr = _flank_angles(wedge, axis)
    sl, sr = rl.line.std_angle_rad, rr.line.std_angle_rad
    included = pr - pl
    s_inc = math.hypot(sl, sr)
    meas: dict[str, Measured] = {}
    n_fl = rl.line.n + rr.line.n
    res = max(rl.line.rms_px, rr.line.rms_px)
    meas["included_angle"] = Measured(_deg(included), 2 * _deg(s_inc), "deg", n_fl, res)
    if reference == "bisector":
        meas["half_left"] = Measured(_deg(included / 2), 2 * _deg(s_inc / 2), "deg", n_fl, res,
                                     note="from the bisector (no shank in view)")
        meas["half_right"] = Measured(_deg(included / 2), 2 * _deg(s_inc / 2), "deg", n_fl, res,
                                      note="from the bisector (no shank in view)")
        meas["bisector_tilt"] = Measured(_deg(tilt_img), 2 * _deg(s_inc / 2), "deg", n_fl, res,
                                         note="from the image vertical (no shank in view)")
    else:
        meas["half_left"] = Measured(_deg(-pl), 2 * _deg(math.hypot(sl, std_axis)), "deg",
                                     rl.line.n, rl.line.rms_px, note=f"from the {reference}")
        meas["half_right"] = Measured(_deg(pr), 2 * _deg(math.hypot(sr, std_axis)), "deg",
                                      rr.line.n, rr.line.rms_px, note=f"from the {reference}")
        s_tilt = math.sqrt((sl ** 2 + sr ** 2) / 4 + std_axis ** 2)
        meas["bisector_tilt"] = Measured(_deg(-(pl + pr) / 2), 2 * _deg(s_tilt), "deg", n_fl,
                                         res, note=f"from the {reference}, + point leaning right")
    tip = fit_tip(_tip_points(edges, xy, wedge), rl.line, rr.line, wedge.apex,
                  wedge.bisector, sigma_e, _tip_pixels(img, calibration, edges, xy, wedge))
    beta = included / 2
    tip_key, tip_m = _tip_measured(tip, beta, calibration)
    meas[tip_key] = tip_m
    if tip.note:
        notes.append(tip.note)
    checks, advice = [], []
    spec_d = None
    if spec is not None:
        spec_d = spec.to_dict() if hasattr(spec, "to_dict") else None
        checks, advice, more_warn = _spec_checks(spec, internal, meas, tip_key, beta, reference)
        warnings.extend(more_warn)
    overlays = _overlays(wedge, rl, rr, axis, shank_lines, tip, calibration)
    details = {"apex_px": [float(v) for v in wedge.apex],
               "bisector": [float(v) for v in wedge.bisector],
               "axis": [float(v) for v in axis], "blur_sigma_e_px": sigma_e,
               "tip_rms_line_px": _finite(tip.rms_line_px),
               "tip_rms_circle_px": _finite(tip.rms_circle_px),
               "internal": internal}
    return make_result(ToolResult, kind="tool", image=label,
                       calibration=calibration.to_dict(), spec=spec_d, measurements=meas,
                       checks=checks, warnings=tuple(warnings), overlays=tuple(overlays),
                       notes=tuple(notes), advice=tuple(advice), details=details,
                       tip_kind="radius" if tip.kind == "radius" else "flat",
                       reference=reference)


def _finite(v: float):
    return float(v) if math.isfinite(v) else None


def _tip_measured(tip: TipForm, beta: float, cal) -> tuple[str, Measured]:
    """Tip size in mm with its budget: fit, scale (relative), edge offset (vision-notes 4)."""
    s, us = cal.mm_per_px, cal.u_mm_per_px / 2  # u_mm_per_px is k = 2
    b, ub = cal.edge_offset_px, cal.u_edge_offset_px / 2
    if cal.scale_absorbs_offset:
        # a one-gauge scale holds the edge offset for the gauge's size only: a small tip
        # carries up to 1 px x (1 - size / gauge) more (calibration notes; rectangular
        # bound -> a / sqrt(3), GUM 4.3.7)
        size_px = max(tip.size_px, 0.0)
        gauge_px = float(cal.gauge.get("size_mm", 0.0) or 0.0) / s
        frac = (1 - size_px / gauge_px) if gauge_px > size_px else 0.0
        ub = math.hypot(ub, 0.5 * frac / math.sqrt(3))
    # model term: edge location good to 0.02 px on each side of the tip (vision-notes 1.3)
    tip = dataclasses.replace(tip, std_px=math.hypot(tip.std_px, 0.02 * math.sqrt(2)))
    if tip.kind == "radius":
        # an outward edge bias b makes a convex nose read b larger
        r_px = tip.size_px - b
        std_px = math.hypot(tip.std_px, ub)
        val = r_px * s
        std = math.hypot(std_px * s, r_px * us)
        return "tip_radius", Measured(val, 2 * std, "mm", tip.n, _nan(tip.rms_circle_px),
                                      note=tip.note)
    # a flat widens by 2 tan(beta) (1/sin(beta) - 1) b under an outward edge bias b
    k = 2 * math.tan(beta) * (1 / math.sin(beta) - 1)
    w_px = max(tip.size_px - k * b, 0.0)
    std_px = math.hypot(tip.std_px, k * ub)
    val = w_px * s
    std = math.hypot(std_px * s, w_px * us)
    return "tip_flat", Measured(val, 2 * std, "mm", tip.n, _nan(tip.rms_line_px), note=tip.note)


def _nan(v: float) -> float:
    return float(v) if math.isfinite(v) else float("nan")


def _limits_of(tip_req, measured: str) -> tuple[str, float | None, float | None]:
    """(kind, min, max) of the tip limits: the measured kind's if the spec gives them, else
    the spec's preferred kind (checked through the flat/radius equivalence)."""
    def get(kind):
        lo = getattr(tip_req, f"{kind}_min_mm", None)
        hi = getattr(tip_req, f"{kind}_max_mm", None)
        if lo is None and hi is None and isinstance(tip_req, dict):
            lo, hi = tip_req.get(f"{kind}_min_mm"), tip_req.get(f"{kind}_max_mm")
        return lo, hi

    order = [measured, getattr(tip_req, "kind", None) or "", "flat", "radius"]
    for kind in order:
        if kind in ("flat", "radius"):
            lo, hi = get(kind)
            if lo is not None or hi is not None:
                return kind, lo, hi
    return "", None, None


def _spec_checks(spec, internal, meas, tip_key, beta, reference):
    checks, advice, warnings = [], [], []
    form_angle = float(spec.included_angle_deg)
    inc = meas["included_angle"]
    c = check_limits("included_angle", inc.value, inc.u, form_angle - ANGLE_TOL_DEG,
                     form_angle + ANGLE_TOL_DEG, unit="deg",
                     source=f"{spec.form} form {form_angle:g} deg; +/-{ANGLE_TOL_DEG} deg "
                            "common practice, no source")
    checks.append(c)
    if c.result == "fail":
        advice.append(f"included angle {inc.value:.2f} deg is {inc.value - form_angle:+.2f} deg "
                      f"off the {form_angle:g} deg form: regrind the flanks against a gauge")
    if reference != "bisector":
        t = meas["bisector_tilt"]
        c = check_limits("bisector_tilt", t.value, t.u, -TILT_TOL_DEG, TILT_TOL_DEG, unit="deg",
                         source=f"symmetry +/-{TILT_TOL_DEG} deg, common practice, no source")
        checks.append(c)
        if c.result == "fail":
            half = form_angle / 2
            hl, hr = meas["half_left"].value, meas["half_right"].value
            side = "right" if t.value > 0 else "left"
            advice.append(f"the point leans {abs(t.value):.2f} deg to the {side} "
                          f"(half-angles {hl:.2f} / {hr:.2f} deg): regrind both flanks to "
                          f"{half:g} deg from the shank's axis, or set the tool square with a "
                          "centre gauge rather than by its shank")
    else:
        warnings.append("symmetry not checked: no shank side in view")
    external = not internal
    try:
        req = spec.tool_tip_for(external)
    except (AttributeError, TypeError):
        req = getattr(spec, "tool_tip", None)
    kind, lo, hi = _limits_of(req, "radius" if tip_key == "tip_radius" else "flat")
    if not kind:
        warnings.append(f"{spec.designation}: no tool tip limits known for this thread")
        return checks, advice, warnings
    which = "internal" if internal else "external"
    src = getattr(req, "source", "") or f"{spec.designation} {which} root (profilecheck.standards)"
    m = meas[tip_key]
    # equivalence of a flat and a radius at the same depth behind the virtual sharp:
    # depth(flat w) = w / (2 tan b); depth(radius r) = r (1/sin b - 1)   [geometry]
    k_eq = 2 * math.tan(beta) * (1 / math.sin(beta) - 1)
    if kind == "flat" and tip_key == "tip_flat":
        name, val, u, note = "tip_flat", m.value, m.u, ""
    elif kind == "flat":
        name, val, u = "tip_flat_equivalent", m.value * k_eq, m.u * k_eq
        note = " (nose radius as the flat at the same depth)"
    elif tip_key == "tip_radius":
        name, val, u, note = "tip_radius", m.value, m.u, ""
    else:
        name, val, u = "tip_radius_equivalent", m.value / k_eq, m.u / k_eq
        note = " (flat as the radius at the same depth)"
    c = check_limits(name, val, u, lo, hi, unit="mm", source=src + note)
    checks.append(c)
    if c.result == "fail":
        advice.extend(_tip_advice(kind, val, lo, hi, beta, internal))
    return checks, advice, warnings


def _tip_advice(kind, val, lo, hi, beta, internal) -> list[str]:
    """What to do about a tip outside its limits (mm, along the bisector)."""
    tb = math.tan(beta)
    if kind == "flat":
        target = 0.5 * ((lo if lo is not None else 0.0) + (hi if hi is not None else 2 * lo))
        if lo is not None and val < lo:
            back = (target - val) / (2 * tb)
            return [f"tip flat {val * 1000:.1f} um is too narrow (min {lo * 1000:.1f} um): stone "
                    f"the tip back {back * 1000:.1f} um along the bisector, square to it, for a "
                    f"flat of about {target * 1000:.1f} um"]
        per_flank = (val - target) * math.cos(beta) / 2
        what = ("cut the internal root short of the basic major diameter (the flanks cut "
                "oversize if fed deeper)") if internal else (
            "cut too shallow at the right pitch diameter, leaving the mating thread's "
            "crests without clearance")
        return [f"tip flat {val * 1000:.1f} um is too wide (max {hi * 1000:.1f} um): the tool "
                f"will {what}; grind each flank back {per_flank * 1000:.1f} um square to it "
                f"(keeping the angle) for a flat of about {target * 1000:.1f} um"]
    target = 0.5 * ((lo or 0.0) + (hi if hi is not None else 2 * (lo or 0.0)))
    k_eq = 1 / math.sin(beta) - 1
    if lo is not None and val < lo:
        return [f"nose radius {val * 1000:.1f} um is too small (min {lo * 1000:.1f} um): stone "
                f"a larger radius, about {(target - val) * k_eq * 1000:.1f} um back along the "
                "bisector"]
    return [f"nose radius {val * 1000:.1f} um is too large (max {hi * 1000:.1f} um): the root "
            "will be too shallow; regrind the flanks and stone a new radius"]


def _overlays(wedge, rl, rr, axis, shank_lines, tip: TipForm, cal):
    from ..overlays import Arc, InfiniteLine, Label, Marker, Segment, scale_bar_for

    out = []
    apex = tuple(float(v) for v in wedge.apex)
    for run in (rl, rr):
        far = max((run.start_xy, run.end_xy), key=lambda p: np.hypot(*(p - wedge.apex)))
        out.append(Segment(apex, (float(far[0]), float(far[1])), "fit"))
    for ln in shank_lines:
        out.append(InfiniteLine(tuple(float(v) for v in ln.point),
                                tuple(float(v) for v in ln.direction), "fit"))
    out.append(InfiniteLine(apex, tuple(float(v) for v in axis), "axis"))
    out.append(Marker(apex, 8.0, "fit"))
    if tip.kind == "radius" and tip.centre is not None:
        ang = math.degrees(math.atan2(wedge.bisector[1], wedge.bisector[0]))
        out.append(Arc(tip.centre, tip.size_px, ang - 60.0, 120.0, "fit"))
    elif tip.ends is not None:
        out.append(Segment(tip.ends[0], tip.ends[1], "fit"))
    out.append(Label((apex[0] + 12, apex[1] + 12), "virtual sharp", "info"))
    out.append(scale_bar_for(cal.mm_per_px, cal.image_size[0]))
    return out


def _axis_reference(w, wedges, runs):
    """For the tool point ``w``: (w, kind, axis direction, std angle rad) from a straight
    work edge ahead of the point and roughly square to its bisector (preferred), or from a
    centre whose bisector is roughly square to it; None if neither is in view."""
    u = w.bisector
    used = {id(w.a), id(w.b)}
    flank = min(w.a.length_px, w.b.length_px)
    square = math.sin(math.radians(20))
    for r in runs:  # longest first
        if id(r) in used or abs(r.line.direction @ u) > square or r.length_px < 2 * flank:
            continue
        if (0.5 * (r.start_xy + r.end_xy) - w.apex) @ u > 0:
            return w, "work edge", r.line.direction, r.line.std_angle_rad
    if abs(u[1]) < math.sqrt(0.5):
        return None  # with a centre, the tool must point up or down at an axis across the image
    for c in wedges:
        if c is w or {id(c.a), id(c.b)} & used or abs(c.bisector @ u) > square:
            continue
        if abs(c.bisector[1]) > math.sqrt(0.5):
            continue
        return w, "centre", c.bisector, 0.5 * math.hypot(c.a.line.std_angle_rad,
                                                          c.b.line.std_angle_rad)
    return None


def measure_squareness(image, calibration, *, roi=None) -> SquarenessResult:
    """Angle between a threading tool's bisector and the normal to the work's axis.

    One top view holds the tool's point and a reference for the axis direction: either a
    straight silhouette edge of the work (parallel to its axis) ahead of the point, or a
    lathe centre's point (its bisector is the axis). A centre and a tool point look alike,
    so with a centre the axis must run across the image (within 45 deg of the rows) and
    the tool point up or down at it.

    Parameters
    ----------
    image, calibration, roi
        As in :func:`measure_tool`.

    Returns
    -------
    SquarenessResult
        ``measurements['squareness']`` (deg): the signed angle from the normal to the axis
        to the tool's bisector, + clockwise on screen (image angle convention,
        docs/conventions.md), checked against +/- :data:`SQUARENESS_TOL_DEG`.

    Raises
    ------
    MeasurementError
        No tool point, or no axis reference (straight work edge or centre) in view.
    """
    _spec, roi = _validate(calibration, None, False, roi)
    img, label = load_input(image)
    calibration.check_image(img.shape)
    edges, xy, sigma_e, std, runs, wedges, warnings = _find_point(img, calibration, roi)
    if not wedges:
        raise MeasurementError("no tool point found: the image shows no pair of straight "
                               "flanks meeting at a point")
    best = None
    for w in wedges:  # best-formed point first
        best = _axis_reference(w, wedges, runs)
        if best is not None:
            break
    if best is None:
        raise MeasurementError("no axis reference found: show a straight edge of the work "
                               "or a lathe centre in the same view as the tool's point")
    w, kind, axis_dir, std_axis = best
    normal = np.array([-axis_dir[1], axis_dir[0]])
    if normal @ w.bisector < 0:
        normal = -normal
    ang = _runs.signed_angle(normal, w.bisector)
    std = math.sqrt(std_axis ** 2 + (w.a.line.std_angle_rad ** 2 + w.b.line.std_angle_rad ** 2) / 4)
    m = Measured(_deg(ang), 2 * _deg(std), "deg", w.a.line.n + w.b.line.n,
                 max(w.a.line.rms_px, w.b.line.rms_px), note=f"axis from the {kind}")
    chk = check_limits("squareness", m.value, m.u, -SQUARENESS_TOL_DEG, SQUARENESS_TOL_DEG,
                       unit="deg", source=f"+/-{SQUARENESS_TOL_DEG} deg common practice, no "
                                          "source (standards-notes 10: bisector square to the axis)")
    advice = ()
    if chk.result == "fail":
        advice = (f"swing the tool {abs(m.value):.2f} deg "
                  f"{'anticlockwise' if m.value > 0 else 'clockwise'} (as seen in the image) "
                  "to square it to the work, then re-check",)
    from ..overlays import InfiniteLine, Marker

    apex = tuple(float(v) for v in w.apex)
    overlays = (InfiniteLine(apex, tuple(float(v) for v in w.bisector), "fit"),
                InfiniteLine(apex, tuple(float(v) for v in normal), "axis"),
                Marker(apex, 8.0, "fit"))
    return make_result(SquarenessResult, kind="squareness", image=label,
                       calibration=calibration.to_dict(), spec=None,
                       measurements={"squareness": m}, checks=[chk], warnings=tuple(warnings),
                       overlays=overlays, notes=(f"axis direction from the {kind}",),
                       advice=advice, details={"apex_px": list(apex), "reference": kind})
