"""Joint values placed in their ranges, extra turns, and the limit verdict.

A revolute joint's value is only known up to whole turns.  A joint whose
range is at most one turn takes the one value nearest the middle of its
range (inside it when any turn fits; else the one with the smallest excess).
A joint with a wider range may take every turn that fits: each combination
is a **turn variant** of the configuration.  Their number is counted exactly
(a product over the wide joints, never an enumeration), and a listing takes
the variants nearest a reference pose first, the nearest always kept.

Limits are met within :func:`tolerances` (1e-9 rad, or 1e-9 of a slide's
stroke).  This module is the one limit verdict of Poser: solvers, the
command line and the window all ask it.
"""

from __future__ import annotations

import bisect
import heapq
import itertools
import math

import numpy as np

from poser.core.ik.result import Violation
from poser.core.transforms import TWO_PI, wrap

__all__ = ["tolerances", "place", "violations", "violations_many", "fits", "expand", "Turns"]


def tolerances(chain) -> np.ndarray:
    """How far (n,) beyond a limit a value still counts as within it: 1e-9 rad, or 1e-9 of the stroke (≥ 1e-9)."""

    def make(c):
        t = 1e-9 * np.where(c.revolute, 1.0, np.maximum(1.0, c.upper - c.lower))
        t.setflags(write=False)
        return t

    return chain.derived("limit_tol", make)


def _wide(chain):
    """Revolute joints whose range exceeds a full turn (n,) bool."""

    def make(c):
        w = np.asarray(c.revolute) & (c.upper - c.lower > TWO_PI + 1e-9)
        w.setflags(write=False)
        return w

    return chain.derived("wide_joints", make)


def place(chain, Q):
    """Revolute values moved by whole turns towards the middle of their ranges; wide joints into (-π, π].

    Parameters
    ----------
    Q : ndarray (..., n), internal units

    Returns
    -------
    ndarray (..., n)
        Joints of at most one turn: the value nearest the middle of the range.  Joints with a wider
        range: the value in (-π, π] (their turns are chosen by :func:`turn_options`).  Prismatic
        joints unchanged.
    """
    return place_inplace(chain, np.array(Q, dtype=float))


def place_inplace(chain, Q):
    """:func:`place` written into ``Q`` (..., n) itself, joint by joint (for large batches)."""
    mid = _middles(chain)
    D = Q - mid
    off = ~((D > -np.pi) & (D <= np.pi))
    off &= chain.revolute
    # only values more than half a turn from their middle move (the rest stay bit for bit)
    k = np.flatnonzero(off)
    if k.size:
        flat = Q.reshape(-1)  # a view when Q is contiguous (the batches' chunks are)
        flat[k] = wrap(D.reshape(-1)[k]) + mid[k % len(mid)]
        if not np.shares_memory(flat, Q):
            Q[...] = flat.reshape(Q.shape)
    return Q


def _middles(chain):
    """Where :func:`place` centres each joint (n,): the middle of its range; 0 for wide and prismatic joints."""

    def make(c):
        m = np.where(np.asarray(c.revolute) & ~_wide(c), 0.5 * (c.lower + c.upper), 0.0)
        m.setflags(write=False)
        return m

    return chain.derived("placement_middles", make)


def fits(chain, Qp):
    """True (...) where placed values ``Qp`` (:func:`place`) are within every joint's limits (some turn fitting)."""
    tol = tolerances(chain)
    lo, hi = chain.lower - tol, chain.upper + tol
    ok = (Qp >= lo) | _wide(chain)
    ok &= (Qp <= hi) | _wide(chain)
    return np.all(ok, axis=-1)


def violations(chain, q) -> tuple:
    """The :class:`Violation` of every joint of ``q`` (n,) beyond a limit (empty when within limits)."""
    return violations_many(chain, np.asarray(q, float)[None])[0]


