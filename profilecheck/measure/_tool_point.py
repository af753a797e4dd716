"""Which of the convex points in a tool's top view is the tool's point.

A threading tool ground on a blank narrower than its shank, or with the flanks stopping
short of the shank sides, shows square shoulders: corners between a shank side and a
shoulder that are sharper (a 90 deg corner has almost no rounding) than a point carrying a
flat or nose radius. Ranked by tip rounding alone such a corner wins. The tool's point is
instead the wedge whose two flanks converge away from the shank; a corner that has a shank
side as one of its edges is never the point.

Private helper of :mod:`profilecheck.measure.tool`; points in image px (docs/conventions.md).
"""

from __future__ import annotations

import math

from . import _runs

__all__ = ["MAX_TOOL_INCLUDED_DEG", "FORM_MATCH_DEG", "shank_side_runs", "choose_point"]

#: Widest included angle read as a tool point (deg). The widest form in
#: profilecheck.standards is 60 deg (ISO 68-1, ASME B1.1); 85 deg leaves 25 deg for a
#: badly ground tool and keeps square (90 deg) shoulder corners out (ours, no source).
MAX_TOOL_INCLUDED_DEG = 85.0

#: With a spec, points within this of the form's included angle are preferred (deg); the
#: thread forms here are 29 deg and up, 5 deg or more apart only between unlike forms
#: (ours, no source).
FORM_MATCH_DEG = 15.0


def shank_side_runs(runs: list[_runs.Run]) -> set[int]:
    """``id`` of every run that is one side of a shank (a parallel pair, dark between)."""
    out: set[int] = set()
    for a, b in _runs.find_parallel_pairs(runs, tol_deg=2.0, dark_between=True):
        out.add(id(a))
        out.add(id(b))
    return out


def choose_point(wedges: list[_runs.Wedge], runs: list[_runs.Run], *,
                 form_angle_deg: float | None = None) -> _runs.Wedge | None:
    """The tool's point among ``wedges`` (ranked by :func:`_runs.find_wedges`), or None.

    Parameters
    ----------
    wedges : list of Wedge
        Candidate points, best formed first.
    runs : list of Run
        All straight runs of the view (to find the shank sides).
    form_angle_deg : float, optional
        Included angle of the thread form the tool is for (from the spec).

    Returns
    -------
    Wedge or None
        1. Wedges wider than :data:`MAX_TOOL_INCLUDED_DEG` are dropped, and so is every
           corner with a shank side as one of its edges (shoulders) unless nothing else is
           left. 2. With ``form_angle_deg``, wedges within :data:`FORM_MATCH_DEG` of it come
           first. 3. Otherwise the order of ``wedges`` is kept.
    """
    cand = [w for w in wedges if math.degrees(w.included_rad) <= MAX_TOOL_INCLUDED_DEG]
    if not cand:
        return None
    sides = shank_side_runs(runs)
    away = [w for w in cand if id(w.a) not in sides and id(w.b) not in sides]
    cand = away or cand
    if form_angle_deg is not None and math.isfinite(float(form_angle_deg)):
        near = [w for w in cand
                if abs(math.degrees(w.included_rad) - float(form_angle_deg)) <= FORM_MATCH_DEG]
        cand = near or cand
    return cand[0]
