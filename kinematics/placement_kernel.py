"""Compiled kernels behind the placement map: every (base, target) pair in one pass.

This module imports numba and compiles on first use (cached on disk, ``cache=True``), so it
is imported lazily by :mod:`kinematics.placement` and never on the window's start-up path.

For each pair it does what :func:`kinematics.evaluate.evaluate_arm` does for one target,
with the base moved: the closed-form inverse kinematics of both elbow configurations (the
formulas of :mod:`kinematics.ik`, term by term), the joint-limit representatives and
margins of :mod:`kinematics.angles`, the elbow setting, the clearance of the moving bodies
(link 1 outside the shoulder disc, link 2, the tool disc) against the blocking fixtures,
the base rule (a base touching a blocking fixture fails every target) and the choice of
configuration of :func:`kinematics.evaluate.choose_configuration`. Tests check that it
agrees with those functions (verdicts, margins, clearances where positive).

Link 1's moving part is measured as :mod:`kinematics.clearance` measures it: the capsule
shortened to start two link radii out from the shoulder, plus the two flanks beside the
shoulder and the shoulder disc's front arc (the capsule less the open shoulder disc).
Link 2's capsule runs from the elbow to the tool point (taken as the target itself). The
base's clearance (footprint or shoulder disc) is computed once per base by the caller
(:func:`base_disc_clearance` for the disc) and passed in.

Differences, all deliberate:

* Clearance is only computed up to a cap (at least twice the smallest link radius, where
  the configuration choice stops caring); larger values come back as the cap.
* A colliding configuration comes back with a clearance of at most 0 but not its
  penetration depth (the map never needs it).
* Only capsule links and a tool disc are handled here; arms with link or tool outlines go
  through :func:`kinematics.clearance.pose_clearance` instead (see the placement module).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange

__all__ = ["pair_table", "base_summary", "disc_clearance", "base_disc_clearance"]

# The same tolerances as kinematics.angles.ANGLE_EPS and kinematics.ik.REACH_REL_EPS.
_ANGLE_EPS = 1e-9
_REACH_REL_EPS = 1e-9
_BIG = 1e300


@njit(cache=True, inline="always")
def _rep_margin(q, lo, hi):
    # kinematics.angles.representative_and_margin for one angle.
    mid = 0.5 * (lo + hi)
    width = hi - lo
    cand = q + 360.0 * np.rint((mid - q) / 360.0)
    e = abs(cand - mid) - 0.5 * width
    margin = -min(e, (360.0 - width) - e)
    if margin >= -_ANGLE_EPS:
        return cand, max(margin, 0.0)
    return cand, margin


@njit(cache=True, inline="always")
def _pt_seg2(x, y, px, py, qx, qy):
    dx = qx - px
    dy = qy - py
    wx = x - px
    wy = y - py
    dd = dx * dx + dy * dy
    t = 0.0
    if dd > 0.0:
        t = (wx * dx + wy * dy) / dd
        if t < 0.0:
            t = 0.0
        elif t > 1.0:
            t = 1.0
    ex = wx - t * dx
    ey = wy - t * dy
    return ex * ex + ey * ey


@njit(cache=True)
def _seg_poly2(ax, ay, bx, by, V, s, e):
    """Squared distance from segment a-b to the polygon region V[s:e] (0 when they meet)."""
    n = e - s
    best = _BIG
    inside = False
    sx = bx - ax
    sy = by - ay
    for i in range(n):
        px = V[s + i, 0]
        py = V[s + i, 1]
        j = s + i + 1
        if j == e:
            j = s
        qx = V[j, 0]
        qy = V[j, 1]
        if (py > ay) != (qy > ay):
            xi = px + (ay - py) * (qx - px) / (qy - py)
            if ax < xi:
                inside = not inside
        ex = qx - px
        ey = qy - py
        o1 = ex * (ay - py) - ey * (ax - px)
        o2 = ex * (by - py) - ey * (bx - px)
        o3 = sx * (py - ay) - sy * (px - ax)
        o4 = sx * (qy - ay) - sy * (qx - ax)
        if o1 * o2 < 0.0 and o3 * o4 < 0.0:
            return 0.0
        d = _pt_seg2(ax, ay, px, py, qx, qy)
        if d < best:
            best = d
        d = _pt_seg2(bx, by, px, py, qx, qy)
        if d < best:
            best = d
        d = _pt_seg2(px, py, ax, ay, bx, by)
        if d < best:
            best = d
    if inside:
        return 0.0
    return best


@njit(cache=True, inline="always")
def _capsule(ox, oy, ux, uy, length, r, cf, ncf, cdir, ccos, V, off, C, R, best):
    """Clearance of the capsule from o along unit u (length, radius r) to candidate fixtures.

    ``cdir``/``ccos`` give each candidate's direction from o and the cosine of the half
    angle it subtends (grown by r and the cap); a capsule pointing outside that cone
    cannot come nearer than the cap. Returns min(best, clearance); <= 0 means collides.
    """
    bx = ox + length * ux
    by = oy + length * uy
    for k in range(ncf):
        if ux * cdir[k, 0] + uy * cdir[k, 1] < ccos[k]:
            continue
        f = cf[k]
        d = math.sqrt(_pt_seg2(C[f, 0], C[f, 1], ox, oy, bx, by)) - R[f] - r
        if d >= best:
            continue
        d = math.sqrt(_seg_poly2(ox, oy, bx, by, V, off[f], off[f + 1])) - r
        if d < best:
            best = d
            if best <= 0.0:
                return best
    return best


@njit(cache=True)
def _arc_edges(ox, oy, ux, uy, r, V, s, e):
    """Distance from the shoulder disc's front arc (radius r about o, the half towards u)
    to the outline V[s:e] (kinematics.clearance._trim_rows, term by term): each edge is
    clipped to the half plane in front of the shoulder and measured against the circle."""
    n = e - s
    best = _BIG
    for i in range(n):
        j = s + i + 1
        if j == e:
            j = s
        rx = V[s + i, 0] - ox
        ry = V[s + i, 1] - oy
        x = rx * ux + ry * uy
        y = ry * ux - rx * uy
        rx2 = V[j, 0] - ox
        ry2 = V[j, 1] - oy
        x2 = rx2 * ux + ry2 * uy
        y2 = ry2 * ux - rx2 * uy
        if x < 0.0 and x2 < 0.0:
            continue
        dx = x2 - x
        dy = y2 - y
        tcut = -x / dx if dx != 0.0 else 0.0
        px = x if x >= 0.0 else x + tcut * dx
        py = y if x >= 0.0 else y + tcut * dy
        qx = x2 if x2 >= 0.0 else x + tcut * dx
        qy = y2 if x2 >= 0.0 else y + tcut * dy
        ex = qx - px
        ey = qy - py
        ee = ex * ex + ey * ey
        t = 0.0
        if ee > 0.0:
            t = -(px * ex + py * ey) / ee
            if t < 0.0:
                t = 0.0
            elif t > 1.0:
                t = 1.0
        dmin = math.hypot(px + t * ex, py + t * ey)
        dmax = max(math.hypot(px, py), math.hypot(qx, qy))
        if dmin > r:
            d = dmin - r
        elif dmax < r:
            d = r - dmax
        else:
            d = 0.0
        if d < best:
            best = d
    return best


@njit(cache=True, inline="always")
def _link1_exact(ox, oy, ux, uy, length, r, cut, V, s, e, near, best):
    """Signed distance (clearance, <= 0 when touching) of link 1's moving part to V[s:e],
    at most ``best``: the capsule shortened to start ``cut`` out, and, unless ``near`` says
    the outline is too far from the shoulder, the two flanks beside the shoulder, the
    shoulder disc's front arc, and 0 for an outline wholly in the pocket between them
    (:func:`kinematics.clearance._exact_many` and ``_trim_rows``)."""
    ax = ox + cut * ux
    ay = oy + cut * uy
    bx = ox + length * ux
    by = oy + length * uy
    d = math.sqrt(_seg_poly2(ax, ay, bx, by, V, s, e)) - r
    if d < best:
        best = d
    if best <= 0.0 or near >= best:
        return best
    nx = -uy
    ny = ux
    for sg in (1.0, -1.0):
        px = ox + sg * r * nx
        py = oy + sg * r * ny
        d = math.sqrt(_seg_poly2(px, py, px + cut * ux, py + cut * uy, V, s, e))
        if d < best:
            best = d
            if best <= 0.0:
                return best
    d = _arc_edges(ox, oy, ux, uy, r, V, s, e)
    if d < best:
        best = d
    # An outline wholly beside the link, between the flanks and the arc: touching.
    vx = (V[s, 0] - ox) * ux + (V[s, 1] - oy) * uy
    vy = (V[s, 1] - oy) * ux - (V[s, 0] - ox) * uy
    if vx >= 0.0 and vx <= cut and abs(vy) <= r and vx * vx + vy * vy >= r * r:
        best = min(best, 0.0)
    return best


@njit(cache=True, inline="always")
def _link1_sel(ox, oy, ux, uy, length, r, cut, sel, nsel, cf, cdir, ccos, V, off, C, R, best):
    """Clearance of link 1's moving part (see :func:`_link1_exact`) to the candidates
    ``sel[:nsel]`` (positions in cf/cdir/ccos), at most ``best``: the whole capsule's cone
    and bounding-circle tests (see :func:`_capsule`) still bound it from below, and the
    parts beside the shoulder lie within ``hypot(cut, r)`` of it."""
    bx = ox + length * ux
    by = oy + length * uy
    pocket = math.hypot(cut, r)
    for j in range(nsel):
        k = sel[j]
        if ux * cdir[k, 0] + uy * cdir[k, 1] < ccos[k]:
            continue
        f = cf[k]
        d = math.sqrt(_pt_seg2(C[f, 0], C[f, 1], ox, oy, bx, by)) - R[f] - r
        if d >= best:
            continue
        near = math.hypot(C[f, 0] - ox, C[f, 1] - oy) - R[f] - pocket
        d = _link1_exact(ox, oy, ux, uy, length, r, cut, V, off[f], off[f + 1], near, best)
        if d < best:
            best = d
            if best <= 0.0:
                return best
    return best


# Directions from a base are sorted into this many sectors, each listing the candidate
# fixtures whose cone reaches into it, so link 1 tests only a few cones per pose.
_SECTORS = 64


@njit(cache=True, inline="always")
def _sectors(n1, cdir, ccos, cnt, lists):
    w = 2.0 * math.pi / _SECTORS
    for b in range(_SECTORS):
        cnt[b] = 0
    for k in range(n1):
        if ccos[k] <= -1.0:
            lo, hi = 0, _SECTORS - 1
        else:
            psi = math.atan2(cdir[k, 1], cdir[k, 0])
            al = math.acos(min(1.0, ccos[k])) + 1e-9  # a hair wider than the cone
            lo = int(math.floor((psi - al) / w))
            hi = int(math.floor((psi + al) / w))
            if hi - lo + 1 >= _SECTORS:
                lo, hi = 0, _SECTORS - 1
        for b in range(lo, hi + 1):
            bb = b % _SECTORS
            lists[bb, cnt[bb]] = k
            cnt[bb] += 1


@njit(cache=True, inline="always")
def _cone(ox, oy, reach, grow, f, C, R, cdir, ccos, k):
    """Fill candidate slot k with fixture f's direction and cone as seen from o.

    Returns False when the fixture is farther than ``reach + grow`` from o."""
    dx = C[f, 0] - ox
    dy = C[f, 1] - oy
    d = math.sqrt(dx * dx + dy * dy)
    rr = R[f] + grow
    if d - rr > reach:
        return False
    if d <= rr or d == 0.0:
        cdir[k, 0] = 1.0
        cdir[k, 1] = 0.0
        ccos[k] = -2.0  # o inside the grown circle: every direction is a candidate
    else:
        cdir[k, 0] = dx / d
        cdir[k, 1] = dy / d
        sa = rr / d
        ccos[k] = math.sqrt(max(0.0, 1.0 - sa * sa))
    return True


@njit(cache=True, inline="always")
def _base_cones(x0, y0, reach, grow, C, R, lf, cf, cdir, ccos):
    n = 0
    for j in range(lf.shape[0]):
        f = lf[j]
        if _cone(x0, y0, reach, grow, f, C, R, cdir, ccos, n):
            cf[n] = f
            n += 1
    return n


@njit(cache=True, inline="always")
def _one_base(
    ib,
    bx, by, tx, ty, arm, lim, allow, radii, cap, lf, tptr, tf, tdir, tcos, V, off, C, R,
    tool_c, base_c, table, every, o_n, o_lm, o_rm, o_c, o_flags, o_f, o_chosen,
):  # fmt: skip
    """Every pair of base ``ib``: per base reductions (o_n ...) or, with ``table``, per
    pair outputs (o_flags, o_f, o_chosen)."""
    N = tx.shape[0]
    F = C.shape[0]
    a1 = arm[0]
    a2 = arm[1]
    h = arm[2]
    r1 = radii[0]
    r2 = radii[1]
    width = radii[2]
    rmax = a1 + a2
    rmin = abs(a1 - a2)
    eps = _REACH_REL_EPS * rmax
    two = 2.0 * a1 * a2
    cut = min(2.0 * r1, a1)  # link 1's flanks beside the shoulder
    x0 = bx[ib]
    y0 = by[ib]
    bc = base_c[ib]
    if bc <= 0.0 and not table:  # the base touches a fixture: no target is feasible
        o_n[ib] = 0
        o_lm[ib] = np.inf
        o_rm[ib] = np.inf
        o_c[ib] = np.inf
        return
    cf = np.empty(F, np.int64)
    cdir = np.empty((F, 2))
    ccos = np.empty(F)
    n1 = _base_cones(x0, y0, a1, r1 + cap, C, R, lf, cf, cdir, ccos)
    cnt = np.empty(_SECTORS, np.int64)
    lists = np.empty((_SECTORS, max(n1, 1)), np.int64)
    _sectors(n1, cdir, ccos, cnt, lists)
    sw = _SECTORS / (2.0 * math.pi)
    nf = 0
    wlm = np.inf
    wrm = np.inf
    wc = np.inf
    for it in range(N):
        # kinematics.ik._solve_block, term by term, for one pair.
        dx = tx[it] - x0
        dy = ty[it] - y0
        rr2 = dx * dx + dy * dy
        r = math.sqrt(rr2)
        rm = min(rmax - r, r - rmin)
        if r > rmax + eps or r < rmin - eps:
            if table:
                for j in range(4):
                    o_flags[ib, it, j] = False
                o_f[ib, it, 0] = rm
                o_f[ib, it, 1] = 0.0
                for j in range(2, 6):
                    o_f[ib, it, j] = np.nan
                o_chosen[ib, it] = -1
            continue
        at_stretch = rmax - r <= eps
        at_fold = r - rmin <= eps
        singular = at_stretch or at_fold
        s2 = math.sqrt(max((rmax * rmax - rr2) * (rr2 - rmin * rmin), 0.0)) / two
        c2 = min(1.0, max(-1.0, (rr2 - a1 * a1 - a2 * a2) / two))
        if singular:
            s2 = 0.0
            c2 = 1.0 if at_stretch else -1.0
        q2a = math.degrees(math.atan2(s2, c2))
        phi = math.atan2(dy, dx)
        k1 = a1 + a2 * c2
        k2 = a2 * s2
        beta = math.atan2(k2, k1)
        inv = 1.0 / r if r > 0.0 else 0.0
        cb = k1 * inv  # cos and sin of the angle from the target direction to link 1
        sb = k2 * inv
        centre = at_fold and r <= eps
        ok0 = False
        ok1 = False
        m0 = np.nan
        m1 = np.nan
        c0 = np.nan
        c1 = np.nan
        for k in range(2):
            sg = 1.0 if k == 0 else -1.0
            q1 = math.degrees(phi - sg * beta) - h
            if centre:
                q1 = 0.5 * (lim[0] + lim[1])
            _, mq1 = _rep_margin(q1, lim[0], lim[1])
            _, mq2 = _rep_margin(sg * q2a, lim[2], lim[3])
            ok = mq1 >= -_ANGLE_EPS and mq2 >= -_ANGLE_EPS and (singular or allow[k])
            m = min(mq1, mq2)
            c = np.nan
            if ok or every:
                if r > 0.0:
                    ux = (dx * cb + sg * dy * sb) * inv
                    uy = (dy * cb - sg * dx * sb) * inv
                    t1 = phi - sg * beta
                else:
                    t1 = math.radians(q1 + h)
                    ux = math.cos(t1)
                    uy = math.sin(t1)
                sec = int(math.floor(t1 * sw)) % _SECTORS
                c = min(cap, tool_c[it])
                lo = tptr[it]
                hi = tptr[it + 1]
                if c > 0.0 and hi > lo:  # link 2 first: its few candidates are near
                    vx = (x0 + a1 * ux - tx[it]) / a2
                    vy = (y0 + a1 * uy - ty[it]) / a2
                    c = _capsule(
                        tx[it], ty[it], vx, vy, a2, r2, tf[lo:hi], hi - lo,
                        tdir[lo:hi], tcos[lo:hi], V, off, C, R, c,
                    )  # fmt: skip
                if c > 0.0:
                    c = _link1_sel(
                        x0, y0, ux, uy, a1, r1, cut, lists[sec], cnt[sec], cf, cdir, ccos,
                        V, off, C, R, c,
                    )
            if k == 0:
                ok0, m0, c0 = ok, m, c
            else:
                ok1, m1, c1 = ok, m, c
        # kinematics.evaluate.choose_configuration on the ok, clear configurations;
        # a base touching a blocking fixture fails every target (Status.BASE_OVERLAP).
        chosen = -1
        s0 = -_BIG
        if bc <= 0.0:
            pass
        elif ok0 and c0 > 0.0:
            chosen = 0
            s0 = min(min(m0 / 10.0, c0 / width), 1.0)
        if bc > 0.0 and ok1 and c1 > 0.0:
            s1 = min(min(m1 / 10.0, c1 / width), 1.0)
            if chosen < 0 or s1 > s0 or (s1 == s0 and m1 > m0):
                chosen = 1
        if table:
            o_flags[ib, it, 0] = True
            o_flags[ib, it, 1] = singular
            o_flags[ib, it, 2] = ok0
            o_flags[ib, it, 3] = ok1
            o_f[ib, it, 0] = rm
            o_f[ib, it, 1] = s2
            o_f[ib, it, 2] = m0
            o_f[ib, it, 3] = m1
            o_f[ib, it, 4] = c0
            o_f[ib, it, 5] = c1
            o_chosen[ib, it] = chosen
        elif chosen >= 0:
            nf += 1
            wlm = min(wlm, m0 if chosen == 0 else m1)
            wrm = min(wrm, rm)
            wc = min(wc, c0 if chosen == 0 else c1)
    if not table:
        o_n[ib] = nf
        o_lm[ib] = wlm
        o_rm[ib] = wrm
        o_c[ib] = wc


@njit(cache=True, parallel=True, nogil=True)
def _run(
    bx, by, tx, ty, arm, lim, allow, radii, cap, lf, tptr, tf, tdir, tcos, V, off, C, R,
    tool_c, base_c, table, every, o_n, o_lm, o_rm, o_c, o_flags, o_f, o_chosen,
):  # fmt: skip
    """Every (base, target) pair (:func:`_one_base`), bases in parallel."""
    for ib in prange(bx.shape[0]):
        _one_base(
            ib, bx, by, tx, ty, arm, lim, allow, radii, cap, lf, tptr, tf, tdir, tcos, V, off,
            C, R, tool_c, base_c, table, every, o_n, o_lm, o_rm, o_c, o_flags, o_f, o_chosen,
        )  # fmt: skip


@njit(cache=True, nogil=True)
def _run_serial(
    bx, by, tx, ty, arm, lim, allow, radii, cap, lf, tptr, tf, tdir, tcos, V, off, C, R,
    tool_c, base_c, table, every, o_n, o_lm, o_rm, o_c, o_flags, o_f, o_chosen,
):  # fmt: skip
    """:func:`_run` in one thread: waking the parallel threads costs more than a few bases
    take (a drag step, the rays of a tolerance search)."""
    for ib in range(bx.shape[0]):
        _one_base(
            ib, bx, by, tx, ty, arm, lim, allow, radii, cap, lf, tptr, tf, tdir, tcos, V, off,
            C, R, tool_c, base_c, table, every, o_n, o_lm, o_rm, o_c, o_flags, o_f, o_chosen,
        )  # fmt: skip


@njit(cache=True)
def _disc_clearance(px, py, radius, cap, ptr, fidx, V, off, C, R, out):
    for i in range(px.shape[0]):
        best = cap
        for j in range(ptr[i], ptr[i + 1]):
            f = fidx[j]
            d = math.hypot(C[f, 0] - px[i], C[f, 1] - py[i]) - R[f] - radius
            if d >= best:
                continue
            d = math.sqrt(_seg_poly2(px[i], py[i], px[i], py[i], V, off[f], off[f + 1])) - radius
            if d < best:
                best = d
        out[i] = best


@njit(cache=True, inline="always")
def _disc_one(i, px, py, radius, cap, lf, V, off, C, R, out):
    best = cap
    for j in range(lf.shape[0]):
        f = lf[j]
        d = math.hypot(C[f, 0] - px[i], C[f, 1] - py[i]) - R[f] - radius
        if d >= best:
            continue
        d = math.sqrt(_seg_poly2(px[i], py[i], px[i], py[i], V, off[f], off[f + 1])) - radius
        if d < best:
            best = d
    out[i] = best


@njit(cache=True, parallel=True, nogil=True)
def _disc_all(px, py, radius, cap, lf, V, off, C, R, out):
    for i in prange(px.shape[0]):
        _disc_one(i, px, py, radius, cap, lf, V, off, C, R, out)


@njit(cache=True, nogil=True)
def _disc_all_serial(px, py, radius, cap, lf, V, off, C, R, out):
    for i in range(px.shape[0]):
        _disc_one(i, px, py, radius, cap, lf, V, off, C, R, out)


#: Below this many bases the kernels run in one thread.
SERIAL_BASES = 64


def _f(a):
    return np.ascontiguousarray(a, dtype=np.float64)


def _i(a):
    return np.ascontiguousarray(a, dtype=np.int64)


def _args(kp, bx, by):
    return (
        _f(bx),
        _f(by),
        kp.tx,
        kp.ty,
        kp.arm,
        kp.lim,
        kp.allow,
        kp.radii,
        kp.cap,
        kp.lf,
        kp.tptr,
        kp.tf,
        kp.tdir,
        kp.tcos,
        kp.V,
        kp.off,
        kp.C,
        kp.R,
        kp.tool_c,
    )


def base_summary(kp, bx, by, base_c):
    """Per base: feasible targets, worst limit margin, worst reach margin, smallest clearance.

    ``kp`` is a :class:`kinematics.placement.KernelData`; ``bx, by`` (B,) base positions;
    ``base_c`` (B,) the base body's clearance at each (inf when it has none). Margins and
    clearance are over the feasible targets (inf when none is feasible); the clearance is
    capped at ``kp.cap``.
    """
    B = len(bx)
    n = np.zeros(B, np.int64)
    lm, rm, cl = np.empty(B), np.empty(B), np.empty(B)
    dummy_b = np.zeros((1, 1, 4), dtype=np.bool_)
    dummy_f = np.zeros((1, 1, 6))
    dummy_c = np.zeros((1, 1), dtype=np.int64)
    run = _run_serial if B < SERIAL_BASES else _run
    run(*_args(kp, bx, by), _f(base_c), False, False, n, lm, rm, cl, dummy_b, dummy_f, dummy_c)
    return n, lm, rm, cl


def pair_table(kp, bx, by, base_c, every=False):
    """Every (base, target) pair: flags (B, N, 4), floats (B, N, 6), chosen (B, N).

    flags: reachable, singular, ok positive, ok negative (ok = within limits and allowed);
    floats: reach margin, sin q2, limit margin positive/negative (deg), clearance
    positive/negative (NaN unless ok, or reachable with ``every``); chosen: the engine's
    chosen configuration among the ok, clear ones (-1 when the target is not feasible).
    """
    B, N = len(bx), len(kp.tx)
    flags = np.zeros((B, N, 4), dtype=np.bool_)
    fl = np.empty((B, N, 6))
    ch = np.empty((B, N), dtype=np.int64)
    z = np.zeros(1)
    zi = np.zeros(1, np.int64)
    run = _run_serial if B < SERIAL_BASES else _run
    run(*_args(kp, bx, by), _f(base_c), True, bool(every), zi, z, z, z, flags, fl, ch)
    return flags, fl, ch


def disc_clearance(px, py, radius, cap, ptr, fidx, V, off, C, R):
    """Clearance of discs of ``radius`` at points (px, py) to fixtures fidx[ptr[i]:ptr[i+1]]."""
    out = np.empty(len(px))
    _disc_clearance(_f(px), _f(py), float(radius), float(cap), _i(ptr), _i(fidx), V, off, C, R, out)
    return out


def base_disc_clearance(kp, bx, by):
    """Clearance of the shoulder disc (link 1's radius) at bases (bx, by) to the fixtures
    blocking the links, capped at ``kp.cap`` (<= 0 when it touches one): the base body of an
    arm without a base footprint, as :func:`kinematics.clearance.base_clearance` measures it.
    """
    out = np.empty(len(bx))
    r1, cap = float(kp.radii[0]), float(kp.cap)
    run = _disc_all_serial if len(bx) < SERIAL_BASES else _disc_all
    run(_f(bx), _f(by), r1, cap, kp.lf, kp.V, kp.off, kp.C, kp.R, out)
    return out
