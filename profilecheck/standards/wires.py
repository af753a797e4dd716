"""Three-wire pitch-diameter measurement (ASME B1.2 / NIST Handbook H28 method).

Symbols (standards-notes §4): M reading over the wires, w wire diameter, E pitch diameter,
theta flank half-angle, P pitch, lambda lead angle at the pitch line, tan(lambda) =
L / (pi E).

* Best wire, touching the flanks at the pitch line: w = P / (2 cos theta).
* Lead angle neglected: E = M + (P/2) cot(theta) - w (1 + csc(theta)).
* With the lead-angle term, series form of the H28 general formula (B taken equal to the
  lead angle at the pitch line, valid for best-size wires, lambda <= ~5 deg):
  E = M + (P/2) cot(theta) - w (1 + csc(theta) + 0.5 tan^2(B) cos(theta) cot(theta)).
* Exact form: E = M + (P/2) cot(theta) - w [1 + sqrt(csc^2(theta) + tan^2(B) cot^2(theta))].
* Wire limits for a crest truncated by f below the sharp crest (H = P / (2 tan theta)),
  contact-geometry derivation of standards-notes §4: the largest wire touches the flanks
  where the straight flank ends (height H - f_flank above the sharp root), w_max =
  2 (H - f_flank) sin(theta) / cos^2(theta); the smallest has its top level with the
  major diameter (height H - f_crest), w_min = 2 (H - f_crest) sin(theta) / (1 + sin(theta)).
  For the 60-deg flat crest (f = H/8) these are the H28 values 0.505182P and 1.010363P.
"""

from __future__ import annotations

import math

__all__ = ["best_wire", "wire_limits", "over_wires", "pitch_diameter_from_wires"]


def _check_pos(name: str, value: float) -> float:
    value = float(value)
    if not (math.isfinite(value) and value > 0):
        raise ValueError(f"{name} must be finite and > 0, got {value}")
    return value


def best_wire(pitch_mm: float, half_angle_deg: float) -> float:
    """Best wire diameter P / (2 cos theta), mm (ASME B1.2 / H28)."""
    P = _check_pos("pitch_mm", pitch_mm)
    th = math.radians(_check_pos("half_angle_deg", half_angle_deg))
    return P / (2.0 * math.cos(th))


def wire_limits(pitch_mm: float, half_angle_deg: float, crest_truncation_mm: float,
                flank_end_mm: float | None = None) -> tuple[float, float]:
    """Smallest and largest usable wire, mm.

    Parameters
    ----------
    pitch_mm, half_angle_deg : float
        Pitch and flank half-angle.
    crest_truncation_mm : float
        Radial distance from the sharp crest down to the major diameter.
    flank_end_mm : float, optional
        Radial distance from the sharp crest down to where the straight flank ends
        (tangent point of a crest radius); defaults to `crest_truncation_mm` (flat crest).
    """
    P = _check_pos("pitch_mm", pitch_mm)
    th = math.radians(_check_pos("half_angle_deg", half_angle_deg))
    H = P / (2.0 * math.tan(th))
    f_flank = crest_truncation_mm if flank_end_mm is None else flank_end_mm
    s, c = math.sin(th), math.cos(th)
    w_min = 2.0 * (H - crest_truncation_mm) * s / (1.0 + s)
    w_max = 2.0 * (H - f_flank) * s / (c * c)
    return w_min, w_max


def _lead_term(half_angle_rad: float, tan_b: float, method: str) -> float:
    s, c = math.sin(half_angle_rad), math.cos(half_angle_rad)
    if method == "none":
        return 1.0 + 1.0 / s
    if method == "series":
        return 1.0 + 1.0 / s + 0.5 * tan_b ** 2 * c * (c / s)
    if method == "exact":
        return 1.0 + math.sqrt(1.0 / s ** 2 + tan_b ** 2 * (c / s) ** 2)
    raise ValueError(f"method must be 'none', 'series' or 'exact', got {method!r}")


def over_wires(pitch_diameter_mm: float, pitch_mm: float, half_angle_deg: float,
               wire_mm: float, *, lead_mm: float | None = None, method: str = "series") -> float:
    """Measurement M over three wires for a thread of pitch diameter E, mm.

    M = E - (P/2) cot(theta) + w * K, with K from :func:`_lead_term` (``method`` 'none',
    'series' (H28, default) or 'exact'); the lead angle uses tan(B) = L / (pi E) with
    L = `lead_mm` (default: the pitch, single start).

    Examples
    --------
    >>> round(over_wires(1.5 - 0.649519 / 6, 1 / 6, 30, 0.140, method='none'), 4)
    1.6674
    """
    E = _check_pos("pitch_diameter_mm", pitch_diameter_mm)
    P = _check_pos("pitch_mm", pitch_mm)
    th = math.radians(_check_pos("half_angle_deg", half_angle_deg))
    w = _check_pos("wire_mm", wire_mm)
    L = P if lead_mm is None else _check_pos("lead_mm", lead_mm)
    tan_b = L / (math.pi * E)
    return E - 0.5 * P / math.tan(th) + w * _lead_term(th, tan_b, method)


def pitch_diameter_from_wires(m_mm: float, pitch_mm: float, half_angle_deg: float,
                              wire_mm: float, *, lead_mm: float | None = None,
                              method: str = "series") -> float:
    """Pitch diameter E from a reading M over three wires (inverse of :func:`over_wires`).

    The lead term depends weakly on E; fixed-point passes converge (contraction factor
    about w tan^2(B) / E) to float precision within a few passes for real threads.
    """
    M = _check_pos("m_mm", m_mm)
    P = _check_pos("pitch_mm", pitch_mm)
    th = math.radians(_check_pos("half_angle_deg", half_angle_deg))
    w = _check_pos("wire_mm", wire_mm)
    L = P if lead_mm is None else _check_pos("lead_mm", lead_mm)
    E = M + 0.5 * P / math.tan(th) - w * _lead_term(th, 0.0, "none")
    for _ in range(100):
        tan_b = L / (math.pi * E)
        new = M + 0.5 * P / math.tan(th) - w * _lead_term(th, tan_b, method)
        if abs(new - E) <= 1e-15 * max(1.0, abs(new)):
            return new
        E = new
    return E
