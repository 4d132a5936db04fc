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
from poser.core.jacobian import jacobian, joint_axes
from poser.core.transforms import TWO_PI, wrap

__all__ = ["joint_families", "turn_families", "reduced_families", "orientation_families", "free_family",
           "position_free_joints", "point_families", "line_families", "STEP", "ORIENTATIONS"]

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


class _Members:
    """Every slot's member for values of one free parameter: ``(values) -> (M (S, B, n) placed, good (S, B))``.

    ``kind`` says what the parameter is: a joint's value (``"joint"``: the target leaves joint ``j``
    free), the tool's turn (``"turn"``), or a redundant arm's fixed joint (``"fixed"``).  A member is good
    when it reaches exactly and every joint is within its limits (some turn of a wide joint fitting).
    ``ref_value`` is the parameter's present value (the representative is the good member nearest it).
    """

    def __init__(self, chain, plan, xyz, R, ref, kind, j=None, ref_value=None):
        self.chain, self.plan, self.xyz, self.R, self.ref, self.kind, self.j = chain, plan, xyz, R, ref, kind, j
        self.ref_value = float(ref[j]) if ref_value is None else float(ref_value)

    def __call__(self, values):
        M, good, _ = self.evaluate(values)
        return M, good

    def evaluate(self, values):
        """``(M (S, B, n) placed, good (S, B), exact (S, B))`` for the parameter ``values`` (S,)."""
        values = np.asarray(values, float)
        S = len(values)
        P = np.repeat(self.xyz[None], S, 0)
        Rs = None if self.R is None else np.repeat(self.R[None], S, 0)
        refs = np.repeat(np.asarray(self.ref, float)[None], S, 0)
        if self.kind == "turn":
            Q, ex, _ = self.plan.candidates(P, None, refs, phi=values)
        elif self.kind == "fixed":
            Q, ex, _ = self.plan.many(P, Rs, refs, values)
        else:
            refs[:, self.j] = values
            Q, ex, _ = self.plan.candidates(P, Rs, refs)
        M = turns.place(self.chain, Q)
        return M, ex & turns.fits(self.chain, M), ex

    def one(self, value, slot):
        """The slot's member at ``value``, solved in plain floats, placed (n,)."""
        r = [float(v) for v in self.ref]
        if self.kind == "turn":
            cand = self.plan.one(self.xyz, None, r, phi=value)
        elif self.kind == "fixed":
            cand = self.plan.one(self.xyz, self.R, r, value)
        else:
            r[self.j] = value
            cand = self.plan.one(self.xyz, self.R, r)
        return turns.place(self.chain, np.array(cand[slot][0], float))


def _sampled(members, lo, hi, slots):
    """Sample the free parameter over [lo, hi] for every slot in ``slots``.

    Returns ``(values, M (S, B, n), good (S, B), {slot: ranges})``: each slot's ranges of values whose
    members are good, their ends refined by bisection (every slot's boundaries at once).
    """
    S = max(2, int(math.ceil((hi - lo) / STEP)) + 1)
    s = np.linspace(lo, hi, S)
    M, good, exact = members.evaluate(s)
    s, M, good = _narrow_windows(members, s, M, good, exact, slots)
    S = len(s)
    runs = {b: _intervals(s, good[:, b]) for b in slots}
    pairs = []  # (slot, index of a good sample, index of its bad neighbour): a boundary to refine
    for b, rs in runs.items():
        for i0, i1 in rs:
            if i0 > 0:
                pairs.append((b, i0, i0 - 1))
            if i1 < S - 1:
                pairs.append((b, i1, i1 + 1))
    ends = {}
    if pairs:
        a = np.array([s[p[1]] for p in pairs])
        c = np.array([s[p[2]] for p in pairs])
        rows = np.arange(len(pairs))
        slot_idx = np.array([p[0] for p in pairs])
        for _ in range(BISECT):
            m = 0.5 * (a + c)
            _, g = members(m)
            ok = g[rows, slot_idx]
            a = np.where(ok, m, a)
            c = np.where(ok, c, m)
        ends = {(p[0], p[1]): float(x) for p, x in zip(pairs, a)}  # the last value on the good side
    ranges = {}
    for b, rs in runs.items():
        ranges[b] = [(float(s[0]) if i0 == 0 else ends[(b, i0)], float(s[-1]) if i1 == S - 1 else ends[(b, i1)])
                     for i0, i1 in rs]
    return s, M, good, ranges


