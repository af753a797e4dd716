"""Speed of measure_thread on a 2 MP image, as a ratio to cv2.imread + cv2.Canny.

The reference is what a bare edge pipeline costs on the same file: one ``cv2.imread``
(grey) and one ``cv2.Canny`` (thresholds 50/150). measure_thread is timed from the file
path (load, edges, fits, helix correction, verdict, overlays) after one warm-up, side by
side with the reference: each repeat times the reference and then measure_thread, so a
burst of load on a shared machine falls on both. Printed: the medians, their ratio and the
median of the per-repeat ratios, with the spread of those. Target: within 8x.

Run: ``.venv/bin/python benchmarks/speed.py [--repeats N]``.
"""

from __future__ import annotations

import math
import statistics
import sys
import tempfile
import time
from pathlib import Path

import cv2

from profilecheck import synth
from profilecheck.calibration import Calibration
from profilecheck.measure import measure_thread

SIZE = (1732, 1155)  # 2.0 MP
MM_PER_PX = 0.0090
TARGET_RATIO = 8.0


def _paired_times(ref, meas, repeats: int) -> tuple[list[float], list[float]]:
    ref()
    meas()  # warm-up (imports, caches)
    t_ref, t_meas = [], []
    for _ in range(repeats):
        t = time.perf_counter()
        ref()
        t_ref.append(time.perf_counter() - t)
        t = time.perf_counter()
        meas()
        t_meas.append(time.perf_counter() - t)
    return t_ref, t_meas


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    repeats = int(argv[argv.index("--repeats") + 1]) if "--repeats" in argv else 15
    cam = synth.Camera(MM_PER_PX, SIZE, rotation_deg=1.2)
    length = 1.3 * math.hypot(*SIZE) * MM_PER_PX
    img, _ = synth.render_thread(cam, profile=synth.axial_profile_iso(1.0, 8.0),
                                 thread_length_mm=length, x_start_mm=-length / 2, blur_px=1.2,
                                 noise=2.0, dark=28, bright=225, vignetting=0.15, seed=7)
    cal = Calibration(MM_PER_PX, MM_PER_PX * 1e-4, SIZE, blur_px=1.2)
    with tempfile.TemporaryDirectory() as d:
        path = str(Path(d) / "thread_2mp.png")
        cv2.imwrite(path, img)

        def reference():
            g = cv2.imread(path, cv2.IMREAD_GRAYSCALE)
            cv2.Canny(g, 50, 150)

        def measure():
            measure_thread(path, cal, spec="M8x1-6g")

        t_ref, t_meas = _paired_times(reference, measure, repeats)
    med_ref, med_meas = statistics.median(t_ref), statistics.median(t_meas)
    ratios = sorted(m / r for m, r in zip(t_meas, t_ref))
    ratio = statistics.median(ratios)
    q1, q3 = ratios[len(ratios) // 4], ratios[(3 * len(ratios)) // 4]
    mp = SIZE[0] * SIZE[1] / 1e6
    print(f"image {SIZE[0]} x {SIZE[1]} px ({mp:.2f} MP), {repeats} paired repeats")
    print(f"  cv2.imread + cv2.Canny   {med_ref * 1000:8.1f} ms (median)")
    print(f"  measure_thread (path)    {med_meas * 1000:8.1f} ms (median)")
    print(f"  ratio of medians         {med_meas / med_ref:8.1f} x")
    print(f"  median per-repeat ratio  {ratio:8.1f} x   (quartiles {q1:.1f} - {q3:.1f})   "
          f"target {TARGET_RATIO:g} x  {'ok' if ratio <= TARGET_RATIO else 'MISSED'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
