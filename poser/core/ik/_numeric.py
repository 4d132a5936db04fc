"""Numerical inverse kinematics: damped least squares with an adaptive damping factor.

Each step solves ``(J Jᵀ + λ I) y = e`` and moves ``Δq = Jᵀ y`` (the damped
least-squares step of Wampler 1986 and Nakamura & Hanafusa 1986); the
damping ``λ`` of each start is lowered after a step that reduced the error
and raised after one that did not (the Levenberg–Marquardt rule).  Every
start ("seed") is iterated at once: the arrays are shaped ``(K, ...)`` over
seeds, and seeds that have converged or stalled drop out.

Errors are made dimensionless before they are combined: the position error
is divided by the arm's characteristic length (:attr:`Lines.scale`), the
orientation error is the rotation vector in radians.
"""

from __future__ import annotations

import time

import numpy as np

from poser.core.ik._geometry import TWO_PI, Lines, pose_and_jacobian, wrap


def rotation_vector(Rd):
    """Rotation vectors (K, 3) of rotations ``Rd`` (K, 3, 3), robust near 0 and π."""
    v = np.stack([Rd[:, 2, 1] - Rd[:, 1, 2], Rd[:, 0, 2] - Rd[:, 2, 0], Rd[:, 1, 0] - Rd[:, 0, 1]], axis=-1)
    s = 0.5 * np.linalg.norm(v, axis=-1)
    c = 0.5 * (np.trace(Rd, axis1=1, axis2=2) - 1.0)
    ang = np.arctan2(s, c)
    small = s < 1e-9
    fac = np.where(small, 0.5, ang / (2.0 * np.where(small, 1.0, s)))
    out = v * fac[:, None]
    near_pi = small & (c < 0.0)
    if near_pi.any():
        B = Rd[near_pi] + np.eye(3)
        k = np.argmax(np.linalg.norm(B, axis=1), axis=-1)
        axis = B[np.arange(len(k)), :, k]
        axis /= np.linalg.norm(axis, axis=-1, keepdims=True)
        out[near_pi] = np.pi * axis
    return out


def residual(L: Lines, P, R, p, Rq):
    """Dimensionless residual (K, m): position / scale, then (if R given) the rotation vector."""
    ep = (P - p) / L.scale
    if R is None:
        return ep
    return np.concatenate([ep, rotation_vector(R @ np.swapaxes(Rq, 1, 2))], axis=1)


def seeds(chain, count: int, rng_seed: int = 20240613):
    """``count`` starting configurations spread over the limits (deterministic), (count, n)."""
    key = ("_ik_seeds", count)
    cache = chain.__dict__.setdefault("_ik_seed_cache", {})
    if key in cache:
        return cache[key]
    rng = np.random.default_rng(rng_seed)
    lo = np.array(chain.lower, float)
    hi = np.array(chain.upper, float)
    rev = np.asarray(chain.revolute)
    span = hi - lo
    # a revolute joint with more than a full turn needs seeds over one turn only
    wide = rev & (span > TWO_PI)
    mid = 0.5 * (lo + hi)
    lo = np.where(wide, mid - np.pi, lo)
    hi = np.where(wide, mid + np.pi, hi)
    # stratified: each joint's range cut into `count` strata, shuffled independently
    u = (np.arange(count)[:, None] + rng.random((count, chain.n))) / count
    for j in range(chain.n):
        u[:, j] = rng.permutation(u[:, j])
    s = lo + u * (hi - lo)
    s.setflags(write=False)
    cache[key] = s
    return s


def lm(L: Lines, P, R, q0, *, lower, upper, tol, max_iter=80, deadline=None, clip=False):
    """Damped least squares from every seed at once.

    Parameters
    ----------
    L : Lines
    P : ndarray (3,)
        Target tool position, arm length unit.
    R : ndarray (3, 3) or None
        Target tool rotation; None for position only.
    q0 : ndarray (K, n)
        Seeds, internal units.
    lower, upper : ndarray (n,)
        Joint limits; enforced (by projection) only with ``clip``.
    tol : (float, float)
        Position (length unit) and orientation (rad) tolerances for convergence.
    max_iter : int
    deadline : float or None
        ``time.perf_counter()`` value after which iteration stops.
    clip : bool
        Keep every iterate within the limits (closest approach within limits).

    Returns
    -------
    q : ndarray (K, n)
    pos_err : ndarray (K,)
        Length unit.
    ori_err : ndarray (K,)
        Radians (0 for position only).
    converged : ndarray (K,) of bool
    """
    q = np.array(q0, dtype=float)
    K, n = q.shape
    rev = L.revolute
    if clip:
        q = np.clip(q, lower, upper)
    p, Rq, J = pose_and_jacobian(L, q)
    e = residual(L, P, R, p, Rq)
    m = e.shape[1]
    cost = np.sum(e * e, axis=1)
    lam = np.full(K, 1e-3)
    tp = tol[0] / L.scale * 1e-3
    to = tol[1] * 1e-3

    def done(e):
        ok = np.linalg.norm(e[:, :3], axis=1) <= tp
        if m > 3:
            ok &= np.linalg.norm(e[:, 3:], axis=1) <= to
        return ok

    active = ~done(e)
    stall = np.zeros(K, int)
    scale_cols = np.ones(m)
    scale_cols[:3] = 1.0 / L.scale
    eye = np.eye(m)
    step_cap = np.where(rev, 0.6, 0.3 * L.scale)
    for _ in range(max_iter):
        idx = np.flatnonzero(active)
        if idx.size == 0 or (deadline is not None and time.perf_counter() > deadline):
            break
        Ja = J[idx, :m, :] * scale_cols[None, :, None]
        A = Ja @ np.swapaxes(Ja, 1, 2) + lam[idx, None, None] * eye
        y = np.linalg.solve(A, e[idx][..., None])[..., 0]
        dq = np.einsum("kmn,km->kn", Ja, y)
        over = np.max(np.abs(dq) / step_cap, axis=1)
        dq /= np.maximum(over, 1.0)[:, None]
        qn = q[idx] + dq
        qn = np.where(rev, wrap(qn), qn)
        if clip:
            qn = np.clip(qn, lower, upper)
        pn, Rn, Jn = pose_and_jacobian(L, qn)
        en = residual(L, P, R, pn, Rn)
        cn = np.sum(en * en, axis=1)
        better = cn < cost[idx]
        rel = np.where(better, (cost[idx] - cn) / np.maximum(cost[idx], 1e-300), 0.0)
        bi = idx[better]
        q[bi], e[bi], cost[bi], J[bi] = qn[better], en[better], cn[better], Jn[better]
        lam[bi] = np.maximum(lam[bi] / 4.0, 1e-12)
        wi = idx[~better]
        lam[wi] *= 6.0
        stall[idx] = np.where(better & (rel > 1e-6), 0, stall[idx] + 1)
        active[idx] = ~done(e[idx]) & (lam[idx] < 1e8) & (stall[idx] < 12)
    pos_err = np.linalg.norm(e[:, :3], axis=1) * L.scale
    ori_err = np.linalg.norm(e[:, 3:], axis=1) if m > 3 else np.zeros(K)
    converged = (pos_err <= tol[0]) & (ori_err <= tol[1])
    return q, pos_err, ori_err, converged
