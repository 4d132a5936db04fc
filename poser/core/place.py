"""Where to mount the arm: base positions (and yaw) on a grid, scored by the targets they reach.

A **placement** puts the arm's base frame at world ``(x, y, z)`` with the rotation of roll, pitch and yaw
about fixed X, Y, Z, where roll and pitch are the arm's own (its ``[base]`` rpy: a ceiling or wall mount stays
one) and yaw is the grid's.  The arm with base ``B`` reaches a world pose ``T`` exactly when the arm as loaded
(base ``B0``) reaches ``B0 · B⁻¹ · T``, so every placement is judged on the one chain, its closed form and its
kernels, with moved targets.

Score of a placement, compared in this order (larger is better):

1. the number of targets reached within limits;
2. the smallest limit margin over the targets reached, as a fraction of the joint's range
   (:func:`poser.core.jacobian.limit_margins`; each target takes its branch with the largest worst margin,
   a joint of more than a turn at the turn nearest the middle of its range), compared in steps of
   :data:`MARGIN_STEP` so that the next figure decides between practically equal ones;
3. the smallest manipulability over those branches (:func:`poser.core.jacobian.manipulability`, the task
   space's unit) — worked out for the placements still tied for the best :data:`TOP` after 1 and 2.

Ties left after that go to the first placement of the grid (x fastest, then y, z, yaw).

How each target is judged
    Arms with a closed form (:func:`poser.core.reach.route`) solve the targets of many placements in one
    batch (:func:`poser.core.reach.evaluate_candidates`, the reach study's fast path, judged as
    :func:`poser.core.ik.solve` judges).  A target the batch does not reach within limits counts as not
    reached (``solve`` is not asked why: that is the reach study's job on the chosen placement).  Targets whose
    candidates show a family or coincide, position-only targets of arms that also orient their tool, and every
    target of an arm without a closed form are solved by ``solve`` one by one — much slower (milliseconds
    each).  Free-spin targets take the best of the reach study's coarse spin samples (every 10°); the reach
    study refines the spin.  ``poser place`` runs :func:`poser.core.reach.reach` on the chosen placement.

Chunking and the same figures everywhere
    Placements are evaluated in fixed groups aligned on the grid index (:func:`group_size` placements whose
    rows fill one batch), and every chunk of work is a whole number of groups, so each placement's figures
    come from the same arithmetic whether the search runs in this process, over processes (default: one per
    core for large searches, :mod:`concurrent.futures`) or over a ``dask.distributed`` cluster
    (``scheduler=``); chunks are merged by grid index.  Progress and cancel as in :mod:`poser.core.progress`:
    a cancelled search raises :class:`poser.core.errors.Cancelled` and returns nothing.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.jacobian import limit_margins, manipulability
from poser.core.progress import reporter
from poser.core.transforms import TWO_PI, from_xyz_rpy, invert, matrix_to_rpy, rot_z

__all__ = ["Grid", "grid", "axis_values", "Placement", "Placed", "place", "judge", "group_size", "MARGIN_STEP",
           "TOP", "PARALLEL_FROM", "MAX_PLACEMENTS", "ROWS_PER_BATCH", "MAX_GROUP"]

MARGIN_STEP = 1e-3
"""Margins (fractions of a joint's range) are compared in steps of 0.1 % of the range."""
TOP = 5
"""Best placements reported by default."""
PARALLEL_FROM = 200_000
"""Target evaluations (placements × target rows) from which the work is spread over processes by default."""
MAX_PLACEMENTS = 10_000_000
"""Largest grid searched."""
ROWS_PER_BATCH = 8192
"""Target rows (placements × rows per placement) evaluated in one batch."""
MAX_GROUP = 256
"""… by at most this many placements (progress and cancel come between batches)."""


# -- the grid ------------------------------------------------------------------------------------------


def axis_values(lo: float, hi: float, step: float, what: str) -> np.ndarray:
    """Values from ``lo`` to ``hi`` (both included) at most ``step`` apart, evenly spaced.

    Raises
    ------
    PoserValueError
        Naming ``what``, for a range that is not finite or runs backwards, or a step that is not positive.
    """
    lo, hi, step = float(lo), float(hi), float(step)
    if not (math.isfinite(lo) and math.isfinite(hi)):
        raise PoserValueError(f"{what} range must be finite, got {lo}..{hi}")
    if hi < lo:
        raise PoserValueError(f"{what} range must run from low to high, got {lo}..{hi}")
    if hi == lo:
        return np.array([lo])
    if not (math.isfinite(step) and step > 0):
        raise PoserValueError(f"{what} step must be a positive number, got {step}")
    count = int(math.ceil((hi - lo) / step - 1e-9)) + 1
    if count > 100_000:
        raise PoserValueError(f"{what} range {lo}..{hi} at step {step} must give at most 100000 values, got {count}")
    return np.linspace(lo, hi, count)


@dataclass(frozen=True)
class Grid:
    """Base placements: every combination of ``x``, ``y``, ``z`` (length unit) and ``yaw`` (rad).

    ``roll`` and ``pitch`` (rad) are the arm's own mount, kept.  Placement ``i`` has x fastest:
    ``i = ix + nx·(iy + ny·(iz + nz·iyaw))``.
    """

    x: np.ndarray
    y: np.ndarray
    z: np.ndarray
    yaw: np.ndarray
    roll: float
    pitch: float

    @property
    def shape(self) -> tuple:
        """(n_yaw, n_z, n_y, n_x)."""
        return (len(self.yaw), len(self.z), len(self.y), len(self.x))

    @property
    def size(self) -> int:
        return int(np.prod(self.shape))

    def placement(self, i: int):
        """(xyz (3,), yaw rad) of placement ``i``."""
        iw, iz, iy, ix = np.unravel_index(int(i), self.shape)
        return np.array([self.x[ix], self.y[iy], self.z[iz]]), float(self.yaw[iw])

    def bases(self, index=None) -> np.ndarray:
        """Base transforms (k, 4, 4) of placements ``index`` (default all)."""
        idx = np.arange(self.size) if index is None else np.asarray(index, int)
        iw, iz, iy, ix = np.unravel_index(idx, self.shape)
        xyz = np.stack([self.x[ix], self.y[iy], self.z[iz]], axis=-1)
        rpy = np.stack([np.full(len(idx), self.roll), np.full(len(idx), self.pitch), self.yaw[iw]], axis=-1)
        return from_xyz_rpy(xyz, rpy)


def grid(chain, x, y, z=None, yaw=None, step=None, yaw_step=None, base_rpy=None) -> Grid:
    """The placement grid.

    Parameters
    ----------
    chain : Chain
    x, y : (float, float)
        Ranges of the base position (length unit), both ends included.
    z : (float, float), optional
        Default: the arm's present base height.
    yaw : (float, float), optional
        Range of the base yaw about world Z (rad).  Default: the arm's present yaw.
    step : float, optional
        Largest spacing of x, y, z (length unit).  Default: the widest range / 20.
    yaw_step : float, optional
        Largest spacing of yaw (rad).  Default 15°.
    base_rpy : (float, float, float), optional
        The arm's mount roll, pitch, yaw as written in its file (rad): roll and pitch are kept and yaw is the
        default yaw.  Default: read from ``chain.base``.

    Returns
    -------
    Grid
    """
    rpy = matrix_to_rpy(chain.base[:3, :3]) if base_rpy is None else np.asarray(base_rpy, float)
    if rpy.shape != (3,) or not np.all(np.isfinite(rpy)):
        raise PoserValueError(f"base_rpy must be 3 finite angles (rad), got {base_rpy!r}")
    z = (float(chain.base[2, 3]),) * 2 if z is None else z
    yaw = (float(rpy[2]),) * 2 if yaw is None else yaw
    for name, r in (("x", x), ("y", y), ("z", z), ("yaw", yaw)):
        if len(r) != 2:
            raise PoserValueError(f"{name} must be a (low, high) pair, got {r!r}")
    spans = [float(r[1]) - float(r[0]) for r in (x, y, z)]
    if step is None:
        widest = max(spans)
        step = widest / 20.0 if widest > 0 else 1.0
    ys = math.radians(15.0) if yaw_step is None else yaw_step
    g = Grid(axis_values(*x, step, "x"), axis_values(*y, step, "y"), axis_values(*z, step, "z"),
             axis_values(*yaw, ys, "yaw"), float(rpy[0]), float(rpy[1]))
    if g.size > MAX_PLACEMENTS:
        raise PoserValueError(f"the grid must hold at most {MAX_PLACEMENTS} placements, got {g.size} "
                              "(use a larger step or smaller ranges)")
    return g


# -- results -------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Placed:
    """One placement with its score.

    Attributes
    ----------
    index : int
        In the grid.
    xyz : ndarray (3,)
        Base position (length unit).
    yaw : float
        Base yaw (rad).
    base : ndarray (4, 4)
        The base transform (world → base).
    reached : int
        Targets reached within limits.
    margin : float
        Smallest limit margin over the targets reached (fraction of the joint's range); -inf when none is.
    margin_target : int or None
        The target (index into the targets given) where the margin is smallest ...
    margin_joint : int or None
        ... and the joint.
    manipulability : float
        Smallest over the targets reached (task space's unit); nan when none is.
    """

    index: int
    xyz: np.ndarray
    yaw: float
    base: np.ndarray
    reached: int
    margin: float
    margin_target: int | None
    margin_joint: int | None
    manipulability: float


@dataclass(frozen=True)
class Placement:
    """The result of :func:`place`.

    Attributes
    ----------
    grid : Grid
    reached : ndarray (P,) int
        Targets reached from each placement (grid order).
    margin : ndarray (P,)
        Smallest limit margin (fraction of the range) over them; -inf where none is reached.
    best : tuple of Placed
        The best placements, best first (at most ``top``).
    targets : int
        Targets judged.
    """

    grid: Grid
    reached: np.ndarray
    margin: np.ndarray
    best: tuple
    targets: int

    def coverage(self) -> np.ndarray:
        """Targets reached per base position (ny, nx): the best over the heights and yaws searched."""
        return self.reached.reshape(self.grid.shape).max(axis=(0, 1))


# -- the targets as rows ---------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Rows:
    """The targets as the rows one placement evaluates (free-spin targets: one row per coarse spin).

    ``groups``: [(with_r, row indices)] evaluated separately; ``owner`` (rows,) the target of each row (rows of
    a target are contiguous within its group); ``slow`` the targets ``solve`` decides at every placement.
    """

    P: np.ndarray
    R: np.ndarray
    owner: np.ndarray
    groups: tuple
    slow: tuple
    targets: tuple
    count: int


def _rows(chain, targets) -> _Rows:
    from poser.core import reach as rc

    psi = rc.spin_samples()
    P, R, owner, slow = [], [], [], []
    by = {True: [], False: []}
    for i, t in enumerate(targets):
        if rc.route(chain, t) != rc.FAST:
            slow.append(i)
            continue
        m = len(psi) if t.free_spin else 1
        start = len(owner)
        P.append(np.broadcast_to(t.xyz, (m, 3)))
        Rt = np.eye(3)[None] if t.R is None else (t.R @ rot_z(psi) if t.free_spin else t.R[None])
        R.append(Rt)
        owner.extend([i] * m)
        by[t.R is not None].extend(range(start, start + m))
    P = np.concatenate(P) if P else np.zeros((0, 3))
    R = np.concatenate(R) if R else np.zeros((0, 3, 3))
    groups = tuple((w, np.array(ix, np.int64)) for w, ix in by.items() if ix)
    return _Rows(P, R, np.array(owner, np.int64), groups, tuple(slow), tuple(targets), len(targets))


def group_size(rows: int) -> int:
    """Placements evaluated together: as many as fill :data:`ROWS_PER_BATCH` rows (1 … :data:`MAX_GROUP`)."""
    return min(MAX_GROUP, max(1, ROWS_PER_BATCH // max(int(rows), 1)))


def _moved(bases, B0, P, R):
    """Targets (rows) seen by the arm as loaded from each placement: ``B0 · B⁻¹ · T`` (k, rows, 3), (k, rows, 3, 3).

    Written out element by element (no matrix library call), so a row's figures do not depend on how many
    rows are moved together."""
    M = B0 @ invert(bases)  # (k, 4, 4): one product per placement
    Rm, pm = M[:, :3, :3], M[:, :3, 3]
    Pp = np.empty((len(M), len(P), 3))
    Rp = np.empty((len(M), len(P), 3, 3))
    for a in range(3):
        Pp[:, :, a] = pm[:, None, a] + sum(Rm[:, None, a, b] * P[None, :, b] for b in range(3))
        for c in range(3):
            Rp[:, :, a, c] = sum(Rm[:, None, a, b] * R[None, :, b, c] for b in range(3))
    return Pp, Rp


def _wide_mid(chain, Q, kmin, kmax, wide):
    """Candidates ``Q`` (..., n) with each wide joint at the fitting turn nearest the middle of its range (the
    turn with the largest margin)."""
    Q = Q.copy()
    if len(wide):
        mid = 0.5 * (chain.lower[wide] + chain.upper[wide])
        v = Q[..., wide]
        k = np.clip(np.round((mid - v) / TWO_PI), kmin, kmax)
        Q[..., wide] = v + k * TWO_PI
    return Q


def judge(chain, rows: _Rows, bases, with_q=False):
    """Judge every target from each placement ``bases`` (k, 4, 4).

    Returns
    -------
    margin : ndarray (k, T)
        Worst limit margin (fraction of the range) of each target's best branch; -inf where not reached.
    joint : ndarray (k, T) int
        The joint of that margin (-1 where not reached).
    q : ndarray (k, T, n) or None
        The best branch (internal units; nan where not reached), when ``with_q``.
    """
    from poser.core import reach as rc

    bases = np.asarray(bases, float).reshape(-1, 4, 4)
    k, T, n = len(bases), rows.count, chain.n
    margin = np.full((k, T), -np.inf)
    joint = np.full((k, T), -1, np.int64)
    qs = np.full((k, T, n), np.nan) if with_q else None
    undecided = np.zeros((k, T), bool)
    undecided[:, list(rows.slow)] = True
    wide = rc._wide(chain)
    for with_r, ix in rows.groups:
        Pp, Rp = _moved(bases, chain.base, rows.P[ix], rows.R[ix])
        m = len(ix)
        tb = rc.evaluate_candidates(chain, Pp.reshape(-1, 3), Rp.reshape(-1, 3, 3) if with_r else None)
        Qb = _wide_mid(chain, tb.Q, tb.kmin, tb.kmax, wide)
        _, frac = limit_margins(chain, Qb)
        worst = np.where(tb.inside, frac.min(axis=-1), -np.inf)  # (k·m, B)
        c = worst.argmax(axis=1)
        best = worst[np.arange(len(worst)), c]
        family = tb.free.any(axis=1) | tb.duplicate
        best = np.where(family, np.nan, best).reshape(k, m)
        c = c.reshape(k, m)
        owner = rows.owner[ix]
        starts = np.flatnonzero(np.r_[True, owner[1:] != owner[:-1]])
        tgt = owner[starts]
        vals = np.where(np.isnan(best), -np.inf, best)
        allnan = np.logical_and.reduceat(np.isnan(best), starts, axis=1)  # (k, targets of the group)
        ends = np.r_[starts[1:], m]
        pick = np.broadcast_to(starts, (k, len(starts))).copy()
        for s in np.flatnonzero(ends - starts > 1).tolist():  # free-spin targets: the first of equal best spins
            a, b = int(starts[s]), int(ends[s])
            pick[:, s] = a + np.argmax(vals[:, a:b], axis=1)
        kk = np.arange(k)[:, None]
        v = vals[kk, pick]
        undecided[:, tgt] |= allnan
        ok = ~allnan & np.isfinite(v)
        margin[:, tgt] = np.where(ok, v, -np.inf)
        rowi = pick * 1 + kk * m  # flat row index into the batch
        cand = c[kk, pick]
        fr = frac[rowi, cand]  # (k, targets, n)
        joint[:, tgt] = np.where(ok, np.argmin(fr, axis=-1), -1)
        if with_q:
            qs[:, tgt] = np.where(ok[..., None], Qb[rowi, cand], np.nan)
    if undecided.any():
        for j, i in zip(*np.nonzero(undecided)):
            q = _solve_best(chain, rows.targets[int(i)], chain.base @ invert(bases[j]))
            if q is not None:
                fr = limit_margins(chain, q)[1]
                margin[j, i] = float(fr.min())
                joint[j, i] = int(np.argmin(fr))
                if with_q:
                    qs[j, i] = q
    return margin, joint, qs


def _solve_best(chain, t, M):
    """Target ``t`` moved by ``M`` (4, 4) solved by ``solve``: the listed branch within limits with the largest
    worst margin (over the coarse spins of a free-spin target), or None when none reaches."""
    from poser.core import reach as rc
    from poser.core.ik import solve

    xyz = M[:3, :3] @ t.xyz + M[:3, 3]
    R = None if t.R is None else M[:3, :3] @ t.R
    tol = rc.tolerance(chain)
    Rs = [R] if not t.free_spin else [R @ rot_z(p) for p in rc.spin_samples()]
    best = None
    for Rk in Rs:
        res = solve(chain, xyz, Rk, position_tolerance=tol[0], orientation_tolerance=tol[1], closest=False)
        if res.status != "solved" or not res.reachable:
            continue
        for b in res.branches:
            if not (b.reaches and b.within_limits):
                continue
            q = np.array(b.q, float)
            m = float(limit_margins(chain, q)[1].min())
            if best is None or m > best[0]:
                best = (m, q)
    return None if best is None else best[1]


# -- work in chunks --------------------------------------------------------------------------------------


def _recipe(chain):
    return (chain.joints, chain.base, chain.tool, chain.name, chain.units)


_CHAINS: list = []


def _chain_of(recipe):
    """The chain of a recipe, kept per process (so its kernels and plans are made once per worker)."""
    from poser.core.chain import Chain

    for r, c in _CHAINS:
        if r is recipe or (r[0] == recipe[0] and np.array_equal(r[1], recipe[1]) and np.array_equal(r[2], recipe[2])
                           and r[3] == recipe[3] and r[4] == recipe[4]):
            return c
    c = Chain(*recipe)
    _CHAINS.append((recipe, c))
    del _CHAINS[:-4]
    return c


def _summary(margin, joint, qs, chain):
    """Per placement (k, 5): reached count, smallest margin, its target, its joint, smallest manipulability."""
    k = len(margin)
    ok = np.isfinite(margin)
    out = np.empty((k, 5))
    out[:, 0] = ok.sum(axis=1)
    mm = np.where(ok, margin, np.inf)
    t = np.argmin(mm, axis=1)
    any_ = ok.any(axis=1)
    out[:, 1] = np.where(any_, mm[np.arange(k), t], -np.inf)
    out[:, 2] = np.where(any_, t, -1)
    out[:, 3] = np.where(any_, joint[np.arange(k), t], -1)
    out[:, 4] = np.nan
    if qs is not None:
        man = np.full(margin.shape, np.inf)
        if ok.any():
            man[ok] = np.atleast_1d(manipulability(chain, qs[ok]))
        out[:, 4] = np.where(any_, man.min(axis=1), np.nan)
    return out


def _chunk_job(recipe, targets, bases, with_q, group):
    """Judge placements ``bases`` (k, 4, 4) in groups of ``group``: (k, 5) as :func:`_summary`.  Runs here, in a
    worker process or on a dask worker."""
    chain = _chain_of(recipe)
    rows = _rows(chain, targets)
    out = np.empty((len(bases), 5))
    for s in range(0, len(bases), group):
        m, j, q = judge(chain, rows, bases[s:s + group], with_q)
        out[s:s + group] = _summary(m, j, q, chain)
    return out


def _workers(workers):
    return max(1, int(os.cpu_count() or 1) if workers is None else int(workers))


def _run(chain, targets, bases, with_q, report, workers, scheduler, chunk, group):
    """Judge every base in ``bases`` in chunks of ``chunk`` placements (a multiple of ``group``): here, over
    processes, or over dask; results merged by index."""
    K = len(bases)
    starts = list(range(0, K, chunk))
    out = np.empty((K, 5))
    recipe = _recipe(chain)
    if scheduler is not None:
        return _run_dask(recipe, targets, bases, with_q, report, scheduler, starts, chunk, group, out)
    if workers <= 1 or len(starts) <= 1:
        for n, s in enumerate(starts):
            out[s:s + chunk] = _chunk_job(recipe, targets, bases[s:s + chunk], with_q, group)
            report((n + 1) / len(starts))
        return out
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor, as_completed

    ex = ProcessPoolExecutor(max_workers=min(workers, len(starts)), mp_context=mp.get_context("spawn"))
    try:
        futs = {ex.submit(_chunk_job, recipe, targets, bases[s:s + chunk], with_q, group): s for s in starts}
        for n, f in enumerate(as_completed(futs)):
            s = futs[f]
            out[s:s + chunk] = f.result()
            report((n + 1) / len(starts))
    except BaseException:
        ex.shutdown(wait=False, cancel_futures=True)
        raise
    ex.shutdown(wait=True)
    return out


def _run_dask(recipe, targets, bases, with_q, report, scheduler, starts, chunk, group, out):
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise PoserValueError("scheduler needs dask.distributed, got an installation without it "
                              "(install poser[cluster])") from None
    own = not isinstance(scheduler, Client)
    try:
        client = Client(scheduler) if own else scheduler
    except OSError as exc:
        raise PoserValueError(f"scheduler must be the address of a running dask scheduler, got {scheduler!r} "
                              f"({exc})") from None
    try:
        r_f = client.scatter(recipe, broadcast=True)
        t_f = client.scatter(targets, broadcast=True)
        futs = [client.submit(_chunk_job, r_f, t_f, bases[s:s + chunk], with_q, group, pure=False) for s in starts]
        where = {f.key: s for f, s in zip(futs, starts)}
        try:
            for n, f in enumerate(as_completed(futs)):
                s = where[f.key]
                out[s:s + chunk] = f.result()
                report((n + 1) / len(starts))
        except BaseException:
            client.cancel(futs)
            raise
    finally:
        if own:
            client.close()
    return out


def place(chain, targets, grid: Grid, top: int = TOP, progress=None, workers=None, scheduler=None,
          chunk=None) -> Placement:
    """Score every placement of ``grid`` for ``targets`` (see the module docstring).

    Parameters
    ----------
    chain : Chain
    targets : sequence of poser.core.reach.Target
        World targets (arm length unit).
    grid : Grid
        From :func:`grid`.
    top : int
        Best placements reported.
    progress : callable or Reporter, optional
        ``progress(fraction) -> bool | None``; False cancels (:class:`poser.core.errors.Cancelled`).
    workers : int, optional
        Processes.  Default: one per core when the search is large (:data:`PARALLEL_FROM`), else this
        process alone.  1: this process.
    scheduler : str or distributed.Client, optional
        A ``dask.distributed`` scheduler address (or a client) to spread the chunks over instead.
    chunk : int, optional
        Placements per chunk of work (rounded up to whole groups; default about four chunks per worker).
        The figures do not depend on it.

    Returns
    -------
    Placement
    """
    from poser.core.reach import Target

    targets = tuple(targets)
    if not targets:
        raise PoserValueError("targets must hold at least one target, got none")
    for t in targets:
        if not isinstance(t, Target):
            raise PoserValueError(f"targets must be Target objects, got {type(t).__name__}")
    if not isinstance(grid, Grid):
        raise PoserValueError(f"grid must be a Grid (poser.core.place.grid), got {type(grid).__name__}")
    top = int(top)
    if top < 1:
        raise PoserValueError(f"top must be at least 1, got {top}")
    if workers is not None and int(workers) < 1:
        raise PoserValueError(f"workers must be at least 1, got {workers}")
    report = reporter(progress)
    report(0.0)
    rows = _rows(chain, targets)
    per = len(rows.owner) + 40 * len(rows.slow)
    group = group_size(per)
    K = grid.size
    bases = grid.bases()
    nw = _workers(workers) if (workers is not None or K * per >= PARALLEL_FROM) else 1
    if chunk is None:
        chunk = math.ceil(K / (4 * nw)) if (scheduler is not None or nw > 1) else group
    chunk = int(chunk)
    if chunk < 1:
        raise PoserValueError(f"chunk must be at least 1, got {chunk}")
    chunk = max(group, math.ceil(chunk / group) * group)
    first = _run(chain, targets, bases, False, report.part(0.0, 0.9), nw, scheduler, chunk, group)
    reached = first[:, 0].astype(np.int64)
    margin = first[:, 1]
    steps = np.where(np.isfinite(margin), np.floor(margin / MARGIN_STEP + 1e-9), -np.inf)
    order = np.lexsort((np.arange(K), -steps, -reached))  # best first; manipulability decides among the tied
    kth = order[min(top, K) - 1]
    tied = np.flatnonzero((reached > reached[kth]) | ((reached == reached[kth]) & (steps >= steps[kth])))
    # the second pass judges the groups holding tied placements again, with manipulability (whole groups: a
    # placement's arithmetic does not depend on which others are tied with it)
    second = np.empty((len(tied), 5))
    rep2 = report.part(0.9, 0.1)
    recipe = _recipe(chain)
    gids = np.unique(tied // group)
    for n, g in enumerate(gids.tolist()):
        g0 = g * group
        sub = _chunk_job(recipe, targets, bases[g0:min(g0 + group, K)], True, group)
        mine = (tied // group) == g
        second[mine] = sub[tied[mine] - g0]
        rep2((n + 1) / len(gids))
    man = second[:, 4]
    man_key = np.where(np.isfinite(man), man, -np.inf)
    sub = np.lexsort((tied, -man_key, -steps[tied], -reached[tied]))
    best = []
    for j in sub[:top]:
        i = int(tied[j])
        xyz, yaw = grid.placement(i)
        row = second[j]
        b = bases[i].copy()
        b.setflags(write=False)
        xyz.setflags(write=False)
        best.append(Placed(i, xyz, yaw, b, int(row[0]), float(row[1]), None if row[2] < 0 else int(row[2]),
                           None if row[3] < 0 else int(row[3]), float(row[4])))
    report(1.0)
    reached.setflags(write=False)
    margin.setflags(write=False)
    return Placement(grid, reached, margin, tuple(best), len(targets))
