"""Unified inch screw threads, UN and UNR (ASME B1.1).

Limits are computed from the ASME B1.1 formulas (standards-notes §3) with the rounding
sequence of the Machinery's Handbook worked examples [P 10]: pitch to 8 decimals, the
profile constants and tolerances to 6, every limit to 4 decimals computed from the
already-rounded previous limit (class 1B/2B minor diameters to 3 decimals for sizes of
1/4 in and up). The basic major diameter is the 4-decimal table value (19/64 -> 0.2969).
All rounding is decimal half-up (``profilecheck.units.round_half_up``).
"""

from __future__ import annotations

import math
from dataclasses import replace
from decimal import Decimal

from ..errors import SpecError
from ..units import MM_PER_IN, round_half_up
from ._build import assemble, check_proportions
from ._unified_tables import CONSTANT_PITCH_TPI, tpi_of
from .designation import EXAMPLES, Designation, format_designation
from .spec import BasicProfile, Limit, ThreadSpec, ToolTip

__all__ = ["unified_spec", "unified_limits_in", "length_of_engagement_in"]

_SRC = "ASME B1.1 formula"
_DERIVED = "formula-derived"

# Pitch-diameter tolerance factors relative to class 2A (ASME B1.1 §5.8, standards-notes §3).
_PD_FACTOR = {"1A": Decimal("1.5"), "2A": Decimal("1"), "3A": Decimal("0.75"),
              "1B": Decimal("1.95"), "2B": Decimal("1.3"), "3B": Decimal("0.975")}


def _q(x: float | Decimal, n: int) -> Decimal:
    return round_half_up(float(x), n)


def length_of_engagement_in(series: str, diameter_in: Decimal, tpi: Decimal) -> Decimal:
    """LE the ASME B1.1 tables assume for the PD tolerance (standards-notes §3, §12.8).

    LE = D for UNC, UNF and the 4-, 6-, 8-UN series; LE = 9P for UNEF, 12-UN and finer
    constant-pitch series and UNS.
    """
    base = series.replace("R", "")
    if base in ("UNC", "UNF") or (base == "UN" and tpi in (4, 6, 8)):
        return diameter_in
    return Decimal(9) / tpi


def unified_limits_in(diameter_in: Decimal, tpi: Decimal, series: str, thread_class: str
                      ) -> dict[str, Decimal]:
    """Limits of size in inches (Decimal), ASME B1.1 formulas.

    Parameters
    ----------
    diameter_in : Decimal
        Basic major diameter (exact; rounded to 4 decimals here as the tables do).
    tpi : Decimal
        Threads per inch.
    series : str
        'UNC', 'UNF', 'UNEF', 'UN', 'UNS' or an R variant ('UNRC', ...).
    thread_class : str
        '1A', '2A', '3A', '1B', '2B' or '3B'.

    Returns
    -------
    dict
        External: ``es, Td, Td2, dmax, dmin, d2max, d2min, d1max`` (UN minor, reference),
        ``d3max`` (UNR minor, reference). Internal: ``TD1, TD2, D1min, D1max, D2min,
        D2max, Dmin``. Plus ``P`` and ``LE``.
    """
    if thread_class not in _PD_FACTOR:
        raise ValueError(f"thread_class must be one of {sorted(_PD_FACTOR)}")
    D = _q(diameter_in, 4)
    Df = float(diameter_in)
    P = _q(1 / float(tpi), 8)
    Pf = float(P)
    LE = float(length_of_engagement_in(series, diameter_in, tpi))
    # ASME B1.1 §5.8: Td2(2A) = 0.0015 D^(1/3) + 0.0015 sqrt(LE) + 0.015 P^(2/3)
    td2_2a = _q(0.0015 * Df ** (1 / 3) + 0.0015 * math.sqrt(LE) + 0.015 * Pf ** (2 / 3), 6)
    two_has = _q(0.64951905 * Pf, 6)        # 2 x external addendum = 3H/4
    two_hs = _q(1.08253175 * Pf, 6)         # 2 x basic thread height = 5H/4
    out: dict[str, Decimal] = {"P": P, "LE": Decimal(repr(LE)), "Td2_2A": td2_2a}
    td2 = _q(_PD_FACTOR[thread_class] * td2_2a, 6)
    if thread_class.endswith("A"):
        # allowance: 0.300 x Td2(2A) for 1A and 2A; none for 3A
        es = _q(Decimal("0.3") * td2_2a, 4) if thread_class != "3A" else Decimal(0)
        k = 0.090 if thread_class == "1A" else 0.060   # major-diameter tolerance factor
        td = _q(k * Pf ** (2 / 3), 6)
        dmax = D - es
        d2max = _q(dmax - two_has, 4)
        out.update(es=es, Td=td, Td2=td2, dmax=dmax, dmin=_q(dmax - td, 4), d2max=d2max,
                   d2min=_q(d2max - td2, 4), d1max=_q(dmax - two_hs, 4),
                   d3max=_q(dmax - _q(1.19078493 * Pf, 6), 4))
        return out
    # internal
    n = float(tpi)
    if thread_class == "3B":
        td1 = 0.05 * Pf ** (2 / 3) + 0.03 * Pf / Df - 0.002
        low = 0.23 * Pf - 1.5 * Pf ** 2 if n >= 13 else 0.120 * Pf
        td1 = min(max(td1, low), 0.394 * Pf)
        dp = 4
    elif Df < 0.25:
        td1 = 0.05 * Pf ** (2 / 3) + 0.03 * Pf / Df - 0.002
        td1 = min(max(td1, 0.25 * Pf - 0.4 * Pf ** 2), 0.394 * Pf)
        dp = 4
    else:
        td1 = 0.25 * Pf - 0.4 * Pf ** 2 if n >= 4 else 0.15 * Pf
        dp = 3
    td1d = _q(td1, 6)
    d1min_raw = D - two_hs
    d2min = _q(D - two_has, 4)
    out.update(TD1=td1d, TD2=td2, D1min=_q(d1min_raw, dp), D1max=_q(d1min_raw + td1d, dp),
               D2min=d2min, D2max=_q(d2min + td2, 4), Dmin=D)
    return out


