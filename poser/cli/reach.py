"""``poser reach ARM.toml TARGETS.csv``: does the arm reach every target of a job, with which branch?

Exit status 0 when every row was read and every target is reached within limits, 1 when some target is
not reached or some row was skipped as malformed, 2 on bad input or a solver fault.
"""

from __future__ import annotations

import json

import numpy as np

from poser import report
from poser.cli.args import UsageError, load_arm, load_targets, parse_list, progress_printer, write_output
from poser.core.transforms import matrix_to_rpy

__all__ = ["add_parser", "run", "study_json", "verdict_json", "CSV_HELP"]

HELP = "reach study: every target of a CSV list checked, with its branch"

CSV_HELP = (
    "TARGETS.csv: a header line, then one target a row. Columns name,x,y,z (tool point, world, arm length "
    "unit); optional roll,pitch,yaw (tool orientation about fixed X, Y, Z, in the arm's angle unit — left "
    "empty on a row: position only) and free_spin (yes/no: any rotation about tool Z will do). Lines starting "
    "with # are comments. Malformed rows are reported by line number on stderr and skipped."
)


def add_parser(make):
    import argparse

    p = make(
        "reach",
        description="Reach study: check every target of a job against the arm — reached within limits or not, "
        "how many branches, the branch with the fewest joint moves from the target before (so the sequence keeps "
        "one branch where it can), its worst limit margin and manipulability; for a target not reached, how far "
        "off it is and what blocks. Exit 0 when every row was read and reached, 1 when not, 2 on bad input.\n\n"
        + CSV_HELP,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("arm", metavar="ARM.toml")
    p.add_argument("targets", metavar="TARGETS.csv")
    p.add_argument("--near", metavar="V1,V2,…",
                   help="the pose before the first target, joint values in the arm's units (default: home)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--out", metavar="REPORT.csv", help="also write the report as CSV (a new file or a report)")
    return p


def _user_joints(chain, q):
    return None if q is None else [float(v) for v in chain.q_to_user(np.asarray(q, float))]


def _rpy_user(chain, R):
    from poser.core.transforms import matrix_to_rpy

    return None if R is None else [float(v) for v in chain.units.angle_out(matrix_to_rpy(R))]


def verdict_json(chain, v):
    """One target's verdict as a JSON object (arm units)."""
    units = chain.units
    t = v.target
    margin = None
    if v.margin_joint is not None:
        j = v.margin_joint
        margin = {"joint": chain.names[j], "index": j, "value": float(chain.joint_to_user(j, v.margin)),
                  "unit": units.joint_unit(chain.kinds[j]), "fraction": v.margin_fraction,
                  "words": report.margin_words(chain, v.q, j)}
    move = None
    if v.move is not None:
        move = {}
        if chain.revolute.any():
            move["angle"] = float(units.angle_out(v.move[0]))
        if (~chain.revolute).any():
            move["length"] = float(v.move[1])
    return {
        "line": t.line,
        "name": t.name,
        "xyz": [float(x) for x in t.xyz],
        "rpy": _rpy_user(chain, t.R),
        "free_spin": bool(t.free_spin),
        "status": v.status,
        "reachable": v.reachable,
        "branches": int(v.branches),
        "joints": _user_joints(chain, v.q),
        "configuration": v.configuration,
        "turns": None if v.turns is None else list(v.turns),
        "family": None if v.family is None else report.family_words(chain, v.family),
        "spin": None if v.spin is None else float(units.angle_out(v.spin)),
        "move": move,
        "changed": bool(v.changed),
        "worst_margin": margin,
        "manipulability": v.manipulability,
        "miss": None if v.miss is None else {"position": float(v.miss[0]),
                                              "orientation": float(units.angle_out(v.miss[1]))},
        "nearest_point": None if v.nearest_point is None else [float(x) for x in v.nearest_point],
        "nearest_rpy": None if v.nearest_rotation is None else
        [float(x) for x in units.angle_out(matrix_to_rpy(v.nearest_rotation))],
        "blocked_by": [report.violation_words(chain, x) for x in v.violations],
        "decided_by": v.path,
        "fault": v.fault,
        "words": report.reach_words(chain, v),
    }


def study_json(chain, study, tf) -> dict:
    """The JSON object of ``poser reach`` (arm units)."""
    units = chain.units
    return {
        "arm": chain.name,
        "units": {"length": units.length, "angle": units.angle},
        "targets_file": tf.file,
        "orientation": "roll, pitch, yaw about fixed X, Y, Z in the arm's angle unit",
        "joint_names": list(chain.names),
        "joint_units": [units.joint_unit(k) for k in chain.kinds],
        "manipulability_unit": report.manipulability_unit(chain),
        "start": _user_joints(chain, study.start),
        "tolerance": {"position": study.tolerance[0], "orientation": float(units.angle_out(study.tolerance[1]))},
        "reached": study.reached,
        "count": len(study.verdicts),
        "skipped": [{"line": p.line, "message": p.message} for p in tf.problems if p.message.startswith("row skipped")],
        "warnings": [{"line": p.line, "message": p.message} for p in tf.problems
                     if not p.message.startswith("row skipped")],
        "summary": report.reach_summary(chain, study, tf.skipped),
        "targets": [verdict_json(chain, v) for v in study.verdicts],
    }


def _table(chain, study):
    units = chain.units
    P = report.printable
    rev, pri = chain.revolute.any(), (~chain.revolute).any()
    heads = ["line", "name", "verdict", "branches", "configuration"]
    if rev:
        heads.append(f"moves [{units.angle}]")
    if pri:
        heads.append(f"moves [{units.length}]")
    heads += ["worst limit margin", f"manip. [{report.manipulability_unit(chain)}]", f"spin [{units.angle}]"]
    rows = []
    for v in study.verdicts:
        a, b = report.move_cells(chain, v)
        config = report.configuration_cell(v)
        row = [str(v.target.line or ""), P(v.target.name), v.status, str(v.branches), config]
        if rev:
            row.append(a)
        if pri:
            row.append(b)
        man = report.manipulability_figure(chain, v.manipulability)
        row += [report.margin_cell(chain, v), man, report.spin_cell(chain, v.spin)]
        rows.append(row)
    widths = [max(len(h), *(len(r[c]) for r in rows)) for c, h in enumerate(heads)]
    right = {0, 3} | {i for i, h in enumerate(heads) if h.startswith(("moves", "manip.", "spin"))}

    def line(cells):
        return "  ".join(c.rjust(w) if i in right else c.ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))

    return [line(heads).rstrip()] + [line(r).rstrip() for r in rows]


