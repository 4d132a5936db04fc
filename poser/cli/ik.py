"""``poser ik ARM.toml --xyz … [--rpy …]``: every inverse-kinematics branch for a tool pose, as a table or JSON.

Every value is read and printed in the arm's own units.  Exit status 0 when
some branch reaches the target within limits, 1 when none does, 2 on bad
input or a solver fault (a fault is no verdict on reach).
"""

from __future__ import annotations

import json

import numpy as np

from poser import report
from poser.cli.args import UsageError, load_arm, parse_list

__all__ = ["add_parser", "run", "result_to_json"]

HELP = "every joint solution for a tool pose"


def add_parser(make):
    p = make(
        "ik",
        description="Inverse kinematics: every branch that puts the tool at a pose. "
        "Exit 0 when reachable within limits, 1 when not, 2 on bad input or a solver fault.",
    )
    p.add_argument("arm", metavar="ARM.toml")
    p.add_argument("--xyz", required=True, metavar="X,Y,Z", help="tool position in world coordinates, arm length unit")
    p.add_argument(
        "--rpy",
        metavar="R,P,Y",
        help="tool orientation (roll, pitch, yaw about fixed X, Y, Z), arm angle unit; "
        "without it the solve is position-only",
    )
    p.add_argument("--near", metavar="V1,V2,…", help="present joint values; branches are ranked by distance from them")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    return p


def _user(chain, i, v):
    return float(chain.joint_to_user(i, v))


def family_json(chain, fam) -> dict | None:
    """The JSON object of a :class:`poser.core.ik.Family` (arm units), or None."""
    if fam is None:
        return None
    ranges = None
    if fam.ranges is not None:
        if fam.kind == "turn":
            ranges = {"tool turn": [[float(chain.units.angle_out(a)), float(chain.units.angle_out(b))]
                                    for a, b in fam.ranges[0]]}
        else:
            ranges = {chain.names[j]: [[_user(chain, j, a), _user(chain, j, b)] for a, b in r]
                      for j, r in zip(fam.joints, fam.ranges)}
    return {
        "kind": fam.kind,
        "free": list(fam.free),
        "parameters": [chain.names[j] for j in fam.joints],
        "follows": [chain.names[j] for j in fam.follows],
        "within_limits_range": ranges,
        "within_limits_fraction": float(fam.fraction),
        "within_limits": bool(fam.within_limits),
        "samples": int(fam.samples),
        "complete": bool(fam.complete),
        "words": report.family_words(chain, fam),
    }


def _branch_json(chain, b):
    from poser.core.jacobian import condition_number

    units = chain.units
    viol = [
        {"joint": v.name, "index": v.joint, "side": v.side, "limit": _user(chain, v.joint, v.limit),
         "value": _user(chain, v.joint, v.value), "excess": _user(chain, v.joint, v.excess)}
        for v in b.violations
    ]
    kappa = float(condition_number(chain, b.q))
    out = {
        "joints": [float(x) for x in chain.q_to_user(b.q)],
        "label": b.label,
        "configuration": b.configuration,
        "turns": list(b.turns),
        "within_limits": bool(b.within_limits),
        "violations": viol,
        "reaches": bool(b.reaches),
        "position_error": float(b.position_error),
        "orientation_error": float(units.angle_out(b.orientation_error)),
        "manipulability": float(b.manipulability),
        "condition": None if not np.isfinite(kappa) else kappa,
        "family": family_json(chain, b.family),
        "variants": int(b.variants),
    }
    if b.distance_parts is not None:
        a, ln = b.distance_parts
        parts = {}
        if chain.revolute.any():
            parts["angle"] = float(units.angle_out(a))
        if (~chain.revolute).any():
            parts["length"] = float(ln)
        out["distance_parts"] = parts
        out["distance"] = next(iter(parts.values())) if len(parts) == 1 else None
    return out


def result_to_json(chain, result, xyz, rpy_user=None, near_user=None) -> dict:
    """The JSON object of ``poser ik`` for an :class:`~poser.core.ik.IKResult` (arm units)."""
    from poser.core.jacobian import task_space
    from poser.core.transforms import matrix_to_rpy

    units = chain.units
    out = {
        "arm": chain.name,
        "units": {"length": units.length, "angle": units.angle},
        "target": {"xyz": [float(v) for v in xyz], "rpy": None if rpy_user is None else [float(v) for v in rpy_user]},
        "position_only": bool(result.position_only),
        "reachable": bool(result.reachable),
        "status": result.status,
        "solver": result.solver,
        "redundant": bool(result.redundant),
        "complete": bool(result.complete),
        "message": report.ik_message(chain, result),
        "joint_names": list(chain.names),
        "joint_units": [units.joint_unit(k) for k in chain.kinds],
        "distance_unit": None if near_user is None else _distance_unit(chain),
        "manipulability_unit": report.manipulability_unit(chain),
        "task_space": task_space(chain).name,
        "branch_count": int(result.total),
        "listed": len(result.branches),
        "unlisted": int(result.unlisted),
        "branches": [_branch_json(chain, b) for b in result.branches],
        "closest": None if result.closest is None else _branch_json(chain, result.closest),
        "nearest_point": None if result.nearest_point is None else [float(v) for v in result.nearest_point],
        "nearest_rpy": None if result.nearest_rotation is None else
        [float(v) for v in units.angle_out(matrix_to_rpy(result.nearest_rotation))],
    }
    if result.nearest_point is not None:
        out["nearest_distance"] = float(np.linalg.norm(np.asarray(result.nearest_point) - np.asarray(xyz)))
    return out


