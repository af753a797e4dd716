"""``profilecheck tool``: check a ground threading tool from a backlit top view.

::

    profilecheck tool IMAGE --cal FILE [--spec DESIGNATION] [--internal] [--square]
                      [--json FILE] [--annotate PNG] [--sheet FILE] [--csv FILE]
                      [--log FILE] [--units mm|in]

Prints the included angle, both half-angles from the tool's axis, the bisector's tilt and
the tip flat or nose radius; with ``--spec`` each is checked against the thread the tool is
for, with what to stone or grind off. ``--square`` instead measures the tool bisector's
squareness to the work (work edge or centre in the same view). Exit 0 measured (and within
limits if a spec was given), 1 outside or undecided, 2 could not measure.
"""

from __future__ import annotations

import argparse

__all__ = ["register", "run"]

_EPILOG = """\
examples:
  profilecheck tool tool_good.png --cal close_cam.json --spec "1/4-40 UNS-2A"
  profilecheck tool boring_bar.png --cal close_cam.json --spec M6x1-6H --internal --json bar.json
  profilecheck tool setup.png --cal close_cam.json --square

Grind with the wheel guard and tool rest set, eye protection on; measure with the grinder
and lathe stopped. The limits follow the thread standard named in each check; a shop rule
is marked as such. The drawing, local codes and licensed practice take precedence."""


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "tool", help="check a threading tool's angle, symmetry and tip from a top view",
        description="Measure a ground threading tool from a calibrated backlit top view: "
                    "included angle, half-angles from the shank, bisector tilt, tip flat or "
                    "nose radius, and with --spec the checks against the thread it cuts.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("image", metavar="IMAGE", help="backlit top view of the tool")
    p.add_argument("--cal", required=True, metavar="FILE", help="calibration file (JSON)")
    p.add_argument("--spec", metavar="DESIGNATION",
                   help="thread the tool is for, e.g. '1/4-40 UNS-2A', '3/16-40 ME', M6x1-6g")
    p.add_argument("--internal", action="store_true",
                   help="the tool cuts an internal thread (boring-bar tool)")
    p.add_argument("--square", action="store_true",
                   help="measure the bisector's squareness to the work in the same view instead")
    from ..report.outputs import add_output_arguments

    add_output_arguments(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from ..calibration import load_calibration
    from ..imaging import load_image
    from ..report.outputs import prepare_outputs
    from ._common import finish_measurement

    outputs = prepare_outputs(args)
    cal = load_calibration(args.cal)
    spec = None
    if args.spec:
        if args.square:
            raise _usage("--spec does not apply with --square")
        from ..standards import thread_spec

        spec = thread_spec(args.spec)
    img = load_image(args.image)
    if args.square:
        from ..measure.tool import measure_squareness

        result = measure_squareness(img, cal)
    else:
        from ..measure.tool import measure_tool

        result = measure_tool(img, cal, spec=spec, internal=args.internal)
    return finish_measurement(args, result, img, outputs, extra_lines=_extra_lines)


def _usage(msg: str):
    from ..errors import ProfilecheckError

    return ProfilecheckError(msg)


def _extra_lines(d: dict) -> list[str]:
    """Line under the table: the tip form found and the reference of the angles."""
    if d.get("tip_form"):
        return [f"tip form: {d['tip_form']}; angles from the {d.get('reference', 'shank')}"]
    return []