WINDOW_SPLIT = 16
"""Sub-samples per step when a step may hide a window within limits."""
WINDOW_DEPTH = 5
"""Levels of splitting (16⁵ ≈ 10⁶ sub-steps per 1° step: windows down to about 2e-8 rad are found)."""


def _maybe_inside(chain, A, C):
    """Per row, whether the members between two samples may all be within limits: for every joint the
    range of its two values meets the joint's limits (a joint's value moves continuously along a family, so
    a window within limits between two samples shows this way).  ``A``, ``C`` (K, n) placed values."""
    tol = turns.tolerances(chain)
    wide = turns._wide(chain)
    lo_v, hi_v = np.minimum(A, C), np.maximum(A, C)
    meets = (hi_v >= chain.lower - tol) & (lo_v <= chain.upper + tol)
    jump = chain.revolute & (hi_v - lo_v > math.pi)  # placed by another turn: cannot tell, look closer
    return np.all(meets | wide | jump, axis=1)


def _narrow_windows(members, s, M, good, exact, slots):
    """Look inside the steps of the 1° sampling where a window within limits may hide (both ends beyond
    a limit, but every joint's values meeting its limits): split them into :data:`WINDOW_SPLIT` and again,
    up to :data:`WINDOW_DEPTH` levels, until a member within limits shows or the step cannot hold one.

    Returns ``(s, M, good)`` with the sub-samples that found a window merged in (sorted).
    """
    chain = members.chain
    steps = []  # (slot, lower value, upper value)
    for b in slots:
        g, e = good[:, b], exact[:, b]
        cand = ~g[:-1] & ~g[1:] & e[:-1] & e[1:]
        if not cand.any():
            continue
        idx = np.flatnonzero(cand)
        may = _maybe_inside(chain, M[idx, b], M[idx + 1, b])
        steps += [(b, float(s[i]), float(s[i + 1])) for i in idx[may]]
    found_s, found_M, found_g = [], [], []
    for _ in range(WINDOW_DEPTH):
        if not steps:
            break
        t = np.linspace(0.0, 1.0, WINDOW_SPLIT + 1)
        vals = np.concatenate([a + (c - a) * t for _, a, c in steps])
        Mv, gv, ev = members.evaluate(vals)
        nxt = []
        k = WINDOW_SPLIT + 1
        for m, (b, _, _) in enumerate(steps):
            rows = slice(m * k, (m + 1) * k)
            g, e, Mb = gv[rows, b], ev[rows, b], Mv[rows, b]
            if g.any():
                found_s.append(vals[rows])
                found_M.append(Mv[rows])
                found_g.append(gv[rows])
                continue
            cand = e[:-1] & e[1:]
            if not cand.any():
                continue
            idx = np.flatnonzero(cand)
            may = _maybe_inside(chain, Mb[idx], Mb[idx + 1])
            sub = vals[rows]
            nxt += [(b, float(sub[i]), float(sub[i + 1])) for i in idx[may]]
        steps = nxt
    if not found_s:
        return s, M, good
    s2 = np.concatenate([s] + found_s)
    order = np.argsort(s2, kind="stable")
    return s2[order], np.concatenate([M] + found_M)[order], np.concatenate([good] + found_g)[order]


def _over_whole_range(ranges, lo, hi):
    """Good ranges found over one turn [-π, π] laid over a wide joint's whole range [lo, hi], merged."""
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
    return merged


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
    spread = np.ptp(rows, axis=0) if len(rows) else np.zeros(M.shape[1])
    return tuple(int(i) for i in np.flatnonzero(spread > 1e-9) if i not in skip)


def _least_bad(chain, M):
    tol = turns.tolerances(chain)
    wide = turns._wide(chain)
    ex = np.maximum(chain.lower - tol - M, 0) + np.maximum(M - chain.upper - tol, 0)
    ex = np.where(wide, 0.0, ex) / np.where(chain.revolute, 1.0, chain.scale)
    return int(np.argmin(ex.sum(axis=1)))


def _representative(chain, M, good, free, ref):
    """Of members ``M`` (S, n): the one within limits (``good``) whose ``free`` joints are nearest their values in
    ``ref``; else the one nearest the limits."""
    if good.any():
        d = np.linalg.norm(wrap(M[good][:, list(free)] - np.asarray(ref, float)[list(free)]), axis=1)
        return M[np.flatnonzero(good)[int(np.argmin(d))]].copy()
    return M[_least_bad(chain, M)].copy()


