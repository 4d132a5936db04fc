"""Reach study: does the arm reach each target of a job, with which branch, how close to its limits?

For a sequence of targets (a job's points in order) :func:`reach` says per target

* whether it is reached within the joint limits, and how many branches do so (every configuration and
  its turn variants, counted as ``poser ik`` counts them);
* the **chosen branch**: the one with the fewest joint moves from the previous target's chosen branch
  (the first target: from ``start``, default the arm's home), so a job's sequence keeps one branch where it
  can — the same branch :func:`poser.core.ik.solve` ranks first with ``near`` = the previous pose;
* its worst limit margin (:func:`poser.core.jacobian.limit_margins`) and its manipulability
  (:func:`poser.core.jacobian.manipulability`, in the task space's unit);
* for a target not reached: how far the closest approach within limits stays off, the nearest reachable
  point, and what blocks (the limits a reaching branch breaks, or no configuration reaching it at all).

A target that is not reached leaves the previous pose in place: the next target's moves count from the
last target that was reached.

Fast path and fallback (:func:`route`, the one place that chooses)
    An arm with a closed form (:func:`poser.core.ik.closed.plan`) has every target with a tool orientation
    (and every target of a position-only arm) solved at once by :func:`poser.core.ik.solve_batch`.  Each
    candidate is judged as ``solve`` judges it: it reaches when its tool pose lies within :func:`tolerance`
    of the target, it is within limits by the one limit verdict (:mod:`poser.core.ik.turns`), and its turn
    variants are counted exactly.  ``solve`` itself decides every other target: arms without a closed form,
    position-only targets of arms that also orient their tool (a family of orientations), targets that leave
    a joint free (a family), targets where two candidates coincide (a boundary or singular target) and
    every target the batch does not reach (the closest approach and the words come from it).  The verdict
    therefore agrees with ``poser ik`` target by target.

Free spin about tool Z (drilling, gluing, welding)
    Any rotation about the tool's own Z axis will do: the spin angle ψ (target orientation ``R @ Rz(ψ)``) is
    sampled every :data:`SPIN_STEP` (one batch), then refined :data:`SPIN_LEVELS` times on
    :data:`SPIN_REFINE` samples around the best one, each level spanning ± the step of the one before.  The
    best is the spin and branch with the fewest joint moves among those within limits; while none is
    within limits, the one nearest to being so (smallest limit excess, else smallest position miss).  The
    verdict for a target whose feasible spins form an interval narrower than the sampling step may miss it;
    the tests compare against a brute-force sweep.

Progress and cancel: ``progress(fraction) -> bool | None`` (:mod:`poser.core.progress`); returning False
raises :class:`poser.core.errors.Cancelled` and nothing is returned.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.fk import fk
from poser.core.jacobian import limit_margins, manipulability
from poser.core.progress import reporter
from poser.core.transforms import TWO_PI, rot_z, rotation_error

__all__ = ["Target", "Verdict", "ReachStudy", "reach", "route", "tolerance", "joint_distance", "within_limits_count",
           "spin_samples", "spin_resolution", "REACHED", "BLOCKED", "OUT_OF_REACH", "FAULT", "FAST", "SOLVE",
           "SPIN_STEP", "SPIN_LEVELS", "SPIN_REFINE", "CandidateTable", "evaluate_candidates"]

REACHED = "reached"
"""Some branch reaches the target within the joint limits."""
BLOCKED = "blocked by limits"
"""Branches reach the target, every one beyond a joint limit."""
OUT_OF_REACH = "out of reach"
"""No configuration reaches the target, whatever the limits."""
FAULT = "fault"
"""The solver failed on the target: no verdict (a defect in Poser, not an answer)."""

FAST = "closed form, batched"
SOLVE = "solve"

SPIN_STEP = math.radians(10.0)
"""Coarse spacing of the spin angle about tool Z (36 samples a turn)."""
SPIN_LEVELS = 3
"""Refinements of the spin angle (10° → 2° → 0.4° → 0.08° spacing)."""
SPIN_REFINE = 11
"""Samples per refinement, spanning ± the previous spacing."""

DUPLICATE = 1e-6
"""Two reaching candidates closer than this (rad, or ÷ the arm's size) may be one branch to ``solve``."""
CHUNK = 8192
"""Targets evaluated together on the fast path (bounds the memory of the candidate poses)."""


def tolerance(chain) -> tuple[float, float]:
    """(position in the length unit, orientation in rad) within which a pose reaches a target.

    The defaults of :func:`poser.core.ik.solve` (10⁻⁶ of the arm's size, 10⁻⁶ rad); the study passes them
    to ``solve`` explicitly, so both judge with the same figures.
    """
    return 1e-6 * chain.scale, 1e-6


def joint_distance(chain, Q, ref):
    """Joint-space distance of rows ``Q`` (..., n) from ``ref`` (n,): the measure ``solve`` ranks by.

    Returns
    -------
    rank : ndarray (...)
        √(Σ revolute Δ² [rad²] + (√(Σ prismatic Δ²) / arm size)²), dimensionless.
    turn, slide : ndarray (...)
        The revolute part (rad) and the prismatic part (length unit), kept apart for showing.
    """
    d = np.asarray(Q, float) - np.asarray(ref, float)
    rev = chain.revolute
    a = np.sqrt(np.sum(d[..., rev] ** 2, axis=-1))
    b = np.sqrt(np.sum(d[..., ~rev] ** 2, axis=-1))
    return np.hypot(a, b / chain.scale), a, b


def within_limits_count(result) -> int:
    """Branches of an :class:`~poser.core.ik.IKResult` reaching within limits, unlisted turn variants included
    (what ``poser ik`` says as "N of M branches")."""
    return sum(1 for b in result.branches if b.reaches and b.within_limits) + int(result.unlisted)


def spin_resolution() -> float:
    """The finest spacing (rad) of the spin search: :data:`SPIN_STEP` refined :data:`SPIN_LEVELS` times."""
    return SPIN_STEP * (2.0 / (SPIN_REFINE - 1)) ** SPIN_LEVELS


def spin_samples(step: float = SPIN_STEP) -> np.ndarray:
    """The coarse spin angles (rad): 0, step, … below a full turn."""
    k = int(round(TWO_PI / step))
    return np.arange(k) * (TWO_PI / k)


# -- targets and verdicts ------------------------------------------------------------------------------


@dataclass(frozen=True)
class Target:
    """One target of a job.

    Attributes
    ----------
    name : str
    xyz : ndarray (3,)
        World position of the tool point, arm length unit.
    R : ndarray (3, 3) or None
        World orientation of the tool; None for position only.
    free_spin : bool
        Any rotation about the tool's own Z axis will do (needs ``R``).
    line : int or None
        Where the target came from (a CSV line), for messages.
    """

    name: str
    xyz: np.ndarray
    R: np.ndarray | None = None
    free_spin: bool = False
    line: int | None = None

    def __post_init__(self):
        xyz = np.array(self.xyz, float)
        if xyz.shape != (3,) or not np.all(np.isfinite(xyz)):
            raise PoserValueError(f"target {self.name!r}: xyz must be 3 finite numbers, got {self.xyz!r}")
        xyz.setflags(write=False)
        object.__setattr__(self, "xyz", xyz)
        if self.R is not None:
            R = np.array(self.R, float)
            if R.shape != (3, 3) or not np.all(np.isfinite(R)):
                raise PoserValueError(f"target {self.name!r}: R must be a finite 3 x 3 rotation, got shape {R.shape}")
            if np.abs(R.T @ R - np.eye(3)).max() > 1e-6 or np.linalg.det(R) < 0:
                raise PoserValueError(f"target {self.name!r}: R must be a rotation matrix (orthonormal, det +1)")
            R.setflags(write=False)
            object.__setattr__(self, "R", R)
        if self.free_spin and self.R is None:
            raise PoserValueError(f"target {self.name!r}: free_spin needs a tool orientation (R), got none")


@dataclass(frozen=True)
class Verdict:
    """What the study says of one target (internal units: rad, the arm's length unit).

    Attributes
    ----------
    target : Target
    status : str
        :data:`REACHED`, :data:`BLOCKED`, :data:`OUT_OF_REACH` or :data:`FAULT`.
    branches : int
        Branches reaching within limits (turn variants included).
    q : ndarray (n,) or None
        The chosen branch (reached targets).
    configuration : str or None
        Its configuration words (``solve``'s), without turn words.
    turns : tuple of int or None
        Its extra turns per joint.
    family : Family or None
        When the chosen branch stands for a family of solutions (``solve``'s).
    spin : float or None
        The chosen spin about tool Z (rad) of a free-spin target.
    margin : float or None
        Worst limit margin of the chosen branch, internal units of ``margin_joint``.
    margin_joint : int or None
    margin_fraction : float or None
        The same margin as a fraction of that joint's range (0 at a limit, 0.5 mid-range).
    manipulability : float or None
        Of the chosen branch, in the task space's unit (``report.manipulability_unit``).
    move : (float, float) or None
        Joint moves from the previous pose: (revolute part rad, prismatic part length unit).
    changed : bool
        The chosen configuration differs from the previous reached target's.
    miss : (float, float) or None
        Not reached: how far the closest approach within limits is off (length unit, rad).
    nearest_point : ndarray (3,) or None
        Not reached: the nearest reachable point (``solve``'s), when the position is missed.
    violations : tuple of Violation
        Blocked: the limits the nearest reaching branch breaks.
    blocked_label : str or None
        Blocked: that branch's words.
    path : str
        :data:`FAST` or :data:`SOLVE`: which decided.
    fault : str or None
    """

    target: Target
    status: str
    branches: int = 0
    q: np.ndarray | None = None
    configuration: str | None = None
    turns: tuple | None = None
    family: object = None
    spin: float | None = None
    margin: float | None = None
    margin_joint: int | None = None
    margin_fraction: float | None = None
    manipulability: float | None = None
    move: tuple | None = None
    changed: bool = False
    miss: tuple | None = None
    nearest_point: np.ndarray | None = None
    violations: tuple = ()
    blocked_label: str | None = None
    path: str = SOLVE
    fault: str | None = None

    @property
    def reachable(self) -> bool:
        return self.status == REACHED


@dataclass(frozen=True)
class ReachStudy:
    """The verdict of every target, in the order given.

    Attributes
    ----------
    verdicts : tuple of Verdict
    start : ndarray (n,)
        The pose the sequence starts from (internal units).
    tolerance : (float, float)
        Position (length unit) and orientation (rad) tolerance of "reaches".
    """

    verdicts: tuple
    start: np.ndarray
    tolerance: tuple

    @property
    def reached(self) -> int:
        return sum(v.reachable for v in self.verdicts)

    @property
    def faults(self) -> int:
        return sum(v.status == FAULT for v in self.verdicts)


# -- the one choice of path ----------------------------------------------------------------------------


def route(chain, target: Target) -> str:
    """:data:`FAST` when the batched closed form may decide ``target``, else :data:`SOLVE`.

    The fast path still hands a target to ``solve`` when its candidates show a family or a coincidence,
    or when none reaches within limits (:meth:`CandidateTable.fast`).
    """
    from poser.core.ik import closed

    plan = closed.plan(chain)
    if plan is None:
        return SOLVE
    if target.R is None and plan.structure.kind != "position":
        return SOLVE
    return FAST


# -- the fast path: candidates of many targets, judged as solve judges them ---------------------------


def _wide(chain):
    from poser.core.ik import turns

    return np.flatnonzero(turns._wide(chain))


def _limits_with_tolerance(chain):
    from poser.core.ik import turns

    tol = turns.tolerances(chain)
    return chain.lower - tol, chain.upper + tol


@dataclass
class CandidateTable:
    """The closed-form candidates of M targets, judged (arrays; B = the structure's branch count).

    Attributes
    ----------
    Q : ndarray (M, B, n)
        Placed joint values (wide joints in (-π, π]).
    reaches : ndarray (M, B) bool
        Tool pose within :func:`tolerance` of the target.
    inside : ndarray (M, B) bool
        Reaches and within limits (some turn of each wide joint fits).
    free : ndarray (M, B) bool
        Reaches and leaves a joint free (a family: ``solve`` decides).
    duplicate : ndarray (M,) bool
        Two reaching candidates coincide (``solve`` may merge them: it decides).
    variants : ndarray (M, B) int
        Turn variants within limits of each candidate (0 when not inside).
    kmin, kmax : ndarray (M, B, w) int
        The fitting turns of each wide joint.
    excess : ndarray (M, B)
        Largest limit excess of a narrow joint as a fraction of its range (≤ 0 within limits).
    miss : ndarray (M, B)
        Position error ÷ the arm's size.
    """

    Q: np.ndarray
    reaches: np.ndarray
    inside: np.ndarray
    free: np.ndarray
    duplicate: np.ndarray
    variants: np.ndarray
    kmin: np.ndarray
    kmax: np.ndarray
    excess: np.ndarray
    miss: np.ndarray

    def fast(self, i) -> bool:
        """The batch decides target ``i`` (some candidate inside, no family, no coincidence)."""
        return self.lists()[0][i]

    def lists(self):
        """Per target, as plain lists (made once): fast?, total variants, and the candidates inside limits as
        (values, kmin, kmax) lists — what the sequential choice reads."""
        cached = getattr(self, "_lists", None)
        if cached is None:
            fast = (self.inside.any(axis=1) & ~self.free.any(axis=1) & ~self.duplicate).tolist()
            total = self.variants.sum(axis=1).tolist()
            rows, cols = np.nonzero(self.inside)
            entries = list(zip(self.Q[rows, cols].tolist(), self.kmin[rows, cols].tolist(),
                               self.kmax[rows, cols].tolist()))
            ends = np.cumsum(self.inside.sum(axis=1)).tolist()
            cand, s = [], 0
            for e in ends:
                cand.append(entries[s:e])
                s = e
            cached = self._lists = (fast, total, cand)
        return cached


def evaluate_candidates(chain, P, R, tol=None, near=None) -> CandidateTable:
    """Solve targets ``P`` (M, 3) with orientations ``R`` (M, 3, 3) or None by the batched closed form and judge
    every candidate as :func:`poser.core.ik.solve` does.

    Parameters
    ----------
    chain : Chain
        With a closed form (else :class:`PoserValueError` from ``solve_batch``).
    P : ndarray (M, 3)
    R : ndarray (M, 3, 3) or None
        None only for a position-only structure.
    tol : (float, float), optional
        Default :func:`tolerance`.
    near : ndarray (n,), optional
        Values of joints a target leaves free (default home; such targets go to ``solve`` anyway).
    """
    from poser.core.ik import solve_batch

    tol = tolerance(chain) if tol is None else tol
    P = np.asarray(P, float)
    M, n = len(P), chain.n
    b = solve_batch(chain, P, R, near)
    Q = b.q
    B = Q.shape[1]
    T = fk(chain, Q.reshape(-1, n)).reshape(M, B, 4, 4)
    pe = np.linalg.norm(T[..., :3, 3] - P[:, None, :], axis=-1)
    reaches = pe <= tol[0]
    if R is not None:
        oe = rotation_error(T[..., :3, :3], np.asarray(R, float)[:, None])
        reaches &= oe <= tol[1]
    inside = reaches & b.within_limits
    free = reaches & b.free.any(axis=2)
    lo, hi = _limits_with_tolerance(chain)
    span = chain.upper - chain.lower
    wide = _wide(chain)
    narrow = np.setdiff1d(np.arange(n), wide)
    if narrow.size:
        over = np.maximum(Q[..., narrow] - hi[narrow], lo[narrow] - Q[..., narrow]) / span[narrow]
        excess = over.max(axis=-1)
    else:
        excess = np.zeros((M, B))
    v = Q[..., wide]
    lw, hw = lo[wide], hi[wide]
    kmin = np.ceil((lw - v) / TWO_PI)
    kmax = np.floor((hw - v) / TWO_PI)
    # the sums tested as they will be made (as poser.core.ik.turns counts the fitting turns)
    kmin += v + kmin * TWO_PI < lw
    kmin -= v + (kmin - 1) * TWO_PI >= lw
    kmax -= v + kmax * TWO_PI > hw
    kmax += v + (kmax + 1) * TWO_PI <= hw
    kmin, kmax = kmin.astype(np.int64), kmax.astype(np.int64)
    variants = np.where(inside, np.prod(np.maximum(kmax - kmin + 1, 0), axis=-1), 0)
    duplicate = np.zeros(M, bool)
    if B > 1:  # every pair of candidates, joint by joint (a turn's difference wrapped)
        i0, i1 = np.triu_indices(B, 1)
        close = reaches[:, i0] & reaches[:, i1]
        for j in range(n):
            d = np.abs(Q[:, i0, j] - Q[:, i1, j])
            if chain.revolute[j]:
                np.remainder(d, TWO_PI, out=d)
                close &= (d < DUPLICATE) | (d > TWO_PI - DUPLICATE)
            else:
                close &= d < DUPLICATE * chain.scale
        duplicate = close.any(axis=1)
    return CandidateTable(Q, reaches, inside, free, duplicate, variants, kmin, kmax, excess, pe / chain.scale)


class _Chooser:
    """The branch with the fewest joint moves from a reference, among a table's candidates inside limits.

    Works in plain floats per target (a job is a sequence: each choice starts where the last ended); the
    wide joints take the turn nearest the reference within their fitting turns, as ``solve``'s listing does.
    """

    def __init__(self, chain):
        self.rev = np.flatnonzero(chain.revolute).tolist()
        self.slides = np.flatnonzero(~chain.revolute).tolist()
        self.all_revolute = not self.slides
        self.scale = float(chain.scale)
        self.wide = _wide(chain).tolist()
        self.n = chain.n
        self.zero = (0,) * chain.n

    def best(self, cands, ref):
        """The best of ``cands`` [(values, kmin, kmax) lists]: (index, its values with turns, its turns, distance).

        Ranked by (distance rounded to 12 decimals, extra turns, order); the rounding is worked out only for
        distances within 10⁻¹² of the best so far (farther apart, rounding cannot change their order)."""
        best = None
        bd = math.inf
        wide, rev, scale, slides = self.wide, self.rev, self.scale, self.slides
        for c, (row, a_s, b_s) in enumerate(cands):
            q = row
            t = self.zero
            nt = 0
            if wide:
                for w, i in enumerate(wide):
                    # |v + 2πk − r| is convex in k: the nearest turn within [a, b] is the unconstrained one, clipped
                    v = row[i]
                    k = round((ref[i] - v) / TWO_PI)
                    k = a_s[w] if k < a_s[w] else b_s[w] if k > b_s[w] else k
                    if k:
                        if t is self.zero:
                            q, t = list(row), list(t)
                        t[i] = k
                        q[i] = v + k * TWO_PI
                        nt += abs(k)
            if self.all_revolute:
                dist = math.dist(q, ref)
            else:
                dist = math.hypot(math.dist([q[i] for i in rev], [ref[i] for i in rev]),
                                  math.dist([q[i] for i in slides], [ref[i] for i in slides]) / scale)
            if dist < bd - 1e-12:
                better = True
            elif dist > bd + 1e-12:
                better = False
            else:
                better = (round(dist, 12), nt, c) < (round(bd, 12), best[0], best[1])
            if better:
                bd = dist
                best = (nt, c, q, t)
        nt, c, q, t = best
        return c, list(q), tuple(t), bd


# -- the study -----------------------------------------------------------------------------------------


def reach(chain, targets, start=None, progress=None) -> ReachStudy:
    """Check a sequence of targets against the arm (see the module docstring).

    Parameters
    ----------
    chain : Chain
    targets : sequence of Target
    start : array_like (n,), optional
        The pose before the first target (internal units); default the arm's home.
    progress : callable, optional
        ``progress(fraction) -> bool | None``; False cancels (:class:`poser.core.errors.Cancelled`).

    Returns
    -------
    ReachStudy
    """
    targets = tuple(targets)
    for t in targets:
        if not isinstance(t, Target):
            raise PoserValueError(f"targets must be Target objects, got {type(t).__name__}")
    ref = np.array(chain.home if start is None else start, float)
    if ref.shape != (chain.n,) or not np.all(np.isfinite(ref)):
        raise PoserValueError(f"start must be {chain.n} finite joint values, got shape {ref.shape}")
    report = reporter(progress)
    report(0.0)
    tol = tolerance(chain)
    study = _Study(chain, tol)
    fast = [k for k, t in enumerate(targets) if route(chain, t) == FAST]
    study.prepare([targets[k] for k in fast], fast, report.part(0.0, 0.3))
    walk = report.part(0.3, 0.7)
    verdicts, before = [], []
    prev = ref.tolist()
    weight = [SPIN_REFINE * (SPIN_LEVELS + 3) if t.free_spin else 1 for t in targets]
    total, done = float(sum(weight)) or 1.0, 0
    for k, t in enumerate(targets):
        v = study.one(k, t, prev)
        verdicts.append(v)
        before.append(prev)
        if v.reachable:
            prev = list(v.q)
        done += weight[k]
        if k % 64 == 63 or t.free_spin or v.path == SOLVE:
            walk(done / total)
    verdicts = study.finish(verdicts, before)
    report(1.0)
    ro = ref.copy()
    ro.setflags(write=False)
    return ReachStudy(tuple(verdicts), ro, tol)


def _with(v: Verdict, **changes) -> Verdict:
    """``v`` with ``changes`` (``dataclasses.replace`` without its per-call checks: fields only)."""
    new = object.__new__(Verdict)
    new.__dict__.update(v.__dict__)
    new.__dict__.update(changes)
    return new


class _Study:
    """The state of one study: the fast path's table, the chooser and the calls to ``solve``."""

    def __init__(self, chain, tol):
        from poser.core.ik import closed

        self.chain = chain
        self.tol = tol
        self.plan = closed.plan(chain)
        self.chooser = _Chooser(chain)
        self.rows = {}  # target index -> (table, row offset, samples ψ or None)

    def prepare(self, targets, index, report):
        """Evaluate every fast-path target at once (free-spin targets at every coarse spin), in two groups:
        targets with a tool orientation and position-only targets (of a position-only structure)."""
        if not targets:
            report(1.0)
            return
        psi = spin_samples()
        groups = {True: [], False: []}
        for k, t in zip(index, targets):
            groups[t.R is not None].append((k, t))
        total = sum(len(psi) if t.free_spin else 1 for t in targets)
        done = 0
        for with_r, members in groups.items():
            if not members:
                continue
            P, R, owner = [], [], []
            for k, t in members:
                m = len(psi) if t.free_spin else 1
                P.append(np.broadcast_to(t.xyz, (m, 3)) if m > 1 else t.xyz[None])
                if with_r:
                    R.append(t.R @ rot_z(psi) if t.free_spin else t.R[None])
                owner.append((k, m, psi if t.free_spin else None))
            P = np.concatenate(P)
            R = np.concatenate(R) if with_r else None
            parts = []
            for s in range(0, len(P), CHUNK):
                parts.append(evaluate_candidates(self.chain, P[s:s + CHUNK], None if R is None else R[s:s + CHUNK],
                                                 self.tol))
                done += min(CHUNK, len(P) - s)
                report(done / total)
            table = _concat(parts)
            off = 0
            for k, m, psi_k in owner:
                self.rows[k] = (table, off, psi_k)
                off += m

    # one target ---------------------------------------------------------------------------------

    def one(self, k, t, prev) -> Verdict:
        if k in self.rows:
            table, off, psi = self.rows[k]
            if t.free_spin:
                v, psi_b, key = self._spin_fast(t, table, off, psi, prev)
                if v is not None:
                    return v
                if key[0] in (1, 2):  # no spin reaches within limits: solve at the nearest one, for the words
                    R = t.R @ rot_z(psi_b)
                    res = self._solve(t, R, prev)
                    return self._solve_verdict(t, R, prev, psi_b, res)
            elif table.fast(off):
                return self._fast_verdict(t, table, off, prev)
        if t.free_spin:
            return self._spin_solve(t, prev)
        return self._solve_verdict(t, t.R, prev, None)

    def _fast_verdict(self, t, table, i, prev, spin=None):
        _, total, cand = table.lists()
        c, q, turns_, _ = self.chooser.best(cand[i], prev)
        return Verdict(t, REACHED, int(total[i]), q, None, turns_, spin=spin, path=FAST)

    def _solve(self, t, R, prev, closest=True):
        from poser.core.ik import solve

        return solve(self.chain, t.xyz, R, np.asarray(prev, float), position_tolerance=self.tol[0],
                     orientation_tolerance=self.tol[1], closest=closest)

    def _solve_verdict(self, t, R, prev, spin, result=None):
        res = self._solve(t, R, prev) if result is None else result
        if res.status != "solved":
            return Verdict(t, FAULT, fault=res.fault, spin=spin)
        if res.reachable:
            b = res.branches[0]
            return Verdict(t, REACHED, within_limits_count(res), b.q, b.configuration, tuple(b.turns), b.family,
                           spin=spin)
        blocked = [b for b in res.branches if b.reaches and not b.within_limits]
        c = res.closest
        miss = None if c is None else (float(c.position_error), float(c.orientation_error))
        npnt = None if res.nearest_point is None else np.array(res.nearest_point)
        if blocked:
            return Verdict(t, BLOCKED, 0, miss=miss, nearest_point=npnt, violations=tuple(blocked[0].violations),
                           blocked_label=blocked[0].label, spin=spin)
        return Verdict(t, OUT_OF_REACH, 0, miss=miss, nearest_point=npnt, spin=spin)

    # free spin ----------------------------------------------------------------------------------

    def _score_fast(self, table, rows, prev):
        """Per row: (key, candidate choice) — key (0, distance) within limits, (1, excess), (2, miss)."""
        out = []
        for i in rows:
            if table.free[i].any() or table.duplicate[i]:
                out.append(((3, 0.0), None))
                continue
            cand = table.lists()[2][i]
            if cand:
                c, q, turns_, dist = self.chooser.best(cand, prev)
                out.append(((0, dist), (q, turns_)))
            elif table.reaches[i].any():
                out.append(((1, float(table.excess[i][table.reaches[i]].min())), None))
            else:
                out.append(((2, float(table.miss[i].min())), None))
        return out

    def _spin_search(self, first, evaluate):
        """Coarse samples ``first`` = [(ψ, key, payload)], then refinements with ``evaluate(ψs)``."""
        best = min(first, key=lambda x: (x[1], x[0]))
        step = SPIN_STEP
        for _ in range(SPIN_LEVELS):
            psis = best[0] + np.linspace(-step, step, SPIN_REFINE)
            found = evaluate(psis)
            cand = min(found, key=lambda x: (x[1], x[0]))
            if (cand[1], cand[0]) < (best[1], best[0]):
                best = cand
            step = step * 2.0 / (SPIN_REFINE - 1)
        return best

    def _spin_fast(self, t, table, off, psi, prev):
        scored = self._score_fast(table, range(off, off + len(psi)), prev)
        first = [(float(p), key, (pay, table, off + i)) for i, (p, (key, pay)) in enumerate(zip(psi, scored))]

        def evaluate(psis):
            psis = np.mod(psis, TWO_PI)
            tb = evaluate_candidates(self.chain, np.broadcast_to(t.xyz, (len(psis), 3)), t.R @ rot_z(psis), self.tol)
            sc = self._score_fast(tb, range(len(psis)), prev)
            return [(float(p), key, (pay, tb, i)) for i, (p, (key, pay)) in enumerate(zip(psis, sc))]

        best = self._spin_search(first, evaluate)
        psi_b, key, (pay, tb, i) = best
        if key[0] == 0:
            return self._fast_verdict(t, tb, i, prev, spin=psi_b), psi_b, key
        return None, psi_b, key  # solve decides (the words at the nearest spin, or every sample a family)

    def _spin_solve(self, t, prev):
        def key_of(res):
            if res.status != "solved":
                return (4, 0.0)
            if res.reachable:
                b = res.branches[0]
                return (0, float(joint_distance(self.chain, b.q, prev)[0]))
            blocked = [b for b in res.branches if b.reaches and not b.within_limits]
            if blocked:
                span = self.chain.upper - self.chain.lower
                return (1, min(max(v.excess / span[v.joint] for v in b.violations) for b in blocked))
            return (2, 0.0)

        def evaluate(psis):
            out = []
            for p in np.mod(psis, TWO_PI):
                res = self._solve(t, t.R @ rot_z(p), prev, closest=False)
                out.append((float(p), key_of(res), res))
            return out

        best = self._spin_search(evaluate(spin_samples()), evaluate)
        psi_b, key, res = best
        R = t.R @ rot_z(psi_b)
        if not res.reachable:
            res = self._solve(t, R, prev)  # with the closest approach, for the words
        return self._solve_verdict(t, R, prev, psi_b, res)

    # finishing ----------------------------------------------------------------------------------

    def finish(self, verdicts, before):
        """Words, margins, manipulability and moves of the chosen branches, in one batch each; ``before[k]``
        is the pose target ``k`` started from."""
        chain = self.chain
        got = [k for k, v in enumerate(verdicts) if v.q is not None]
        if not got:
            return verdicts
        Q = np.array([verdicts[k].q for k in got], float)
        Q.setflags(write=False)
        _, ma, mb = joint_distance(chain, Q, np.array([before[k] for k in got], float))
        m, frac = limit_margins(chain, Q)
        worst = np.argmin(frac, axis=1)
        man = np.atleast_1d(manipulability(chain, Q))
        need = [j for j, k in enumerate(got) if verdicts[k].configuration is None]
        words = {}
        if need:
            from poser.core.ik import labels, turns

            Qp = turns.place(chain, Q[need])
            for j, w in zip(need, labels.describe(chain, Qp, chain.frames(Qp))):
                words[j] = w or "single configuration"
        out = list(verdicts)
        prev_config = None
        for j, k in enumerate(got):
            v = out[k]
            config = words.get(j, v.configuration)
            w = int(worst[j])
            changed = prev_config is not None and config != prev_config
            out[k] = _with(v, q=Q[j], configuration=config, margin=float(m[j, w]), margin_joint=w,
                           margin_fraction=float(frac[j, w]), manipulability=float(man[j]),
                           move=(float(ma[j]), float(mb[j])), changed=changed)
            prev_config = config
        return out


def _concat(tables):
    if len(tables) == 1:
        return tables[0]
    fields = CandidateTable.__dataclass_fields__
    return CandidateTable(**{f: np.concatenate([getattr(t, f) for t in tables]) for f in fields})
