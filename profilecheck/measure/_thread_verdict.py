"""Limits of a thread spec against the measured values, and the infeed still to go.

Also whether the spec fits the part at all: the measured pitch against the spec's pitch
(:func:`pitch_check`, part of :func:`thread_checks`) and the warnings of
:func:`spec_warnings` (wrong pitch; an internal spec for a silhouette, which always shows
an external thread).
"""

from __future__ import annotations

import math
from typing import Any

from ..quantity import Measured
from ..verdict import Check, check_limits

__all__ = ["thread_checks", "pitch_check", "spec_warnings", "remaining_infeed",
           "PITCH_TOL_FRAC"]

_KEYS = ("major_diameter", "pitch_diameter", "minor_diameter")

#: Tolerance on the measured pitch against the spec's pitch beyond its U, as a fraction of
#: the pitch: 0.3 % (common practice, no source). Far above a lathe's lead error and the pitch
#: uncertainty of a calibrated view (0.05 % scale), and below the 0.78 % between the two
#: closest standard pitches that are confused in practice (M0.8 against 32 tpi = 0.79375
#: mm; arithmetic), so a pitch outside it means the wrong spec or a wrong lead (change
#: gears, quick-change box).
PITCH_TOL_FRAC = 0.003


def pitch_check(measurements: dict[str, Measured], spec: Any) -> Check | None:
    """The measured pitch against the spec's pitch, or None (no pitch measured or in spec).

    A consistency check, not a tolerance: the thread standards give the pitch no class
    limit of its own (a pitch error is taken up in the pitch diameter's functional size,
    ISO 965-1 / ASME B1.1). 'fail' when ``|pitch - P| > U + PITCH_TOL_FRAC * P`` (the spec
    does not fit the part: wrong spec or a wrong lead), otherwise 'pass'; never
    'undecided', so the row cannot hold back the verdict of a part that fits its spec. The
    row's limits are ``P +/- PITCH_TOL_FRAC * P``.
    """
    p_spec = getattr(spec, "pitch_mm", None)
    if "pitch" not in measurements or p_spec is None or not float(p_spec) > 0:
        return None
    p_spec = float(p_spec)
    m = measurements["pitch"]
    tol = PITCH_TOL_FRAC * p_spec
    u = float(m.u) if math.isfinite(m.u) else 0.0
    result = "fail" if abs(m.value - p_spec) > u + tol else "pass"
    name = getattr(spec, "designation", "the spec")
    return Check("pitch", float(m.value), float(m.u), p_spec - tol, p_spec + tol, "mm", result,
                 f"{name} pitch {p_spec:.4g} mm; fails beyond U + {100 * PITCH_TOL_FRAC:g} % "
                 "(common practice, no source): the wrong spec or a wrong lead")


def spec_warnings(measurements: dict[str, Measured], spec: Any, *,
                  external_view: bool = True) -> tuple[str, ...]:
    """Plain warnings when the spec does not fit the part in the image.

    Parameters
    ----------
    measurements : dict of Measured
        The thread's measured values (``pitch`` in mm used).
    spec : ThreadSpec
        The spec the part is checked against.
    external_view : bool
        The outline is an external thread. A backlit silhouette of a threaded bar always
        is; it is also what a cast taken from a nut shows.

    Returns
    -------
    tuple of str
        One line per misfit found; empty when the spec fits.
    """
    out = []
    chk = pitch_check(measurements, spec)
    name = getattr(spec, "designation", "the spec")
    if chk is not None and chk.result == "fail":
        out.append(f"measured pitch {chk.value:.4f} mm does not match the "
                   f"{float(spec.pitch_mm):.4g} mm of {name}: wrong spec, or the thread was "
                   "cut with the wrong lead; the diameter checks do not apply")
    if external_view and not bool(getattr(spec, "external", True)):
        out.append(f"{name} is an internal thread (nut) but the image shows an external thread "
                   "(a silhouette of a bar): check against the external class (e.g. 6g, 2A), "
                   "unless this is a cast taken from the nut")
    return tuple(out)


def thread_checks(measurements: dict[str, Measured], spec: Any) -> tuple[Check, ...]:
    """The pitch against the spec (:func:`pitch_check`), then one :func:`check_limits` per
    spec limit that has a measured value (mm)."""
    limits = getattr(spec, "limits", None) or {}
    out = []
    pc = pitch_check(measurements, spec)
    if pc is not None:
        out.append(pc)
    for key in _KEYS:
        if key in limits and key in measurements:
            lim = limits[key]
            m = measurements[key]
            out.append(check_limits(key, m.value, m.u, lim.min_mm, lim.max_mm, unit="mm",
                                    source=str(getattr(lim, "source", ""))))
    return tuple(out)


def remaining_infeed(pd: Measured, spec: Any) -> dict[str, Any] | None:
    """Radial infeed and compound travel that bring the pitch diameter to mid-tolerance.

    For an external thread the radial infeed is ``(d2_measured - d2_mid) / 2`` (the pitch
    diameter falls by twice the radial depth of cut on a V form); for an internal thread
    ``(D2_mid - D2_measured) / 2``. The compound travel is ``radial / cos(compound angle)``
    (:meth:`ThreadSpec.infeed`, standards-notes section 10). A negative remainder means the
    thread is already past the middle: no more cutting, and below the limit it is scrap.

    Returns None when the spec carries no pitch-diameter limits.
    """
    limits = getattr(spec, "limits", None) or {}
    if "pitch_diameter" not in limits:
        return None
    lim = limits["pitch_diameter"]
    mid = 0.5 * (lim.min_mm + lim.max_mm)
    external = bool(getattr(spec, "external", True))
    radial = 0.5 * ((pd.value - mid) if external else (mid - pd.value))
    u_radial = 0.5 * pd.u
    angle = float(getattr(spec, "compound_angle_deg", 29.5))
    if not math.isfinite(angle):
        angle = 29.5
    cos_a = math.cos(math.radians(angle))
    if radial > 0:
        travel = spec.infeed(radial) if hasattr(spec, "infeed") else radial / cos_a
        if pd.value - pd.u > lim.max_mm if external else pd.value + pd.u < lim.min_mm:
            note = ("pitch diameter still above the largest allowed: take the remaining infeed "
                    "in light passes and measure again before the last pass")
        else:
            note = ("within the limits already; the infeed shown brings it to the middle of "
                    "the tolerance")
    else:
        travel = 0.0
        past_limit = (pd.value + pd.u < lim.min_mm) if external else (pd.value - pd.u > lim.max_mm)
        note = ("past the middle of the tolerance: do not cut deeper"
                + ("; the pitch diameter is beyond its limit (scrap or rework)" if past_limit
                   else ""))
    return {
        "radial": {"value": max(radial, 0.0), "u": u_radial, "unit": "mm"},
        "compound": {"value": travel, "u": u_radial / cos_a, "unit": "mm"},
        "compound_angle": {"value": angle, "unit": "deg"},
        "target_pitch_diameter": {"value": mid, "unit": "mm"},
        "remaining_signed": {"value": radial, "unit": "mm"},
        "note": note,
        "caution": ("Stop the spindle before measuring; check with the thread standard, a gauge "
                    "or wires before the finishing pass; follow the machine maker's "
                    "instructions and local practice."),
    }