def _check_series(d: Designation, original: str) -> str:
    base = d.series.replace("R", "") if d.series != "UNR" else "UN"
    if d.series == "UNRS":
        base = "UNS"
    if base in ("UNC", "UNF", "UNEF"):
        want = tpi_of(d.diameter, base)
        if want is None:
            raise SpecError(f"{original!r}: there is no {base} thread of {d.size} in "
                            f"(use UNS for a special); valid examples: {EXAMPLES}")
        if want != d.tpi:
            raise SpecError(f"{original!r}: the {base} pitch for {d.size} in is {want} tpi, "
                            f"not {d.tpi} (e.g. {d.size}-{want} {base}-2A, or use UNS)")
    elif base == "UN" and d.tpi not in CONSTANT_PITCH_TPI:
        raise SpecError(f"{original!r}: {d.tpi} tpi is not a constant-pitch UN series "
                        "(4, 6, 8, 12, 16, 20, 28, 32); write UNS for a special, "
                        "e.g. 1/4-40 UNS-2A")
    return base


def unified_spec(d: Designation, original: str) -> ThreadSpec:
    """ThreadSpec of a Unified designation (already parsed)."""
    if d.tpi is None:
        raise SpecError(f"{original!r}: a Unified thread needs its threads per inch, "
                        "e.g. 1/4-20 UNC-2A")
    check_proportions(original, float(d.diameter) * MM_PER_IN, MM_PER_IN / float(d.tpi),
                      "1/4-20 UNC-2A")
    base = _check_series(d, original)
    cls = d.thread_class or "2A"
    if cls not in _PD_FACTOR:
        raise SpecError(f"{original!r}: unknown Unified class {cls!r}; use 1A, 2A, 3A "
                        "(external) or 1B, 2B, 3B (internal), e.g. 1/4-20 UNC-2A")
    if d.internal is not None and d.internal != cls.endswith("B"):
        raise SpecError(f"{original!r}: class {cls} is "
                        f"{'internal' if cls.endswith('B') else 'external'}; drop -INT/-EXT")
    unr = "R" in d.series
    external = cls.endswith("A")
    if unr and not external:
        raise SpecError(f"{original!r}: UNR is an external thread only (its nut is UN), "
                        "e.g. 1/4-20 UNRC-2A with 1/4-20 UNC-2B")
    if cls[0] == "1" and base not in ("UNC", "UNF") and not (base == "UN" and d.tpi == 8):
        raise SpecError(f"{original!r}: classes 1A/1B are for UNC, UNF and 8-UN only; "
                        "use 2A/2B or 3A/3B")
    L = unified_limits_in(d.diameter, d.tpi, d.series, cls)
    inch = MM_PER_IN
    P_mm = inch / float(d.tpi)
    D_mm = float(d.diameter) * inch
    H = math.sqrt(3) / 2 * P_mm
    d2_mm = D_mm - 0.75 * H
    d1_mm = D_mm - 1.25 * H
    mm = lambda v: float(v) * inch  # noqa: E731
    le_note = "LE = D" if L["LE"] == Decimal(repr(float(d.diameter))) else "LE = 9P"
    src = f"{_SRC} ({le_note}, class {cls})"
    if external:
        # deepest root: smallest tool tip (P/8 flat or 0.108P radius) at minimum PD
        min_minor = float(L["d2min"]) * inch - 0.649519 * P_mm
        max_minor = mm(L["d3max"] if unr else L["d1max"])
        limits = {
            "major_diameter": Limit(mm(L["dmin"]), mm(L["dmax"]), src),
            "pitch_diameter": Limit(mm(L["d2min"]), mm(L["d2max"]), src),
            "minor_diameter": Limit(min_minor, max_minor,
                                    f"max {_SRC} ({'UNR' if unr else 'UN'} minor, reference); "
                                    f"min {_DERIVED} (no minimum in ASME B1.1: deepest root "
                                    "of a P/8 tool flat at minimum PD)"),
        }
        profile = BasicProfile(H, 0.625 * H, crest_flat_mm=P_mm / 8, root_flat_mm=P_mm / 4,
                               source="ASME B1.1 basic profile (flats P/8 crest, P/4 root)")
    else:
        limits = {
            "major_diameter": Limit(mm(L["Dmin"]), float(L["D2max"]) * inch + 0.649519 * P_mm,
                                    f"min {_SRC}; max {_DERIVED} (not limited by ASME B1.1: "
                                    "root of a P/8 tool flat at maximum PD, reference)"),
            "pitch_diameter": Limit(mm(L["D2min"]), mm(L["D2max"]), src),
            "minor_diameter": Limit(mm(L["D1min"]), mm(L["D1max"]), src),
        }
        profile = BasicProfile(H, 0.625 * H, crest_flat_mm=P_mm / 4, root_flat_mm=P_mm / 8,
                               source="ASME B1.1 basic profile (flats P/4 crest, P/8 root)")
    tool_ext = (ToolTip("radius", radius_min_mm=0.10825318 * P_mm, radius_max_mm=0.144 * P_mm,
                        source="ASME B1.1 UNR root radius 0.108P min; 0.144P largest without "
                               "interference (standards-notes §3 [P 13])")
                if unr else
                ToolTip("flat", flat_min_mm=P_mm / 8, flat_max_mm=P_mm / 4,
                        source="ASME B1.1 UN root: flat at most the basic P/4 (a rounded root "
                               "cleared below it is allowed); P/8 is the usual tool flat "
                               "(standards-notes §3, §10 [P 13][P 22])"))
    tool_int = ToolTip("flat", flat_min_mm=0.0, flat_max_mm=P_mm / 8,
                       source="internal root reaches the basic major diameter only with a tip "
                              "flat <= P/8 (basic internal root flat); derived, standards-notes "
                              "§10 [D]",
                       note="no lower limit in the standard; a sharp tip is weak")
    form = "UNR" if unr else "UN"
    notes = [f"PD tolerance with {le_note} = {float(L['LE']):.4f} in as the ASME B1.1 tables "
             "assume",
             "radial depth: from the basic major diameter to the root cut by a P/8 flat "
             "(external), or from the bore to the basic major (internal); standards-notes §10"]
    if d.starts > 1:
        notes.append("limits as for a single-start thread of this pitch")
    return assemble(
        designation=format_designation(d if d.thread_class else replace(d, thread_class=cls)),
        form=form, series=d.series, thread_class=cls, external=external,
        left_hand=d.left_hand, starts=d.starts, included_angle_deg=60.0, pitch_mm=P_mm,
        major_mm=D_mm, pd_mm=d2_mm, minor_mm=d1_mm, limits=limits, profile=profile,
        tool_ext=tool_ext, tool_int=tool_int, tpi=float(d.tpi),
        radial_depth_mm=(0.649519 * P_mm if external else 0.541266 * P_mm),
        shape={"min": {"root_radius_mm": 0.10825318 * P_mm}} if (unr and external) else {},
        notes=tuple(notes),
        sources=("ASME B1.1 §5.8 formulas as reproduced in standards-notes §3",))

