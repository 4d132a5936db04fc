"""``solve``: check → candidates → families → turns → evaluate → rank → closest approach.

Candidates come from the closed form where the chain has one
(:mod:`poser.core.ik.closed`), else from damped least squares
(:mod:`poser.core.ik.numeric`) started over every revolute joint's whole
turn, so that branches beyond the limits are found too and said to be
blocked.  Candidates the target leaves something free for become families
(:mod:`poser.core.ik.families`); isolated ones that reach expand into their
turn variants (:mod:`poser.core.ik.turns`).  Everything is then judged by
the same evaluation (:mod:`poser.core.ik.evaluate`) and ordered: reaching
within limits first, then reaching beyond a limit, then the configurations
that do not reach; within each group nearest the reference pose first.

The same arm, target and options give the same result on every run: every
budget is a count.  A ``time_guard`` (seconds) may be given by callers that
must stay responsive; when it cuts the numerical search, the result says so
(``complete`` False).
"""

from __future__ import annotations

import dataclasses
import math
import time

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.ik import closed, families, labels, numeric, turns
from poser.core.ik.closest import closest_approach
from poser.core.ik.evaluate import Evaluation, evaluate
from poser.core.ik.result import FAULT, SOLVED, Branch, IKResult, default_tolerance
from poser.core.jacobian import jacobian
from poser.core.transforms import TWO_PI, wrap

__all__ = ["solve", "OPTIONS"]

