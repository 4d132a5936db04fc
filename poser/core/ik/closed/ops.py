"""The two backends of the closed forms: plain Python floats, or numpy arrays over many targets.

Every closed-form step (:mod:`.subproblems`, :mod:`.stages`) is written once,
on vectors held as 3-tuples of components.  A component is a float for one
target (``SCALAR``: the live path, where numpy's per-call cost would dominate)
or an array of shape (N,) for N targets (``VECTOR``: batches, and the samples
of a solution family).  Arithmetic operators serve both; the few functions
that differ live here, with the same names.  Nothing in the steps branches on
the backend.

Rules the steps follow so both backends give the same numbers: no division
by a value that may be zero (use :meth:`safe`), ``sqrt0`` and ``acos1`` clip
their domain, and choices are made with ``where`` (both sides are computed).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["SCALAR", "VECTOR", "Backend"]


class Backend:
    """The functions a closed-form step may call (see the module docstring)."""

    name = "backend"


class _Scalar(Backend):
    name = "scalar"
    sin = staticmethod(math.sin)
    cos = staticmethod(math.cos)
    atan2 = staticmethod(math.atan2)
    hypot = staticmethod(math.hypot)
    abs = staticmethod(abs)

    @staticmethod
    def sqrt0(x):
        """√x, 0 for x ≤ 0."""
        return math.sqrt(x) if x > 0.0 else 0.0

    @staticmethod
    def acos1(x):
        """acos of x clipped to [-1, 1]."""
        return math.acos(-1.0 if x < -1.0 else 1.0 if x > 1.0 else x)

    @staticmethod
    def where(c, a, b):
        return a if c else b

    @staticmethod
    def safe(x):
        """``x`` with exact zeros replaced by 1 (a divisor that is guarded elsewhere)."""
        return x if x != 0.0 else 1.0

    @staticmethod
    def and_(a, b):
        return bool(a and b)

    @staticmethod
    def or_(a, b):
        return bool(a or b)

    @staticmethod
    def not_(a):
        return not a

    @staticmethod
    def full(x, like):
        return float(x)


class _Vector(Backend):
    name = "vector"
    sin = staticmethod(np.sin)
    cos = staticmethod(np.cos)
    atan2 = staticmethod(np.arctan2)
    hypot = staticmethod(np.hypot)
    abs = staticmethod(np.abs)

    @staticmethod
    def sqrt0(x):
        return np.sqrt(np.maximum(x, 0.0))

    @staticmethod
    def acos1(x):
        return np.arccos(np.clip(x, -1.0, 1.0))

    where = staticmethod(np.where)

    @staticmethod
    def safe(x):
        return np.where(x != 0.0, x, 1.0)

    and_ = staticmethod(np.logical_and)
    or_ = staticmethod(np.logical_or)
    not_ = staticmethod(np.logical_not)

    @staticmethod
    def full(x, like):
        return np.full(np.shape(like), x, dtype=float) if np.ndim(x) == 0 else np.asarray(x, float)


SCALAR = _Scalar()
VECTOR = _Vector()
