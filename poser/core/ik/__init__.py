"""Inverse kinematics: every branch that puts the tool at a target, with its limits and its name.

    result = solve(chain, xyz, R=None, near=None, time_budget=0.05)

``xyz`` is the world position of the tool point (arm length unit), ``R`` the
world orientation of the tool coordinate system (3 x 3) or None for a
position-only solve, ``near`` the current joint values (internal units: rad
for revolute, the length unit for prismatic joints).  The result
(:class:`IKResult`) lists every distinct branch (:class:`Branch`): joint
values, limit verdict with the violations, position and orientation error,
manipulability, a plain-language label and the distance from ``near``.

How it solves
-------------
The chain is first turned into joint lines at q = 0 in world coordinates
(base and tool removed into them); :func:`poser.core.ik._closed.recognise`
then looks for a structure with a closed form — planar 2R / 3R, the
three-axis elbow arm (with or without shoulder offset), the two
two-revolute-one-prismatic types, the four-axis table arm, and six-axis arms
whose last three axes meet (Pieper's condition) on one of those positioning
stages.  Every other chain, and every target a closed form cannot settle,
goes to the damped least-squares solver (:mod:`poser.core.ik._numeric`),
run from seeds spread over the limits plus the current pose, all at once.

Revolute joints whose range exceeds a full turn give each extra turn that
fits in the range as a branch of its own.

When no branch reaches the target within limits, the result carries the
closest approach within limits (:attr:`IKResult.closest`) and, when the
position itself is out of reach, the nearest reachable tool position.

:func:`solve_batch` is the vectorised closed form for many targets at once
(joint values and verdicts only, no labels).
"""

from __future__ import annotations

import itertools
import math
import time
from bisect import bisect_right
from dataclasses import dataclass, field

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.ik import _closed, _labels, _numeric, _scalar
from poser.core.ik._evaluate import evaluator
from poser.core.ik._geometry import TWO_PI, chain_lines, pose_and_jacobian, wrap

__all__ = ["solve", "solve_batch", "IKResult", "Branch", "Violation", "BatchResult", "structure_of"]


@dataclass(frozen=True)
class Violation:
    """A joint beyond one of its limits (internal units; ``excess`` > 0)."""

    joint: int
    name: str
    side: str  # "lower" | "upper"
    limit: float
    value: float
    excess: float


@dataclass(frozen=True)
class Branch:
    """One inverse-kinematics solution.

    Attributes
    ----------
    q : ndarray, shape (n,)
        Joint values, internal units.
    label : str
        Plain words, e.g. "shoulder front · elbow up · wrist not flipped".
    within_limits : bool
    violations : tuple of Violation
    position_error : float
        Distance from the target, arm length unit.
    orientation_error : float
        Angle from the target orientation, rad (0.0 for position-only).
    manipulability : float
        :func:`poser.core.jacobian.manipulability` at ``q``.
    distance : float or None
        Euclidean joint-space distance from ``near`` (internal units); None without ``near``.
    reaches : bool
        Both errors within tolerance.
    configuration : str
        The label without extra-turn words: branches that differ only by
        full turns of a joint share it.
    turns : tuple of int
        Extra full turns per joint relative to the value in (-180°, 180°].
    """

    q: np.ndarray
    label: str
    within_limits: bool
    violations: tuple
    position_error: float
    orientation_error: float
    manipulability: float
    distance: float | None
    reaches: bool
    configuration: str = ""
    turns: tuple = field(default=())


@dataclass(frozen=True)
class IKResult:
    """Everything :func:`solve` found.

    Attributes
    ----------
    solver : str
        ``"closed-form: <structure>"`` or ``"numerical"``.
    branches : tuple of Branch
        Reaching and within limits first, then reaching but beyond a limit,
        then the rest; within each group by distance from ``near`` (or in
        the solver's stable order).
    reachable : bool
        Some branch reaches within tolerance and within limits.
    closest : Branch or None
        Closest approach within limits when not reachable.
    nearest_point : ndarray (3,) or None
        Nearest reachable tool position when the position is out of reach.
    message : str
        One or two plain sentences.
    position_only : bool
    redundant : bool
        Solutions form families; the branches are representatives.
    tolerance : tuple of float
        Position (length unit) and orientation (rad) tolerances used.
    """

    solver: str
    branches: tuple
    reachable: bool
    closest: Branch | None
    nearest_point: np.ndarray | None
    message: str
    position_only: bool
    redundant: bool
    tolerance: tuple = (0.0, 0.0)


# -- helpers -------------------------------------------------------------------------------------


def structure_of(chain):
    """The closed-form structure recognised for ``chain`` (see :func:`_closed.recognise`), or None."""
    return _closed.recognise(chain)


def _ranks(chain):
    """Generic rank of the position rows and of the whole Jacobian (kept with the chain)."""
    return chain.derived("ik_ranks", _make_ranks)


def _make_ranks(chain):
    L = chain_lines(chain)
    rng = np.random.default_rng(3)
    q = rng.uniform(-1.0, 1.0, size=(4, chain.n)) * np.where(L.revolute, 2.5, 0.3 * L.scale)
    _, _, J = pose_and_jacobian(L, q)
    J = J.copy()
    J[:, :3] /= L.scale
    rp = int(max(np.linalg.matrix_rank(Jk[:3], tol=1e-9) for Jk in J))
    rf = int(max(np.linalg.matrix_rank(Jk, tol=1e-9) for Jk in J))
    return (rp, rf)


