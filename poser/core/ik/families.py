"""Families of solutions: where the target leaves something free, search the whole family.

A family's limit verdict is "some member within limits", found by a search
over the family — never by one arbitrary member:

* **joint families** (a singular target: the wrist centre on the base axis
  leaves joint 1 free, aligned wrist axes leave the first wrist joint free
  with the last following it; a redundant arm's fixed joint): the free
  joint is sampled over its range (1° steps, both limits included), every
  sample solved by the closed form, the boundaries between members within
  and beyond the limits refined by bisection to 1e-9 rad;
* **turn families** (position-only on planar and table arms): the same over
  the tool's turn;
* **orientation families** (position-only on a six-axis arm whose tool point
  is off the wrist centre): the tool orientation sampled over a
  near-uniform set of rotations (a super-Fibonacci spiral: Alexa,
  "Super-Fibonacci Spirals", CVPR 2022 — from memory), the current
  orientation first;
* joints that do not move the tool point at all (position-only, tool point
  on their axes) are free over their whole range: no search is needed.

The representative of a family is a member within limits nearest the
reference pose (``near``, else home) — for a joint family the member whose
free joint is nearest its present value.  The budgets are sample counts,
never times.
"""

from __future__ import annotations

import math

import numpy as np

from poser.core.ik import turns
from poser.core.ik.result import Family
from poser.core.jacobian import jacobian
from poser.core.transforms import TWO_PI, wrap

__all__ = ["joint_families", "turn_families", "orientation_families", "free_family", "position_free_joints",
           "STEP", "ORIENTATIONS"]

STEP = math.pi / 180.0
"""Sampling step of a free joint or turn (1°)."""
BISECT = 32
"""Bisection steps refining each boundary of a within-limits range."""
GRID = 91
"""Samples per parameter of a family with two free joints."""
ORIENTATIONS = 1024
"""Rotations sampled for an orientation family (besides the current one)."""


def position_free_joints(chain) -> tuple:
    """Joints that never move the tool point (their axis passes through it at every pose), as a tuple of indices."""

    def make(c):
        rng = np.random.default_rng(7)
        span = np.where(c.revolute, np.minimum(c.upper - c.lower, TWO_PI), c.upper - c.lower)
        J = jacobian(c, c.lower + rng.random((4, c.n)) * span)
        still = np.all(np.linalg.norm(J[:, :3, :], axis=1) <= 1e-12 * c.scale, axis=0)
        return tuple(int(i) for i in np.flatnonzero(still & c.revolute))

    return chain.derived("position_free", make)


def _intervals(s, good):
    """Runs of True in ``good`` over sorted samples ``s``: list of (i0, i1) index pairs (inclusive)."""
    out = []
    i = 0
    n = len(s)
    while i < n:
        if good[i]:
            j = i
            while j + 1 < n and good[j + 1]:
                j += 1
            out.append((i, j))
            i = j + 1
        else:
            i += 1
    return out


def _members(chain, plan, xyz, R, ref, j, values, slot, phi=False):
    """The slot's member (S, n) placed, and whether it is good (exact and within limits), for free values."""
    S = len(values)
    refs = np.repeat(np.asarray(ref, float)[None], S, 0)
    if phi:
        Q, ex, _ = plan.candidates(np.repeat(xyz[None], S, 0), None, refs, phi=values)
    else:
        refs[:, j] = values
        Q, ex, _ = plan.candidates(np.repeat(xyz[None], S, 0),
                                     None if R is None else np.repeat(R[None], S, 0), refs)
    M = turns.place(chain, Q[:, slot])
    return M, ex[:, slot] & turns.fits(chain, M)


def _refine(chain, plan, xyz, R, ref, j, slot, a, b, good_a, phi=False):
    """Bisect between sample values a (good: good_a) and b (not) for every pair at once → boundary values."""
    a = np.array(a, float)
    b = np.array(b, float)
    for _ in range(BISECT):
        m = 0.5 * (a + b)
        _, g = _members(chain, plan, xyz, R, ref, j, m, slot, phi)
        same = g == good_a
        a = np.where(same, m, a)
        b = np.where(same, b, m)
    return np.where(good_a, a, b)  # the last value on the good side


def _sampled(chain, plan, xyz, R, ref, j, slot, lo, hi, phi=False):
    """Sample one free parameter over [lo, hi]: (values, members, good, ranges) with refined boundaries."""
    S = max(2, int(math.ceil((hi - lo) / STEP)) + 1)
    s = np.linspace(lo, hi, S)
    M, good = _members(chain, plan, xyz, R, ref, j, s, slot, phi)
    runs = _intervals(s, good)
    ranges = []
    if runs:
        left = [(s[i0 - 1], s[i0]) for i0, _ in runs if i0 > 0]
        right = [(s[i1], s[i1 + 1]) for _, i1 in runs if i1 < S - 1]
        bl = _refine(chain, plan, xyz, R, ref, j, slot, [x[1] for x in left], [x[0] for x in left],
                     np.ones(len(left), bool), phi) if left else []
        br = _refine(chain, plan, xyz, R, ref, j, slot, [x[0] for x in right], [x[1] for x in right],
                     np.ones(len(right), bool), phi) if right else []
        li = ri = 0
        for i0, i1 in runs:
            a = s[0] if i0 == 0 else float(bl[li])
            li += i0 > 0
            b = s[-1] if i1 == S - 1 else float(br[ri])
            ri += i1 < S - 1
            ranges.append((float(a), float(b)))
    return s, M, good, ranges


