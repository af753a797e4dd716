"""Scenes of known truth (gauges, scales, grids, tools, centres), checked by analytic
geometry and by OpenCV as a reference library."""

import math

import numpy as np
import pytest

from profilecheck.synth import (Camera, cone_polygon, render_centre, render_checkerboard,
                                render_gauge_block, render_pin, render_scale, render_tool,
                                render_tool_height, tool_polygon)


def _dark(img, truth):
    lv = truth["levels"]
    return (lv["bright"] - img.astype(float)) / (lv["bright"] - lv["dark"])


QUIET = dict(noise=0.0, bit_depth=16, blur_px=1.0)


def test_pin_telecentric_width():
    # Analytic: a vertical cylinder of D = 1.2 mm at 0.005 mm/px is 240 px wide in every row
    # (the coverage of a row integrates to the width).
    cam = Camera(0.005, (400, 120))
    img, t = render_pin(cam, 1.2, axis_angle_deg=90.0, **QUIET)
    rows = _dark(img, t).sum(axis=1)
    np.testing.assert_allclose(rows, 240.0, atol=2e-3)
    assert t["scene"]["apparent_width_mm"] == 1.2


def test_pin_pinhole_reads_large():
    # vision-notes s0/s4 [D]: a cylinder seen by an entocentric lens appears
    # D / sqrt(1 - (D/2Z)^2) wide in its axial plane: D = 6 mm, Z = 30 mm -> +30 um.
    z = 30.0
    cam = Camera(0.01, (800, 64), working_distance_mm=z)
    img, t = render_pin(cam, 6.0, axis_angle_deg=90.0, **QUIET)
    row = _dark(img, t)[32]                       # the row through the principal point
    width_mm = row.sum() * cam.mm_per_px          # row 32 is 0.5 px off the optical axis
    assert (width_mm - 6.0) * 1000 == pytest.approx(30.2, abs=0.3)
    assert t["scene"]["apparent_width_mm"] == pytest.approx(6 / math.sqrt(1 - (3 / z) ** 2), rel=1e-12)


def test_gauge_block_width_and_pinhole_depth():
    # Analytic: a 2.5 mm block edge-on, faces horizontal, spans 2.5 / 0.01 = 250 px of
    # every column; seen by a pinhole at Z = 50 mm with 4 mm depth, its near face (z = +2)
    # images Z/(Z - 2) larger (similar triangles), so the band grows to 250 x 50/48 px.
    cam = Camera(0.01, (96, 300))
    img, t = render_gauge_block(cam, 2.5, angle_deg=0.0, **QUIET)
    np.testing.assert_allclose(_dark(img, t).sum(axis=0), 250.0, atol=2e-3)
    pc = Camera(0.01, (96, 300), working_distance_mm=50.0)
    img, t = render_gauge_block(pc, 2.5, angle_deg=0.0, depth_mm=4.0, **QUIET)
    assert _dark(img, t)[:, 48].sum() == pytest.approx(250.0 * 50 / 48, abs=2e-3)


def test_ruled_scale_spacing():
    # Analytic: line centroids of a ruled scale lie spacing / scale px apart
    # (symmetric blurred lines keep their centroids).
    cam = Camera(0.002, (700, 200))
    img, t = render_scale(cam, spacing_mm=0.1, line_width_mm=0.01, n_lines=11, angle_deg=0.0,
                          line_length_mm=0.3, **QUIET)
    d = _dark(img, t)
    prof = d[100]
    x = np.arange(len(prof))
    cents = []
    for c in np.array(t["scene"]["line_centres_px"])[:, 0]:
        m = np.abs(x - c) < 20
        cents.append(np.sum(x[m] * prof[m]) / np.sum(prof[m]))
    np.testing.assert_allclose(np.diff(cents), 50.0, atol=1e-4)
    assert prof.sum() == pytest.approx(11 * 5.0, abs=1e-3)


def test_checkerboard_corners_match_opencv():
    # Reference library: corners equal cv2.projectPoints of the board's object points with
    # the returned pose; cv2.findChessboardCornersSB finds them within 0.06 px RMS
    # (vision-notes s0: 0.041 px RMS, 0.028 px with CALIB_CB_ACCURACY, sigma_b = 1, 2 DN).
    import cv2

    cam = Camera(0.005, (800, 600), working_distance_mm=30.0, k1=-0.15)
    img, t = render_checkerboard(cam, squares=(9, 7), square_mm=0.35, tilt_x_deg=15.0,
                                 tilt_y_deg=-10.0, spin_deg=4.0, blur_px=1.0, noise=2.0)
    s = t["scene"]
    obj = np.array(s["object_points_mm"])
    ref, _ = cv2.projectPoints(obj.reshape(-1, 1, 3), np.array(s["rvec"]), np.array(s["tvec"]),
                               cam.camera_matrix(), cam.dist_coeffs())
    truth = np.array(s["corners_px"])
    np.testing.assert_allclose(truth, ref.reshape(-1, 2), atol=1e-9)
    ok, found = cv2.findChessboardCornersSB(img, tuple(s["pattern_size"]), flags=cv2.CALIB_CB_ACCURACY)
    assert ok
    found = found.reshape(-1, 2)
    d = np.min(np.linalg.norm(found[:, None, :] - truth[None, :, :], axis=2), axis=1)
    assert np.sqrt(np.mean(d ** 2)) < 0.06