def _one_parameter(chain, members, slots, exact_any):
    """Families over one parameter for ``slots``: joint ``members.j``'s value over its range, or the tool's
    turn over a turn (``members.kind == "turn"``).  Returns a list of ``(slot, Family, q)``; a slot none of
    whose members reaches is left out when ``exact_any`` (it is not a branch)."""
    names = chain.names
    j = members.j
    if members.kind == "turn":
        lo, hi, wide = -math.pi, math.pi, False
    else:
        lo, hi = float(chain.lower[j]), float(chain.upper[j])
        wide = bool(turns._wide(chain)[j])
    s, M, good, ranges = _sampled(members, -math.pi if wide else lo, math.pi if wide else hi, slots)
    out = []
    for b in slots:
        r = _over_whole_range(ranges[b], lo, hi) if wide else ranges[b]
        frac = float(min(max(_measure(r) / (hi - lo), 0.0), 1.0))
        Mb, gb = M[:, b], good[:, b]
        if r:
            x = _nearest_in(r, members.ref_value)
            q = members.one(float(wrap(x)) if wide else x, b)
            if j is not None and members.kind != "turn":
                q[j] = x
        else:
            if exact_any is not None and not exact_any(b):
                continue
            q = Mb[_least_bad(chain, Mb)].copy()
        if members.kind == "turn":
            fam = Family("turn", ("tool turn",), (), _follows(Mb, gb, ()), (tuple(r),), frac, len(s))
        else:
            follows = _follows(Mb, gb, (j,))
            fam = Family("joint", tuple(names[i] for i in (j, *follows)), (j,), follows, (tuple(r),), frac, len(s))
        out.append((b, fam, q))
    return out


def joint_families(chain, plan, xyz, R, ref, slots, free):
    """The families of candidate ``slots`` of closed-form ``plan`` whose joints ``free`` (indices) the target
    leaves free.

    Returns a list of ``(slot, Family, q)`` — ``q`` the representative (n,), placed in range (turns of
    wide joints other than the free one still to be chosen by the caller).
    """
    if len(free) >= 2:
        return [(b, *_grid_family(chain, plan, xyz, R, ref, b, free[:2])) for b in slots]
    return _one_parameter(chain, _Members(chain, plan, xyz, R, ref, "joint", free[0]), list(slots), None)


def reduced_families(chain, rplan, xyz, R, ref):
    """A redundant arm made closed-form by fixing one joint (:class:`poser.core.ik.closed.ReducedPlan`): one
    family per slot over the fixed joint's range; slots none of whose members reaches are left out.

    Returns a list of ``(slot, Family, q)``.
    """
    members = _Members(chain, rplan, xyz, R, ref, "fixed", rplan.fixed)
    B = rplan.structure.branches
    # whether a slot reaches anywhere: exactly at some sample (a first look at a few values is enough for
    # the ones that reach everywhere; the search itself covers the whole range)
    probe = np.linspace(float(chain.lower[rplan.fixed]), float(chain.upper[rplan.fixed]), 73)
    _, ex, _ = rplan.many(np.repeat(xyz[None], len(probe), 0), np.repeat(R[None], len(probe), 0),
                          np.repeat(np.asarray(ref, float)[None], len(probe), 0), probe)
    reach = ex.any(axis=0)
    return _one_parameter(chain, members, list(range(B)), lambda b: bool(reach[b]))


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
    Q, ex, _ = plan.candidates(np.repeat(xyz[None], S, 0), None if R is None else np.repeat(R[None], S, 0), refs)
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
    else:
        q = _representative(chain, M, good, free, ref)
    names = chain.names
    fam = Family("joint", tuple(names[i] for i in (*free, *follows)), tuple(free), follows, tuple(ranges),
                 float(good.mean()), S, True)
    return fam, q


def turn_families(chain, plan, xyz, ref, phi_ref):
    """Position-only on planar and table arms: one family per slot over the tool's turn.

    Returns a list of ``(slot, Family, q)``.
    """
    members = _Members(chain, plan, xyz, None, ref, "turn", None, ref_value=phi_ref)
    return _one_parameter(chain, members, list(range(plan.structure.branches)), None)


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

    Returns a list of ``(slot, Family, q)``; the representative keeps ``R_ref`` (the current tool
    orientation) when that member is within limits, else it is the member within limits nearest ``ref``.
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
        elif ex[:, slot].any():
            Mx = M[ex[:, slot]]
            q = Mx[_least_bad(chain, Mx)].copy()
        else:
            continue  # no member of this slot reaches: no branch
        fam = Family("orientation", ("tool orientation",), (), _follows(M, good, ()), None, float(good.mean()), S)
        out.append((slot, fam, q))
    return out


