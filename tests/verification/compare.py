"""Poser's IK result judged by the independent reference: every discrepancy as a sentence."""

from __future__ import annotations

import numpy as np

from . import poserside as ps
from . import reference as ref


def limit_verdict(a, q, tol=1e-9):
    """{joint index: "lower" | "upper"} of q's joints beyond a limit (q as given, no turns moved)."""
    lo, hi = ref.limits(a)
    rev = ref.revolute(a)
    out = {}
    for i, v in enumerate(np.asarray(q, float)):
        t = tol if rev[i] else tol * max(1.0, hi[i] - lo[i])
        if v < lo[i] - t:
            out[i] = "lower"
        elif v > hi[i] + t:
            out[i] = "upper"
    return out


def check_branch(a, b, xyz, R, tol, what="branch"):
    """Problems with one Poser branch, judged by the reference FK and limits."""
    out = []
    pe, oe = ref.errors(a, b.q, xyz, R)
    if b.reaches and (pe > tol[0] * 1.001 + 1e-12 or oe > tol[1] * 1.001 + 1e-12):
        out.append(f"{what} {b.label!r} q={np.round(ref.to_user(a, b.q), 4).tolist()} says it reaches but the "
                   f"reference FK gives position error {pe:.3g}, orientation error {oe:.3g} rad")
    if abs(pe - b.position_error) > 1e-6 * ref.size(a):
        out.append(f"{what} {b.label!r}: position_error {b.position_error:.6g} but reference {pe:.6g}")
    viol = limit_verdict(a, b.q)
    if bool(b.within_limits) != (not viol):
        out.append(f"{what} {b.label!r} q={np.round(ref.to_user(a, b.q), 4).tolist()}: within_limits="
                   f"{b.within_limits} but reference finds violations {viol}")
    got = {v.joint: v.side for v in b.violations}
    if got != viol:
        out.append(f"{what} {b.label!r}: violations {got} but reference {viol}")
    return out


def covered(a, s, result):
    """Whether reference solution s (n,) is represented by a Poser branch (mod 2π) or a family's member."""
    for b in result.branches:
        if ref.same(a, s, b.q, 1e-4):
            return True
    return False


def compare(a, xyz, R=None, near=None, K=300, seed=1, result=None, **options):
    """(problems: list of str, result, reference solutions, bounded solutions)."""
    if result is None:
        result = ps.solve(a, xyz, R, near, **options)
    problems = []
    if result.status != "solved":
        return [f"solver fault: {result.fault}"], result, [], []
    tol = result.tolerance
    sc = ref.size(a)
    for b in result.branches:
        problems += check_branch(a, b, xyz, R, tol)
    sols = ref.solve_all(a, xyz, R, K=K, seed=seed)
    inside = ref.solve_bounded(a, xyz, R, K=max(50, K // 2), seed=seed + 1)
    for s in sols:
        if not covered(a, s, result):
            q_in, ok = ref.shift_into_limits(a, s)
            problems.append(f"reference solution q={np.round(ref.to_user(a, s), 4).tolist()} "
                            f"({'within limits' if ok.all() else 'beyond limits'}) is not among Poser's branches")
    any_in = any(ref.fits_limits(a, s) for s in sols) or bool(inside)
    if bool(result.reachable) != any_in:
        problems.append(f"reachable={result.reachable} but the reference finds "
                        f"{'a' if any_in else 'no'} within-limits solution"
                        + (f" (e.g. q={np.round(ref.to_user(a, inside[0]), 4).tolist()})" if inside else ""))
    if not result.reachable and result.closest is not None:
        c = result.closest
        if limit_verdict(a, c.q):
            problems.append(f"closest q={np.round(ref.to_user(a, c.q), 4).tolist()} is beyond limits "
                            f"{limit_verdict(a, c.q)}")
        best, _ = ref.closest_bounded(a, xyz, None, K=max(50, K // 2), seed=seed + 2)
        pe = ref.errors(a, c.q, xyz)[0]
        if pe > best + 1e-6 * sc:
            problems.append(f"closest misses by {pe:.9g} but the bounded reference search gets within {best:.9g}")
        if result.nearest_point is not None:
            T = ref.fk(a, c.q)
            if np.linalg.norm(T[:3, 3] - result.nearest_point) > 1e-9 * sc:
                problems.append("nearest_point is not the closest approach's tool point")
            back = ps.solve(a, result.nearest_point, None if R is None else result.nearest_rotation)
            if not back.reachable:
                problems.append(f"nearest_point {np.round(result.nearest_point, 6).tolist()} typed back is not "
                                "reachable")
    return problems, result, sols, inside


def member(a, s, b, tol=1e-4):
    """Reference solution s (n,) is branch b (mod 2π), or a member of b's joint family: equal to b's
    representative on every joint that neither parametrises the family nor follows it."""
    if ref.same(a, s, b.q, tol):
        return True
    f = b.family
    if f is None or f.kind != "joint":
        return False
    moving = set(f.joints) | set(f.follows)
    keep = [i for i in range(len(s)) if i not in moving]
    sub = {**a, "joints": [a["joints"][i] for i in keep]}
    return ref.same(sub, np.asarray(s)[keep], np.asarray(b.q)[keep], tol)


def in_ranges(v, ranges, tol=1e-6):
    """Angle v (rad) lies, by some whole turn, in one of the intervals ``ranges`` ((lo, hi) rad)."""
    for lo, hi in ranges:
        k = np.ceil((lo - tol - v) / ref.TWO_PI)
        if v + k * ref.TWO_PI <= hi + tol:
            return True
    return False


def compare_families(a, xyz, R=None, K=150, seed=1, result=None):
    """Like :func:`compare` for targets whose solutions form joint families (singular targets): every reference
    solution is a branch or a member of a family; a within-limits one is said to be within limits (an isolated
    branch within limits, or a family whose within-limits ranges hold its parameter values); ``reachable``
    agrees with the reference.  Returns (problems, result)."""
    if result is None:
        result = ps.solve(a, xyz, R)
    if result.status != "solved":
        return [f"solver fault: {result.fault}"], result
    problems = []
    for b in result.branches:
        problems += check_branch(a, b, xyz, R, result.tolerance)
    sols = ref.solve_all(a, xyz, R, K=K, seed=seed)
    inside = ref.solve_bounded(a, xyz, R, K=max(50, K // 2), seed=seed + 1)
    for s in sols + inside:
        hits = [b for b in result.branches if member(a, s, b)]
        where = f"reference solution q={np.round(ref.to_user(a, s), 4).tolist()}"
        if not hits:
            problems.append(f"{where} is neither a branch nor a member of a family")
        elif ref.fits_limits(a, s) and not any(
                b.within_limits if b.family is None
                else all(in_ranges(s[j], b.family.ranges[k]) for k, j in enumerate(b.family.joints)) for b in hits):
            problems.append(f"{where} is within limits but its branch or family says it is not")
    any_in = any(ref.fits_limits(a, s) for s in sols) or bool(inside)
    if bool(result.reachable) != any_in:
        problems.append(f"reachable={result.reachable} but the reference finds {'a' if any_in else 'no'} "
                        "within-limits solution")
    return problems, result
