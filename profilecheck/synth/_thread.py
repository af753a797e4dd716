"""Threaded parts: the helical silhouette as polygons, and renders with their truth."""

from __future__ import annotations

import math
from typing import Any, Callable

import numpy as np

from ._camera import Camera
from ._helix import limb_outline
from ._profiles import LINE, AxialProfile, axial_profile_iso
from ._render import render

__all__ = ["thread_silhouette", "render_thread", "outline_values", "profile_from_polyline",
           "helix_pd_error_mm", "helix_flank_angle_deg"]


def profile_from_polyline(points: np.ndarray) -> AxialProfile:
    """An :class:`AxialProfile` from one pitch of (u, r) mm points (u increasing; the pitch is
    the u span; r at both ends must agree). Pieces are the straight chords."""
    p = np.asarray(points, dtype=float)
    if p.ndim != 2 or p.shape[1] != 2 or len(p) < 3:
        raise ValueError(f"profile polyline must be an (N >= 3, 2) array of (u, r) mm, got {p.shape}")
    if np.any(np.diff(p[:, 0]) < 0):
        raise ValueError("profile polyline: u must not decrease")
    if abs(p[0, 1] - p[-1, 1]) > 1e-9:
        raise ValueError("profile polyline: r must be equal at both ends (one whole pitch)")
    pitch = p[-1, 0] - p[0, 0]
    if pitch <= 0:
        raise ValueError("profile polyline spans no pitch")
    keep = np.diff(p[:, 0]) > 1e-12
    u0, u1 = p[:-1, 0][keep], p[1:, 0][keep]
    r0, r1 = p[:-1, 1][keep], p[1:, 1][keep]
    par = np.column_stack([r0, (r1 - r0) / (u1 - u0), np.zeros(len(u0))])
    info = {"form": "polyline", "pitch_mm": pitch, "major_d_mm": 2 * p[:, 1].max(),
            "minor_d_mm": 2 * p[:, 1].min()}
    return AxialProfile(pitch, np.full(len(u0), LINE), u0, u1, par, float(p[0, 0]), info)


def _as_profile(profile: Any, pitch_mm: float | None) -> AxialProfile:
    if isinstance(profile, AxialProfile):
        return profile
    if callable(profile):
        if pitch_mm is None:
            raise ValueError("pitch_mm is required with a callable profile")
        u = np.linspace(0.0, float(pitch_mm), 4001)
        return profile_from_polyline(np.column_stack([u, np.asarray(profile(u), dtype=float)]))
    return profile_from_polyline(profile)


