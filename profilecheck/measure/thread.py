"""Thread inspection from a backlit silhouette: pitch, flanks, flats, diameters, verdict.

Pipeline (see docs/conventions.md for frames and signs):

1. edges from :func:`profilecheck.imaging.find_edges` (linearised with the calibration's
   gamma), undistorted when the calibration holds a lens, moved back along their normals
   by the calibrated edge offset ``b`` (``Calibration.width_correction_px() = -2 b`` on dark
   widths, ``+2 b`` on grooves follows from that);
2. the axis: principal direction of the edge points, refined until the fitted crest and
   root levels run parallel to it; with both edges in view the axis is their midline;
3. with a lens and both edges in view, every outline point is followed along its own
   line of sight (:mod:`._thread_sight`): moved from where its ray crosses the measurement
   plane to where the ray grazes the part (cylinder perspective of the rims and the depth
   of each point, ``dM/M = -dZ/Z``), and given the ray's inclination toward the axis;
4. each edge is segmented into teeth and fitted (:mod:`._thread_profile`); crests and roots
   are fitted as arcs where the spec gives a radius or where the floor sags as an arc
   (:func:`._thread_profile.flat_sag`), else as flats; then once as seen and
   once with the helix correction (:mod:`.helix`) applied to every flank point, with that
   point's inclination (0 for a telecentric view); off-centre, flank points whose ray grazes
   the helicoid beyond the crest or root are dropped (the crest or root edge draws them);
5. values are combined over teeth and edges, each with its expanded uncertainty (k = 2):
   fit and tooth-to-tooth scatter, the calibration's scale (relative, on every length) and
   edge offset (on widths and diameters), and a model term of 10 % of the helix correction
   (rectangular); with one edge and no spec the correction is only bounded (half applied,
   half a rectangular term). With the per-point line-of-sight model and a lens record that
   holds its own uncertainties (principal point, working distance; :class:`Lens`), those
   are propagated into every value by central finite differences (GUM 5.1.3: each moved
   by +/- its standard uncertainty, step 3-5 run again, six extra passes, about 0.1 s on a
   480 x 700 px crop) and the model term on pitch diameter and over-wire is 2 % of the
   correction (evidence in :mod:`._thread_values`; flanks and flats keep 10 %); ``helix['uncertainty_terms']``
   and ``helix['lens_uncertainty']`` say what made U. A lens record without them (older
   files) keeps the 10 % term, with a note;
6. against a spec: ISO 14253-1 checks, the infeed still to go, the tolerance envelope.

Without a lens in the calibration (gauge only) the view is taken as telecentric and every
report says so.

Known gaps: with a lens but only one edge in view the axis (and so each ray's geometry) is
unknown and the points are read as a parallel view (a warning says so); the part's axis is
assumed in the measurement plane and square to the optical axis; off-centre the crests
hide the ends of flat roots from the inclined rays (those ends are left out, and a root
hidden entirely gives no level), but rounded roots get no such treatment; the lens
parameters are taken as independent (the grid fit's covariance is not kept) and the
principal point is moved only as the foot of the projection centre, not as the centre of
the distortion; the axial-tilt-only reading (one edge, no spec) keeps the 10 % term.
"""

from __future__ import annotations

import math
import os
from typing import Any

import numpy as np

from ..calibration.model import Calibration
from ..errors import MeasurementError, QualityError
from ..verdict import overall
from . import _thread_profile as tp
from ._thread_axis import AxisFrame, initial_axis, split_edges
from ._thread_overlays import build_overlays
from ._thread_result import ThreadResult
from ._thread_verdict import remaining_infeed, spec_warnings, thread_checks
from .helix import flank_contact_radius_mm, flank_shift_mm, lead_angle_rad, profile_shift_mm

__all__ = ["measure_thread", "ThreadResult"]

#: Edge contrast (bright - dark, linear units of full scale) below which edges are refused.
MIN_CONTRAST = 0.15
#: Edge blur (Gaussian sigma, px) beyond which the image is refused as out of focus.
MAX_BLUR_PX = 4.0


def _load(image: Any) -> tuple[np.ndarray, str | None]:
    if isinstance(image, (str, os.PathLike)):
        from ..imaging import load_image
        return load_image(image, dtype=np.float32), os.fspath(image)
    if isinstance(image, np.ndarray):
        if image.ndim != 2:
            raise ValueError(f"image must be a 2-D grey array, got shape {image.shape}")
        a = np.asarray(image, dtype=np.float64)
        if not np.all(np.isfinite(a)) or a.min() < 0 or a.max() > 1:
            raise ValueError("image array values must be finite and in [0, 1] "
                             "(use profilecheck.load_image)")
        return a, None
    raise TypeError(f"image must be a path or a numpy array, got {type(image).__name__}")


def _resolve_spec(spec: Any) -> Any:
    if spec is None:
        return None
    if isinstance(spec, str):
        from ..standards import thread_spec
        return thread_spec(spec)
    if not hasattr(spec, "pitch_mm") or not hasattr(spec, "included_angle_deg"):
        raise TypeError(f"spec must be a designation string or a ThreadSpec, got "
                        f"{type(spec).__name__}")
    return spec


