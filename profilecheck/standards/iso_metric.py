"""ISO general-purpose metric screw threads (ISO 68-1 profile, ISO 261 pitches, ISO 965-1
tolerances).

ISO 965-1's formulas do not reproduce several of its table values (standards-notes §12):
tables win (:mod:`._iso_tables`); where a table value is not known the formula value,
rounded to the R40 series, is used and that limit's ``source`` says 'formula-derived'.
Limits are rounded to 3 decimals (mm), decimal half-up, each from the rounded previous
limit, as the published charts are (standards-notes §2).
"""

from __future__ import annotations

import math
import re
from dataclasses import replace
from decimal import Decimal

from ..errors import SpecError
from ..units import round_half_up
from ._build import assemble
from ._iso_tables import (COARSE_PITCH, DIAMETER_RANGES, ENGAGEMENT_N_MM, ES_G_UM,
                          TD1_6_UM, TD2_6_UM, TD2_INT_6_UM, TD_6_UM)
from .designation import Designation, format_designation
from .spec import BasicProfile, Limit, ThreadSpec, ToolTip

__all__ = ["metric_spec", "metric_limits_mm", "fundamental_deviation_um", "r40",
           "normal_engagement_mm"]

_TABLE = "ISO 965-1 table"
_FORMULA = "formula-derived"

_R40 = (1.00, 1.06, 1.12, 1.18, 1.25, 1.32, 1.40, 1.50, 1.60, 1.70, 1.80, 1.90, 2.00,
        2.12, 2.24, 2.36, 2.50, 2.65, 2.80, 3.00, 3.15, 3.35, 3.55, 3.75, 4.00, 4.25,
        4.50, 4.75, 5.00, 5.30, 5.60, 6.00, 6.30, 6.70, 7.10, 7.50, 8.00, 8.50, 9.00, 9.50)

# Grade factors relative to grade 6 (ISO 965-1 §13.3/13.4, standards-notes §2; most [M]).
_TD2_F = {3: 0.5, 4: 0.63, 5: 0.8, 6: 1.0, 7: 1.25, 8: 1.6, 9: 2.0}
_TD_F = {4: 0.63, 6: 1.0, 8: 1.6}
_TD2I_F = {4: 0.85, 5: 1.06, 6: 1.32, 7: 1.7, 8: 2.12}   # x Td2(6)
_TD1_F = {4: 0.63, 5: 0.8, 6: 1.0, 7: 1.25, 8: 1.6}


def r40(value_um: float) -> float:
    """Nearest R40 preferred number (ISO 3), linear distance."""
    if not value_um > 0:
        raise ValueError("value_um must be > 0")
    e = math.floor(math.log10(value_um))
    cands = [v * 10 ** k for k in (e - 1, e, e + 1) for v in _R40]
    return min(cands, key=lambda c: abs(c - value_um))


def _range_index(d_mm: float) -> int | None:
    for i, (lo, hi) in enumerate(DIAMETER_RANGES):
        if lo < d_mm <= hi:
            return i
    return None


def _range_mean(i: int) -> float:
    lo, hi = DIAMETER_RANGES[i]
    return math.sqrt(lo * hi)


def fundamental_deviation_um(letter: str, pitch_mm: float) -> tuple[float, str]:
    """Fundamental deviation (es for e/f/g/h, EI for G/H) in µm and its provenance.

    Table 1 values for g and G; e and f from the formulas -(50 + 11P), -(30 + 11P)
    (ISO 965-1 §13.1, rounded to 1 µm, 'formula-derived'); h and H are zero.
    """
    if letter in ("h", "H"):
        return 0.0, _TABLE
    if letter in ("g", "G"):
        sign = -1.0 if letter == "g" else 1.0
        if pitch_mm in ES_G_UM:
            return sign * ES_G_UM[pitch_mm], _TABLE
        return sign * float(round_half_up(15 + 11 * pitch_mm, 0)), _FORMULA
    if letter == "f":
        return -float(round_half_up(30 + 11 * pitch_mm, 0)), _FORMULA
    if letter == "e":
        return -float(round_half_up(50 + 11 * pitch_mm, 0)), _FORMULA
    raise ValueError(f"letter must be one of e f g h G H, got {letter!r}")


