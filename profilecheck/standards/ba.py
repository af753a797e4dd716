"""British Association threads (BS 93): 47.5 deg, radiused crest and root.

Pitch of n BA = 0.9^n mm and major diameter 6 P^1.2 mm, both rounded to two significant
figures (standards-notes §6 [P 18]); E = d - 0.6P, core = d - 1.2P; depth 0.6P;
H = 1.136336P; radius r = 0.180834P. Tolerances are not implemented: basic only.
"""

from __future__ import annotations

from ..errors import SpecError
from ._build import assemble
from .designation import Designation, format_designation
from .spec import BASIC_ONLY, BasicProfile, ThreadSpec, ToolTip

__all__ = ["ba_spec", "BA_SIZES", "ba_rule"]

#: (major diameter mm, pitch mm) of 0BA..16BA, the published rounded values
#: (0, 2, 4 BA via standards-notes §11 [P 18]; the others [M]). Each equals the BA rule
#: rounded to two significant figures (checked by tests/test_standards_forms.py).
BA_SIZES: dict[int, tuple[float, float]] = {
    0: (6.0, 1.0), 1: (5.3, 0.9), 2: (4.7, 0.81), 3: (4.1, 0.73), 4: (3.6, 0.66),
    5: (3.2, 0.59), 6: (2.8, 0.53), 7: (2.5, 0.48), 8: (2.2, 0.43), 9: (1.9, 0.39),
    10: (1.7, 0.35), 11: (1.5, 0.31), 12: (1.3, 0.28), 13: (1.2, 0.25), 14: (1.0, 0.23),
    15: (0.9, 0.21), 16: (0.79, 0.19),
}


def _sig2(x: float) -> float:
    return float(f"{x:.2g}")


def ba_rule(n: int) -> tuple[float, float]:
    """(major, pitch) in mm from the BA rule, P = 0.9^n, d = 6 P^1.2, each to 2 s.f."""
    if not isinstance(n, int) or n < 0:
        raise ValueError("n must be an int >= 0")
    p = 0.9 ** n
    return _sig2(6 * p ** 1.2), _sig2(p)


def ba_spec(d: Designation, original: str) -> ThreadSpec:
    """ThreadSpec of ``nBA`` (basic dimensions only)."""
    n = int(d.diameter)
    if n not in BA_SIZES:
        raise SpecError(f"{original!r}: BA sizes on record are 0BA to 16BA; e.g. 4BA")
    if d.thread_class:
        raise SpecError(f"{original!r}: BA classes are not available here; e.g. 4BA")
    D, P = BA_SIZES[n]
    depth = 0.6 * P
    r = 0.180834 * P
    external = d.internal is not True
    profile = BasicProfile(1.136336 * P, depth, crest_radius_mm=r, root_radius_mm=r,
                           source="BS 93 basic form: depth 0.6P, r = 0.180834P")
    tip = ToolTip("radius", radius_min_mm=r, radius_max_mm=r,
                  source="BS 93 root radius 0.180834P (standards-notes §6 [P 18])",
                  note="tool ground to the basic radius; BA tolerances not implemented")
    return assemble(
        designation=format_designation(d), form="BA", series="BA", thread_class="",
        external=external, left_hand=d.left_hand, starts=d.starts, included_angle_deg=47.5,
        pitch_mm=P, major_mm=D, pd_mm=D - depth, minor_mm=D - 2 * depth, limits={},
        limits_note=BASIC_ONLY + " (BS 93 tolerances not implemented)", profile=profile,
        tool_ext=tip, tool_int=tip, radial_depth_mm=depth, crest_radius_ext_mm=r,
        shape={"basic": {"crest_radius_mm": r, "root_radius_mm": r}},
        notes=("radial depth: basic depth 0.6P (standards-notes §10)",),
        sources=("BS 93 BA sizes and form as given in standards-notes §6",))
