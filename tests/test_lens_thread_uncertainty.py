"""Uncertainty of thread values through an ordinary lens, from the lens calibration itself.

The lens parameters' own standard uncertainties (principal point, working distance Z) are
propagated into every value by finite differences (GUM 5.1.3), and the helix model term
with a lens is 2 % of the per-point correction instead of 10 % (measure/_thread_values.py).
Scenes: pinhole ray-cast renders (profilecheck.synth) as tests/test_lens_thread_measure.py:
Z = 50 mm, 10 um/px, f = 5000 px, k1 = -1.0, reduced fields made by placing the principal
point where it lies for a crop of the left, centre and right thirds of a 16 mm field.
Truth: ISO 68-1 basic profile (d2 = d - 0.649519 P, flanks 30 deg).
"""

import math
from dataclasses import replace

import numpy as np
import pytest

from profilecheck.calibration import Calibration, Lens, load_calibration, save_calibration
from profilecheck.measure.thread import measure_thread

Z_MM = 50.0
K1 = -1.0
W = 480
NAN = float("nan")


def _pp(third, w, h):
    # principal point of a w px wide crop ending at the 8 mm edge of a 16 mm field (left,
    # right) or centred on it: the 480 px crops span 3.2-8.0 mm, the 640 px ones 1.6-8.0 mm
    return {"left": (800.0, (h - 1) / 2), "centre": ((w - 1) / 2, (h - 1) / 2),
            "right": (w - 800.0, (h - 1) / 2)}[third]


def _x0(third, w, length):
    edge = 8.0 - 0.01 * w - 1.1   # thread starts 1.1 mm inside the crop's inner side
    return {"left": -edge - length, "centre": -0.5 * length, "right": edge}[third]


@pytest.fixture(scope="module")
def grid_u():
    """Lens uncertainties from a grid fit of rendered board corners with 0.03 px corner
    noise (vision-notes section 0: corner detection leaves 0.03-0.04 px)."""
    from profilecheck.calibration.grid import calibrate_lens_from_points, grid_object_points
    from profilecheck.scenario.calibration import board_views
    from profilecheck.synth import Camera
    cam = Camera(0.01, (1600, 1200), working_distance_mm=Z_MM, k1=-0.75)
    rng = np.random.default_rng(7)
    corners = [c + rng.normal(0.0, 0.03, c.shape)
               for _, c, _ in board_views(cam, (11, 8), 1.0, n_views=10, seed=3)]
    g = calibrate_lens_from_points([grid_object_points((11, 8), 1.0)] * len(corners), corners,
                                   (1600, 1200), terms="k1k2")
    return g


@pytest.fixture(scope="module")
def scenes():
    from profilecheck.synth import Camera, render_thread
    out = {}
    for desig, p, d, w, h, length in (("M6x1-6g", 1.0, 6.0, W, 700, 7.2),
                                      ("M10x1.5-6g", 1.5, 10.0, 640, 1150, 9.0)):
        for third in ("left", "centre", "right"):
            pp = _pp(third, w, h)
            cam = Camera(0.01, (w, h), working_distance_mm=Z_MM, k1=K1, principal_px=pp)
            img, truth = render_thread(cam, pitch_mm=p, major_d_mm=d, thread_length_mm=length,
                                       x_start_mm=_x0(third, w, length), blur_px=1.0,
                                       noise=1.0, seed=6)
            out[(desig, third)] = (img.astype(float) / 255.0, truth["thread"], pp, (w, h))
    return out


def _cal(pp, size, g):
    # Two-gauge style calibration (offset not absorbed in the scale): u(b) = 0.1 px and a
    # 2e-4 relative scale uncertainty (common practice, no source); lens uncertainties from
    # the grid fit of ``grid_u``.
    f = Z_MM / 0.01
    lens = Lens(f, f, pp[0], pp[1], dist=(K1, 0.0, 0.0, 0.0, 0.0), working_distance_mm=Z_MM,
                u_fx_px=g.lens.u_fx_px, u_fy_px=g.lens.u_fy_px, u_cx_px=g.lens.u_cx_px,
                u_cy_px=g.lens.u_cy_px, u_working_distance_mm=g.lens.u_working_distance_mm)
    return Calibration(0.01, 2e-6, tuple(size), edge_offset_px=0.0, u_edge_offset_px=0.1,
                       blur_px=1.0, lens=lens)


def _old(cal):
    return replace(cal, lens=replace(cal.lens, u_fy_px=NAN, u_cx_px=NAN, u_cy_px=NAN,
                                     u_working_distance_mm=NAN))


def test_grid_fit_keeps_lens_uncertainties(grid_u):
    # Expanded (k = 2) from the fit's standard deviations (stdDeviationsIntrinsics).
    g = grid_u
    assert g.lens.u_cx_px == pytest.approx(2 * g.std_cx_px, rel=1e-12)
    assert g.lens.u_cy_px == pytest.approx(2 * g.std_cy_px, rel=1e-12)
    assert g.lens.u_fy_px == pytest.approx(2 * g.std_fy_px, rel=1e-12)
    assert 0 < g.lens.u_cx_px < 5 and 0 < g.lens.u_cy_px < 5
    # Z from the board views: at least half their range over sqrt(3), times 2 (grid.py)
    z = np.asarray(g.view_distance_mm)
    assert g.lens.u_working_distance_mm >= 2 * 0.5 * np.ptp(z) / math.sqrt(3) - 1e-12
    assert math.isfinite(g.lens.u_working_distance_mm)


