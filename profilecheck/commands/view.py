"""``profilecheck view [IMAGE] [--camera N] [--cal FILE]``: the desktop viewer.

Opens a window over the library: the picture with its overlays (zoom and pan), the four
jobs (calibrate from a gauge, inspect a thread, check a tool, check centre height), the
readings with their uncertainty and verdicts, and a live camera. Qt is imported only inside
:func:`run`. Hidden options ``--run-mode`` and ``--screenshot`` run one job, save a picture
of the window and quit (used by the tests on a real display).
"""

from __future__ import annotations

import argparse

__all__ = ["register", "run"]

_MODES = ("calibrate", "thread", "tool", "height")


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "view", help="open the viewer window (picture or live camera, all four jobs)",
        description="Open the profilecheck viewer. Measure only with the spindle stopped; the "
                    "standards and local practice govern acceptance.")
    p.add_argument("image", nargs="?", metavar="IMAGE", help="picture to open")
    p.add_argument("--camera", type=int, metavar="N", help="open camera number N (0 = first)")
    p.add_argument("--cal", metavar="FILE", help="calibration file to use")
    p.add_argument("--mode", choices=_MODES, help="job to start in (default: thread)")
    p.add_argument("--spec", metavar="DESIGNATION", help="thread designation for thread/tool jobs")
    p.add_argument("--reference", choices=("point", "bar", "line"),
                   help="height reference (default: point)")
    p.add_argument("--axis", metavar="FILE", help="saved axis file for --reference line")
    g = p.add_mutually_exclusive_group()
    g.add_argument("--pin", metavar="D", help="calibrate: pin diameter, e.g. 6.000mm")
    g.add_argument("--block", metavar="L", help="calibrate: gauge block length")
    g.add_argument("--lines", metavar="S", help="calibrate: ruled line spacing")
    p.add_argument("--run-mode", choices=_MODES, help=argparse.SUPPRESS)
    p.add_argument("--screenshot", metavar="PNG", help=argparse.SUPPRESS)
    p.add_argument("--timeout", type=float, default=120.0, help=argparse.SUPPRESS)
    p.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from ..units import parse_length
    from ..viewer.app import ViewerOptions, run_viewer

    params: dict = {}
    for kind in ("pin", "block", "lines"):
        text = getattr(args, kind, None)
        if text is not None:
            params["gauge_kind"] = kind
            params["gauge_size_mm"] = parse_length(text)
    if args.spec:
        params["designation"] = args.spec
    if args.reference:
        params["reference"] = args.reference
    if args.axis:
        params["axis_path"] = args.axis
    if args.screenshot:
        from ._common import OutputSet
        OutputSet.check_path(args.screenshot, "screenshot")
    opts = ViewerOptions(image=args.image, camera=args.camera, calibration=args.cal,
                         mode=args.mode, params=params, run_mode=args.run_mode,
                         screenshot=args.screenshot, timeout_s=args.timeout)
    return run_viewer(opts)
