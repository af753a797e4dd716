"""``profilecheck spec``: what the standards say about a designated thread.

::

    profilecheck spec DESIGNATION [--json FILE] [--units mm|in] [--compound DEG]

Prints a table (lengths in the chosen unit; on the inch side tolerance bands also in
thou) and writes the ``spec`` JSON of design.md with ``--json``. Exit 0 on success; exit
2 with one line naming what is wrong and a valid example when the designation cannot be
read (an existing ``--json`` file is then left as it was).
"""

from __future__ import annotations

import argparse
import math

__all__ = ["register", "run", "format_spec_table"]

_EPILOG = """\
examples:
  profilecheck spec "1/4-20 UNC-2A"
  profilecheck spec M6x1-6g --json m6.json
  profilecheck spec "3/16-40 ME" --units mm
  profilecheck spec "1/2-13 UNC-2A-2START"   (two starts, lead 2P)
  profilecheck spec "M16xPh3P1.5-6g"          (ISO multi-start: lead 3, pitch 1.5)
  profilecheck spec "1/4 BSW-INT"             (internal, forms without class letters)

Designations: Unified 1/4-20 UNC-2A, 10-32 UNF-2B, 1/4-40 UNS-2A, 1/4-20 UNRC-2A,
2-1/2-8 UN-2A; ISO M6x1-6g, M8-6H, M10x1.25-5g6g; Whitworth form 1/4 BSW, 1/4 BSF,
3/16-40 ME, 3/8-26 BSB; 4BA; 1/2-10 ACME-2G; Tr20x4-7e. Add -LH for left hand."""

_CAUTION = ("Caution: stop and isolate the lathe before gauging, keep guards in place and "
            "wear eye protection. These figures follow the named standards as implemented "
            "here; the standards themselves, the drawing and qualified local practice "
            "govern acceptance.")


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "spec", help="limits, tool tip, wires and infeed for a thread designation",
        description="Show what the thread standards give for a designation: form, pitch and "
                    "lead, class limits of major, pitch and minor diameter, tool tip, best "
                    "wire and measurement over wires, blank diameter and compound infeed.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("designation", metavar="DESIGNATION", help='e.g. "1/4-20 UNC-2A" or M6x1-6g')
    p.add_argument("--json", metavar="FILE", help="write the spec as JSON (lengths in mm)")
    p.add_argument("--units", choices=("mm", "in"), default=None,
                   help="display unit (default: in for inch threads, mm otherwise)")
    p.add_argument("--compound", metavar="DEG", type=float, default=None,
                   help="compound-slide angle for the infeed line (default 29.5 deg for "
                        "60-deg forms, half-angle - 0.5 deg otherwise)")
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from ..errors import SpecError
    from ..standards import thread_spec
    from ._common import OutputSet, dumps_json

    out_path = OutputSet.check_path(args.json, "--json")
    spec = thread_spec(args.designation)
    if args.compound is not None and not (0.0 <= args.compound < 60.0):
        raise SpecError(f"--compound {args.compound:g}: give an angle from 0 to 60 degrees, "
                        "e.g. --compound 29.5")
    units = args.units or ("in" if spec.tpi is not None else "mm")
    text = format_spec_table(spec, units=units, compound_angle_deg=args.compound)
    outputs = OutputSet()
    if out_path is not None:
        d = spec.to_dict()
        if args.compound is not None:
            d["compound_angle"] = {"value": args.compound, "unit": "deg"}
            d["compound_travel"] = {"value": spec.infeed(spec.radial_depth_mm, args.compound),
                                    "unit": "mm"}
        outputs.add_text(out_path, dumps_json(d))
    outputs.commit()
    print(text, end="")
    return 0


def _len(mm: float | None, units: str) -> str:
    from ..units import format_length
    if mm is None or not math.isfinite(mm):
        return "-"
    return format_length(mm, units, decimals=4 if units == "in" else 3, suffix=False)


def _band(lo: float, hi: float, units: str) -> str:
    from ..units import format_length
    s = f"{_len(lo, units):>9} {_len(hi, units):>9}"
    if units == "in":
        s += f"   band {format_length(hi - lo, 'thou', decimals=1)}"
    else:
        s += f"   band {format_length(hi - lo, 'um', decimals=0)}"
    return s