def _measure(ranges):
    return sum(b - a for a, b in ranges)


def _nearest_in(ranges, x):
    """The value of the union of ``ranges`` nearest ``x``."""
    best, dist = None, math.inf
    for a, b in ranges:
        v = min(max(x, a), b)
        if abs(v - x) < dist:
            best, dist = v, abs(v - x)
    return best


def _follows(M, good, skip):
    rows = M[good] if good.any() else M
    spread = np.ptp(np.where(np.isfinite(rows), rows, 0.0), axis=0) if len(rows) else np.zeros(M.shape[1])
    return tuple(int(i) for i in np.flatnonzero(spread > 1e-9) if i not in skip)


def _least_bad(chain, M):
    tol = turns.tolerances(chain)
    wide = turns._wide(chain)
    ex = np.maximum(chain.lower - tol - M, 0) + np.maximum(M - chain.upper - tol, 0)
    ex = np.where(wide, 0.0, ex) / np.where(chain.revolute, 1.0, chain.scale)
    return int(np.argmin(ex.sum(axis=1)))


def _solve_at(chain, plan, xyz, R, ref, j, value, slot, phi=False):
    r = [float(v) for v in ref]
    if phi:
        cand = plan.one(xyz, None, r, phi=value)
    else:
        r[j] = value
        cand = plan.one(xyz, R, r)
    return np.array(cand[slot][0], float)


def joint_families(chain, plan, xyz, R, ref, slot, free):
    """The family of candidate ``slot`` of closed-form ``plan`` whose joints ``free`` (indices) the target leaves free.

    Returns ``(Family, q)`` — ``q`` the representative (n,), placed in range (turns of wide joints
    still to be chosen by the caller).
    """
    names = chain.names
    if len(free) >= 2:
        return _grid_family(chain, plan, xyz, R, ref, slot, free[:2])
    j = free[0]
    lo, hi = float(chain.lower[j]), float(chain.upper[j])
    wide = bool(turns._wide(chain)[j])
    if wide:  # the rest repeats every turn: sample one turn, then lay its good part over the whole range
        s, M, good, ranges = _sampled(chain, plan, xyz, R, ref, j, slot, -math.pi, math.pi)
        full = []
        for a, b in ranges:
            for k in range(math.floor((lo - b) / TWO_PI), math.ceil((hi - a) / TWO_PI) + 1):
                x, y = max(a + k * TWO_PI, lo), min(b + k * TWO_PI, hi)
                if x <= y:
                    full.append((x, y))
        full.sort()
        merged = []
        for a, b in full:
            if merged and a <= merged[-1][1] + 1e-12:
                merged[-1] = (merged[-1][0], max(merged[-1][1], b))
            else:
                merged.append((a, b))
        ranges = merged
        frac = _measure(ranges) / (hi - lo)
    else:
        s, M, good, ranges = _sampled(chain, plan, xyz, R, ref, j, slot, lo, hi)
        frac = _measure(ranges) / (hi - lo)
    fam_good = bool(ranges)
    follows = _follows(M, good, (j,))
    if fam_good:
        x = _nearest_in(ranges, float(ref[j]))
        q = _solve_at(chain, plan, xyz, R, ref, j, float(wrap(x)) if wide else x, slot)
        q = turns.place(chain, q)
        q[j] = x
    else:
        q = M[_least_bad(chain, M)].copy()
    fam = Family("joint", tuple(names[i] for i in (j, *follows)), (j,), follows, tuple([tuple(ranges)]),
                 float(min(max(frac, 0.0), 1.0)), len(s), True)
    return fam, q


