"""The true outline of a helical thread seen in parallel projection.

Thread frame: x along the axis (world x), y up in the image, z toward the lens. A point
at radius r and angle phi (y = r cos phi, z = r sin phi, phi from +y toward +z) is in
the material when r <= R(x - a phi), R the axial profile (radius at phi = 0) and
a = +L/(2 pi) for a right-hand thread (the standard right-hand helix (y, z, x) =
(r cos phi, r sin phi, a phi)), -L/(2 pi) for a left-hand one.

View: the line of sight (from the lens into the scene) is turned toward +x by the tilt
gamma, so the image coordinates of a point are xi = x cos(gamma) + z sin(gamma) along
the axis and eta = y across it. gamma = 0 is the view square to the axis.

Upper limb. For each image abscissa xi the outline height is the largest eta over the
surface points that project to xi. On a smooth part of the surface (a profile piece,
parameters u and phi, x = u + a phi) the maximum lies on the *contour generator*, where
the Jacobian of (u, phi) -> (xi, eta) vanishes:

    R sin(phi) + a R' cos(phi) = -R R' tan(gamma)                       (1)

solved in closed form, phi = -atan2(a R', R) + asin(-R R' tan(gamma) / sqrt(R^2 + a^2 R'^2)).
(gamma = 0: tan(phi) = -a R'/R.) Where two pieces meet at a corner the maximum can lie
on the corner's own helix (u fixed, phi free). The outline is the upper envelope of all
these candidate curves, evaluated exactly at each abscissa (bisection on the monotone
candidate curves) and with the corners of the envelope (where the winning candidate
changes) located by bisection to 1e-12 mm.

Turned chamfer (square view). An axisymmetric limit C(x) caps the solid at
r <= min(R(x - a phi), C(x)); along one line of sight x is fixed, so candidates above C
drop out and the cap competes as C cos(phi_c), phi_c the smallest |phi| with
R(x - a phi) >= C.

Lower limb. Rotating by pi about the axis maps the lower half onto the upper half of a
thread whose profile is shifted by +a pi and viewed with tilt -gamma; so the lower
outline is -(upper outline of R(u - a pi) at -gamma).

The first-order consequences agree with ../shared/vision-notes.md section 5 and
../shared/standards-notes.md section 9 (apparent flank tan a' = tan a + tan^2 psi /
(2 tan a), pitch-diameter error (d2/2) tan^2 psi / tan^2 a); the tests check those values
and a brute-force projection of the sampled surface.
"""

from __future__ import annotations

import math

import numpy as np

from ._profiles import ARC, AxialProfile, piece_dr, piece_r

__all__ = ["limb_outline", "envelope"]

_BISECT = 44  # piece or angle range / 2^44: < 1e-12 mm


def _gen_point(kind, u0, p, u, a, tg, c, s):
    """Contour-generator point (xi, eta, phi) of a piece at parameter u."""
    rv = piece_r(kind, u0, p, u)
    rp = piece_dr(kind, u0, p, u)
    rho = np.sqrt(rv * rv + (a * rp) ** 2)
    arg = np.clip(-rv * rp * tg / rho, -1.0, 1.0)
    phi = -np.arctan2(a * rp, rv) + np.arcsin(arg)
    xi = (u + a * phi) * c + rv * np.sin(phi) * s
    eta = rv * np.cos(phi)
    return xi, eta, phi


def _vertex_point(uk, rk, phi, a, c, s):
    return (uk + a * phi) * c + rk * np.sin(phi) * s, rk * np.cos(phi)


