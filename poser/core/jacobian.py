"""Geometric Jacobian, manipulability, condition number and limit margins.

Joint values are in internal units (rad; the arm's length unit).
"""

from __future__ import annotations

import numpy as np

from poser.core.chain import Chain
from poser.core.errors import PoserValueError
from poser.core.fk import frames

__all__ = ["jacobian", "manipulability", "condition_number", "limit_margins", "joint_axes"]


def joint_axes(chain: Chain, q):
    """World position and direction of every joint's motion axis.

    Parameters
    ----------
    q : array_like, shape (..., n)

    Returns
    -------
    origins : ndarray, shape (..., n, 3)
        A point on each axis (the origin of the frame the joint moves in).
    axes : ndarray, shape (..., n, 3)
        Unit direction of each axis.
    F : ndarray, shape (..., n + 2, 4, 4)
        The frames, as from :func:`poser.core.fk.frames`.
    """
    q = chain.check_q(q)
    F = frames(chain, q)
    pre = np.stack([j.pre for j in chain.joints])  # (n, 4, 4)
    M = F[..., :-2, :, :] @ pre  # frame i-1 @ pre_i: the frame joint i moves in
    return M[..., :3, 3], M[..., :3, 2], F


def jacobian(chain: Chain, q):
    """Geometric Jacobian at the tool point, in world axes.

    Parameters
    ----------
    chain : Chain
    q : array_like, shape (..., n)

    Returns
    -------
    ndarray, shape (..., 6, n)
        Rows 0–2: linear velocity of the tool point (length unit per rad, or
        per length unit for prismatic joints); rows 3–5: angular velocity
        (rad per rad; zero for prismatic joints).
    """
    origins, axes, F = joint_axes(chain, q)
    p_tool = F[..., -1, :3, 3]
    rev = chain.revolute
    lin = np.where(rev[:, None], np.cross(axes, p_tool[..., None, :] - origins), axes)
    ang = np.where(rev[:, None], axes, 0.0)
    return np.concatenate([np.swapaxes(lin, -1, -2), np.swapaxes(ang, -1, -2)], axis=-2)


def _singular_values(J):
    J = np.asarray(J, dtype=float)
    if J.ndim < 2:
        raise PoserValueError(f"J must have shape (..., m, n), got shape {J.shape}")
    return np.linalg.svd(J, compute_uv=False)


def manipulability(J):
    """Yoshikawa's manipulability measure (Yoshikawa 1985).

    ``sqrt(det(J @ J.T))`` for a Jacobian with at least as many columns as
    rows; for fewer joints than task rows (a planar or four-axis arm) it is
    the same quantity over the joints, ``sqrt(det(J.T @ J))``.  Both equal
    the product of the singular values.  The linear rows are in length units,
    so the value depends on the arm's length unit.

    Parameters
    ----------
    J : array_like, shape (..., m, n)

    Returns
    -------
    ndarray, shape (...)
    """
    return np.prod(_singular_values(J), axis=-1)


def condition_number(J):
    """Ratio of the largest to the smallest singular value of ``J`` (..., m, n) → (...).

    Infinite at a singularity.  Like the manipulability, it mixes length
    and angle rows, so it depends on the arm's length unit.
    """
    s = _singular_values(J)
    with np.errstate(divide="ignore"):
        smin = s[..., -1]
        return np.where(smin > 1e-12 * np.maximum(s[..., 0], 1e-300), s[..., 0] / np.where(smin > 0, smin, 1.0), np.inf)


def limit_margins(chain: Chain, q):
    """Each joint's distance to its nearer limit.

    Parameters
    ----------
    q : array_like, shape (..., n)
        Internal units.

    Returns
    -------
    margin : ndarray, shape (..., n)
        ``min(q - lower, upper - q)`` in internal units; negative beyond a limit.
    fraction : ndarray, shape (..., n)
        The margin as a fraction of the joint's range (0 at a limit, 0.5 mid-range).
    """
    q = chain.check_q(q)
    margin = np.minimum(q - chain.lower, chain.upper - q)
    return margin, margin / (chain.upper - chain.lower)
