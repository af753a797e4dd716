"""Scenes of known truth: gauges, scales, calibration grids, tools, centres and bars.

Every function renders through :func:`render` and returns ``(img, truth)``; the scene's
own numbers sit under ``truth['scene']``. World mm, +y up (docs/conventions.md).
"""

from __future__ import annotations

import math
from typing import Any, Sequence

import numpy as np

from ._camera import Camera
from ._render import arc_points, render

__all__ = ["render_pin", "render_gauge_block", "render_scale", "render_checkerboard",
           "render_tool", "render_centre", "render_bar", "render_tool_height",
           "cylinder_silhouette_px", "tool_polygon", "cone_polygon"]


def _rot(a_deg: float) -> np.ndarray:
    a = math.radians(a_deg)
    return np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])


def _pos(name: str, v: Any) -> float:
    f = float(v)
    if not math.isfinite(f) or f <= 0:
        raise ValueError(f"{name} must be > 0, got {v!r}")
    return f


# ------------------------------------------------------------------ cylinders
def cylinder_silhouette_px(camera: Camera, diameter_mm: float, p0_mm: Sequence[float],
                           p1_mm: Sequence[float], *, n: int = 64) -> tuple[np.ndarray, dict]:
    """Image polygon (px) of a cylinder whose axis runs from ``p0_mm`` to ``p1_mm`` in the
    measurement plane (its axis at world z = 0), and the silhouette generators.

    Telecentric: the generators lie at +-r in the measurement plane. Pinhole: the tangent
    planes through the projection centre touch the cylinder along two generators at angle
    acos(r / D) from the direction toward the centre (D its distance from the axis); their
    images bound the silhouette, which for an axis crossing the optical axis is
    2 r / sqrt(1 - (r/Z)^2) wide when referred to the axial plane (vision-notes s4).
    The end faces are drawn as the straight chords between generator ends (a gap of the
    end-face ellipse of order r^2/Z is ignored).
    """
    r = _pos("diameter_mm", diameter_mm) / 2
    p0 = np.array([float(p0_mm[0]), float(p0_mm[1]), 0.0])
    p1 = np.array([float(p1_mm[0]), float(p1_mm[1]), 0.0])
    t = p1 - p0
    if np.linalg.norm(t) == 0:
        raise ValueError("p0_mm and p1_mm must differ")
    t /= np.linalg.norm(t)
    inplane = np.array([-t[1], t[0], 0.0])  # in the measurement plane, normal to the axis
    if camera.pinhole:
        r_, tr = camera.pose()
        centre = -r_.T @ tr
        v = centre - p0
        v -= t * (v @ t)
        dist = np.linalg.norm(v)
        if dist <= r:
            raise ValueError("the projection centre lies inside the cylinder")
        u = v / dist
        w = np.cross(t, u)
        th = math.acos(r / dist)
        gens = [r * (math.cos(th) * u + math.sin(th) * w), r * (math.cos(th) * u - math.sin(th) * w)]
    else:
        gens = [r * inplane, -r * inplane]
    if camera.has_distortion:  # straight generators image as curves: cut every ~2 px
        n = max(n, int(np.linalg.norm(p1 - p0) / (2 * camera.mm_per_px)) + 2)
    s = np.linspace(0.0, 1.0, n)[:, None]
    lines = []
    for g in gens:
        pts = p0 + g + s * (p1 - p0)
        lines.append(camera.world3_to_px(pts))
    # order so the polygon does not cross itself
    a, b = lines
    poly = np.vstack([a, b[::-1]])
    info = {"generators_px": [a[[0, -1]].tolist(), b[[0, -1]].tolist()],
            "generators_mm": [(p0 + g).tolist() for g in gens]}
    return poly, info