def _edge_quality(edges: Any, cal: Calibration, warnings: list[str]) -> float:
    """Refuse low contrast or gross blur; return the effective blur sigma_e in px."""
    n = len(np.asarray(edges.xy))
    low = [w for w in getattr(edges, "warnings", ()) if "contrast" in str(w)]
    if n < 50 and low:
        raise QualityError(f"edge contrast is too low: {low[0]}")
    if n < 50:
        raise MeasurementError("no thread outline found: check the backlight, the focus and "
                               "that the part is in view")
    contrast = float(np.median(np.asarray(edges.bright) - np.asarray(edges.dark)))
    if contrast < MIN_CONTRAST:
        raise QualityError(f"edge contrast is too low ({contrast:.2f} of full scale): brighten "
                           "the backlight, clean the lens, or shade the part from room light")
    blur = float(edges.blur_px)
    if not math.isfinite(blur) or blur <= 0:
        blur = 1.0
    if blur > MAX_BLUR_PX:
        raise QualityError(f"the edges are blurred over {blur:.1f} px (out of focus or moving): "
                           "refocus on the thread's outline and keep the part still")
    if math.isfinite(cal.blur_px) and cal.blur_px > 0 and blur > 2.0 * cal.blur_px:
        warnings.append(f"edges are {blur / cal.blur_px:.1f}x as blurred as at calibration: "
                        "refocus for full accuracy")
    return math.sqrt(blur ** 2 + 1.0 / 12.0)  # pixel integration, vision-notes section 2


def _out_of_frame(xy: np.ndarray, frame: AxisFrame, shape) -> None:
    """Refuse when the outline meets a picture border that runs along the axis.

    Border crossings at the axial ends are normal (the part runs on out of view); edge
    points on a border along the axis mean the crests or roots are cut off.
    """
    h, w = shape[:2]
    along_x = abs(frame.u[0]) >= abs(frame.u[1])
    c = xy[:, 1] if along_x else xy[:, 0]
    n = h if along_x else w
    near = (c < 2.5) | (c > n - 3.5)
    if near.sum() < 5:
        return
    s_all = frame.to_axis(xy)[:, 0]
    s = s_all[near]
    lo, hi = np.quantile(s_all, 0.05), np.quantile(s_all, 0.95)
    if np.sum((s > lo) & (s < hi)) >= 5:
        raise QualityError("the thread runs out of the picture across its teeth: move the "
                           "part so its whole outline (crests and roots) is in view")


def _limb_xy(sr_mm: np.ndarray, mask: np.ndarray, top: bool, r_axis: float) -> np.ndarray:
    p = sr_mm[mask]
    y = (p[:, 1] - r_axis) if top else (r_axis - p[:, 1])
    return np.column_stack([p[:, 0], y])


def _tilt_of(limb: tp.LimbProfile) -> float:
    """Slope dy/dx of crest and root levels (separate intercepts) in a limb frame."""
    rows, ys = [], []
    for f in limb.crests:
        rows.append((f.x, 1.0, 0.0))
        ys.append(f.level)
    for f in limb.roots:
        rows.append((f.x, 0.0, 1.0))
        ys.append(f.level)
    a = np.array(rows)
    if len(a) < 3 or a[:, 1].sum() == 0 or a[:, 2].sum() == 0:
        return 0.0
    sol, *_ = np.linalg.lstsq(a, np.array(ys), rcond=None)
    return float(sol[0])


