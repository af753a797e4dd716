"""Demo thread samples of the (invented) Hollowmere Model Works.

Two parts, both invented:

* boiler stays with an M6x1-6g thread, turned on the bench lathe, seen whole (both edges)
  on the bench camera: one finished in tolerance, one that needs another pass, one whose
  pitch diameter sits on the upper limit (undecided), one with a chipped crest, one
  photographed out of focus (refused);
* a 3/16-40 ME union nut thread (Whitworth form, model-engineering series; basic sizes
  only, no class limits), seen on the bench camera and close up along one edge.

Every image is the true helical outline rendered by :func:`profilecheck.synth.render_thread`
(parallel view), with the axial-section truth beside it (``<name>.truth.json``,
``measurements`` in the report's keys). Pitch diameters and the over-wire truth follow the
ISO 68-1 / BS 84 geometry and the ASME B1.2 three-wire formula (standards-notes sections 1,
4, 5).
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import numpy as np

from . import BENCH_CAMERA, CLOSE_CAMERA

__all__ = ["SAMPLES", "make_samples", "render_sample", "truth_measurements"]

_M6 = {"spec": "M6x1-6g", "pitch": 1.0, "major": 6.0, "form": "iso"}
_ME = {"spec": "3/16-40 ME", "pitch": 25.4 / 40, "major": 25.4 * 3 / 16, "form": "whitworth"}

#: (name, part, camera, d2 offset from basic mm, major offset mm, extra render args,
#:  expected verdict, title)
SAMPLES = (
    ("stay_pass", _M6, BENCH_CAMERA, -0.0825, -0.10, {"rot": 1.5}, "pass",
     "boiler stay M6x1-6g, finished: pitch diameter mid-tolerance"),
    ("stay_fail", _M6, BENCH_CAMERA, -0.0055, -0.05, {"rot": -1.0}, "fail",
     "boiler stay M6x1-6g, one pass short: pitch diameter too large"),
    ("stay_undecided", _M6, BENCH_CAMERA, 5.324 - 5.350481, -0.07, {"rot": 0.8}, "undecided",
     "boiler stay M6x1-6g, pitch diameter on the upper limit"),
    ("stay_chipped", _M6, BENCH_CAMERA, -0.0825, -0.10,
     {"rot": 2.0, "chip": {"x_mm": 9.0, "width_mm": 0.5, "depth_mm": 0.15}}, "pass",
     "boiler stay M6x1-6g, finished, one crest chipped (left out, with a warning)"),
    ("stay_blurred", _M6, BENCH_CAMERA, -0.0825, -0.10, {"rot": 1.0, "blur": 6.0}, "refused",
     "boiler stay M6x1-6g photographed out of focus"),
    ("union_bench", _ME, BENCH_CAMERA, -0.010, 0.0, {"rot": -1.2}, "none",
     "3/16-40 ME union, both edges (basic sizes only: no class limits)"),
    ("union_close", _ME, CLOSE_CAMERA, -0.010, 0.0, {"rot": 1.0, "axis_y": -1.6}, "none",
     "3/16-40 ME union, one edge close up"),
)

_CAL = {id(BENCH_CAMERA): "bench_cam.json", id(CLOSE_CAMERA): "close_cam.json"}


def _profile(part: dict, d2_off: float, major_off: float):
    from .. import synth

    if part["form"] == "iso":
        return synth.axial_profile_iso(part["pitch"], part["major"], pd_offset_mm=d2_off,
                                       major_offset_mm=major_off)
    # Whitworth: turned below basic by major_off, flanks moved in by d2_off.
    return synth.axial_profile_whitworth(part["pitch"], part["major"] + major_off,
                                         pd_offset_mm=d2_off - major_off)


def truth_measurements(info: dict[str, Any], lead_mm: float) -> dict[str, float]:
    """Axial-section values in report keys (mm, deg) from a synth profile's ``info``."""
    from ..standards.wires import best_wire, over_wires

    P = float(info["pitch_mm"])
    half = 0.5 * (float(info["flank_left_deg"]) + float(info["flank_right_deg"]))
    d2 = float(info["pitch_d_mm"])
    out = {"pitch": P, "flank_left": float(info["flank_left_deg"]),
           "flank_right": float(info["flank_right_deg"]),
           "included_angle": float(info["flank_left_deg"]) + float(info["flank_right_deg"]),
           "major_diameter": float(info["major_d_mm"]), "pitch_diameter": d2,
           "minor_diameter": float(info["minor_d_mm"]),
           "depth": 0.5 * (float(info["major_d_mm"]) - float(info["minor_d_mm"]))}
    if float(info.get("crest_radius_mm") or 0) > 0:
        out["crest_radius"] = float(info["crest_radius_mm"])
    else:
        out["crest_flat"] = float(info["crest_flat_mm"])
    if float(info.get("root_radius_mm") or 0) > 0:
        out["root_radius"] = float(info["root_radius_mm"])
    else:
        out["root_flat"] = float(info["root_flat_mm"])
    # ASME B1.2 / H28 three-wire reading over best wires, exact lead-angle form.
    w = best_wire(P, half)
    out["over_wire"] = over_wires(d2, P, half, w, lead_mm=lead_mm, method="exact")
    return out


def render_sample(part: dict, camera: dict, d2_off: float, major_off: float, *, rot: float = 0.0,
                  blur: float | None = None, chip: dict | None = None, axis_y: float = 0.0,
                  seed: int = 0) -> tuple[np.ndarray, dict]:
    """Render one threaded part on a scenario camera; returns (uint8 image, truth dict)."""
    from .. import synth

    cam = synth.Camera(camera["mm_per_px"], camera["image_size"], rotation_deg=rot)
    w, h = camera["image_size"]
    length = 1.25 * math.hypot(w, h) * camera["mm_per_px"]
    prof = _profile(part, d2_off, major_off)
    img, truth = synth.render_thread(
        cam, profile=prof, thread_length_mm=length, x_start_mm=-length / 2, axis_y_mm=axis_y,
        chip=chip, blur_px=camera["blur_px"] if blur is None else blur, noise=camera["noise"],
        dark=camera["dark"], bright=camera["bright"], vignetting=camera["vignetting"], seed=seed)
    th = truth["thread"]
    slim = {k: v for k, v in th.items() if k not in ("outline_mm", "outline_px")}
    return img, {"measurements": truth_measurements(prof.info, th["lead_mm"]), "thread": slim,
                 "camera": truth.get("camera"), "spec": part["spec"]}


def make_samples(out_dir: Path) -> list[dict]:
    """Write the thread samples (PNG and truth JSON) into ``out_dir``; return the manifest
    entries (see :mod:`profilecheck.scenario`)."""
    import cv2

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    entries = []
    for i, (name, part, cam, d2_off, maj_off, extra, expect, title) in enumerate(SAMPLES):
        img, truth = render_sample(part, cam, d2_off, maj_off, seed=200 + i, **extra)
        if not cv2.imwrite(str(out / f"{name}.png"), img):
            raise RuntimeError(f"could not write {out / (name + '.png')}")
        (out / f"{name}.truth.json").write_text(json.dumps(truth, indent=1, sort_keys=True) + "\n")
        entries.append({"job": "thread", "name": name, "image": f"{name}.png",
                        "truth": f"{name}.truth.json", "cal": _CAL[id(cam)],
                        "args": {"spec": part["spec"]}, "expect": expect, "title": title})
    return entries
