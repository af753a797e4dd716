"""``profilecheck calibrate``: make a calibration file from a gauge or checkerboard image.

::

    profilecheck calibrate IMAGE (--pin D | --block D | --lines S) --out FILE
                           [--label TEXT] [--gauge-u U] [--gamma G]
                           [--line-width W] [--offset-from FILE] [--lens FILE]
    profilecheck calibrate IMAGE... --grid SQUARE [--pattern COLSxROWS] --out FILE

Lengths take a unit (``6.000mm``, ``0.2362in``). Exit 0 when the file is written; exit 2
with a one-line reason when no usable gauge is found (an existing ``--out`` file is then
left as it was).
"""

from __future__ import annotations

import argparse
import re

__all__ = ["register", "run"]

_EPILOG = """\
examples:
  profilecheck calibrate pin.png --pin 6.000mm --gauge-u 1um --out bench_cam.json
  profilecheck calibrate scale.png --lines 0.1mm --offset-from bench_cam.json --out bench2.json
  profilecheck calibrate v1.png v2.png v3.png v4.png v5.png --grid 1mm --pattern 11x8 --out lens.json
  profilecheck calibrate pin.png --pin 6mm --lens lens.json --out bench_lens.json

Calibrate in the plane of the part (for a silhouette: the plane through the work axis), at
the focus and zoom you will measure with; any change of focus or zoom needs a new
calibration."""


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "calibrate", help="make a calibration file from a gauge or checkerboard image",
        description="Make a pixel-to-millimetre calibration from a pin gauge, a gauge block "
                    "seen edge-on, a ruled scale, or checkerboard views (lens model).",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("images", nargs="+", metavar="IMAGE", help="gauge image (several views for --grid)")
    g = p.add_mutually_exclusive_group(required=True)
    g.add_argument("--pin", metavar="D", help="pin gauge diameter with unit, e.g. 6.000mm")
    g.add_argument("--block", metavar="D", help="gauge block length (seen edge-on) with unit")
    g.add_argument("--lines", metavar="S", help="ruled-scale line spacing with unit, e.g. 0.1mm")
    g.add_argument("--grid", metavar="SQUARE", help="checkerboard square size with unit")
    p.add_argument("--out", required=True, metavar="FILE", help="calibration file to write (JSON)")
    p.add_argument("--label", default="", metavar="TEXT", help="free camera label")
    p.add_argument("--gauge-u", default="0mm", metavar="U",
                   help="expanded uncertainty (k = 2) of the gauge size, with unit (default 0mm)")
    p.add_argument("--gamma", default=1.0, type=float, metavar="G",
                   help="display gamma encoded in the image (1 = linear data, default)")
    p.add_argument("--pattern", default="9x6", metavar="COLSxROWS",
                   help="checkerboard inner corners (default 9x6)")
    p.add_argument("--line-width", metavar="W", help="--lines: true line width, to calibrate the edge offset")
    p.add_argument("--offset-from", metavar="FILE",
                   help="--lines: take the edge offset from this pin or block calibration file")
    p.add_argument("--lens", metavar="FILE", help="apply the lens model of this grid calibration file")
    p.set_defaults(func=run)


def _pattern(text: str) -> tuple[int, int]:
    from ..errors import ProfilecheckError

    m = re.fullmatch(r"\s*(\d+)\s*[xX*]\s*(\d+)\s*", text or "")
    if not m:
        raise ProfilecheckError(f"--pattern {text!r} not understood: give inner corners as COLSxROWS, e.g. 9x6")
    cols, rows = int(m.group(1)), int(m.group(2))
    if cols < 3 or rows < 3:
        raise ProfilecheckError(f"--pattern {text}: need at least 3x3 inner corners")
    return cols, rows


