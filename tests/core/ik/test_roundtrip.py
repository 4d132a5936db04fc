"""FK(IK(T)) = T for every returned branch, over many random reachable targets on every demo arm.

The check is the definition of an inverse-kinematics solution (Siciliano,
Sciavicco, Villani & Oriolo, *Robotics: Modelling, Planning and Control*,
sec. 2.12; common practice): every branch that reports it reaches the target
must, pushed back through forward kinematics, land on that target.  The
forward kinematics used here is the core's own ``chain.fk`` (checked against
an independent symbolic model in tests/core/test_fk.py), not the solver's
internal one.  Targets are made by forward kinematics of random joint values
within the limits, so each one is reachable by construction; for the
closed-form arms the generating joint values must be among the branches.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.core.ik import solve
from poser.core.transforms import rotation_error

ROOT = Path(__file__).resolve().parents[3]
DEMO = sorted((ROOT / "demo_arms").glob("*.toml"))
CLOSED = {"boom3", "heron6", "planar3", "quill4"}


def _chain(path):
    return armfile.load(path).to_chain()


def _wrapped_match(chain, q, Q, tol=1e-6):
    d = np.asarray(Q) - q
    d = np.where(chain.revolute, np.angle(np.exp(1j * d)), d)
    return np.min(np.max(np.abs(d), axis=-1)) < tol


def _check_branches(chain, res, T, position_only):
    assert res.branches, res.status
    for b in res.branches:
        assert np.all(np.isfinite(b.q))
        assert np.isfinite(b.position_error) and np.isfinite(b.orientation_error)
        assert np.isfinite(b.manipulability) and b.label
        F = chain.fk(b.q)
        pe = float(np.linalg.norm(F[:3, 3] - T[:3, 3]))
        oe = 0.0 if position_only else float(rotation_error(F[:3, :3], T[:3, :3]))
        # the reported errors are the true ones
        assert pe == pytest.approx(b.position_error, abs=1e-9 * (1 + pe))
        assert oe == pytest.approx(b.orientation_error, abs=1e-9)
        if b.reaches:
            assert pe <= res.tolerance[0]
            assert oe <= res.tolerance[1]


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
@pytest.mark.parametrize("position_only", [False, True], ids=["pose", "position"])
def test_fk_of_every_branch_is_the_target(path, position_only):
    chain = _chain(path)
    closed = path.stem in CLOSED
    count = 40 if closed else 12
    rng = np.random.default_rng(7 + len(path.stem))
    qs = rng.uniform(chain.lower, chain.upper, size=(count, chain.n))
    Ts = chain.fk(qs)
    for q, T in zip(qs, Ts):
        res = solve(chain, T[:3, 3], None if position_only else T[:3, :3], near=q)
        _check_branches(chain, res, T, position_only)
        assert res.reachable, res.status
        # the pose we started from is within limits, so a branch within limits reaches it
        best = res.branches[0]
        assert best.reaches and best.within_limits
        if closed and (not position_only or chain.n <= 3):
            # the closed form returns every branch, so also the one we started from
            Q = [b.q for b in res.branches if b.reaches]
            assert _wrapped_match(chain, q, Q), (path.stem, q)
            assert best.distance == pytest.approx(0.0, abs=1e-6)


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
def test_targets_from_outside_the_limits_still_solve(path):
    """Poses made from joint values beyond the limits: reachable geometrically; every branch still lands on T."""
    chain = _chain(path)
    rng = np.random.default_rng(11)
    span = chain.upper - chain.lower
    qs = rng.uniform(chain.lower - 0.3 * span, chain.upper + 0.3 * span, size=(6, chain.n))
    for T in chain.fk(qs):
        res = solve(chain, T[:3, 3], T[:3, :3])
        if res.branches:
            _check_branches(chain, res, T, False)
        assert res.reachable or res.closest is not None