def render_pin(camera: Camera, diameter_mm: float, *, centre_mm: Sequence[float] = (0.0, 0.0),
               axis_angle_deg: float = 90.0, length_mm: float | None = None,
               **render_kw: Any) -> tuple[np.ndarray, dict]:
    """A pin gauge (cylinder) seen square on: two parallel edges.

    ``axis_angle_deg`` is the pin axis direction in the world (90 = vertical in the image
    when the camera is not rotated); ``length_mm`` default spans beyond the image.
    Truth: ``diameter_mm``, ``apparent_width_mm`` (referred to the measurement plane; equal
    to the diameter when telecentric, D / sqrt(1 - (D/2Z)^2) in pinhole mode with the axis
    under the projection centre), edge lines in px.
    """
    d = _pos("diameter_mm", diameter_mm)
    w, h = camera.image_size
    span = length_mm if length_mm is not None else 3 * math.hypot(w, h) * camera.mm_per_px
    t = _rot(axis_angle_deg) @ np.array([1.0, 0.0])
    c = np.asarray(centre_mm, dtype=float)
    p0, p1 = c - t * span / 2, c + t * span / 2
    poly, info = cylinder_silhouette_px(camera, d, p0, p1)
    apparent = d
    if camera.pinhole:
        z = camera.working_distance_mm
        apparent = d / math.sqrt(1 - (d / (2 * z)) ** 2)
    img, truth = render([], camera, shapes_px=[poly], **render_kw)
    truth["scene"] = {"kind": "pin", "diameter_mm": d, "apparent_width_mm": apparent,
                      "axis_angle_deg": axis_angle_deg, "centre_mm": list(map(float, c)), **info}
    return img, truth


def render_bar(camera: Camera, diameter_mm: float, *, axis_y_mm: float = 0.0,
               end_x_mm: float | None = None, axis_angle_deg: float = 0.0,
               **render_kw: Any) -> tuple[np.ndarray, dict]:
    """A turned bar along world x (optionally ending in a square face at ``end_x_mm``).
    Truth: ``diameter_mm``, ``axis_y_mm`` (the spindle axis), edge lines in px."""
    d = _pos("diameter_mm", diameter_mm)
    w, h = camera.image_size
    span = 3 * math.hypot(w, h) * camera.mm_per_px
    t = _rot(axis_angle_deg) @ np.array([1.0, 0.0])
    c = np.array([camera.centre_mm[0], axis_y_mm])
    p0 = c - t * span
    p1 = c + t * span if end_x_mm is None else c + t * (float(end_x_mm) - c[0])
    poly, info = cylinder_silhouette_px(camera, d, p0, p1)
    img, truth = render([], camera, shapes_px=[poly], **render_kw)
    truth["scene"] = {"kind": "bar", "diameter_mm": d, "axis_y_mm": axis_y_mm,
                      "axis_angle_deg": axis_angle_deg, "end_x_mm": end_x_mm, **info}
    return img, truth


# ------------------------------------------------------------------ blocks, scales
def render_gauge_block(camera: Camera, size_mm: float, *, centre_mm: Sequence[float] = (0.0, 0.0),
                       angle_deg: float = 90.0, length_mm: float | None = None,
                       depth_mm: float = 0.0, **render_kw: Any) -> tuple[np.ndarray, dict]:
    """A gauge block seen edge-on: a dark band ``size_mm`` wide between its two gauging faces.

    ``angle_deg`` is the direction of the faces in the world; ``depth_mm`` its extent along
    the line of sight (centred on the measurement plane): in pinhole mode the silhouette
    is the hull of the near and far faces (the near one images larger).
    """
    s = _pos("size_mm", size_mm)
    w, h = camera.image_size
    L = length_mm if length_mm is not None else 3 * math.hypot(w, h) * camera.mm_per_px
    R = _rot(angle_deg)
    c = np.asarray(centre_mm, dtype=float)
    local = np.array([[-L / 2, -s / 2], [L / 2, -s / 2], [L / 2, s / 2], [-L / 2, s / 2]])
    pts = local @ R.T + c
    if depth_mm and camera.pinhole:
        from scipy.spatial import ConvexHull

        z = float(depth_mm) / 2
        p3 = np.vstack([np.column_stack([pts, np.full(4, z)]), np.column_stack([pts, np.full(4, -z)])])
        px = camera.world3_to_px(p3)
        hull = px[ConvexHull(px).vertices]
        img, truth = render([], camera, shapes_px=[hull], **render_kw)
    else:
        img, truth = render([pts], camera, **render_kw)
    truth["scene"] = {"kind": "gauge_block", "size_mm": s, "angle_deg": angle_deg,
                      "centre_mm": list(map(float, c)), "depth_mm": depth_mm,
                      "faces_px": [camera.world_to_px(pts[[0, 1]]).tolist(),
                                   camera.world_to_px(pts[[3, 2]]).tolist()]}
    return img, truth