def _td2_6(d_mm: float, p: float) -> tuple[float, bool]:
    i = _range_index(d_mm)
    v = TD2_6_UM.get(i, {}).get(p)
    if v is not None:
        return float(v), True
    return r40(90 * p ** 0.4 * _range_mean(i) ** 0.1), False   # ISO 965-1 §13.3


def _graded(table_value: tuple[float, bool], factor: float) -> tuple[float, bool]:
    v, tab = table_value
    if factor == 1.0:
        return v, tab
    return r40(factor * v), False


def metric_limits_mm(d_mm: float, pitch_mm: float, cls: str) -> dict[str, tuple[float, float, str]]:
    """Limits (min, max, source) in mm for an ISO metric thread of class `cls`.

    External classes ('6g', '5g6g', '4h', '6e', ...): keys major, pitch, minor_flat_max
    (d1 max of the flat-root form, reference) and minor_round_min (d3 min, R = 0.125P
    root). Internal ('6H', '5H6H', '7G'): major_min, pitch, minor.
    """
    m = re.fullmatch(r"(\d)([efghGH])(?:(\d)([efghGH]))?", cls)
    if m is None:
        raise ValueError(f"cls must look like 6g, 5g6g or 6H, got {cls!r}")
    pd_grade, letter = int(m.group(1)), m.group(2)
    crest_grade = int(m.group(3)) if m.group(3) else pd_grade
    if m.group(4) and m.group(4) != letter:
        raise ValueError("both symbols of a class must use the same letter")
    P = pitch_mm
    q3 = lambda x: round_half_up(x, 3)  # noqa: E731
    d = Decimal(repr(d_mm))
    d2 = Decimal(repr(d_mm - 0.649519052838329 * P))   # d - 3H/4, ISO 68-1
    d1 = Decimal(repr(d_mm - 1.082531754730548 * P))   # d - 5H/4, ISO 68-1
    dev_um, dev_src = fundamental_deviation_um(letter, P)
    dev = Decimal(repr(dev_um / 1000))
    um = lambda v: Decimal(repr(v)) / 1000  # noqa: E731
    src = lambda *tabs: _TABLE if all(tabs) else _FORMULA  # noqa: E731
    dev_tab = dev_src == _TABLE
    if letter.islower():
        if pd_grade not in _TD2_F or crest_grade not in _TD_F:
            raise ValueError(f"grades: pitch 3-9, major 4/6/8; got {cls}")
        td2, t2 = _graded(_td2_6(d_mm, P), _TD2_F[pd_grade])
        td6 = (float(TD_6_UM[P]), True) if P in TD_6_UM else (
            r40(180 * P ** (2 / 3) - 3.15 / math.sqrt(P)), False)   # ISO 965-1 §13.4
        td, t1 = _graded(td6, _TD_F[crest_grade])
        dmax = q3(d + dev)
        d2max = q3(d2 + dev)
        d2min = q3(d2max - um(td2))
        return {
            "major": (float(q3(dmax - um(td))), float(dmax), src(dev_tab, t1)),
            "pitch": (float(d2min), float(d2max), src(dev_tab, t2)),
            "minor_flat_max": (math.nan, float(q3(d2max - Decimal("0.433013") * Decimal(repr(P)))),
                               "reference"),
            "minor_round_min": (float(q3(d2min - Decimal("0.616025") * Decimal(repr(P)))),
                                math.nan, "reference"),
        }
    if pd_grade not in _TD2I_F or crest_grade not in _TD1_F:
        raise ValueError(f"grades: pitch 4-8, minor 4-8; got {cls}")
    i = _range_index(d_mm)
    v = TD2_INT_6_UM.get(i, {}).get(P)
    base6 = (float(v), True) if v is not None else (r40(1.32 * _td2_6(d_mm, P)[0]), False)
    if pd_grade == 6:
        TD2, t2 = base6
    else:
        TD2, t2 = r40(_TD2I_F[pd_grade] / 1.32 * base6[0]), False
    if P in TD1_6_UM:
        td1_6 = (float(TD1_6_UM[P]), True)
    else:  # ISO 965-1 §13.4: 433P - 190P^1.22 (P 0.2-0.8), 230 P^0.7 (P >= 1)
        raw = 433 * P - 190 * P ** 1.22 if P < 1 else 230 * P ** 0.7
        td1_6 = (r40(raw), False)
    TD1, t1 = _graded(td1_6, _TD1_F[crest_grade])
    D2min = q3(d2 + dev)
    D1min = q3(d1 + dev)
    return {
        "major_min": (float(q3(d + dev)), math.nan, src(dev_tab)),
        "pitch": (float(D2min), float(q3(D2min + um(TD2))), src(dev_tab, t2)),
        "minor": (float(D1min), float(q3(D1min + um(TD1))), src(dev_tab, t1)),
    }