def measure_thread(image: Any, calibration: Calibration, *, spec: Any = None,
                   roi: Any = None, line_of_sight: bool = True,
                   camera_label: str | None = None) -> ThreadResult:
    """Measure a screw thread from a backlit silhouette.

    Parameters
    ----------
    image : str, path-like or ndarray
        Image file, or a grey float array in [0, 1] (``img[row, col]``; dark part on a
        bright field).
    calibration : Calibration
        Scale, edge offset and optional lens of this camera set-up.
    spec : str or ThreadSpec, optional
        Designation (e.g. ``'M6x1-6g'``) or spec; gives the limits, the lead and hand for
        the helix correction, and the crest/root form where it is radiused (a flat in the
        spec does not stop a rounded crest or root in the outline being fitted as an arc).
    roi : optional
        Region of interest passed to :func:`profilecheck.imaging.find_edges`.
    line_of_sight : bool
        With a lens in the calibration: True (default) follows each outline point's own
        ray (:mod:`._thread_sight` then :mod:`.helix`); False only undistorts the points
        and reads them as a parallel view (for comparison: the naive reading).
    camera_label : str, optional
        Label of the camera that took the picture; a warning is given when it differs
        from the calibration's label.

    Returns
    -------
    ThreadResult
        Axial-section values with expanded uncertainties (k = 2); see its docstring.

    Raises
    ------
    TypeError, ValueError
        Bad arguments (named).
    CalibrationError
        The image size differs from the calibration's.
    MeasurementError, QualityError
        No thread found, fewer than three complete teeth, low contrast, blur, thread
        running out of frame, too many damaged teeth.

    Notes
    -----
    Flank angles are from the normal to the axis; 'left' is the flank whose outward normal
    points to image left when the axis runs left-right (on both edges, so a mirrored image
    swaps them). The helix correction uses the lead and hand of the spec (else the measured
    pitch, single start, right hand) and the radius from the image when both edges are seen
    (else from the spec's basic pitch diameter); without either it is only bounded: half
    its value at the smallest usual diameter (4 x pitch) is applied, the other half is a
    rectangular uncertainty term, and a warning says so. See the module docstring for the line-of-sight model.
    """
    if not isinstance(calibration, Calibration):
        raise TypeError(f"calibration must be a Calibration, got {type(calibration).__name__}")
    if not isinstance(line_of_sight, bool):
        raise TypeError(f"line_of_sight must be True or False, got {line_of_sight!r}")
    img, image_name = _load(image)
    spec = _resolve_spec(spec)
    calibration.check_image(img.shape)
    from ..imaging import find_edges

    warnings: list[str] = []
    _check_label(calibration, camera_label, warnings)
    # the calibration's blur sets the fit windows (find_edges checks it against the picture)
    cal_blur = calibration.blur_px
    edges = find_edges(img, roi=roi, gamma=calibration.gamma,
                       blur_px=cal_blur if math.isfinite(cal_blur) and cal_blur > 0 else None)
    warnings.extend(str(w) for w in getattr(edges, "warnings", ()))
    sigma_e_px = _edge_quality(edges, calibration, warnings)
    scale = calibration.mm_per_px
    sigma_e = sigma_e_px * scale

    xy_raw = np.asarray(edges.xy, dtype=float)
    normal = np.asarray(edges.normal, dtype=float)
    contour = np.asarray(getattr(edges, "contour", np.zeros(len(xy_raw), int)))
    lens = calibration.lens
    if lens is not None:
        from ..calibration.lens import undistort_points
        _grid_reach(xy_raw, lens, warnings)
        xy_raw = undistort_points(xy_raw, lens)
    b_px = -0.5 * calibration.width_correction_px()
    xy = xy_raw - b_px * normal  # each edge point back onto the true boundary

    frame = initial_axis(xy, contour)
    form = _form(spec)
    top_m = bot_m = None
    r_axis = 0.0
    raw: dict[str, tp.LimbProfile] = {}
    for _ in range(3):
        sr = frame.to_axis(xy) * scale
        nsr = np.column_stack([normal @ np.asarray(frame.u), normal @ np.asarray(frame.n_up)])
        top_m, bot_m = split_edges(sr, nsr, contour)
        if top_m is None and bot_m is None:
            raise MeasurementError("no thread edge found: the outline has no teeth along it")
        both = top_m is not None and bot_m is not None
        r_axis = (0.5 * (np.median(sr[top_m, 1]) + np.median(sr[bot_m, 1])) if both
                  else (np.median(sr[top_m if top_m is not None else bot_m, 1])))
        raw = {}
        for name, m in (("top", top_m), ("bottom", bot_m)):
            if m is not None:
                raw[name] = tp.analyse_limb(_limb_xy(sr, m, name == "top", r_axis),
                                            sigma_e_mm=sigma_e, **_drops(form, None))
        slope = (0.5 * (_tilt_of(raw["top"]) - _tilt_of(raw["bottom"])) if both
                 else (_tilt_of(raw["top"]) if "top" in raw else -_tilt_of(raw["bottom"])))
        if both:
            r_axis += 0.5 * (raw["top"].pitch_line_y - raw["bottom"].pitch_line_y)
        o = frame.to_image(np.array([[0.0, r_axis / scale]]))[0]
        frame = frame.rotated(math.atan(slope), (float(o[0]), float(o[1])))
        if abs(slope) < 2e-5:  # 0.001 deg
            break
    # Final frame: axis through the origin; redo the raw fits there.
    _out_of_frame(np.asarray(edges.xy, dtype=float), frame, img.shape)
    sr = frame.to_axis(xy) * scale
    for name, m in (("top", top_m), ("bottom", bot_m)):
        if m is not None:
            raw[name] = tp.analyse_limb(_limb_xy(sr, m, name == "top", 0.0), sigma_e_mm=sigma_e,
                                        **_drops(form, raw[name]))
    # Flat or rounded crest and root: decided from the outline (the spec may allow either).
    shaped = _form_from_data(form, raw, {n: _limb_xy(sr, m, n == "top", 0.0)
                                         for n, m in (("top", top_m), ("bottom", bot_m))
                                         if m is not None}, sigma_e)
    if shaped != form:
        form = shaped
        for name, m in (("top", top_m), ("bottom", bot_m)):
            if m is not None:
                raw[name] = tp.analyse_limb(_limb_xy(sr, m, name == "top", 0.0),
                                            sigma_e_mm=sigma_e, **_drops(form, raw[name]))
    both = len(raw) == 2
    # With one edge the axis lies half the spec's pitch diameter inside its pitch line.
    axis_y = 0.0
    if not both and spec is not None:
        name1 = "top" if "top" in raw else "bottom"
        off1 = 0.5 * spec.pitch_diameter_mm - raw[name1].pitch_line_y
        axis_y = -off1 if name1 == "top" else off1
    sight = (_sight_model(calibration, frame, axis_y)
             if (line_of_sight and (both or spec is not None)) else None)
    lens_pass = None
    if sight is not None:
        lead0 = (spec.lead_mm if spec is not None
                 else float(np.mean([limb.pitch for limb in raw.values()])))
        rh0 = not bool(getattr(spec, "left_hand", False)) if spec is not None else True
        sr = sr - np.array([0.0, axis_y])  # measured from the axis
        frame0 = frame
        if axis_y:
            o_ax = np.asarray(frame.o) + axis_y / scale * np.asarray(frame.n_up)
            frame = AxisFrame((float(o_ax[0]), float(o_ax[1])), frame.u)
        plane_sr = sr
        raw0 = dict(raw)

        def lens_pass(sight_i, warn, _plane=plane_sr, _raw0=raw0, _form=form):
            """Sight referral, raw refit, helix pass (:mod:`._thread_sight`, :mod:`.helix`)."""
            from ._thread_sight import refer_to_axial_section
            sr_i, tg_i = refer_to_axial_section(_plane, sight_i, lead_mm=lead0, right_hand=rh0)
            raw_i = {name: tp.analyse_limb(_limb_xy(sr_i, m, name == "top", 0.0),
                                           sigma_e_mm=sigma_e, **_drops(_form, _raw0[name]))
                     for name, m in (("top", top_m), ("bottom", bot_m)) if m is not None}
            helix_i, fitted_i = _helix_pass(raw_i, sr_i, top_m, bot_m, frame, spec,
                                            calibration, sigma_e, _form, both, warn,
                                            (sight_i, _plane, tg_i))
            return sr_i, raw_i, helix_i, fitted_i
    elif calibration.lens is not None and line_of_sight:
        # one edge: the axis is not known, so only each ray's inclination along the axis
        # (tan gamma = (x - x_principal) / f along the axis direction) is used
        lz = calibration.lens
        u = np.asarray(frame.u)
        tg = ((xy[:, 0] - lz.cx_px) / lz.fx_px * u[0] + (xy[:, 1] - lz.cy_px) / lz.fy_px * u[1])
        sight = (None, None, tg)
        warnings.append("lens model: one edge in view and no spec, so the axis is not "
                        "known: only the tilt of each line of sight along the axis is "
                        "corrected, not the perspective; give the spec or get both edges in "
                        "view for the full model")
    elif calibration.lens is not None:
        warnings.append("lens model: distortion removed but lines of sight not followed "
                        "(parallel view assumed); diameters and flanks read large off-centre")

    from ._thread_values import assemble
    if lens_pass is not None:
        sr, raw, helix, fitted = lens_pass(sight, warnings)
        helix["line_of_sight"] = "per point (perspective referred to the axial section)"
        std_in = _lens_std_inputs(calibration)
        if std_in is None:
            meas, per_tooth, notes = assemble(fitted, raw, spec, calibration, helix, both,
                                              sigma_e)
            notes.append("lens parameters without uncertainties in the calibration (a file "
                         "from before they were kept): the line-of-sight correction carries "
                         "the conservative model term of 10 % of the helix correction; "
                         "recalibrate the lens for a budget from its own uncertainties")
            helix["uncertainty_terms"] = _U_TERMS_OLD
        else:
            meas, per_tooth, notes = assemble(fitted, raw, spec, calibration, helix, both,
                                              sigma_e, lens_model=True)
            meas, lens_d = _lens_terms(meas, lens_pass, calibration, frame0, axis_y, std_in,
                                       helix["line_of_sight"], spec, both, sigma_e)
            helix["lens_uncertainty"] = lens_d
            helix["uncertainty_terms"] = _U_TERMS_LENS
            notes.append(lens_d["note"])
    else:
        helix, fitted = _helix_pass(raw, sr, top_m, bot_m, frame, spec, calibration, sigma_e,
                                    form, both, warnings, sight)
        helix["line_of_sight"] = ("parallel view assumed" if sight is None
                                  else "axial tilt per point only")
        meas, per_tooth, notes = assemble(fitted, raw, spec, calibration, helix, both, sigma_e)
        if calibration.lens is not None and sight is not None:
            helix["uncertainty_terms"] = _U_TERMS_OLD
    for kind in ("crest", "root"):
        if form.get(f"{kind}_from_data"):
            notes.append(f"the {kind}s are rounded in the picture and were fitted as arcs "
                         f"({kind} radius reported instead of a flat)")
    if calibration.lens is None:
        notes.append("no lens model in the calibration (gauge only): a telecentric (parallel) "
                     "view is assumed; through an ordinary lens, readings away from the centre "
                     "of the picture are not corrected")
    for limb in fitted.values():
        warnings.extend(limb.warnings)
    checks = thread_checks(meas, spec) if spec is not None else ()
    if spec is not None:
        warnings.extend(spec_warnings(meas, spec))
    if spec is not None and not any(c.name != "pitch" for c in checks):
        warnings.append("no diameter limits could be checked: the spec has no class limits, or only one "
                        "edge is in view (diameters need both edges)")
    infeed = (remaining_infeed(meas["pitch_diameter"], spec)
              if spec is not None and "pitch_diameter" in meas else None)
    verdict = overall(checks)
    if verdict == "pass" and not any(c.name != "pitch" for c in checks):
        # a right pitch alone does not make a conforming thread: with no diameter limits
        # checked (basic dimensions only, or one edge in view) the verdict stays open
        verdict = "none"
    overlays = build_overlays(fitted, frame, scale, spec, both, verdict, img.shape)
    cal_d = {"mm_per_px": calibration.mm_per_px, "u_mm_per_px": calibration.u_mm_per_px,
             "gauge": calibration.gauge, "created": calibration.created,
             "label": calibration.label, "edge_offset_px": calibration.edge_offset_px,
             "telecentric": calibration.lens is None}
    axis = {"angle_deg": frame.angle_deg, "point_px": list(frame.o),
            "direction": list(frame.u)}
    return ThreadResult(meas, checks, verdict, tuple(dict.fromkeys(warnings)), overlays,
                        tuple(notes), per_tooth, helix, infeed, image_name, cal_d,
                        spec.to_dict() if spec is not None else None, both, axis)


