"""Virtual three-wire reading: best-size wires set into the measured axial profile.

Each wire is a circle of diameter ``w`` in the axial section, tangent to the two fitted
flank lines of a groove (a right flank followed by the next tooth's left flank). The
reading over wires is the distance between the wire tops on the two edges of the
silhouette, measured across the axis. That is the planar (lead-angle-free) reading; a real
wire check over the helical thread reads larger by the lead-angle term of the ASME B1.2 /
NIST H28 general formula (``../shared/standards-notes.md`` section 4), which is added so the
number can be compared directly with a micrometer over real wires.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ._thread_profile import LimbProfile

__all__ = ["WireContact", "wire_tops", "virtual_over_wire", "lead_term_mm"]


@dataclass(frozen=True)
class WireContact:
    """One wire in one groove (limb frame, mm): centre, top height and the heights where it
    touches the right and left flank; ``on_flanks`` is False when a contact falls outside
    the straight part of the flank that was fitted."""

    groove: int
    centre: tuple[float, float]
    top: float
    contact_y: tuple[float, float]
    on_flanks: bool


def wire_tops(limb: LimbProfile, wire_mm: float) -> tuple[WireContact, ...]:
    """Place a wire of diameter ``wire_mm`` in every groove of ``limb`` with both flanks.

    Notes
    -----
    With flank lines ``x = x_R + k_R (y - y_R)`` and ``x = x_L + k_L (y - y_L)`` the centre
    at distance ``rho = w/2`` from both (on the groove side) satisfies
    ``x - x_R(y) = rho sqrt(1 + k_R^2)`` and ``x_L(y) - x = rho sqrt(1 + k_L^2)``, two linear
    equations in the centre (analytic geometry).
    """
    if not (wire_mm > 0 and math.isfinite(wire_mm)):
        raise ValueError(f"wire_mm must be positive, got {wire_mm!r}")
    rho = 0.5 * wire_mm
    left = {f.index: f.line for f in limb.flanks if f.side == "left"}
    right = {f.index: f.line for f in limb.flanks if f.side == "right"}
    out = []
    for i in sorted(right):
        if i + 1 not in left:
            continue
        lr, ll = right[i], left[i + 1]
        ar, al = math.sqrt(1 + lr.k ** 2), math.sqrt(1 + ll.k ** 2)
        # x_R(y) + rho ar = x_L(y) - rho al, solve for y with y0 = common reference.
        y0 = lr.y_ref
        xr0 = lr.x_at(y0)
        xl0 = ll.x_at(y0)
        den = ll.k - lr.k
        yc = y0 + (rho * (ar + al) - (xl0 - xr0)) / den
        xc = float(lr.x_at(yc)) + rho * ar
        # Contact points: foot of the perpendicular from the centre on each line.
        # Unit normal of a line x = x0 + k y toward +x is (1, -k)/sqrt(1 + k^2).
        cyr = yc + rho * lr.k / ar
        cyl = yc - rho * ll.k / al
        ok = all(_within(line, cy) for line, cy in ((lr, cyr), (ll, cyl)))
        out.append(WireContact(i, (xc, float(yc)), float(yc + rho), (float(cyr), float(cyl)), ok))
    return tuple(out)


def _within(line, y: float) -> bool:
    half = 0.5 * line.y_span
    return abs(y - line.y_ref) <= half * 1.05 + 1e-9


def lead_term_mm(wire_mm: float, half_angle_rad: float, lead_angle_rad: float) -> float:
    """Extra reading of real wires on a helical thread over the planar reading:
    ``w [sqrt(csc^2 theta + tan^2 B cot^2 theta) - csc theta]`` with B = lead angle at the
    pitch line (exact form of the H28 general formula, standards-notes section 4)."""
    s = math.sin(half_angle_rad)
    c = math.cos(half_angle_rad)
    tb = math.tan(lead_angle_rad)
    return wire_mm * (math.sqrt(1 / s ** 2 + tb ** 2 * (c / s) ** 2) - 1 / s)


def virtual_over_wire(top: LimbProfile, bottom: LimbProfile, wire_mm: float
                      ) -> tuple[float, float, int, bool]:
    """Planar reading over wires between the two edges, ``(M_mm, std_M_mm, n_wires, ok)``.

    Both limb profiles must be in limb frames whose ``y`` is the distance from the thread
    axis (so the reading is ``top_wire + bottom_wire``). ``ok`` is False if any wire
    touches outside the fitted straight flanks (the wire is then too large or too small for
    this profile and the reading is not comparable with a wire check).
    """
    ct, cb = wire_tops(top, wire_mm), wire_tops(bottom, wire_mm)
    if not ct or not cb:
        raise ValueError("both edges need at least one groove with two fitted flanks")
    tt = np.array([c.top for c in ct])
    tb = np.array([c.top for c in cb])
    m = float(tt.mean() + tb.mean())

    def sem(v: np.ndarray, limb: LimbProfile) -> float:
        fit = limb.std_pitch_line_y  # a wire top moves with the flank pair like the pitch line
        return max(fit, float(np.std(v, ddof=1)) / math.sqrt(len(v)) if len(v) > 1 else fit)

    std = math.hypot(sem(tt, top), sem(tb, bottom))
    ok = all(c.on_flanks for c in ct + cb)
    return m, std, len(ct) + len(cb), ok
