"""``profilecheck height``: tool centre height from a side view at the lathe.

::

    profilecheck height IMAGE --cal FILE [--reference point|bar|line] [--axis FILE]
                        [--save-axis FILE] [--work-diameter D] [--json FILE]
                        [--annotate PNG] [--sheet FILE] [--csv FILE] [--log FILE]
                        [--units mm|in]

Prints how far the tool's tip sits above (+) or below (-) the spindle axis, the slope of
its top edge, and with ``--work-diameter`` what that does to the diameter and flank angle
cut. ``--save-axis`` stores the axis found (point or bar) so later tools can be checked
with ``--reference line --axis FILE`` and no reference in view (the camera must not move).
Exit 0 measured and within the +/-0.1 mm rule of thumb, 1 outside or undecided, 2 could not
measure.
"""

from __future__ import annotations

import argparse

__all__ = ["register", "run"]

_EPILOG = """\
examples:
  profilecheck height setup.png --cal lathe_cam.json --reference point --save-axis axis.json
  profilecheck height tool2.png --cal lathe_cam.json --reference line --axis axis.json
  profilecheck height pin.png --cal lathe_cam.json --reference bar --work-diameter 6mm

Stop the spindle and isolate the lathe before placing the camera or bringing the tool up to
the centre; keep hands clear of the chuck. The +/-0.1 mm figure is a rule of thumb (no
standard); the drawing, the tool maker and licensed practice take precedence."""


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "height", help="measure the tool's centre height against a centre, bar or saved axis",
        description="Measure how far the tool's cutting tip sits above or below the spindle "
                    "axis, from a calibrated backlit side view with a reference in the frame.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("image", metavar="IMAGE", help="side view with the tool tip and a reference")
    p.add_argument("--cal", required=True, metavar="FILE", help="calibration file (JSON)")
    p.add_argument("--reference", choices=("point", "bar", "line"), default="point",
                   help="what gives the spindle axis: a 60 deg centre (point), a turned bar "
                        "(bar) or a saved axis line (line; needs --axis). Default point")
    p.add_argument("--axis", metavar="FILE", help="saved axis line (from --save-axis)")
    p.add_argument("--save-axis", metavar="FILE", dest="save_axis",
                   help="save the axis found (point or bar) for later --reference line checks")
    p.add_argument("--work-diameter", metavar="D", dest="work_diameter",
                   help="work diameter with unit, e.g. 6mm or 0.25in: adds the diameter and "
                        "flank-angle effects")
    from ..report.outputs import add_output_arguments

    add_output_arguments(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from ..calibration import load_calibration
    from ..errors import ProfilecheckError
    from ..imaging import load_image
    from ..report.outputs import prepare_outputs
    from ._common import OutputSet, dumps_json, finish_measurement

    if args.reference == "line" and not args.axis:
        raise ProfilecheckError("--reference line needs --axis FILE (a saved axis line)")
    if args.reference != "line" and args.axis:
        raise ProfilecheckError("--axis is only used with --reference line")
    if args.save_axis and args.reference == "line":
        raise ProfilecheckError("--save-axis needs a point or bar image (the axis is found there)")
    outputs = prepare_outputs(args)
    axis_path = OutputSet.check_path(args.save_axis, "--save-axis")
    diameter = None
    if args.work_diameter:
        from ..units import parse_length

        try:
            diameter = parse_length(args.work_diameter)
        except ValueError as e:
            raise ProfilecheckError(f"--work-diameter: {e}") from None
        if not diameter > 0:
            raise ProfilecheckError("--work-diameter must be greater than zero")
    cal = load_calibration(args.cal)
    img = load_image(args.image)
    from ..measure.height import measure_height

    try:
        result = measure_height(img, cal, reference=args.reference, axis=args.axis,
                                work_diameter_mm=diameter)
    except ValueError as e:  # only the work diameter can be wrong this late
        raise ProfilecheckError(f"--work-diameter: {e}") from None
    def _save_axis(_d: dict) -> None:
        if axis_path is not None and result.axis_line is not None:
            line = dict(result.axis_line.to_dict(), source_image=args.image)
            outputs.add_text(axis_path, dumps_json(line))

    return finish_measurement(args, result, img, outputs, before_commit=_save_axis)
