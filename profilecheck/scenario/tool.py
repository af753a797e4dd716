"""Demo threading-tool samples of the (invented) Hollowmere Model Works.

Two high-speed-steel tools ground for the 1/4-40 UNS-2A gland threads of a model boiler
fitting, seen from above on the close-up bench camera (:data:`CLOSE_CAMERA`, 3.75 um/px):

* ``tool_good``: a 60 deg point with a P/8-plus tip flat, square to its shank: passes;
* ``tool_wide_lopsided``: a tip flat wider than the basic P/4 root flat and a point that
  leans to the left (half-angles 28.8 / 31.6 deg): fails, with what to grind off.

Each image is rendered from the exact outline by :func:`profilecheck.synth.render`; the
truth file holds the outline's own numbers (plane geometry in ``_shapes.tool_top_view``).
The tip limits are ASME B1.1's UN external root (flat between P/8 usual practice and the
basic P/4, standards-notes sections 3 and 10) as implemented in profilecheck.standards.
"""

from __future__ import annotations

import json
from pathlib import Path

from . import CLOSE_CAMERA
from ._shapes import tool_top_view

__all__ = ["SAMPLES", "make_samples", "render_sample"]

_SPEC = "1/4-40 UNS-2A"

#: (name, outline arguments, camera rotation deg, expected verdict, title)
SAMPLES = (
    ("tool_good", {"tip_flat_mm": 0.105, "half_left_deg": 30.02, "half_right_deg": 29.98},
     1.8, "pass", "1/4-40 UNS-2A threading tool, well ground"),
    ("tool_wide_lopsided", {"tip_flat_mm": 0.190, "half_left_deg": 28.8, "half_right_deg": 31.6},
     -2.4, "fail", "1/4-40 UNS-2A threading tool, flat too wide and point leaning left"),
)


def render_sample(outline: dict, rotation_deg: float, *, seed: int = 0):
    """Render one tool on the close-up camera; returns (uint8 image, truth dict)."""
    from .. import synth

    cam = CLOSE_CAMERA
    poly, truth = tool_top_view(shank_width_mm=2.4, apex_mm=(0.15, 1.25), **outline)
    camera = synth.Camera(cam["mm_per_px"], cam["image_size"], rotation_deg=rotation_deg)
    img, t = synth.render([poly], camera, blur_px=cam["blur_px"], noise=cam["noise"],
                          dark=cam["dark"], bright=cam["bright"], vignetting=cam["vignetting"],
                          seed=seed)
    return img, {"measurements": truth, "camera": t["camera"], "spec": _SPEC,
                 "outline_mm": poly.tolist(),
                 "source": "plane geometry of the outline (scenario._shapes.tool_top_view)"}


def make_samples(out_dir: Path) -> list[dict]:
    """Write the tool samples (PNG and truth JSON) into ``out_dir``; return the manifest
    entries (see :mod:`profilecheck.scenario`)."""
    import cv2

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    entries = []
    for i, (name, outline, rot, expect, title) in enumerate(SAMPLES):
        img, truth = render_sample(outline, rot, seed=500 + i)
        if not cv2.imwrite(str(out / f"{name}.png"), img):
            raise RuntimeError(f"could not write {out / (name + '.png')}")
        (out / f"{name}.truth.json").write_text(json.dumps(truth, indent=1, sort_keys=True) + "\n")
        entries.append({"job": "tool", "name": name, "image": f"{name}.png",
                        "truth": f"{name}.truth.json", "cal": "close_cam.json",
                        "args": {"spec": _SPEC}, "expect": expect, "title": title})
    return entries