def free_family(chain, q, free, ref):
    """Joints ``free`` that never move the tool point: free over their whole ranges (no search needed).

    Returns ``(Family, q)`` with the free joints at their present values ``ref`` (moved into their limits).
    """
    q = turns.place(chain, np.array(q, float))
    for j in free:
        q[j] = min(max(float(ref[j]), chain.lower[j]), chain.upper[j])
    rest_ok = bool(turns.fits(chain, q))
    ranges = tuple(((float(chain.lower[j]), float(chain.upper[j])),) if rest_ok else () for j in free)
    fam = Family("joint", tuple(chain.names[j] for j in free), tuple(free), (), ranges, 1.0 if rest_ok else 0.0, 0)
    return fam, q


def point_families(chain, Q, xyz, ref):
    """Position only: split solutions ``Q`` (K, n) into lone ones and families of joints whose line passes
    through the target at that solution.

    Turning such a joint carries everything after it about a line through the tool point, which stays where
    it is: the joint is free over its whole range (a singular target, e.g. the tool point on the base axis).
    Solutions that differ only in their free joints are one family.

    Returns
    -------
    rest : ndarray (K', n)
        The solutions with no such joint.
    found : list of (Family, q)
        One entry per family (:func:`free_family`: the free joints at ``ref``, moved into their limits).
    """
    Q = np.asarray(Q, float)
    rev = chain.revolute
    rest, pending = [], {}
    x = np.asarray(xyz, float)
    for q in Q:
        o, w, _ = joint_axes(chain, q)
        d = x - o
        off = np.linalg.norm(d - w * np.sum(d * w, axis=1)[:, None], axis=1)
        free = tuple(int(i) for i in np.flatnonzero(rev & (off <= COLLINEAR * chain.scale)))
        if not free:
            rest.append(q)
            continue
        key = q.copy()
        key[list(free)] = 0.0
        pending.setdefault(free, []).append(np.where(rev, wrap(key), key))
    found = []
    for free, keys in pending.items():
        for key in _unique_rows(chain, np.array(keys)):
            found.append(free_family(chain, key, free, ref))
    return np.array(rest).reshape(-1, chain.n), found


COLLINEAR = 1e-7
"""Two joint lines count as one line when the sine of their angle and their distance (÷ the arm's size)
are below this at a solution the numerical solver found (it converges to about 1e-9 of the arm's size)."""


def _line_groups(chain, q):
    """Joints whose lines coincide at ``q`` (n,), as tuples of indices: revolute joints on one line, or
    prismatic joints along one direction.  Turning (sliding) one of them and the last the other way by
    the same amount leaves every frame after the last one where it was: a self-motion of the arm, exact
    and linear in the joint values."""
    o, w, _ = joint_axes(chain, q)
    rev = chain.revolute
    groups: list = []
    seen: set = set()
    for a in range(chain.n):
        if a in seen:
            continue
        g = [a]
        for b in range(a + 1, chain.n):
            if b in seen or rev[a] != rev[b]:
                continue
            if np.linalg.norm(np.cross(w[a], w[b])) > COLLINEAR:
                continue
            if rev[a]:
                d = o[b] - o[a]
                if np.linalg.norm(d - w[a] * float(d @ w[a])) > COLLINEAR * chain.scale:
                    continue
            g.append(b)
        if len(g) > 1:
            seen.update(g)
            groups.append(tuple(g))
    return [(g, tuple(float(np.sign(w[g[-1]] @ w[k])) for k in g[:-1])) for g in groups]