#: What makes U with a lens (reported in ``helix['uncertainty_terms']``).
_U_TERMS_LENS = ("statistics (fit and tooth-to-tooth)", "scale", "edge offset", "edge model",
                 "lens parameters (principal point cx, cy and working distance Z, propagated "
                 "by finite differences, GUM 5.1.3)",
                 "helix model: 2 % of the per-point correction on pitch diameter and "
                 "over-wire (10 % on flanks and flats, the arc terms as without a lens)")
_U_TERMS_OLD = ("statistics (fit and tooth-to-tooth)", "scale", "edge offset", "edge model",
                "helix model: 10 % of the correction (lens parameters' own uncertainties not "
                "in the calibration)")


def _lens_std_inputs(cal: Calibration) -> dict[str, Any] | None:
    """Standard uncertainties (k = 1) of the lens inputs of the line-of-sight model, or
    None when the calibration does not hold them (then the 10 % model term is kept).

    ``cx_px``, ``cy_px`` from the lens record (expanded / 2); ``working_distance_mm`` from
    it when kept, else from Z = f s (how :func:`profilecheck.calibration.attach_lens`
    makes Z): relative uncertainties of a product in quadrature (GUM 5.1.6), f from
    ``u_fx_px``, s from the calibration's ``u_mm_per_px``. The focal length enters the
    per-point model only through Z (and the undistortion, whose centre and coefficients
    are fitted together; their covariance is not kept), so it is not perturbed apart.
    """
    lens = cal.lens
    ucx, ucy = float(lens.u_cx_px), float(lens.u_cy_px)
    if not (math.isfinite(ucx) and math.isfinite(ucy)):
        return None
    z = float(lens.working_distance_mm)
    uz = float(lens.u_working_distance_mm)
    if math.isfinite(uz):
        std_z, src = 0.5 * uz, "lens calibration (board distances)"
    elif math.isfinite(lens.u_fx_px):
        f = 0.5 * (lens.fx_px + lens.fy_px)
        std_z = z * math.hypot(0.5 * lens.u_fx_px / f, 0.5 * cal.u_mm_per_px / cal.mm_per_px)
        src = "Z = f s (focal length and scale uncertainties, GUM 5.1.6)"
    else:
        return None
    return {"cx_px": 0.5 * ucx, "cy_px": 0.5 * ucy, "working_distance_mm": std_z,
            "z_source": src}


