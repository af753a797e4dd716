"""Limits of a thread spec against the measured values, and the infeed still to go."""

from __future__ import annotations

import math
from typing import Any

from ..quantity import Measured
from ..verdict import Check, check_limits

__all__ = ["thread_checks", "remaining_infeed"]

_KEYS = ("major_diameter", "pitch_diameter", "minor_diameter")


def thread_checks(measurements: dict[str, Measured], spec: Any) -> tuple[Check, ...]:
    """One :func:`check_limits` per spec limit that has a measured value (mm)."""
    limits = getattr(spec, "limits", None) or {}
    out = []
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
