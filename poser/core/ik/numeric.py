"""Numerical inverse kinematics: damped least squares from many starts at once, on a fixed budget.

Each step solves ``(J Jᵀ + λ I) y = e`` and moves ``Δq = Jᵀ y`` — the damped
least-squares step (Wampler 1986; Nakamura & Hanafusa 1986) — with the
damping of each start lowered after a step that reduced the error and raised
after one that did not (the Levenberg–Marquardt rule).  Every start is
iterated at once (arrays shaped (K, ...)); starts that converge or stall drop
out.  The budget is a number of iterations, never a time, so the same input
gives the same result on every machine and every run.

Errors are made dimensionless before they are combined: the position error is
divided by the arm's size, the orientation error is the rotation vector in
radians (:func:`poser.core.transforms.rotation_vector`).  Pose and Jacobian come
from :func:`poser.core.fk.frames` and :func:`poser.core.jacobian.jacobian_from_frames`.
"""

from __future__ import annotations

import numpy as np

from poser.core.fk import frames
from poser.core.jacobian import jacobian_from_frames
from poser.core.transforms import TWO_PI, rotation_vector, wrap

__all__ = ["seeds", "dls", "settle_singular", "MAX_ITER"]

MAX_ITER = 60
"""Iterations each start may take."""
STALL_STEPS = 5
"""A start stops after this many steps in a row that improve its error by less than a millionth."""
STALL_DAMPING = 1e5
"""A start stops when its damping climbs past this (steps keep failing: it sits in a minimum)."""


def seeds(chain, count: int, full_turns: bool = True, rng_seed: int = 20240613):
    """``count`` starting configurations (count, n), the same on every call (stratified, seeded).

    Revolute joints are spread over a whole turn when ``full_turns`` (so that branches beyond the
    limits are found too and said to be blocked), else over their range (at most a turn); prismatic
    joints over their stroke.
    """

    def make(c):
        rng = np.random.default_rng(rng_seed)
        lo = np.array(c.lower, float)
        hi = np.array(c.upper, float)
        rev = np.asarray(c.revolute)
        mid = 0.5 * (lo + hi)
        if full_turns:
            lo = np.where(rev, mid - np.pi, lo)
            hi = np.where(rev, mid + np.pi, hi)
        else:
            wide = rev & (hi - lo > TWO_PI)
            lo = np.where(wide, mid - np.pi, lo)
            hi = np.where(wide, mid + np.pi, hi)
        u = (np.arange(count)[:, None] + rng.random((count, c.n))) / count
        for j in range(c.n):
            u[:, j] = rng.permutation(u[:, j])
        s = lo + u * (hi - lo)
        s.setflags(write=False)
        return s

    return chain.derived(f"ik_seeds_{count}_{int(full_turns)}_{rng_seed}", make)


def _residual(chain, P, R, F, weight):
    T = F[:, -1]
    ep = (P - T[:, :3, 3]) / chain.scale * weight[0]
    if R is None:
        return ep
    er = rotation_vector(R @ np.swapaxes(T[:, :3, :3], 1, 2)) * weight[1]
    return np.concatenate([ep, er], axis=1)


def _damped(Ja, lam, e, eye):
    """y with ``(Ja Jaᵀ + λ I) y = e`` for every start; λ at least 1e-12 of the largest diagonal entry, so a
    Jacobian without rows (every joint at a limit) or with huge ones still gives a solvable system."""
    A = Ja @ np.swapaxes(Ja, 1, 2)
    floor = 1e-12 * np.maximum(np.max(np.abs(np.diagonal(A, axis1=1, axis2=2)), axis=1), 1e-300)
    A += (np.maximum(lam, floor) + 1e-300)[:, None, None] * eye
    return np.linalg.solve(A, e[..., None])[..., 0]