def _lens_terms(meas, lens_pass, cal, frame0, axis_y, std_in, los, spec, both, sigma_e):
    """Add the lens-parameter term to every value (GUM 5.1.3, sensitivities by central
    finite differences: each input moved by +/- its standard uncertainty, the sight
    referral, raw refit, helix pass and value assembly run again; inputs independent,
    their covariance not being kept). Returns ``(measurements, report dict)``."""
    import time
    from dataclasses import replace as _replace
    from ..errors import ProfilecheckError
    from ..quantity import K_COVERAGE
    from ._thread_values import assemble

    t0 = time.perf_counter()
    lens = cal.lens
    std_k: dict[str, float] = {k: 0.0 for k in meas}
    per_input: dict[str, dict[str, float]] = {}
    passes = 0
    for name in ("cx_px", "cy_px", "working_distance_mm"):
        std = float(std_in[name])
        got = []
        for sgn in (1.0, -1.0):
            l2 = _replace(lens, **{name: getattr(lens, name) + sgn * std})
            try:
                sight_i = _sight_model(_replace(cal, lens=l2), frame0, axis_y)
                _, raw_i, helix_i, fitted_i = lens_pass(sight_i, [])
                helix_i["line_of_sight"] = los
                m_i, _, _ = assemble(fitted_i, raw_i, spec, cal, helix_i, both, sigma_e,
                                     lens_model=True)
            except (ProfilecheckError, ValueError):
                m_i = None
            passes += 1
            got.append(m_i)
        per_input[name] = {}
        for k, m0 in meas.items():
            vp = got[0][k].value if got[0] is not None and k in got[0] else None
            vm = got[1][k].value if got[1] is not None and k in got[1] else None
            if vp is not None and vm is not None:
                d = 0.5 * abs(vp - vm)           # |c_i| u_i, c_i = (f+ - f-) / (2 u_i)
            elif vp is not None or vm is not None:
                d = abs((vp if vp is not None else vm) - m0.value)  # one-sided (GUM 5.1.3 note)
            else:
                d = float("nan")
            per_input[name][k] = d
            std_k[k] = math.hypot(std_k[k], d) if math.isfinite(d) else float("nan")
    out = {}
    for k, m0 in meas.items():
        s_l = std_k[k]
        if not math.isfinite(s_l):
            # no perturbed pass gave this value: its own standard uncertainty once more
            # (conservative; common practice, no source)
            s_l = 0.5 * abs(m0.u)
        out[k] = _replace(m0, u=float(K_COVERAGE * math.hypot(0.5 * m0.u, s_l)))
    dt = time.perf_counter() - t0
    rep = {
        "inputs_std": {"cx_px": std_in["cx_px"], "cy_px": std_in["cy_px"],
                       "working_distance_mm": std_in["working_distance_mm"]},
        "working_distance_u_source": std_in["z_source"],
        "terms_expanded": {k: K_COVERAGE * v for k, v in std_k.items()},
        "per_input_std": per_input, "passes": passes, "time_s": dt,
        "note": ("U with the lens model: statistics, scale, edge offset, edge model, the lens "
                 "parameters (principal point and working distance, each moved by its "
                 "standard uncertainty and the line-of-sight referral, helix pass and values "
                 f"run again, {passes} passes, GUM 5.1.3) and a helix model term of 2 % of the "
                 "per-point correction on pitch diameter and over-wire (10 % on flanks and "
                 "flats)"),
    }
    return out, rep


