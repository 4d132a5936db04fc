"""Closed-form inverse kinematics: structure recognition, and the one place the backend is chosen.

:func:`recognise` reads the chain's joint lines at q = 0 (which are parallel,
which meet, which are perpendicular — never names or row counts) and returns
a :class:`~.stages.Structure` or None.  :func:`solve_one` runs it for one
target in plain floats (``SCALAR``), :func:`solve_many` for many targets in
numpy arrays (``VECTOR``); both run the same description (:mod:`.stages`,
:mod:`.subproblems`), so they give the same candidates in the same slots.

Recognised (positioning stages, then what they compose into):

* ``planar2`` — two parallel revolute joints; ``lift`` — those and a slide along them, in any order;
* ``elbow`` — a revolute base, then two revolute joints with parallel axes (any offsets);
* ``rrp`` — a revolute base, a revolute joint across it, and a slide across the second axis;
* ``rpp`` — a revolute base and two slides, one with a part along the base axis (cylindrical arm);
* ``ppp`` — three independent slides (Cartesian arm);
* ``ball`` — two revolute joints whose axes meet, then a third revolute joint;
* ``rrr23`` — a revolute joint, then two revolute joints whose axes meet;
* ``rp`` — a revolute joint and a slide across it (planar); ``pp`` — two slides;
* composed: ``planar3`` (three parallel revolute joints: position and the tool's turn), ``table4``
  (three parallel revolute joints and a slide along them), ``pieper6`` (a three-joint stage and a
  spherical wrist — the last three axes meet in one point; Pieper's condition).
"""

from __future__ import annotations

import numpy as np

from poser.core.ik.closed import stages
from poser.core.ik.closed.ops import VECTOR
from poser.core.ik.closed.stages import STAGE_BRANCHES, Model, Structure
from poser.core.ik.closed.trace import TRACE, Graph, build
from poser.core.lines import chain_lines, common_perpendicular, meeting_point, nearest_point, parallel

__all__ = ["Structure", "Model", "Plan", "ReducedPlan", "plan", "approx_plan", "reduced_plan", "recognise", "model_of",
           "make_model", "kernel_source"]

TOL_DIR = 1e-9
"""Directions closer than this (sine of the angle) are parallel for recognition."""
TOL_LEN = 1e-9
"""Lines closer than this (times the arm's size) meet for recognition."""


def _t(v):
    return tuple(float(x) for x in v)


