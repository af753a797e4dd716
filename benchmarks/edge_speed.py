"""Speed of profilecheck.imaging.find_edges, as a ratio to cv2.imread + cv2.Canny.

Scenes (rendered by profilecheck.synth from exact geometry): the 2 MP thread of
benchmarks/speed.py, and the 1280 x 720 centre-and-tool frame of benchmarks/live_rate.py,
whole and in the viewer's tracked box (profilecheck.viewer.tracking.track_roi), and with
``step=2`` (every second profile). Each line: median time of find_edges after one warm-up,
the points returned, the time per point, and the ratio to one cv2.imread (grey) plus
cv2.Canny (50/150) of the same scene's PNG, timed alternately with it (the machine may be
shared and noisy), and the median point std (the same with ``step=2``: each point keeps its
own uncertainty; fits to fewer points report about sqrt(2) more). Readings and their
agreement with the truth are in benchmarks/live_rate.py and benchmarks/speed.py.

Run: ``.venv/bin/python benchmarks/edge_speed.py [--repeats N]``
"""

from __future__ import annotations

import math
import statistics
import sys
import tempfile
import time
from pathlib import Path

import cv2
import numpy as np

from profilecheck import synth
from profilecheck.imaging import find_edges

THREAD_SIZE = (1732, 1155)
THREAD_MM_PER_PX = 0.0090


def thread_scene():
    cam = synth.Camera(THREAD_MM_PER_PX, THREAD_SIZE, rotation_deg=1.2)
    length = 1.3 * math.hypot(*THREAD_SIZE) * THREAD_MM_PER_PX
    img, _ = synth.render_thread(cam, profile=synth.axial_profile_iso(1.0, 8.0),
                                 thread_length_mm=length, x_start_mm=-length / 2, blur_px=1.2,
                                 noise=2.0, dark=28, bright=225, vignetting=0.15, seed=7)
    return img


def height_scene():
    from profilecheck.scenario._shapes import centre_side_view, tool_side_view

    cam = synth.Camera(mm_per_px=0.01, image_size=(1280, 720))
    centre, _ = centre_side_view(apex_mm=(-1.0, 0.0), diameter_mm=4.0, length_mm=10.0)
    tool, _ = tool_side_view(tip_mm=(1.0, 0.04), thickness_mm=2.5, length_mm=10.0)
    img, _ = synth.render([centre, tool], cam, blur_px=1.2, noise=2.0, supersample=2, seed=0)
    return img


def timed(fn, repeats, ref):
    fn()
    ref()
    ts, tr = [], []
    for _ in range(repeats):
        t = time.perf_counter()
        out = fn()
        ts.append(time.perf_counter() - t)
        t = time.perf_counter()
        ref()
        tr.append(time.perf_counter() - t)
    return statistics.median(ts), statistics.median(tr), out


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    repeats = int(argv[argv.index("--repeats") + 1]) if "--repeats" in argv else 7
    from profilecheck.viewer.tracking import MIN_MARGIN_PX

    print(f"find_edges speed, median of {repeats} after a warm-up, beside cv2.imread + cv2.Canny")
    with tempfile.TemporaryDirectory() as d:
        for name, img in (("thread 2.0 MP", thread_scene()), ("height 1280x720", height_scene())):
            path = str(Path(d) / "scene.png")
            cv2.imwrite(path, img)
            a = img.astype(np.float64) / 255.0

            def ref():
                cv2.Canny(cv2.imread(path, cv2.IMREAD_GRAYSCALE), 50, 150)

            cases = [("whole", {}), ("whole, step 2", {"step": 2})]
            if name.startswith("height"):
                # the tracked box around tip (740, 355) and centre apex (540, 360) px
                m = MIN_MARGIN_PX
                roi = (540 - m, 355 - m, 740 + m + 1, 360 + m + 1)
                cases += [("tracked box", {"roi": roi}), ("tracked box, step 2",
                                                          {"roi": roi, "step": 2})]
            for label, kw in cases:
                t, tr, e = timed(lambda kw=kw: find_edges(a, **kw), repeats, ref)
                print(f"  {name:16s} {label:20s} {t * 1e3:7.1f} ms  {len(e):5d} points  "
                      f"{t / max(len(e), 1) * 1e6:5.1f} us/point  median std "
                      f"{np.median(e.std_px):.4f} px  ratio {t / tr:5.1f} x "
                      f"(ref {tr * 1e3:.1f} ms)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