def _check_inputs(chain, xyz, R, near):
    # plain floats: numpy calls on three or nine numbers cost more than the arithmetic
    xyz = np.asarray(xyz, dtype=float)
    if xyz.shape != (3,):
        raise PoserValueError(f"xyz must have shape (3,), got shape {xyz.shape}")
    if not all(map(math.isfinite, xyz.tolist())):
        raise PoserValueError(f"xyz must be finite, got {xyz.tolist()}")
    if R is not None:
        R = np.asarray(R, dtype=float)
        if R.shape != (3, 3):
            raise PoserValueError(f"R must have shape (3, 3) or be None, got shape {R.shape}")
        (a, b, c), (d, e, f), (g, h, i) = R.tolist()
        if not all(map(math.isfinite, (a, b, c, d, e, f, g, h, i))):
            raise PoserValueError("R must be finite")
        # largest entry of |R^T R - I|, and det R
        err = max(
            abs(a * a + d * d + g * g - 1.0),
            abs(b * b + e * e + h * h - 1.0),
            abs(c * c + f * f + i * i - 1.0),
            abs(a * b + d * e + g * h),
            abs(a * c + d * f + g * i),
            abs(b * c + e * f + h * i),
        )
        if err > 1e-6 or a * (e * i - f * h) - b * (d * i - f * g) + c * (d * h - e * g) < 0:
            raise PoserValueError("R must be a rotation matrix (orthonormal, determinant +1)")
        if err > 1e-13:  # tidy a slightly drifted rotation
            U, _, Vt = np.linalg.svd(R)
            R = U @ Vt
    if near is not None:
        near = np.asarray(near, dtype=float)
        if near.shape != (chain.n,):
            raise PoserValueError(f"near must have shape ({chain.n},), got shape {near.shape}")
        if not all(map(math.isfinite, near.tolist())):
            raise PoserValueError(f"near must be finite, got {near.tolist()}")
    return xyz, R, near


def _fmt_len(chain, v):
    return f"{v:.4g} {chain.units.length}"


def _fmt_angle(chain, rad):
    # (math.degrees multiplies by 180/π exactly as Units.angle_out's np.degrees does)
    if chain.units.angle == "deg":
        return f"{math.degrees(float(rad)):.0f}°"
    return f"{float(rad):.2f} rad"


def _fmt_joint(chain, i, v):
    if chain.revolute[i]:
        return f"{math.degrees(v):.1f}°" if chain.units.angle == "deg" else f"{float(v):.3f} rad"
    return f"{v:.1f} {chain.units.length}"


# -- extra turns and limits ----------------------------------------------------------------------

_new = object.__new__


class _Context:
    """Per-chain constants of the solver's bookkeeping (see :func:`_context`)."""

    def __init__(self, chain):
        n = chain.n
        rev, lo, hi = chain.revolute, chain.lower, chain.upper
        self.n = n
        self.rev = rev
        self.rev_l = [bool(r) for r in rev]
        self.all_rev = bool(rev.all())
        self.lo_l, self.hi_l = lo.tolist(), hi.tolist()
        self.mid = 0.5 * (lo + hi)
        tol = 1e-9 * np.where(rev, 1.0, np.maximum(1.0, hi - lo))
        # beyond these a value breaks a limit: (joint, below, above)
        self.limits = tuple(zip(range(n), (lo - tol).tolist(), (hi + tol).tolist()))
        self.names = chain.names
        self.wide = tuple(i for i in range(n) if rev[i] and hi[i] - lo[i] > TWO_PI + 1e-9)
        self.wide_l = list(self.wide)
        lo_l, hi_l = self.lo_l, self.hi_l
        # per wide joint: the limits with their 1e-9 margin and every whole turn k that can place a
        # value in [-π, π] within them (one more each side where rounding could matter)
        wl = []
        for i in self.wide:
            lo_e, hi_e = lo_l[i] - 1e-9, hi_l[i] + 1e-9
            a, b = (lo_e - math.pi) / TWO_PI, (hi_e + math.pi) / TWO_PI
            ka, kb = math.ceil(a), math.floor(b)
            ka -= a - (ka - 1) < 1e-6  # ka - 1 fails by a margin of (a - (ka - 1)) turns
            kb += (kb + 1) - b < 1e-6
            wl.append((i, lo_e, hi_e, tuple(range(ka, kb + 1))))
        self.wide_limits = tuple(wl)
        # the shifts k·2π as an array (W, C) (padded with inf: never within limits)
        C = max((len(c) for *_, c in wl), default=0)
        self.wide_shift = np.full((len(wl), C), np.inf)
        for j, (*_, cand) in enumerate(wl):
            self.wide_shift[j, : len(cand)] = [k * TWO_PI for k in cand]
        self.narrow_limits = tuple(x for x in self.limits if x[0] not in self.wide)
        # per wide joint, for a value v in (-π, π]: turn k fits when lo_e <= v + k·2π <= hi_e, the sum
        # rounded; that sum never decreases as v grows, so which turns fit changes only at the exact
        # values `starts` (sorted): interval i = bisect_right(starts, v) has the pattern pats[i] (a byte
        # per candidate turn, padded to C: the layout of `fits` in _expand_turns); `stride` numbers the
        # combinations of intervals of all wide joints
        breaks, stride = [], 1
        for j, (_, lo_e, hi_e, cand) in enumerate(wl):
            shifts = self.wide_shift[j].tolist()
            starts = set()
            for sh in shifts[: len(cand)]:
                starts.add(_first_at_least(lo_e, sh))
                starts.add(math.nextafter(_last_at_most(hi_e, sh), math.inf))
            starts = sorted(starts)
            pats = [
                bytes(lo_e <= v + sh <= hi_e for sh in shifts)
                for v in [math.nextafter(starts[0], -math.inf)] + starts  # a value in each interval
            ]
            breaks.append((starts, pats, stride, shifts))
            stride *= len(pats)
        self.wide_breaks = tuple(breaks)
        # whole turns that place a revolute value in its range: 2π for the joints of at most one turn
        # (a wide joint keeps its value in (-π, π]; its turns come from `turn_table`)
        self.narrow_turn = np.where(rev, TWO_PI, 0.0)
        self.narrow_turn[list(self.wide)] = 0.0
        # offsets k·2π of the wide joints (rows of `turn_table`, 0 elsewhere) for every turns tuple met
        self.turn_rows = {}  # turns tuple → row of turn_table
        self.turn_list = []
        self.turn_table = np.zeros((0, n))
        self.patterns = {}  # (max_per_branch, interval code) → turns and turn_table rows of the combinations
        self.home = np.array(chain.home, float)
        self.home.setflags(write=False)
        self.no_turns = (0,) * n
        self.turn_words = {}  # turns tuple → words
        self.labels = {}  # (configuration, turns) → (label, number of extra turns)