def thread_silhouette(profile: AxialProfile | np.ndarray | Callable, major_d_mm: float | None = None,
                      lead_mm: float | None = None, starts: int = 1, length_mm: float = 10.0, *,
                      x_start_mm: float = 0.0, right_hand: bool = True, tilt_deg: float = 0.0,
                      pitch_mm: float | None = None, step_mm: float | None = None,
                      limbs: tuple[str, ...] = ("upper", "lower")) -> dict[str, np.ndarray]:
    """The true outline of a helical thread seen along a line of sight square to its axis
    (or tilted toward the axis by ``tilt_deg``), parallel projection.

    Parameters
    ----------
    profile : AxialProfile, (N, 2) array of (u, r) over one pitch, or callable r(u)
        Axial section of the thread at the upper limb (the plane through the axis square
        to the line of sight).
    major_d_mm : float, optional
        Checked against the profile's largest radius when given.
    lead_mm : float, optional
        Lead; default ``starts x pitch``. Must equal starts x the profile's pitch.
    starts : int
        Number of starts.
    length_mm : float
        Axial length of the outline, from ``x_start_mm``.
    right_hand : bool
    pitch_mm : float, optional
        Pitch when the profile spans several whole pitches (e.g. the polyline of
        ``ThreadSpec.axial_profile``); default the profile's span. Required for a callable.
    tilt_deg : float
        Line of sight (lens into scene) turned toward +x by this angle; for a right-hand
        thread +psi (the lead angle) makes the *lower* limb show the axial profile
        (after dividing axial distances by cos(tilt)), -psi the upper limb.
    step_mm : float, optional
        Sampling step along the axis (default P/1500; envelope corners are exact).
    limbs : tuple of {'upper', 'lower'}

    Returns
    -------
    dict with ``'upper'`` and/or ``'lower'``: (N, 2) arrays of (x, y) mm in the thread
    frame (x along the axis, y up, image abscissa x = x_axis cos(tilt) for tilted views),
    ``x`` increasing.

    Notes
    -----
    The envelope of the helicoid (contour generators of every profile piece and the
    helices of its corners), see ``_helix``; the lower limb is the upper limb of the
    thread turned through pi (profile shifted by L/2 for one start).
    """
    prof = _as_profile(profile, pitch_mm)
    starts = int(starts)
    if starts < 1:
        raise ValueError(f"starts must be >= 1, got {starts!r}")
    pitch = float(pitch_mm) if pitch_mm is not None else prof.pitch_mm
    whole = prof.pitch_mm / pitch
    if pitch <= 0 or abs(whole - round(whole)) > 1e-9 * max(1.0, whole):
        raise ValueError(f"pitch_mm ({pitch_mm}) must divide the profile's span ({prof.pitch_mm})")
    if lead_mm is None:
        lead_mm = starts * pitch
    if abs(float(lead_mm) - starts * pitch) > 1e-9 * max(1.0, float(lead_mm)):
        raise ValueError(f"lead_mm ({lead_mm}) must equal starts x pitch ({starts} x {pitch})")
    if major_d_mm is not None:
        rmax = float(prof.info.get("major_d_mm", np.nan)) / 2
        if not abs(rmax - float(major_d_mm) / 2) <= 1e-6:
            raise ValueError(f"major_d_mm {major_d_mm} does not match the profile ({2 * rmax})")
    if not float(length_mm) > 0:
        raise ValueError(f"length_mm must be > 0, got {length_mm!r}")
    c = math.cos(math.radians(tilt_deg))
    x0, x1 = float(x_start_mm) * c, (float(x_start_mm) + float(length_mm)) * c
    out = {}
    for limb in limbs:
        out[limb] = limb_outline(prof, float(lead_mm), x0, x1, right_hand=right_hand,
                                 gamma_deg=tilt_deg, limb=limb, step_mm=step_mm)
    return out


# ------------------------------------------------------------------ analytic helix terms
def helix_pd_error_mm(pitch_d_mm: float, lead_mm: float, flank_half_deg: float,
                      tilt_deg: float = 0.0) -> float:
    """First-order pitch-diameter error of an outline, (d2/2)(tan psi - tan gamma)^2 / tan^2 a
    (../shared/vision-notes.md section 5; standards-notes section 9)."""
    tpsi = lead_mm / (math.pi * pitch_d_mm)
    ta = math.tan(math.radians(flank_half_deg))
    return 0.5 * pitch_d_mm * (tpsi - math.tan(math.radians(tilt_deg))) ** 2 / ta ** 2


def helix_flank_angle_deg(pitch_d_mm: float, lead_mm: float, flank_half_deg: float,
                          tilt_deg: float = 0.0) -> float:
    """First-order apparent flank angle, tan a' = cos g [tan a + (tan^2 psi - tan^2 g)/(2 tan a)]
    (../shared/vision-notes.md section 5)."""
    tpsi = lead_mm / (math.pi * pitch_d_mm)
    ta = math.tan(math.radians(flank_half_deg))
    tg = math.tan(math.radians(tilt_deg))
    return math.degrees(math.atan(math.cos(math.radians(tilt_deg)) * (ta + (tpsi ** 2 - tg ** 2) / (2 * ta))))