OPTIONS = frozenset(
    {"method", "position_tolerance", "orientation_tolerance", "seeds", "max_variants", "max_branches",
     "closest", "time_guard", "representatives"}
)
MAX_VARIANTS = 64
"""Turn variants listed per configuration (the rest are counted)."""
MAX_BRANCHES = 512
"""Branches listed in all (the rest are counted)."""
SAME = 1e-6
"""Two candidate rows closer than this in every joint (rad; lengths ÷ the arm's size) are one branch: a
double root (a shoulder offset exactly reached, a mounted copy of the arm) splits by ~1e-7 in rounding."""
NUMERIC_SAME = 1e-5
"""The same for the numerical solver's rows, which stop within tolerance of a solution, not on it."""


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
        err = max(  # the largest entry of |RᵀR - I|
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


def _ranks(chain):
    """Generic rank of the position rows and of the whole (dimensionless) Jacobian (kept with the chain)."""

    def make(c):
        rng = np.random.default_rng(3)
        span = np.where(c.revolute, np.minimum(c.upper - c.lower, TWO_PI), c.upper - c.lower)
        J = jacobian(c, c.lower + rng.random((4, c.n)) * span)
        J[:, :3] /= c.scale
        J[:, :, ~c.revolute] *= c.scale
        rp = int(max(np.linalg.matrix_rank(Jk[:3], tol=1e-9) for Jk in J))
        rf = int(max(np.linalg.matrix_rank(Jk, tol=1e-9) for Jk in J))
        return rp, rf

    return chain.derived("ik_ranks", make)


def _distances(chain, Q, near):
    """Distances of rows Q (E, n) from ``near``: (dimensionless for ranking, [(rad part, length part)]).

    Revolute differences in rad, prismatic ones divided by the arm's size for the ranking figure;
    the parts keep them apart (degrees and millimetres are never added).  (None, None) without ``near``.
    """
    if near is None:
        return None, None
    d = np.asarray(Q, float) - near
    rev = chain.revolute
    a = np.sqrt(np.sum(d[:, rev] ** 2, axis=1))
    b = np.sqrt(np.sum(d[:, ~rev] ** 2, axis=1))
    return np.hypot(a, b / chain.scale).tolist(), list(zip(a.tolist(), b.tolist()))


class _Candidates:
    """Base configurations found, each with its family (or None)."""

    def __init__(self, n):
        self.rows = []
        self.families = []
        self.n = n

    def add(self, q, family=None):
        self.rows.append(np.asarray(q, float))
        self.families.append(family)

    @property
    def Q(self):
        return np.array(self.rows, float).reshape(-1, self.n)


def _dedupe(chain, Q, tol):
    """Indices of rows of Q that differ from every earlier kept row (wrapped angles, lengths ÷ arm size)."""
    K = len(Q)
    if K < 2:
        return list(range(K))
    if K > 16:  # many rows (numerical starts): every pair at once
        d = Q[:, None, :] - Q[None, :, :]
        d = np.where(chain.revolute, wrap(d), d / chain.scale)
        close = (np.max(np.abs(d), axis=-1) < tol).tolist()
        keep = []
        for k in range(K):
            row = close[k]
            if not any(row[j] for j in keep):
                keep.append(k)
        return keep
    # a few rows (a closed form): plain floats, the last joint first (distinct branches nearly always differ
    # there), each comparison stopping at the first joint that differs; the same test as above
    rows = Q.tolist()
    rev = chain.derived("rev_list", lambda c: [bool(r) for r in c.revolute])
    scale, pi, tp = chain.scale, math.pi, TWO_PI
    last = len(rev) - 1
    order = [last] + list(range(last))
    keep = []
    for k, qk in enumerate(rows):
        dup = False
        for j in keep:
            qj = rows[j]
            for i in order:
                d = qk[i] - qj[i]
                d = abs(pi - (pi - d) % tp) if rev[i] else abs(d / scale)
                if not d < tol:
                    break
            else:
                dup = True
                break
        if not dup:
            keep.append(k)
    return keep


def _closed_candidates(chain, plan, xyz, R, ref, C, position_only):
    st = plan.structure
    if not position_only or st.kind == "position":
        cands = plan.one(xyz, R, ref)
        free = families.position_free_joints(chain) if position_only else ()
        groups: dict = {}
        for slot, (q, exact, fl) in enumerate(cands):
            fj = tuple(k for k, f in enumerate(fl) if f)
            if fj and exact:
                groups.setdefault(fj, []).append(slot)
            elif free and exact:
                C.add(*families.free_family(chain, q, free, ref)[::-1])
            else:
                C.add(q)
        for fj, slots in groups.items():
            for _, fam, qr in families.joint_families(chain, plan, xyz, R, ref, slots, fj):
                C.add(qr, fam)
        return
    Fref = chain.frames(ref)
    free = families.position_free_joints(chain)
    if st.kind in ("planar3", "table4"):
        phi_ref = float(plan.tool_turn(Fref[-1, :3, :3][None])[0])
        if st.turn in free:
            for q, _, _ in plan.one(xyz, None, ref, phi=phi_ref):
                C.add(*families.free_family(chain, q, (st.turn,), ref)[::-1])
        else:
            for _, fam, q in families.turn_families(chain, plan, xyz, ref, phi_ref):
                C.add(q, fam)
        return
    R_ref = Fref[-1, :3, :3]
    if set(st.wrist) <= set(free):
        for q, _, _ in plan.one(xyz, R_ref, ref):
            C.add(*families.free_family(chain, q, st.wrist, ref)[::-1])
        return
    for _, fam, q in families.orientation_families(chain, plan, xyz, ref, R_ref):
        C.add(q, fam)


def _reduced_candidates(chain, rplan, xyz, R, ref, C):
    for _, fam, q in families.reduced_families(chain, rplan, xyz, R, ref):
        C.add(q, fam)


def _run_starts(chain, xyz, R, S, tol, deadline, clip=False):
    """Damped least squares from starts S; with a time guard, in blocks until the time runs out."""
    if deadline is None:
        q, _, _, conv = numeric.dls(chain, xyz, R, S, tol=tol, clip=clip)
        return q, conv, True
    out_q, out_c = [], []
    for s in range(0, len(S), 16):
        if s and time.perf_counter() > deadline:
            return np.vstack(out_q), np.concatenate(out_c), False
        qb, _, _, cb = numeric.dls(chain, xyz, R, S[s : s + 16], tol=tol, clip=clip)
        out_q.append(qb)
        out_c.append(cb)
    return np.vstack(out_q), np.concatenate(out_c), True


def _numeric_candidates(chain, xyz, R, ref, C, tol, redundant, options, deadline):
    K = int(options.get("seeds", 96 if redundant else 64))
    starts = [ref[None], np.asarray(chain.home, float)[None]]
    ap = closed.approx_plan(chain)
    if ap is not None and R is not None:
        starts.append(np.array([q for q, _, _ in ap.one(xyz, R, ref)], float))
    starts.append(numeric.seeds(chain, K))
    S = np.vstack(starts)
    q, conv, complete = _run_starts(chain, xyz, R, S, tol, deadline)
    Q = q[conv]
    if not redundant:
        Q = numeric.settle_singular(chain, xyz, R, Q)  # copies around a singular solution meet at it
        # near a singular pose the solver stops within tolerance but a little apart on each start (1e-6 rad
        # near a stretched elbow): the most accurate copy first, copies within NUMERIC_SAME of it dropped
        if len(Q) > 1:
            ev = evaluate(chain, Q, xyz, R)
            err = np.asarray(ev.position_error) / tol[0] + np.asarray(ev.orientation_error) / tol[1]
            Q = Q[np.argsort(err, kind="stable")]
        if R is None:  # joints whose line passes through the target are free over their whole range
            Q, found = families.point_families(chain, Q, xyz, ref)
            for fam, row in found:
                C.add(row, fam)
        for fam, row in families.line_families(chain, Q[_dedupe(chain, Q, NUMERIC_SAME)], ref):
            C.add(row, fam)
        return complete
    # a family: search it within the limits too (projected steps), so that each configuration's verdict is
    # "some member within limits" whenever the search meets one, not the verdict of an arbitrary member
    inner = np.vstack([np.clip(turns.place(chain, Q), chain.lower, chain.upper), numeric.seeds(chain, K, False)])
    qi, convi, done = _run_starts(chain, xyz, R, inner, tol, deadline, clip=True)
    complete &= done
    inside = qi[convi]
    allq = np.vstack([inside, Q]) if len(inside) else Q
    if not len(allq):
        return complete
    placed = turns.place(chain, allq)
    ok = turns.fits(chain, placed)
    F = chain.frames(placed)
    words = labels.describe(chain, placed, F)
    d = np.linalg.norm(np.where(chain.revolute, wrap(allq - ref), (allq - ref) / chain.scale), axis=1)
    count = int(options.get("representatives", 8))
    groups: dict = {}
    for k, w in enumerate(words):
        groups.setdefault(w, []).append(k)
    from poser.core.ik.result import Family

    picked = []
    for ks in groups.values():
        ks = np.array(ks)
        good = ks[ok[ks]]
        best = good[np.argmin(d[good])] if len(good) else ks[np.argmin(d[ks])]
        fam = Family("self-motion", ("self-motion",), (), tuple(range(chain.n)), None,
                     float(ok[ks].mean()), int(len(ks)), complete)
        picked.append((not ok[best], d[best], best, fam))
    picked.sort(key=lambda x: (x[0], x[1]))
    for _, _, k, fam in picked[:count]:
        C.add(allq[k], fam)
    return complete


def _one_family_per_configuration(branches):
    """Families of the same configuration and turns listed once: the first (the best: within limits first,
    then nearest).  Two closed-form slots can share a configuration over a family (position only: the slots
    trade places as the tool's orientation turns), and one configuration must have one verdict.

    Returns ``(branches, number dropped)``.
    """
    seen, out = set(), []
    for b in branches:
        if b.family is not None:
            key = (b.configuration, b.turns)
            if key in seen:
                continue
            seen.add(key)
        out.append(b)
    return out, len(branches) - len(out)


def _label(names, words, t):
    """A branch's label (its configuration words, then the turn words) and its number of whole turns."""
    if not any(t):
        return words, 0
    moved = [f"{names[i]} {x:+d} turn" + ("s" if abs(x) > 1 else "") for i, x in enumerate(t) if x]
    return " · ".join([words] + moved), sum(map(abs, t))


def _with_closest(chain, branches, closest, total):
    """The branches with the closest approach, which reaches within limits, as the first branch.

    It takes the place of a listed branch of the same configuration and turns (which breaks a limit: the
    target is within tolerance of the limit, or that branch's family has a window the sampling missed; the
    family then counts the member found); else it is a new branch.
    """
    q = np.asarray(closest.q, float)
    placed = turns.place(chain, q[None])[0]
    t = tuple(int(round(x)) for x in np.where(chain.revolute, (q - placed) / TWO_PI, 0.0))
    label, _ = _label(chain.names, closest.configuration, t)
    same = [k for k, b in enumerate(branches) if b.configuration == closest.configuration and b.turns == t]
    fam = None
    if same:
        old = branches[same[0]]
        if old.family is not None:
            f = old.family
            extra = 1.0 / (f.samples + 1)
            ranges = f.ranges
            if ranges is not None and f.joints:
                ranges = tuple(tuple(sorted(r + ((float(q[j]), float(q[j])),))) for r, j in zip(ranges, f.joints))
            fam = dataclasses.replace(f, fraction=max(f.fraction, extra), samples=f.samples + 1, ranges=ranges)
        rest = [b for k, b in enumerate(branches) if k != same[0]]
    else:
        rest = list(branches)
        total += 1
    new = Branch(closest.q, label, closest.configuration, t, True, (), closest.position_error,
                 closest.orientation_error, closest.manipulability, closest.distance, True, closest.distance_parts,
                 fam, 1)
    return [new] + rest, total


def _spread(chain, Q, score, count):
    """``count`` rows of Q far apart in joint space, starting from the best score (lowest)."""
    order = list(np.argsort(score, kind="stable"))
    chosen = [order[0]]
    scale = np.where(chain.revolute, 1.0, 1.0 / chain.scale)
    while len(chosen) < min(count, len(Q)):
        D = np.full(len(Q), np.inf)
        for c in chosen:
            d = Q - Q[c]
            D = np.minimum(D, np.linalg.norm(np.where(chain.revolute, wrap(d), d) * scale, axis=1))
        D[chosen] = -1.0
        nxt = int(np.argmax(D - 1e-3 * np.asarray(score)))
        if D[nxt] <= 1e-3:
            break
        chosen.append(nxt)
    return chosen


def solve(chain, xyz, R=None, near=None, **options) -> IKResult:
    """Every inverse-kinematics branch for a target.

    Parameters
    ----------
    chain : poser.core.chain.Chain
    xyz : array_like, shape (3,)
        World position of the tool point, arm length unit.
    R : array_like, shape (3, 3), optional
        World orientation of the tool coordinate system; None for position only.
    near : array_like, shape (n,), optional
        Present joint values, internal units; branches are ranked by distance from them (else from home).
    **options
        ``method`` ("auto", "closed" or "numerical"; "closed" falls back to numerical without a closed
        form), ``position_tolerance`` (length unit, default 1e-6 of the arm's size),
        ``orientation_tolerance`` (rad, default 1e-6), ``seeds`` (numerical starts), ``max_variants``
        (turn variants listed per configuration, default 64), ``max_branches`` (branches listed, default
        512), ``representatives`` (of a numerically found family, default 8), ``closest`` (compute the
        closest approach when not reachable, default True), ``time_guard`` (seconds the numerical search
        may take; the result then says whether it was cut — default None: no clock).

    Returns
    -------
    IKResult
        With ``status`` ``"fault"`` (and no verdict) if the solver broke on this input.
    """
    xyz, R, near = _check_inputs(chain, xyz, R, near)
    unknown = set(options) - OPTIONS
    if unknown:
        raise PoserValueError(f"options must be among {sorted(OPTIONS)}, got {sorted(unknown)}")
    method = options.get("method", "auto")
    if method not in ("auto", "closed", "numerical"):
        raise PoserValueError(f"method must be 'auto', 'closed' or 'numerical', got {method!r}")
    tol0 = default_tolerance(chain)
    tol = (
        float(options.get("position_tolerance", tol0[0])),
        float(options.get("orientation_tolerance", tol0[1])),
    )
    try:
        return _solve(chain, xyz, R, near, tol, method, options)
    except Exception as exc:  # a defect: report it as a fault, never as a verdict on reach
        return IKResult(FAULT, "none", (), False, None, None, None, R is None, False, tol,
                        fault=f"{type(exc).__name__}: {exc}", xyz=xyz, R=R)


def _solve(chain, xyz, R, near, tol, method, options):
    n = chain.n
    ref = near if near is not None else np.asarray(chain.home, float)
    position_only = R is None
    rp, rf = _ranks(chain)
    redundant = n > (rp if position_only else rf)
    guard = options.get("time_guard")
    deadline = None if guard is None else time.perf_counter() + float(guard)
    plan = None if method == "numerical" else closed.plan(chain)
    C = _Candidates(n)
    complete = True
    rplan = None if plan is not None or method == "numerical" or position_only else closed.reduced_plan(chain)
    if plan is not None:
        solver = f"closed-form: {plan.structure.name}"
        _closed_candidates(chain, plan, xyz, R, ref, C, position_only)
    elif rplan is not None:
        solver = f"closed-form: {chain.names[rplan.fixed]} fixed, {rplan.structure.name}"
        _reduced_candidates(chain, rplan, xyz, R, ref, C)
    else:
        solver = "numerical"
        complete = _numeric_candidates(chain, xyz, R, ref, C, tol, redundant, options, deadline)
    Q = C.Q
    fams = C.families
    keep = _dedupe(chain, Q, SAME)
    Q_all = Q
    Q = Q[keep]
    fams = [fams[k] for k in keep]
    max_variants = int(options.get("max_variants", MAX_VARIANTS))
    branches, total, unlisted = [], 0, 0
    if len(Q):
        Qp = turns.place(chain, Q)
        ev = evaluate(chain, Qp, xyz, R)
        pe, oe = ev.position_error, ev.orientation_error
        sel = [k for k in range(len(Qp)) if pe[k] <= tol[0] and oe[k] <= tol[1]]
        if len(sel) < len(Qp):  # configurations that do not reach are no branches: they start the closest approach
            Qp, fams = Qp[sel], [fams[k] for k in sel]
            ev = Evaluation(*([getattr(ev, f)[k] for k in sel] for f in ("position_error", "orientation_error",
                                                                           "manipulability", "words")), ev.tool[sel])
            pe, oe = ev.position_error, ev.orientation_error
        man, words_k = ev.manipulability, ev.words
        limits = [max_variants if f is None else 1 for f in fams]
        rows, tt, src, counts, _ = turns.expand(chain, Qp, ref, limits)
        listed = [0] * len(Qp)
        for k in src:
            listed[k] += 1
        for k in range(len(Qp)):
            if fams[k] is None:
                total += max(counts[k], listed[k])
                unlisted += max(counts[k] - listed[k], 0)
            else:
                total += listed[k]
        rows.setflags(write=False)
        # every variant's wide joints fit by construction: a variant breaks what its base row breaks elsewhere
        base_viols = turns.violations_many(chain, Qp, narrow_only=True)
        dist, parts = _distances(chain, rows, near)
        dref = dist if near is not None else _distances(chain, rows, ref)[0]
        names = chain.names
        keys = []
        none = (None,) * len(src)
        for e, (k, t, d, part) in enumerate(zip(src, tt, none if dist is None else dist, none if parts is None else
                                                parts)):
            v = base_viols[k]
            fam = fams[k]
            words = words_k[k] or "single configuration"
            label, nturns = _label(names, words, t)
            branches.append(Branch(rows[e], label, words, t, not v, v, pe[k], oe[k], man[k], d, True, part, fam,
                                   max(counts[k], 1) if fam is None else 1))
            keys.append((bool(v), round(dref[e], 12), nturns, e))
        keys.sort()
        branches = [branches[x[-1]] for x in keys]
        branches, dropped = _one_family_per_configuration(branches)
        total -= dropped
    cap = int(options.get("max_branches", MAX_BRANCHES))
    if len(branches) > cap:
        unlisted += len(branches) - cap
        branches = branches[:cap]
    reachable = bool(branches) and branches[0].reaches and branches[0].within_limits
    closest = nearest_point = nearest_rotation = None
    if not reachable and options.get("closest", True):
        qc, pe, oe = closest_approach(chain, xyz, R, ref, Q_all, tol)
        qc = np.array(qc, float)
        qc.setflags(write=False)
        ev = evaluate(chain, qc[None], xyz, R)
        d, parts = _distances(chain, qc[None], near)
        words = ev.words[0] or "single configuration"
        closest = Branch(qc, words, words, (0,) * n, True, (), ev.position_error[0], ev.orientation_error[0],
                         ev.manipulability[0], None if d is None else d[0],
                         ev.position_error[0] <= tol[0] and ev.orientation_error[0] <= tol[1],
                         None if parts is None else parts[0])
        if closest.reaches:  # a member within limits reaches after all (within tolerance of a limit, a
            # window the sampling of a family missed): the target is reachable, with this branch
            branches, total = _with_closest(chain, branches, closest, total)
            reachable, closest = True, None
        else:  # the position, the orientation or both missed: the closest approach's pose is the nearest reachable
            nearest_point = ev.tool[0, :3, 3].copy()
            nearest_rotation = ev.tool[0, :3, :3].copy()
            nearest_point.setflags(write=False)
            nearest_rotation.setflags(write=False)
    return IKResult(SOLVED, solver, tuple(branches), reachable, closest, nearest_point, nearest_rotation,
                    position_only, bool(redundant), tol, complete, total, unlisted, None, xyz, R)