def _context(chain) -> _Context:
    """The :class:`_Context` of ``chain`` (kept with the chain)."""
    return chain.derived("ik_context", _Context)


def _expand_turns(chain, Q, ref, hit, max_per_branch=8):
    """Place revolute values in their ranges; a range over a full turn yields every turn that fits.

    A joint whose range is at most one turn takes the value nearest the
    middle of its range (inside it when any turn fits; otherwise the one
    with the smallest excess).  A joint with a wider range gives, for rows
    with ``hit`` (they reach the target), every turn that fits as a
    separate row; other rows keep the turn nearest ``ref``.  Returns the
    rows (E, n), their turns (list of tuples; turns count from the value in
    (-π, π]), the index of the row of ``Q`` each came from, and rows (K, n)
    with the limits (joint, below, above) whose violations are those of the
    rows made from them (see :func:`_branches`).
    """
    cx = _context(chain)
    K = len(Q)
    if K == 0:
        return np.zeros((0, cx.n)), [], [], None, cx.limits
    wide = cx.wide
    # (np.rint rounds half to even, as np.round does)
    if cx.all_rev:
        V = wrap(Q)
        turn = np.rint((cx.mid - V) / TWO_PI)
    else:
        V = np.where(cx.rev, wrap(Q), Q)
        turn = np.where(cx.rev, np.rint((cx.mid - V) / TWO_PI), 0.0)
    if not wide:
        base = V + turn * TWO_PI
        return base, [cx.no_turns] * K, list(range(K)), base, cx.limits
    # the joints of at most one turn placed; the wide joints still in (-π, π] (their rows break no limit:
    # the turns chosen below fit by construction, so only the other joints' limits are checked)
    base = V + turn * cx.narrow_turn
    # which turns of each wide joint fit, for every row: the interval of the value (see _Context)
    Vw = V.take(cx.wide_l, 1).T.tolist()
    codes = [0] * K
    for (starts, _, stride, _), col in zip(cx.wide_breaks, Vw):
        for b, v in enumerate(col):
            codes[b] += bisect_right(starts, v) * stride
    patterns = cx.patterns
    turns, rows, src = [], [], []
    for b in range(K):
        if hit[b]:
            # every combination of the turns that fit, in order, at most max_per_branch: the same for
            # every row with the same pattern of fitting turns
            key = (max_per_branch, codes[b])
            ent = patterns.get(key)
            if ent is None:
                ent = patterns[key] = _turn_combinations(cx, _fitting(cx, codes[b]), max_per_branch)
        else:
            # the candidates v + k·2π of the row, as the sums the rows are made of
            X = [[col[b] + sh for sh in shifts] for (*_, shifts), col in zip(cx.wide_breaks, Vw)]
            ent = _nearest_turns(cx, _fitting(cx, codes[b]), X, ref)
        turns += ent[0]
        rows += ent[1]
        src += [b] * len(ent[0])
    # a wide joint's value is V + k·2π, the sum the candidates X are made of
    return base.take(src, 0) + cx.turn_table.take(rows, 0), turns, src, base, cx.narrow_limits


def _first_at_least(bound, shift):
    """The smallest float v with v + shift >= bound (the sum rounded; it never decreases as v grows)."""
    return _first_true(lambda v: v + shift >= bound, bound - shift, max(abs(bound), abs(shift)))


def _last_at_most(bound, shift):
    """The largest float v with v + shift <= bound."""
    first_above = _first_true(lambda v: v + shift > bound, bound - shift, max(abs(bound), abs(shift)))
    return math.nextafter(first_above, -math.inf)


