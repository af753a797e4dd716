"""``profilecheck thread``: measure a screw thread from a backlit silhouette image.

::

    profilecheck thread IMAGE --cal FILE [--spec DESIGNATION] [--json FILE]
                        [--annotate PNG] [--sheet FILE] [--csv FILE] [--log FILE]
                        [--job NAME] [--units mm|in]

Prints a table (pitch, flank angles, flats, depth; diameters and a virtual three-wire
reading when both edges are in view) beside the spec's limits. Exit 0 measured (and within
limits if a spec was given), 1 outside or undecided, 2 could not measure (one line on
stderr; no output file written or changed).
"""

from __future__ import annotations

import argparse

__all__ = ["register", "run"]

_EPILOG = """\
examples:
  profilecheck thread stay.png --cal bench_cam.json --spec M6x1-6g --annotate stay_check.png
  profilecheck thread union.png --cal bench_cam.json --spec "3/16-40 ME" --units in --json union.json

Stop the spindle before placing the camera or the part. The camera reading is one check
among others: acceptance follows the thread standard (ISO 965-1, ASME B1.1/B1.2 ...), the
drawing and local practice; where the fit matters, confirm with gauges or wires."""


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "thread", help="measure a thread (pitch, flanks, flats, diameters) from a silhouette",
        description="Measure a screw thread from a calibrated backlit silhouette image: pitch, "
                    "flank angles, crest and root flats, depth, and with both edges in view "
                    "the major, pitch and minor diameters and a virtual wire reading.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("image", metavar="IMAGE", help="silhouette image of the thread")
    p.add_argument("--cal", required=True, metavar="FILE", help="calibration file (JSON)")
    p.add_argument("--spec", metavar="DESIGNATION",
                   help="thread designation, e.g. M6x1-6g, 1/4-20 UNC-2A, '3/16-40 ME'")
    p.add_argument("--camera-label", metavar="TEXT",
                   help="label of the camera that took IMAGE; a warning is given when it "
                        "differs from the calibration's")
    p.add_argument("--no-line-of-sight", action="store_true",
                   help="skip the lens line-of-sight model (a naive reading, for comparison)")
    from ..report.outputs import add_output_arguments

    add_output_arguments(p)
    p.set_defaults(func=run)


def run(args) -> int:
    from ..calibration import load_calibration
    from ..imaging import load_image
    from ..measure import measure_thread
    from ..report.outputs import prepare_outputs
    from ._common import finish_measurement

    outputs = prepare_outputs(args)  # every output path checked before any work
    cal = load_calibration(args.cal)
    spec = None
    if args.spec:
        from ..standards import thread_spec
        spec = thread_spec(args.spec)
    img = load_image(args.image)
    result = measure_thread(img, cal, spec=spec, line_of_sight=not args.no_line_of_sight,
                            camera_label=args.camera_label)
    return finish_measurement(args, result, img, outputs,
                              extra_lines=_extra_lines)


def _extra_lines(d: dict) -> list[str]:
    """Lines under the table (which already shows the infeed): the helix correction."""
    extra = []
    hx = d.get("helix") or {}
    if hx.get("applied") and "pitch_diameter_correction_mm" in hx:
        extra.append(f"helix correction: pitch diameter {hx['pitch_diameter_correction_mm'] * 1000:+.1f} um, "
                     f"flanks {hx.get('flank_left_correction_deg', 0):+.3f} / "
                     f"{hx.get('flank_right_correction_deg', 0):+.3f} deg ({hx['model']})")
    elif hx.get("applied"):
        extra.append(f"helix correction: flanks {hx.get('flank_left_correction_deg', 0):+.3f} / "
                     f"{hx.get('flank_right_correction_deg', 0):+.3f} deg ({hx['model']})")
    return extra