class _Candidates:
    """Candidate curves (contour generators of pieces, corner helices) of one limb."""

    def __init__(self, prof: AxialProfile, a: float, gamma_rad: float):
        self.prof = prof
        self.a = a
        self.c = math.cos(gamma_rad)
        self.s = math.sin(gamma_rad)
        self.tg = math.tan(gamma_rad)
        k, u0, u1, p = prof.kind, prof.u0, prof.u1, prof.p
        # pieces: generator ranges; drop pieces too short to matter
        keep = (u1 - u0) > 1e-12
        self.pk, self.pu0, self.pu1, self.pp = k[keep], u0[keep], u1[keep], p[keep]
        xa, _, pa = _gen_point(self.pk, self.pu0, self.pp, self.pu0, a, self.tg, self.c, self.s)
        xb, _, pb = _gen_point(self.pk, self.pu0, self.pp, self.pu1, a, self.tg, self.c, self.s)
        self.p_lo = np.minimum(xa, xb)
        self.p_hi = np.maximum(xa, xb)
        self.p_inc = xb >= xa
        self.p_ok = (np.abs(pa) < 1.2) & (np.abs(pb) < 1.2)
        # corners: where the slope jumps
        rl = piece_dr(self.pk[:-1], self.pu0[:-1], self.pp[:-1], self.pu1[:-1])
        rr = piece_dr(self.pk[1:], self.pu0[1:], self.pp[1:], self.pu0[1:])
        corner = np.abs(rl - rr) > 1e-9
        self.vu = self.pu1[:-1][corner]
        self.vr = piece_r(self.pk[:-1], self.pu0[:-1], self.pp[:-1], self.pu1[:-1])[corner]
        r_floor = float(np.min(piece_r(self.pk, self.pu0, self.pp, self.pu0)))
        r_floor = min(r_floor, float(np.min(self.vr)) if len(self.vr) else r_floor)
        # phi range per corner: cos(phi) R_k >= the smallest radius (the outline never
        # drops below the core), and xi(phi) monotone there
        phim = np.arccos(np.clip(0.999 * r_floor / self.vr, -1, 1))
        d0 = a * self.c + self.vr * self.s
        with np.errstate(divide="ignore", invalid="ignore"):
            lim = np.where(d0 * a * self.c > 0, np.pi / 2,
                           np.arccos(np.clip(np.abs(a * self.c / (self.vr * self.s)), 0, 1)))
        self.vphim = np.minimum(phim, lim) * 0.999
        xa, _ = _vertex_point(self.vu, self.vr, -self.vphim, a, self.c, self.s)
        xb, _ = _vertex_point(self.vu, self.vr, self.vphim, a, self.c, self.s)
        self.v_lo = np.minimum(xa, xb)
        self.v_hi = np.maximum(xa, xb)
        self.v_inc = xb >= xa
        self.n_pieces = len(self.pk)

    def evaluate(self, xi: np.ndarray, cap=None) -> tuple[np.ndarray, np.ndarray]:
        """Envelope height and winning candidate id at sorted abscissae ``xi``.

        ``cap`` (square view only): a callable giving an axisymmetric limit radius C(x)
        (a turned chamfer). The solid is then r <= min(R(x - a phi), C(x)); candidates
        above C drop out and the cap itself competes as C cos(phi_c), phi_c the smallest
        |phi| at which R(x - a phi) >= C (id -2).
        """
        xi = np.asarray(xi, dtype=float)
        cv = None if cap is None else np.asarray(cap(xi), dtype=float)
        best = np.full(len(xi), -np.inf)
        who = np.full(len(xi), -1, dtype=np.int64)
        a, c, s, tg = self.a, self.c, self.s, self.tg
        # pieces
        i0 = np.searchsorted(xi, self.p_lo, side="left")
        i1 = np.searchsorted(xi, self.p_hi, side="right")
        n = np.where(self.p_ok, np.maximum(i1 - i0, 0), 0)
        if n.sum():
            pid = np.repeat(np.arange(self.n_pieces), n)
            start = np.repeat(np.cumsum(n) - n, n)
            gi = i0[pid] + (np.arange(int(n.sum())) - start)
            target = xi[gi]
            lo = self.pu0[pid].copy()
            hi = self.pu1[pid].copy()
            inc = self.p_inc[pid]
            kk, uu0, pp = self.pk[pid], self.pu0[pid], self.pp[pid]
            for _ in range(_BISECT):
                mid = 0.5 * (lo + hi)
                xm, _, _ = _gen_point(kk, uu0, pp, mid, a, tg, c, s)
                right = (xm < target) == inc
                lo = np.where(right, mid, lo)
                hi = np.where(right, hi, mid)
            _, eta, phi = _gen_point(kk, uu0, pp, 0.5 * (lo + hi), a, tg, c, s)
            if cv is not None:
                eta = np.where(eta / np.cos(phi) <= cv[gi] + 1e-12, eta, -np.inf)
            self._scatter_max(best, who, gi, eta, pid)
        # corners
        if len(self.vu):
            i0 = np.searchsorted(xi, self.v_lo, side="left")
            i1 = np.searchsorted(xi, self.v_hi, side="right")
            n = np.maximum(i1 - i0, 0)
            if n.sum():
                vid = np.repeat(np.arange(len(self.vu)), n)
                start = np.repeat(np.cumsum(n) - n, n)
                gi = i0[vid] + (np.arange(int(n.sum())) - start)
                target = xi[gi]
                lo = -self.vphim[vid]
                hi = self.vphim[vid].copy()
                inc = self.v_inc[vid]
                uk, rk = self.vu[vid], self.vr[vid]
                for _ in range(_BISECT):
                    mid = 0.5 * (lo + hi)
                    xm, _ = _vertex_point(uk, rk, mid, a, c, s)
                    right = (xm < target) == inc
                    lo = np.where(right, mid, lo)
                    hi = np.where(right, hi, mid)
                _, eta = _vertex_point(uk, rk, 0.5 * (lo + hi), a, c, s)
                if cv is not None:
                    eta = np.where(rk <= cv[gi] + 1e-12, eta, -np.inf)
                self._scatter_max(best, who, gi, eta, vid + self.n_pieces)
        if cv is not None:
            val = self._cap_values(xi, cv)
            better = val > best
            best[better] = val[better]
            who[better] = -2
        return best, who

    def _cap_values(self, x: np.ndarray, cv: np.ndarray) -> np.ndarray:
        """C cos(phi_c) for the square view (see :meth:`evaluate`)."""
        a = self.a
        out = np.full(len(x), -np.inf)
        live = np.isfinite(cv) & (cv > 0)
        if not np.any(live):
            return out
        xl, cl = x[live], cv[live]
        prof = self.prof
        span = min(abs(a) * math.pi / 2 * 0.999, prof.pitch_mm)
        d = np.linspace(-span, span, 1201)
        rr = prof.radius(xl[:, None] - d[None, :])
        ok = rr >= cl[:, None]
        dist = np.where(ok, np.abs(d)[None, :], np.inf)
        j = np.argmin(dist, axis=1)
        found = np.isfinite(dist[np.arange(len(xl)), j])
        # refine between the first sample at or above C and its neighbour toward d = 0
        dj = d[j]
        inner = np.where(dj > 0, np.maximum(j - 1, 0), np.minimum(j + 1, len(d) - 1))
        di = d[inner]
        at_zero = ok[np.arange(len(xl)), j] & (np.abs(dj) == np.min(np.abs(d)))
        lo, hi = di.copy(), dj.copy()  # lo below C (or at the centre), hi at/above C
        for _ in range(40):
            mid = 0.5 * (lo + hi)
            above = prof.radius(xl - mid) >= cl
            hi = np.where(above, mid, hi)
            lo = np.where(above, lo, mid)
        dd = np.where(at_zero, dj, hi)
        val = cl * np.cos(dd / a)
        val = np.where(found, val, -np.inf)
        out[live] = val
        return out

    @staticmethod
    def _scatter_max(best, who, gi, val, ids):
        order = np.lexsort((val, gi))
        gi, val, ids = gi[order], val[order], ids[order]
        last = np.r_[gi[1:] != gi[:-1], True]
        g, v, w = gi[last], val[last], ids[last]
        better = v > best[g]
        best[g[better]] = v[better]
        who[g[better]] = w[better]