def render_scale(camera: Camera, *, spacing_mm: float = 0.1, line_width_mm: float = 0.01,
                 n_lines: int = 11, line_length_mm: float = 1.0, angle_deg: float = 0.0,
                 centre_mm: Sequence[float] = (0.0, 0.0), long_every: int = 5,
                 **render_kw: Any) -> tuple[np.ndarray, dict]:
    """A stage micrometer / ruled scale: ``n_lines`` dark lines of known width and spacing on
    a bright field; every ``long_every``-th line is 1.5x longer. ``angle_deg`` is the
    direction along which the lines are spaced. Truth: line centres (mm and px)."""
    sp = _pos("spacing_mm", spacing_mm)
    lw = _pos("line_width_mm", line_width_mm)
    if lw >= sp:
        raise ValueError("line_width_mm must be smaller than spacing_mm")
    n = int(n_lines)
    if n < 1:
        raise ValueError("n_lines must be >= 1")
    R = _rot(angle_deg)
    c = np.asarray(centre_mm, dtype=float)
    polys, centres = [], []
    for k in range(n):
        x = (k - (n - 1) / 2) * sp
        ll = line_length_mm * (1.5 if long_every and k % long_every == 0 else 1.0)
        rect = np.array([[x - lw / 2, -line_length_mm / 2], [x + lw / 2, -line_length_mm / 2],
                         [x + lw / 2, -line_length_mm / 2 + ll], [x - lw / 2, -line_length_mm / 2 + ll]])
        polys.append(rect @ R.T + c)
        centres.append(R @ np.array([x, 0.0]) + c)
    img, truth = render(polys, camera, **render_kw)
    centres = np.array(centres)
    truth["scene"] = {"kind": "scale", "spacing_mm": sp, "line_width_mm": lw, "n_lines": n,
                      "angle_deg": angle_deg, "line_centres_mm": centres.tolist(),
                      "line_centres_px": camera.world_to_px(centres).tolist()}
    return img, truth


# ------------------------------------------------------------------ calibration grid
def _board_pose(tilt_x_deg: float, tilt_y_deg: float, spin_deg: float) -> np.ndarray:
    ax, ay, az = (math.radians(v) for v in (tilt_x_deg, tilt_y_deg, spin_deg))
    rx = np.array([[1, 0, 0], [0, math.cos(ax), -math.sin(ax)], [0, math.sin(ax), math.cos(ax)]])
    ry = np.array([[math.cos(ay), 0, math.sin(ay)], [0, 1, 0], [-math.sin(ay), 0, math.cos(ay)]])
    rz = np.array([[math.cos(az), -math.sin(az), 0], [math.sin(az), math.cos(az), 0], [0, 0, 1]])
    return rx @ ry @ rz


