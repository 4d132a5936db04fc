"""Denavit–Hartenberg tables in the standard and modified conventions.

Standard (distal):  ``A_i = Rz(θ_i) Tz(d_i) Tx(a_i) Rx(α_i)``.
Modified (proximal): ``A_i = Rx(α_{i-1}) Tx(a_{i-1}) Rz(θ_i) Tz(d_i)``; row
``i`` holds ``a_{i-1}`` and ``α_{i-1}`` in its ``a`` and ``alpha`` fields.

A revolute joint's value adds to θ, a prismatic joint's to d.  Angles in
radians, lengths in the arm's unit.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np

from poser.core.chain import Chain, Joint
from poser.core.errors import PoserValueError
from poser.core.transforms import cos_sin, rot_x, rot_z

__all__ = ["DHRow", "dh_matrix", "chain_from_dh", "convert_dh", "STANDARD", "MODIFIED"]

STANDARD = "standard"
MODIFIED = "modified"
CONVENTIONS = (STANDARD, MODIFIED)


@dataclass(frozen=True)
class DHRow:
    """One row of a DH table (angles in radians, limits in internal units)."""

    name: str
    kind: str
    a: float = 0.0
    alpha: float = 0.0
    d: float = 0.0
    theta: float = 0.0
    lower: float = -np.pi
    upper: float = np.pi
    home: float = 0.0


def _tx(x):
    T = np.zeros(np.shape(x) + (4, 4))
    T[..., 0, 0] = T[..., 1, 1] = T[..., 2, 2] = T[..., 3, 3] = 1.0
    T[..., 0, 3] = x
    return T


def _tz(z):
    T = np.zeros(np.shape(z) + (4, 4))
    T[..., 0, 0] = T[..., 1, 1] = T[..., 2, 2] = T[..., 3, 3] = 1.0
    T[..., 2, 3] = z
    return T


def _rx(a):
    T = np.zeros(np.shape(a) + (4, 4))
    T[..., :3, :3] = rot_x(a)
    T[..., 3, 3] = 1.0
    return T


def _rz(a):
    T = np.zeros(np.shape(a) + (4, 4))
    T[..., :3, :3] = rot_z(a)
    T[..., 3, 3] = 1.0
    return T


def dh_matrix(a, alpha, d, theta, convention: str = STANDARD):
    """The A-matrix of DH parameters, batched.

    Parameters
    ----------
    a, alpha, d, theta : array_like, broadcastable shapes (...)
        Lengths in any unit, angles in radians.  In the modified convention
        ``a`` and ``alpha`` are a_{i-1} and α_{i-1}.
    convention : {"standard", "modified"}

    Returns
    -------
    ndarray, shape (..., 4, 4)
    """
    if convention not in CONVENTIONS:
        raise PoserValueError(f"convention must be 'standard' or 'modified', got {convention!r}")
    a, alpha, d, theta = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (a, alpha, d, theta)))
    if convention == STANDARD:
        return _rz(theta) @ _tz(d) @ _tx(a) @ _rx(alpha)
    return _rx(alpha) @ _tx(a) @ _rz(theta) @ _tz(d)


def _standard_post(row: DHRow):
    # Rz(θ) Tz(d) Tx(a) Rx(α), written out so exact zeros stay zeros.
    ct, st = cos_sin(row.theta)
    ca, sa = cos_sin(row.alpha)
    ct, st, ca, sa = float(ct), float(st), float(ca), float(sa)
    return np.array(
        [
            [ct, -st * ca, st * sa, row.a * ct],
            [st, ct * ca, -ct * sa, row.a * st],
            [0.0, sa, ca, row.d],
            [0.0, 0.0, 0.0, 1.0],
        ]
    )


def _modified_parts(row: DHRow):
    ca, sa = (float(v) for v in cos_sin(row.alpha))
    ct, st = (float(v) for v in cos_sin(row.theta))
    pre = np.array([[1.0, 0.0, 0.0, row.a], [0.0, ca, -sa, 0.0], [0.0, sa, ca, 0.0], [0.0, 0.0, 0.0, 1.0]])
    post = np.array([[ct, -st, 0.0, 0.0], [st, ct, 0.0, 0.0], [0.0, 0.0, 1.0, row.d], [0.0, 0.0, 0.0, 1.0]])
    return pre, post


def chain_from_dh(rows: Sequence[DHRow], convention: str = STANDARD, base=None, tool=None, name="arm", units=None):
    """Build a :class:`~poser.core.chain.Chain` from DH rows.

    Parameters
    ----------
    rows : sequence of DHRow
        Base first.
    convention : {"standard", "modified"}
    base, tool : array_like, shape (4, 4), optional
    name : str
    units : poser.core.units.Units, optional

    Returns
    -------
    Chain
        Frame ``i`` of the chain is DH frame ``i`` of the given convention.
    """
    if convention not in CONVENTIONS:
        raise PoserValueError(f"convention must be 'standard' or 'modified', got {convention!r}")
    joints = []
    for row in rows:
        if convention == STANDARD:
            pre, post = np.eye(4), _standard_post(row)
        else:
            pre, post = _modified_parts(row)
        joints.append(Joint(row.name, row.kind, pre, post, row.lower, row.upper, row.home))
    return Chain(joints, base=base, tool=tool, name=name, units=units)


def _transform(name, T):
    if T is None:
        return np.eye(4)
    T = np.array(T, dtype=float)
    if T.shape != (4, 4):
        raise PoserValueError(f"{name} must have shape (4, 4), got shape {T.shape}")
    return T


def convert_dh(rows: Sequence[DHRow], source: str, target: str, base=None, tool=None):
    """The same arm's DH table in the other convention: same tool pose, same joint axes.

    Standard row i is ``Rz(θ_i) Tz(d_i) Tx(a_i) Rx(α_i)``; modified row i is
    ``Rx(α_{i-1}) Tx(a_{i-1}) Rz(θ_i) Tz(d_i)``.  Regrouping the product
    ``base · A_1 ⋯ A_n · tool`` gives

    * standard → modified: modified row i takes ``a`` and ``alpha`` from
      standard row i−1 (zeros for row 1) and keeps ``θ``, ``d``; standard row
      n's ``Tx(a_n) Rx(α_n)`` is folded into the tool:
      ``tool' = Tx(a_n) Rx(α_n) · tool``;
    * modified → standard: modified row 1's ``Rx(α_0) Tx(a_0)`` is folded into
      the base (``base' = base · Rx(α_0) Tx(a_0)``); standard row i takes
      ``a`` and ``alpha`` from modified row i+1 (zeros for the last row).

    For every joint value the tool pose is the same, and so are the joint
    axes in the world.  The intermediate joint frames are *not*: standard
    frame i sits at the distal end of link i, modified frame i at joint i
    (proximal), so frame-by-frame output differs between the two tables.

    Parameters
    ----------
    rows : sequence of DHRow
        Base first; angles in radians.  Names, kinds, limits and homes are kept.
    source, target : {"standard", "modified"}
        The convention ``rows`` are written in, and the one wanted.
    base, tool : array_like, shape (4, 4), optional
        World → base and flange → tool transforms (identity when omitted).

    Returns
    -------
    rows : list of DHRow
    base, tool : ndarray, shape (4, 4)
        New arrays (the inputs are not changed).

    Raises
    ------
    PoserValueError
        For an unknown convention or a transform of the wrong shape.
    """
    for name, conv in (("source", source), ("target", target)):
        if conv not in CONVENTIONS:
            raise PoserValueError(f"{name} convention must be 'standard' or 'modified', got {conv!r}")
    rows = list(rows)
    base, tool = _transform("base", base), _transform("tool", tool)
    if source == target or not rows:
        return rows, base, tool
    if source == STANDARD:
        out, prev = [], (0.0, 0.0)
        for r in rows:
            out.append(replace(r, a=prev[0], alpha=prev[1]))
            prev = (r.a, r.alpha)
        if prev != (0.0, 0.0):
            tool = dh_matrix(prev[0], prev[1], 0.0, 0.0, STANDARD) @ tool  # Tx(a_n) Rx(α_n)
        return out, base, tool
    out = []
    for i, r in enumerate(rows):
        nxt = rows[i + 1] if i + 1 < len(rows) else None
        out.append(replace(r, a=nxt.a if nxt else 0.0, alpha=nxt.alpha if nxt else 0.0))
    if (rows[0].a, rows[0].alpha) != (0.0, 0.0):
        base = base @ dh_matrix(rows[0].a, rows[0].alpha, 0.0, 0.0, MODIFIED)  # Rx(α_0) Tx(a_0)
    return out, base, tool
