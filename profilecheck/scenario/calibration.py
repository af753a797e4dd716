"""Demo calibration samples: a pin gauge under each camera of the (invented) shop.

Every image is rendered by :func:`profilecheck.synth.render` from exact geometry; its truth
is written beside it. The calibration files in ``calibration/`` of the repository are made
by running our own ``calibrate_from_pin`` on these renders (:func:`make_calibrations`), never
written by hand.

The geometry helpers here (pin, gauge block, ruled scale, checkerboard pose) are shared by
the calibration tests and benchmarks. World frame: mm in the measurement plane, +y up
(docs/conventions.md).
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from . import BENCH_CAMERA, CLOSE_CAMERA, LATHE_CAMERA

__all__ = ["field_length_mm", "bar_polygon", "ruled_lines", "cylinder_silhouette_px", "board_view_px", "board_views",
           "render_bar", "make_samples", "make_calibrations", "SAMPLES"]

#: Demo pin gauges: (sample name, camera, pin diameter mm, tilt deg, calibration file).
#: Diameters are the nominal sizes of the shop's class ZZ pins (invented certificates).
SAMPLES = (
    ("pin_bench", BENCH_CAMERA, 6.000, 1.7, "bench_cam.json", "bench microscope, 10 um/px"),
    ("pin_close", CLOSE_CAMERA, 2.500, -2.3, "close_cam.json", "bench microscope close-up, 3.75 um/px"),
    ("pin_lathe", LATHE_CAMERA, 5.000, 1.2, "lathe_cam.json", "side camera at the lathe, 8 um/px"),
)

#: Expanded uncertainty (k = 2) of the demo pins' diameter, mm (invented certificate:
#: class ZZ plus-tolerance pins are made within 0.0002 in = 5 um; ours is measured to 1 um).
DEMO_PIN_U_MM = 0.001


def field_length_mm(camera: Any) -> float:
    """A length (mm) that spans the camera's whole view with margin (1.2 x the diagonal):
    bars this long cross the image without their ends in view, and the renderer does not
    spend time on edges far outside it."""
    w, h = camera.image_size
    return 1.2 * math.hypot(w, h) * camera.mm_per_px + 1.0


def bar_polygon(width_mm: float, *, length_mm: float = 100.0, tilt_deg: float = 0.0,
                centre_mm: Sequence[float] = (0.0, 0.0)) -> np.ndarray:
    """Rectangle (4, 2) mm of a bar of ``width_mm`` whose long axis is turned ``tilt_deg``
    from world x (counter-clockwise, y up): the silhouette of a pin or gauge block seen
    square on in a parallel view."""
    a = math.radians(tilt_deg)
    d = np.array([math.cos(a), math.sin(a)])
    n = np.array([-d[1], d[0]])
    c = np.asarray(centre_mm, dtype=np.float64)
    hl, hw = 0.5 * length_mm, 0.5 * width_mm
    return np.array([c - hl * d - hw * n, c + hl * d - hw * n, c + hl * d + hw * n, c - hl * d + hw * n])


def ruled_lines(spacing_mm: float, width_mm: float, n: int, *, length_mm: float = 100.0,
                tilt_deg: float = 0.0, centre_mm: Sequence[float] = (0.0, 0.0)) -> list[np.ndarray]:
    """``n`` dark lines of ``width_mm`` at ``spacing_mm`` centre to centre, running along
    the direction ``tilt_deg + 90`` deg (so they are spaced along ``tilt_deg``)."""
    a = math.radians(tilt_deg)
    step = np.array([math.cos(a), math.sin(a)])
    c = np.asarray(centre_mm, dtype=np.float64)
    out = []
    for k in range(n):
        ck = c + (k - (n - 1) / 2.0) * spacing_mm * step
        out.append(bar_polygon(width_mm, length_mm=length_mm, tilt_deg=tilt_deg + 90.0, centre_mm=ck))
    return out


def cylinder_silhouette_px(camera: Any, diameter_mm: float, *, length_mm: float = 100.0,
                           n: int = 400) -> np.ndarray:
    """Exact outline (px) of a cylinder whose axis is the world x axis (in the measurement
    plane z = 0) seen through a pinhole camera: the two generators where the rays from the
    projection centre graze it.

    For the centre C = (c_y, c_z) seen in the y-z section and a circle of radius r about the
    axis, the grazing points are T = (r^2 / d^2) C +/- (r sqrt(d^2 - r^2) / d^2) C_perp
    (tangents from an external point; d = |C|). Each generator is a line parallel to x,
    densified and projected with the camera's own (distorting) projection.
    """
    if not camera.pinhole:
        return camera.world_to_px(bar_polygon(diameter_mm, length_mm=length_mm))
    r = 0.5 * diameter_mm
    cam_centre = -camera.pose()[0].T @ camera.pose()[1]
    cy, cz = float(cam_centre[1]), float(cam_centre[2])
    d2 = cy * cy + cz * cz
    base = np.array([cy, cz]) * (r * r / d2)
    perp = np.array([-cz, cy]) * (r * math.sqrt(d2 - r * r) / d2)
    t1, t2 = base + perp, base - perp
    xs = np.linspace(-0.5 * length_mm, 0.5 * length_mm, n)
    g1 = np.column_stack([xs, np.full(n, t1[0]), np.full(n, t1[1])])
    g2 = np.column_stack([xs[::-1], np.full(n, t2[0]), np.full(n, t2[1])])
    return camera.world3_to_px(np.vstack([g1, g2]))


def board_view_px(camera: Any, pattern: Sequence[int], square_mm: float, rvec: Sequence[float],
                  tvec: Sequence[float], *, seg_px: float = 2.0) -> tuple[list[np.ndarray], np.ndarray]:
    """Dark squares (px polygons) and inner corners (M, 2) px of a checkerboard in a pose.

    The board has ``(cols + 1) x (rows + 1)`` squares; its inner corner (i, j) is at board
    point (i s, j s, 0); (rvec, tvec) map board mm to the camera frame (OpenCV), and
    ``cv2.projectPoints`` with the camera's K and distortion gives px. Square edges are
    densified to ``seg_px`` so distortion curves them.
    """
    import cv2

    cols, rows = (int(v) for v in pattern)
    k = camera.camera_matrix()
    d = camera.dist_coeffs()
    rv = np.asarray(rvec, dtype=np.float64)
    tv = np.asarray(tvec, dtype=np.float64)
    m = max(2, int(math.ceil(square_mm / (camera.mm_per_px * seg_px))))
    t = np.linspace(0.0, 1.0, m, endpoint=False)
    polys = []
    for j in range(-1, rows):
        for i in range(-1, cols):
            if (i + j) % 2:
                continue
            x0, y0 = i * square_mm, j * square_mm
            corners = np.array([[x0, y0], [x0 + square_mm, y0], [x0 + square_mm, y0 + square_mm],
                                [x0, y0 + square_mm]])
            ring = np.vstack([corners[q] + t[:, None] * (corners[(q + 1) % 4] - corners[q])
                              for q in range(4)])
            pts3 = np.column_stack([ring, np.zeros(len(ring))])
            px, _ = cv2.projectPoints(pts3, rv, tv, k, d)
            polys.append(px.reshape(-1, 2))
    jj, ii = np.mgrid[0:rows, 0:cols]
    inner = np.column_stack([ii.ravel() * square_mm, jj.ravel() * square_mm, np.zeros(rows * cols)])
    px, _ = cv2.projectPoints(inner, rv, tv, k, d)
    return polys, px.reshape(-1, 2)


def board_views(camera: Any, pattern: Sequence[int], square_mm: float, *, n_views: int = 10,
                tilt_deg: tuple[float, float] = (10.0, 20.0), seed: int = 0,
                first_square: bool = True) -> list[tuple[list[np.ndarray], np.ndarray, tuple]]:
    """Poses of a checkerboard for a lens calibration and their projections.

    The board centre sits on the optical axis (within +/- 0.4 mm) at the camera's working
    distance; view 0 is square to the camera when ``first_square``, the others are tilted by
    an angle drawn from ``tilt_deg`` about an in-plane axis turning 137.5 deg per view (so
    the tilt directions spread evenly). Returns ``[(dark_squares_px, corners_px, (rvec,
    tvec)), ...]`` from :func:`board_view_px`.
    """
    import cv2

    cols, rows = (int(v) for v in pattern)
    rng = np.random.default_rng(seed)
    centre = np.array([(cols - 1) * square_mm / 2.0, (rows - 1) * square_mm / 2.0, 0.0])
    out = []
    for i in range(int(n_views)):
        phi = math.radians(137.5 * i)
        axis = np.array([math.cos(phi), math.sin(phi), 0.0])
        ang = 0.0 if (i == 0 and first_square) else math.radians(rng.uniform(*tilt_deg))
        r, _ = cv2.Rodrigues(axis * ang)
        spin = math.radians(rng.uniform(-3.0, 3.0))
        rz = np.array([[math.cos(spin), -math.sin(spin), 0.0], [math.sin(spin), math.cos(spin), 0.0],
                       [0.0, 0.0, 1.0]])
        r = r @ rz
        shift = np.array([rng.uniform(-0.4, 0.4), rng.uniform(-0.4, 0.4), camera.working_distance_mm])
        t = shift - r @ centre
        rvec = cv2.Rodrigues(r)[0].ravel()
        polys, corners = board_view_px(camera, (cols, rows), square_mm, rvec, t)
        out.append((polys, corners, (rvec, t)))
    return out


def render_bar(cam_params: dict, width_mm: float, *, tilt_deg: float = 0.0, seed: int = 0,
               centre_mm: Sequence[float] = (0.0, 0.0), **overrides: Any) -> tuple[np.ndarray, dict]:
    """Render a pin (dark bar) with one of the scenario cameras (parallel view)."""
    from ..synth import Camera, render

    p = dict(cam_params)
    p.update(overrides)
    cam = Camera(mm_per_px=p["mm_per_px"], image_size=tuple(p["image_size"]))
    poly = bar_polygon(width_mm, tilt_deg=tilt_deg, centre_mm=centre_mm,
                       length_mm=field_length_mm(cam))
    img, truth = render([poly], cam, blur_px=p["blur_px"], noise=p["noise"], dark=p["dark"],
                        bright=p["bright"], vignetting=p["vignetting"], seed=seed,
                        truth_extra={"gauge": {"kind": "pin", "diameter_mm": width_mm,
                                               "tilt_deg": tilt_deg},
                                     "mm_per_px": p["mm_per_px"]})
    return img, truth


def _write_png(path: Path, img: np.ndarray) -> None:
    import cv2

    if not cv2.imwrite(str(path), img):
        raise OSError(f"cannot write {path}")


def _default_cal_dir(out: Path) -> Path:
    root = Path(__file__).resolve().parents[2]
    if out.resolve() == (root / "sample_images").resolve():
        return root / "calibration"
    return out


def make_samples(out_dir: Path, *, cal_dir: Path | None = None) -> list[dict]:
    """Write one pin-gauge image per camera (PNG, with ``.truth.json``) into ``out_dir``,
    then calibrate each with our own command line into ``cal_dir``.

    ``cal_dir`` defaults to the repository's ``calibration/`` when ``out_dir`` is its
    ``sample_images/``, otherwise to ``out_dir`` itself. Returns manifest entries (see
    :mod:`profilecheck.scenario`): job ``calibration``; ``args`` = ``gauge`` ('pin'),
    ``size_mm`` and the keyword arguments of :func:`profilecheck.calibration.calibrate_from_pin`
    (``u_gauge_mm``, ``label``); ``cal`` naming the calibration file made from it;
    ``expect`` 'none' (a calibration has no verdict); ``truth_mm_per_px`` the scale the
    render used (also ``mm_per_px`` in the truth file; the calibration must hold it within
    its U).
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    entries = []
    for i, (name, cam, d_mm, tilt, cal_name, title) in enumerate(SAMPLES):
        img, truth = render_bar(cam, d_mm, tilt_deg=tilt, seed=100 + i)
        _write_png(out / f"{name}.png", img)
        (out / f"{name}.truth.json").write_text(json.dumps(truth, indent=1, sort_keys=True) + "\n")
        entries.append({"job": "calibration", "name": name, "image": f"{name}.png",
                        "truth": f"{name}.truth.json", "cal": cal_name,
                        "args": {"gauge": "pin", "size_mm": d_mm, "u_gauge_mm": DEMO_PIN_U_MM,
                                 "label": title},
                        "expect": "none", "truth_mm_per_px": cam["mm_per_px"],
                        "title": f"pin gauge {d_mm:.3f} mm, {title}"})
    make_calibrations(out, _default_cal_dir(out) if cal_dir is None else Path(cal_dir))
    return entries


def make_calibrations(sample_dir: Path, cal_dir: Path) -> list[Path]:
    """Run ``profilecheck calibrate`` on each sample pin image and write ``cal_dir/<cal>``.

    The files are the output of our own command line, so the demo's calibrations are
    exactly what a user would get from the same images.
    """
    import contextlib
    import sys

    from ..cli import main

    written = []
    for name, cam, d_mm, _tilt, cal_name, title in SAMPLES:
        target = Path(cal_dir) / cal_name
        with contextlib.redirect_stdout(sys.stderr):  # the summary is progress here
            rc = main(["calibrate", str(Path(sample_dir) / f"{name}.png"), "--pin", f"{d_mm:.3f}mm",
                       "--gauge-u", f"{DEMO_PIN_U_MM * 1000:g}um", "--label", title, "--out", str(target)])
        if rc != 0:
            raise RuntimeError(f"calibrate failed on {name} (exit {rc})")
        written.append(target)
    return written


if __name__ == "__main__":  # pragma: no cover
    import sys

    d = Path(sys.argv[1] if len(sys.argv) > 1 else "sample_images")
    ents = make_samples(d, cal_dir=Path(sys.argv[2]) if len(sys.argv) > 2 else None)
    print(json.dumps(ents, indent=1))