def render_checkerboard(camera: Camera, *, squares: tuple[int, int] = (10, 7),
                        square_mm: float = 0.5, tilt_x_deg: float = 0.0, tilt_y_deg: float = 0.0,
                        spin_deg: float = 0.0, offset_mm: Sequence[float] = (0.0, 0.0, 0.0),
                        **render_kw: Any) -> tuple[np.ndarray, dict]:
    """A planar checkerboard (dark squares on a bright, transmitting field) in a given pose.

    The board frame: origin at the board centre, x along ``squares[0]`` columns, y along
    rows, z its normal; it is turned by ``spin_deg`` about its normal, then ``tilt_y_deg``
    about y and ``tilt_x_deg`` about x, and moved by ``offset_mm`` (x, y, z world mm, z
    toward the lens). The square at column 0, row 0 (lowest x and y) is dark. Square edges
    are cut every ~2 px before projection when the camera has distortion, so every corner
    is rendered exactly where the camera model puts it.

    Truth: ``corners_px`` of the (nx - 1) x (ny - 1) inner corners, row by row (x fastest),
    ``object_points_mm`` in the board frame (z = 0), ``rotation`` (3 x 3 board -> world),
    ``translation_mm`` and, in pinhole mode, ``rvec``/``tvec`` of the board in the camera
    frame for ``cv2.projectPoints``.
    """
    nx, ny = (int(v) for v in squares)
    if nx < 2 or ny < 2:
        raise ValueError("squares must be at least (2, 2)")
    sq = _pos("square_mm", square_mm)
    rb = _board_pose(tilt_x_deg, tilt_y_deg, spin_deg)
    off = np.asarray(offset_mm, dtype=float).reshape(3)
    x0, y0 = -nx * sq / 2, -ny * sq / 2
    cut = 1
    if camera.has_distortion:
        cut = max(1, int(math.ceil(sq / (2 * camera.mm_per_px))))
    t = np.linspace(0, 1, cut + 1)[:-1]

    def to_px(pts2):
        p3 = np.column_stack([pts2, np.zeros(len(pts2))]) @ rb.T + off
        return camera.world3_to_px(p3)

    polys = []
    for j in range(ny):
        for i in range(nx):
            if (i + j) % 2:
                continue
            a = np.array([x0 + i * sq, y0 + j * sq])
            corners = [a, a + [sq, 0], a + [sq, sq], a + [0, sq]]
            edge = np.vstack([corners[k] + t[:, None] * (corners[(k + 1) % 4] - corners[k])
                              for k in range(4)])
            polys.append(to_px(edge))
    obj = np.array([[x0 + i * sq, y0 + j * sq] for j in range(1, ny) for i in range(1, nx)])
    corners_px = to_px(obj)
    img, truth = render([], camera, shapes_px=polys, **render_kw)
    scene = {"kind": "checkerboard", "squares": [nx, ny], "square_mm": sq,
             "pattern_size": [nx - 1, ny - 1], "corners_px": corners_px.tolist(),
             "object_points_mm": np.column_stack([obj, np.zeros(len(obj))]).tolist(),
             "rotation": rb.tolist(), "translation_mm": off.tolist(),
             "tilt_x_deg": tilt_x_deg, "tilt_y_deg": tilt_y_deg, "spin_deg": spin_deg}
    if camera.pinhole:
        import cv2

        r_, t_ = camera.pose()
        rc = r_ @ rb
        tc = r_ @ off + t_
        scene["rvec"] = cv2.Rodrigues(rc)[0].ravel().tolist()
        scene["tvec"] = tc.tolist()
    truth["scene"] = scene
    return img, truth