def violations_many(chain, Q, narrow_only: bool = False) -> list:
    """:func:`violations` of every row of ``Q`` (K, n): a list of K tuples.

    ``narrow_only`` leaves out the joints of more than a turn (placed rows of :func:`place`, whose
    wide joints are still in (-π, π]: their turns are chosen to fit).
    """
    Q = np.asarray(Q, float)
    if len(Q) <= 16:  # a few rows: plain floats (the same comparisons as below)
        wide_l, narrow = _expand_plan(chain)
        joints = narrow if narrow_only else narrow + wide_l
        names, lo, hi = chain.names, chain.lower.tolist(), chain.upper.tolist()
        out = []
        for row in Q.tolist():
            vs = ()
            for i, a, b in joints:
                v = row[i]
                if v < a:
                    vs += (Violation(i, names[i], "lower", lo[i], v, lo[i] - v),)
                elif v > b:
                    vs += (Violation(i, names[i], "upper", hi[i], v, v - hi[i]),)
            out.append(tuple(sorted(vs, key=lambda x: x.joint)) if len(vs) > 1 else vs)
        return out
    tol = tolerances(chain)
    below = Q < chain.lower - tol
    above = Q > chain.upper + tol
    if narrow_only:
        below &= ~_wide(chain)
        above &= ~_wide(chain)
    out = [()] * len(Q)
    bad = np.flatnonzero(np.any(below | above, axis=1))
    if bad.size:
        names = chain.names
        lo, hi = chain.lower.tolist(), chain.upper.tolist()
        for k in bad.tolist():
            row = Q[k].tolist()
            vs = []
            for i in np.flatnonzero(below[k] | above[k]).tolist():
                v = row[i]
                if v < lo[i]:
                    vs.append(Violation(i, names[i], "lower", lo[i], v, lo[i] - v))
                else:
                    vs.append(Violation(i, names[i], "upper", hi[i], v, v - hi[i]))
            out[k] = tuple(vs)
    return out


def _expand_plan(chain):
    """Per chain, as plain floats: the wide joints with their limits (tolerance included), the narrow limits."""

    def make(c):
        tol = tolerances(c).tolist()
        wide = _wide(c).tolist()
        lo, hi = c.lower.tolist(), c.upper.tolist()
        w = [(i, lo[i] - tol[i], hi[i] + tol[i]) for i in range(c.n) if wide[i]]
        narrow = [(i, lo[i] - tol[i], hi[i] + tol[i]) for i in range(c.n) if not wide[i]]
        return w, narrow

    return chain.derived("turn_plan", make)


def _breaks(lo, hi):
    """Where in [-π, π] the fitting turns of a joint with limits [lo, hi] change, and the turns between.

    Returns ``(points, spans)``: sorted values at which ``v + k·2π`` crosses a limit for some k, and for each
    interval between them (and beyond the ends) the ``(kmin, kmax)`` found at its middle.  Values within
    1e-9 of a point are decided exactly by :func:`_turn_range` (the sums as they will be made).
    """
    pts = set()
    for bound in (lo, hi):
        k0 = math.floor((bound + math.pi) / TWO_PI)
        for k in (k0 - 1, k0, k0 + 1):
            x = bound - k * TWO_PI
            if -math.pi - 1e-9 <= x <= math.pi + 1e-9:
                pts.add(x)
    pts = sorted(p for p in pts if -math.pi < p < math.pi)
    edges = [-math.pi] + pts + [math.pi]
    spans = [_turn_range(0.5 * (a + b), lo, hi) for a, b in zip(edges[:-1], edges[1:])]
    return pts, spans


def _turns_of(cache, v, lo, hi):
    """``(kmin, kmax)`` of value ``v`` for one wide joint, through its cached breakpoints."""
    pts, spans = cache
    i = bisect.bisect_right(pts, v)
    near_edge = (i > 0 and v - pts[i - 1] < 1e-9) or (i < len(pts) and pts[i] - v < 1e-9)
    if near_edge or v <= -math.pi + 1e-9 or v >= math.pi - 1e-9:
        return _turn_range(v, lo, hi)
    return spans[i]


def _turn_range(v, lo, hi):
    """The turns k with ``v + k·2π`` in [lo, hi] (the sums tested as they will be made)."""
    kmin = math.ceil((lo - v) / TWO_PI)
    kmax = math.floor((hi - v) / TWO_PI)
    while v + kmin * TWO_PI < lo:
        kmin += 1
    while v + (kmin - 1) * TWO_PI >= lo:
        kmin -= 1
    while v + kmax * TWO_PI > hi:
        kmax -= 1
    while v + (kmax + 1) * TWO_PI <= hi:
        kmax += 1
    return kmin, kmax