def _grid_family(chain, plan, xyz, R, ref, slot, free):
    """Two free joints: a grid over both, ranges as the projections of the members within limits."""
    j1, j2 = free
    axes = []
    for j in free:
        lo, hi = float(chain.lower[j]), float(chain.upper[j])
        if turns._wide(chain)[j]:
            lo, hi = -math.pi, math.pi
        axes.append(np.linspace(lo, hi, GRID))
    A, B = np.meshgrid(axes[0], axes[1], indexing="ij")
    S = A.size
    refs = np.repeat(np.asarray(ref, float)[None], S, 0)
    refs[:, j1], refs[:, j2] = A.ravel(), B.ravel()
    Q, ex, _ = plan.candidates(np.repeat(xyz[None], S, 0), None if R is None else np.repeat(R[None], S, 0),
                                 refs)
    M = turns.place(chain, Q[:, slot])
    good = ex[:, slot] & turns.fits(chain, M)
    G = good.reshape(GRID, GRID)
    ranges = []
    for k, ax in enumerate(axes):
        g = G.any(axis=1 - k)
        ranges.append(tuple((float(ax[i0]), float(ax[i1])) for i0, i1 in _intervals(ax, g)))
    follows = _follows(M, good, free)
    at_ref = turns.place(chain, np.array(plan.one(xyz, R, ref)[slot][0], float))
    if bool(turns.fits(chain, at_ref)):  # the member that keeps the free joints where they are
        q = at_ref
    elif good.any():
        d = np.linalg.norm(wrap(M[good][:, list(free)] - np.asarray(ref, float)[list(free)]), axis=1)
        q = M[np.flatnonzero(good)[int(np.argmin(d))]].copy()
    else:
        q = M[_least_bad(chain, M)].copy()
    names = chain.names
    fam = Family("joint", tuple(names[i] for i in (*free, *follows)), tuple(free), follows, tuple(ranges),
                 float(good.mean()), S, True)
    return fam, q


def turn_families(chain, plan, xyz, ref, phi_ref):
    """Position-only on planar and table arms: one family per slot over the tool's turn.

    Returns a list of ``(Family, q)`` for every slot.
    """
    out = []
    for slot in range(plan.structure.branches):
        s, M, good, ranges = _sampled(chain, plan, xyz, None, ref, None, slot, -math.pi, math.pi, phi=True)
        if ranges:
            x = _nearest_in(ranges, float(phi_ref))
            q = turns.place(chain, _solve_at(chain, plan, xyz, None, ref, None, x, slot, phi=True))
        else:
            q = M[_least_bad(chain, M)].copy()
        follows = _follows(M, good, ())
        fam = Family("turn", ("tool turn",), (), follows, tuple([tuple(ranges)]), _measure(ranges) / TWO_PI, len(s))
        out.append((fam, q))
    return out


def _super_fibonacci(count):
    """``count`` near-uniform rotations (count, 3, 3): the super-Fibonacci spiral (Alexa 2022, from memory)."""
    phi = math.sqrt(2.0)
    psi = 1.533751168755204288118041
    s = np.arange(count) + 0.5
    t = s / count
    r, R_ = np.sqrt(t), np.sqrt(1.0 - t)
    a, b = TWO_PI * s / phi, TWO_PI * s / psi
    w, x, y, z = r * np.sin(a), r * np.cos(a), R_ * np.sin(b), R_ * np.cos(b)
    return np.stack(
        [
            np.stack([1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)], -1),
            np.stack([2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)], -1),
            np.stack([2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)], -1),
        ],
        -2,
    )


def _orientation_set():
    global _ORI
    if _ORI is None:
        _ORI = _super_fibonacci(ORIENTATIONS)
        _ORI.setflags(write=False)
    return _ORI


_ORI = None


def orientation_families(chain, plan, xyz, ref, R_ref):
    """Position-only on a six-axis arm: per slot, the family over the tool's orientation.

    Returns a list of ``(Family, q)`` for every slot; the representative keeps ``R_ref`` (the
    current tool orientation) when that member is within limits, else it is the member within
    limits nearest ``ref``.
    """
    Rs = np.concatenate([np.asarray(R_ref, float)[None], _orientation_set()])
    S = len(Rs)
    Q, ex, _ = plan.candidates(np.repeat(xyz[None], S, 0), Rs, ref)
    out = []
    ref = np.asarray(ref, float)
    for slot in range(Q.shape[1]):
        M = turns.place(chain, Q[:, slot])
        good = ex[:, slot] & turns.fits(chain, M)
        if good[0]:
            q = M[0].copy()
        elif good.any():
            d = np.linalg.norm(np.where(chain.revolute, wrap(M[good] - ref), (M[good] - ref) / chain.scale), axis=1)
            q = M[np.flatnonzero(good)[int(np.argmin(d))]].copy()
        else:
            q = M[_least_bad(chain, M)].copy()
        follows = _follows(M, good, ())
        fam = Family("orientation", ("tool orientation",), (), follows, None, float(good.mean()), S)
        out.append((fam, q))
    return out


def free_family(chain, q, free):
    """Joints ``free`` that never move the tool point: free over their whole ranges (no search needed).

    Returns ``(Family, q)`` with the free joints of ``q`` moved to their nearest value within limits.
    """
    q = turns.place(chain, np.array(q, float))
    for j in free:
        q[j] = min(max(q[j], chain.lower[j]), chain.upper[j])
    rest_ok = bool(turns.fits(chain, q))
    ranges = tuple(((float(chain.lower[j]), float(chain.upper[j])),) if rest_ok else () for j in free)
    fam = Family("joint", tuple(chain.names[j] for j in free), tuple(free), (), ranges, 1.0 if rest_ok else 0.0, 0)
    return fam, q