class _LineMembers:
    """Members of linear self-motions (:func:`_line_groups`) for values of their first free joint.

    ``keys`` (B, n): each family's member with its free joint at zero (the last joint of its line takes up
    the turn); ``j`` the free joint, ``k`` the joint that follows, ``s`` the sign (+1: the lines point the
    same way, so the follower turns back by the same amount).
    """

    kind = "joint"

    def __init__(self, chain, keys, j, k, s, ref_value):
        self.chain, self.keys, self.j, self.k, self.s = chain, np.asarray(keys, float), j, k, s
        self.ref_value = float(ref_value)

    def _at(self, values):
        M = np.repeat(self.keys[None], len(values), 0)
        M[:, :, self.j] = values[:, None]
        M[:, :, self.k] -= self.s * values[:, None]
        return M

    def __call__(self, values):
        M, good, _ = self.evaluate(values)
        return M, good

    def evaluate(self, values):
        M = turns.place(self.chain, self._at(np.asarray(values, float)))
        good = turns.fits(self.chain, M)
        return M, good, np.ones_like(good)

    def one(self, value, slot):
        return turns.place(self.chain, self._at(np.array([float(value)]))[0, slot])


def line_families(chain, Q, ref):
    """Group solutions ``Q`` (K, n) the numerical solver found into linear self-motions.

    At a singular target two joint lines can coincide (the tool's axis on the base axis, wrist axes in
    line); the solver then lands on many members of one family.  Members of the same family (same lines,
    the same values of the other joints, the same sum of the two turns) become one family, searched
    over the free joint's whole range like a closed-form joint family.

    Returns
    -------
    list of (Family or None, q)
        One entry per family or lone solution; ``q`` the representative (the member within limits whose
        free joint is nearest its value in ``ref``; else the member nearest the limits).
    """
    out = []
    pending: dict = {}
    for q in np.asarray(Q, float):
        groups = _line_groups(chain, q)
        if not groups:
            out.append((None, q))
            continue
        key = q.copy()
        for g, signs in groups:  # the member with each group's free joints at zero
            last = g[-1]
            for j, s in zip(g[:-1], signs):
                key[last] += s * key[j]
                key[j] = 0.0
        key = np.where(chain.revolute, wrap(key), key)
        sig = tuple((g, signs) for g, signs in groups)
        pending.setdefault(sig, []).append(key)
    for sig, keys in pending.items():
        keys = np.array(keys)
        K = _unique_rows(chain, keys)
        if len(sig) == 1 and len(sig[0][0]) == 2:
            (g, signs), = sig
            members = _LineMembers(chain, K, g[0], g[1], signs[0], ref[g[0]])
            for _, fam, q in _one_parameter(chain, members, list(range(len(K))), None):
                out.append((fam, q))
        else:  # two or more free joints: the first two free joints on a grid
            for key in K:
                out.append(_line_grid(chain, key, sig, ref))
    return out


def _unique_rows(chain, K):
    keep = []
    for i, row in enumerate(K):
        d = [row - K[j] for j in keep]
        if not any(np.max(np.abs(np.where(chain.revolute, wrap(x), x / chain.scale))) < 1e-6 for x in d):
            keep.append(i)
    return K[keep]


def _line_grid(chain, key, sig, ref):
    """A linear self-motion with two or more free joints: a grid over the first two, the rest at ``ref``."""
    frees = [(j, g[-1], s) for g, signs in sig for j, s in zip(g[:-1], signs)]
    (j1, k1, s1), (j2, k2, s2) = frees[0], frees[1]
    axes = []
    for j in (j1, j2):
        lo, hi = (-math.pi, math.pi) if turns._wide(chain)[j] else (float(chain.lower[j]), float(chain.upper[j]))
        axes.append(np.linspace(lo, hi, GRID))
    A, B = np.meshgrid(axes[0], axes[1], indexing="ij")
    M = np.repeat(np.asarray(key, float)[None], A.size, 0)
    for j, k, s in frees[2:]:
        M[:, j] = ref[j]
        M[:, k] -= s * ref[j]
    M[:, j1], M[:, j2] = A.ravel(), B.ravel()
    M[:, k1] -= s1 * A.ravel()
    M[:, k2] -= s2 * B.ravel()
    M = turns.place(chain, M)
    good = turns.fits(chain, M)
    G = good.reshape(GRID, GRID)
    ranges = tuple(tuple((float(ax[i0]), float(ax[i1])) for i0, i1 in _intervals(ax, G.any(axis=1 - n)))
                   for n, ax in enumerate(axes))
    free = (j1, j2)
    follows = _follows(M, good, free)
    q = _representative(chain, M, good, free, ref)
    names = chain.names
    fam = Family("joint", tuple(names[i] for i in (*free, *follows)), free, follows, ranges, float(good.mean()),
                 len(M), True)
    return fam, q
