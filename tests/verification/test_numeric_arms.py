"""Arms Poser solves numerically (the five-axis arm): singular targets leave joints free there too."""

from __future__ import annotations

from collections import Counter

import numpy as np
from scipy.optimize import least_squares

from . import arms
from . import poserside as ps
from . import reference as ref


def _on_axis_target(a):
    """A pose within limits with the tool point on axis 1 and the tool axis along it (J1 and J5 then trade)."""

    def f(v):
        T = ref.fk(a, ref.to_internal(a, [0, v[0], v[1], v[2], 0]))
        return [T[0, 3], T[0, 2], 0.0]

    s = least_squares(f, [20, 60, 10], bounds=([-100, -150, -120], [135, 150, 120]), xtol=1e-15, ftol=1e-15,
                      gtol=1e-15).x
    q = ref.to_internal(a, [0, *s, 0])
    T = ref.fk(a, q)
    assert np.linalg.norm(T[:2, 3]) < 1e-9 and abs(abs(T[2, 2]) - 1) < 1e-12 and ref.fits_limits(a, q)
    # the reference: turning J1 by t and J5 by -t keeps the tool pose (both axes are the base axis here)
    for t in (0.7, -2.1):
        assert np.allclose(ref.fk(a, q + np.array([t, 0, 0, 0, -t])), T, atol=1e-9)
    return T


def test_five_axis_on_axis_target_is_a_family_not_many_rows():
    a = arms.five_axis()
    T = _on_axis_target(a)
    res = ps.solve(a, T[:3, 3], T[:3, :3])
    assert res.reachable
    rows = Counter((b.configuration, b.turns) for b in res.branches if b.family is None)
    assert all(c == 1 for c in rows.values()), rows.most_common(2)
    assert any(b.family is not None for b in res.branches)


def test_five_axis_on_axis_target_with_a_narrow_window_is_reachable():
    a = ref.with_limits(arms.five_axis(), 4, 100.2, 100.6)
    T = _on_axis_target(arms.five_axis())
    inside = ref.solve_bounded(a, T[:3, 3], T[:3, :3], K=100)
    assert inside
    assert ps.solve(a, T[:3, 3], T[:3, :3]).reachable


def test_five_axis_near_stretched_elbow_counts_each_branch_once():
    a = arms.five_axis()
    q = ref.to_internal(a, [-134.214342, 24.608872, 0.301487, 36.121674, 28.288432])
    T = ref.fk(a, q)
    sols = ref.solve_all(a, T[:3, 3], T[:3, :3], K=200)
    assert len(sols) == 4
    expected = sum(ref.turn_count(a, s) for s in sols)  # J5 over ±350°: two turns each
    assert expected == 8
    res = ps.solve(a, T[:3, 3], T[:3, :3])
    rows = Counter((b.configuration, b.turns) for b in res.branches)
    assert all(c == 1 for c in rows.values()), rows.most_common(1)
    assert res.total == expected
