"""Accuracy of measure_thread against the truth of rendered helical threads.

Renders (profilecheck.synth.render_thread: the true helical outline, parallel view) over
pitches 0.35-2.54 mm, forms 60 deg (ISO, UN), 55 deg (Whitworth), 47.5 deg (BA), 29 deg
(Acme), with tilt of the part on the screen, blur, noise and vignetting; prints the error
of every quantity against the axial-section truth, and the targets:

* close-up, ~3.75 um/px, one edge: pitch within 0.5 um, each flank within 0.1 deg, flats /
  radii and depth within 2 um;
* bench, ~10 um/px, both edges: major, minor and pitch diameter within 4 um.

Calibration: the render's exact scale, no edge offset (the benchmark measures the method,
not a calibration). Run: ``.venv/bin/python benchmarks/thread_accuracy.py [--quick]``.
"""

from __future__ import annotations

import math
import sys
import time

from profilecheck import synth
from profilecheck.calibration import Calibration
from profilecheck.errors import ProfilecheckError
from profilecheck.measure import measure_thread
from profilecheck.scenario.thread import truth_measurements

CLOSE = 0.00375
BENCH = 0.0100

# name, spec, profile factory, mm/px, image size, one edge?, render options
CASES = [
    ("M1.6x0.35 close", "M1.6x0.35-6g", lambda: synth.axial_profile_iso(0.35, 1.6), CLOSE,
     (1200, 800), True, dict(rot=1.0)),
    ("M3x0.5 close", "M3x0.5-6g", lambda: synth.axial_profile_iso(0.5, 3.0), CLOSE,
     (1200, 800), True, dict(rot=-2.0, noise=4.0)),
    ("M6x1 close tilt3 blur1.8", "M6x1-6g", lambda: synth.axial_profile_iso(1.0, 6.0), CLOSE,
     (1400, 900), True, dict(rot=3.0, blur=1.8)),
    ("1/4-20 UNC close vign.3", "1/4-20 UNC-2A", lambda: synth.axial_profile_un(20, 0.25), CLOSE,
     (1600, 1000), True, dict(rot=0.5, vignetting=0.3)),
    ("3/16-40 ME close", "3/16-40 ME",
     lambda: synth.axial_profile_whitworth(25.4 / 40, 25.4 * 3 / 16), CLOSE, (1200, 800), True,
     dict(rot=-1.0)),
    ("2BA close", "2BA", lambda: synth.axial_profile_ba(0.81, 4.7), CLOSE, (1400, 900), True,
     dict(rot=1.5)),
    ("1/2-10 Acme bench 1 edge", "1/2-10 Acme-2G", lambda: synth.axial_profile_acme(2.54, 12.7),
     BENCH, (1400, 900), True, dict(rot=1.0)),
    ("M20x2.5 bench 1 edge", "M20x2.5-6g", lambda: synth.axial_profile_iso(2.5, 20.0), BENCH,
     (1400, 900), True, dict(rot=-0.7)),
    ("M3x0.5 bench both", "M3x0.5-6g", lambda: synth.axial_profile_iso(0.5, 3.0), BENCH,
     (1000, 700), False, dict(rot=1.0)),
    ("M6x1 bench both", "M6x1-6g", lambda: synth.axial_profile_iso(1.0, 6.0), BENCH,
     (1600, 1200), False, dict(rot=1.5)),
    ("M10x1.5 bench both noisy", "M10x1.5-6g", lambda: synth.axial_profile_iso(1.5, 10.0),
     BENCH, (1600, 1200), False, dict(rot=-2.5, noise=4.0, vignetting=0.25)),
    ("1/4-20 UNC bench both", "1/4-20 UNC-2A", lambda: synth.axial_profile_un(20, 0.25), BENCH,
     (1400, 1000), False, dict(rot=0.3, blur=1.6)),
    ("3/16-40 ME bench both", "3/16-40 ME",
     lambda: synth.axial_profile_whitworth(25.4 / 40, 25.4 * 3 / 16), BENCH, (1200, 900), False,
     dict(rot=2.0)),
]

TARGETS = {  # quantity -> (limit, unit of the printed error)
    "close": {"pitch": 0.5, "flank_left": 0.1, "flank_right": 0.1, "crest_flat": 2.0,
              "root_flat": 2.0, "crest_radius": 2.0, "root_radius": 2.0, "depth": 2.0},
    "bench": {"major_diameter": 4.0, "minor_diameter": 4.0, "pitch_diameter": 4.0},
}