def report_rows(chain, study):
    """(columns, rows) of the CSV report, every value in the arm's units (units in the column names)."""
    units = chain.units
    ju = [units.joint_unit(k) for k in chain.kinds]
    L, A = units.length, units.angle
    cols = ["line", "name", "status", "branches", "configuration"]
    cols += [f"{n} [{u}]" for n, u in zip(chain.names, ju)]
    cols += ["worst_margin_joint", "worst_margin", "worst_margin_unit", "worst_margin_percent",
             f"manipulability [{report.manipulability_unit(chain)}]", f"move [{A}]", f"move [{L}]", f"spin [{A}]",
             f"miss_position [{L}]", f"miss_orientation [{A}]", f"nearest_x [{L}]", f"nearest_y [{L}]",
             f"nearest_z [{L}]", "configuration_changed", "decided_by", "words"]
    rows = []

    def n(x):
        return "" if x is None else report.num(x)

    for v in study.verdicts:
        q = _user_joints(chain, v.q) or [None] * chain.n
        j = v.margin_joint
        r = [v.target.line or "", v.target.name, v.status, v.branches, v.configuration or ""]
        r += [n(x) for x in q]
        r += ["" if j is None else chain.names[j], "" if j is None else n(chain.joint_to_user(j, v.margin)),
              "" if j is None else ju[j], "" if j is None else n(100 * v.margin_fraction), n(v.manipulability)]
        r += [n(None if v.move is None else units.angle_out(v.move[0])), n(None if v.move is None else v.move[1]),
              n(None if v.spin is None else units.angle_out(v.spin))]
        r += [n(None if v.miss is None else v.miss[0]), n(None if v.miss is None else units.angle_out(v.miss[1]))]
        r += [n(x) for x in (v.nearest_point if v.nearest_point is not None else [None] * 3)]
        r += ["yes" if v.changed else "no", v.path, report.reach_words(chain, v)]
        rows.append(r)
    return cols, rows


def run(args) -> int:
    """Run ``poser reach`` for parsed ``args``; return the exit status."""
    from poser.core.reach import reach
    from poser.io.targets import report_csv

    spec, chain = load_arm(args.arm)
    tf = load_targets(args.targets, chain)
    start = None
    if getattr(args, "near", None) is not None:
        start = chain.q_from_user(parse_list(args.near, "--near", chain.n))
    study = reach(chain, tf.targets, start, progress=progress_printer("reach"))
    if study.faults:
        bad = next(v for v in study.verdicts if v.status == "fault")
        raise UsageError(f"line {bad.target.line} '{report.printable(bad.target.name)}': "
                         f"{report.reach_words(chain, bad)}")
    code = 0 if study.reached == len(study.verdicts) and not tf.skipped else 1
    if getattr(args, "out", None):
        cols, rows = report_rows(chain, study)
        write_output(args.out, report_csv(rows, cols), "--out", (args.arm, args.targets))
    if getattr(args, "json", False):
        print(json.dumps(study_json(chain, study, tf), indent=2))
        return code
    units = chain.units
    print(f"Arm '{report.printable(chain.name)}' — lengths in {units.length}, angles in {units.angle}; targets from "
          f"{report.printable(args.targets)} (roll, pitch, yaw about fixed X, Y, Z in {units.angle})")
    start_words = "home" if start is None else "the pose given by --near"
    print(f"Sequence from {start_words}: each target takes the branch with the fewest joint moves from the one "
          "before (a target not reached leaves the pose where it was).")
    print("\n".join(_table(chain, study)))
    missed = [v for v in study.verdicts if not v.reachable]
    if missed:
        print("Not reached:")
        for v in missed:
            print(f"  line {v.target.line} '{report.printable(v.target.name)}': {report.reach_words(chain, v)}")
    print(report.reach_summary(chain, study, tf.skipped))
    print(f"manip. = {report.manipulability_tip(chain)}")
    if getattr(args, "out", None):
        print(f"Report written to {report.printable(args.out)}")
    print("Poser plans nothing for a real robot: verify every result on the robot's controller.")
    return code
