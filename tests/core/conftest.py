"""An independent symbolic model of DH chains, built with sympy.

Nothing here uses Poser's own matrices: the elementary rotations and
translations are written out and multiplied symbolically, following the
definitions of the DH A-matrix (standard/distal form: Spong, Hutchinson &
Vidyasagar, *Robot Modeling and Control*, ch. 3; modified/proximal form:
Craig, *Introduction to Robotics*, ch. 3; both from memory).
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest
import sympy as sp


def _rz(t):
    c, s = sp.cos(t), sp.sin(t)
    return sp.Matrix([[c, -s, 0, 0], [s, c, 0, 0], [0, 0, 1, 0], [0, 0, 0, 1]])


def _rx(t):
    c, s = sp.cos(t), sp.sin(t)
    return sp.Matrix([[1, 0, 0, 0], [0, c, -s, 0], [0, s, c, 0], [0, 0, 0, 1]])


def _ry(t):
    c, s = sp.cos(t), sp.sin(t)
    return sp.Matrix([[c, 0, s, 0], [0, 1, 0, 0], [-s, 0, c, 0], [0, 0, 0, 1]])


def _trans(x=0, y=0, z=0):
    M = sp.eye(4)
    M[0, 3], M[1, 3], M[2, 3] = x, y, z
    return M


def a_matrix(a, alpha, d, theta, convention):
    """Symbolic DH A-matrix as a product of elementary motions."""
    if convention == "standard":  # Rz(θ) Tz(d) Tx(a) Rx(α)
        return _rz(theta) * _trans(z=d) * _trans(x=a) * _rx(alpha)
    # modified: Rx(α_{i-1}) Tx(a_{i-1}) Rz(θ_i) Tz(d_i)
    return _rx(alpha) * _trans(x=a) * _rz(theta) * _trans(z=d)


def pose(xyz, rpy):
    """Symbolic rigid transform: translation, then Rz(yaw) Ry(pitch) Rx(roll) about fixed axes."""
    return _trans(*xyz) * _rz(rpy[2]) * _ry(rpy[1]) * _rx(rpy[0])


def _num(v):
    """A float as an exact sympy number when it is a multiple of π/2, else a Float."""
    k = v / (np.pi / 2)
    if abs(k - round(k)) < 1e-15 and v != 0.0:
        return sp.Rational(int(round(k)), 2) * sp.pi
    return sp.Float(v, 30)


def chain_product(rows, convention, base=None, tool=None):
    """The symbolic tool pose of a DH table (poser.core.dh.DHRow list) and its frames.

    Returns ``(q_symbols, frames, f)`` where ``frames`` is the list of symbolic
    world → frame i matrices (base, 1..n, tool) and ``f(q)`` evaluates the
    tool pose numerically (lambdified).  Joint values add to θ (revolute) or
    d (prismatic).
    """
    n = len(rows)
    q = sp.symbols(f"q1:{n + 1}", real=True)
    T = sp.eye(4) if base is None else base
    frames = [T]
    for row, qi in zip(rows, q):
        theta = _num(row.theta) + (qi if row.kind == "revolute" else 0)
        d = _num(row.d) + (qi if row.kind == "prismatic" else 0)
        T = T * a_matrix(_num(row.a), _num(row.alpha), d, theta, convention)
        frames.append(T)
    T = T * (sp.eye(4) if tool is None else tool)
    frames.append(T)
    f = sp.lambdify([q], T, "numpy")
    return q, frames, f


def symbolic_transform(T):
    """A numeric rigid transform as a sympy matrix of Floats."""
    return sp.Matrix(4, 4, [sp.Float(float(v), 30) for v in np.asarray(T).ravel()])


@pytest.fixture(scope="session")
def sym():
    """The sympy model: ``a_matrix``, ``pose``, ``chain_product``, ``symbolic_transform`` and elementary motions."""
    return SimpleNamespace(
        a_matrix=a_matrix,
        pose=pose,
        chain_product=chain_product,
        symbolic_transform=symbolic_transform,
        rz=_rz,
        rx=_rx,
        ry=_ry,
        trans=_trans,
    )
