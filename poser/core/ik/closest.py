"""The closest approach within limits to a target the arm cannot reach (within limits).

Position first, then orientation: among the poses within every joint's
limits, the one whose tool point comes nearest the target, and among those
(within the position tolerance) the one whose orientation comes nearest.
Its tool pose is reachable by construction, so the nearest reachable point
it gives can be typed back in and reached.  Solved by projected damped least
squares (:func:`poser.core.ik.numeric.dls` with ``clip``) from the
closed-form candidates (which already point the arm at the target), the
present and home poses and a few spread starts; the budget is iterations.
"""

from __future__ import annotations

import numpy as np

from poser.core.ik import numeric, turns

__all__ = ["closest_approach"]

STARTS = 6
"""Spread starts added to the candidates."""
POLISH = 1
"""The best starts polished by a bounded quasi-Newton search when the target is out of reach."""
POLISH_ITERATIONS = 100
"""Iterations of that polish (it stops earlier once the distance no longer changes in its 15th digit)."""
ITERATIONS = 20
"""Iterations of each of the two stages."""


def closest_approach(chain, xyz, R, ref, candidates, tol):
    """The closest approach within limits: ``(q, position_error, orientation_error)``.

    Parameters
    ----------
    xyz : ndarray (3,)
    R : ndarray (3, 3) or None
    ref : ndarray (n,)
        The present (or home) pose.
    candidates : ndarray (K, n)
        Solver candidates (any), used as starts once moved into the limits.
    tol : (float, float)
    """
    lo, hi = chain.lower, chain.upper
    starts = [np.clip(ref, lo, hi)[None], np.clip(np.asarray(chain.home, float), lo, hi)[None]]
    if len(candidates):
        starts.append(np.clip(turns.place(chain, np.asarray(candidates, float)), lo, hi))
    starts.append(numeric.seeds(chain, STARTS, full_turns=False))
    S = np.vstack(starts)
    q1, pe1, _, _ = numeric.dls(chain, xyz, None, S, tol=tol, max_iter=ITERATIONS, clip=True)
    if float(pe1.min()) > tol[0] and chain.n > 1:
        # out of reach: the nearest pose is usually stretched out (singular), where damped least squares
        # creeps; a quasi-Newton polish within the limits settles the distance to the last digit
        order = np.argsort(pe1)[:POLISH]
        for k in order:
            q1[k], pe1[k] = _polish(chain, xyz, q1[k])
    best_p = float(pe1.min())
    if R is None:
        k = int(np.argmin(pe1))
        return q1[k], float(pe1[k]), 0.0
    # keep the position (heavily weighted) while turning the tool as near the target orientation as it goes
    keep = pe1 <= best_p + max(tol[0], 1e-3 * chain.scale)
    q2, pe2, oe2, _ = numeric.dls(chain, xyz, R, q1[keep], tol=tol, max_iter=ITERATIONS, clip=True,
                                  weight=(1e3, 1.0))
    slack = best_p + tol[0]
    ok = pe2 <= slack
    if not ok.any():
        from poser.core.ik.evaluate import orientation_errors

        k = int(np.argmin(pe1))
        return q1[k], float(pe1[k]), float(orientation_errors(chain, q1[k][None], R)[0])
    idx = np.flatnonzero(ok)
    k = int(idx[np.lexsort((pe2[idx], oe2[idx]))[0]])
    return q2[k], float(pe2[k]), float(oe2[k])


def _polish(chain, xyz, q0):
    """Minimise the tool point's squared distance from ``xyz`` within the limits (L-BFGS-B, analytic gradient,
    a fixed iteration budget; scipy.optimize.minimize); returns (q, distance)."""
    from scipy.optimize import minimize  # late: the window never needs scipy unless a target is out of reach

    from poser.core.fk import frames
    from poser.core.jacobian import jacobian_from_frames

    L = chain.scale
    scale = np.where(chain.revolute, 1.0, L)  # prismatic joints in units of the arm's size

    def f(z):
        q = z * scale
        F = frames(chain, q[None])
        d = (F[0, -1, :3, 3] - xyz) / L
        g = 2.0 * (jacobian_from_frames(chain, F)[0, :3].T @ d) / L * scale
        return float(d @ d), g

    bounds = list(zip(chain.lower / scale, chain.upper / scale))
    res = minimize(f, np.clip(q0, chain.lower, chain.upper) / scale, jac=True, method="L-BFGS-B", bounds=bounds,
                   options={"maxiter": POLISH_ITERATIONS, "ftol": 1e-15, "gtol": 1e-12, "maxcor": 20})
    q = np.clip(res.x * scale, chain.lower, chain.upper)
    d = float(np.linalg.norm(chain.fk(q)[:3, 3] - xyz))
    d0 = float(np.linalg.norm(chain.fk(np.clip(q0, chain.lower, chain.upper))[:3, 3] - xyz))
    return (q, d) if d <= d0 else (np.clip(q0, chain.lower, chain.upper), d0)
