"""Write every demo sample: ``python -m profilecheck.scenario [SAMPLES_DIR]``.

Images and truth files go to SAMPLES_DIR (default: the repository's ``sample_images/``),
with ``manifest.json`` listing them in job order; the calibration job also writes the demo
calibration files it makes by calibrating its rendered gauge images.
"""

from __future__ import annotations

import importlib
import json
import sys
from pathlib import Path

from . import JOBS


def main(argv: list[str] | None = None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    root = Path(__file__).resolve().parents[2]
    out = Path(argv[0]) if argv else root / "sample_images"
    out.mkdir(parents=True, exist_ok=True)
    manifest: list[dict] = []
    for job in JOBS:
        try:
            mod = importlib.import_module(f"profilecheck.scenario.{job}")
        except ModuleNotFoundError as e:
            if e.name == f"profilecheck.scenario.{job}":
                print(f"scenario: no samples for {job} yet", file=sys.stderr)
                continue
            raise
        entries = mod.make_samples(out)
        print(f"scenario: {job}: {len(entries)} sample(s)", file=sys.stderr)
        manifest.extend(entries)
    (out / "manifest.json").write_text(json.dumps(manifest, indent=2, sort_keys=True) + "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