def run_case(case, seed):
    name, des, prof_fn, mmpx, size, one_edge, opt = case
    prof = prof_fn()
    r_major = prof.info["major_d_mm"] / 2
    h_mm = size[1] * mmpx
    axis_y = (0.2 * h_mm - r_major) if one_edge else 0.0  # one edge: crests 0.2 h above centre
    cam = synth.Camera(mmpx, size, rotation_deg=opt.get("rot", 0.0))
    length = 1.3 * math.hypot(*size) * mmpx
    img, truth = synth.render_thread(
        cam, profile=prof, thread_length_mm=length, x_start_mm=-length / 2, axis_y_mm=axis_y,
        blur_px=opt.get("blur", 1.3), noise=opt.get("noise", 2.0), dark=28, bright=225,
        vignetting=opt.get("vignetting", 0.15), seed=seed)
    cal = Calibration(mmpx, mmpx * 1e-6, size, blur_px=opt.get("blur", 1.3))
    t = time.perf_counter()
    res = measure_thread(img.astype(float) / 255.0, cal, spec=des)
    dt = time.perf_counter() - t
    tm = truth_measurements(prof.info, truth["thread"]["lead_mm"])
    errs = {}
    for k, m in res.measurements.items():
        if k in tm:
            scale = 1000.0 if m.unit == "mm" else 1.0
            errs[k] = ((m.value - tm[k]) * scale, m.u * scale)
    return res, errs, dt


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    cases = CASES[::3] if "--quick" in argv else CASES
    worst: dict[str, dict[str, float]] = {"close": {}, "bench": {}}
    print(f"{'case':28s} {'time':>6s}  errors (um or deg) / U")
    for i, case in enumerate(cases):
        kind = "close" if case[3] == CLOSE else ("bench" if not case[5] else "bench1")
        try:
            res, errs, dt = run_case(case, seed=500 + i)
        except ProfilecheckError as e:
            print(f"{case[0]:28s} refused: {e}")
            continue
        parts = [f"{k}={e:+.2f}/{u:.2f}" for k, (e, u) in errs.items()]
        print(f"{case[0]:28s} {dt:5.2f}s  " + " ".join(parts))
        if res.warnings:
            print(f"{'':36s}warnings: {'; '.join(res.warnings)}")
        for k, (e, _) in errs.items():
            bucket = "close" if kind == "close" else ("bench" if kind == "bench" else None)
            if bucket and k in TARGETS[bucket]:
                worst[bucket][k] = max(worst[bucket].get(k, 0.0), abs(e))
    print()
    print("largest error against target:")
    n_miss = 0
    for bucket, tg in TARGETS.items():
        for k, lim in tg.items():
            if k in worst[bucket]:
                w = worst[bucket][k]
                ok = w <= lim
                n_miss += not ok
                print(f"  {bucket:6s} {k:16s} {w:7.3f}  target {lim:g}  {'ok' if ok else 'MISSED'}"
                      f"  ratio {w / lim:.2f}")
    print(f"{n_miss} target(s) missed")
    print()
    check_samples()
    return 0


def check_samples() -> None:
    """Verdict of every bundled thread sample against the scenario's expectation."""
    from pathlib import Path

    from profilecheck.calibration import load_calibration
    from profilecheck.scenario import thread as sc

    root = Path(__file__).resolve().parents[1]
    print("bundled samples (sample_images/, demo calibrations):")
    n_bad = 0
    for name, part, cam, *_rest, expect, _title in sc.SAMPLES:
        img = root / "sample_images" / f"{name}.png"
        cal_path = root / "calibration" / sc._CAL[id(cam)]
        if not img.is_file() or not cal_path.is_file():
            print(f"  {name:16s} missing (run python -m profilecheck.scenario)")
            continue
        try:
            got = measure_thread(str(img), load_calibration(cal_path), spec=part["spec"]).verdict
        except ProfilecheckError as e:
            got = "refused"
        n_bad += got != expect
        print(f"  {name:16s} {got:10s} expected {expect:10s} {'ok' if got == expect else 'WRONG'}")
    print(f"{n_bad} sample verdict(s) wrong")


if __name__ == "__main__":
    sys.exit(main())