def test_lens_uncertainties_round_trip_and_old_files(tmp_path, grid_u):
    cal = _cal((239.5, 349.5), (W, 700), grid_u)
    save_calibration(cal, tmp_path / "c.json")
    back = load_calibration(tmp_path / "c.json").lens
    for k in ("u_fx_px", "u_fy_px", "u_cx_px", "u_cy_px", "u_working_distance_mm"):
        assert getattr(back, k) == getattr(cal.lens, k)
    d = cal.to_dict()
    for k in ("u_fy_px", "u_cx_px", "u_cy_px", "u_working_distance_mm"):
        del d["lens"][k]
    old = Calibration.from_dict(d).lens
    assert all(math.isnan(getattr(old, k)) for k in ("u_fy_px", "u_cx_px", "u_cy_px",
                                                     "u_working_distance_mm"))
    assert old.u_fx_px == cal.lens.u_fx_px


def test_old_lens_record_keeps_the_conservative_rule(scenes, grid_u):
    img, th, pp, h = scenes[("M6x1-6g", "centre")]
    r = measure_thread(img, _old(_cal(pp, h, grid_u)), spec="M6x1-6g")
    assert "lens_uncertainty" not in r.helix
    assert any("without uncertainties" in n for n in r.notes)
    assert any("10 %" in t for t in r.helix["uncertainty_terms"])


@pytest.mark.parametrize("desig", ["M6x1-6g", "M10x1.5-6g"])
@pytest.mark.parametrize("third", ["left", "centre", "right"])
def test_u_smaller_and_still_covers(scenes, grid_u, desig, third):
    img, th, pp, h = scenes[(desig, third)]
    cal = _cal(pp, h, grid_u)
    new = measure_thread(img, cal, spec=desig)
    before = measure_thread(img, _old(cal), spec=desig)
    m, m0 = new.measurements, before.measurements
    # same values, only the budget differs
    assert m["pitch_diameter"].value == pytest.approx(m0["pitch_diameter"].value, abs=1e-12)
    assert m["pitch_diameter"].u < 0.8 * m0["pitch_diameter"].u
    for key, truth in (("pitch_diameter", th["pitch_d_mm"]), ("major_diameter", th["major_d_mm"]),
                       ("flank_left", th["flank_left_deg"]), ("flank_right", th["flank_right_deg"]),
                       ("pitch", th["pitch_mm"])):
        assert abs(m[key].value - truth) <= m[key].u, key
    lu = new.helix["lens_uncertainty"]
    assert lu["passes"] == 6
    assert set(lu["terms_expanded"]) == set(m)
    assert any("lens parameters" in t for t in new.helix["uncertainty_terms"])
    assert any("principal point and working distance" in n for n in new.notes)


@pytest.mark.parametrize("third", ["centre", "right"])
def test_z_sensitivity_matches_a_direct_remeasure(scenes, grid_u, third):
    # Numeric reference outside the propagation code: the whole measurement run again with
    # Z moved by +/- 1 mm; the sensitivity per mm must equal the propagated one (the model
    # is smooth in Z over that range: the terms are of order (Y/Z)^2).
    img, th, pp, h = scenes[("M6x1-6g", third)]
    cal = _cal(pp, h, grid_u)
    r = measure_thread(img, cal, spec="M6x1-6g")
    lu = r.helix["lens_uncertainty"]
    std_z = lu["inputs_std"]["working_distance_mm"]
    v = {}
    for dz in (1.0, -1.0):
        c = replace(cal, lens=replace(cal.lens, working_distance_mm=Z_MM + dz))
        v[dz] = measure_thread(img, c, spec="M6x1-6g").measurements
    for key in ("pitch_diameter", "major_diameter", "flank_left"):
        direct = 0.5 * abs(v[1.0][key].value - v[-1.0][key].value)  # per mm
        prop = lu["per_input_std"]["working_distance_mm"][key] / std_z
        assert prop == pytest.approx(direct, rel=0.05, abs=1e-7), key


def test_z_sensitivity_of_the_major_diameter_is_the_cylinder_rule(scenes, grid_u):
    # Analytic geometry (measure/_thread_sight.py Notes, vision-notes section 4): a rim of
    # radius r under the projection centre is seen at Y = r / sqrt(1 - (r/Z)^2) and referred
    # back as rho = Y / sqrt(1 + (Y/Z)^2), so at fixed Y, d(2 rho)/dZ = 2 (Y/Z)^3 / (1 +
    # (Y/Z)^2)^1.5. Crest levels do not move with the helix correction.
    img, th, pp, h = scenes[("M6x1-6g", "centre")]
    r = measure_thread(img, _cal(pp, h, grid_u), spec="M6x1-6g")
    lu = r.helix["lens_uncertainty"]
    prop = lu["per_input_std"]["working_distance_mm"]["major_diameter"] / \
        lu["inputs_std"]["working_distance_mm"]
    rad = 0.5 * th["major_d_mm"]
    y = rad / math.sqrt(1 - (rad / Z_MM) ** 2)
    analytic = 2 * (y / Z_MM) ** 3 / (1 + (y / Z_MM) ** 2) ** 1.5
    assert prop == pytest.approx(analytic, rel=0.1)
