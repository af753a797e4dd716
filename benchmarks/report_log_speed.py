"""Speed of the report writers and the inspection log (prints times and ratios).

Targets (ours, no source): an annotated PNG of a 1600 x 1200 frame with ~60 overlays under
0.5 s; a job sheet under 0.5 s; a log record (fsync'd, synchronous = FULL) under 50 ms;
drawing positions within 0.1 px of the analytic line (checked in tests, repeated here on a
larger frame).
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from profilecheck.log import InspectionLog  # noqa: E402
from profilecheck.overlays import Arc, Label, Marker, Polyline, ScaleBar, Segment  # noqa: E402
from profilecheck.report.annotate import draw_overlays, encode_png  # noqa: E402
from profilecheck.report.sheet import render_sheet  # noqa: E402
from profilecheck.report.table import format_table  # noqa: E402
from profilecheck.verdict import check_limits  # noqa: E402


def _timeit(fn, n: int) -> float:
    fn()
    t = time.perf_counter()
    for _ in range(n):
        fn()
    return (time.perf_counter() - t) / n


def main() -> int:
    h, w = 1200, 1600
    img = np.full((h, w), 0.85)
    img[600:, :] = 0.12
    ovs = []
    for i in range(20):
        x = 60 + 75 * i
        ovs += [Segment((x, 600.0), (x + 30, 540.0), "fit"), Marker((x + 30.0, 540.0), 8, "pass"),
                Label((x, 500.0), f"{i}", "info")]
    ovs += [Polyline(tuple((float(x), 560 + 20 * np.sin(x / 40)) for x in range(0, w, 4)),
                     "envelope_max"), Arc((800.0, 800.0), 120.0, 0, 300, "undecided"),
            ScaleBar(2.0, 200.0)]
    t_draw = _timeit(lambda: draw_overlays(img, ovs), 5)
    rgb = draw_overlays(img, ovs)
    t_png = _timeit(lambda: encode_png(rgb), 5)
    png = encode_png(rgb)
    chk = check_limits("pitch_diameter", 5.2951, 0.0084, 5.212, 5.324, unit="mm",
                       source="ISO 965-1 table")
    result = {"kind": "thread", "spec": {"designation": "M6x1-6g"},
              "measurements": {"pitch_diameter": {"value": 5.2951, "u": 0.0084, "unit": "mm"},
                               "pitch": {"value": 1.0003, "u": 0.0021, "unit": "mm"}},
              "verdict": {"overall": chk.result, "checks": [chk.to_dict()]}, "warnings": []}
    t_sheet = _timeit(lambda: render_sheet(result, png), 20)
    t_table = _timeit(lambda: format_table(result), 200)

    # subpixel placement on the big frame: a segment at y = 300.3125 (5/16 px)
    y = 300.3125
    out = draw_overlays(np.ones((h, w)), [Segment((100.0, y), (1500.0, y), "fit")], legend=False)
    ink = 765.0 - out.astype(float).sum(axis=2)
    col = ink[:, 800]
    err = float((col * np.arange(h)).sum() / col.sum() - y)

    with tempfile.TemporaryDirectory() as d:
        with InspectionLog(Path(d) / "bench.db") as log:
            n = 50
            t = time.perf_counter()
            for i in range(n):
                log.record(result, job=f"bench {i}")
            t_log = (time.perf_counter() - t) / n
    print(f"annotate 1600x1200, {len(ovs)} overlays: {t_draw * 1000:7.1f} ms "
          f"(target 500 ms, ratio {t_draw / 0.5:.2f})")
    print(f"PNG encode:                          {t_png * 1000:7.1f} ms")
    print(f"job sheet render (with picture):     {t_sheet * 1000:7.1f} ms "
          f"(target 500 ms, ratio {t_sheet / 0.5:.2f})")
    print(f"terminal table:                      {t_table * 1000:7.2f} ms")
    print(f"log record (WAL, synchronous FULL):  {t_log * 1000:7.2f} ms "
          f"(target 50 ms, ratio {t_log / 0.05:.2f})")
    print(f"segment placement error at 5/16 px:  {err:+.4f} px (target |e| <= 0.1)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
