"""``poser fk ARM.toml --joints …``: the tool pose for joint values, every frame, limits and singularity."""

from __future__ import annotations

import json
import sys

import numpy as np

from poser import report
from poser.cli.args import load_arm, parse_list

__all__ = ["add_parser", "run", "limit_warnings"]

HELP = "tool pose for joint values"


def add_parser(make):
    p = make("fk", description="Forward kinematics: the tool pose for joint values (arm units), with the "
                               "limit and singularity verdicts.")
    p.add_argument("arm", metavar="ARM.toml")
    p.add_argument("--joints", required=True, metavar="V1,V2,…", help="one value per joint, in the arm's units")
    p.add_argument("--frames", action="store_true", help="also print every frame's world pose")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    return p


def limit_warnings(chain, q) -> list[str]:
    """Plain-language warnings for joint values ``q`` (internal units) beyond their limits (arm units)."""
    out = []
    for i, (v, lo, hi) in enumerate(zip(q, chain.lower, chain.upper)):
        u = report.joint_unit(chain, i)
        vu, lu, hu = (chain.joint_to_user(i, x) for x in (v, lo, hi))
        name = report.printable(chain.names[i])
        if vu < lu:
            out.append(f"joint '{name}' = {report.num(vu)} {u} is below its lower limit {report.num(lu)} {u} "
                       f"by {report.num(lu - vu)} {u}")
        elif vu > hu:
            out.append(f"joint '{name}' = {report.num(vu)} {u} is above its upper limit {report.num(hu)} {u} "
                       f"by {report.num(vu - hu)} {u}")
    return out


def _matrix_lines(T, indent="  "):
    cells = [[report.num(x) for x in row] for row in T]
    w = max(len(c) for row in cells for c in row)
    return [indent + "[ " + "  ".join(c.rjust(w) for c in row) + " ]" for row in cells]


def singularity_json(chain, s) -> dict:
    """The JSON object of a :class:`poser.core.singularity.Singularity` (shared by fk and ik)."""
    from poser.core.jacobian import task_space

    level, words = report.singularity_words(chain, s)
    return {
        "level": s.level,
        "words": words,
        "condition": None if not np.isfinite(s.condition) else float(s.condition),
        "kinds": [{"kind": f.kind, "joints": [chain.names[j] for j in f.joints], "detail": f.detail or None}
                  for f in s.findings],
        "manipulability": float(s.manipulability),
        "manipulability_unit": report.manipulability_unit(chain),
        "task_space": task_space(chain).name,
    }


def run(args) -> int:
    from poser.core.singularity import assess
    from poser.core.transforms import as_xyz_rpy

    spec, chain = load_arm(args.arm)
    units = chain.units
    q_user = parse_list(args.joints, "--joints", chain.n)
    q = chain.q_from_user(q_user)
    warnings = limit_warnings(chain, q)
    F = chain.frames(q)
    T = chain.fk(q)
    xyz, rpy = as_xyz_rpy(T)
    rpy_user = units.angle_out(rpy)
    sing = assess(chain, q)
    names = ["base"] + [f"frame {i + 1} ({report.printable(n)})" for i, n in enumerate(chain.names)] + ["tool"]
    if args.json:
        out = {
            "arm": spec.name,
            "units": {"length": units.length, "angle": units.angle},
            "joints": q_user.tolist(),
            "tool": T.tolist(),
            "xyz": xyz.tolist(),
            "rpy": np.asarray(rpy_user).tolist(),
            "frames": F.tolist(),
            "frame_names": names,
            "warnings": warnings,
            "singularity": singularity_json(chain, sing),
            "manipulability": float(sing.manipulability),
            "manipulability_unit": report.manipulability_unit(chain),
        }
        print(json.dumps(out, indent=2))
        return 0
    L, A = units.length, units.angle
    print(f"Arm '{report.printable(spec.name)}' — lengths in {L}, angles in {A}")
    print("Joints: " + ", ".join(f"{report.printable(n)} = {report.num(v)} {report.joint_unit(chain, i)}"
                                 for i, (n, v) in enumerate(zip(chain.names, q_user))))
    print(f"Tool pose in world coordinates (translation column in {L}):")
    print("\n".join(_matrix_lines(T)))
    print(f"xyz = {', '.join(report.num(v) for v in xyz)} {L}")
    print(f"rpy = {', '.join(report.num(v) for v in rpy_user)} {A} (about fixed X, Y, Z)")
    level, words = report.singularity_words(chain, sing)
    print(f"Singularity: {words} (condition {report.condition_text(sing.condition)}; manipulability "
          f"{report.manipulability_text(chain, sing.manipulability)})")
    if args.frames:
        for name, Fi in zip(names, F):
            print(f"\nworld → {name}:")
            print("\n".join(_matrix_lines(Fi)))
    for w in warnings:
        print(f"warning: {w}", file=sys.stderr)
    return 0
