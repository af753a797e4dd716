"""General-purpose Acme threads (ASME B1.5): 29 deg, flat crest and root.

Basic (standards-notes §7 [P 20][D]): h = P/2, D2 = D - P/2, D1 = D - P, basic flat
0.3707P. Class 2G/3G/4G external limits from the formulas of standards-notes §7 (which
reproduce the published 2G table [P 20]; the 3G/4G factors are from memory [M]):
PD allowance 0.008/0.006/0.004 sqrt(D); PD tolerance 2G 0.030 sqrt(P) + 0.006 sqrt(D)
(3G 0.014 sqrt(P) + 0.0028 sqrt(D), 4G 0.010 sqrt(P) + 0.002 sqrt(D) [M]); major tolerance
0.05P, at least 0.005 in; d1 max = D - P - 0.020 in (n <= 10) or - 0.010 in (n > 10);
minor tolerance 1.5 x PD tolerance. Tolerances and h are rounded to 4 decimals before
they are subtracted (standards-notes §11, 3/4-6). Internal Acme limits are not
implemented (basic dimensions only).
"""

from __future__ import annotations

import math
from dataclasses import replace
from decimal import Decimal

from ..errors import SpecError
from ..units import MM_PER_IN, round_half_up
from ._build import assemble, check_proportions
from .designation import Designation, format_designation
from .spec import BASIC_ONLY, BasicProfile, Limit, ThreadSpec, ToolTip

__all__ = ["acme_spec", "acme_limits_in", "STANDARD_TPI"]

#: Standard general-purpose Acme diameter/pitch pairs (in: tpi), from memory [M].
STANDARD_TPI = {Decimal(k): Decimal(v) for k, v in {
    "0.25": 16, "0.3125": 14, "0.375": 12, "0.4375": 12, "0.5": 10, "0.625": 8, "0.75": 6,
    "0.875": 6, "1": 5, "1.125": 5, "1.25": 5, "1.375": 4, "1.5": 4, "1.75": 4, "2": 4,
    "2.25": 3, "2.5": 3, "2.75": 3, "3": 2, "3.5": 2, "4": 2, "4.5": 2, "5": 2}.items()}

_ALLOW = {"2G": 0.008, "3G": 0.006, "4G": 0.004}
_PDTOL = {"2G": (0.030, 0.006), "3G": (0.014, 0.0028), "4G": (0.010, 0.002)}


def _q4(x: float | Decimal) -> Decimal:
    return round_half_up(float(x), 4)


def acme_limits_in(diameter_in: Decimal, tpi: Decimal, cls: str = "2G") -> dict[str, Decimal]:
    """External Acme limits in inches: dmax, dmin, d2max, d2min, d1max, d1min (and parts)."""
    if cls not in _ALLOW:
        raise ValueError(f"cls must be one of {sorted(_ALLOW)}")
    D = float(diameter_in)
    P = 1 / float(tpi)
    allowance = _q4(_ALLOW[cls] * math.sqrt(D))
    a, b = _PDTOL[cls]
    pd_tol_raw = a * math.sqrt(P) + b * math.sqrt(D)
    pd_tol = _q4(pd_tol_raw)
    major_tol = _q4(max(0.05 * P, 0.005))
    h = _q4(P / 2)
    clearance = Decimal("0.020") if float(tpi) <= 10 else Decimal("0.010")
    Dd = _q4(D)
    d2max = Dd - h - allowance
    d1max = _q4(D - P - float(clearance))
    return {"allowance": allowance, "pd_tol": pd_tol, "major_tol": major_tol,
            "clearance": clearance, "dmax": Dd, "dmin": _q4(D - max(0.05 * P, 0.005)), "d2max": d2max,
            "d2min": d2max - pd_tol, "d1max": d1max, "d1min": d1max - _q4(1.5 * pd_tol_raw)}


def acme_spec(d: Designation, original: str) -> ThreadSpec:
    """ThreadSpec of ``D-n ACME[-2G|3G|4G][-INT]``."""
    if d.tpi is None:
        raise SpecError(f"{original!r}: an Acme thread needs its threads per inch, "
                        "e.g. 1/2-10 ACME-2G")
    cls = d.thread_class or "2G"
    if cls not in _ALLOW:
        raise SpecError(f"{original!r}: Acme classes here are 2G, 3G and 4G "
                        "(general purpose); e.g. 1/2-10 ACME-2G")
    P = MM_PER_IN / float(d.tpi)
    D = float(d.diameter) * MM_PER_IN
    check_proportions(original, D, P, "1/2-10 ACME-2G")
    external = d.internal is not True
    L = acme_limits_in(d.diameter, d.tpi, cls)
    c_mm = float(L["clearance"]) * MM_PER_IN
    inch = lambda v: float(v) * MM_PER_IN  # noqa: E731
    notes = ["radial depth: 0.5P + half the diametral root clearance (standards-notes §10)"]
    std = STANDARD_TPI.get(d.diameter.normalize())
    if std is not None and std != d.tpi:
        notes.append("non-standard diameter/pitch pair: vendor tables may differ from these "
                     "formula limits (standards-notes §12.12)")
    limits: dict[str, Limit] = {}
    note = ""
    src = f"ASME B1.5 formula (class {cls})" + (" [3G/4G factors from memory]"
                                                 if cls != "2G" else "")
    if external:
        limits = {"major_diameter": Limit(inch(L["dmin"]), inch(L["dmax"]), src),
                  "pitch_diameter": Limit(inch(L["d2min"]), inch(L["d2max"]), src),
                  "minor_diameter": Limit(inch(L["d1min"]), inch(L["d1max"]), src)}
    else:
        note = BASIC_ONLY + " (internal Acme limits not implemented)"
    flat = 0.3707 * P - 0.259 * c_mm
    tip = ToolTip("flat", flat_min_mm=flat, flat_max_mm=flat,
                  source="Acme root flat 0.3707P - 0.259 x diametral root clearance "
                         "(standards-notes §7, §10 [P 20])",
                  note="a narrower tip cuts a deeper root than the basic clearance")
    depth = 0.5 * P
    profile = BasicProfile(P / (2 * math.tan(math.radians(14.5))), depth,
                           crest_flat_mm=0.3707 * P, root_flat_mm=0.3707 * P,
                           source="ASME B1.5 basic profile, flats 0.3707P")
    return assemble(
        designation=format_designation(d if d.thread_class else replace(d, thread_class=cls)),
        form="Acme", series="ACME", thread_class=cls, external=external,
        left_hand=d.left_hand, starts=d.starts, included_angle_deg=29.0, pitch_mm=P,
        major_mm=D, pd_mm=D - P / 2, minor_mm=D - P, limits=limits, limits_note=note,
        profile=profile, tool_ext=tip, tool_int=tip, tpi=float(d.tpi),
        radial_depth_mm=depth + 0.5 * c_mm, notes=tuple(notes),
        sources=("ASME B1.5 general-purpose Acme as given in standards-notes §7",))