def _first_true(test, guess, size):
    """The smallest float v with test(v), for a test that turns true once (and stays true) as v grows,
    near ``guess``; ``size`` is the magnitude of the numbers compared (sets the first bracket)."""
    step = 4.0 * math.ulp(size) + 4.0 * math.ulp(guess)
    a, b = guess - step, guess + step
    while test(a):
        a -= step
        step *= 2.0
    while not test(b):
        b += step
        step *= 2.0
    # bisection down to adjacent floats: test(a) false, test(b) true
    while math.nextafter(a, math.inf) < b:
        m = 0.5 * (a + b)
        if not a < m < b:
            m = math.nextafter(a, math.inf)
        if test(m):
            b = m
        else:
            a = m
    return b


def _fitting(cx, code):
    """The fitting candidate turns (a byte each, wide joint after wide joint) of interval code ``code``."""
    return b"".join(pats[code // stride % len(pats)] for _, pats, stride, _ in cx.wide_breaks)


def _turn_row(cx, turns):
    """The row of ``cx.turn_table`` with the offsets of ``turns`` (added to the table when new)."""
    r = cx.turn_rows.get(turns)
    if r is None:
        r = cx.turn_rows[turns] = len(cx.turn_list)
        cx.turn_list.append([k * TWO_PI if k else 0.0 for k in turns])
        table = np.array(cx.turn_list)
        table.setflags(write=False)
        cx.turn_table = table
    return r


def _turn_combinations(cx, fits, max_per_branch):
    """Turns (full tuples) and rows of ``cx.turn_table`` of every combination of fitting turns.

    ``fits`` holds a byte per candidate turn (1 where it fits), wide joint after wide joint.
    """
    C = cx.wide_shift.shape[1]
    opts = []
    for j, (_, _, _, cand) in enumerate(cx.wide_limits):
        opts.append([k for c, k in enumerate(cand) if fits[j * C + c]])
    turns = []
    for combo in itertools.islice(itertools.product(*opts), max_per_branch):
        t = [0] * cx.n
        for i, k in zip(cx.wide, combo):
            t[i] = k
        turns.append(tuple(t))
    return turns, [_turn_row(cx, t) for t in turns]


def _nearest_turns(cx, fits, X, ref):
    """For a row that misses the target: per wide joint the turn that fits and is the current one (0),
    else the fitting one nearest ``ref``."""
    C = cx.wide_shift.shape[1]
    t = [0] * cx.n
    for j, (i, _, _, cand) in enumerate(cx.wide_limits):
        fit = [c for c in range(len(cand)) if fits[j * C + c]]
        if 0 in cand and cand.index(0) in fit:
            c = cand.index(0)
        else:
            r = float(ref[i])
            d = [abs(X[j][c] - r) for c in fit]
            c = fit[d.index(min(d))]
        t[i] = cand[c]
    t = tuple(t)
    return [t], [_turn_row(cx, t)]


def _violations(chain, q):
    """Violation tuple of one configuration ``q`` (n,)."""
    return _violations_many(chain, np.asarray(q, float)[None])[0]


def _violations_mask(chain, Q):
    """True for each row of ``Q`` (K, n) beyond a limit (wrapped revolute values placed in range first)."""
    lo, hi = chain.lower, chain.upper
    mid = 0.5 * (lo + hi)
    Qp = np.where(chain.revolute, wrap(Q - mid) + mid, Q)
    tol = 1e-9 * np.where(chain.revolute, 1.0, np.maximum(1.0, hi - lo))
    return np.any((Qp < lo - tol) | (Qp > hi + tol), axis=1)


def _violations_many(chain, Q, limits=None):
    """Violation tuples of configurations ``Q`` (K, n); limits are met within 1e-9 (rad or 1e-9 of the stroke).

    ``limits`` (joint, below, above) restricts the joints checked (default: every joint).
    """
    cx = _context(chain)
    names, lo_l, hi_l = cx.names, cx.lo_l, cx.hi_l
    limits = cx.limits if limits is None else limits
    out = []
    for row in Q.tolist():
        vs = ()
        for i, below, above in limits:
            v = row[i]
            if v < below:
                x = _new(Violation)  # the object Violation(...) makes (see _violation)
                x.__dict__.update(joint=i, name=names[i], side="lower", limit=lo_l[i], value=v, excess=lo_l[i] - v)
                vs += (x,)
            elif v > above:
                x = _new(Violation)
                x.__dict__.update(joint=i, name=names[i], side="upper", limit=hi_l[i], value=v, excess=v - hi_l[i])
                vs += (x,)
        out.append(vs)
    return out


def _violation(joint, name, side, limit, value, excess):
    """A :class:`Violation` (the same object ``Violation(...)`` makes, made faster)."""
    v = _new(Violation)
    v.__dict__.update(joint=joint, name=name, side=side, limit=limit, value=value, excess=excess)
    return v


def _turn_words(chain, turns):
    """Words for the extra turns (a tuple of int per joint), e.g. ["J6 flange +1 turn"] (cached per chain)."""
    cache = _context(chain).turn_words
    words = cache.get(turns)
    if words is None:
        names = chain.names
        words = []
        for i, k in enumerate(turns):
            if k:
                words.append(f"{names[i]} {k:+d} turn" + ("s" if abs(k) > 1 else ""))
        if len(cache) < 4096:
            cache[turns] = words
    return words


def _metrics(chain, Q, xyz, R):
    """Position error, orientation error, manipulability (lists of K floats) and the Frames of Q (K, n)."""
    return evaluator(chain).metrics(Q, xyz, R)


def _branches(chain, expanded, configs, metrics, near, tol, extra_words=None, keys=None, reach=None):
    """Branch objects for expanded rows of base configurations with ``metrics``.

    ``expanded`` is (Qe (E, n), turns, source index, Vb, limits) as :func:`_expand_turns` returns it:
    each row of Qe breaks the given limits of its row of Vb.
    When ``keys`` is a list, the sort key of each branch (see :func:`_solve`) is appended to it.
    ``reach`` (one bool per base configuration: both errors within ``tol``) is computed when not given.
    """
    Qe, turns, src, Vb, limits = expanded
    if not src:
        return []
    Qe.setflags(write=False)  # each branch's q is a (read-only) row of Qe
    perr, oerr, man = metrics[:3]
    viol = _violations_many(chain, Vb, limits)
    if Vb is not Qe:
        viol = [viol[k] for k in src]
    dist = None if near is None else np.sqrt(((Qe - near) ** 2).sum(axis=1)).tolist()
    if reach is None:
        reach = [pe <= tol[0] and oe <= tol[1] for pe, oe in zip(perr, oerr)]
    words = list(configs)
    if extra_words is not None:
        for k, cfg in enumerate(words):
            if extra_words[k]:
                words[k] = f"{cfg} · {extra_words[k]}" if cfg else extra_words[k]
    labels = _context(chain).labels
    rows = list(Qe)  # (read-only views)
    if dist is None:
        dist = [None] * len(src)
    out = []
    append = out.append
    for j, (k, t, q, v, d) in enumerate(zip(src, turns, rows, viol, dist)):
        w = words[k]
        lab = labels.get((w, t))
        if lab is None:
            lab = _label(chain, w, t)
            if len(labels) > 4096:
                labels.clear()
            labels[w, t] = lab
        r = reach[k]
        # the object Branch(...) makes, without the frozen __init__'s field-by-field object.__setattr__
        b = _new(Branch)
        b.__dict__.update(
            q=q,
            label=lab[0],
            within_limits=not v,
            violations=v,
            position_error=perr[k],
            orientation_error=oerr[k],
            manipulability=man[k],
            distance=d,
            reaches=r,
            configuration=w or "single configuration",
            turns=t,
        )
        append(b)
        if keys is not None:
            keys.append((not (r and not v), not r, 0.0 if d is None else d, lab[1], j))
    return out


def _label(chain, cfg, turns):
    """The label of a configuration ``cfg`` (words, may be empty) with extra ``turns``, and the turn count."""
    if any(turns):
        return " · ".join(([cfg] if cfg else []) + _turn_words(chain, turns)), sum(map(abs, turns))
    return cfg or "single configuration", 0


def _dedupe(chain, Q, tol):
    """Indices of rows of Q that differ from every earlier kept row (wrapped angles, scaled lengths)."""
    L = chain_lines(chain)
    K = len(Q)
    if K < 2:
        return list(range(K))
    keep = []
    if K > 16:  # many rows (numerical seeds): all pairs at once
        d = Q[:, None, :] - Q[None, :, :]
        d = np.where(L.revolute, wrap(d), d / L.scale)
        close = (np.max(np.abs(d), axis=-1) < tol).tolist()
        for k in range(K):
            if not any(close[k][j] for j in keep):
                keep.append(k)
        return keep
    # a few rows (closed form): plain floats, stopping at the first joint that differs
    # (the same arithmetic as wrap(): pi - (pi - d) mod 2 pi)
    rows = Q.tolist()
    rev = _context(chain).rev_l
    if not rev:  # no joints: every row is the same
        return [0]
    scale, pi = L.scale, math.pi
    # distinct branches nearly always differ in the last joint (a different wrist or elbow turns the
    # tool's last axis differently): that test alone first (the same test as in the loop; the order of
    # the joints does not change whether every one of them is close)
    last, r0 = len(rev) - 1, rev[-1]
    for k, qk in enumerate(rows):
        a0 = qk[last]
        for j in keep:
            qj = rows[j]
            d = a0 - qj[last]
            if not (abs(pi - (pi - d) % TWO_PI) if r0 else abs(d / scale)) < tol:
                continue
            for i, r in enumerate(rev):
                d = qk[i] - qj[i]
                d = abs(pi - (pi - d) % TWO_PI) if r else abs(d / scale)
                if not d < tol:
                    break
            else:
                break  # close to a kept row
        else:
            keep.append(k)
    return keep


def _spread(chain, Q, score, count):
    """Pick ``count`` rows of Q far apart in joint space, starting from the best score (lowest)."""
    L = chain_lines(chain)
    order = list(np.argsort(score, kind="stable"))
    chosen = [order[0]]
    scale = np.where(L.revolute, 1.0, 1.0 / L.scale)
    while len(chosen) < min(count, len(Q)):
        D = np.full(len(Q), np.inf)
        for c in chosen:
            d = Q - Q[c]
            d = np.where(L.revolute, wrap(d), d) * scale
            D = np.minimum(D, np.linalg.norm(d, axis=1))
        D[chosen] = -1.0
        # favour better-scoring rows a little among equally spread ones
        nxt = int(np.argmax(D - 1e-3 * np.asarray(score)))
        if D[nxt] <= 1e-3:
            break
        chosen.append(nxt)
    return chosen


# -- the solver ----------------------------------------------------------------------------------


_OPTIONS = frozenset({"method", "position_tolerance", "orientation_tolerance", "seeds", "max_branches", "closest"})


def solve(chain, xyz, R=None, near=None, *, time_budget=0.05, **options) -> IKResult:
    """Every inverse-kinematics branch for a target.

    Parameters
    ----------
    chain : poser.core.chain.Chain
    xyz : array_like, shape (3,)
        World position of the tool point, arm length unit.
    R : array_like, shape (3, 3), optional
        World orientation of the tool coordinate system; None for position only.
    near : array_like, shape (n,), optional
        Current joint values, internal units; branches are ranked by distance from them.
    time_budget : float
        Seconds the numerical solver may spend (the closed forms take far less).
    **options
        ``method`` ("auto", "closed" or "numerical"; "closed" falls back to
        numerical when there is no closed form), ``position_tolerance``
        (length unit, default 1e-6 of the arm's size), ``orientation_tolerance``
        (rad, default 1e-6), ``seeds`` (numerical starts), ``max_branches``
        (representatives of a redundant family, default 8),
        ``closest`` (compute the closest approach when not reachable, default True).

    Returns
    -------
    IKResult
    """
    xyz, R, near = _check_inputs(chain, xyz, R, near)
    unknown = set(options) - _OPTIONS if options else None
    if unknown:
        raise PoserValueError(f"options must be among {sorted(_OPTIONS)}, got {sorted(unknown)}")
    method = options.get("method", "auto")
    if method not in ("auto", "closed", "numerical"):
        raise PoserValueError(f"method must be 'auto', 'closed' or 'numerical', got {method!r}")
    L = chain_lines(chain)
    tol = (
        float(options.get("position_tolerance", 1e-6 * L.scale)),
        float(options.get("orientation_tolerance", 1e-6)),
    )
    deadline = time.perf_counter() + float(time_budget)
    try:
        return _solve(chain, xyz, R, near, tol, deadline, method, options)
    except Exception as exc:  # the window calls this live: report, never crash
        return IKResult(
            solver="none",
            branches=(),
            reachable=False,
            closest=None,
            nearest_point=None,
            message=f"The solver failed on this target ({type(exc).__name__}: {exc}).",
            position_only=R is None,
            redundant=False,
            tolerance=tol,
        )


def _solve(chain, xyz, R, near, tol, deadline, method, options):
    L = chain_lines(chain)
    n = chain.n
    ref = near if near is not None else _context(chain).home
    position_only = R is None
    rp, rf = _ranks(chain)
    redundant = n > (rp if position_only else rf)
    st = None if method == "numerical" else _closed.recognise(chain)
    max_branches = int(options.get("max_branches", 8))
    fmt_angle = lambda a: _fmt_angle(chain, a)  # noqa: E731

    extra = None
    Q = None
    solver = "numerical"
    if st is not None:
        solver = f"closed-form: {st.name}"
        if not position_only or st.kind in ("planar2", "elbow", "rrp_spherical", "rrp_cylindrical"):
            Q = _closed_one(chain, st, xyz, R, ref)
        elif st.kind == "planar3":
            # position only: a one-parameter family over the tool angle
            phi_ref = _closed.tool_angle(L, st.axis, pose_and_jacobian(L, ref[None])[1])[0]
            phis = phi_ref + np.arange(8) * (TWO_PI / 8)
            Qf, ex = _closed.solve_closed(chain, st, np.repeat(xyz[None], 8, 0), None, ref, phi=phis)
            Q = Qf.reshape(-1, n)
            extra = [f"tool turned {fmt_angle(wrap(ph))}" for ph in np.repeat(phis, Qf.shape[1])]
        else:
            # position only on an arm with a wrist: keep the current tool orientation
            Q = _closed_one(chain, st, xyz, pose_and_jacobian(L, ref[None])[1][0], ref)
    numeric = Q is None
    if Q is not None and position_only and st.kind in ("pieper6", "table4"):
        # the current orientation may not fit the target, or only beyond the limits: search the family too
        p = pose_and_jacobian(L, Q)[0]
        fits = (np.linalg.norm(p - xyz, axis=1) <= tol[0]) & ~_violations_mask(chain, Q)
        if not fits.any():
            numeric = True
            solver = "numerical"
    if numeric:
        K = int(options.get("seeds", 96 if redundant else 64))
        S = np.vstack([ref[None], np.asarray(chain.home, float)[None], _numeric.seeds(chain, K)])
        Qn, pe, oe, conv = _numeric.lm(L, xyz, R, S, lower=chain.lower, upper=chain.upper, tol=tol, deadline=deadline)
        Qn = Qn[conv]
        Q = Qn if Q is None else np.vstack([Q, Qn])

    # distinct base configurations, then their extra turns
    keep = _dedupe(chain, Q, 1e-2 if numeric and redundant else (1e-5 if numeric else 1e-7))
    if len(keep) < len(Q):
        Q = Q[keep]
    if extra is not None:
        extra = [extra[k] for k in keep]
    if numeric and redundant and len(Q) > max_branches:
        # a family: representatives spread over it, reaching and within limits and near the current pose first
        p = pose_and_jacobian(L, Q)[0]
        miss = np.linalg.norm(p - xyz, axis=1) > tol[0]
        dist = np.linalg.norm(np.where(L.revolute, wrap(Q - ref), (Q - ref) / L.scale), axis=1)
        pick = _spread(chain, Q, dist + 100.0 * _violations_mask(chain, Q) + 1000.0 * miss, max_branches)
        Q = Q[pick]
    if extra is not None:
        p, _, _ = pose_and_jacobian(L, Q)
        ok = np.linalg.norm(p - xyz, axis=1) <= tol[0]
        if ok.any():
            idx = np.flatnonzero(ok)
            Q = Q[idx]
            extra = [extra[k] for k in idx]
    if len(Q):
        metrics = _metrics(chain, Q, xyz, R)
        hit = [pe <= tol[0] and oe <= tol[1] for pe, oe in zip(metrics[0], metrics[1])]
        configs = _labels.describe(chain, Q, fmt_angle, metrics[3])
    else:
        metrics, hit, configs = None, [], []
    # ordered: reaching and within limits, then reaching, then the rest; each by distance, fewer turns first
    keys = []
    uniq = _branches(chain, _expand_turns(chain, Q, ref, hit), configs, metrics, near, tol, extra, keys, hit)
    keys.sort()
    branches = tuple([uniq[k[-1]] for k in keys])
    reachable = bool(keys) and not keys[0][0]  # the first branch reaches within limits

    closest = None
    nearest_point = None
    if not reachable and options.get("closest", True):
        closest, nearest_point = _closest(chain, xyz, R, ref, near, Q, tol, deadline, fmt_angle)
    message = _message(chain, branches, reachable, closest, nearest_point, xyz, redundant, position_only, near, tol)
    # the object IKResult(...) makes, without the frozen __init__'s field-by-field object.__setattr__
    res = _new(IKResult)
    res.__dict__.update(
        solver=solver,
        branches=branches,
        reachable=reachable,
        closest=closest,
        nearest_point=nearest_point,
        message=message,
        position_only=position_only,
        redundant=bool(redundant),
        tolerance=tol,
    )
    return res


def _closed_one(chain, st, xyz, R, ref):
    """Closed-form candidates (B, n) for one target: the scalar version where there is one."""
    out = _scalar.solve_single(chain, st, xyz, R, ref)
    if out is not None:
        return np.array([q for q, _ in out], dtype=float).reshape(-1, chain.n)
    Q, _ = _closed.solve_closed(chain, st, xyz[None], None if R is None else R[None], ref)
    return Q[0]


def _closest(chain, xyz, R, ref, near, Q, tol, deadline, fmt_angle):
    """Closest approach within limits, and the nearest reachable position when the position is out of reach."""
    L = chain_lines(chain)
    lo, hi = chain.lower, chain.upper
    S = [np.clip(ref, lo, hi)[None], np.clip(np.asarray(chain.home, float), lo, hi)[None]]
    if len(Q):
        S.append(np.clip(np.where(L.revolute, wrap(Q), Q), lo, hi))
    S.append(_numeric.seeds(chain, 24))
    S = np.vstack(S)
    late = max(deadline, time.perf_counter() + 0.02)
    q, pe, oe, _ = _numeric.lm(L, xyz, R, S, lower=lo, upper=hi, tol=tol, deadline=late, clip=True, max_iter=60)
    best = int(np.argmin((pe / L.scale) ** 2 + oe**2))
    qb = q[best]
    metrics = _metrics(chain, qb[None], xyz, R)
    cfg = _labels.describe(chain, qb[None], fmt_angle, metrics[3])
    Qb = qb[None].copy()
    br = _branches(chain, (Qb, [(0,) * chain.n], [0], Qb, None), cfg, metrics, near, tol)[0]
    nearest = None
    if pe[best] > tol[0]:
        if R is None:
            qp, pp = qb, pe[best]
        else:
            q2, pe2, _, _ = _numeric.lm(
                L, xyz, None, q, lower=lo, upper=hi, tol=tol, deadline=late, clip=True, max_iter=60
            )
            b2 = int(np.argmin(pe2))
            qp, pp = q2[b2], pe2[b2]
        if pp > tol[0]:
            nearest = pose_and_jacobian(L, qp[None])[0][0].copy()
            nearest.setflags(write=False)
    return br, nearest


def _message(chain, branches, reachable, closest, nearest, xyz, redundant, position_only, near, tol):
    reach = [b for b in branches if b.reaches]
    fam = " (solutions form families; these are representatives)" if redundant and reach else ""
    inside = [b for b in reach if b.within_limits]
    blocked = [b for b in reach if not b.within_limits]

    def blocking(b):
        v = max(b.violations, key=lambda x: x.excess / (1.0 if chain.revolute[x.joint] else chain_lines(chain).scale))
        side = "lower" if v.side == "lower" else "upper"
        return (
            f"'{b.label}' needs {v.name} at {_fmt_joint(chain, v.joint, v.value)} "
            f"({side} limit {_fmt_joint(chain, v.joint, v.limit)})"
        )

    if reachable:
        s = f"Reachable{fam}: {len(inside)} of {len(reach)} branches reach the target within limits"
        s += f"; nearest to the current pose: {inside[0].label}." if near is not None else f", e.g. {inside[0].label}."
        if blocked:
            s += f" Blocked by limits: {blocking(blocked[0])}" + (
                f" and {len(blocked) - 1} more." if len(blocked) > 1 else "."
            )
        return s
    if closest is not None:
        if closest.position_error <= tol[0] and not position_only:
            miss = f"reaches the position but misses the orientation by {_fmt_angle(chain, closest.orientation_error)}"
        else:
            miss = f"misses by {_fmt_len(chain, closest.position_error)}"
            if not position_only:
                miss += f" and {_fmt_angle(chain, closest.orientation_error)}"
    else:
        miss = "was not computed"
    if blocked:
        return (
            f"Not reachable within limits{fam}: every branch that reaches the target breaks a limit — "
            f"{blocking(blocked[0])}. The closest approach within limits {miss}."
        )
    s = f"Out of reach{fam}: no branch reaches the target; the closest approach within limits {miss}."
    if nearest is not None:
        d = nearest - xyz
        dist = float(np.linalg.norm(d))
        u = d / dist if dist > 0 else d
        s += (
            f" The nearest reachable point is {_fmt_len(chain, dist)} away, towards "
            f"({u[0]:.2f}, {u[1]:.2f}, {u[2]:.2f})."
        )
    elif closest is not None and not position_only and closest.position_error > tol[0]:
        s += " The position itself can be reached; the orientation cannot be matched there."
    return s


# -- batch closed form ---------------------------------------------------------------------------


BATCH_CHUNK = 2048
"""Targets solved together in :func:`solve_batch` (small enough to stay in the CPU cache)."""


@dataclass(frozen=True)
class BatchResult:
    """Closed-form branches for many targets (no labels, no extra turns).

    Attributes
    ----------
    q : ndarray (N, B, n)
        Joint values, internal units; revolute values moved into their
        range by full turns where possible.
    exact : ndarray (N, B) of bool
        Every subproblem had an exact solution (the branch reaches the target).
    within_limits : ndarray (N, B) of bool
    """

    q: np.ndarray
    exact: np.ndarray
    within_limits: np.ndarray


def solve_batch(chain, xyz, R=None, near=None) -> BatchResult:
    """Closed-form branches for many targets at once, vectorised over targets.

    Parameters
    ----------
    chain : Chain
        Must have a closed-form structure (see :func:`structure_of`).
    xyz : array_like, shape (N, 3)
    R : array_like, shape (N, 3, 3), optional
        Needed for six-axis and table arms and for planar 3R.
    near : array_like, shape (n,), optional
        Values for joints the target leaves free.

    Returns
    -------
    BatchResult
    """
    st = _closed.recognise(chain)
    if st is None:
        raise PoserValueError(f"chain {chain.name!r} has no closed-form structure; use solve() per target")
    P = np.asarray(xyz, dtype=float)
    if P.ndim != 2 or P.shape[1] != 3:
        raise PoserValueError(f"xyz must have shape (N, 3), got shape {P.shape}")
    needs_R = st.kind in ("pieper6", "table4", "planar3")
    if R is None and needs_R:
        raise PoserValueError(f"R must be given (shape (N, 3, 3)) for a {st.name}")
    if R is not None:
        R = np.asarray(R, dtype=float)
        if R.shape != (P.shape[0], 3, 3):
            raise PoserValueError(f"R must have shape ({P.shape[0]}, 3, 3), got shape {R.shape}")
    ref = np.asarray(chain.home if near is None else near, dtype=float)
    N = P.shape[0]
    Rn = R if needs_R else None
    rev = chain.revolute
    lo, hi = chain.lower - 1e-9, chain.upper + 1e-9
    mid = 0.5 * (chain.lower + chain.upper)

    def place(Q):
        # move each revolute value by whole turns towards the middle of its range
        Q = np.where(rev, wrap(Q - mid) + mid, Q)
        return Q, np.all((Q >= lo) & (Q <= hi), axis=-1)

    single = _scalar.solve_single(chain, st, P[0], None if Rn is None else Rn[0], ref) if N == 1 else None
    if single is not None:
        Qs, inside = place(np.array([[q for q, _ in single]], dtype=float))
        return BatchResult(Qs, np.array([[e for _, e in single]], dtype=bool), inside)
    # cache-sized chunks, one after the other, each finished while in cache (threads do not pay here:
    # the GIL is held between the many small numpy calls)
    Qs = ex = inside = None
    for s in range(0, max(N, 1), BATCH_CHUNK):
        e = min(N, s + BATCH_CHUNK)
        Qc, exc = _closed.solve_closed(chain, st, P[s:e], None if Rn is None else Rn[s:e], ref)
        if Qs is None:
            B = Qc.shape[1]
            Qs = np.empty((N, B, chain.n))
            ex = np.empty((N, B), dtype=bool)
            inside = np.empty((N, B), dtype=bool)
        Qs[s:e], inside[s:e] = place(Qc)
        ex[s:e] = exc
    return BatchResult(Qs, ex, inside)