def format_spec_table(spec, *, units: str = "mm", compound_angle_deg: float | None = None) -> str:
    """Readable multi-line table of a :class:`~profilecheck.standards.ThreadSpec`.

    Parameters
    ----------
    spec : ThreadSpec
    units : {'mm', 'in'}
        Display unit for lengths.
    compound_angle_deg : float, optional
        Compound-slide angle for the infeed line (default: the spec's).
    """
    if units not in ("mm", "in"):
        raise ValueError(f"units must be 'mm' or 'in', got {units!r}")
    u = units
    side = "external" if spec.external else "internal"
    lines = [f"{spec.designation}   {spec.form} {spec.series}"
             + (f" class {spec.thread_class}" if spec.thread_class else "")
             + f", {side}, {'left' if spec.left_hand else 'right'} hand"
             + (f", {spec.starts} starts" if spec.starts > 1 else "")]
    tpi = f" ({spec.tpi:g} tpi)" if spec.tpi else ""
    lines.append(f"  included angle     {spec.included_angle_deg:g} deg "
                 f"(flank {spec.flank_half_angle_deg:g} deg)")
    lines.append(f"  pitch / lead       {_len(spec.pitch_mm, u)} / {_len(spec.lead_mm, u)} {u}{tpi}")
    lines.append(f"  lead angle         {spec.lead_angle_deg:.2f} deg at the basic pitch diameter")
    lines.append(f"  basic diameters    major {_len(spec.major_diameter_mm, u)}  pitch "
                 f"{_len(spec.pitch_diameter_mm, u)}  minor {_len(spec.minor_diameter_mm, u)} {u}")
    if spec.limits:
        lines.append(f"  limits ({u})            min       max")
        for key in ("major_diameter", "pitch_diameter", "minor_diameter"):
            lim = spec.limits[key]
            lines.append(f"    {key.replace('_', ' '):15}{_band(lim.min_mm, lim.max_mm, u)}")
            lines.append(f"      source: {lim.source}")
    else:
        lines.append(f"  limits             {spec.limits_note}")
    p = spec.profile
    lines.append(f"  basic profile      H {_len(p.H_mm, u)}  depth {_len(p.depth_mm, u)}  "
                 + (f"crest/root radius {_len(p.crest_radius_mm, u)}/{_len(p.root_radius_mm, u)}"
                    if p.crest_radius_mm or p.root_radius_mm else
                    f"crest/root flat {_len(p.crest_flat_mm, u)}/{_len(p.root_flat_mm, u)}")
                 + f" {u}")
    for ext in (True, False):
        t = spec.tool_tip_for(ext)
        parts = []
        if t.flat_min_mm is not None:
            parts.append(f"flat {_len(t.flat_min_mm, u)}..{_len(t.flat_max_mm, u)}")
        if t.radius_min_mm is not None:
            parts.append(f"radius {_len(t.radius_min_mm, u)}..{_len(t.radius_max_mm, u)}")
        lines.append(f"  tool tip ({'ext' if ext else 'int'})     {' or '.join(parts)} {u}")
    lines.append(f"  best wire          {_len(spec.best_wire_mm, u)} {u} (usable "
                 f"{_len(spec.wire_min_mm, u)}..{_len(spec.wire_max_mm, u)})")
    if spec.over_wire_mm is not None:
        ow = spec.over_wire_mm
        lines.append(f"  over best wires    {_len(ow.min_mm, u)}..{_len(ow.max_mm, u)} {u}, "
                     f"incl. lead-angle term {_len(spec.lead_correction_mm, u)}")
    a = spec.compound_angle_deg if compound_angle_deg is None else compound_angle_deg
    what = "blank diameter    " if spec.external else "bore diameter     "
    lines.append(f"  {what} {_len(spec.blank_diameter_mm, u)} {u}")
    lines.append(f"  radial depth       {_len(spec.radial_depth_mm, u)} {u}; compound at {a:g} "
                 f"deg: travel {_len(spec.infeed(spec.radial_depth_mm, a), u)} {u}")
    for n in spec.notes:
        lines.append(f"  note: {n}")
    lines.append(_CAUTION)
    return "\n".join(lines) + "\n"