def normal_engagement_mm(d_mm: float, pitch_mm: float) -> Limit | None:
    """Normal length of engagement N of ISO 965-1 (Table 2 where known, else §13.2 formula).

    Formula (standards-notes §2 [C 1]): LN from 2.24 P d^0.2 to 6.7 P d^0.2 with d the
    geometric mean of the diameter range; it does not reproduce the table (M6x1: 3.39-10.1
    against 3-9 mm), so formula values are marked 'formula-derived'.
    """
    i = _range_index(d_mm)
    if i is None:
        return None
    row = ENGAGEMENT_N_MM.get((i, pitch_mm))
    if row is not None:
        return Limit(row[0], row[1], _TABLE + " 2")
    dm = _range_mean(i) ** 0.2
    return Limit(round(2.24 * pitch_mm * dm, 1), round(6.7 * pitch_mm * dm, 1), _FORMULA)


def metric_spec(d: Designation, original: str) -> ThreadSpec:
    """ThreadSpec of an ISO metric designation."""
    D = float(d.diameter)
    if d.pitch is None:
        if D not in COARSE_PITCH:
            raise SpecError(f"{original!r}: M{d.size} has no ISO 261 coarse pitch on record; "
                            f"give the pitch, e.g. M{d.size}x1-6g")
        P = COARSE_PITCH[D]
        series = "coarse"
    else:
        P = float(d.pitch)
        series = "coarse" if COARSE_PITCH.get(D) == P else "fine"
    if P >= D / 2:
        raise SpecError(f"{original!r}: a pitch of {P} mm is too coarse for {D} mm "
                        "(the thread would have no core); e.g. M6x1-6g")
    cls = d.thread_class or ("6H" if d.internal else "6g")
    m = re.fullmatch(r"(\d)([efghGH])(?:(\d)([efghGH]))?", cls)
    if m is None or (m.group(4) and m.group(4) != m.group(2)):
        raise SpecError(f"{original!r}: unknown ISO tolerance class {cls!r}; use e.g. 6g, "
                        "6h, 6e, 5g6g (external) or 6H, 6G, 5H (internal), as in M6x1-6g")
    external = m.group(2).islower()
    if d.internal is not None and d.internal == external:
        raise SpecError(f"{original!r}: class {cls} is "
                        f"{'external' if external else 'internal'}; drop -INT/-EXT")
    letter = m.group(2)
    if (letter == "e" and P < 0.5) or (letter == "f" and P < 0.35):
        raise SpecError(f"{original!r}: tolerance position {letter} is not defined for "
                        f"pitch {P} mm in ISO 965-1; use g, e.g. M{d.size}x{P:g}-6g")
    H = math.sqrt(3) / 2 * P
    d2 = D - 0.75 * H
    d1 = D - 1.25 * H
    limits: dict[str, Limit] = {}
    note = ""
    if _range_index(D) is None:
        note = "basic dimensions only (size outside the ISO 965-1 range 1-355 mm)"
    else:
        try:
            L = metric_limits_mm(D, P, cls)
        except ValueError as e:
            raise SpecError(f"{original!r}: {e}; e.g. M6x1-6g or M6x1-6H") from None
        if external:
            limits = {
                "major_diameter": Limit(*L["major"]),
                "pitch_diameter": Limit(*L["pitch"]),
                "minor_diameter": Limit(
                    L["minor_round_min"][0], L["minor_flat_max"][1],
                    "reference: max d2max - 0.433013P (flat root), min d3 = d2min - "
                    "0.616025P (R = 0.125P root), chart rule of standards-notes §2"),
            }
        else:
            lo, _, s = L["major_min"]
            limits = {
                "major_diameter": Limit(lo, L["pitch"][1] + 0.649519052838329 * P,
                                        f"min {s}; max {_FORMULA} (not limited by ISO 965-1: "
                                        "root of a P/8 tool flat at maximum PD, reference)"),
                "pitch_diameter": Limit(*L["pitch"]),
                "minor_diameter": Limit(*L["minor"]),
            }
    if external:
        profile = BasicProfile(H, 0.625 * H, crest_flat_mm=P / 8, root_flat_mm=P / 4,
                               source="ISO 68-1 basic profile")
    else:
        profile = BasicProfile(H, 0.625 * H, crest_flat_mm=P / 4, root_flat_mm=P / 8,
                               source="ISO 68-1 basic profile")
    tool_ext = ToolTip("radius", flat_min_mm=2 * 0.125 * P * math.tan(math.radians(30)),
                       flat_max_mm=P / 4, radius_min_mm=0.125 * P, radius_max_mm=H / 6,
                       source="ISO 965-1 §11 external root: R >= 0.125P, or a flat root "
                              "truncated >= 0.125P (flat >= 0.144P); flat <= P/4 keeps the "
                              "basic profile; H/6 = 0.144P design root radius "
                              "(standards-notes §2, §10 [C 1][M][P 14])")
    tool_int = ToolTip("flat", flat_min_mm=0.0, flat_max_mm=P / 8,
                       source="internal root reaches the basic major diameter only with a "
                              "tip flat <= P/8; standards-notes §10 [D]",
                       note="no lower limit in the standard; a sharp tip is weak")
    dd = d if d.thread_class else replace(d, thread_class=cls)
    notes = ["radial depth: external h3 = 17H/24 with an H/6 tool radius, internal from the "
             "bore to the basic major 5H/8 (standards-notes §1, §10)"]
    eng = normal_engagement_mm(D, P)
    if eng is not None:
        notes.append(f"normal length of engagement N: {eng.min_mm:g} to {eng.max_mm:g} mm "
                     f"({eng.source}); the tolerances assume N")
    if d.starts > 1:
        notes.append("limits as for a single-start thread of this pitch")
    return assemble(
        designation=format_designation(dd), form="ISO metric", series=series,
        thread_class=cls, external=external, left_hand=d.left_hand, starts=d.starts,
        included_angle_deg=60.0, pitch_mm=P, major_mm=D, pd_mm=d2, minor_mm=d1,
        limits=limits, limits_note=note, profile=profile, tool_ext=tool_ext,
        tool_int=tool_int,
        radial_depth_mm=(0.613435 * P if external else 0.541266 * P),
        shape={"min": {"root_radius_mm": 0.125 * P}} if external else {},
        notes=tuple(notes),
        sources=("ISO 68-1 basic profile", "ISO 261 coarse pitches",
                 "ISO 965-1 Tables 1-5 where tabulated, formulas (§13) otherwise"))