# ------------------------------------------------------------------ outline analysis
def outline_values(outline: np.ndarray, pitch_mm: float, r_minor_mm: float, r_major_mm: float, *,
                   band: tuple[float, float] = (0.3, 0.7)) -> dict[str, float]:
    """Flank angles and pitch radius read off one limb's outline by straight-line fits.

    Each flank is fitted (least squares, x as a function of |y|) over the part of the
    depth between ``band`` fractions (away from crest and root corners); the pitch radius
    is where the fitted tooth width equals P/2, averaged over teeth.

    Returns
    -------
    dict: ``flank_left_deg`` (flank facing -x), ``flank_right_deg``, ``pitch_radius_mm``,
    ``pitch_mm`` (mean spacing of left flanks at the pitch radius), ``n_teeth``.
    """
    x, y = outline[:, 0], np.abs(outline[:, 1])
    h = r_major_mm - r_minor_mm
    sel = (y > r_minor_mm + band[0] * h) & (y < r_minor_mm + band[1] * h)
    idx = np.nonzero(sel)[0]
    if len(idx) < 4:
        return {"n_teeth": 0}
    runs = np.split(idx, np.nonzero(np.diff(idx) > 1)[0] + 1)
    lefts, rights = [], []
    for r in runs:
        if len(r) < 5 or r[0] == 0 or r[-1] == len(x) - 1:
            continue
        m, b = np.polyfit(y[r], x[r], 1)  # x = m |y| + b
        (lefts if m > 0 else rights).append((m, b, float(x[r].mean())))
    lefts.sort(key=lambda t: t[2])
    rights.sort(key=lambda t: t[2])
    widths = []
    for m1, b1, xm in lefts:
        nxt = [t for t in rights if t[2] > xm]
        if not nxt or nxt[0][2] - xm > pitch_mm:
            continue
        m2, b2, _ = nxt[0]
        widths.append((0.5 * pitch_mm - (b2 - b1)) / (m2 - m1))
    out: dict[str, float] = {"n_teeth": len(widths)}
    if lefts:
        out["flank_left_deg"] = float(np.mean([math.degrees(math.atan(abs(t[0]))) for t in lefts]))
    if rights:
        out["flank_right_deg"] = float(np.mean([math.degrees(math.atan(abs(t[0]))) for t in rights]))
    if widths:
        rp = float(np.mean(widths))
        out["pitch_radius_mm"] = rp
        xs = [m * rp + b for m, b, _ in lefts]
        if len(xs) > 1:
            out["pitch_mm"] = float(np.mean(np.diff(xs)))
    return out


# ------------------------------------------------------------------ the part
def _pinhole_outline(camera, profile, lead, right_hand, x_start, length, axis_y, up_w, lo_w):
    """Ray-cast both limbs on image columns every 0.5 px; returns ([polygon px], dict)."""
    from ._raycast import pinhole_limb_px

    gu = camera.world_to_px(up_w)
    gl = camera.world_to_px(lo_w)
    c0 = max(math.ceil(max(gu[:, 0].min(), gl[:, 0].min())), -20)
    c1 = min(math.floor(min(gu[:, 0].max(), gl[:, 0].max())), camera.width + 20)
    if c1 <= c0:
        raise ValueError("the thread does not reach the image")
    cols = np.arange(c0, c1 + 1e-9, 0.5)
    ou, ol = np.argsort(gu[:, 0]), np.argsort(gl[:, 0])
    vu = np.interp(cols, gu[ou, 0], gu[ou, 1])
    vl = np.interp(cols, gl[ol, 0], gl[ol, 1])
    r = profile.info["major_d_mm"] / 2
    depth_px = (r - profile.info["minor_d_mm"] / 2) / camera.mm_per_px
    bracket = depth_px + r * r / (camera.working_distance_mm * camera.mm_per_px) + 3.0
    x0 = x_start
    rows_u = pinhole_limb_px(camera, profile, lead, cols, vu, limb="upper", right_hand=right_hand,
                             x0_mm=x0, axis_y_mm=axis_y, bracket_px=bracket)
    rows_l = pinhole_limb_px(camera, profile, lead, cols, vl, limb="lower", right_hand=right_hand,
                             x0_mm=x0, axis_y_mm=axis_y, bracket_px=bracket)
    good = np.isfinite(rows_u) & np.isfinite(rows_l)
    if not np.all(good):
        raise RuntimeError("pinhole thread outline: a column without a clear edge")
    top = np.column_stack([cols, rows_u])
    bot = np.column_stack([cols, rows_l])
    return [np.vstack([top, bot[::-1]])], {"upper": top.tolist(), "lower": bot.tolist()}


