"""Thread-specification engine: agreement with published limits, and speed.

Prints, per published row (../shared/standards-notes.md §11, source tags there), the
difference between the engine and the published limit in units of the last published
digit, then call times. Run: ``.venv/bin/python benchmarks/bench_standards.py``.
"""

from __future__ import annotations

import time

from profilecheck.standards import thread_spec

IN = 25.4

# (designation, key, published min, published max, unit, decimals, source tag)
ROWS = [
    ("1/4-20 UNC-2A", "pitch_diameter", 0.2127, 0.2164, "in", 4, "C 15"),
    ("1/4-20 UNC-2B", "pitch_diameter", 0.2175, 0.2224, "in", 4, "P 9"),
    ("1/2-13 UNC-2B", "minor_diameter", 0.417, 0.434, "in", 3, "P 9"),
    ("1/2-28 UNEF-2A", "major_diameter", 0.4924, 0.4989, "in", 4, "P 10"),
    ("2-1/2-4 UNC-2A", "pitch_diameter", 2.3241, 2.3345, "in", 4, "P 11"),
    ("2-1/2-4 UNC-2B", "pitch_diameter", 2.3376, 2.3511, "in", 4, "P 11"),
    ("2-1/2-8 UN-2A", "pitch_diameter", 2.4082, 2.4164, "in", 4, "P 11"),
    ("2-1/2-12 UN-2A", "pitch_diameter", 2.4378, 2.4440, "in", 4, "P 11"),
    ("0-80 UNF-2A", "pitch_diameter", 0.0496, 0.0514, "in", 4, "P 8"),
    ("2-56 UNC-2A", "major_diameter", 0.0813, 0.0854, "in", 4, "P 8"),
    ("1-64 UNC-2A", "major_diameter", 0.0686, None, "in", 4, "P 8 (§12.9)"),
    ("M3x0.5-6g", "pitch_diameter", 2.580, 2.655, "mm", 3, "P 5"),
    ("M6x1-6g", "major_diameter", 5.794, 5.974, "mm", 3, "P 5"),
    ("M10x1.5-6g", "pitch_diameter", 8.862, 8.994, "mm", 3, "P 5"),
    ("M10x1.5-6H", "pitch_diameter", 9.026, 9.206, "mm", 3, "P 6"),
    ("M12x1.75-6H", "minor_diameter", 10.106, 10.441, "mm", 3, "P 6"),
    ("M9x0.5-6H", "minor_diameter", 8.459, 8.599, "mm", 3, "P 6"),
    ("1/2-10 ACME-2G", "pitch_diameter", 0.4306, 0.4443, "in", 4, "P 20"),
    ("5/8-8 ACME-2G", "major_diameter", 0.6188, 0.6250, "in", 4, "P 20"),
]


def main() -> None:
    worst = 0.0
    print(f"{'designation':18} {'limit':15} {'d(min)':>7} {'d(max)':>7}  (units of last digit) source")
    for text, key, lo, hi, unit, dec, src in ROWS:
        lim = thread_spec(text).limits[key]
        f = IN if unit == "in" else 1.0
        step = 10.0 ** -dec
        dmin = (lim.min_mm / f - lo) / step if lo is not None else float("nan")
        dmax = (lim.max_mm / f - hi) / step if hi is not None else float("nan")
        for v in (dmin, dmax):
            if v == v:
                worst = max(worst, abs(v))
        print(f"{text:18} {key:15} {dmin:7.2f} {dmax:7.2f}  [{src}]")
    print(f"largest difference: {worst:.2f} units of the last published digit")
    for text in ("1/4-20 UNC-2A", "M6x1-6g", "1/4 BSW", "Tr20x4-7e"):
        n = 500
        t0 = time.perf_counter()
        for _ in range(n):
            s = thread_spec(text)
        t1 = time.perf_counter()
        for _ in range(n):
            s.axial_profile("max", n_pitch=5)
        t2 = time.perf_counter()
        print(f"{text:14} thread_spec {1e6 * (t1 - t0) / n:7.0f} us/call   "
              f"axial_profile(5 pitches) {1e6 * (t2 - t1) / n:7.0f} us/call")


if __name__ == "__main__":
    main()