def test_tool_polygon_geometry():
    # Analytic geometry of a ground tool: flank edges at the given half-angles from the
    # shank axis, a tip flat of the given width square to the axis, the nose arc tangent
    # to both flanks at the given radius; mirroring swaps left and right.
    poly, info = tool_polygon(half_left_deg=29.0, half_right_deg=31.0, tip_flat_mm=0.2,
                              shank_width_mm=4.0)
    # vertices: shank-left bottom, left flank foot, flat left, flat right, right flank foot, ...
    fl = poly[2] - poly[1]
    fr = poly[4] - poly[3]
    assert math.degrees(math.atan2(fl[0], fl[1])) == pytest.approx(29.0, abs=1e-9)
    assert math.degrees(math.atan2(fr[0], -fr[1])) == pytest.approx(31.0, abs=1e-9)
    assert poly[3][0] - poly[2][0] == pytest.approx(0.2, abs=1e-12)
    assert poly[3][1] == pytest.approx(poly[2][1], abs=1e-12)
    poly, info = tool_polygon(nose_radius_mm=0.1, shank_width_mm=4.0)
    arc = poly[2:-2]
    c = np.array([0.0, -0.1 / math.sin(math.radians(30))])   # on the bisector, r / sin(half)
    np.testing.assert_allclose(np.hypot(*(arc - c).T), 0.1, atol=1e-12)
    m, info_m = tool_polygon(half_left_deg=25.0, half_right_deg=35.0, mirror=True)
    assert (info_m["half_left_deg"], info_m["half_right_deg"]) == (35.0, 25.0)


def test_tool_render_area():
    # Analytic: the dark coverage of a rendered tool equals its polygon area (shoelace),
    # inside the frame; here the whole tip region is in frame and the shank runs out.
    cam = Camera(0.01, (300, 300))
    img, t = render_tool(cam, half_left_deg=30.0, half_right_deg=30.0, tip_flat_mm=0.3,
                         shank_width_mm=1.0, tip_mm=(0.0, 1.0), shank_length_mm=0.5, **QUIET)
    poly, _ = tool_polygon(half_left_deg=30.0, half_right_deg=30.0, tip_flat_mm=0.3,
                           shank_width_mm=1.0, tip_mm=(0.0, 1.0), shank_length_mm=0.5)
    x, y = poly[:, 0], poly[:, 1]
    area_px = 0.5 * abs(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y)) / 0.01 ** 2
    assert _dark(img, t).sum() == pytest.approx(area_px, abs=0.01)


def test_centre_cone_axis_is_bisector():
    # 60 deg centre: both cone edges at 30 deg from the axis (analytic).
    p = cone_polygon(point_mm=(1.0, 2.0), half_angle_deg=30.0, body_d_mm=4.0, axis_angle_deg=180.0)
    e1, e2 = p[1] - p[0], p[4] - p[0]
    axis = np.array([-1.0, 0.0])
    for e in (e1, e2):
        assert math.degrees(math.acos(e @ axis / np.linalg.norm(e))) == pytest.approx(30.0, abs=1e-12)
    img, t = render_centre(Camera(0.01, (200, 150)), point_mm=(0.3, 0.0), **QUIET)
    assert t["scene"]["point_px"] == pytest.approx([129.5, 74.5])


def test_tool_height_offset_recovered_from_image():
    # Analytic: the horizontal top face of the tool at y = axis + offset; the dark run of a
    # column through the tool reaching the bottom of the frame ends at that edge.
    cam = Camera(0.005, (200, 400))
    for off in (0.1, -0.0625):
        img, t = render_tool_height(cam, height_offset_mm=off, reference="point", tip_x_mm=0.2,
                                    gap_mm=0.3, ref_diameter_mm=1.0, **QUIET)
        col = _dark(img, t)[:, 198]  # right of where the clearance face leaves the frame
        v_edge = (len(col) - 0.5) - col.sum()      # rows below the edge are dark
        y_edge = cam.px_to_world(np.array([[198.0, v_edge]]))[0, 1]
        assert y_edge - t["scene"]["axis_y_mm"] == pytest.approx(off, abs=1e-5)
        assert t["scene"]["height_offset_mm"] == off


def test_truth_is_json():
    # The demo writes every truth dict as JSON beside its image (profilecheck.scenario).
    import json

    from profilecheck.synth import render_checkerboard as board

    cam = Camera(0.01, (80, 60), working_distance_mm=40.0, k1=-0.1)
    for img, t in (render_pin(cam, 0.3), board(cam, squares=(4, 3), square_mm=0.1),
                   render_tool(cam, nose_radius_mm=0.02, shank_width_mm=0.3)):
        back = json.loads(json.dumps(t))
        assert back["camera"]["mode"] == "pinhole" and back["scene"]["kind"]
