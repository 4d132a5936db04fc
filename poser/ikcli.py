"""``poser ik``: every inverse-kinematics branch for a tool pose, as a table or JSON.

Every value is read and printed in the arm's own units.  Exit status 0 when
some branch reaches the target within limits, 1 when none does, 2 on bad
input or a solver fault (raised as :class:`poser.cli.UsageError`).
"""

from __future__ import annotations

import json

import numpy as np

from poser.cli import UsageError, _fmt, parse_list

__all__ = ["run_ik", "result_to_json"]


def _branch_json(chain, b, near_user=None):
    units = chain.units
    q_user = chain.q_to_user(b.q)
    viol = []
    for v in b.violations:
        conv = (lambda x: float(units.angle_out(x))) if chain.revolute[v.joint] else float
        viol.append(
            {
                "joint": v.name,
                "index": v.joint,
                "side": v.side,
                "limit": conv(v.limit),
                "value": conv(v.value),
                "excess": conv(v.excess),
            }
        )
    out = {
        "joints": [float(x) for x in q_user],
        "label": b.label,
        "configuration": b.configuration,
        "within_limits": bool(b.within_limits),
        "violations": viol,
        "reaches": bool(b.reaches),
        "position_error": float(b.position_error),
        "orientation_error": float(units.angle_out(b.orientation_error)),
        "manipulability": float(b.manipulability),
    }
    if near_user is not None:
        out["distance"] = float(np.linalg.norm(q_user - near_user))
    return out


def result_to_json(chain, result, xyz, rpy_user=None, near_user=None) -> dict:
    """The JSON object of ``poser ik`` for an :class:`~poser.core.ik.IKResult` (arm units)."""
    units = chain.units
    out = {
        "arm": chain.name,
        "units": {"length": units.length, "angle": units.angle},
        "target": {
            "xyz": [float(v) for v in xyz],
            "rpy": None if rpy_user is None else [float(v) for v in rpy_user],
        },
        "position_only": bool(result.position_only),
        "reachable": bool(result.reachable),
        "solver": result.solver,
        "redundant": bool(result.redundant),
        "message": result.message,
        "joint_names": list(chain.names),
        "joint_units": [units.joint_unit(k) for k in chain.kinds],
        "distance_unit": None if near_user is None else distance_unit(chain),
        "branches": [_branch_json(chain, b, near_user) for b in result.branches],
        "closest": None if result.closest is None else _branch_json(chain, result.closest, near_user),
        "nearest_point": None if result.nearest_point is None else [float(v) for v in result.nearest_point],
    }
    if result.nearest_point is not None:
        out["nearest_distance"] = float(np.linalg.norm(np.asarray(result.nearest_point) - np.asarray(xyz)))
    return out


def distance_unit(chain) -> str:
    """Unit of the joint-space distance from ``--near``: the joint unit, or both when the arm mixes them."""
    units = sorted({chain.units.joint_unit(k) for k in chain.kinds}, key=lambda u: u != chain.units.angle)
    return " & ".join(units)


def _table(chain, branches, near_user, position_only=False):
    units = chain.units
    A, Lu = units.angle, units.length
    heads = ["#"] + [f"{n} [{units.joint_unit(k)}]" for n, k in zip(chain.names, chain.kinds)]
    heads += [f"pos err [{Lu}]", f"ori err [{A}]", "manip.", "limits"]
    if near_user is not None:
        heads.append(f"distance [{distance_unit(chain)}]")
    heads.append("configuration")
    rows = []
    for i, b in enumerate(branches, 1):
        q_user = chain.q_to_user(b.q)
        row = [str(i)] + [f"{round(float(v), 3) + 0.0:.3f}" for v in q_user]
        # position only: no orientation was asked for, so there is no orientation error to show
        ori = "–" if position_only else f"{float(units.angle_out(b.orientation_error)):.3g}"
        pos = f"{b.position_error:.0f}" if b.position_error >= 1000 else f"{b.position_error:.3g}"  # not 4.12e+03
        row += [pos, ori]
        row += [f"{b.manipulability:.4g}"]
        if b.within_limits:
            row.append("ok")
        else:
            row.append("beyond " + ", ".join(f"{v.name} {v.side}" for v in b.violations))
        if near_user is not None:
            row.append(f"{np.linalg.norm(q_user - near_user):.3f}")
        row.append(b.label + ("" if b.reaches else "  (does not reach)"))
        rows.append(row)
    widths = [max(len(h), *(len(r[c]) for r in rows)) if rows else len(h) for c, h in enumerate(heads)]
    last = len(heads) - 1

    def line(cells):
        parts = []
        for c, cell in enumerate(cells):
            if c == last:
                parts.append(cell)
            elif c == 0 or c > chain.n + 3:
                parts.append(cell.ljust(widths[c]))
            else:
                parts.append(cell.rjust(widths[c]))
        return "  ".join(parts).rstrip()

    out = [line(heads)]
    out += [line(r) for r in rows]
    return out


