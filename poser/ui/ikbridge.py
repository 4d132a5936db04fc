"""The window's one door to inverse kinematics (tests replace :func:`solve` to slow or break it)."""

from __future__ import annotations

from poser.core.ik import solve as _solve


def solve(chain, xyz, R=None, near=None, **options):
    """:func:`poser.core.ik.solve`."""
    return _solve(chain, xyz, R=R, near=near, **options)
