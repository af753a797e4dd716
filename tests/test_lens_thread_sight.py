"""Lines of sight of an entocentric lens referred to a thread's axial section
(profilecheck.measure._thread_sight), against analytic geometry and an independent
ray caster (profilecheck.synth, which tests its own pinhole path in test_synth_pinhole)."""

import math

import numpy as np
import pytest

from profilecheck.measure._thread_sight import (SightModel, refer_to_axial_section,
                                                section_flank_x_mm)
from profilecheck.measure.helix import flank_contact_radius_mm, flank_shift_mm
from profilecheck.synth import Camera, axial_profile_iso, pinhole_limb_px


def _tangent_plane_y(r_mm, y_c, z):
    """Where the two tangent rays from (y_c, Z) to a circle of radius r about the origin
    cross z = 0: roots of Y^2 (Z^2 - r^2) + 2 r^2 y_c Y - r^2 (y_c^2 + Z^2) = 0 (distance
    from the origin to the line through (y_c, Z) and (Y, 0) equals r; derived here)."""
    return np.roots([z * z - r_mm * r_mm, 2 * r_mm * r_mm * y_c, -r_mm * r_mm * (y_c ** 2 + z * z)])


@pytest.mark.parametrize("y_c", [0.0, 2.5, -4.0])
def test_cylinder_rims_refer_to_radius(y_c):
    # Analytic: a 6 mm cylinder at Z = 50 mm shows its rims where the tangent rays cross the
    # measurement plane; y_c = 0 gives the vision-notes section 4 width D / sqrt(1 - (D/2Z)^2).
    ys = np.sort(_tangent_plane_y(3.0, y_c, 50.0))
    if y_c == 0.0:
        assert ys[1] - ys[0] == pytest.approx(6.0 / math.sqrt(1 - (6.0 / 100) ** 2), abs=1e-12)
    pts = np.column_stack([[1.0, -2.0], ys[::-1]])
    out, _ = refer_to_axial_section(pts, SightModel(0.0, y_c, 50.0))
    np.testing.assert_allclose(out[:, 1], [3.0, -3.0], rtol=0, atol=1e-12)


def test_axial_position_of_a_rim_point():
    # Analytic: the tangent point of the ray from C = (x_c, y_c, Z) to a cylinder of radius r
    # (closest approach to the axis) projected back to the plane z = 0 must be referred to
    # its own x. Forward projection built here from the tangent point, not from the module.
    x_c, y_c, z, r = -1.5, 1.0, 50.0, 2.7
    for x_true in (-6.0, 0.0, 4.0):
        ang = math.atan2(z, y_c)                         # direction to the camera, y-z plane
        dist = math.hypot(y_c, z)
        half = math.acos(r / dist)                       # tangent point angle from that line
        ty, tz = r * math.cos(ang - half), r * math.sin(ang - half)   # upper tangent point
        s = z / (z - tz)                                 # ray C -> P continued to z = 0
        X = x_c + s * (x_true - x_c)
        Y = y_c + s * (ty - y_c)
        out, tg = refer_to_axial_section(np.array([[X, Y]]), SightModel(x_c, y_c, z))
        assert out[0, 0] == pytest.approx(x_true, abs=1e-12)
        assert out[0, 1] == pytest.approx(r, abs=1e-12)
        # remaining inclination toward the axis: dx over the ray's length in its y-z plane
        assert tg[0] == pytest.approx((X - x_c) / math.hypot(Y - y_c, z), abs=1e-15)


