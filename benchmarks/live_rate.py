"""Live centre-height rate: measured frames per second through the viewer's live path.

A synthetic 1280 x 720 frame source (renders of a lathe centre and a tool from
profilecheck.synth, paced at 30 frames/s like a USB camera) feeds the viewer window on the
offscreen Qt platform with the real library's measure_height. Prints the measured rate
against the target of 15 frames/s, the frames shown, the time per measurement, how late a
10 ms timer on the GUI thread ran (responsiveness), for the whole frame and for the viewer's
default tracking (search only around the last tip and axis point,
profilecheck.viewer.tracking), the height agreement between the two, and the same pipeline
with an instant stand-in measurement (the viewer's own ceiling).

Run: ``QT_QPA_PLATFORM=offscreen .venv/bin/python benchmarks/live_rate.py [--seconds S]``
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

TARGET_FPS = 15.0
SIZE = (1280, 720)
MM_PER_PX = 0.01


def tip_heights_mm(n: int) -> list[float]:
    """Truth of frame i: the tool tip 0.040 + 0.005 i mm above the centre's axis (the
    render's exact geometry; telecentric view, axis along the image rows)."""
    return [0.04 + 0.005 * i for i in range(n)]


def make_frames(n: int):
    from profilecheck.scenario._shapes import centre_side_view, tool_side_view
    from profilecheck.synth import Camera, render

    cam = Camera(mm_per_px=MM_PER_PX, image_size=SIZE)
    frames = []
    for i, y in enumerate(tip_heights_mm(n)):  # the tool creeping up 5 um per frame
        centre, _ = centre_side_view(apex_mm=(-1.0, 0.0), diameter_mm=4.0, length_mm=10.0)
        tool, _ = tool_side_view(tip_mm=(1.0, y), thickness_mm=2.5, length_mm=10.0)
        img, _ = render([centre, tool], cam, blur_px=1.2, noise=2.0, supersample=2, seed=i)
        frames.append(img)
    return frames