def dls(chain, P, R, q0, *, tol, max_iter=MAX_ITER, clip=False, weight=(1.0, 1.0)):
    """Damped least squares from every start at once.

    Parameters
    ----------
    chain : Chain
    P : ndarray (3,)
        Target tool position, arm length unit.
    R : ndarray (3, 3) or None
        Target tool rotation; None for position only.
    q0 : ndarray (K, n)
        Starts, internal units.
    tol : (float, float)
        Position (length unit) and orientation (rad) tolerances: a start that meets both stops.
    max_iter : int
        Iterations each start may take.
    clip : bool
        Keep every iterate within the limits (the closest approach within limits).
    weight : (float, float)
        Weights of the position and the orientation residual (e.g. a heavy position weight keeps
        the position while the orientation is improved).

    Returns
    -------
    q : ndarray (K, n)
    pos_err : ndarray (K,)
        Length unit.
    ori_err : ndarray (K,)
        Radians (0 for position only).
    converged : ndarray (K,) of bool
        Both errors within tolerance.
    """
    lo, hi = chain.lower, chain.upper
    q = np.array(q0, dtype=float)
    K, n = q.shape
    rev = chain.revolute
    if clip:
        q = np.clip(q, lo, hi)
    F = frames(chain, q)
    J = jacobian_from_frames(chain, F)
    e = _residual(chain, P, R, F, weight)
    m = e.shape[1]
    cost = np.sum(e * e, axis=1)
    lam = np.full(K, 1e-3)
    tp = tol[0] / chain.scale * weight[0] * 1e-3
    to = tol[1] * weight[1] * 1e-3

    def done(ev):
        ok = np.linalg.norm(ev[:, :3], axis=1) <= tp
        if m > 3:
            ok &= np.linalg.norm(ev[:, 3:], axis=1) <= to
        return ok

    active = ~done(e)
    stall = np.zeros(K, int)
    row_scale = np.ones(m)
    row_scale[:3] = weight[0] / chain.scale
    if m > 3:
        row_scale[3:] = weight[1]
    col_scale = np.where(rev, 1.0, chain.scale)  # prismatic steps in units of the arm's size
    eye = np.eye(m)
    step_cap = np.where(rev, 0.6, 0.3)
    for _ in range(int(max_iter)):
        idx = np.flatnonzero(active)
        if idx.size == 0:
            break
        Ja = J[idx, :m, :] * row_scale[None, :, None] * col_scale[None, None, :]
        y = _damped(Ja, lam[idx], e[idx], eye)
        dz = np.einsum("kmn,km->kn", Ja, y)
        if clip:
            # joints at a limit that the step pushes further leave the step (an active set): solve again
            # without them, so the others move instead of the step being cut off at the limit
            qi = q[idx]
            stuck = ((qi <= lo + 1e-12) & (dz < 0)) | ((qi >= hi - 1e-12) & (dz > 0))
            if stuck.any():
                Jf = Ja * ~stuck[:, None, :]
                dz = np.einsum("kmn,km->kn", Jf, _damped(Jf, lam[idx], e[idx], eye))
        over = np.max(np.abs(dz) / step_cap, axis=1)
        dz /= np.maximum(over, 1.0)[:, None]
        qn = q[idx] + dz * col_scale
        qn = np.where(rev, wrap(qn), qn) if not clip else np.clip(qn, lo, hi)
        Fn = frames(chain, qn)
        en = _residual(chain, P, R, Fn, weight)
        cn = np.sum(en * en, axis=1)
        better = cn < cost[idx]
        rel = np.where(better, (cost[idx] - cn) / np.maximum(cost[idx], 1e-300), 0.0)
        bi = idx[better]
        if bi.size:
            q[bi], e[bi], cost[bi] = qn[better], en[better], cn[better]
            J[bi] = jacobian_from_frames(chain, Fn[better])
        lam[bi] = np.maximum(lam[bi] / 4.0, 1e-12)
        lam[idx[~better]] *= 6.0
        stall[idx] = np.where(better & (rel > 1e-6), 0, stall[idx] + 1)
        active[idx] = ~done(e[idx]) & (lam[idx] < STALL_DAMPING) & (stall[idx] < STALL_STEPS)
    pos_err = np.linalg.norm(e[:, :3], axis=1) * chain.scale / weight[0]
    ori_err = np.linalg.norm(e[:, 3:], axis=1) / weight[1] if m > 3 else np.zeros(K)
    converged = (pos_err <= tol[0]) & (ori_err <= tol[1])
    return q, pos_err, ori_err, converged


SETTLE_BELOW = 1e-3
"""Solutions whose Jacobian's smallest singular value is below this fraction of its largest are settled."""
SETTLE_SPAN = 4e-3
"""Half-width (rad, or a fraction of the arm's size for slides) of the first line search of a settle."""
SETTLE_LEVELS = 6
SETTLE_ROUNDS = 4
SETTLE_POINTS = 41


