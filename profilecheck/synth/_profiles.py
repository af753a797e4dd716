"""Axial thread profiles: radius r as a function of the axial position u (mm).

A profile is a chain of exact *pieces* (straight lines and circular arcs) held by
:class:`AxialProfile`. The helix module uses the pieces directly (no polygon
approximation), so flank lines and root/crest radii stay exact.

Forms (external threads; flank half-angles from the normal to the axis):

* ISO metric / UN 60 deg (ISO 68-1, ASME B1.1): H = 0.866025 P, d2 = d - 0.649519 P,
  crest flat P/8 at d, basic root flat P/4 (d1 = d - 1.082532 P) or a root radius
  (UNR 0.108 P..0.144 P, ISO design H/6 = 0.144338 P).
* Whitworth 55 deg (BS 84): H = 0.960491 P, depth 0.640327 P, crest and root radius
  r = (H/6) sin 27.5 / (1 - sin 27.5) = 0.137329 P, E = D - 0.640327 P.
* BA 47.5 deg (BS 93): depth 0.6 P, H = 1.136336 P, rounding 0.268168 P, r = 0.180834 P,
  E = d - 0.6 P.
* Acme 29 deg (ASME B1.5): h = P/2, D2 = D - P/2, flats 0.3707 P.
* ISO trapezoidal 30 deg (ISO 2901/2904): H1 = P/2, d2 = d - P/2, basic flat 0.366 P;
  design root d3 = d - 2 h3, h3 = P/2 + ac.

Geometry of one tooth (u along the axis, r radius): the left flank (outward normal to
image left, crests up) is the line u = -P/4 + (r - r2) tan(alpha_L) and the right flank
u = P/4 - (r - r2) tan(alpha_R), r2 the pitch radius (tooth thickness P/2 on the pitch
line). A PD offset moves both flank lines radially by offset/2 (the tool plunged deeper
or shallower); the crest stays at the turned major diameter.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

__all__ = [
    "AxialProfile", "profile_from_flanks", "axial_profile_iso", "axial_profile_un",
    "axial_profile_whitworth", "axial_profile_ba", "axial_profile_acme",
    "axial_profile_trapezoidal",
]

LINE, ARC = 0, 1


@dataclass(frozen=True)
class AxialProfile:
    """One pitch of an axial thread profile as exact pieces, repeated with period ``pitch_mm``.

    Pieces are stored in arrays: ``kind`` (0 line, 1 arc), ``u0``, ``u1`` (axial range,
    mm) and parameters ``p`` (n, 3): line (r at u0, slope dr/du, 0); arc (u_centre,
    r_centre, signed radius: + for a crest arc (upper half of the circle), - for a root arc).
    The period runs from ``u_start`` to ``u_start + pitch_mm`` (a crest centre).
    """

    pitch_mm: float
    kind: np.ndarray
    u0: np.ndarray
    u1: np.ndarray
    p: np.ndarray
    u_start: float
    info: dict = field(default_factory=dict)

    # -------------------------------------------------------------- evaluation
    def tiled(self, u_min: float, u_max: float) -> "AxialProfile":
        """Pieces covering [u_min, u_max] by repeating the period (not periodic any more)."""
        k0 = math.floor((u_min - self.u_start) / self.pitch_mm) - 1
        k1 = math.ceil((u_max - self.u_start) / self.pitch_mm) + 1
        ks = np.arange(k0, k1)
        n = len(self.kind)
        shift = np.repeat(ks * self.pitch_mm, n)
        kind = np.tile(self.kind, len(ks))
        p = np.tile(self.p, (len(ks), 1))
        # lines store r at u0, which does not move; arcs store the centre, which does
        p[:, 0] = np.where(kind == ARC, p[:, 0] + shift, p[:, 0])
        return AxialProfile(self.pitch_mm, kind, np.tile(self.u0, len(ks)) + shift,
                            np.tile(self.u1, len(ks)) + shift, p, self.u_start + k0 * self.pitch_mm,
                            dict(self.info, tiled=True))

    def piece_index(self, u: np.ndarray) -> np.ndarray:
        u = np.asarray(u, dtype=float)
        if self.info.get("tiled"):
            i = np.searchsorted(self.u1, u, side="left")
            return np.clip(i, 0, len(self.u1) - 1)
        w = self.u_start + np.mod(u - self.u_start, self.pitch_mm)
        return np.clip(np.searchsorted(self.u1, w, side="left"), 0, len(self.u1) - 1)

    def _local(self, u):
        u = np.asarray(u, dtype=float)
        if self.info.get("tiled"):
            return u
        return self.u_start + np.mod(u - self.u_start, self.pitch_mm)

    def radius(self, u: np.ndarray) -> np.ndarray:
        """r(u), mm."""
        i = self.piece_index(u)
        return piece_r(self.kind[i], self.u0[i], self.p[i], self._local(u))

    def slope(self, u: np.ndarray) -> np.ndarray:
        """dr/du."""
        i = self.piece_index(u)
        return piece_dr(self.kind[i], self.u0[i], self.p[i], self._local(u))

    def polyline(self, n_pitch: int = 1, *, max_error_mm: float = 1e-6) -> np.ndarray:
        """(N, 2) array of (u, r) mm over ``n_pitch`` whole pitches from a crest centre;
        arcs are cut into chords with sagitta <= ``max_error_mm``."""
        pts = []
        for k in range(int(n_pitch)):
            for j in range(len(self.kind)):
                a, b = self.u0[j], self.u1[j]
                if self.kind[j] == ARC:
                    rho = abs(self.p[j, 2])
                    dphi = 2.0 * math.acos(max(-1.0, 1.0 - max_error_mm / rho))
                    span = math.asin(min(1.0, abs(b - self.p[j, 0]) / rho)) + \
                        math.asin(min(1.0, abs(a - self.p[j, 0]) / rho))
                    n = max(2, int(math.ceil(span / dphi)) + 1)
                    # even in angle: u = uc + rho sin(t)
                    ta = math.asin(np.clip((a - self.p[j, 0]) / rho, -1, 1))
                    tb = math.asin(np.clip((b - self.p[j, 0]) / rho, -1, 1))
                    u = self.p[j, 0] + rho * np.sin(np.linspace(ta, tb, n))
                else:
                    u = np.array([a, b])
                r = piece_r(np.full(len(u), self.kind[j]), np.full(len(u), a),
                            np.tile(self.p[j], (len(u), 1)), u)
                seg = np.column_stack([u + k * self.pitch_mm, r])
                pts.append(seg if not pts else seg[1:])
        return np.vstack(pts)


def piece_r(kind, u0, p, u):
    """Radius of pieces (vectorised over matching arrays)."""
    line = p[..., 0] + p[..., 1] * (u - u0)
    du = u - p[..., 0]
    rho = p[..., 2]
    arc = p[..., 1] + np.sign(rho) * np.sqrt(np.maximum(rho * rho - du * du, 0.0))
    return np.where(kind == ARC, arc, line)


def piece_dr(kind, u0, p, u):
    """dr/du of pieces."""
    du = u - p[..., 0]
    rho = p[..., 2]
    root = np.sqrt(np.maximum(rho * rho - du * du, 1e-300))
    arc = -np.sign(rho) * du / root
    return np.where(kind == ARC, arc, p[..., 1])


def _check_angle(name, v):
    v = float(v)
    if not math.isfinite(v) or not 1.0 <= v <= 80.0:
        raise ValueError(f"{name} must be between 1 and 80 degrees, got {v!r}")
    return v


def _pos(name, v, allow_zero=False):
    v = float(v)
    if not math.isfinite(v) or v < 0 or (v == 0 and not allow_zero):
        raise ValueError(f"{name} must be {'>= 0' if allow_zero else '> 0'}, got {v!r}")
    return v


def _circle_between(lines, rho, signs):
    """Centre of the circle of radius rho at signed distances from two lines a u + b r = c
    (unit normals). signs: +1 on the side where a u + b r - c > 0."""
    (a1, b1, c1), (a2, b2, c2) = lines
    m = np.array([[a1, b1], [a2, b2]])
    rhs = np.array([c1 + signs[0] * rho, c2 + signs[1] * rho])
    return np.linalg.solve(m, rhs)


def _foot(centre, line):
    a, b, c = line
    d = a * centre[0] + b * centre[1] - c
    return np.array([centre[0] - d * a, centre[1] - d * b])


def profile_from_flanks(pitch_mm: float, major_d_mm: float, pitch_d_mm: float, *,
                        flank_left_deg: float = 30.0, flank_right_deg: float = 30.0,
                        crest_radius_mm: float | None = None, root_flat_mm: float | None = None,
                        root_radius_mm: float | None = None, root_d_mm: float | None = None,
                        form: str = "custom") -> AxialProfile:
    """Build one pitch of an external thread profile from its flank lines.

    Parameters
    ----------
    pitch_mm, major_d_mm, pitch_d_mm : float
        Pitch, turned crest diameter and pitch diameter (tooth thickness P/2 there).
    flank_left_deg, flank_right_deg : float
        Flank angles from the normal to the axis (docs/conventions.md).
    crest_radius_mm : float, optional
        Crest arc tangent to both flanks; where its top rises above ``major_d_mm`` the
        crest is turned flat there. Default: a flat crest at the major diameter.
    root_flat_mm, root_radius_mm, root_d_mm : float, optional
        Root as a flat of this width, an arc of this radius tangent to both flanks, or a
        flat at this diameter (exactly one; default a flat of P/4).
    """
    P = _pos("pitch_mm", pitch_mm)
    R = _pos("major_d_mm", major_d_mm) / 2.0
    r2 = _pos("pitch_d_mm", pitch_d_mm) / 2.0
    if r2 >= R:
        raise ValueError("pitch_d_mm must be smaller than major_d_mm")
    aL = math.radians(_check_angle("flank_left_deg", flank_left_deg))
    aR = math.radians(_check_angle("flank_right_deg", flank_right_deg))
    tL, tR = math.tan(aL), math.tan(aR)
    given = [v is not None for v in (root_flat_mm, root_radius_mm, root_d_mm)]
    if sum(given) > 1:
        raise ValueError("give only one of root_flat_mm, root_radius_mm, root_d_mm")
    if not any(given):
        root_flat_mm = P / 4.0
    # flank lines as unit-normal forms a u + b r = c
    # right flank of tooth 0: u + (r - r2) tR = P/4 ; left flank of tooth 1: u - (r - r2) tL = 3P/4
    nR, nL = math.hypot(1, tR), math.hypot(1, tL)
    right = (1 / nR, tR / nR, (P / 4 + r2 * tR) / nR)
    left1 = (1 / nL, -tL / nL, (3 * P / 4 - r2 * tL) / nL)
    left0 = (1 / nL, -tL / nL, (-P / 4 - r2 * tL) / nL)

    def u_right(r):
        return P / 4 - (r - r2) * tR

    def u_left(r, k=0):
        return -P / 4 + (r - r2) * tL + k * P

    r_apex_root = r2 - P / (2 * (tL + tR))
    r_apex_crest = r2 + P / (2 * (tL + tR))
    if R >= r_apex_crest:
        raise ValueError("major_d_mm lies above the sharp crest of these flanks")
    pieces: list[tuple[int, float, float, tuple[float, float, float]]] = []

    def line(ua, ub, ra, rb):
        if ub - ua > 1e-15:
            pieces.append((LINE, ua, ub, (ra, (rb - ra) / (ub - ua), 0.0)))

    # ---- crest (of tooth 0, right half, and of tooth 1, left half)
    if crest_radius_mm is not None:
        rho = _pos("crest_radius_mm", crest_radius_mm)
        c = _circle_between((left0, right), rho, (+1, -1))
        tl, tr = _foot(c, left0), _foot(c, right)
        top = c[1] + rho
        if top > R + 1e-9:
            if R - c[1] <= 0:
                raise ValueError("crest_radius_mm too large for this major diameter")
            half = math.sqrt(rho * rho - (R - c[1]) ** 2)
            crest_l, crest_r = c[0] - half, c[0] + half
        else:
            crest_l = crest_r = c[0]
            R = top
        u_cm = 0.5 * (crest_l + crest_r)
        crest = ("arc", c, rho, tl, tr, crest_l, crest_r)
    else:
        crest_l, crest_r = u_left(R), u_right(R)
        u_cm = 0.5 * (crest_l + crest_r)
        crest = ("flat",)
    # ---- root
    if root_radius_mm is not None:
        rr = _pos("root_radius_mm", root_radius_mm)
        cr = _circle_between((right, left1), rr, (+1, -1))
        root = ("arc", cr, rr, _foot(cr, right), _foot(cr, left1))
        r_root = cr[1] - rr
    else:
        if root_d_mm is not None:
            r_root = _pos("root_d_mm", root_d_mm) / 2.0
        else:
            f = _pos("root_flat_mm", root_flat_mm, allow_zero=True)
            r_root = r_apex_root + f / (tL + tR)
        if not r_apex_root <= r_root < r2:
            raise ValueError("the root lies outside the flanks: check root_flat_mm/root_d_mm")
        root = ("flat", r_root)
    if r_root <= 0:
        raise ValueError("the root diameter would be <= 0")

    # ---- assemble from the crest centre u_cm to u_cm + P
    def crest_pieces(shift, from_centre):
        """Half crest: right half (from_centre=True) or left half ending at the centre."""
        if crest[0] == "flat":
            if from_centre:
                line(u_cm + shift, crest_r + shift, R, R)
            else:
                line(crest_l + shift, u_cm + shift, R, R)
            return
        _, c, rho, tl, tr, cl, cr_ = crest
        if from_centre:
            if cr_ > u_cm:
                line(u_cm + shift, cr_ + shift, R, R)
            pieces.append((ARC, cr_ + shift, tr[0] + shift, (c[0] + shift, c[1], rho)))
        else:
            pieces.append((ARC, tl[0] + shift, cl + shift, (c[0] + shift, c[1], rho)))
            if u_cm > cl:
                line(cl + shift, u_cm + shift, R, R)

    crest_pieces(0.0, True)
    r_top_right = R if crest[0] == "flat" else crest[4][1]
    u_top_right = crest_r if crest[0] == "flat" else crest[4][0]
    r_top_left1 = R if crest[0] == "flat" else crest[3][1]
    u_top_left1 = (crest_l if crest[0] == "flat" else crest[3][0]) + P
    if root[0] == "arc":
        _, cr, rr, fr, fl = root
        line(u_top_right, fr[0], r_top_right, fr[1])
        pieces.append((ARC, fr[0], fl[0], (cr[0], cr[1], -rr)))
        line(fl[0], u_top_left1, fl[1], r_top_left1)
    else:
        ua, ub = u_right(r_root), u_left(r_root, 1)
        line(u_top_right, ua, r_top_right, r_root)
        line(ua, ub, r_root, r_root)
        line(ub, u_top_left1, r_root, r_top_left1)
    crest_pieces(P, False)
    kind = np.array([p[0] for p in pieces], dtype=np.int64)
    u0 = np.array([p[1] for p in pieces])
    u1 = np.array([p[2] for p in pieces])
    par = np.array([p[3] for p in pieces], dtype=float)
    info = {
        "form": form, "pitch_mm": P, "major_d_mm": 2 * R, "pitch_d_mm": 2 * r2,
        "minor_d_mm": 2 * r_root, "flank_left_deg": math.degrees(aL),
        "flank_right_deg": math.degrees(aR),
        "crest_flat_mm": crest_r - crest_l, "crest_radius_mm": crest_radius_mm or 0.0,
        "root_flat_mm": (u_left(r_root, 1) - u_right(r_root)) if root[0] == "flat" else 0.0,
        "root_radius_mm": root_radius_mm or 0.0, "crest_centre_mm": u_cm,
    }
    return AxialProfile(P, kind, u0, u1, par, u_cm, info)


# ------------------------------------------------------------------ standard forms
def _common(pitch_mm, major_d_mm):
    return _pos("pitch_mm", pitch_mm), _pos("major_d_mm", major_d_mm)


def axial_profile_iso(pitch_mm: float, major_d_mm: float, *, pd_offset_mm: float = 0.0,
                      root_flat_mm: float | None = None, root_radius_mm: float | None = None,
                      flank_left_deg: float = 30.0, flank_right_deg: float = 30.0,
                      major_offset_mm: float = 0.0) -> AxialProfile:
    """ISO metric 60 deg external profile (ISO 68-1): d2 = d - 0.649519 P; crest flat at
    the major diameter (P/8 when basic); root flat P/4 by default (basic d1), or
    ``root_radius_mm`` (ISO design H/6 = 0.144338 P). ``pd_offset_mm`` < 0 makes an
    undersize part; ``major_offset_mm`` turns the crest below basic."""
    P, d = _common(pitch_mm, major_d_mm)
    d2 = d - 0.649519052838329 * P  # 3H/4, H = sqrt(3)/2 P (ISO 68-1)
    return profile_from_flanks(P, d + major_offset_mm, d2 + pd_offset_mm,
                               flank_left_deg=flank_left_deg, flank_right_deg=flank_right_deg,
                               root_flat_mm=root_flat_mm, root_radius_mm=root_radius_mm,
                               form="ISO metric")


def axial_profile_un(tpi: float, major_d_in: float, **kw) -> AxialProfile:
    """Unified 60 deg (ASME B1.1) profile from threads per inch and major diameter in inches
    (same basic geometry as ISO; 1 in = 25.4 mm). Keywords as :func:`axial_profile_iso`
    (mm); UNR root: ``root_radius_mm`` in 0.108 P..0.144 P."""
    if float(tpi) <= 0:
        raise ValueError(f"tpi must be > 0, got {tpi!r}")
    prof = axial_profile_iso(25.4 / float(tpi), 25.4 * float(major_d_in), **kw)
    prof.info["form"] = "UN"
    return prof


def axial_profile_whitworth(pitch_mm: float, major_d_mm: float, *, pd_offset_mm: float = 0.0,
                            flank_left_deg: float = 27.5, flank_right_deg: float = 27.5) -> AxialProfile:
    """Whitworth 55 deg (BS 84): E = D - 0.640327 P, crest and root radius 0.137329 P
    (= (H/6) sin 27.5 / (1 - sin 27.5), H = 0.960491 P)."""
    P, d = _common(pitch_mm, major_d_mm)
    th = math.radians(27.5)
    H = P / (2 * math.tan(th))
    rho = (H / 6) * math.sin(th) / (1 - math.sin(th))
    return profile_from_flanks(P, d, d - 2 * H / 3 + pd_offset_mm, flank_left_deg=flank_left_deg,
                               flank_right_deg=flank_right_deg, crest_radius_mm=rho,
                               root_radius_mm=rho, form="Whitworth")


def axial_profile_ba(pitch_mm: float, major_d_mm: float, *, pd_offset_mm: float = 0.0,
                     flank_left_deg: float = 23.75, flank_right_deg: float = 23.75) -> AxialProfile:
    """BA 47.5 deg (BS 93): depth 0.6 P, E = d - 0.6 P, crest/root rounding 0.268168 P
    from the sharp V, radius 0.180834 P."""
    P, d = _common(pitch_mm, major_d_mm)
    th = math.radians(23.75)
    H = P / (2 * math.tan(th))
    t = (H - 0.6 * P) / 2
    rho = t * math.sin(th) / (1 - math.sin(th))
    return profile_from_flanks(P, d, d - 0.6 * P + pd_offset_mm, flank_left_deg=flank_left_deg,
                               flank_right_deg=flank_right_deg, crest_radius_mm=rho,
                               root_radius_mm=rho, form="BA")


def axial_profile_acme(pitch_mm: float, major_d_mm: float, *, pd_offset_mm: float = 0.0,
                       flank_left_deg: float = 14.5, flank_right_deg: float = 14.5) -> AxialProfile:
    """Acme 29 deg (ASME B1.5) basic profile: D2 = D - P/2, minor D - P, flats 0.3707 P."""
    P, d = _common(pitch_mm, major_d_mm)
    return profile_from_flanks(P, d, d - 0.5 * P + pd_offset_mm, flank_left_deg=flank_left_deg,
                               flank_right_deg=flank_right_deg, root_d_mm=d - P + pd_offset_mm,
                               form="Acme")


def axial_profile_trapezoidal(pitch_mm: float, major_d_mm: float, *, ac_mm: float = 0.0,
                              pd_offset_mm: float = 0.0, flank_left_deg: float = 15.0,
                              flank_right_deg: float = 15.0) -> AxialProfile:
    """ISO trapezoidal 30 deg (ISO 2901): d2 = d - P/2; root at d3 = d - 2 (P/2 + ac)
    (``ac_mm`` = 0: the basic profile, flats 0.366 P)."""
    P, d = _common(pitch_mm, major_d_mm)
    h3 = 0.5 * P + _pos("ac_mm", ac_mm, allow_zero=True)
    return profile_from_flanks(P, d, d - 0.5 * P + pd_offset_mm, flank_left_deg=flank_left_deg,
                               flank_right_deg=flank_right_deg, root_d_mm=d - 2 * h3 + pd_offset_mm,
                               form="ISO trapezoidal")