def _form(spec: Any) -> dict[str, Any]:
    """Crest/root form from the spec: radiused or flat, and the nominal corner drops."""
    if spec is None:
        return {"radiused_crest": False, "radiused_root": False, "crest_drop": None,
                "root_drop": None}
    prof = spec.profile
    th = math.radians(spec.flank_half_angle_deg)
    rc = float(getattr(prof, "crest_radius_mm", 0.0) or 0.0)
    rr = float(getattr(prof, "root_radius_mm", 0.0) or 0.0)
    return {"radiused_crest": rc > 0, "radiused_root": rr > 0,
            "crest_drop": rc * (1 - math.sin(th)), "root_drop": rr * (1 - math.sin(th))}


#: Smallest usual major diameter over pitch (ISO 261 coarse series: M1 x 0.25 gives 4, from
#: memory; the standards-notes section 1 list starts at M1.6 x 0.35, 4.6): with one edge and
#: no spec the helix correction is bounded by its value at this diameter.
D_OVER_P_MIN = 4.0

#: A crest or root is read as an arc when its floor sags toward the material by more than
#: this many standard errors and by more than ``SAG_MIN_SIGMA`` of the edge blur sigma_e
#: (renders: flat floors give 0 +/- 0.4 um, H/6 roots 3-4 um; common practice, no source).
SAG_T = 4.0
SAG_MIN_SIGMA = 0.1


def _form_from_data(form: dict[str, Any], raw: dict[str, tp.LimbProfile],
                    xy_limbs: dict[str, np.ndarray], sigma_e: float) -> dict[str, Any]:
    """Flat or radiused crest / root from the outline itself (:func:`._thread_profile.flat_sag`).

    A form the spec gives as radiused stays radiused. Where the spec gives a flat (ISO 965-1
    clause 11 allows external roots flat or rounded, R >= 0.125 P) or there is no spec,
    a floor that sags as an arc is fitted as one; the corner drop for the flank band is
    then ``R (1 - sin theta)`` of the arc tangent to both flanks through the bottom.
    """
    out = dict(form)
    for kind in ("crest", "root"):
        if form[f"radiused_{kind}"]:
            continue
        sags, stds, radii = [], [], []
        for name, limb in raw.items():
            sg, sd, r = tp.flat_sag(xy_limbs[name], limb, sigma_e, kind)
            if math.isfinite(sg) and math.isfinite(sd):
                sags.append(sg)
                stds.append(sd)
                radii.append(r)
        if not sags:
            continue
        sag = float(np.mean(sags))
        std = math.sqrt(float(np.sum(np.square(stds)))) / len(stds)
        if sag > SAG_T * std and sag > SAG_MIN_SIGMA * sigma_e and math.isfinite(radii[0]):
            th = np.mean([limb.mean_angle(s)[0] for limb in raw.values()
                                for s in ("left", "right") if limb.side(s)])
            out[f"radiused_{kind}"] = True
            out[f"{kind}_drop"] = float(np.median(radii)) * (1.0 - math.sin(th))
            out[f"{kind}_from_data"] = True
    return out