def _clip_below(outline: np.ndarray, cap: Callable[[np.ndarray], np.ndarray], *,
                above: bool = False) -> np.ndarray:
    """min(outline(x), cap(x)) (or max with ``above``) with crossing points inserted."""
    x, y = outline[:, 0], outline[:, 1]
    cy = cap(x)
    d = y - cy
    pick = max if above else min
    pts_x, pts_y = [x[0]], [pick(y[0], cy[0])]
    for i in range(1, len(x)):
        if (d[i - 1] > 0) != (d[i] > 0) and d[i] != d[i - 1]:
            t = d[i - 1] / (d[i - 1] - d[i])
            xc = x[i - 1] + t * (x[i] - x[i - 1])
            pts_x.append(xc)
            pts_y.append(y[i - 1] + t * (y[i] - y[i - 1]))
        pts_x.append(x[i])
        pts_y.append(pick(y[i], cy[i]))
    return np.column_stack([pts_x, pts_y])


def render_thread(camera: Camera, *, profile: AxialProfile | None = None, pitch_mm: float = 1.5,
                  major_d_mm: float = 10.0, starts: int = 1, right_hand: bool = True,
                  thread_length_mm: float = 8.0, x_start_mm: float | None = None,
                  axis_y_mm: float = 0.0, tilt_deg: float = 0.0, pitch_error_mm: float = 0.0,
                  chamfer_mm: float = 0.0, shank_length_mm: float = 0.0,
                  shank_d_mm: float | None = None, groove_length_mm: float = 0.0,
                  groove_d_mm: float | None = None, runout_mm: float = 0.0,
                  chip: dict | None = None,
                  step_mm: float | None = None, **render_kw: Any) -> tuple[np.ndarray, dict]:
    """Render a threaded part, axis along world x, with its truth.

    The part, left to right along +x: a plain shank (``shank_length_mm``, diameter
    ``shank_d_mm``, default the major diameter), a relief groove (``groove_length_mm`` at
    ``groove_d_mm``, default minor - 0.1 mm), the thread (``thread_length_mm``) and a flat end
    face with a 45 deg chamfer of ``chamfer_mm`` (radial). The axis lies at world
    y = ``axis_y_mm``; move it (or use a small field) to have one limb only in frame.

    Parameters
    ----------
    camera : Camera
    profile : AxialProfile, optional
        Default :func:`axial_profile_iso` (pitch_mm, major_d_mm).
    pitch_mm, major_d_mm : float
        Used for the default profile.
    starts, right_hand, tilt_deg :
        As :func:`thread_silhouette`.
    x_start_mm : float, optional
        World x of the thread's left end; default centres the thread in the image.
    pitch_error_mm : float
        Added to the pitch (a lead error of starts x this): the part is made with the
        wrong pitch; truth keeps both.
    runout_mm : float
        Thread run-out at the left end: over this length the groove fades linearly from
        full depth to the crest (as when the tool is withdrawn while still cutting);
        applied as max(outline, ramp) in image x.
    chip : dict, optional
        A chipped crest on the upper limb: ``{'x_mm': centre along the axis (thread frame,
        from the thread's left end), 'width_mm', 'depth_mm'}``: the outline is cut down by
        depth over that width (a local defect seen at the limb).
    **render_kw :
        Passed to :func:`render` (blur_px, noise, levels, gamma, ...).

    Returns
    -------
    img, truth : as :func:`render`, with ``truth['thread']``: the axial-section values
    (``major_d_mm``, ``pitch_d_mm``, ``minor_d_mm``, ``pitch_mm``, ``lead_mm``,
    ``flank_left_deg``, ``flank_right_deg``, crest/root numbers), the helix geometry
    (``lead_angle_deg``), the apparent outline values per limb (``apparent``: flank angles,
    pitch radius, pitch) and ``apparent_pitch_d_mm`` (sum of both limbs' pitch radii),
    the first-order formula values for comparison, and the outline polylines in mm and px.

    Notes
    -----
    Pinhole camera (``camera.working_distance_mm`` set): every image column's lines of sight
    are cast against the helical solid (``_raycast``: bisection on the hit test, columns
    every 0.5 px, envelope corners between columns joined by chords) and the outline is
    rendered in px; only the plain thread is modelled there (no shank, groove, chamfer,
    run-out or chip; its ends are cut square in the image) and ``outline_px_raycast``
    holds the result. It takes a few seconds per frame.

    Shank, groove, end face and chamfer are exact for the square view (rays keep their x;
    the chamfer cone enters the envelope as an axisymmetric cap, see ``_helix``); the
    chip and the run-out are cut into the outline in image x. For tilted views all of them
    are applied in image x (the chamfer as min(outline, cone line), which misses the true
    intersection by up to R phi^2/2 where the chamfer meets a flank, phi ~ 0.1 rad).
    """
    if not isinstance(camera, Camera):
        raise TypeError(f"camera must be a synth.Camera, got {type(camera).__name__}")
    if profile is None:
        profile = axial_profile_iso(pitch_mm + pitch_error_mm, major_d_mm)
        nominal_pitch = pitch_mm
    else:
        nominal_pitch = profile.pitch_mm
        if pitch_error_mm:
            raise ValueError("pitch_error_mm: pass a profile built with the erroneous pitch instead")
    info = dict(profile.info)
    P = profile.pitch_mm
    lead = starts * P
    r_maj = info["major_d_mm"] / 2
    r_min = info["minor_d_mm"] / 2
    L = float(thread_length_mm)
    if L <= 0:
        raise ValueError("thread_length_mm must be > 0")
    c = math.cos(math.radians(tilt_deg))
    if x_start_mm is None:
        x_start_mm = camera.centre_mm[0] - L / 2
    x_start = float(x_start_mm)
    sil = thread_silhouette(profile, None, lead, starts, L, x_start_mm=0.0, right_hand=right_hand,
                            tilt_deg=tilt_deg, step_mm=step_mm)
    up, lo = sil["upper"].copy(), sil["lower"].copy()
    apparent = {"upper": outline_values(up / [c, 1], P, r_min, r_maj),
                "lower": outline_values(lo / [c, 1], P, r_min, r_maj)}
    if chip:
        cx, cw, cd = float(chip["x_mm"]) * c, float(chip["width_mm"]) * c, float(chip["depth_mm"])
        keep = (up[:, 0] < cx - cw / 2) | (up[:, 0] > cx + cw / 2)
        inside = up[~keep].copy()
        inside[:, 1] = np.minimum(inside[:, 1], r_maj - cd)
        up = np.vstack([up[keep & (up[:, 0] < cx)], inside, up[keep & (up[:, 0] > cx)]])
    end_x = L * c
    if runout_mm > 0:
        lr = float(runout_mm) * c

        def ramp(x):
            return np.where(x < lr, r_maj - (r_maj - r_min) * x / lr, -np.inf)

        up = _clip_below(up, ramp, above=True)
        lo = _clip_below(lo * [1, -1], ramp, above=True) * [1, -1]
    if chamfer_mm > 0:
        ch = float(chamfer_mm)

        def cap(x):  # 45 deg cone from radius r_maj - ch at the end face
            return (r_maj - ch) + (end_x - x)

        if tilt_deg == 0:
            # exact: the outline of min(helical solid, cone) over the chamfer's length
            x_ch = end_x - ch
            for name in ("upper", "lower"):
                cur = up if name == "upper" else lo
                capped = limb_outline(profile, lead, x_ch, end_x, right_hand=right_hand,
                                      limb=name, step_mm=step_mm, cap=cap)
                cur = np.vstack([cur[cur[:, 0] < x_ch], capped])
                if name == "upper":
                    up = cur
                else:
                    lo = cur
        else:
            up = _clip_below(up, cap)
            lo = _clip_below(lo * [1, -1], cap) * [1, -1]
    # left of the thread: groove then shank (drawn in image x)
    left: list[np.ndarray] = []
    xg = 0.0
    rg = (float(groove_d_mm) / 2) if groove_d_mm is not None else r_min - 0.05
    rs = (float(shank_d_mm) / 2) if shank_d_mm is not None else r_maj
    if groove_length_mm > 0:
        xg = -float(groove_length_mm) * c
    xs = xg - float(shank_length_mm) * c
    upper_chain = [up]
    lower_chain = [lo]
    if groove_length_mm > 0:
        upper_chain.insert(0, np.array([[xg, rg], [0.0, rg]]))
        lower_chain.insert(0, np.array([[xg, -rg], [0.0, -rg]]))
    if shank_length_mm > 0:
        upper_chain.insert(0, np.array([[xs, rs], [xg, rs]]))
        lower_chain.insert(0, np.array([[xs, -rs], [xg, -rs]]))
    top = np.vstack(upper_chain)
    bot = np.vstack(lower_chain)
    poly = np.vstack([top, bot[::-1]])
    # thread frame -> world: image abscissa along world x, axis at axis_y_mm
    poly_w = poly + [x_start * c if tilt_deg else x_start, axis_y_mm]
    shift = np.array([x_start * c if tilt_deg else x_start, axis_y_mm])
    tpsi = lead / (math.pi * info["pitch_d_mm"])
    a_pd = None
    if "pitch_radius_mm" in apparent["upper"] and "pitch_radius_mm" in apparent["lower"]:
        a_pd = apparent["upper"]["pitch_radius_mm"] + apparent["lower"]["pitch_radius_mm"]
    flank_mean = 0.5 * (info["flank_left_deg"] + info["flank_right_deg"])
    hand = 1.0 if right_hand else -1.0
    thread_truth = {
        "form": info.get("form"), "starts": starts, "right_hand": right_hand,
        "pitch_mm": P, "nominal_pitch_mm": nominal_pitch, "lead_mm": lead,
        "major_d_mm": info["major_d_mm"], "pitch_d_mm": info["pitch_d_mm"],
        "minor_d_mm": info["minor_d_mm"], "flank_left_deg": info["flank_left_deg"],
        "flank_right_deg": info["flank_right_deg"],
        "included_angle_deg": info["flank_left_deg"] + info["flank_right_deg"],
        "crest_flat_mm": info.get("crest_flat_mm"), "root_flat_mm": info.get("root_flat_mm"),
        "crest_radius_mm": info.get("crest_radius_mm"), "root_radius_mm": info.get("root_radius_mm"),
        "lead_angle_deg": math.degrees(math.atan(tpsi)), "tilt_deg": tilt_deg,
        "thread_x_mm": [x_start, x_start + L], "axis_y_mm": axis_y_mm,
        "axis_px": camera.world_to_px(np.array([[x_start, axis_y_mm], [x_start + L, axis_y_mm]])).tolist(),
        "chamfer_mm": chamfer_mm, "runout_mm": runout_mm, "chip": chip,
        "apparent": apparent, "apparent_pitch_d_mm": a_pd,
        "apparent_note": ("outline values read by line fits over 30-70 % of the depth of the plain "
                          "thread (before chip, run-out, chamfer); axial distances divided by "
                          "cos(tilt); 'left' = flank facing -x on both limbs"),
        "formula": {
            "pd_error_upper_mm": helix_pd_error_mm(info["pitch_d_mm"], lead, flank_mean, -hand * tilt_deg),
            "pd_error_lower_mm": helix_pd_error_mm(info["pitch_d_mm"], lead, flank_mean, hand * tilt_deg),
            "flank_deg": helix_flank_angle_deg(info["pitch_d_mm"], lead, flank_mean, tilt_deg),
        },
        "outline_mm": {"upper": (up + shift).tolist(), "lower": (lo + shift).tolist()},
    }
    if camera.pinhole:
        if shank_length_mm or groove_length_mm or chamfer_mm or chip or runout_mm:
            raise ValueError("pinhole thread renders take the plain thread only: no shank, "
                             "groove, chamfer or chip")
        polys_px, outl = _pinhole_outline(camera, profile, lead, right_hand, x_start, L, axis_y_mm,
                                          up + shift, lo + shift)
        thread_truth["outline_px_raycast"] = outl
        thread_truth["pinhole_note"] = ("outline found by casting each column's lines of sight "
                                        "(every 0.5 px); thread ends cut square in the image")
        img, truth = render([], camera, shapes_px=polys_px, **render_kw)
        truth["thread"] = thread_truth
        truth["thread"]["outline_px"] = {k: camera.world_to_px(np.asarray(v)).tolist()
                                         for k, v in thread_truth["outline_mm"].items()}
        return img, truth
    img, truth = render([poly_w], camera, **render_kw)
    truth["thread"] = thread_truth
    truth["thread"]["outline_px"] = {k: camera.world_to_px(np.asarray(v)).tolist()
                                     for k, v in thread_truth["outline_mm"].items()}
    return img, truth
