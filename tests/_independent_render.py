"""Independent renderer for acceptance tests: backlit silhouettes of known geometry.

Written apart from ``profilecheck.synth`` (nothing of profilecheck is imported here) so
that the measurements are judged on images they were not built with. The pipeline:

1. exact polygons in world millimetres (world y up; the camera flips it to image rows),
2. rasterised on a supersampled grid (``ss`` columns x ``ss_y`` rows per pixel) by an
   even-odd scanline fill written here: exact coverage along each sample row, rows point
   sampled (``cv2.fillPoly`` was not used: it also fills the samples its outline passes
   through, which widens every polygon by about one sample),
3. Gaussian blur applied in the supersampled domain (sigma given in image pixels),
4. box-averaged down to pixels (each pixel = mean of its ss x ss samples),
5. backlight vignetting, cos^4 law: factor cos^4(atan(t * r / r_corner)) with ``t`` set so
   that the image corner gets ``1 - vignetting``,
6. photon-like noise: Poisson electrons at ``gain_dn_per_e`` plus Gaussian read noise,
7. optional gamma encoding ``I ** (1 / gamma)`` and optional JPEG, 8-bit output.

Pixel convention (as docs/conventions.md): pixel (row 0, col 0) covers x, y in
[-0.5, 0.5), integer coordinates at pixel centres.  Known limit of step 2: an edge
exactly parallel to the image rows is quantised to 1/ss_y px (error at most 1/(2 ss_y) px,
0.06 px at 8); tilted edges average it out.

Thread silhouettes are made by brute force: for each image position along the axis the
outline radius is the largest projected height ``R(x - a phi) cos(phi)`` over a dense set
of helix angles ``phi`` of the solid ``rho <= R(z - a phi)`` (a = lead / 2 pi), the axial
profile ``R`` being the ISO 68-1 basic 60 deg profile written out below.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import cv2
import numpy as np

SQRT3 = math.sqrt(3.0)


# ------------------------------------------------------------------ camera
@dataclass(frozen=True)
class View:
    """Telecentric view: world mm (x right, y up) to image px (col, row).

    ``centre_mm`` is imaged at the image centre ((w - 1) / 2, (h - 1) / 2); the world is
    turned by ``rotation_deg`` (counter-clockwise in the world, i.e. clockwise-negative on
    screen) before scaling.
    """

    mm_per_px: float
    size: tuple[int, int]  # (w, h)
    rotation_deg: float = 0.0
    centre_mm: tuple[float, float] = (0.0, 0.0)

    def to_px(self, pts_mm) -> np.ndarray:
        p = np.asarray(pts_mm, dtype=float) - np.asarray(self.centre_mm, dtype=float)
        a = math.radians(self.rotation_deg)
        c, s = math.cos(a), math.sin(a)
        xr = c * p[:, 0] - s * p[:, 1]
        yr = s * p[:, 0] + c * p[:, 1]
        w, h = self.size
        return np.column_stack([(w - 1) / 2 + xr / self.mm_per_px,
                                (h - 1) / 2 - yr / self.mm_per_px])


# ------------------------------------------------------------------ raster pipeline
def _spans(polys_px, ss_x: int, ss_y: int, n_rows: int):
    """Even-odd scanline spans of each polygon on sample rows: (row, u_start, u_end).

    Sample row k has its centre at y = -0.5 + (k + 0.5) / ss_y px; u = (x + 0.5) * ss_x is
    the x position in sample units (sample column j covers u in [j, j + 1)).
    An edge counts on a row when min(y0, y1) <= y_row < max(y0, y1) (half-open, so a
    vertex is never counted twice).
    """
    rows_all, ua_all, ub_all = [], [], []
    for p in polys_px:
        p = np.asarray(p, dtype=float)
        q = np.roll(p, -1, axis=0)
        y0, y1 = p[:, 1], q[:, 1]
        lo, hi = np.minimum(y0, y1), np.maximum(y0, y1)
        k0 = np.ceil((lo + 0.5) * ss_y - 0.5).astype(np.int64)
        k1 = np.ceil((hi + 0.5) * ss_y - 0.5).astype(np.int64)  # first row not crossed
        k0 = np.clip(k0, 0, n_rows)
        k1 = np.clip(k1, 0, n_rows)
        cnt = np.maximum(k1 - k0, 0)
        if cnt.sum() == 0:
            continue
        e = np.repeat(np.arange(len(p)), cnt)
        start = np.repeat(k0, cnt)
        off = np.arange(cnt.sum()) - np.repeat(np.cumsum(cnt) - cnt, cnt)
        k = start + off
        yc = -0.5 + (k + 0.5) / ss_y
        t = (yc - y0[e]) / (y1[e] - y0[e])
        x = p[e, 0] + t * (q[e, 0] - p[e, 0])
        order = np.lexsort((x, k))
        k, x = k[order], x[order]
        # even-odd: consecutive crossings on the same row pair up
        assert len(k) % 2 == 0
        ka, kb = k[0::2], k[1::2]
        assert np.all(ka == kb), "open polygon"
        rows_all.append(ka)
        ua_all.append((x[0::2] + 0.5) * ss_x)
        ub_all.append((x[1::2] + 0.5) * ss_x)
    if not rows_all:
        return np.zeros(0, np.int64), np.zeros(0), np.zeros(0)
    return np.concatenate(rows_all), np.concatenate(ua_all), np.concatenate(ub_all)


def coverage(polys_px, size, *, ss: int = 8, ss_y: int | None = None,
             blur_px: float = 1.0) -> np.ndarray:
    """Dark-area fraction per pixel (float64, (h, w)) of polygons given in image px.

    The supersampled grid has ``ss`` columns and ``ss_y`` (default ``ss``) rows per
    pixel; coverage along each sample row is exact (fractional at both span ends), rows
    are point samples.  Polygons must not overlap (coverage is clipped at 1).
    """
    w, h = size
    ssy = ss if ss_y is None else ss_y
    n_rows, n_cols = h * ssy, w * ss
    k, ua, ub = _spans(polys_px, ss, ssy, n_rows)
    ua = np.clip(ua, 0, n_cols)
    ub = np.clip(ub, 0, n_cols)
    keep = ub > ua
    k, ua, ub = k[keep], ua[keep], ub[keep]
    fa = np.floor(ua).astype(np.int64)
    fb = np.floor(ub).astype(np.int64)
    # first differences of the per-sample coverage of each span (exact at both ends):
    # c[fa] = fa + 1 - ua, c[fa+1 .. fb-1] = 1, c[fb] = ub - fb  (c[fa] = ub - ua if fa == fb)
    d = np.zeros((n_rows, n_cols + 2), np.float32)
    same = fa == fb
    s, o = same, ~same
    np.add.at(d, (k[s], fa[s]), (ub[s] - ua[s]).astype(np.float32))
    np.add.at(d, (k[s], fa[s] + 1), (ua[s] - ub[s]).astype(np.float32))
    np.add.at(d, (k[o], fa[o]), (fa[o] + 1 - ua[o]).astype(np.float32))
    np.add.at(d, (k[o], fa[o] + 1), (ua[o] - fa[o]).astype(np.float32))
    np.add.at(d, (k[o], fb[o]), (ub[o] - fb[o] - 1).astype(np.float32))
    np.add.at(d, (k[o], fb[o] + 1), (fb[o] - ub[o]).astype(np.float32))
    f = np.cumsum(d, axis=1, dtype=np.float32)[:, :n_cols]
    np.clip(f, 0.0, 1.0, out=f)
    if blur_px > 0:
        f = cv2.GaussianBlur(f, (0, 0), sigmaX=blur_px * ss, sigmaY=blur_px * ssy,
                             borderType=cv2.BORDER_REPLICATE)
    # box average of each ss x ss_y block (INTER_AREA at an integer factor is exactly that)
    return cv2.resize(f, (w, h), interpolation=cv2.INTER_AREA).astype(np.float64)


def expose(cov, *, dark: float = 25.0, bright: float = 215.0, vignetting: float = 0.0,
           gain_dn_per_e: float = 0.25, read_noise_dn: float = 1.0, gamma: float = 1.0,
           jpeg_quality: int | None = None, seed: int = 0) -> np.ndarray:
    """Turn a coverage map into an 8-bit backlit camera frame (steps 5-7 of the module)."""
    h, w = cov.shape
    lin = bright * (1.0 - cov) + dark * cov
    if vignetting > 0:
        yy, xx = np.mgrid[0:h, 0:w].astype(float)
        r = np.hypot(xx - (w - 1) / 2, yy - (h - 1) / 2)
        rc = math.hypot((w - 1) / 2, (h - 1) / 2)
        t_c = math.tan(math.acos((1.0 - vignetting) ** 0.25))  # cos^4 law at the corner
        lin = lin * np.cos(np.arctan(t_c * r / rc)) ** 4
    rng = np.random.default_rng(seed)
    if gain_dn_per_e > 0:
        lin = rng.poisson(np.clip(lin, 0, None) / gain_dn_per_e) * gain_dn_per_e
    if read_noise_dn > 0:
        lin = lin + rng.normal(0.0, read_noise_dn, lin.shape)
    lin = np.clip(lin, 0.0, 255.0)
    if gamma != 1.0:
        lin = 255.0 * (lin / 255.0) ** (1.0 / gamma)
    img = np.clip(np.round(lin), 0, 255).astype(np.uint8)
    if jpeg_quality is not None:
        ok, buf = cv2.imencode(".jpg", img, [cv2.IMWRITE_JPEG_QUALITY, int(jpeg_quality)])
        assert ok
        img = cv2.imdecode(buf, cv2.IMREAD_GRAYSCALE)
    return img


def render(polys_mm, view: View, *, ss: int = 8, blur_px: float = 1.0, **expose_kw) -> np.ndarray:
    """Polygons in world mm -> 8-bit image through ``view`` (all steps of the module)."""
    polys_px = [view.to_px(p) for p in polys_mm]
    return expose(coverage(polys_px, view.size, ss=ss, blur_px=blur_px), **expose_kw)


def as_float(img: np.ndarray) -> np.ndarray:
    """uint8 frame -> float array in [0, 1] (what ``load_image`` gives)."""
    return img.astype(float) / 255.0


# ------------------------------------------------------------------ scenes
def pin_polygon(diameter_mm: float, *, axis_angle_deg: float = 2.0, length_mm: float = 100.0,
                centre_mm=(0.0, 0.0)) -> np.ndarray:
    """Parallel projection of a pin gauge: a band of width D, axis at ``axis_angle_deg``."""
    a = math.radians(axis_angle_deg)
    u = np.array([math.cos(a), math.sin(a)])
    n = np.array([-u[1], u[0]])
    c = np.asarray(centre_mm, dtype=float)
    L, r = length_mm / 2, diameter_mm / 2
    return np.array([c - L * u - r * n, c + L * u - r * n, c + L * u + r * n, c - L * u + r * n])


def micrometer_polygons(spacing_mm: float, line_width_mm: float, n_lines: int, *,
                        angle_deg: float = 1.0, length_mm: float = 50.0) -> list[np.ndarray]:
    """Stage micrometer: ``n_lines`` dark lines, centres ``spacing_mm`` apart along the
    direction ``angle_deg`` from world x, centred on the origin."""
    a = math.radians(angle_deg)
    u = np.array([math.cos(a), math.sin(a)])  # spacing direction
    v = np.array([-u[1], u[0]])  # along each line
    out = []
    for k in range(n_lines):
        c = (k - (n_lines - 1) / 2) * spacing_mm * u
        hw, L = line_width_mm / 2, length_mm / 2
        out.append(np.array([c - hw * u - L * v, c + hw * u - L * v, c + hw * u + L * v,
                             c - hw * u + L * v]))
    return out


def iso_radius(z_mm, pitch_mm: float, major_d_mm: float, *, root: str = "flat") -> np.ndarray:
    """ISO 68-1 basic external profile radius at axial position z (crest centre at z = 0).

    H = sqrt(3)/2 P; crest flat P/8 at d/2; flanks at 30 deg to the normal to the axis;
    root ``'flat'``: the basic P/4 flat at d1/2 = d/2 - 5H/8; ``'radius'``: an arc of
    radius H/6 tangent to both flanks, bottom at d3/2 = d/2 - 17H/24 (ISO 68-1 / design
    root of the external thread).
    """
    P = float(pitch_mm)
    H = SQRT3 / 2 * P
    R = major_d_mm / 2
    t = np.abs(np.mod(np.asarray(z_mm, dtype=float) + P / 2, P) - P / 2)  # 0..P/2 from crest
    r = R - (t - P / 16) * SQRT3  # flank: radial drop = axial run / tan 30
    r = np.minimum(r, R)
    if root == "flat":
        r = np.maximum(r, R - 5 * H / 8)
    elif root == "radius":
        rr = H / 6
        # arc centre on the groove axis (t = P/2), rr/sin30 = 2 rr above the sharp root apex
        apex = R + H / 8 - H
        cy = apex + 2 * rr
        tt = P / 2 - t  # distance from the groove centre
        # tangent points at |tt| = rr cos 30
        on_arc = tt < rr * SQRT3 / 2
        arc = cy - np.sqrt(np.clip(rr * rr - tt * tt, 0, None))
        r = np.where(on_arc, arc, r)
    else:
        raise ValueError(f"root must be 'flat' or 'radius', got {root!r}")
    return r


def helical_outline(x_mm, pitch_mm: float, major_d_mm: float, *, lead_mm=None, root="flat",
                    n_phi: int = 2001) -> np.ndarray:
    """Top outline radius of a helical thread seen square to its axis, by brute force.

    y_top(x) = max over phi of R(x - a phi) cos(phi), a = lead / (2 pi); phi sampled on
    [-phi_max, phi_max] with phi_max = acos(minor / major) (beyond it no point can reach
    the outline), then refined around the best sample by a second dense pass.
    """
    P = float(pitch_mm)
    L = float(lead_mm if lead_mm is not None else P)
    a = L / (2 * math.pi)
    x = np.asarray(x_mm, dtype=float)
    R = major_d_mm / 2
    rmin = R - 17 * SQRT3 / 2 * P / 24 - 1e-9
    phi_max = math.acos(rmin / R)
    phi = np.linspace(-phi_max, phi_max, n_phi)
    out = np.empty_like(x)
    step = phi[1] - phi[0]
    fine = np.linspace(-step, step, 81)
    for i0 in range(0, len(x), 512):
        xs = x[i0:i0 + 512, None]
        y = iso_radius(xs - a * phi[None, :], P, major_d_mm, root=root) * np.cos(phi)[None, :]
        k = np.argmax(y, axis=1)
        p2 = phi[k][:, None] + fine[None, :]
        y2 = iso_radius(xs - a * p2, P, major_d_mm, root=root) * np.cos(p2)
        out[i0:i0 + 512] = y2.max(axis=1)
    return out


def thread_polygons(pitch_mm: float, major_d_mm: float, *, x0_mm: float, x1_mm: float,
                    helical: bool = True, root: str = "flat", both: bool = True,
                    body_bottom_mm: float | None = None, step_mm: float | None = None,
                    lead_mm=None) -> list[np.ndarray]:
    """Silhouette of a single-start right-hand thread, axis on world x (y = 0).

    ``helical=True``: the brute-force outline (top limb y_top(x); bottom limb
    -y_top(x - L/2)); ``False``: the axial section (top R(x), bottom -R(x - P/2)).
    ``both=False`` gives only the top limb, closed far below at ``body_bottom_mm``.
    """
    step = step_mm if step_mm is not None else pitch_mm / 2000
    x = np.arange(x0_mm, x1_mm + step / 2, step)
    L = float(lead_mm if lead_mm is not None else pitch_mm)

    def top(xx):
        if helical:
            return helical_outline(xx, pitch_mm, major_d_mm, lead_mm=L, root=root)
        return iso_radius(xx, pitch_mm, major_d_mm, root=root)

    yt = top(x)
    upper = np.column_stack([x, yt])
    if both:
        yb = -top(x - L / 2)
        lower = np.column_stack([x, yb])[::-1]
        return [np.vstack([upper, lower])]
    bottom = body_bottom_mm if body_bottom_mm is not None else -major_d_mm
    return [np.vstack([upper, [[x[-1], bottom], [x[0], bottom]]])]


def tool_polygon(*, half_left_deg: float, half_right_deg: float, tip_flat_mm: float = 0.0,
                 nose_radius_mm: float = 0.0, shank_width_mm: float = 3.0,
                 flank_length_mm: float | None = None, shank_length_mm: float = 20.0,
                 rotation_deg: float = 0.0, tip_mm=(0.0, 0.0), n_arc: int = 400) -> np.ndarray:
    """Top view of a threading tool, point up (+y), virtual sharp point at ``tip_mm``.

    Flanks at ``half_left_deg`` / ``half_right_deg`` from the shank axis (world y); tip cut
    by a flat of ``tip_flat_mm`` square to the axis, or rounded by an arc of
    ``nose_radius_mm`` tangent to both flanks; with ``flank_length_mm=None`` each flank runs
    down until it meets its shank side at +/- shank_width/2 (a point ground on the end of a
    square blank); with a length, shoulders square to the axis go out to the shank sides.  The whole tool is turned by
    ``rotation_deg`` (counter-clockwise in the world) about the virtual point.
    """
    aL, aR = math.radians(half_left_deg), math.radians(half_right_deg)
    dl = np.array([-math.sin(aL), -math.cos(aL)])  # down the left flank from the point
    dr = np.array([math.sin(aR), -math.cos(aR)])
    W = shank_width_mm / 2
    if flank_length_mm is None:
        pl = (W / math.sin(aL)) * dl
        pr = (W / math.sin(aR)) * dr
    else:
        pl = flank_length_mm * dl
        pr = flank_length_mm * dr
    if tip_flat_mm > 0 and nose_radius_mm > 0:
        raise ValueError("tip flat or nose radius, not both")
    if tip_flat_mm > 0:
        # flat at depth h below the point: width = h (tan aL + tan aR)
        h = tip_flat_mm / (math.tan(aL) + math.tan(aR))
        tip = [np.array([-h * math.tan(aL), -h]), np.array([h * math.tan(aR), -h])]
    elif nose_radius_mm > 0:
        rho = nose_radius_mm
        # arc centre on the angle bisector, at distance rho / sin(half included) from point
        beta = (aL + aR) / 2
        bis = -(dl + dr) / np.linalg.norm(dl + dr)  # points from the body to the point
        c = -bis * rho / math.sin(beta)
        # tangent points: foot of the perpendicular from c to each flank line
        tl = np.dot(c, dl) * dl
        tr = np.dot(c, dr) * dr
        a0 = math.atan2(tl[1] - c[1], tl[0] - c[0])
        a1 = math.atan2(tr[1] - c[1], tr[0] - c[0])
        if a1 > a0:
            a1 -= 2 * math.pi
        ang = np.linspace(a0, a1, n_arc)
        tip = list(np.column_stack([c[0] + rho * np.cos(ang), c[1] + rho * np.sin(ang)]))
    else:
        tip = [np.zeros(2)]
    yl, yr = pl[1], pr[1]
    ybot = min(yl, yr) - shank_length_mm
    poly = np.vstack([[-W, ybot], [-W, yl], pl, *tip, pr, [W, yr], [W, ybot]])
    a = math.radians(rotation_deg)
    Rm = np.array([[math.cos(a), -math.sin(a)], [math.sin(a), math.cos(a)]])
    return poly @ Rm.T + np.asarray(tip_mm, dtype=float)


def centre_and_tool_polygons(*, height_offset_mm: float, gap_mm: float = 1.0,
                             centre_body_d_mm: float = 6.0, centre_length_mm: float = 10.0,
                             clearance_deg: float = 10.0, top_slope_deg: float = 0.0,
                             tool_depth_mm: float = 3.0, tool_length_mm: float = 20.0,
                             axis_y_mm: float = 0.0) -> tuple[list[np.ndarray], np.ndarray]:
    """Side view at the lathe: a 60 deg centre (axial section, point to +x at the origin
    of x, axis at ``axis_y_mm``) and a tool coming from +x whose top face passes through the
    tip at ``height_offset_mm`` above the axis, rising toward the tip by ``top_slope_deg``,
    with the front face falling away under the tip at ``clearance_deg``.

    Returns (polygons, tip_mm).
    """
    r = centre_body_d_mm / 2
    cone_len = r / math.tan(math.radians(30.0))
    cone = np.array([[0.0, axis_y_mm], [-cone_len, axis_y_mm + r],
                     [-cone_len - centre_length_mm, axis_y_mm + r],
                     [-cone_len - centre_length_mm, axis_y_mm - r],
                     [-cone_len, axis_y_mm - r]])
    tip = np.array([gap_mm, axis_y_mm + height_offset_mm])
    s = math.radians(top_slope_deg)
    back = tip + tool_length_mm * np.array([math.cos(s), -math.sin(s)])
    cl = math.radians(clearance_deg)
    under = tip + tool_depth_mm * np.array([math.tan(cl), -1.0])
    tool = np.array([tip, back, [back[0], under[1]], under])
    return [cone, tool], tip