def run(frames, backend, seconds: float, workers: int = 1, track: bool = True) -> dict:
    from PyQt5.QtCore import QTimer
    from PyQt5.QtWidgets import QApplication

    from profilecheck.calibration import Calibration
    from profilecheck.viewer.frames import SequenceSource
    from profilecheck.viewer.model import ViewerModel
    from profilecheck.viewer.window import MainWindow

    app = QApplication.instance() or QApplication([])
    win = MainWindow(ViewerModel(), backend,
                     source_factory=lambda: SequenceSource(frames, label="synthetic", fps=30.0,
                                                           loop=True))
    win.model.set_calibration(Calibration(mm_per_px=MM_PER_PX, u_mm_per_px=2e-6,
                                          image_size=SIZE, label="synthetic"))
    win.model.set_mode("height")
    win.live.workers = workers
    win.live.track = track
    win.show()
    times, late, errs = [], [], []
    truth = {id(f): t for f, t in zip(frames, tip_heights_mm(len(frames)))}

    warm = None

    def got(out):
        nonlocal warm
        if warm is None:  # rates count from the first measured frame (start-up excluded)
            warm = (time.perf_counter(), 1, win.live.frames_shown)  # this one excluded
        times.append(out.elapsed_s)
        m = out.result.measurements.get("height_offset") if hasattr(out.result, "measurements") else None
        t = truth.get(id(win.model.outcome_frame))
        if m is not None and t is not None:
            errs.append((m.value - t, m.u, out.roi is not None))
    win.live.measured.connect(got)
    last = [time.perf_counter()]

    def tick():
        now = time.perf_counter()
        if warm is not None:  # after the first measurement (start-up excluded)
            late.append(max(0.0, now - last[0] - 0.010))
        last[0] = now
    timer = QTimer()
    timer.timeout.connect(tick)
    timer.start(10)
    win.start_camera()
    from PyQt5.QtCore import QEventLoop
    loop = QEventLoop()
    QTimer.singleShot(int(seconds * 1000), loop.quit)
    loop.exec_()  # the real event loop: it sleeps in Qt between events, as the viewer does
    t1 = time.perf_counter()
    timer.stop()
    pipe = win.live.pipeline
    measured_total = pipe.measured.total if pipe else len(times)
    win.stop_camera()
    win.close()
    app.processEvents()
    if warm is None:
        return {"measured_fps": 0.0, "shown_fps": 0.0, "n": 0, "ms": float("nan"),
                "late_max_ms": max(late) * 1e3 if late else float("nan"),
                "late_p95_ms": float("nan"), "status": win.model.status, "errs": errs}
    span = t1 - warm[0]
    late.sort()
    return {"measured_fps": (len(times) - warm[1]) / span,
            "shown_fps": (win.live.frames_shown - warm[2]) / span,
            "n": measured_total,
            "ms": statistics.median(times) * 1e3,
            "late_max_ms": late[-1] * 1e3,
            "late_p95_ms": late[int(0.95 * (len(late) - 1))] * 1e3,
            "status": win.model.status, "errs": errs}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seconds", type=float, default=12.0, help="run time per pass (s)")
    ap.add_argument("--frames", type=int, default=4, help="distinct synthetic frames")
    ap.add_argument("--workers", type=int, default=1, help="measure threads (extra pass if > 1)")
    args = ap.parse_args(argv)
    from profilecheck.viewer._testing import ScriptedBackend
    from profilecheck.viewer.jobs import LibraryBackend

    t = time.perf_counter()
    frames = make_frames(args.frames)
    print(f"live_rate: {args.frames} synthetic frames {SIZE[0]} x {SIZE[1]} px rendered in "
          f"{time.perf_counter() - t:.1f} s; source paced at 30 frames/s; {os.cpu_count()} CPUs")
    whole = run(frames, LibraryBackend(), args.seconds, track=False)
    print(f"  whole frame         : {whole['measured_fps']:6.2f} measured frames/s "
          f"(ratio {whole['measured_fps'] / TARGET_FPS:.2f}), median {whole['ms']:.0f} ms per "
          f"measurement, GUI lateness p95 {whole['late_p95_ms']:.1f} ms")
    real = run(frames, LibraryBackend(), args.seconds)
    print(f"  tracked (default)   : {real['measured_fps']:6.2f} measured frames/s "
          f"(target {TARGET_FPS:.0f}, ratio {real['measured_fps'] / TARGET_FPS:.2f}), "
          f"{real['shown_fps']:.1f} frames/s shown, median {real['ms']:.0f} ms per measurement, "
          f"{real['n']} measured")
    print(f"  GUI timer lateness  : p95 {real['late_p95_ms']:.1f} ms, max {real['late_max_ms']:.1f} ms")
    for name, r in (("whole frame", whole), ("tracked", real)):
        e = r["errs"]
        if e:
            worst = max(abs(v) for v, _, _ in e)
            ratio = max(abs(v) / u for v, u, _ in e if u > 0)
            n_roi = sum(1 for *_, t in e if t)
            print(f"  error vs truth      : {name}: max |error| {worst * 1000:.2f} um, "
                  f"max |error|/U {ratio:.2f} over {len(e)} frames ({n_roi} searched in a box)")
    print(f"  last status         : {real['status']}")
    if args.workers > 1:
        two = run(frames, LibraryBackend(), args.seconds, workers=args.workers)
        print(f"  {args.workers} measure threads  : {two['measured_fps']:6.2f} measured frames/s "
              f"(ratio {two['measured_fps'] / TARGET_FPS:.2f}), median {two['ms']:.0f} ms per "
              f"measurement, GUI lateness p95 {two['late_p95_ms']:.1f} ms, max "
              f"{two['late_max_ms']:.1f} ms")
        real = max(real, two, key=lambda r: r["measured_fps"])
    # +/-0.1 mm rule of thumb (common practice, no source): any value will do for the stand-in.
    stub = ScriptedBackend(values={"height": {"height_offset": (0.05, 0.001, "mm", -0.1, 0.1)}})
    ceil = run(frames, stub, min(args.seconds, 5.0))
    print(f"  viewer ceiling      : {ceil['measured_fps']:6.2f} frames/s with an instant stand-in "
          f"measurement, {ceil['shown_fps']:.1f} shown, GUI lateness p95 "
          f"{ceil['late_p95_ms']:.1f} ms, max {ceil['late_max_ms']:.1f} ms")
    ok = real["measured_fps"] >= TARGET_FPS
    print(f"  target {'MET' if ok else 'NOT MET'}: {real['measured_fps']:.2f} of {TARGET_FPS:.0f} "
          f"measured frames/s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