def envelope(prof: AxialProfile, a: float, gamma_rad: float, xi: np.ndarray, cap=None) -> np.ndarray:
    """Upper-limb outline height at the image abscissae ``xi`` (mm); ``cap`` as in
    :func:`limb_outline` (square view only)."""
    xi = np.asarray(xi, dtype=float)
    lo, hi = float(xi.min()), float(xi.max())
    margin = abs(a) * math.pi / 2 + 2 * prof.pitch_mm + abs(math.tan(gamma_rad)) * 2 * prof.info.get("major_d_mm", 0)
    cand = _Candidates(prof.tiled(lo / math.cos(gamma_rad) - margin, hi / math.cos(gamma_rad) + margin),
                       a, gamma_rad)
    order = np.argsort(xi)
    best, _ = cand.evaluate(xi[order], cap)
    out = np.empty_like(best)
    out[order] = best
    return out


def limb_outline(prof: AxialProfile, lead_mm: float, xi_start: float, xi_stop: float, *,
                 right_hand: bool = True, gamma_deg: float = 0.0, limb: str = "upper",
                 step_mm: float | None = None, cap=None) -> np.ndarray:
    """Outline of one limb of a thread between two image abscissae.

    Parameters
    ----------
    prof : AxialProfile
        Axial profile (radius at phi = 0, i.e. in the plane through the axis square to the
        line of sight, on the upper side).
    lead_mm : float
        Lead L (= starts x pitch).
    xi_start, xi_stop : float
        Range along the image axis direction, mm.
    right_hand : bool
    gamma_deg : float
        Tilt of the line of sight toward +x (see module notes).
    limb : {'upper', 'lower'}
    step_mm : float, optional
        Sampling step along the axis (default P/1500); the corners of the envelope are
        located exactly and inserted.
    cap : callable, optional
        Square view only: C(x) -> radius of an axisymmetric limit (a turned chamfer); the
        outline is then that of the solid r <= min(R(x - a phi), C(x)), exactly.

    Returns
    -------
    (N, 2) ndarray of (xi, eta) mm, xi increasing; eta < 0 on the lower limb.
    """
    if limb not in ("upper", "lower"):
        raise ValueError(f"limb must be 'upper' or 'lower', got {limb!r}")
    if cap is not None and gamma_deg != 0:
        raise ValueError("cap needs the square view (gamma_deg = 0)")
    L = float(lead_mm)
    if not math.isfinite(L) or L <= 0:
        raise ValueError(f"lead_mm must be > 0, got {lead_mm!r}")
    if not xi_stop > xi_start:
        raise ValueError("xi_stop must exceed xi_start")
    g = math.radians(float(gamma_deg))
    if abs(g) >= math.radians(45):
        raise ValueError("gamma_deg must be within +-45 degrees")
    a = (1.0 if right_hand else -1.0) * L / (2 * math.pi)
    sign = 1.0
    if limb == "lower":
        # lower limb = -(upper limb of the profile shifted by +a pi, tilt -gamma)
        prof = _shifted(prof, a * math.pi)
        g = -g
        sign = -1.0
    step = float(step_mm) if step_mm else prof.pitch_mm / 1500.0
    n = max(2, int(math.ceil((xi_stop - xi_start) / step)) + 1)
    xi = np.linspace(xi_start, xi_stop, n)
    margin = abs(a) * math.pi / 2 + 2 * prof.pitch_mm + abs(math.tan(g)) * prof.info.get("major_d_mm", 0)
    cand = _Candidates(prof.tiled(min(xi_start, xi_start / math.cos(g)) - margin,
                                  max(xi_stop, xi_stop / math.cos(g)) + margin), a, g)
    eta, who = cand.evaluate(xi, cap)
    if not np.all(np.isfinite(eta)):
        raise RuntimeError("thread outline: no surface point found for some abscissae")
    # corners of the envelope: where the winning candidate changes
    sw = np.nonzero(who[1:] != who[:-1])[0]
    if len(sw):
        lo, hi = xi[sw].copy(), xi[sw + 1].copy()
        wl = who[sw]
        for _ in range(36):  # step / 2^36: < 1e-13 mm
            mid = 0.5 * (lo + hi)
            order = np.argsort(mid)
            _, wm_sorted = cand.evaluate(mid[order], cap)
            wm = np.empty_like(wm_sorted)
            wm[order] = wm_sorted
            same = wm == wl
            lo = np.where(same, mid, lo)
            hi = np.where(same, hi, mid)
        ins = 0.5 * (lo + hi)
        order = np.argsort(ins)
        ev, _ = cand.evaluate(ins[order], cap)
        xi = np.concatenate([xi, ins[order]])
        eta = np.concatenate([eta, ev])
        o = np.argsort(xi, kind="stable")
        xi, eta = xi[o], eta[o]
    return np.column_stack([xi, sign * eta])


def _shifted(prof: AxialProfile, du: float) -> AxialProfile:
    """Profile R~(u) = R(u - du)."""
    p = prof.p.copy()
    p[:, 0] = np.where(prof.kind == ARC, p[:, 0] + du, p[:, 0])
    return AxialProfile(prof.pitch_mm, prof.kind, prof.u0 + du, prof.u1 + du, p,
                        prof.u_start + du, prof.info)
