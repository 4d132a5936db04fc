"""Re-describing an arm in the other DH convention (for the arm editor)."""

from __future__ import annotations

import numpy as np

from poser.core.dh import CONVENTIONS, MODIFIED, STANDARD, dh_matrix
from poser.core.errors import PoserValueError
from poser.core.transforms import as_xyz_rpy, from_xyz_rpy
from poser.io.errors import ArmFileError
from poser.io.spec import ArmSpec, validate

__all__ = ["convert_convention"]


def _tidy(v: float) -> float:
    """``v`` without the last-bit noise of a matrix product: 89.99999999999999 → 90, 1e-17 → 0."""
    r = round(v, 9)
    if abs(v - r) <= 1e-12 * max(1.0, abs(v)):
        v = r
    if v == 0.0:
        return 0.0  # no -0.0
    return float(int(v)) if v.is_integer() and abs(v) < 1e15 else v


def _place(xyz, rpy, rad):
    return from_xyz_rpy(np.array(xyz, float), np.array(rpy, float) * rad)


def _unplace(T, rad):
    xyz, rpy = as_xyz_rpy(T)
    return tuple(_tidy(float(v)) for v in xyz), tuple(_tidy(float(v) / rad) for v in rpy)


def convert_convention(spec: ArmSpec, convention: str) -> ArmSpec:
    """The same physical arm, with the same tool pose for every joint value, in ``convention``.

    The rows' ``a`` and ``alpha`` move by one row (see
    :func:`poser.core.dh.convert_dh` for the rule and why the intermediate
    frames differ); the last standard row's ``Tx(a_n) Rx(α_n)`` is folded into
    ``[tool]`` (standard → modified), the first modified row's
    ``Rx(α_0) Tx(a_0)`` into ``[base]`` (modified → standard).  ``base``/``tool``
    stay xyz/rpy in the arm's units; names, types, ``d``, ``theta``, limits and
    homes are unchanged; each joint keeps its origin, so a save keeps the
    comments with their joints.

    Parameters
    ----------
    spec : ArmSpec
        Not changed.
    convention : {"standard", "modified"}

    Returns
    -------
    ArmSpec
        A new spec (a copy when ``convention`` is the spec's own).

    Raises
    ------
    PoserValueError
        For an unknown convention.
    ArmFileError
        When ``spec`` is invalid.
    """
    if convention not in CONVENTIONS:
        raise PoserValueError(f"convention must be 'standard' or 'modified', got {convention!r}")
    problems = validate(spec)
    if problems:
        raise ArmFileError(problems)
    new = spec.copy()
    if convention == spec.convention:
        return new
    rad = spec.units.angle_to_rad
    old = [(j.a, j.alpha) for j in spec.joints]
    if spec.convention == STANDARD:  # to modified: row i takes row i-1's (a, alpha)
        for i, j in enumerate(new.joints):
            j.a, j.alpha = old[i - 1] if i else (0, 0)
        a, alpha = old[-1]
        if (a, alpha) != (0, 0):
            T = dh_matrix(a, alpha * rad, 0.0, 0.0, STANDARD) @ _place(spec.tool_xyz, spec.tool_rpy, rad)
            new.tool_xyz, new.tool_rpy = _unplace(T, rad)
    else:  # to standard: row i takes row i+1's (a, alpha)
        for i, j in enumerate(new.joints):
            j.a, j.alpha = old[i + 1] if i + 1 < len(old) else (0, 0)
        a, alpha = old[0]
        if (a, alpha) != (0, 0):
            T = _place(spec.base_xyz, spec.base_rpy, rad) @ dh_matrix(a, alpha * rad, 0.0, 0.0, MODIFIED)
            new.base_xyz, new.base_rpy = _unplace(T, rad)
    new.convention = convention
    return new
