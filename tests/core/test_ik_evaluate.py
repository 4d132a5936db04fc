"""The solver's batched evaluation of its branches agrees with the core's separate functions.

:func:`poser.core.ik.solve` judges all candidate branches in one batched pass
(:mod:`poser.core.ik._evaluate`): the manipulability there is ``|det J|`` for
six joints — for a square matrix the product of the singular values equals
the absolute value of the determinant (linear algebra, common practice) —
and the words of the labels come from dot products of the characteristic
vectors instead of the vectors themselves.  These tests hold both to the
straightforward versions: :func:`poser.core.jacobian.manipulability` (product
of the singular values of :func:`poser.core.jacobian.jacobian`) and the
vector form of :func:`poser.core.ik._labels.describe`.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.ik import _labels, solve, structure_of
from poser.core.ik._evaluate import Evaluator, evaluator
from poser.core.ik._geometry import chain_lines
from poser.core.jacobian import jacobian, manipulability

ROOT = Path(__file__).resolve().parents[2]
DEMO = sorted((ROOT / "demo_arms").glob("*.toml"))


def _chain(path):
    return armfile.load(path).to_chain()


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
def test_branch_manipulability_is_the_jacobians(path):
    chain = _chain(path)
    scale = chain_lines(chain).scale
    rng = np.random.default_rng(8)
    qs = rng.uniform(chain.lower, chain.upper, size=(6, chain.n))
    qs[0] = 0.0  # often singular (wrist axes in line, arm stretched)
    T = chain.fk(qs)
    checked = 0
    for Tk in T:
        res = solve(chain, Tk[:3, 3], Tk[:3, :3], time_budget=1.0)
        for b in res.branches:
            ref = float(manipulability(jacobian(chain, b.q)))
            # rows in length units: the value scales with the arm's size cubed (three linear rows)
            assert b.manipulability == pytest.approx(ref, rel=1e-7, abs=1e-9 * scale**3)
            checked += 1
    assert checked


def _words_both_ways(chain, Q):
    """Labels from the solver's dot-product form and from the vector form."""
    fmt = lambda a: f"{np.degrees(a):.0f}°"  # noqa: E731
    fast = _labels.describe(chain, Q, fmt, evaluator(chain).frames(Q))
    plain = Evaluator(chain)
    plain.lab = None  # no dot-product form: describe() takes the vector form
    return fast, _labels.describe(chain, Q, fmt, plain.frames(Q))


@pytest.mark.parametrize("stem", ["heron6", "wren6"])
def test_label_words_dot_product_form_matches_vector_form(stem):
    chain = _chain(ROOT / "demo_arms" / f"{stem}.toml")
    assert evaluator(chain).lab is not None  # these arms use the dot-product form
    rng = np.random.default_rng(21)
    Q = rng.uniform(chain.lower, chain.upper, size=(400, chain.n))
    Q[:40] = np.round(Q[:40] / (np.pi / 2)) * (np.pi / 2)  # right angles: stretched, folded, aligned wrists
    Q[40:60, 4] = 0.0  # wrist axes aligned
    Q[60:80, 2] = Q[60:80, 1] = 0.0
    fast, plain = _words_both_ways(chain, Q)
    assert fast == plain
    words = " ".join(fast)
    assert "shoulder front" in words and "shoulder back" in words
    assert "elbow up" in words and "elbow down" in words


def test_label_words_agree_at_the_special_places():
    """Wrist centre on the base axis, wrist axes in line: the same words both ways."""
    chain = _chain(ROOT / "demo_arms" / "heron6.toml")
    L, st = chain_lines(chain), structure_of(chain)
    R = np.eye(3)
    # the tool position that puts the wrist centre on the base axis, 1.4 m up
    P = np.array([0.0, 0.0, 1400.0]) - R @ L.M[:3, :3].T @ (st.centre - L.p0)
    res = solve(chain, P, R)
    Q = np.array([b.q for b in res.branches] + [np.zeros(chain.n)])
    fast, plain = _words_both_ways(chain, Q)
    assert fast == plain
    assert any("wrist over the base axis" in w for w in fast)
    assert "wrist axes aligned" in fast[-1]