def _distance_unit(chain) -> str:
    """The unit(s) of the distance from ``--near``: the joint unit, or both when the arm mixes them."""
    units = []
    if chain.revolute.any():
        units.append(chain.units.angle)
    if (~chain.revolute).any():
        units.append(chain.units.length)
    return " & ".join(units)


def _table(chain, branches, with_distance, position_only=False):
    units = chain.units
    A, Lu = units.angle, units.length
    P = report.printable
    heads = ["#"] + [f"{P(n)} [{units.joint_unit(k)}]" for n, k in zip(chain.names, chain.kinds)]
    heads += [f"pos err [{Lu}]", f"ori err [{A}]", f"manip. [{report.manipulability_unit(chain)}]", "limits"]
    if with_distance:
        heads.append(f"distance [{_distance_unit(chain)}]")
    heads.append("configuration")
    rows = []
    digits = [report.joint_decimals(chain, k) for k in range(chain.n)]  # values that can be typed back in
    for i, b in enumerate(branches, 1):
        q_user = chain.q_to_user(b.q)
        row = [str(i)] + [f"{round(float(v), d) + 0.0:.{d}f}" for v, d in zip(q_user, digits)]
        ori = "–" if position_only else f"{float(units.angle_out(b.orientation_error)):.3g}"
        pos = f"{b.position_error:.0f}" if b.position_error >= 1000 else f"{b.position_error:.3g}"
        row += [pos, ori, report.manipulability_text(chain, b.manipulability).split(" ")[0]]
        row.append("ok" if b.within_limits else "beyond " + ", ".join(f"{P(v.name)} {v.side}" for v in b.violations))
        if with_distance:
            row.append(report.distance_text(chain, b).replace(f" {A}", "").replace(f" {Lu}", ""))
        label = P(b.label) + ("" if b.reaches else "  (does not reach)")
        if b.family is not None:
            label += " · family"
        row.append(label)
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
    for r, b in zip(rows, branches):
        out.append(line(r))
        if b.family is not None:
            out.append(f"   └ {report.family_words(chain, b.family)}")
    return out


def run(args) -> int:
    """Run ``poser ik`` for parsed ``args`` (strings); return the exit status."""
    from poser.core.ik import solve
    from poser.core.transforms import rpy_to_matrix

    spec, chain = load_arm(args.arm)
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
    result = solve(chain, xyz, R, near)
    if result.status == "fault":
        raise UsageError(report.ik_message(chain, result))
    code = 0 if result.reachable else 1
    if getattr(args, "json", False):
        print(json.dumps(result_to_json(chain, result, xyz, rpy_user, near_user), indent=2))
        return code
    Lu, A = units.length, units.angle
    print(f"Arm '{report.printable(chain.name)}' — lengths in {Lu}, angles in {A}")
    target = f"xyz = {', '.join(report.num(v) for v in xyz)} {Lu}"
    if rpy_user is not None:
        target += f"; rpy = {', '.join(report.num(v) for v in rpy_user)} {A} (about fixed X, Y, Z)"
    else:
        target += " (position only)"
    print(f"Target: {target}")
    print(f"Solver: {result.solver}")
    reaching = [b for b in result.branches if b.reaches]
    missing = [b for b in result.branches if not b.reaches]
    if reaching:
        more = f"; {result.unlisted} more turn variants not listed" if result.unlisted else ""
        print(f"Branches that reach the target ({len(reaching)} listed of {result.total} found{more}; "
              f"within limits first):")
        print("\n".join(_table(chain, reaching, near is not None, result.position_only)))
    else:
        print("No branch reaches the target.")
    if missing:
        print(f"Configurations that do not reach it ({len(missing)}):")
        shown = 8 if reaching else 4
        for b in missing[:shown]:
            limits = "" if b.within_limits else "; also beyond " + ", ".join(
                f"{report.printable(v.name)} {v.side}" for v in b.violations)
            print(f"  {report.printable(b.label)} — {report.miss_words(chain, b, result.position_only)}{limits}")
        if len(missing) > shown:
            print(f"  … and {len(missing) - shown} more (see --json)")
    if result.closest is not None:
        print("Closest approach within limits:")
        print("\n".join(_table(chain, [result.closest], near is not None, result.position_only)))
    if result.nearest_point is not None:
        print(f"Nearest reachable point: {report.nearest_point_words(chain, result)}")
    if reaching or result.closest is not None:
        print(f"manip. = {report.manipulability_tip(chain)}")
    print(report.ik_message(chain, result))
    return code