def make_model(o, w, rev, M, scale) -> Model:
    """A :class:`Model` from joint lines (arrays (n, 3)), revolute flags, the tool pose at q = 0 and the arm's size."""
    o = np.asarray(o, float)
    w = np.asarray(w, float)
    last = w[-1]
    a = np.array([1.0, 0.0, 0.0]) if abs(last[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    across = a - last * float(last @ a)
    across /= np.linalg.norm(across)
    return Model(
        o=[_t(x) for x in o],
        w=[_t(x) for x in w],
        rev=[bool(r) for r in rev],
        p0=_t(np.asarray(M)[:3, 3]),
        MR=tuple(_t(r) for r in np.asarray(M)[:3, :3]),
        across=_t(across),
        eps_len=1e-9 * float(scale),
    )


def model_of(chain) -> Model:
    """The :class:`Model` of ``chain`` (kept with the chain)."""

    def make(c):
        L = chain_lines(c)
        return make_model(L.o, L.w, L.revolute, L.M, L.scale)

    return chain.derived("ik_model", make)


def _off_line(x, o, w, tol):
    v = np.asarray(x) - o
    return float(np.linalg.norm(v - w * float(w @ v))) > tol


def _elbow_words(o, w, J, c0, tol_l):
    i, j, _ = J
    f1, _, d = common_perpendicular(o[i], w[i], o[j], w[j])
    lateral = abs(float(w[j] @ (np.asarray(c0) - f1)))
    return "elbow arm with shoulder offset" if max(d, lateral) > tol_l else "elbow arm"


_STAGE_WORDS = {
    "planar2": "planar 2R",
    "lift": "two-revolute-one-prismatic arm, cylindrical type",
    "rrp": "two-revolute-one-prismatic arm, spherical type",
    "rpp": "cylindrical arm (one revolute joint, two slides)",
    "ppp": "Cartesian arm (three slides)",
    "ball": "arm with meeting shoulder axes",
    "rrr23": "arm whose second and third axes meet",
    "rp": "planar arm with a revolute joint and a slide",
    "pp": "two-slide arm",
}


def _stage(o, w, rev, J, c0, tol_l):
    """(stage kind, extra constants) for the joints J placing point c0, or None."""
    kinds = tuple(bool(rev[k]) for k in J)
    if len(J) == 2:
        i, j = J
        if kinds == (True, True) and parallel(w[i], w[j], TOL_DIR):
            return "planar2", ()
        if kinds == (True, False) and abs(float(w[i] @ w[j])) < TOL_DIR:
            return "rp", ()
        if kinds == (False, False) and not parallel(w[i], w[j], TOL_DIR):
            return "pp", ()
        return None
    i, j, k = J
    if kinds == (True, True, True):
        if not parallel(w[i], w[j], TOL_DIR) and parallel(w[j], w[k], TOL_DIR) and _off_line(c0, o[k], w[k], tol_l):
            return "elbow", ()
        f1, _, d12 = common_perpendicular(o[i], w[i], o[j], w[j])
        if d12 <= tol_l and not parallel(w[i], w[j], TOL_DIR):
            if _off_line(f1, o[k], w[k], tol_l) and _off_line(c0, o[k], w[k], tol_l):
                return "ball", (_t(f1),)
        g1, _, d23 = common_perpendicular(o[j], w[j], o[k], w[k])
        if d23 <= tol_l and not parallel(w[j], w[k], TOL_DIR) and float(np.linalg.norm(np.asarray(c0) - g1)) > tol_l:
            return "rrr23", (_t(g1),)
        return None
    revs = [x for x in J if rev[x]]
    pris = [x for x in J if not rev[x]]
    if len(revs) == 2:
        r1, r2 = revs
        if parallel(w[r1], w[r2], TOL_DIR) and parallel(w[r1], w[pris[0]], TOL_DIR):
            return "lift", (r1, r2, pris[0])
        if kinds == (True, True, False) and not parallel(w[i], w[j], TOL_DIR) and abs(float(w[j] @ w[k])) < TOL_DIR:
            return "rrp", ()
        return None
    if kinds == (True, False, False):
        aj, ak = abs(float(w[i] @ w[j])), abs(float(w[i] @ w[k]))
        ja, jb = (j, k) if aj >= ak else (k, j)
        if max(aj, ak) <= TOL_DIR:
            return None
        dirv = w[jb] - w[ja] * (float(w[i] @ w[jb]) / float(w[i] @ w[ja]))
        if np.linalg.norm(dirv - w[i] * float(w[i] @ dirv)) <= TOL_DIR:
            return None
        return "rpp", (ja, jb)
    if kinds == (False, False, False) and abs(float(np.linalg.det(np.array([w[i], w[j], w[k]])))) > 1e-9:
        return "ppp", ()
    return None


def recognise_lines(o, w, rev, M, scale) -> Structure | None:
    """The closed-form :class:`Structure` of a chain given by its joint lines, or None."""
    o = np.asarray(o, float)
    w = np.asarray(w, float)
    rev = [bool(r) for r in rev]
    n = len(w)
    p0 = np.asarray(M, float)[:3, 3]
    tol_l = TOL_LEN * float(scale)
    revs = [i for i in range(n) if rev[i]]
    pris = [i for i in range(n) if not rev[i]]
    if len(revs) >= 2 and all(parallel(w[revs[0]], w[i], TOL_DIR) for i in revs) and len(pris) <= 1:
        a = w[revs[0]]
        if all(parallel(a, w[p], TOL_DIR) for p in pris):
            if n in (2, 3) and len(revs) == 2:
                kind, extra = ("planar2", ()) if n == 2 else ("lift", (revs[0], revs[1], pris[0]))
                return Structure("position", kind, tuple(range(n)), _t(p0), _STAGE_WORDS[kind], extra=extra,
                                 branches=2)
            if len(revs) == 3 and n in (3, 4):
                t = revs[2]
                c = o[t] + w[t] * float(w[t] @ (p0 - o[t]))
                J = tuple(x for x in range(n) if x != t)
                kind, extra = ("planar2", ()) if n == 3 else ("lift", (revs[0], revs[1], pris[0]))
                name = "planar 3R" if n == 3 else "four-axis table arm"
                return Structure("planar3" if n == 3 else "table4", kind, J, _t(c), name, turn=t, axis=_t(a),
                                 extra=extra, branches=2)
    if n in (2, 3):
        found = _stage(o, w, rev, tuple(range(n)), p0, tol_l)
        if found is None:
            return None
        kind, extra = found
        words = _elbow_words(o, w, (0, 1, 2), p0, tol_l) if kind == "elbow" else _STAGE_WORDS[kind]
        name = words if kind in ("planar2", "rp", "pp") else f"three-axis {words}"
        return Structure("position", kind, tuple(range(n)), _t(p0), name, extra=extra,
                         branches=STAGE_BRANCHES[kind])
    if n == 6 and all(rev[3:6]) and not parallel(w[3], w[4], TOL_DIR) and not parallel(w[4], w[5], TOL_DIR):
        c = meeting_point(o[3:6], w[3:6], tol_l)
        if c is None:
            return None
        found = _stage(o, w, rev, (0, 1, 2), c, tol_l)
        if found is None:
            return None
        kind, extra = found
        words = _elbow_words(o, w, (0, 1, 2), c, tol_l) if kind == "elbow" else _STAGE_WORDS[kind]
        if kind == "elbow" and common_perpendicular(o[2], w[2], o[3], w[3])[2] > tol_l:
            words = words.replace("with shoulder offset", "with shoulder and forearm offsets")
            if "offsets" not in words:
                words += " with forearm offset"
        return Structure("pieper6", kind, (0, 1, 2), _t(c), f"six-axis arm with intersecting wrist axes ({words})",
                         wrist=(3, 4, 5), extra=extra, branches=2 * STAGE_BRANCHES[kind])
    return None


class Plan:
    """A chain's closed form: its :class:`Model`, :class:`Structure` and generated kernels.

    ``one`` solves one target in plain floats, ``many`` many targets in numpy arrays — the one
    backend choice of the closed forms.  Kernels are generated on first use and kept.
    """

    def __init__(self, model: Model, structure: Structure):
        self.model = model
        self.structure = structure
        self.n = len(model.w)
        self._kernels: dict = {}

    def kernel(self, vector: bool, turn_given: bool = False):
        """``(function, source, branches)`` of the generated kernel.

        Inputs, in order: ``P0, P1, P2`` (target position), ``R00 … R22`` (target rotation by rows; unused
        by structures that need none), ``ref0 … ref{n-1}`` (values for joints the target leaves free) and
        ``phi`` (planar and table arms with ``turn_given``: the tool's turn).  It returns, per candidate
        slot, ``(q, exact, free)``.
        """
        key = (bool(vector), bool(turn_given))
        k = self._kernels.get(key)
        if k is None:
            k = self._kernels[key] = self._build(*key)
        return k

    def _build(self, vector, turn_given):
        m, st, n = self.model, self.structure, self.n
        g = Graph()
        names = ["P0", "P1", "P2"] + [f"R{a}{b}" for a in range(3) for b in range(3)]
        names += [f"ref{k}" for k in range(n)] + ["phi"]
        sym = {nm: g.input(nm) for nm in names}
        P = (sym["P0"], sym["P1"], sym["P2"])
        R = tuple(tuple(sym[f"R{a}{b}"] for b in range(3)) for a in range(3))
        ref = [sym[f"ref{k}"] for k in range(n)]
        phi = sym["phi"] if turn_given else None
        need_R = st.kind == "pieper6" or (st.kind in ("planar3", "table4") and not turn_given)
        cands = stages.solve(TRACE, m, st, P, R if need_R else None, ref, phi)
        outs = [(tuple(q), e, tuple(f)) for q, e, f in cands]
        tag = f"{st.kind}_{st.stage}_{'vector' if vector else 'scalar'}"
        fn, src = build(g, names, outs, tag, vector)
        return fn, src, len(cands)

    def one(self, xyz, R, ref, phi=None):
        """Candidates for one target in plain floats: a tuple of ``(q tuple, exact, free tuple)``.

        ``R`` (3, 3) or None; ``ref`` (n,) values for joints the target leaves free; ``phi`` the tool's
        turn for planar and table arms (instead of one read from R).
        """
        fn = self.kernel(False, phi is not None)[0]
        Rf = _NO_R if R is None else tuple(np.asarray(R, float).ravel().tolist())
        x, y, z = (float(v) for v in xyz)
        return fn(x, y, z, *Rf, *(float(v) for v in ref), 0.0 if phi is None else float(phi))

    def many(self, P, R, ref, phi=None):
        """Candidates for N targets at once (numpy arrays).

        Parameters
        ----------
        P : ndarray (N, 3)
        R : ndarray (N, 3, 3) or None
        ref : array_like (n,) or (N, n)
            Values for joints the target leaves free.
        phi : ndarray (N,), optional
            Planar and table arms: the tool's turn instead of one read from R.

        Returns
        -------
        Q : ndarray (N, B, n)
        exact : ndarray (N, B) of bool
        free : ndarray (N, B, n) of bool
        """
        fn, _, B = self.kernel(True, phi is not None)
        n = self.n
        P = np.asarray(P, float)
        N = P.shape[0]
        Rs = [0.0] * 9 if R is None else [np.asarray(R, float)[:, a, b] for a in range(3) for b in range(3)]
        ref = np.asarray(ref, float)
        refs = [ref[..., k] for k in range(n)]
        out = fn(P[:, 0], P[:, 1], P[:, 2], *Rs, *refs, 0.0 if phi is None else np.asarray(phi, float))
        # gathered joint by joint in rows of N (contiguous copies), then seen as (N, B, n)
        QT = np.empty((B, n, N))
        ex = np.empty((B, N), bool)
        fr = np.empty((B, n, N), bool)
        for b, (q, e, f) in enumerate(out):
            for k in range(n):
                QT[b, k] = q[k]
                fr[b, k] = f[k]
            ex[b] = e
        return QT.transpose(2, 0, 1), ex.T, fr.transpose(2, 0, 1)

    SCALAR_UP_TO = 4
    """Up to this many targets run one by one in plain floats (numpy's per-call cost would dominate)."""

    def candidates(self, P, R, ref, phi=None):
        """Like :meth:`many` (arrays), choosing the backend by the number of targets — the one choice of it."""
        P = np.asarray(P, float)
        N = P.shape[0]
        if N > self.SCALAR_UP_TO:
            return self.many(P, R, ref, phi)
        ref = np.broadcast_to(np.asarray(ref, float), (N, self.n))
        B = self.structure.branches
        Q = np.empty((N, B, self.n))
        ex = np.empty((N, B), bool)
        fr = np.empty((N, B, self.n), bool)
        for i in range(N):
            out = self.one(P[i], None if R is None else R[i], ref[i], None if phi is None else np.ravel(phi)[i])
            for b, (q, e, f) in enumerate(out):
                Q[i, b], ex[i, b], fr[i, b] = q, e, f
        return Q, ex, fr

    def tool_turn(self, R):
        """Planar and table arms: the tool's turn about the common axis nearest rotations R (N, 3, 3) → (N,)."""
        R = np.asarray(R, float)
        Rt = tuple(tuple(R[:, a, b] for b in range(3)) for a in range(3))
        return np.asarray(stages.tool_turn(VECTOR, self.model, self.structure, Rt), float)


_NO_R = (0.0,) * 9


def plan(chain) -> Plan | None:
    """The closed-form :class:`Plan` of ``chain``, or None when it has no recognised structure (kept with the chain)."""

    def make(c):
        L = chain_lines(c)
        st = recognise_lines(L.o, L.w, L.revolute, L.M, L.scale)
        return None if st is None else Plan(model_of(c), st)

    return chain.derived("ik_plan", make)


def recognise(chain) -> Structure | None:
    """The closed-form structure of ``chain``, or None."""
    p = plan(chain)
    return None if p is None else p.structure


def approx_plan(chain) -> Plan | None:
    """A closed form of a nearby arm, for numerical starts: a six-axis arm whose wrist axes nearly meet,
    with its wrist lines moved to pass through their nearest common point (None when there is none)."""

    def make(c):
        L = chain_lines(c)
        if c.n != 6 or not all(L.revolute[3:6]) or plan(c) is not None:
            return None
        x = nearest_point(L.o[3:6], L.w[3:6])
        if x is None:
            return None
        o = np.array(L.o, float)
        for k in range(3, 6):
            o[k] = x  # the line through x along the same direction
        st = recognise_lines(o, L.w, L.revolute, L.M, L.scale)
        return None if st is None else Plan(make_model(o, L.w, L.revolute, L.M, L.scale), st)

    return chain.derived("ik_approx_plan", make)


class ReducedPlan:
    """A redundant arm made closed-form by fixing one joint's value (an input ``qf`` of the kernel).

    The lines after the fixed joint turn with it; the rest of the arm then has the structure
    ``structure`` for every value of the fixed joint (checked at three generic values when recognised;
    its solver holds at the special values too, where axes may line up by chance).  Its
    solutions form one-parameter families over the fixed joint (self-motion), searched by
    :mod:`poser.core.ik.families`.
    """

    def __init__(self, chain, fixed: int, structure: Structure, lines):
        self.fixed = fixed
        self.structure = structure
        self.n = chain.n
        self.keep = [k for k in range(chain.n) if k != fixed]
        self._L = lines
        self._downstream = {k: k > fixed for k in range(chain.n)}
        self._kernels: dict = {}

    def kernel(self, vector: bool):
        k = self._kernels.get(vector)
        if k is None:
            k = self._kernels[vector] = self._build(vector)
        return k

    def _build(self, vector):
        from dataclasses import replace

        from poser.core.ik.closed import subproblems as sp

        L, j, n = self._L, self.fixed, self.n
        g = Graph()
        names = ["P0", "P1", "P2"] + [f"R{a}{b}" for a in range(3) for b in range(3)]
        names += [f"ref{k}" for k in range(n)] + ["qf"]
        sym = {nm: g.input(nm) for nm in names}
        qf = sym["qf"]
        oj, wj = _t(L.o[j]), _t(L.w[j])

        def moved_point(x):
            return sp.rot_point(TRACE, oj, wj, qf, _t(x))

        def moved_dir(x):
            return sp.rot(TRACE, wj, qf, _t(x))

        base = make_model(L.o, L.w, L.revolute, L.M, L.scale)
        o, w = [], []
        for k in self.keep:
            if k < j:
                o.append(_t(L.o[k]))
                w.append(_t(L.w[k]))
            else:
                o.append(moved_point(L.o[k]))
                w.append(moved_dir(L.w[k]))
        cols = [moved_dir(L.M[:3, c]) for c in range(3)]
        MR = tuple(tuple(cols[c][r] for c in range(3)) for r in range(3))
        m = Model(o, w, [bool(L.revolute[k]) for k in self.keep], moved_point(L.M[:3, 3]), MR,
                  moved_dir(base.across), base.eps_len)
        st = self.structure
        st = replace(st, point=moved_point(st.point) if self._point_moves else st.point,
                     extra=tuple(moved_point(x) if isinstance(x, tuple) and self._extra_moves else x
                                 for x in st.extra))
        P = (sym["P0"], sym["P1"], sym["P2"])
        R = tuple(tuple(sym[f"R{a}{b}"] for b in range(3)) for a in range(3))
        ref = [sym[f"ref{k}"] for k in self.keep]
        cands = stages.solve(TRACE, m, st, P, R, ref, None)
        outs = []
        for q, e, f in cands:
            q, f = list(q), list(f)
            q.insert(j, qf)
            f.insert(j, False)
            outs.append((tuple(q), e, tuple(f)))
        fn, src = build(g, names, outs, f"reduced{j}_{st.kind}_{'vector' if vector else 'scalar'}", vector)
        return fn, src, len(cands)

    def one(self, xyz, R, ref, qf):
        """Candidates for one target with the fixed joint at ``qf`` (plain floats)."""
        fn = self.kernel(False)[0]
        x, y, z = (float(v) for v in xyz)
        return fn(x, y, z, *tuple(np.asarray(R, float).ravel().tolist()), *(float(v) for v in ref), float(qf))

    def many(self, P, R, ref, qf):
        """Candidates (Q (N, B, n), exact (N, B), free (N, B, n)) for N targets / fixed-joint values ``qf`` (N,)."""
        fn, _, B = self.kernel(True)
        P = np.asarray(P, float)
        N = P.shape[0]
        R = np.asarray(R, float)
        ref = np.asarray(ref, float)
        out = fn(P[:, 0], P[:, 1], P[:, 2], *[R[:, a, b] for a in range(3) for b in range(3)],
                 *[ref[..., k] for k in range(self.n)], np.asarray(qf, float))
        Q = np.empty((N, B, self.n))
        ex = np.empty((N, B), bool)
        fr = np.empty((N, B, self.n), bool)
        for b, (q, e, f) in enumerate(out):
            for k in range(self.n):
                Q[:, b, k] = q[k]
                fr[:, b, k] = f[k]
            ex[:, b] = e
        return Q, ex, fr


REDUCE_ORDER = (2, 0, 1, 3, 4, 5, 6)
"""Joints tried, in order, as the fixed joint of a seven-axis arm (the third first: an upper-arm twist)."""


def reduced_plan(chain) -> ReducedPlan | None:
    """A :class:`ReducedPlan` for a seven-axis arm whose other six joints have a closed form for every value
    of one fixed joint (None otherwise; kept with the chain)."""

    def make(c):
        if c.n != 7:
            return None
        L = chain_lines(c)
        from poser.core.transforms import rot_axis

        for j in REDUCE_ORDER:
            if not L.revolute[j]:
                continue
            keep = [k for k in range(c.n) if k != j]
            found = []
            for qf in (0.9, -2.1, 2.6):  # generic values: at special ones (0) axes may line up by chance
                Rj = rot_axis(L.w[j], qf)
                o = np.array([L.o[k] if k < j else L.o[j] + Rj @ (L.o[k] - L.o[j]) for k in keep])
                w = np.array([L.w[k] if k < j else Rj @ L.w[k] for k in keep])
                M = np.array(L.M, float)
                M[:3, :3] = Rj @ M[:3, :3]
                M[:3, 3] = L.o[j] + Rj @ (M[:3, 3] - L.o[j])
                st = recognise_lines(o, w, [L.revolute[k] for k in keep], M, L.scale)
                found.append(st)
            st0 = found[0]
            if st0 is None or st0.kind != "pieper6" or any(
                s is None or (s.kind, s.stage) != (st0.kind, st0.stage) for s in found
            ):
                continue
            plan = ReducedPlan(c, j, st0, L)
            # which constants turn with the fixed joint: the wrist centre lies on joints after it; a meeting
            # point of the stage on lines all before it or all after it (mixed: not a rigid structure)
            plan._point_moves = all(k > j for k in (keep[i] for i in st0.wrist))
            stage_lines = [keep[i] for i in st0.joints]
            if st0.stage == "ball":
                ends = [keep[st0.joints[0]], keep[st0.joints[1]]]
            elif st0.stage == "rrr23":
                ends = [keep[st0.joints[1]], keep[st0.joints[2]]]
            else:
                ends = stage_lines
            after = [k > j for k in ends]
            if any(after) and not all(after) and st0.stage in ("ball", "rrr23"):
                continue
            plan._extra_moves = all(after)
            return plan
        return None

    return chain.derived("ik_reduced_plan", make)


def kernel_source(chain, vector: bool = False, turn_given: bool = False) -> str:
    """The Python source of the chain's generated closed-form kernel (for reading and debugging)."""
    p = plan(chain)
    if p is None:
        raise ValueError(f"chain {chain.name!r} has no closed-form structure")
    return p.kernel(vector, turn_given)[1]
