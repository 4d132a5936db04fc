"""An independent reference for inverse kinematics: DH forward kinematics from the definition, and a search.

Nothing here imports Poser's kinematics (``poser.core.fk``, ``poser.core.ik`` or their helpers): the
arm is described as a plain DH table (a dict), its forward kinematics are written out from the
definition, and inverse kinematics is found by brute force — a damped least-squares (Levenberg-
Marquardt) search from many random starts over each joint's whole turn (or within the limits),
polished with ``scipy.optimize.least_squares``, de-duplicated modulo 2π.

Sources for the forward kinematics:

* standard (distal) DH: A_i = Rot_z(θ_i) · Trans_z(d_i) · Trans_x(a_i) · Rot_x(α_i) — Spong, Hutchinson &
  Vidyasagar, *Robot Modeling and Control*, ch. 3 ("Forward kinematics: the Denavit-Hartenberg
  convention"), eq. for A_i (from memory);
* modified (proximal) DH: ^{i-1}T_i = Rot_x(α_{i-1}) · Trans_x(a_{i-1}) · Rot_z(θ_i) · Trans_z(d_i) —
  Craig, *Introduction to Robotics: Mechanics and Control*, ch. 3 ("Manipulator kinematics"), the link
  transformation (from memory);
* base and tool: T = T_base · A_1 ⋯ A_n · T_tool, with T = Trans(xyz) · Rz(yaw) · Ry(pitch) · Rx(roll) —
  roll, pitch, yaw about fixed axes, i.e. ``scipy.spatial.transform.Rotation.from_euler("xyz", …)``
  (common practice; the arm-file format of this project states the same convention).

An arm is a dict::

    {"name": str, "convention": "standard" | "modified", "length": "mm" | "m", "angle": "deg" | "rad",
     "base": (xyz, rpy), "tool": (xyz, rpy),          # arm units
     "joints": [{"type": "revolute" | "prismatic", "a":, "alpha":, "d":, "theta":, "min":, "max":}, ...]}
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import least_squares
from scipy.spatial.transform import Rotation

TWO_PI = 2.0 * math.pi


# --------------------------------------------------------------------------------------------- the arm
def arm(joints, *, convention="standard", length="mm", angle="deg", base=None, tool=None, name="ref arm"):
    """An arm dict (see the module docstring); ``joints`` are dicts with DH values in arm units."""
    full = []
    for j in joints:
        row = {"type": "revolute", "a": 0.0, "alpha": 0.0, "d": 0.0, "theta": 0.0}
        row.update(j)
        full.append(row)
    return {"name": name, "convention": convention, "length": length, "angle": angle,
            "base": base or ((0, 0, 0), (0, 0, 0)), "tool": tool or ((0, 0, 0), (0, 0, 0)), "joints": full}


def _num(v):
    return repr(float(v))


def toml(a) -> str:
    """The arm-file text of arm ``a`` (format 1, as docs/arm-file.md describes it)."""
    lines = ["format = 1", f'name = "{a["name"]}"', f'convention = "{a["convention"]}"', "",
             "[units]", f'length = "{a["length"]}"', f'angle = "{a["angle"]}"', ""]
    for key in ("base", "tool"):
        xyz, rpy = a[key]
        lines += [f"[{key}]", f"xyz = [{', '.join(map(_num, xyz))}]", f"rpy = [{', '.join(map(_num, rpy))}]", ""]
    for i, j in enumerate(a["joints"]):
        lines += ["[[joint]]", f'name = "{j.get("name", f"J{i + 1}")}"', f'type = "{j["type"]}"']
        for k in ("a", "alpha", "d", "theta", "min", "max"):
            lines.append(f"{k} = {_num(j[k])}")
        if "home" in j:
            lines.append(f"home = {_num(j['home'])}")
        lines.append("")
    return "\n".join(lines)


def _ang(a, v):
    """An angle in arm units → rad."""
    return np.radians(v) if a["angle"] == "deg" else np.asarray(v, float)


def revolute(a):
    return np.array([j["type"] == "revolute" for j in a["joints"]])


def limits(a):
    """(lower, upper) in internal units (rad / length)."""
    rev = revolute(a)
    lo = np.array([j["min"] for j in a["joints"]], float)
    hi = np.array([j["max"] for j in a["joints"]], float)
    return np.where(rev, _ang(a, lo), lo), np.where(rev, _ang(a, hi), hi)


def to_internal(a, q_user):
    q_user = np.asarray(q_user, float)
    return np.where(revolute(a), _ang(a, q_user), q_user)


def to_user(a, q):
    q = np.asarray(q, float)
    return np.where(revolute(a), np.degrees(q) if a["angle"] == "deg" else q, q)


def pose(xyz, rpy_rad):
    """Trans(xyz) · Rz(yaw) Ry(pitch) Rx(roll) (4, 4)."""
    T = np.eye(4)
    T[:3, :3] = Rotation.from_euler("xyz", rpy_rad).as_matrix()
    T[:3, 3] = xyz
    return T


def rpy_of(R):
    """(roll, pitch, yaw) rad about fixed X, Y, Z of a rotation matrix."""
    return Rotation.from_matrix(R).as_euler("xyz")


def _rx(t):
    c, s = np.cos(t), np.sin(t)
    M = np.zeros(np.shape(t) + (4, 4))
    M[..., 0, 0] = 1
    M[..., 1, 1], M[..., 1, 2], M[..., 2, 1], M[..., 2, 2] = c, -s, s, c
    M[..., 3, 3] = 1
    return M


def _rz(t):
    c, s = np.cos(t), np.sin(t)
    M = np.zeros(np.shape(t) + (4, 4))
    M[..., 0, 0], M[..., 0, 1], M[..., 1, 0], M[..., 1, 1] = c, -s, s, c
    M[..., 2, 2] = 1
    M[..., 3, 3] = 1
    return M


def _tx(v):
    M = np.broadcast_to(np.eye(4), np.shape(v) + (4, 4)).copy()
    M[..., 0, 3] = v
    return M


def _tz(v):
    M = np.broadcast_to(np.eye(4), np.shape(v) + (4, 4)).copy()
    M[..., 2, 3] = v
    return M


def frames(a, Q):
    """World poses (K, n+2, 4, 4) of the base frame, frames 1..n and the tool, for joint values Q (K, n) internal."""
    Q = np.atleast_2d(np.asarray(Q, float))
    K = len(Q)
    base = pose(a["base"][0], _ang(a, a["base"][1]))
    tool = pose(a["tool"][0], _ang(a, a["tool"][1]))
    T = np.broadcast_to(base, (K, 4, 4)).copy()
    out = [T]
    for i, j in enumerate(a["joints"]):
        theta = _ang(a, j["theta"]) + (Q[:, i] if j["type"] == "revolute" else 0.0)
        d = j["d"] + (Q[:, i] if j["type"] == "prismatic" else 0.0)
        theta = np.broadcast_to(theta, (K,))
        d = np.broadcast_to(np.asarray(d, float), (K,))
        alpha = np.full(K, _ang(a, j["alpha"]))
        ai = np.full(K, float(j["a"]))
        if a["convention"] == "standard":  # Spong et al. ch. 3: Rz(θ) Tz(d) Tx(a) Rx(α)
            A = _rz(theta) @ _tz(d) @ _tx(ai) @ _rx(alpha)
        else:  # Craig ch. 3: Rx(α_{i-1}) Tx(a_{i-1}) Rz(θ_i) Tz(d_i); row i holds a_{i-1}, α_{i-1}
            A = _rx(alpha) @ _tx(ai) @ _rz(theta) @ _tz(d)
        T = T @ A
        out.append(T)
    out.append(T @ tool)
    return np.stack(out, axis=1)


def fk(a, Q):
    """Tool pose (4, 4) for q (n,), or (K, 4, 4) for Q (K, n); internal units."""
    Q = np.asarray(Q, float)
    T = frames(a, Q)[:, -1]
    return T[0] if Q.ndim == 1 else T


def size(a):
    """The arm's size: the sum of every fixed offset (|(a, d)| of each row, the tool's offset) and the strokes.

    The same characteristic length as the project's documented "arm size" (each joint's and the tool's
    fixed offsets plus each slide's largest extent); written here from that description.
    """
    s = 0.0
    for j in a["joints"]:
        s += math.hypot(j["a"], j["d"]) if a["convention"] == "standard" else abs(j["a"]) + abs(j["d"])
        if j["type"] == "prismatic":
            s += max(abs(j["min"]), abs(j["max"]))
    s += float(np.linalg.norm(a["tool"][0]))
    return s if s > 1e-12 else 1.0


def rot_error(R1, R2):
    """Angle (rad) of R1ᵀ R2."""
    M = np.asarray(R1).T @ np.asarray(R2)
    c = (np.trace(M) - 1.0) / 2.0
    s = 0.5 * math.sqrt((M[2, 1] - M[1, 2]) ** 2 + (M[0, 2] - M[2, 0]) ** 2 + (M[1, 0] - M[0, 1]) ** 2)
    return float(math.atan2(s, c))


def errors(a, q, xyz, R=None):
    """(position error in length unit, orientation error in rad) of q."""
    T = fk(a, q)
    pe = float(np.linalg.norm(T[:3, 3] - np.asarray(xyz, float)))
    oe = 0.0 if R is None else rot_error(T[:3, :3], R)
    return pe, oe


# --------------------------------------------------------------------------------------------- search
def _residual(a, Q, xyz, R, sc):
    T = fk(a, Q)
    r = [(T[:, :3, 3] - xyz) / sc]
    if R is not None:
        r.append((T[:, :3, :3] - R).reshape(len(Q), 9))
    return np.concatenate(r, axis=1)


def _lm(a, Q, xyz, R, sc, lo=None, hi=None, iters=120):
    """Batched Levenberg-Marquardt from rows Q (K, n); with lo/hi a projected step (box)."""
    Q = np.array(Q, float)
    n = Q.shape[1]
    rev = revolute(a)
    h = np.where(rev, 1e-7, 1e-7 * sc)
    lam = np.full(len(Q), 1e-2)
    r = _residual(a, Q, xyz, R, sc)
    cost = np.sum(r * r, axis=1)
    for _ in range(iters):
        J = np.empty(r.shape + (n,))
        for i in range(n):
            Qh = Q.copy()
            Qh[:, i] += h[i]
            J[:, :, i] = (_residual(a, Qh, xyz, R, sc) - r) / h[i]
        JtJ = np.einsum("kri,krj->kij", J, J)
        g = np.einsum("kri,kr->ki", J, r)
        A = JtJ + lam[:, None, None] * (np.eye(n) * (np.einsum("kii->ki", JtJ)[:, :, None] + 1e-9))
        step = -np.linalg.solve(A, g[..., None])[..., 0]
        Qn = Q + step
        if lo is not None:
            Qn = np.clip(Qn, lo, hi)
        rn = _residual(a, Qn, xyz, R, sc)
        cn = np.sum(rn * rn, axis=1)
        better = cn < cost
        Q[better], r[better], cost[better] = Qn[better], rn[better], cn[better]
        lam = np.where(better, lam * 0.3, lam * 10.0)
        lam = np.clip(lam, 1e-12, 1e8)
        if np.all(cost < 1e-26):
            break
    return Q, cost


def _polish(a, q, xyz, R, sc, lo=None, hi=None):
    def f(x):
        return _residual(a, x[None], xyz, R, sc)[0]

    if lo is None:
        m = 3 if R is None else 12
        res = least_squares(f, q, method="lm" if m >= len(q) else "trf", xtol=1e-15, ftol=1e-15, gtol=1e-15,
                            max_nfev=2000)
    else:
        x0 = np.clip(q, lo, hi)
        # keep the start strictly inside the box for "trf"
        x0 = np.where(x0 <= lo, lo + 1e-12 * (hi - lo), np.where(x0 >= hi, hi - 1e-12 * (hi - lo), x0))
        res = least_squares(f, x0, bounds=(lo, hi), method="trf", xtol=1e-15, ftol=1e-15, gtol=1e-15,
                            max_nfev=2000)
    return res.x


def starts(a, K, rng, bounded=False):
    """K random starts: revolute joints over their whole turn (or within limits), slides within limits."""
    lo, hi = limits(a)
    rev = revolute(a)
    U = rng.random((K, len(rev)))
    if bounded:
        return lo + U * (hi - lo)
    span_lo = np.where(rev, -math.pi, lo - 0.5 * (hi - lo))
    span_hi = np.where(rev, math.pi, hi + 0.5 * (hi - lo))
    return span_lo + U * (span_hi - span_lo)


def wrapped(a, q):
    """Revolute values into (-π, π]."""
    rev = revolute(a)
    w = math.pi - np.mod(math.pi - np.asarray(q, float), TWO_PI)
    return np.where(rev, w, q)


def same(a, q1, q2, tol=1e-5):
    """q1 and q2 are the same configuration modulo full turns (revolute) — slides compared by arm size."""
    rev = revolute(a)
    d = np.asarray(q1, float) - np.asarray(q2, float)
    d = np.where(rev, np.abs(wrapped(a, d)), np.abs(d) / size(a))
    return bool(np.all(d < tol))


def distinct(a, Q, tol=1e-5):
    out = []
    for q in Q:
        if not any(same(a, q, p, tol) for p in out):
            out.append(np.asarray(q, float))
    return out


def solve_all(a, xyz, R=None, K=300, seed=1, tol=1e-9, extra_starts=None):
    """Every distinct solution found from K random starts over the whole turns (revolute values wrapped).

    Returns a list of q (n,) internal units, each reaching within ``tol`` of the arm size (position)
    and ``tol`` rad (orientation).
    """
    rng = np.random.default_rng(seed)
    sc = size(a)
    xyz = np.asarray(xyz, float)
    S = starts(a, K, rng)
    if extra_starts is not None:
        S = np.vstack([np.atleast_2d(extra_starts), S])
    Q, cost = _lm(a, S, xyz, R, sc)
    good = Q[cost < 1e-12]
    found = []
    for q in distinct(a, good, 1e-4):
        q = _polish(a, q, xyz, R, sc)
        pe, oe = errors(a, q, xyz, R)
        if pe <= tol * sc and oe <= tol:
            found.append(wrapped(a, q))
    return distinct(a, found)


def solve_bounded(a, xyz, R=None, K=200, seed=2, tol=1e-9, extra_starts=None):
    """Solutions within the limits (projected search from K starts inside the box): list of q (n,)."""
    rng = np.random.default_rng(seed)
    sc = size(a)
    lo, hi = limits(a)
    xyz = np.asarray(xyz, float)
    S = starts(a, K, rng, bounded=True)
    if extra_starts is not None:
        S = np.vstack([np.clip(np.atleast_2d(extra_starts), lo, hi), S])
    Q, cost = _lm(a, S, xyz, R, sc, lo, hi)
    good = Q[cost < 1e-12]
    found = []
    for q in distinct(a, good, 1e-4):
        q = _polish(a, q, xyz, R, sc, lo, hi)
        pe, oe = errors(a, q, xyz, R)
        if pe <= tol * sc and oe <= tol and np.all(q >= lo - 1e-12) and np.all(q <= hi + 1e-12):
            found.append(q)
    return distinct(a, found)


def closest_bounded(a, xyz, R=None, K=200, seed=3):
    """The smallest position error within the limits (length unit) over K bounded starts, and its q."""
    rng = np.random.default_rng(seed)
    sc = size(a)
    lo, hi = limits(a)
    xyz = np.asarray(xyz, float)
    S = starts(a, K, rng, bounded=True)
    Q, cost = _lm(a, S, xyz, None, sc, lo, hi, iters=200)
    order = np.argsort(cost)[:8]
    best, bq = np.inf, None
    for k in order:
        q = _polish(a, Q[k], xyz, None, sc, lo, hi)
        pe = errors(a, q, xyz)[0]
        if pe < best:
            best, bq = pe, q
    return best, bq


def fits_limits(a, q, tol=1e-9):
    """Some whole-turn shift of q (revolute joints) lies within every limit (tol rad / tol of the stroke)."""
    return bool(np.all(shift_into_limits(a, q, tol)[1]))


def shift_into_limits(a, q, tol=1e-9):
    """(q moved by whole turns into the limits where possible, (n,) bool: that joint fits)."""
    lo, hi = limits(a)
    rev = revolute(a)
    q = np.asarray(q, float).copy()
    ok = np.zeros(len(q), bool)
    for i in range(len(q)):
        t = tol if rev[i] else tol * max(1.0, hi[i] - lo[i])
        if rev[i]:
            k = math.ceil((lo[i] - t - q[i]) / TWO_PI)
            v = q[i] + k * TWO_PI
            if v <= hi[i] + t:
                q[i] = v
                ok[i] = True
        else:
            ok[i] = lo[i] - t <= q[i] <= hi[i] + t
    return q, ok


def turn_count(a, q, tol=1e-9):
    """How many turn variants of q (n,) lie within limits: the product over revolute joints of the fitting turns."""
    lo, hi = limits(a)
    rev = revolute(a)
    total = 1
    for i in range(len(q)):
        if rev[i]:
            kmin = math.ceil((lo[i] - tol - q[i]) / TWO_PI)
            kmax = math.floor((hi[i] + tol - q[i]) / TWO_PI)
            total *= max(0, kmax - kmin + 1)
        else:
            total *= int(lo[i] - 1e-9 <= q[i] <= hi[i] + 1e-9)
    return total


def with_limits(a, i, lo, hi):
    """A copy of arm ``a`` whose joint i has limits [lo, hi] (arm units)."""
    import copy

    b = copy.deepcopy(a)
    b["joints"][i]["min"], b["joints"][i]["max"] = lo, hi
    return b


# --------------------------------------------------------------------------------------------- round two
def jacobian(a, q, h=1e-6):
    """The geometric Jacobian (6, n) at q by central differences of :func:`fk`: tool-point velocity over the
    angular velocity (the rotation vector of R(q + h e_i) R(q)ᵀ; scipy.spatial.transform.Rotation.as_rotvec)."""
    q = np.asarray(q, float)
    n = len(q)
    R0 = fk(a, q)[:3, :3]
    J = np.zeros((6, n))
    for i in range(n):
        d = np.zeros(n)
        d[i] = h
        Tp, Tm = fk(a, q + d), fk(a, q - d)
        J[:3, i] = (Tp[:3, 3] - Tm[:3, 3]) / (2 * h)
        J[3:, i] = (Rotation.from_matrix(Tp[:3, :3] @ R0.T).as_rotvec()
                    - Rotation.from_matrix(Tm[:3, :3] @ R0.T).as_rotvec()) / (2 * h)
    return J

