"""The demo scenario: an invented model-engineering shop and its parts.

Hollowmere Model Works (invented) makes small steam fittings and lathe accessories. Its
bench camera is a USB microscope on a stand over an LED backlight panel. Every sample image
is rendered by :mod:`profilecheck.synth` from exact geometry, with its truth written beside
it as ``<name>.truth.json``.

Each job module here (``calibration``, ``thread``, ``tool``, ``height``) exposes
``make_samples(out_dir: pathlib.Path) -> list[dict]``: it writes its images and truth files
into ``out_dir`` and returns manifest entries::

    {"job": "thread", "name": "stay_pass", "image": "stay_pass.png",
     "truth": "stay_pass.truth.json", "cal": "bench_cam.json",
     "args": {"spec": "M6x1-6g"}, "expect": "pass", "title": "..."}

``python -m profilecheck.scenario OUT_DIR`` writes every sample and ``manifest.json``.
"""

from __future__ import annotations

#: The demo bench camera (invented): parameters for :class:`profilecheck.synth.Camera` and
#: :func:`profilecheck.synth.render`. 10 um/px so both edges of a thread up to ~12 mm are in
#: view on a 1600 x 1200 sensor.
BENCH_CAMERA = {
    "mm_per_px": 0.0100,
    "image_size": (1600, 1200),
    "blur_px": 1.2,
    "noise": 2.0,
    "dark": 28,
    "bright": 225,
    "vignetting": 0.15,
}

#: A closer set-up of the same camera for single-edge thread work and small tools, 3.75 um/px.
CLOSE_CAMERA = {
    "mm_per_px": 0.00375,
    "image_size": (1600, 1200),
    "blur_px": 1.3,
    "noise": 2.0,
    "dark": 28,
    "bright": 225,
    "vignetting": 0.15,
}

#: The side-view camera at the lathe for centre-height checks, 8 um/px.
LATHE_CAMERA = {
    "mm_per_px": 0.0080,
    "image_size": (1600, 1200),
    "blur_px": 1.4,
    "noise": 2.5,
    "dark": 30,
    "bright": 215,
    "vignetting": 0.12,
}

JOBS = ("calibration", "thread", "tool", "height")
