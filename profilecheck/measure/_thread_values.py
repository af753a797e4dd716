"""Combine the fitted edges of a thread into reported values with expanded uncertainty.

Budget per value (GUM 5.1.2, independent terms in quadrature, then U = 2 u_c):

* statistics: larger of the fit-propagated and the tooth-to-tooth (type A) standard error;
* scale: the calibration's relative standard uncertainty times the length (every length);
* edge offset: the calibrated offset b is already removed from every point; its standard
  uncertainty acts on widths and diameters with the geometric factor of each quantity
  (diameters 2, flats 2 (1 - sin theta)/cos theta, pitch diameter and wires 2/sin theta,
  radii 1; pitch, angles and depth are immune: same-polarity);
* helix model: 10 % of the correction applied, rectangular (50 % for the first-order
  correction of rounded crests and roots); with the per-point line-of-sight model and the
  lens parameters' own uncertainties propagated (``lens_model``), 2 % on pitch diameter
  and over-wire (``_LENS_MODEL``: the evidence is stated there); with one edge and no spec
  (``helix['bounded']``)
  the correction computed for the smallest usual diameter is an upper bound, the true one
  lies between 0 and it: half is applied and half of it is a rectangular term
  (GUM 4.3.7, a = |correction| / 2);
* edge model: 0.02 px per edge position (standard), the residual that subpixel edge
  locators reach at best on straight edges (vision-notes section 0: 0.01-0.05 px), on
  every length resting on two or more edge positions;
* single-gauge scale (``scale_absorbs_offset``): the scale holds 2b/D_cal, so a length L
  with edge-offset factor g errs by b (g - 2 L / D_cal); with |b| <= 0.5 px (the bound the
  calibration notes state) that is a rectangular term (vision-notes section 4).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..quantity import K_COVERAGE, Measured
from . import _thread_profile as tp
from .wires import lead_term_mm, virtual_over_wire

__all__ = ["assemble"]

_MODEL = 0.1 / math.sqrt(3.0)
_ARC_MODEL = 0.5 / math.sqrt(3.0)
#: Helix model term with a lens whose own uncertainties are propagated (``lens_model``):
#: 2 % of the per-point correction, rectangular, on pitch diameter and over-wire.
#: Evidence (pinhole ray-cast renders of M6x1 and M10x1.5 in every third of a 16 mm field
#: at Z = 50 mm: benchmarks/lens_thread.py, tests/test_lens_thread_measure.py and
#: tests/test_lens_thread_uncertainty.py): with every point referred along its own line of
#: sight the pitch-diameter error stays within 0.2 um for corrections of 35-190 um (at most
#: 0.11 % of the correction) and the flank errors within 0.011 deg for corrections of
#: 0.09-0.54 deg, inside their statistical terms; the model is exact for straight flanks
#: (._thread_sight Notes). 2 % is about twenty times the largest PD residual seen (margin
#: for what the renders do not hold: flanks not quite straight, an axis slightly out of the
#: plane; common practice, no source for the factor). Flanks keep 10 % (their render errors,
#: up to 0.011 deg on corrections from 0.09 deg, are not a small share of the correction,
#: and with 2 % the expanded uncertainty only just covered them), flats keep 10 %
#: (off-centre their ends are cut by the crests) and the arc terms stay as without a lens.
_LENS_MODEL = 0.02 / math.sqrt(3.0)


def _m(value: float, std: float, unit: str, n: int, note: str = "", residual: float = float("nan")
       ) -> Measured:
    return Measured(float(value), float(K_COVERAGE * std), unit, int(n), residual, note)


def _pool_angles(limbs: list[tp.LimbProfile], side: str) -> tuple[float, float, int]:
    fl = [f for limb in limbs for f in limb.side(side)]
    a = np.array([f.angle_rad for f in fl])
    s = np.array([f.std_angle_rad for f in fl])
    fit = math.sqrt(float(np.sum(s ** 2))) / len(a)
    spread = float(np.std(a, ddof=1)) / math.sqrt(len(a)) if len(a) > 1 else fit
    return float(a.mean()), max(fit, spread), len(a)


def _pool_flats(limbs, kind, attr):
    fl = [f for limb in limbs for f in (limb.crests if kind == "crest" else limb.roots)]
    v = np.array([getattr(f, attr) for f in fl])
    s = np.array([getattr(f, "std_" + attr) for f in fl])
    ok = np.isfinite(v)
    if not ok.any():
        return None
    v, s = v[ok], s[ok]
    fit = math.sqrt(float(np.sum(s ** 2))) / len(v)
    spread = float(np.std(v, ddof=1)) / math.sqrt(len(v)) if len(v) > 1 else fit
    return float(v.mean()), max(fit, spread), len(v), int(sum(f.n for f in fl))


def _helix_term(value: float, corr: float, bounded: bool, model: float) -> tuple[float, float]:
    """``(value, standard model term)`` for a value carrying the helix correction ``corr``.

    Applied in full: model fraction of it (rectangular, already divided by sqrt 3 in
    ``model``). Bounded (the correction is known only to lie in [0, corr]): the midpoint,
    with half-width |corr| / 2 as a rectangular term (GUM 4.3.7).
    """
    if bounded:
        return value - 0.5 * corr, 0.5 * abs(corr) / math.sqrt(3.0)
    return value, model * abs(corr)


def _level(limb: tp.LimbProfile, kind: str) -> tuple[float, float]:
    r = _pool_flats([limb], kind, "level")
    return (r[0], r[1]) if r else (float("nan"), float("nan"))


def assemble(fitted: dict[str, tp.LimbProfile], raw: dict[str, tp.LimbProfile], spec: Any,
             cal: Any, helix: dict[str, Any], both: bool, sigma_e: float,
             lens_model: bool = False
             ) -> tuple[dict[str, Measured], dict[str, Any], list[str]]:
    """Return ``(measurements, per_tooth, notes)``; ``helix`` is completed in place with the
    size of the correction on each value.

    ``lens_model`` True: the per-point line-of-sight model with the lens parameters' own
    uncertainties propagated by the caller (:func:`.thread._lens_terms`); the helix model
    term on pitch diameter and over-wire is then ``_LENS_MODEL`` (module constants)
    instead of 10 %."""
    model = _LENS_MODEL if lens_model else _MODEL
    limbs = list(fitted.values())
    rlimbs = list(raw.values())
    rel = 0.5 * cal.u_mm_per_px / cal.mm_per_px           # scale, standard, relative
    sb = 0.5 * cal.u_edge_offset_px * cal.mm_per_px        # edge offset, standard, mm
    notes: list[str] = []
    meas: dict[str, Measured] = {}
    d_cal = float((cal.gauge or {}).get("size_mm") or 0.0) if cal.scale_absorbs_offset else 0.0
    bounded = bool(helix.get("bounded"))

    def absorbed(length: float, g: float) -> float:
        if d_cal <= 0:
            return 0.0
        return 0.5 * cal.mm_per_px * abs(g - 2.0 * length / d_cal) / math.sqrt(3.0)

    floor = 0.02 * math.sqrt(2.0) * cal.mm_per_px  # two edge positions, vision-notes 0

    if d_cal > 0:
        notes.append(f"scale from one {d_cal:g} mm gauge holds the edge offset: an uncertainty "
                     "term for sizes unlike the gauge is included")

    # Pitch: inverse-variance mean of the edges.
    w = np.array([1.0 / max(l.std_pitch, 1e-12) ** 2 for l in limbs])
    p = float(np.sum(w * [l.pitch for l in limbs]) / w.sum())
    sp = math.sqrt(1.0 / w.sum())
    n_fl = sum(len(l.flanks) for l in limbs)
    meas["pitch"] = _m(p, math.sqrt(sp ** 2 + (p * rel) ** 2 + absorbed(p, 0.0) ** 2), "mm", n_fl,
                       residual=float(np.mean([l.pitch_residual_rms for l in limbs])))

    ang = {}
    for side in ("left", "right"):
        a, s, n = _pool_angles(limbs, side)
        a0, _, _ = _pool_angles(rlimbs, side)
        corr = a - a0
        a, s_model = _helix_term(a, corr, bounded, _MODEL)
        helix[f"flank_{side}_correction_deg"] = math.degrees(a - a0)
        ang[side] = (a, math.hypot(s, s_model))
        meas[f"flank_{side}"] = _m(math.degrees(a), math.degrees(ang[side][1]), "deg", n)
    theta = 0.5 * (ang["left"][0] + ang["right"][0])
    meas["included_angle"] = _m(math.degrees(ang["left"][0] + ang["right"][0]),
                                math.degrees(math.hypot(ang["left"][1], ang["right"][1])),
                                "deg", n_fl)

    g_flat = 2.0 * (1.0 - math.sin(theta)) / math.cos(theta)
    for kind in ("crest", "root"):
        flat = _pool_flats(limbs, kind, "width")
        if flat is not None:
            v, s, n, npts = flat
            raw_flat = _pool_flats(rlimbs, kind, "width")
            corr = v - raw_flat[0] if raw_flat else 0.0
            v, s_model = _helix_term(v, corr, bounded, _MODEL)
            meas[f"{kind}_flat"] = _m(v, math.sqrt(s ** 2 + (g_flat * sb) ** 2 + (v * rel) ** 2
                                                + absorbed(v, g_flat) ** 2 + floor ** 2
                                                + s_model ** 2), "mm", npts)
        rad = _pool_flats(limbs, kind, "radius")
        if rad is not None:
            v, s, n, npts = rad
            raw_rad = _pool_flats(rlimbs, kind, "radius")
            corr = v - raw_rad[0] if raw_rad else 0.0
            v, s_model = _helix_term(v, corr, bounded, _ARC_MODEL)
            meas[f"{kind}_radius"] = _m(v, math.sqrt(s ** 2 + sb ** 2 + (v * rel) ** 2
                                                  + absorbed(v, 1.0) ** 2 + floor ** 2
                                                  + s_model ** 2), "mm",
                                        npts, note="blur bias sigma_e^2/(2R) corrected")

    depths, dstd, d_raw = [], [], []
    for l, l0 in zip(limbs, rlimbs):
        c, sc = _level(l, "crest")
        r, sr = _level(l, "root")
        if math.isfinite(c) and math.isfinite(r):
            depths.append(c - r)
            dstd.append(math.hypot(sc, sr))
            d_raw.append(_level(l0, "crest")[0] - _level(l0, "root")[0])
    if depths:
        d = float(np.mean(depths))
        sd = math.sqrt(float(np.sum(np.square(dstd)))) / len(depths)
        corr = d - float(np.mean(d_raw)) if np.all(np.isfinite(d_raw)) else 0.0
        # flat levels do not move with the flank correction; arc apexes do (first order)
        d, s_model = _helix_term(d, corr, bounded, _ARC_MODEL)
        meas["depth"] = _m(d, math.sqrt(sd ** 2 + (d * rel) ** 2 + absorbed(d, 0.0) ** 2
                                        + floor ** 2 + s_model ** 2), "mm",
                           sum(len(l.crests) + len(l.roots) for l in limbs))

    if both:
        t, bm = fitted["top"], fitted["bottom"]
        rim = None  # perspective of the rims: referred per point in ._thread_sight
        if str(helix.get("line_of_sight", "")).startswith("per point"):
            notes.append("every outline point referred along its own line of sight to the "
                         "axial section (cylinder perspective and depth of the flanks "
                         f"included; working distance {cal.lens.working_distance_mm:g} mm)")
        for key, kind in (("major_diameter", "crest"), ("minor_diameter", "root")):
            ct, sct = _level(t, kind)
            cb, scb = _level(bm, kind)
            if math.isfinite(ct) and math.isfinite(cb):
                dd = ct + cb
                # arc apexes move with the first-order arc correction: 100 % of it as a
                # rectangular model term (simulation: residuals reach about that)
                d_raw = _level(raw["top"], kind)[0] + _level(raw["bottom"], kind)[0]
                arc = ((dd - d_raw) / math.sqrt(3.0)) if math.isfinite(d_raw) else 0.0
                dd = rim(dd) if rim else dd
                meas[key] = _m(dd, math.sqrt(sct ** 2 + scb ** 2 + (2 * sb) ** 2 + (dd * rel) ** 2
                                             + absorbed(dd, 2.0) ** 2 + floor ** 2 + arc ** 2),
                               "mm", len(t.crests if kind == "crest" else t.roots)
                               + len(bm.crests if kind == "crest" else bm.roots))
        pd = t.pitch_line_y + bm.pitch_line_y
        pd_raw = raw["top"].pitch_line_y + raw["bottom"].pitch_line_y
        corr = pd - pd_raw
        pd = rim(pd) if rim else pd
        helix["pitch_diameter_correction_mm"] = corr
        g_pd = 2.0 / math.sin(theta)
        meas["pitch_diameter"] = _m(pd, math.sqrt(
            t.std_pitch_line_y ** 2 + bm.std_pitch_line_y ** 2 + (g_pd * sb) ** 2
            + (pd * rel) ** 2 + (model * corr) ** 2 + absorbed(pd, g_pd) ** 2 + floor ** 2), "mm",
            t.n_points + bm.n_points,
            note=f"axial section; helix correction {corr * 1000:+.1f} um applied")
        # Virtual three-wire reading over best-size wires.
        from ..standards.wires import best_wire
        half_deg = spec.flank_half_angle_deg if spec is not None else math.degrees(theta)
        wire = (spec.best_wire_mm if spec is not None and math.isfinite(spec.best_wire_mm)
                else best_wire(p, half_deg))
        try:
            m_planar, s_m, n_w, ok = virtual_over_wire(t, bm, wire)
        except ValueError:  # no groove with both flanks fitted on one edge
            notes.append("no virtual wire reading: an edge has no groove with both flanks")
        else:
            lead = helix.get("lead_mm", p)
            psi = math.atan(lead / (math.pi * pd))
            m_real = m_planar + lead_term_mm(wire, math.radians(half_deg), psi)
            meas["over_wire"] = _m(m_real, math.sqrt(
                s_m ** 2 + (g_pd * sb) ** 2 + (m_real * rel) ** 2 + (model * corr) ** 2
                + floor ** 2 + absorbed(m_real, g_pd) ** 2), "mm", n_w,
                note=f"virtual reading over {wire:.4f} mm wires, lead-angle term of ASME B1.2 / "
                     "H28 (exact form) included")
            if not ok:
                notes.append("a virtual wire touches outside the straight flanks: compare the "
                             "over-wire reading with care")
            helix["over_wire_wire_mm"] = wire
    elif bounded:
        notes.append("one edge in view and no spec: no diameters; the helix correction is "
                     "known only to lie between 0 and its value for the smallest usual "
                     "diameter: half of it applied, the other half in the uncertainty")
    elif helix.get("applied"):
        notes.append("one edge in view: no diameters; helix correction used the spec's basic "
                     "pitch diameter for the radius")
    if helix.get("applied"):
        notes.append(f"helix correction applied ({helix['model']}); lead angle "
                     f"{helix['lead_angle_deg']:.2f} deg at {helix['diameter_mm']:.3f} mm")
    per_tooth = {name: _per_tooth(l) for name, l in fitted.items()}
    return meas, per_tooth, notes


def _per_tooth(l: tp.LimbProfile) -> dict[str, Any]:
    left = {f.index: math.degrees(f.angle_rad) for f in l.side("left")}
    right = {f.index: math.degrees(f.angle_rad) for f in l.side("right")}
    crest = {c.index: (c.width if math.isfinite(c.width) else c.radius) for c in l.crests}
    root = {r.index: (r.width if math.isfinite(r.width) else r.radius) for r in l.roots}
    teeth = sorted(set(left) | set(right))
    return {
        "tooth": [i + 1 for i in teeth],
        "flank_left_deg": [left.get(i) for i in teeth],
        "flank_right_deg": [right.get(i) for i in teeth],
        "crest_mm": [crest.get(i) for i in teeth],
        "root_after_mm": [root.get(i) for i in teeth],
        "pitch_mm": [float(v) for v in l.pitch_per_tooth],
        "pitch_spread_mm": (float(np.ptp(l.pitch_per_tooth)) if len(l.pitch_per_tooth) else None),
        "lead_residual_rms_mm": l.pitch_residual_rms,
        "left_out": [i + 1 for i in l.outlier_teeth],
        "complete_teeth": l.n_full_teeth,
    }