def run_ik(args, spec, chain) -> int:
    """Run ``poser ik`` for parsed ``args`` (strings) on the loaded arm; return the exit status."""
    from poser.core.ik import solve
    from poser.core.transforms import rpy_to_matrix

    units = chain.units
    xyz = parse_list(args.xyz, "--xyz", 3)
    rpy_user = None
    R = None
    if getattr(args, "rpy", None) is not None:
        rpy_user = parse_list(args.rpy, "--rpy", 3)
        R = rpy_to_matrix(np.asarray(units.angle_in(rpy_user), float))
    near_user = None
    near = None
    if getattr(args, "near", None) is not None:
        near_user = parse_list(args.near, "--near", chain.n)
        near = chain.q_from_user(near_user)
    result = solve(chain, xyz, R, near, time_budget=0.5)
    if result.solver == "none":
        # The solver broke on this input (it reports rather than raises): that is no verdict on reach,
        # so it must not read as "not reachable" (exit 1).
        raise UsageError(f"{result.message} This is a fault in Poser, not an answer about the target.")
    code = 0 if result.reachable else 1
    if getattr(args, "json", False):
        print(json.dumps(result_to_json(chain, result, xyz, rpy_user, near_user), indent=2))
        return code
    Lu, A = units.length, units.angle
    print(f"Arm {chain.name!r} — lengths in {Lu}, angles in {A}")
    target = f"xyz = {', '.join(_fmt(v) for v in xyz)} {Lu}"
    if rpy_user is not None:
        target += f"; rpy = {', '.join(_fmt(v) for v in rpy_user)} {A} (about fixed X, Y, Z)"
    else:
        target += " (position only)"
    print(f"Target: {target}")
    print(f"Solver: {result.solver}")
    reaching = [b for b in result.branches if b.reaches]
    missing = [b for b in result.branches if not b.reaches]
    if reaching:
        print(f"Branches that reach the target ({len(reaching)}; within limits first):")
        print("\n".join(_table(chain, reaching, near_user, result.position_only)))
    else:
        print("No branch reaches the target.")
    if missing:
        # Candidates of the arm's structure that cannot reach this target: listed apart, so the
        # table above holds only real solutions.
        print(f"Configurations that do not reach it ({len(missing)}):")
        shown = 8 if reaching else 4
        tol_p, tol_r = result.tolerance
        for b in missing[:shown]:
            limits = "" if b.within_limits else "; also beyond " + ", ".join(f"{v.name} {v.side}" for v in b.violations)
            miss = []
            if b.position_error > tol_p:
                miss.append(f"the position by {b.position_error:.4g} {Lu}")
            if b.orientation_error > tol_r:
                miss.append(f"the orientation by {float(units.angle_out(b.orientation_error)):.4g} {A}")
            print(f"  {b.label} — misses {' and '.join(miss) or 'by a hair'}{limits}")
        if len(missing) > shown:
            print(f"  … and {len(missing) - shown} more (see --json)")
    if result.closest is not None:
        print("Closest approach within limits:")
        print("\n".join(_table(chain, [result.closest], near_user, result.position_only)))
    if result.nearest_point is not None:
        npnt = result.nearest_point
        print(f"Nearest reachable point: {', '.join(_fmt(v) for v in npnt)} {Lu}")
    if reaching or result.closest is not None:
        print(
            f"manip. = manipulability √det(J·Jᵀ) (Yoshikawa), Jacobian lengths in {Lu}; "
            "it falls to 0 at a singularity."
        )
    print(result.message)
    return code