def summary(cal, out_path) -> str:
    """A short readable summary of a calibration (stdout of the command)."""
    s_um = cal.mm_per_px * 1000.0
    u_um = cal.u_mm_per_px * 1000.0
    g = cal.gauge
    kind = g.get("kind", "?")
    lines = [f"calibration written to {out_path}"]
    if kind in ("pin", "block", "lines", "grid"):
        what = {"pin": "pin gauge", "block": "gauge block", "lines": "ruled scale, spacing",
                "grid": "checkerboard, square"}[kind]
        lines.append(f"  gauge        {what} {g.get('size_mm', float('nan')):.4f} mm"
                     + (f" (U {g['u_mm'] * 1000:.2f} um)" if g.get("u_mm") else ""))
    elif kind == "combined":
        lines.append(f"  gauge        scale from {g['scale'].get('kind')}, edge offset from "
                     f"{g['offset'].get('kind')} {g['offset'].get('size_mm', float('nan')):.4f} mm")
    lines.append(f"  scale        {s_um:.5f} um/px   ({1.0 / cal.mm_per_px:.4f} px/mm)")
    lines.append(f"  uncertainty  U = {u_um:.5f} um/px ({100.0 * cal.u_mm_per_px / cal.mm_per_px:.3f} %, k = 2)")
    lines.append(f"  image        {cal.image_size[0]} x {cal.image_size[1]} px, gamma {cal.gamma:g}")
    if cal.blur_px == cal.blur_px:
        lines.append(f"  edge blur    {cal.blur_px:.2f} px (focus reference)")
    if cal.scale_absorbs_offset:
        lines.append("  edge offset  included in the scale (single gauge)")
    else:
        lines.append(f"  edge offset  {cal.edge_offset_px:+.3f} px (U {cal.u_edge_offset_px:.3f} px)")
    if cal.lens is not None:
        lz = cal.lens
        lines.append(f"  lens         f = {lz.fx_px:.1f} px, k1 = {lz.dist[0]:+.4f}, "
                     f"working distance {lz.working_distance_mm:.2f} mm, RMS {lz.rms_reprojection_px:.3f} px")
    if kind == "grid":
        lines.append(f"  grid         {g.get('views')} views, held-out error max "
                     f"{max(g.get('holdout_rms_px') or [float('nan')]):.3f} px")
    for n in cal.notes:
        lines.append(f"  note: {n}")
    return "\n".join(lines) + "\n"


def run(args) -> int:
    import math

    from ..calibration import (attach_lens, calibrate_from_block, calibrate_from_lines,
                               calibrate_from_pin, calibrate_grid, combine, grid_record,
                               load_calibration)
    from ..calibration._lengths import parse_length_mm
    from ..errors import ProfilecheckError
    from ..imaging import load_image
    from ._common import OutputSet, dumps_json

    out = OutputSet.check_path(args.out, "--out")
    if not (math.isfinite(args.gamma) and args.gamma > 0):
        raise ProfilecheckError(f"--gamma must be a positive number, got {args.gamma}")
    u_gauge = parse_length_mm(args.gauge_u, what="--gauge-u", allow_zero=True)
    if args.grid is None and len(args.images) != 1:
        raise ProfilecheckError("give one gauge image (several images only with --grid)")
    if args.grid is not None and (args.line_width or args.offset_from or args.lens):
        raise ProfilecheckError("--grid takes no --line-width, --offset-from or --lens")
    if args.lines is None and (args.line_width or args.offset_from):
        raise ProfilecheckError("--line-width and --offset-from go with --lines")

    lens = load_calibration(args.lens).lens if args.lens else None
    if args.lens and lens is None:
        raise ProfilecheckError(f"--lens {args.lens}: that calibration holds no lens model (make one with --grid)")
    offset_cal = load_calibration(args.offset_from) if args.offset_from else None

    if args.grid is not None:
        square = parse_length_mm(args.grid, what="--grid")
        pattern = _pattern(args.pattern)
        imgs = [load_image(p) for p in args.images]
        grid = calibrate_grid(imgs, square, pattern=pattern, names=list(args.images))
        cal = grid_record(grid, label=args.label)
    else:
        img = load_image(args.images[0])
        kw = dict(u_gauge_mm=u_gauge, gamma=args.gamma, label=args.label, lens=lens)
        if args.pin is not None:
            cal = calibrate_from_pin(img, parse_length_mm(args.pin, what="--pin"), **kw)
        elif args.block is not None:
            cal = calibrate_from_block(img, parse_length_mm(args.block, what="--block"), **kw)
        else:
            lw = parse_length_mm(args.line_width, what="--line-width") if args.line_width else None
            cal = calibrate_from_lines(img, parse_length_mm(args.lines, what="--lines"),
                                       line_width_mm=lw, **kw)
            if offset_cal is not None:
                cal = combine(cal, offset_cal)
        if lens is not None:
            cal = attach_lens(cal, lens)
    outputs = OutputSet()
    outputs.add_text(out, dumps_json(cal.to_dict()))
    outputs.commit()
    print(summary(cal, out), end="")
    return 0