# ------------------------------------------------------------------ tools and centres
def tool_polygon(*, half_left_deg: float = 30.0, half_right_deg: float = 30.0,
                 tip_flat_mm: float = 0.0, nose_radius_mm: float = 0.0, shank_width_mm: float = 6.0,
                 shank_length_mm: float = 30.0, tip_mm: Sequence[float] = (0.0, 0.0),
                 rotation_deg: float = 0.0, mirror: bool = False) -> tuple[np.ndarray, dict]:
    """Top view of a ground threading tool, point up (+y) before rotation.

    The flanks make ``half_left_deg`` / ``half_right_deg`` with the shank axis; their
    intersection (the virtual sharp point) is at ``tip_mm``. The tip is a flat of
    ``tip_flat_mm`` square to the shank axis, or an arc of ``nose_radius_mm`` tangent to
    both flanks, or sharp. ``mirror`` reflects the tool about its shank axis (left/right
    swap); ``rotation_deg`` turns it counter-clockwise about the virtual point.
    Returns the polygon (mm) and its truth numbers.
    """
    aL, aR = math.radians(float(half_left_deg)), math.radians(float(half_right_deg))
    for name, v in (("half_left_deg", half_left_deg), ("half_right_deg", half_right_deg)):
        if not 1.0 <= float(v) <= 85.0:
            raise ValueError(f"{name} must be within 1..85 degrees, got {v!r}")
    if tip_flat_mm and nose_radius_mm:
        raise ValueError("give tip_flat_mm or nose_radius_mm, not both")
    W = _pos("shank_width_mm", shank_width_mm)
    # flank directions going down from the sharp point
    dl = np.array([-math.sin(aL), -math.cos(aL)])
    dr = np.array([math.sin(aR), -math.cos(aR)])
    # where each flank meets its shank side
    sl = (W / 2) / math.sin(aL)
    sr = (W / 2) / math.sin(aR)
    pl, pr = sl * dl, sr * dr
    bottom = -max(-pl[1], -pr[1]) - float(shank_length_mm)
    if tip_flat_mm:
        f = float(tip_flat_mm)
        h = f / (math.tan(aL) + math.tan(aR))  # depth of the flat below the sharp point
        tipchain = [np.array([-h * math.tan(aL), -h]), np.array([h * math.tan(aR), -h])]
    elif nose_radius_mm:
        rho = float(nose_radius_mm)
        # centre on the bisector of the two flank lines, rho from both
        bis = (dl + dr) / np.linalg.norm(dl + dr)
        half = 0.5 * math.acos(np.clip(dl @ dr, -1, 1))
        cdist = rho / math.sin(half)
        cen = bis * cdist
        tl = dl * (cdist * math.cos(half))
        tr = dr * (cdist * math.cos(half))
        a0 = math.degrees(math.atan2(tl[1] - cen[1], tl[0] - cen[0]))
        a1 = math.degrees(math.atan2(tr[1] - cen[1], tr[0] - cen[0]))
        if a1 > a0:
            a1 -= 360.0
        tipchain = list(arc_points(cen, rho, a0, a1))
    else:
        tipchain = [np.zeros(2)]
    poly = np.vstack([np.array([-W / 2, bottom]), pl, *tipchain, pr, np.array([W / 2, bottom])])
    # a counter-clockwise ordering is not required by the renderer
    if mirror:
        poly = poly * [-1, 1]
    R = _rot(rotation_deg)
    tip = np.asarray(tip_mm, dtype=float)
    poly = poly @ R.T + tip
    hl, hr = (half_right_deg, half_left_deg) if mirror else (half_left_deg, half_right_deg)
    info = {"half_left_deg": float(hl), "half_right_deg": float(hr),
            "included_angle_deg": float(half_left_deg) + float(half_right_deg),
            "tip_flat_mm": float(tip_flat_mm or 0.0), "tip_radius_mm": float(nose_radius_mm or 0.0),
            "virtual_point_mm": tip.tolist(), "rotation_deg": float(rotation_deg),
            "bisector_tilt_deg": 0.5 * (float(hr) - float(hl)),
            "shank_axis_deg": 90.0 + float(rotation_deg), "mirror": bool(mirror)}
    return poly, info


def render_tool(camera: Camera, **kw: Any) -> tuple[np.ndarray, dict]:
    """Render :func:`tool_polygon` (keywords split between it and :func:`render`).
    Truth ``scene``: half-angles (from the shank axis, point up; left = image left),
    tip flat or radius, virtual sharp point (mm and px), bisector tilt (right - left)/2
    in degrees from the shank axis (+ toward the side of the larger half-angle, the image
    right when the point is up)."""
    tool_keys = {"half_left_deg", "half_right_deg", "tip_flat_mm", "nose_radius_mm",
                 "shank_width_mm", "shank_length_mm", "tip_mm", "rotation_deg", "mirror"}
    tk = {k: v for k, v in kw.items() if k in tool_keys}
    rk = {k: v for k, v in kw.items() if k not in tool_keys}
    poly, info = tool_polygon(**tk)
    img, truth = render([poly], camera, **rk)
    info["virtual_point_px"] = camera.world_to_px(np.array([info["virtual_point_mm"]]))[0].tolist()
    truth["scene"] = {"kind": "tool", **info}
    return img, truth


def cone_polygon(*, point_mm: Sequence[float] = (0.0, 0.0), half_angle_deg: float = 30.0,
                 body_d_mm: float = 8.0, body_length_mm: float = 30.0,
                 axis_angle_deg: float = 180.0) -> np.ndarray:
    """Side view of a lathe centre: a cone of ``half_angle_deg`` (30 = the 60 deg centre)
    from ``point_mm``, growing to ``body_d_mm``, then a cylindrical body. The axis points
    from the point into the body along ``axis_angle_deg`` (180: body to the left)."""
    a = math.radians(_pos("half_angle_deg", half_angle_deg))
    r = _pos("body_d_mm", body_d_mm) / 2
    lc = r / math.tan(a)
    local = np.array([[0.0, 0.0], [lc, r], [lc + body_length_mm, r], [lc + body_length_mm, -r], [lc, -r]])
    return local @ _rot(axis_angle_deg).T + np.asarray(point_mm, dtype=float)


