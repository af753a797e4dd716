"""``profilecheck demo [--out DIR]``: the whole job on the bundled samples.

Reads ``sample_images/manifest.json`` (written by ``python -m profilecheck.scenario``), then for
each entry runs the same library call the matching subcommand runs (calibrate, thread, tool,
height) with the calibration file named in ``calibration/``, writes the JSON report, the
annotated PNG and the job sheet into DIR, and prints one line per sample: what it measured,
the verdict, the verdict the scenario expects, and the largest error against the truth file.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from ..errors import ProfilecheckError
from ._common import info

__all__ = ["register", "run"]


def _repo_root() -> Path:
    return Path(__file__).resolve().parents[2]


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("demo", help="run the whole job on the bundled sample images",
                       description="Calibrate from the demo gauge images, inspect the demo "
                                   "threads, tools and centre-height views, and write the "
                                   "reports into --out.")
    p.add_argument("--out", default="demo_out", help="folder for the reports (default demo_out)")
    p.add_argument("--samples", default=None, help="sample folder (default: the bundled sample_images/)")
    p.add_argument("--cal-dir", default=None, help="calibration folder (default: the bundled calibration/)")
    p.set_defaults(func=run)


def _truth_errors(result: dict, truth: dict) -> list[tuple[str, float, str]]:
    """(key, measured - truth, unit) for every measured key the truth file also gives."""
    out = []
    tm = truth.get("measurements", truth)
    for key, m in result.get("measurements", {}).items():
        t = tm.get(key)
        if isinstance(t, dict):
            t = t.get("value")
        if isinstance(t, (int, float)) and isinstance(m, dict) and isinstance(m.get("value"), (int, float)):
            out.append((key, float(m["value"]) - float(t), m.get("unit", "")))
    return out


def _run_entry(entry: dict, samples: Path, cal_dir: Path, out: Path) -> dict:
    from ..calibration import load_calibration
    from ..imaging import load_image
    from .. import measure
    from ..report import outputs as report_outputs

    job = entry["job"]
    image_path = samples / entry["image"]
    img = load_image(image_path)
    args = dict(entry.get("args", {}))
    if job == "calibration":
        from .. import calibration as calmod
        kind = args.pop("gauge", "pin")
        size = float(args.pop("size_mm"))
        fn = {"pin": calmod.calibrate_from_pin, "block": calmod.calibrate_from_block,
              "lines": calmod.calibrate_from_lines}[kind]
        cal = fn(img, size, **args)
        d = {"kind": "calibration", "image": str(image_path), "calibration": cal.to_dict(),
             "measurements": {"mm_per_px": {"value": cal.mm_per_px, "u": cal.u_mm_per_px,
                                            "unit": "mm/px"}},
             "verdict": {"overall": "none", "checks": []}, "warnings": list(cal.notes)}
        (out / f"{entry['name']}.json").write_text(json.dumps(d, indent=2, sort_keys=True) + "\n")
        return d
    cal = load_calibration(cal_dir / entry["cal"])
    fn = {"thread": measure.measure_thread, "tool": measure.measure_tool,
          "height": measure.measure_height}[job]
    if job in ("thread", "tool") and "spec" in args:
        from ..standards import thread_spec
        args["spec"] = thread_spec(args["spec"])
    if job == "height" and "axis" in args:
        args["axis"] = str(samples / args["axis"])
    result = fn(img, cal, **args)
    report_outputs.write_all(result, img, out / entry["name"])
    return result.to_dict()


def run(args: argparse.Namespace) -> int:
    root = _repo_root()
    samples = Path(args.samples) if args.samples else root / "sample_images"
    cal_dir = Path(args.cal_dir) if args.cal_dir else root / "calibration"
    manifest_path = samples / "manifest.json"
    if not manifest_path.is_file():
        raise ProfilecheckError(f"{manifest_path}: no sample manifest (run 'python -m profilecheck.scenario')")
    manifest = json.loads(manifest_path.read_text())
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    print("profilecheck demo: Hollowmere Model Works (an invented shop), bench camera samples")
    print("Safety: measure with the spindle stopped and the machine isolated; keep guards in place; "
          "wear eye protection at the grinder and lathe.")
    print(f"{'sample':<22} {'job':<11} {'verdict':<10} {'expected':<10} largest error vs truth")
    n_bad = 0
    for entry in manifest:
        name = entry["name"]
        try:
            d = _run_entry(entry, samples, cal_dir, out)
        except ProfilecheckError as e:
            verdict = "refused"
            worst = " ".join(str(e).split())[:70]
        else:
            verdict = d.get("verdict", {}).get("overall", "none")
            truth_path = samples / entry["truth"] if entry.get("truth") else None
            worst = ""
            if truth_path and truth_path.is_file():
                errs = _truth_errors(d, json.loads(truth_path.read_text()))
                if errs:
                    k, e, unit = max(errs, key=lambda t: abs(t[1]) * (1000 if t[2] == "mm" else 1))
                    worst = (f"{k} {e * 1000:+.1f} um" if unit == "mm" else f"{k} {e:+.3g} {unit}")
        expected = entry.get("expect", "")
        mark = "" if not expected or expected == verdict else "  <-- differs"
        n_bad += bool(mark)
        print(f"{name:<22} {entry['job']:<11} {verdict:<10} {expected:<10} {worst}{mark}")
        sys.stdout.flush()
    print(f"reports written to {out}/")
    if n_bad:
        info(f"demo: {n_bad} sample(s) gave a verdict other than the scenario expects")
    return 0
