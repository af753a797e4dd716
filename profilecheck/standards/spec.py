"""The :class:`ThreadSpec` record and its small companions.

A ThreadSpec is pure data (frozen dataclass) built by the form modules
(:mod:`.unified`, :mod:`.iso_metric`, :mod:`.whitworth`, :mod:`.ba`, :mod:`.acme`,
:mod:`.trapezoidal`). All lengths are millimetres, angles degrees
(``docs/conventions.md``). The ``to_dict`` JSON is the ``spec`` object of design.md.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ._profile import axial_polyline

__all__ = ["Limit", "BasicProfile", "ToolTip", "ThreadSpec", "BASIC_ONLY"]

#: ``limits_note`` of a spec whose class limits are not implemented.
BASIC_ONLY = "basic dimensions only"


@dataclass(frozen=True)
class Limit:
    """A tolerance band ``[min_mm, max_mm]`` and where its numbers come from.

    Attributes
    ----------
    min_mm, max_mm : float
        Lower and upper limit, millimetres.
    source : str
        Provenance, e.g. ``'ASME B1.1 formula'``, ``'ISO 965-1 table'``,
        ``'formula-derived'``; ``'reference'`` in the text means the standard gives the
        value for information only (not a gauged limit).
    """

    min_mm: float
    max_mm: float
    source: str = ""

    def __post_init__(self) -> None:
        if not (math.isfinite(self.min_mm) and math.isfinite(self.max_mm)):
            raise ValueError("min_mm and max_mm must be finite")
        if self.min_mm > self.max_mm:
            raise ValueError(f"min_mm {self.min_mm} > max_mm {self.max_mm}")

    @property
    def mid_mm(self) -> float:
        return 0.5 * (self.min_mm + self.max_mm)

    @property
    def width_mm(self) -> float:
        return self.max_mm - self.min_mm

    def contains(self, value_mm: float) -> bool:
        return self.min_mm <= value_mm <= self.max_mm

    def to_dict(self) -> dict[str, Any]:
        return {"min": self.min_mm, "max": self.max_mm, "unit": "mm", "source": self.source}


@dataclass(frozen=True)
class BasicProfile:
    """Basic profile numbers of the thread named (external or internal side), mm.

    ``crest_*`` is the crest of the thread named (major diameter for an external thread,
    minor for an internal one); ``root_*`` likewise. Zero where not applicable.
    """

    H_mm: float
    depth_mm: float
    crest_flat_mm: float = 0.0
    root_flat_mm: float = 0.0
    crest_radius_mm: float = 0.0
    root_radius_mm: float = 0.0
    source: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"H": self.H_mm, "depth": self.depth_mm, "crest_flat": self.crest_flat_mm,
                "root_flat": self.root_flat_mm, "crest_radius": self.crest_radius_mm,
                "root_radius": self.root_radius_mm, "unit": "mm", "source": self.source}


@dataclass(frozen=True)
class ToolTip:
    """Tip of the threading tool that cuts the root of the thread named.

    ``kind`` is ``'flat'`` or ``'radius'``; the unused pair is None. Where the form
    allows either, ``alt_*`` gives the other kind.
    """

    kind: str
    flat_min_mm: float | None = None
    flat_max_mm: float | None = None
    radius_min_mm: float | None = None
    radius_max_mm: float | None = None
    source: str = ""
    note: str = ""

    def to_dict(self) -> dict[str, Any]:
        d: dict[str, Any] = {"kind": self.kind, "unit": "mm", "source": self.source}
        if self.flat_min_mm is not None:
            d["flat"] = {"min": self.flat_min_mm, "max": self.flat_max_mm}
        if self.radius_min_mm is not None:
            d["radius"] = {"min": self.radius_min_mm, "max": self.radius_max_mm}
        if self.note:
            d["note"] = self.note
        return d


@dataclass(frozen=True)
class ThreadSpec:
    """Everything the standards say about one designated thread, in mm and degrees.

    See ``docs/contracts.md`` for the meaning of each field. ``limits`` holds
    ``major_diameter``, ``pitch_diameter``, ``minor_diameter`` :class:`Limit` objects for
    the thread named (external for classes A, e/f/g/h; internal for B, G/H), or is empty
    with ``limits_note == 'basic dimensions only'``.
    """

    designation: str
    form: str
    series: str
    thread_class: str
    external: bool
    left_hand: bool
    starts: int
    included_angle_deg: float
    pitch_mm: float
    major_diameter_mm: float
    pitch_diameter_mm: float
    minor_diameter_mm: float
    limits: dict[str, Limit]
    limits_note: str
    profile: BasicProfile
    tool_tip_external: ToolTip
    tool_tip_internal: ToolTip
    crest_truncation_mm: float
    crest_flank_end_mm: float
    blank_diameter_mm: float
    radial_depth_mm: float
    tpi: float | None = None
    over_wire_mm: Limit | None = None
    best_wire_mm: float = math.nan
    wire_min_mm: float = math.nan
    wire_max_mm: float = math.nan
    lead_correction_mm: float = 0.0
    compound_angle_deg: float = math.nan
    notes: tuple[str, ...] = ()
    sources: tuple[str, ...] = ()
    _shape: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self) -> None:
        if not isinstance(self.starts, int) or self.starts < 1:
            raise ValueError("starts must be an int >= 1")
        if not self.pitch_mm > 0:
            raise ValueError("pitch_mm must be > 0")
        if math.isnan(self.compound_angle_deg):
            object.__setattr__(self, "compound_angle_deg", default_compound_angle_deg(
                self.included_angle_deg))

    # ---- derived quantities -------------------------------------------------------------
    @property
    def flank_half_angle_deg(self) -> float:
        return 0.5 * self.included_angle_deg

    @property
    def lead_mm(self) -> float:
        return self.starts * self.pitch_mm

    @property
    def lead_angle_deg(self) -> float:
        """Lead (helix) angle at the basic pitch diameter: tan(lambda) = L / (pi d2)."""
        return math.degrees(math.atan(self.lead_mm / (math.pi * self.pitch_diameter_mm)))

    @property
    def tool_tip(self) -> ToolTip:
        """Tool tip for the thread named (external or internal)."""
        return self.tool_tip_for(self.external)

    def tool_tip_for(self, external: bool) -> ToolTip:
        """Tool tip that cuts the root of an external (True) or internal (False) thread."""
        return self.tool_tip_external if external else self.tool_tip_internal

    # ---- lathe work ---------------------------------------------------------------------
    def infeed(self, radial_mm: float, compound_angle_deg: float | None = None) -> float:
        """Compound-slide travel giving a radial infeed of `radial_mm`.

        travel = radial / cos(compound angle), the compound set at `compound_angle_deg`
        from the cross-slide normal (default :attr:`compound_angle_deg`, 29.5 deg for
        60-deg forms; lathe practice, standards-notes §10 [P 22]).

        Raises
        ------
        ValueError
            If `radial_mm` is negative or not finite, or the angle is outside [0, 60).
        """
        radial_mm = float(radial_mm)
        if not (math.isfinite(radial_mm) and radial_mm >= 0):
            raise ValueError(f"radial_mm must be finite and >= 0, got {radial_mm}")
        a = self.compound_angle_deg if compound_angle_deg is None else float(compound_angle_deg)
        if not (0.0 <= a < 60.0):
            raise ValueError(f"compound_angle_deg must be in [0, 60), got {a}")
        return radial_mm / math.cos(math.radians(a))

    def axial_profile(self, material: str = "basic", n_pitch: int = 3, *,
                      points_per_pitch: int = 240) -> np.ndarray:
        """Profile polyline of the thread in an axial section.

        Parameters
        ----------
        material : {'basic', 'max', 'min'}
            Basic profile, maximum-material or minimum-material limit of the thread named
            (external: largest / smallest diameters; internal: smallest / largest).
            Basic-dimensions-only specs return the basic profile for all three.
        n_pitch : int
            Whole pitches to draw, >= 1.
        points_per_pitch : int
            Samples per pitch (corner points are added exactly).

        Returns
        -------
        ndarray, shape (N, 2)
            (x along the axis mm, r radius mm), x from 0 to n_pitch * pitch, starting at
            the centre of a crest of the thread named (an external crest at the major
            diameter, an internal crest at the minor diameter).

        Notes
        -----
        Flanks are straight at the half-angle; the flank position is set by the pitch
        diameter (thread thickness P/2 there). Crest and root are clipped by the major
        and minor diameters of the chosen material condition and rounded where the form
        has radii (Whitworth, BA; the ISO minimum-material root uses R = 0.125P, the
        radius implied by d3min = d2min - 0.616025P, standards-notes §2).
        """
        if material not in ("basic", "max", "min"):
            raise ValueError(f"material must be 'basic', 'max' or 'min', got {material!r}")
        if not isinstance(n_pitch, (int, np.integer)) or n_pitch < 1:
            raise ValueError(f"n_pitch must be an int >= 1, got {n_pitch!r}")
        if not isinstance(points_per_pitch, (int, np.integer)) or points_per_pitch < 8:
            raise ValueError("points_per_pitch must be an int >= 8")
        major, pd, minor = self._diameters(material)
        shape = self._shape.get(material) or self._shape.get("basic") or {}
        return axial_polyline(
            pitch_mm=self.pitch_mm, half_angle_deg=self.flank_half_angle_deg,
            pitch_diameter_mm=pd, major_diameter_mm=major, minor_diameter_mm=minor,
            crest_radius_mm=shape.get("crest_radius_mm", 0.0),
            root_radius_mm=shape.get("root_radius_mm", 0.0),
            external=self.external, n_pitch=int(n_pitch),
            points_per_pitch=int(points_per_pitch))

    def _diameters(self, material: str) -> tuple[float, float, float]:
        basic = (self.major_diameter_mm, self.pitch_diameter_mm, self.minor_diameter_mm)
        if material == "basic" or not self.limits:
            return basic
        lim = self.limits
        big = material == "max" if self.external else material == "min"
        pick = (lambda L: L.max_mm) if big else (lambda L: L.min_mm)
        return (pick(lim["major_diameter"]), pick(lim["pitch_diameter"]),
                pick(lim["minor_diameter"]))

    # ---- JSON ---------------------------------------------------------------------------
    def to_dict(self) -> dict[str, Any]:
        """The ``spec`` JSON of design.md (lengths mm, angles degrees)."""
        d: dict[str, Any] = {
            "designation": self.designation,
            "form": self.form,
            "series": self.series,
            "thread_class": self.thread_class,
            "external": self.external,
            "left_hand": self.left_hand,
            "starts": self.starts,
            "included_angle": {"value": self.included_angle_deg, "unit": "deg"},
            "flank_half_angle": {"value": self.flank_half_angle_deg, "unit": "deg"},
            "pitch": {"value": self.pitch_mm, "unit": "mm"},
            "lead": {"value": self.lead_mm, "unit": "mm"},
            "tpi": self.tpi,
            "lead_angle": {"value": self.lead_angle_deg, "unit": "deg",
                           "note": "at the basic pitch diameter"},
            "basic": {"major_diameter": self.major_diameter_mm,
                      "pitch_diameter": self.pitch_diameter_mm,
                      "minor_diameter": self.minor_diameter_mm, "unit": "mm"},
            "limits": {k: v.to_dict() for k, v in self.limits.items()},
            "limits_note": self.limits_note,
            "profile": self.profile.to_dict(),
            "tool_tip": self.tool_tip.to_dict(),
            "tool_tip_external": self.tool_tip_external.to_dict(),
            "tool_tip_internal": self.tool_tip_internal.to_dict(),
            "best_wire": {"value": self.best_wire_mm, "min": self.wire_min_mm,
                          "max": self.wire_max_mm, "unit": "mm"},
            "over_wire": (None if self.over_wire_mm is None else
                          dict(self.over_wire_mm.to_dict(),
                               lead_correction=self.lead_correction_mm)),
            "blank_diameter": {"value": self.blank_diameter_mm, "unit": "mm"},
            "radial_depth": {"value": self.radial_depth_mm, "unit": "mm"},
            "compound_angle": {"value": self.compound_angle_deg, "unit": "deg"},
            "compound_travel": {"value": self.infeed(self.radial_depth_mm), "unit": "mm"},
            "notes": list(self.notes),
            "sources": list(self.sources),
        }
        return d


def default_compound_angle_deg(included_angle_deg: float) -> float:
    """29.5 deg for 60-deg forms, otherwise half-angle minus 0.5 deg (shop practice [CP])."""
    if abs(included_angle_deg - 60.0) < 1e-9:
        return 29.5
    return 0.5 * included_angle_deg - 0.5