def render_centre(camera: Camera, *, point_mm: Sequence[float] = (0.0, 0.0),
                  half_angle_deg: float = 30.0, body_d_mm: float = 8.0,
                  axis_angle_deg: float = 180.0, **render_kw: Any) -> tuple[np.ndarray, dict]:
    """A lathe centre seen side-on (parallel projection: the silhouette is the axial section;
    no helix). Truth: point, axis direction (the cone's bisector) and half-angle."""
    poly = cone_polygon(point_mm=point_mm, half_angle_deg=half_angle_deg, body_d_mm=body_d_mm,
                        axis_angle_deg=axis_angle_deg)
    img, truth = render([poly], camera, **render_kw)
    truth["scene"] = {"kind": "centre", "point_mm": list(map(float, point_mm)),
                      "half_angle_deg": float(half_angle_deg), "axis_angle_deg": float(axis_angle_deg),
                      "point_px": camera.world_to_px(np.array([point_mm], dtype=float))[0].tolist()}
    return img, truth


def render_tool_height(camera: Camera, *, height_offset_mm: float = 0.0, reference: str = "point",
                       axis_y_mm: float = 0.0, tip_x_mm: float = 1.0, gap_mm: float = 0.8,
                       clearance_deg: float = 10.0, tool_depth_mm: float = 4.0,
                       ref_diameter_mm: float = 8.0, **render_kw: Any) -> tuple[np.ndarray, dict]:
    """Side view at the lathe: a tool tip at ``height_offset_mm`` above the spindle axis
    (negative: below) and a reference on the axis.

    The tool comes from the right: its top (rake) face is horizontal at the tip height,
    its front face falls away under the tip at ``clearance_deg``. ``reference``: 'point'
    = a 60 deg centre whose point faces the tool ``gap_mm`` to its left; 'bar' = a
    turned bar of ``ref_diameter_mm`` ending ``gap_mm`` left of the tip.
    Truth: ``height_offset_mm`` (tool minus axis, + above, docs/conventions.md), the axis
    line and the tip in px.
    """
    if reference not in ("point", "bar"):
        raise ValueError(f"reference must be 'point' or 'bar', got {reference!r}")
    y_tip = axis_y_mm + float(height_offset_mm)
    tip = np.array([float(tip_x_mm), y_tip])
    big = 3 * math.hypot(*camera.image_size) * camera.mm_per_px
    cl = math.radians(float(clearance_deg))
    tool = np.array([tip, tip + [big, 0.0],
                     tip + [big, -tool_depth_mm],
                     tip + [tool_depth_mm * math.tan(cl), -tool_depth_mm]])
    shapes = [tool]
    if reference == "point":
        shapes.append(cone_polygon(point_mm=(tip[0] - gap_mm, axis_y_mm), body_d_mm=ref_diameter_mm,
                                   axis_angle_deg=180.0, body_length_mm=big))
    else:
        x_end = tip[0] - gap_mm
        r = ref_diameter_mm / 2
        shapes.append(np.array([[x_end - big, axis_y_mm - r], [x_end, axis_y_mm - r],
                                [x_end, axis_y_mm + r], [x_end - big, axis_y_mm + r]]))
    img, truth = render(shapes, camera, **render_kw)
    truth["scene"] = {"kind": "tool_height", "reference": reference,
                      "height_offset_mm": float(height_offset_mm), "axis_y_mm": float(axis_y_mm),
                      "tip_mm": tip.tolist(), "tip_px": camera.world_to_px(tip[None])[0].tolist(),
                      "axis_px": camera.world_to_px(np.array([[tip[0] - 5, axis_y_mm],
                                                              [tip[0], axis_y_mm]])).tolist(),
                      "caution": ("synthetic scene; at the machine follow the lathe maker's "
                                  "instructions and local safety rules")}
    return img, truth
