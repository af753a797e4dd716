"""Demo centre-height samples of the (invented) Hollowmere Model Works.

The side camera at the lathe (:data:`LATHE_CAMERA`, 8 um/px) looks across the bed at the
tool's tip brought up to a reference, the tool's top face edge-on:

* ``height_above``: tool 0.18 mm above a 60 deg tailstock centre: fails the +/-0.1 mm rule;
* ``height_on``: tool 0.02 mm above the centre: passes;
* ``height_below``: tool 0.15 mm below the axis of a 6 mm bar in the chuck: fails;
* ``height_line``: a tool checked against the axis line saved beside it
  (``lathe_axis.json``, written from the render's exact geometry), no reference in view.

Each image is rendered from exact outlines (``_shapes``) by :func:`profilecheck.synth.render`;
the truth file gives ``height_offset`` (tool tip minus axis, + above) and ``top_slope``.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np

from . import LATHE_CAMERA
from ._shapes import bar_side_view, centre_side_view, tool_side_view

__all__ = ["SAMPLES", "make_samples", "render_sample", "AXIS_FILE"]

AXIS_FILE = "lathe_axis.json"

#: (name, reference, height offset mm, top slope deg, camera rotation deg, expect, title)
SAMPLES = (
    ("height_above", "point", 0.18, 0.0, 1.2, "fail", "tool 0.18 mm above the tailstock centre"),
    ("height_on", "point", 0.02, 0.5, -0.8, "pass", "tool on centre (0.02 mm above)"),
    ("height_below", "bar", -0.15, 0.0, 2.0, "fail", "tool 0.15 mm below a 6 mm bar's axis"),
    ("height_line", "line", -0.04, 0.0, 0.6, "pass", "tool against the saved axis line"),
)


def render_sample(reference: str, offset_mm: float, slope_deg: float, rotation_deg: float,
                  *, seed: int = 0):
    """Render one centre-height view; returns (uint8 image, truth dict, camera)."""
    from .. import synth

    cam = LATHE_CAMERA
    shapes = []
    if reference == "point":
        poly, _ = centre_side_view(apex_mm=(-0.6, 0.0), diameter_mm=6.0)
        shapes.append(poly)
    elif reference == "bar":
        poly, _ = bar_side_view(axis_y_mm=0.0, diameter_mm=6.0, x1_mm=-0.6)
        shapes.append(poly)
    tool, tt = tool_side_view(tip_mm=(0.35, offset_mm), top_slope_deg=slope_deg,
                              thickness_mm=3.2)
    shapes.append(tool)
    camera = synth.Camera(cam["mm_per_px"], cam["image_size"], rotation_deg=rotation_deg,
                          centre_mm=(0.0, 0.4))
    img, t = synth.render(shapes, camera, blur_px=cam["blur_px"], noise=cam["noise"],
                          dark=cam["dark"], bright=cam["bright"], vignetting=cam["vignetting"],
                          seed=seed)
    truth = {"measurements": {"height_offset": offset_mm, "top_slope": slope_deg},
             "reference": reference, "camera": t["camera"],
             "source": "exact outlines (scenario._shapes); axis = world y = 0"}
    return img, truth, camera


def axis_line_px(camera) -> dict:
    """The exact spindle axis (world y = 0) in px, as a saved axis-line file."""
    from .. import synth
    from ..calibration import load_calibration
    from ..measure._axis_line import AxisLine
    from ..measure._job_result import calibration_hash

    p = synth.shapes_to_px([np.array([[-1.0, 0.0], [1.0, 0.0], [1.0, 1e-6]])], camera)[0]
    d = p[1] - p[0]
    root = Path(__file__).resolve().parents[2]
    cal_path = root / "calibration" / "lathe_cam.json"
    h = calibration_hash(load_calibration(cal_path)) if cal_path.is_file() else ""
    mid = 0.5 * (p[0] + p[1])
    return AxisLine((float(mid[0]), float(mid[1])), (float(d[0]), float(d[1])), 0.05,
                    math.radians(0.005), tuple(camera.image_size), h, "point",
                    "exact axis of the demo render").to_dict()


def make_samples(out_dir: Path) -> list[dict]:
    """Write the height samples (PNG, truth JSON and the saved axis line) into ``out_dir``;
    return the manifest entries (see :mod:`profilecheck.scenario`)."""
    import cv2

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    entries = []
    for i, (name, ref, e, slope, rot, expect, title) in enumerate(SAMPLES):
        img, truth, camera = render_sample(ref, e, slope, rot, seed=600 + i)
        if not cv2.imwrite(str(out / f"{name}.png"), img):
            raise RuntimeError(f"could not write {out / (name + '.png')}")
        (out / f"{name}.truth.json").write_text(json.dumps(truth, indent=1, sort_keys=True) + "\n")
        args = {"reference": ref}
        if ref == "line":
            (out / AXIS_FILE).write_text(json.dumps(axis_line_px(camera), indent=2,
                                                    sort_keys=True) + "\n")
            args["axis"] = AXIS_FILE
        entries.append({"job": "height", "name": name, "image": f"{name}.png",
                        "truth": f"{name}.truth.json", "cal": "lathe_cam.json",
                        "args": args, "expect": expect, "title": title})
    return entries
