"""Pinhole (entocentric) renders of a helical thread by ray casting, against the exact
parallel outline and the cylinder perspective formula of vision-notes section 4."""

import math

import numpy as np
import pytest

from profilecheck.synth import Camera, axial_profile_iso, ray_hits, render_thread


def test_pinhole_thread_raycast():
    # Far projection centre (Z = 1e7 mm): the ray-cast outline equals the exact parallel
    # outline (perspective terms ~ z/Z < 1e-7); at Z = 40 mm the crest, a cylinder under the
    # projection centre, reads R / sqrt(1 - (R/Z)^2) in its axial plane (vision-notes s4).
    for z, check in ((1e7, "parallel"), (40.0, "crest")):
        cam = Camera(0.01, (60, 1080), working_distance_mm=z)
        img, t = render_thread(cam, pitch_mm=1.0, major_d_mm=10.0, thread_length_mm=1.2,
                               x_start_mm=-0.6, noise=0.0, bit_depth=16)
        rc = np.array(t["thread"]["outline_px_raycast"]["upper"])
        if check == "parallel":
            par = np.array(t["thread"]["outline_px"]["upper"])
            o = np.argsort(par[:, 0])
            # 0.5 px column spacing: the parallel outline is interpolated at the same columns
            d = rc[:, 1] - np.interp(rc[:, 0], par[o, 0], par[o, 1])
            assert np.max(np.abs(d)) < 2e-3
        else:
            v0 = cam.principal[1]
            crest = (v0 - rc[:, 1].min()) * cam.mm_per_px
            assert crest == pytest.approx(5.0 / math.sqrt(1 - (5.0 / z) ** 2), abs=1e-6)


def test_ray_hits_far_and_near():
    # Analytic: a ray along -z at height eta above the axis meets a 10 mm crest cylinder
    # (crest flat under it) iff eta <= 5; rays that pass beyond the major diameter miss.
    prof = axial_profile_iso(1.0, 10.0)
    a = 1.0 / (2 * math.pi)
    etas = np.array([4.9999, 5.0 - 1e-7, 5.0 + 1e-7, 5.2])
    o = np.column_stack([np.zeros(4), etas, np.full(4, 1e6)])
    d = np.tile([0.0, 0.0, -1.0], (4, 1))
    np.testing.assert_array_equal(ray_hits(prof, a, o, d), [True, True, False, False])