def _settle_parts(chain, P, R, Q):
    """Residual (K, m), dimensionless Jacobian's SVD (s, Vt) and the joint scaling of :func:`settle_singular`."""
    F = frames(chain, Q)
    e = _residual(chain, P, R, F, (1.0, 1.0))
    m = e.shape[1]
    row_scale = np.ones(m)
    row_scale[:3] = 1.0 / chain.scale
    col_scale = np.where(chain.revolute, 1.0, chain.scale)
    J = jacobian_from_frames(chain, F)[:, :m, :] * row_scale[None, :, None] * col_scale[None, None, :]
    U, s, Vt = np.linalg.svd(J)
    return e, U, s, Vt, col_scale


def settle_singular(chain, P, R, Q):
    """Near-singular solutions ``Q`` (K, n) settled at the singular solution they lie beside.

    Beside a singular solution (an elbow exactly stretched, say) the error grows with the square of the
    distance from it, so a solver stops within the tolerance anywhere in a small valley around it and many
    starts stop at many places.  Each solution whose Jacobian is near singular (smallest singular value
    below :data:`SETTLE_BELOW` of the largest, in the solver's dimensionless units) takes
    :data:`SETTLE_ROUNDS` rounds of a Gauss–Newton step in the well-determined directions and a search
    along the weakest one (the right singular vector of the smallest singular value) for the least error,
    on nested grids (:data:`SETTLE_LEVELS` levels of :data:`SETTLE_POINTS` points, each 20× finer): the
    copies meet at the singular solution itself.  A fixed budget, no time; a round that does not lower
    a solution's error leaves it as it was, and solutions that are not near singular are not touched.

    Returns
    -------
    ndarray (K, n)
    """
    Q = np.array(Q, dtype=float)
    if not len(Q):
        return Q
    rev = chain.revolute
    e, U, s, Vt, col_scale = _settle_parts(chain, P, R, Q)
    r = min(e.shape[1], chain.n)
    idx = np.flatnonzero(s[:, r - 1] <= SETTLE_BELOW * np.maximum(s[:, 0], 1e-300))
    if not idx.size:
        return Q
    q = Q[idx]
    cost = np.sum(e[idx] ** 2, axis=1)
    U, s, Vt = U[idx], s[idx], Vt[idx]
    ts = np.linspace(-1.0, 1.0, SETTLE_POINTS)
    k_all = np.arange(len(idx))
    e_now = e[idx]
    for _round in range(SETTLE_ROUNDS):
        # Gauss-Newton in the well-determined directions (the weakest one left out)
        ew = np.einsum("kmi,km->ki", U[:, :, : r - 1], e_now)
        dz = np.einsum("ki,kin->kn", ew / s[:, : r - 1], Vt[:, : r - 1, :])
        qn = q + dz * col_scale
        qn = np.where(rev, wrap(qn), qn)
        en = _residual(chain, P, R, frames(chain, qn), (1.0, 1.0))
        cn = np.sum(en * en, axis=1)
        better = cn < cost
        q = np.where(better[:, None], qn, q)
        cost = np.where(better, cn, cost)
        # the weakest direction: the least error along it
        v = Vt[:, r - 1, :] * col_scale
        best_t = np.zeros(len(idx))
        span = SETTLE_SPAN
        for _level in range(SETTLE_LEVELS):
            t = best_t[:, None] + span * ts[None, :]
            cand = q[:, None, :] + t[..., None] * v[:, None, :]
            cand = np.where(rev, wrap(cand), cand).reshape(-1, chain.n)
            ec = _residual(chain, P, R, frames(chain, cand), (1.0, 1.0))
            c = np.sum(ec * ec, axis=1).reshape(len(idx), SETTLE_POINTS)
            k = np.argmin(c, axis=1)
            ck = c[k_all, k]
            better = ck < cost
            best_t = np.where(better, t[k_all, k], best_t)
            cost = np.where(better, ck, cost)
            span /= 20.0
        moved = q + best_t[:, None] * v
        q = np.where(rev, wrap(moved), moved)
        e_now, U, s, Vt, _ = _settle_parts(chain, P, R, q)
    Q[idx] = q
    return Q