@pytest.mark.parametrize("side", ["left", "right"])
def test_turned_parallel_shift_equals_direct_search(side):
    # Two derivations of the same graze: (1) turn each ray into its own radial plane, then the
    # parallel-view Newton solution of helix.flank_shift_mm; (2) a direct golden-section
    # search along the perspective ray (section_flank_x_mm). They share no code.
    sight = SightModel(0.3, -0.4, 50.0)
    rng = np.random.default_rng(4)
    pts = np.column_stack([rng.uniform(-7, 7, 40), rng.choice([-1, 1], 40) * rng.uniform(2.5, 2.9, 40)])
    th = math.radians(30)
    ref, tg = refer_to_axial_section(pts, sight, lead_mm=1.0)
    rho = np.abs(ref[:, 1])
    sh = np.zeros(len(pts))
    for top in (True, False):
        m = (pts[:, 1] > 0) == top
        sh[m] = flank_shift_mm(rho[m], 1.0, th, side=side, tan_gamma=tg[m], top_edge=top)
    two_step = ref[:, 0] + (sh if side == "left" else -sh)
    direct = section_flank_x_mm(pts, sight, 1.0, th, side=side, rho_mm=rho)
    np.testing.assert_allclose(two_step, direct, rtol=0, atol=1e-8)  # 0.01 nm


def test_outline_of_raycast_thread_lands_on_axial_section():
    # Independent truth: synth's ray caster (margin max_t [R(x - a phi) - r] along each line of
    # sight) finds the M6x1 outline (ISO 68-1 basic profile) through a pinhole at Z = 50 mm
    # over 5-7 mm off the principal point (gamma up to 8 deg). Every flank point referred by
    # the lens model must lie on the axial-section profile r = R(x - x0).
    cam = Camera(0.01, (900, 800), working_distance_mm=50.0, principal_px=(-150.0, 399.5))
    prof = axial_profile_iso(1.0, 6.0)
    x0 = 0.37
    cols = np.arange(0.0, 900.0, 1.5)
    sight = SightModel(0.0, 0.0, 50.0)
    r_min, r_maj = prof.info["minor_d_mm"] / 2, prof.info["major_d_mm"] / 2
    for limb, sgn in (("upper", 1.0), ("lower", -1.0)):
        guess = cam.principal[1] - sgn * 0.5 * (r_min + r_maj) / cam.mm_per_px
        rows = pinhole_limb_px(cam, prof, 1.0, cols, np.full(len(cols), guess), limb=limb,
                               x0_mm=x0, bracket_px=60.0)
        ok = np.isfinite(rows)
        plane = cam.px_to_world(np.column_stack([cols[ok], rows[ok]]))
        slope = np.gradient(plane[:, 1], plane[:, 0]) * sgn
        ref, tg = refer_to_axial_section(plane, sight, lead_mm=1.0)
        rho = np.abs(ref[:, 1])
        n_checked = 0
        for side, want in (("left", 1.0), ("right", -1.0)):
            on = (np.abs(slope - want * math.sqrt(3.0)) < 0.6) & (rho > r_min + 0.05) \
                & (rho < r_maj - 0.05)
            contact = flank_contact_radius_mm(rho[on], 1.0, math.radians(30), side=side,
                                              tan_gamma=tg[on], top_edge=(sgn > 0))
            keep = (contact > r_min + 0.03) & (contact < r_maj - 0.03)
            xs = section_flank_x_mm(plane[on][keep], sight, 1.0, math.radians(30), side=side,
                                    rho_mm=rho[on][keep])
            u = xs - x0 - (0.0 if sgn > 0 else 0.5)   # the bottom edge is the section at pi
            err = prof.radius(u) - rho[on][keep]
            assert np.max(np.abs(err)) < 1e-6, (limb, side)  # 1 nm: both exact geometry
            n_checked += int(keep.sum())
            # the naive reading (point taken where its ray crosses the plane) is far off
            naive = prof.radius(plane[on][keep][:, 0] - x0 - (0.0 if sgn > 0 else 0.5))
            assert np.max(np.abs(naive - rho[on][keep])) > 0.03
        assert n_checked > 100


def test_bad_calls():
    with pytest.raises(ValueError, match="z_mm"):
        SightModel(0.0, 0.0, 0.0)
    with pytest.raises(ValueError, match="sr_mm"):
        refer_to_axial_section(np.zeros((3, 3)), SightModel(0, 0, 50))
    with pytest.raises(ValueError, match="side"):
        section_flank_x_mm(np.zeros((1, 2)) + 1, SightModel(0, 0, 50), 1.0, 0.5, side="up",
                           rho_mm=np.ones(1))
