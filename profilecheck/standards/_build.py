"""Assemble a :class:`ThreadSpec` from what a form module knows (shared by all forms)."""

from __future__ import annotations

import math
from typing import Any

from . import wires
from .spec import BASIC_ONLY, BasicProfile, Limit, ThreadSpec, ToolTip

__all__ = ["assemble", "check_proportions"]


def check_proportions(original: str, major_mm: float, pitch_mm: float, example: str) -> None:
    """Reject a pitch coarser than half the diameter (no core left: not a usable thread)."""
    from ..errors import SpecError
    if not pitch_mm <= 0.5 * major_mm:
        raise SpecError(f"{original!r}: a pitch of {pitch_mm:.4g} mm is too coarse for a "
                        f"{major_mm:.4g} mm diameter; e.g. {example}")


def assemble(*, designation: str, form: str, series: str, thread_class: str, external: bool,
             left_hand: bool, starts: int, included_angle_deg: float, pitch_mm: float,
             major_mm: float, pd_mm: float, minor_mm: float, limits: dict[str, Limit],
             profile: BasicProfile, tool_ext: ToolTip, tool_int: ToolTip,
             radial_depth_mm: float, tpi: float | None = None,
             crest_radius_ext_mm: float = 0.0, limits_note: str = "",
             shape: dict[str, Any] | None = None, wire_major_mm: float | None = None, notes: tuple[str, ...] = (),
             sources: tuple[str, ...] = ()) -> ThreadSpec:
    """Add wires, blank diameter and lead angle, and build the frozen spec.

    Wire geometry is that of the external thread (wires are laid in an external thread);
    its crest truncation below the sharp crest is (P/4) cot(theta) - (d - d2)/2 with the
    basic diameters, and the straight flank ends at rho cos^2(theta) / sin(theta) below
    the sharp crest for a crest radius rho (standards-notes §4, §5).
    """
    if limits:
        mj, pd, mn = (limits[k] for k in ("major_diameter", "pitch_diameter", "minor_diameter"))
        if not (mn.max_mm < pd.min_mm and pd.max_mm < mj.min_mm):
            from ..errors import SpecError
            raise SpecError(f"{designation}: the class tolerances are larger than the thread "
                            "depth for this diameter and pitch (outside the range the standard "
                            "covers); choose a coarser pitch or a closer class, e.g. "
                            "1/4-20 UNC-2A or M6x1-6g")
    th = math.radians(0.5 * included_angle_deg)
    P = pitch_mm
    ext_major = major_mm if wire_major_mm is None else wire_major_mm
    crest_trunc = 0.25 * P / math.tan(th) - 0.5 * (ext_major - pd_mm)
    flank_end = max(crest_trunc, crest_radius_ext_mm * math.cos(th) ** 2 / math.sin(th))
    w_best = wires.best_wire(P, 0.5 * included_angle_deg)
    w_min, w_max = wires.wire_limits(P, 0.5 * included_angle_deg, crest_trunc, flank_end)
    lead = starts * P
    if limits:
        lo, hi = limits["pitch_diameter"].min_mm, limits["pitch_diameter"].max_mm
        src = "three-wire at the PD limits, ASME B1.2 / H28 with lead-angle term"
    else:
        lo = hi = pd_mm
        src = "three-wire at the basic PD (no class limits), ASME B1.2 / H28 with lead-angle term"
    m_lo = wires.over_wires(lo, P, 0.5 * included_angle_deg, w_best, lead_mm=lead)
    m_hi = wires.over_wires(hi, P, 0.5 * included_angle_deg, w_best, lead_mm=lead)
    corr = m_hi - wires.over_wires(hi, P, 0.5 * included_angle_deg, w_best, lead_mm=lead,
                                   method="none")
    over = Limit(m_lo, m_hi, src)
    if external:
        band = limits.get("major_diameter")
        blank = band.mid_mm if band else major_mm
    else:
        band = limits.get("minor_diameter")
        blank = band.mid_mm if band else minor_mm
    if not limits and not limits_note:
        limits_note = BASIC_ONLY
    notes = notes + (
        "blank diameter: middle of the "
        + ("major" if external else "minor (bore)")
        + " diameter band (common practice, no source)",
    )
    return ThreadSpec(
        designation=designation, form=form, series=series, thread_class=thread_class,
        external=external, left_hand=left_hand, starts=starts,
        included_angle_deg=included_angle_deg, pitch_mm=P,
        major_diameter_mm=major_mm, pitch_diameter_mm=pd_mm, minor_diameter_mm=minor_mm,
        limits=limits, limits_note=limits_note, profile=profile,
        tool_tip_external=tool_ext, tool_tip_internal=tool_int,
        crest_truncation_mm=crest_trunc, crest_flank_end_mm=flank_end,
        blank_diameter_mm=blank, radial_depth_mm=radial_depth_mm, tpi=tpi,
        over_wire_mm=over, best_wire_mm=w_best, wire_min_mm=w_min, wire_max_mm=w_max,
        lead_correction_mm=corr, notes=notes, sources=sources, _shape=shape or {})