def _drops(form: dict[str, Any], prev: tp.LimbProfile | None) -> dict[str, Any]:
    """Keyword arguments of analyse_limb for the corner exclusion.

    With a spec the corner drop is the nominal rounding ``r (1 - sin theta)``; without one
    it is 8 % of the depth found by the previous pass (0 on the first pass, where only the
    ``3 sigma_e`` blur margin applies).
    """
    cd, rd = form["crest_drop"], form["root_drop"]
    if cd is None or rd is None:
        depth = 0.0
        if prev is not None and prev.crests and prev.roots:
            depth = (np.mean([c.level for c in prev.crests])
                     - np.mean([r.level for r in prev.roots]))
        cd = 0.08 * depth if cd is None else cd
        rd = 0.08 * depth if rd is None else rd
    return {"crest_drop_mm": float(cd), "root_drop_mm": float(rd),
            "radiused_crest": form["radiused_crest"], "radiused_root": form["radiused_root"]}


def _grid_reach(xy_px: np.ndarray, lens: Any, warnings: list[str]) -> None:
    """Warn when outline points lie farther from the principal point than any grid corner
    did (the distortion there is extrapolated from the fitted polynomial)."""
    reach = getattr(lens, "grid_radius_px", None)
    if reach is None or not (math.isfinite(reach) and reach > 0) or len(xy_px) == 0:
        return
    r = np.hypot(xy_px[:, 0] - lens.cx_px, xy_px[:, 1] - lens.cy_px)
    frac = float(np.mean(r > reach))
    if frac > 0.0:
        warnings.append(f"{100 * frac:.0f} % of the outline lies farther out in the picture than "
                        "the calibration grid reached: the lens distortion there is "
                        "extrapolated; move the part toward the centre or recalibrate with the "
                        "grid filling the corners")


def _check_label(cal: Calibration, camera_label: Any, warnings: list[str]) -> None:
    if camera_label is None:
        return
    if not isinstance(camera_label, str):
        raise TypeError(f"camera_label must be a string or None, got {type(camera_label).__name__}")
    if camera_label and cal.label and camera_label.strip() != cal.label.strip():
        warnings.append(f"the picture is from camera '{camera_label}' but the calibration is for "
                        f"'{cal.label}': use that camera's calibration")


def _sight_model(cal: Calibration, frame: AxisFrame, axis_y_mm: float = 0.0):
    """Projection centre in the axis frame (mm; the axis at ``axis_y_mm`` in the frame's
    radial coordinate), or None without a usable lens."""
    lens = cal.lens
    if lens is None or not (math.isfinite(lens.working_distance_mm)
                            and lens.working_distance_mm > 0):
        return None
    from ._thread_sight import SightModel
    foot = frame.to_axis(np.array([[lens.cx_px, lens.cy_px]]))[0] * cal.mm_per_px
    return SightModel(float(foot[0]), float(foot[1]) - axis_y_mm,
                      float(lens.working_distance_mm))


def _index_lookup(xy_l: np.ndarray):
    """Index of the outline point nearest to each (x, y) asked for (the limb fits pass
    subsets of ``xy_l``, so the nearest point is the point itself)."""
    from scipy.spatial import cKDTree
    tree = cKDTree(xy_l)

    def look(x, y):
        _, i = tree.query(np.column_stack([np.ravel(x), np.ravel(y)]))
        return i.reshape(np.shape(x))
    return look


