"""The solver's fast bookkeeping agrees with plain, row-by-row versions of the same rules.

:func:`poser.core.ik.solve` evaluates its candidate branches in one batched
pass (:mod:`poser.core.ik._evaluate`), removes repeated candidates and
expands joints whose range exceeds a full turn with table look-ups.  These
tests hold each to a straightforward version: the tool pose and the joint
directions to the forward kinematics and geometric Jacobian of
:mod:`poser.core.jacobian`; repeated candidates to a pairwise comparison
of every joint (angles compared modulo a full turn, common practice);
extra turns to a per-row enumeration of every whole turn that keeps a joint
within its limits.
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.chain import Chain
from poser.core.ik import _context, _dedupe, _expand_turns
from poser.core.ik._evaluate import evaluator
from poser.core.ik._geometry import TWO_PI, chain_lines
from poser.core.jacobian import jacobian

ROOT = Path(__file__).resolve().parents[2]
DEMO = sorted((ROOT / "demo_arms").glob("*.toml"))
D = np.pi / 180


def _chain(path):
    return armfile.load(path).to_chain()


def _with_limits(chain, i, lo, hi):
    joints = list(chain.joints)
    joints[i] = dataclasses.replace(joints[i], lower=lo, upper=hi, home=min(max(joints[i].home, lo), hi))
    return Chain(joints, chain.base, chain.tool, chain.name, chain.units)


# -- the batched evaluation --------------------------------------------------------------------------


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
def test_frames_give_the_forward_kinematics_and_the_joint_directions(path):
    chain = _chain(path)
    scale = chain_lines(chain).scale
    rng = np.random.default_rng(4)
    Q = rng.uniform(chain.lower, chain.upper, size=(9, chain.n))
    F = evaluator(chain).frames(Q)
    T = chain.fk(Q)
    np.testing.assert_allclose(F.p, T[:, :3, 3], rtol=0, atol=1e-10 * scale)
    np.testing.assert_allclose(F.Rt, T[:, :3, :3], rtol=0, atol=1e-12)
    J = jacobian(chain, Q)  # (K, 6, n): the angular rows of a revolute joint are its direction, the
    for i in range(chain.n):  # linear rows of a prismatic one
        ref = J[:, 3:, i] if chain.revolute[i] else J[:, :3, i]
        np.testing.assert_allclose(F.w[:, :, i], ref, rtol=0, atol=1e-12)
    # rows 3 and 4 repeat x and y (the cyclic shifts the cross products take)
    # (equal up to rounding: BLAS may sum the repeated rows in another order)
    np.testing.assert_allclose(F.Y[:, 3:5], F.Y[:, 0:2], rtol=1e-13, atol=1e-13 * scale)


# -- repeated candidates -----------------------------------------------------------------------------


def _dedupe_plain(chain, Q, tol):
    """Keep a row unless every joint is within ``tol`` of some kept row (angles modulo a full turn)."""
    scale = chain_lines(chain).scale
    keep = []
    for k in range(len(Q)):
        close = False
        for j in keep:
            d = Q[k] - Q[j]
            d = np.where(chain.revolute, np.abs(np.pi - np.mod(np.pi - d, TWO_PI)), np.abs(d / scale))
            if np.all(d < tol):
                close = True
                break
        if not close:
            keep.append(k)
    return keep


@pytest.mark.parametrize("stem", ["heron6", "boom3", "planar3"])
def test_dedupe_matches_a_pairwise_comparison(stem):
    chain = _chain(ROOT / "demo_arms" / f"{stem}.toml")
    n, tol = chain.n, 1e-7
    rng = np.random.default_rng(12)
    for trial in range(200):
        base = rng.uniform(-np.pi, np.pi, size=(3, n))
        rows = [base[0], base[1], base[2]]
        for _ in range(int(rng.integers(2, 10))):
            r = rows[int(rng.integers(len(rows)))].copy()
            i = int(rng.integers(n))
            kind = int(rng.integers(4))
            if kind == 0:  # the same configuration a whole turn away
                r[i] += TWO_PI * (1 if chain.revolute[i] else 0)
            elif kind == 1:  # within the tolerance, or just beyond it
                r[i] += float(rng.choice([0.4, -0.4, 1.6, -1.6])) * tol * (1 if chain.revolute[i] else 1e3)
            elif kind == 2:  # either side of the ±180° seam
                r[i] = float(rng.choice([np.pi, -np.pi, np.pi - 1e-9, -np.pi + 1e-9]))
            rows.append(r)
        Q = np.array(rows)[rng.permutation(len(rows))]
        assert _dedupe(chain, Q, tol) == _dedupe_plain(chain, Q, tol), trial


# -- extra turns -------------------------------------------------------------------------------------


def _expand_plain(chain, Q, ref, hit, max_per_branch=8):
    """Rows, turns and source rows as the rules of _expand_turns say, one row and joint at a time."""
    lo, hi = chain.lower.tolist(), chain.upper.tolist()
    wide = [i for i in range(chain.n) if chain.revolute[i] and hi[i] - lo[i] > TWO_PI + 1e-9]
    rows, turns, src = [], [], []
    for b, q in enumerate(Q.tolist()):
        placed = []
        for i, v in enumerate(q):
            if chain.revolute[i]:
                v = math.pi - (math.pi - v) % TWO_PI  # in (-180°, 180°]
                if i not in wide:
                    v = v + round((0.5 * (lo[i] + hi[i]) - v) / TWO_PI) * TWO_PI
            placed.append(v)
        options = []
        for i in wide:
            a, c = (lo[i] - 1e-9 - math.pi) / TWO_PI, (hi[i] + 1e-9 + math.pi) / TWO_PI
            ka, kb = math.ceil(a) - 1, math.floor(c) + 1  # one spare turn each side: the limits decide
            options.append([k for k in range(ka, kb + 1) if lo[i] - 1e-9 <= placed[i] + k * TWO_PI <= hi[i] + 1e-9])
        if hit[b]:
            combos = list(itertools.islice(itertools.product(*options), max_per_branch))
        else:
            combo = []
            for i, ks in zip(wide, options):
                combo.append(0 if 0 in ks else min(ks, key=lambda k: abs(placed[i] + k * TWO_PI - ref[i])))
            combos = [tuple(combo)]
        for combo in combos:
            row, t = list(placed), [0] * chain.n
            for i, k in zip(wide, combo):
                row[i] = placed[i] + k * TWO_PI
                t[i] = k
            rows.append(row)
            turns.append(tuple(t))
            src.append(b)
    return rows, turns, src


@pytest.mark.parametrize("limits", [None, (5, -10 * D, 500 * D), (3, -400 * D, 20 * D)])
def test_expand_turns_matches_a_per_row_enumeration(limits):
    chain = _chain(ROOT / "demo_arms" / "heron6.toml")
    if limits is not None:
        chain = _with_limits(chain, *limits)
    rng = np.random.default_rng(3)
    ref = rng.uniform(chain.lower, chain.upper)
    for trial in range(60):
        Q = rng.uniform(-2 * np.pi, 2 * np.pi, size=(int(rng.integers(1, 9)), chain.n))
        Q[: trial % 3, 5] = np.pi  # on the seam: every turn that fits
        hit = (rng.uniform(size=len(Q)) < 0.7).tolist()
        Qe, turns, src, Vb, limits_checked = _expand_turns(chain, Q, ref, hit)
        rows, turns_ref, src_ref = _expand_plain(chain, Q, ref, hit)
        assert src == src_ref and turns == turns_ref, trial
        np.testing.assert_array_equal(Qe, np.array(rows))
        # every row breaks exactly the limits its base row breaks on the joints checked
        cx = _context(chain)
        assert limits_checked == cx.narrow_limits
        for j, k in enumerate(src):
            for i, below, above in limits_checked:
                assert (Qe[j, i] < below) == (Vb[k, i] < below) and (Qe[j, i] > above) == (Vb[k, i] > above)
            for i in cx.wide:
                assert chain.lower[i] - 1e-9 <= Qe[j, i] <= chain.upper[i] + 1e-9


def test_expand_turns_at_the_exact_edges_of_the_limits():
    """Values one rounding step either side of where a turn starts or stops fitting."""
    chain = _with_limits(_chain(ROOT / "demo_arms" / "heron6.toml"), 3, -200 * D, 190 * D)
    cx = _context(chain)
    values = []
    for i, lo_e, hi_e, cand in cx.wide_limits:
        for k in cand:
            s = k * TWO_PI
            for edge in (lo_e - s, hi_e - s):
                if -np.pi < edge <= np.pi:
                    v = edge
                    for _ in range(3):
                        v = math.nextafter(v, -math.inf)
                    for _ in range(7):
                        values.append((i, v))
                        v = math.nextafter(v, math.inf)
    assert values
    Q = np.tile(np.array([0.1, 0.2, 0.3, 0.4, 0.5, 0.6]), (len(values), 1))
    for r, (i, v) in enumerate(values):
        Q[r, i] = v
    for hit in ([True] * len(Q), [False] * len(Q)):
        Qe, turns, src, _, _ = _expand_turns(chain, Q, chain.home, hit)
        rows, turns_ref, src_ref = _expand_plain(chain, Q, chain.home, hit)
        assert src == src_ref and turns == turns_ref
        np.testing.assert_array_equal(Qe, np.array(rows))


@pytest.mark.parametrize(
    "bound, shift",
    [(1.0, 0.0), (TWO_PI, TWO_PI), (-TWO_PI, -TWO_PI), (3.3161255797892264, TWO_PI), (-6.1, -12.566370614359172),
     (1e-300, 0.0), (0.0, 0.0), (5.0, 5.0 + 1e-15), (-0.0, 3.0)],
)
def test_the_edges_where_a_turn_starts_to_fit_are_exact(bound, shift):
    from poser.core.ik import _first_at_least, _last_at_most

    v = _first_at_least(bound, shift)
    assert v + shift >= bound and not math.nextafter(v, -math.inf) + shift >= bound
    v = _last_at_most(bound, shift)
    assert v + shift <= bound and not math.nextafter(v, math.inf) + shift <= bound