def expand(chain, Qp, ref, limits):
    """Turn variants of placed configurations ``Qp`` (K, n) (:func:`place`).

    Parameters
    ----------
    ref : ndarray (n,)
        Variants nearest it come first (the nearest always).
    limits : sequence of K int
        How many variants of each row to list (1: only the nearest).

    Returns
    -------
    rows : ndarray (E, n)
    turns : list of E tuples of n ints
        Extra turns per joint (0 for joints of at most one turn).
    src : list of E int
        The row of ``Qp`` each variant came from.
    counts : list of K int
        The exact number of variants within limits of each row (0 when a joint of at most one turn
        breaks a limit; the nearest variant is then still listed, beyond its limits).
    ok : list of K bool
        The row's joints of at most one turn are within their limits.
    """
    K, n = Qp.shape
    wide, narrow = _expand_plan(chain)
    base_rows = Qp.tolist()
    ok = [all(lo <= r[i] <= hi for i, lo, hi in narrow) for r in base_rows]
    if not wide:
        return Qp, [(0,) * n] * K, list(range(K)), [1 if o else 0 for o in ok], ok
    ref_l = np.asarray(ref, float).tolist()
    caches = chain.derived("turn_breaks", lambda c: [_breaks(lo, hi) for _, lo, hi in _expand_plan(c)[0]])
    rows, tt, src, counts = [], [], [], []
    zero = (0,) * n
    for k, base in enumerate(base_rows):
        spans = [(i, base[i], *_turns_of(cb, base[i], lo, hi)) for (i, lo, hi), cb in zip(wide, caches)]
        count = 1
        for _, _, a, b in spans:
            count *= b - a + 1
        lim = max(1, int(limits[k])) if ok[k] else 1
        if count == 1:
            combos = [tuple(a for _, _, a, _ in spans)]
        elif lim == 1:  # the one nearest ref, joint by joint
            combos = [tuple(min(max(round((ref_l[i] - v) / TWO_PI), a), b) for i, v, a, b in spans)]
            combos = [tuple(min((x for x in (kk - 1, kk, kk + 1) if a <= x <= b),
                                key=lambda x, v=v, r=ref_l[i]: abs(v + x * TWO_PI - r))
                            for kk, (i, v, a, b) in zip(combos[0], spans))]
        elif count <= lim:  # every combination (the ranking orders them later)
            combos = itertools.product(*[range(a, b + 1) for _, _, a, b in spans])
        else:  # the nearest ref (the nearest first)
            cands = [Turns(v, a, b).nearest(ref_l[i], lim) for i, v, a, b in spans]
            combos = [tuple(c[x][1] for c, x in zip(cands, ix)) for ix in _smallest_sums(cands, lim)]
        for c in combos:
            r = list(base)
            if any(c):
                t = list(zero)
                for (i, v, _, _), kk in zip(spans, c):
                    t[i] = kk
                    r[i] = v + kk * TWO_PI
                tt.append(tuple(t))
            else:
                tt.append(zero)
            rows.append(r)
            src.append(k)
        counts.append(count if ok[k] else 0)
    return np.array(rows, float).reshape(-1, n), tt, src, counts, ok


def _smallest_sums(lists, limit):
    """Index tuples of the ``limit`` smallest sums taking one cost from each list (each sorted ascending)."""
    start = (0,) * len(lists)
    if limit == 1:
        return [start]
    heap = [(sum(ls[0][0] for ls in lists), start)]
    seen = {start}
    picked = []
    while heap and len(picked) < limit:
        cost, idx = heapq.heappop(heap)
        picked.append(idx)
        for j in range(len(lists)):
            if idx[j] + 1 < len(lists[j]):
                nxt = idx[:j] + (idx[j] + 1,) + idx[j + 1 :]
                if nxt not in seen:
                    seen.add(nxt)
                    heapq.heappush(heap, (cost - lists[j][idx[j]][0] + lists[j][idx[j] + 1][0], nxt))
    return picked


class Turns:
    """The fitting turns of one wide joint for one value ``v`` in (-π, π]: ``k`` from ``kmin`` to ``kmax``."""

    __slots__ = ("v", "kmin", "kmax")

    def __init__(self, v, kmin, kmax):
        self.v, self.kmin, self.kmax = v, kmin, kmax

    @property
    def count(self) -> int:
        return max(0, self.kmax - self.kmin + 1)

    def nearest(self, ref, limit):
        """Up to ``limit`` fitting turns, nearest ``ref`` first: list of (cost, k)."""
        if self.count == 0:
            return []
        k0 = min(max(int(round((ref - self.v) / TWO_PI)), self.kmin), self.kmax)
        out = [k0]
        a, b = k0 - 1, k0 + 1
        while len(out) < limit and (a >= self.kmin or b <= self.kmax):
            da = abs(self.v + a * TWO_PI - ref) if a >= self.kmin else math.inf
            db = abs(self.v + b * TWO_PI - ref) if b <= self.kmax else math.inf
            if da <= db:
                out.append(a)
                a -= 1
            else:
                out.append(b)
                b += 1
        return [((self.v + k * TWO_PI - ref) ** 2, k) for k in out]