def _helix_pass(raw, sr, top_m, bot_m, frame, spec, cal, sigma_e, form, both, warnings,
                sight_pts=None):
    """``sight_pts``: None (parallel view) or ``(sight, plane_sr_mm, tan_gamma)`` per outline
    point (:mod:`._thread_sight`; ``sight`` and ``plane_sr_mm`` None with one edge only)."""
    """Refit each edge with the helix correction; return (helix dict, fitted limbs)."""
    pitch_seen = float(np.mean([limb.pitch for limb in raw.values()]))
    lead = spec.lead_mm if spec is not None else pitch_seen
    right_hand = not bool(getattr(spec, "left_hand", False)) if spec is not None else True
    if both:
        d2 = raw["top"].pitch_line_y + raw["bottom"].pitch_line_y
        d_src = "image (both edges)"
    elif spec is not None:
        d2 = spec.pitch_diameter_mm
        d_src = "spec basic pitch diameter"
    else:
        # One edge, no spec: the correction is only bounded. It falls as the diameter grows
        # (shift a^2 / (2 rho tan theta), helix.py), so it lies between 0 (large diameter)
        # and its value at the smallest usual diameter; half of that is applied and the
        # other half goes into the uncertainty as a rectangular term (_thread_values.py).
        limb0 = next(iter(raw.values()))
        h_cp = (float(np.mean([c.level for c in limb0.crests])) - limb0.pitch_line_y
                if limb0.crests else 0.375 * pitch_seen)
        d2 = max(D_OVER_P_MIN * pitch_seen - 2.0 * h_cp, pitch_seen)
        d_src = (f"bound: smallest usual major diameter {D_OVER_P_MIN:g} x pitch less the "
                 "measured crest-to-pitch-line height")
        warnings.append("helix correction only bounded: the diameter is unknown (give the spec "
                        "or get both edges in view); half the correction for the smallest "
                        f"usual diameter ({D_OVER_P_MIN:g} x pitch) is applied and the other half "
                        "is in the uncertainty of flanks and flats")
    lens = cal.lens if sight_pts is not None else None
    model = "telecentric (parallel view, line of sight square to the axis assumed)" \
        if lens is None else "lens: line of sight per flank from the calibrated lens"
    fitted = {}
    for name, m in (("top", top_m), ("bottom", bot_m)):
        if m is None:
            continue
        limb0 = raw[name]
        top = name == "top"
        off = 0.0 if both else (0.5 * d2 - limb0.pitch_line_y)
        xy_l = _limb_xy(sr, m, top, 0.0)
        look = tg_l = None
        if lens is not None:
            # each ray already turned into its own radial plane (._thread_sight): the
            # parallel-view shift with that ray's inclination is then exact for straight
            # flanks (tests/test_lens_thread_sight.py checks it against a direct search)
            look, tg_l = _index_lookup(xy_l), np.asarray(sight_pts[2])[m]

        def tan_gamma(x, y, _look=look, _tg=tg_l):
            return 0.0 if _look is None else _tg[_look(x, y)]

        # The shift depends on the flank angle: start from the raw fit, then once more from
        # the corrected one (off-centre the raw angles are out by up to 0.7 deg).
        span = None
        if lens is not None and limb0.crests and limb0.roots:
            dr = _drops(form, limb0)
            span = (float(np.mean([f.level for f in limb0.roots])) + off + dr["root_drop_mm"]
                    + 3.0 * sigma_e,
                    float(np.mean([f.level for f in limb0.crests])) + off - dr["crest_drop_mm"]
                    - 3.0 * sigma_e)  # radii, as rad = y + off below
        limb_th = limb0
        for _ in range(2 if lens is not None else 1):
            theta = {s: min(max(limb_th.mean_angle(s)[0], math.radians(5)), math.radians(45))
                     for s in ("left", "right") if limb_th.side(s)}

            def shift(x, y, side, _top=top, _off=off, _theta=theta, _tg=tan_gamma,
                      _span=span):
                rad = np.maximum(y + _off, 1e-6)
                th = _theta.get(side, math.radians(30))
                tg = _tg(x, y)
                out = flank_shift_mm(rad, lead, th, side=side, tan_gamma=tg,
                                     right_hand=right_hand, top_edge=_top)
                if _span is not None:
                    # off-centre the grazing point climbs toward the crest (or sinks to the
                    # root) faster than the outline: beyond them the crest or root edge
                    # draws the outline, not the flank (drop those points)
                    rho = flank_contact_radius_mm(rad, lead, th, side=side, tan_gamma=tg,
                                                  right_hand=right_hand, top_edge=_top)
                    out = np.where((rho > _span[0]) & (rho < _span[1]), out, np.nan)
                return out

            def arc_shift(x, y, slope, _top=top, _off=off, _tg=tan_gamma):
                rad = np.maximum(y + _off, 1e-6)
                return profile_shift_mm(rad, slope, lead, tan_gamma=_tg(x, y),
                                        right_hand=right_hand, top_edge=_top)

            def root_hidden(x, level, _top=top, _off=off, _theta=theta, _look=look,
                            _tg=tg_l):
                # A ray grazing the root floor drifts along the groove by k z' at depth z'
                # (k = a_eff / rho, a_eff = h L / 2 pi + s tan(gamma) rho, helix.py) while
                # the groove widens by tan(theta) z'^2 / (2 rho): it clears both flanks only
                # within k^2 rho / (2 tan theta) less than the half-floor (derived here).
                rho = max(level + _off, 1e-6)
                i = int(_look(np.array([x]), np.array([level]))[0])
                a_eff = ((1.0 if right_hand else -1.0) * lead / (2 * math.pi)
                         + (1.0 if _top else -1.0) * float(_tg[i]) * rho)
                th = float(np.mean(list(_theta.values()))) if _theta else math.radians(30)
                return (a_eff / rho) ** 2 * rho / (2.0 * math.tan(th))

            limb_th = tp.analyse_limb(xy_l, sigma_e_mm=sigma_e, flank_shift=shift,
                                      arc_shift=arc_shift,
                                      root_hidden=root_hidden if look is not None else None,
                                      **_drops(form, limb0))
        fitted[name] = limb_th
    psi = lead_angle_rad(lead, d2)
    helix = {"applied": True, "bounded": not both and spec is None, "model": model,
             "lead_mm": lead, "right_hand": right_hand,
             "diameter_mm": d2, "diameter_source": d_src,
             "lead_angle_deg": math.degrees(psi),
             "lead_source": "spec" if spec is not None else "measured pitch, single start assumed"}
    return helix, fitted
