"""``poser place ARM.toml TARGETS.csv --x A..B --y C..D``: where to mount the arm so that it reaches the job.

Exit status 0 when the best placement reaches every target within limits (and every row was read), 1 when it
does not (or some row was skipped as malformed), 2 on bad input or an output that cannot be written.
"""

from __future__ import annotations

import json
import math

import numpy as np

from poser import report
from poser.cli.args import (
    UsageError,
    check_png,
    draw,
    load_arm,
    load_targets,
    parse_count,
    parse_list,
    parse_range,
    progress_printer,
    same_file,
    write_output,
)
from poser.cli.reach import CSV_HELP, study_json

__all__ = ["add_parser", "run", "placement_json", "placed_spec"]

HELP = "where to mount the arm: base positions (and yaw) scored by the targets reached"


def add_parser(make):
    import argparse

    p = make(
        "place",
        description="Search base positions (and yaw) on a grid for where to mount the arm: each placement is "
        "scored by the number of targets reached within limits, then by the smallest limit margin over them, then "
        "by the smallest manipulability. Prints the best placements and the reach study of the best; draws a "
        "coverage map (--png) and writes the arm file with the chosen [base] (--out-arm). The work is split over "
        "the machine's cores, or over a dask.distributed cluster with --scheduler. Exit 0 when the best placement "
        "reaches every target, 1 when not, 2 on bad input.\n\n"
        "Ranges are LOW..HIGH in the arm's units (one number: that value alone); both ends are searched.\n\n"
        + CSV_HELP,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("arm", metavar="ARM.toml")
    p.add_argument("targets", metavar="TARGETS.csv")
    p.add_argument("--x", required=True, metavar="A..B", help="base x range (world, arm length unit)")
    p.add_argument("--y", required=True, metavar="C..D", help="base y range (world, arm length unit)")
    p.add_argument("--z", metavar="E..F", help="base height range (default: the arm file's base z)")
    p.add_argument("--yaw", metavar="G..H", help="base yaw range about world Z, arm angle unit (default: the arm "
                   "file's base yaw); roll and pitch stay as in the file")
    p.add_argument("--step", metavar="S", help="largest spacing of x, y, z (arm length unit; default: the widest "
                   "range / 20)")
    p.add_argument("--yaw-step", metavar="T", help="largest spacing of yaw (arm angle unit; default 15 deg)")
    p.add_argument("--top", default="5", metavar="K", help="best placements listed (1 … 100; default 5)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--png", metavar="COVERAGE.png", help="draw the coverage map into a PNG")
    p.add_argument("--out-arm", metavar="PLACED.toml", help="write the arm file with the best [base] (a new file; "
                   "everything else of the arm file kept)")
    p.add_argument("--scheduler", metavar="ADDRESS", help="spread the work over a dask.distributed cluster "
                   "(e.g. tcp://10.0.0.5:8786; needs poser[cluster])")
    p.add_argument("--workers", metavar="N", help="processes on this machine (default: one per core for a large "
                   "search; 1: this process only)")
    return p


def _positive(text, what):
    v = float(parse_list(text, what, 1)[0])
    if not v > 0:
        raise UsageError(f"{what} must be a positive number, got {text!r}")
    return v


def placed_spec(spec, chain, placed):
    """A copy of ``spec`` with its ``[base]`` at ``placed`` (xyz in the arm's length unit; roll and pitch as
    written, yaw from the search, in the arm's angle unit)."""
    new = spec.copy()
    new.base_xyz = tuple(float(v) for v in placed.xyz)
    r, p, _ = spec.base_rpy
    new.base_rpy = (r, p, float(chain.units.angle_out(placed.yaw)))
    return new


def _axis_json(values, unit, convert=None):
    v = [float(convert(x) if convert else x) for x in values]
    return {"from": v[0], "to": v[-1], "count": len(v), "unit": unit}


def placement_json(chain, result, targets) -> dict:
    """The JSON object of ``poser place`` without the reach study (arm units)."""
    g = result.grid
    units = chain.units
    aout = units.angle_out

    def placed(rank, b):
        j = b.margin_joint
        return {"rank": rank, "index": b.index, "xyz": [float(v) for v in b.xyz], "yaw": float(aout(b.yaw)),
                "reached": b.reached, "count": result.targets,
                "margin_percent": None if j is None else 100.0 * b.margin,
                "margin_joint": None if j is None else chain.names[j],
                "margin_target": None if b.margin_target is None else targets[b.margin_target].name,
                "manipulability": None if not math.isfinite(b.manipulability) else b.manipulability,
                "words": report.placement_words(chain, b, result.targets, [t.name for t in targets])}

    return {
        "grid": {"x": _axis_json(g.x, units.length), "y": _axis_json(g.y, units.length),
                 "z": _axis_json(g.z, units.length), "yaw": _axis_json(g.yaw, units.angle, aout),
                 "roll": float(aout(g.roll)), "pitch": float(aout(g.pitch)), "placements": g.size},
        "best": [placed(k + 1, b) for k, b in enumerate(result.best)],
        "coverage": {"x": [float(v) for v in g.x], "y": [float(v) for v in g.y],
                     "reached": result.coverage().tolist(),
                     "meaning": "targets reached per base (y row, x column), best over the heights and yaws searched"},
    }


def run(args) -> int:
    """Run ``poser place`` for parsed ``args``; return the exit status."""
    from poser.core.errors import PoserValueError
    from poser.core.place import grid, place
    from poser.core.reach import reach

    spec, chain = load_arm(args.arm)
    tf = load_targets(args.targets, chain)
    units = chain.units
    x, y = parse_range(args.x, "--x"), parse_range(args.y, "--y")
    z = parse_range(args.z, "--z") if args.z is not None else None
    yaw = tuple(float(units.angle_in(v)) for v in parse_range(args.yaw, "--yaw")) if args.yaw is not None else None
    step = _positive(args.step, "--step") if args.step is not None else None
    yaw_step = float(units.angle_in(_positive(args.yaw_step, "--yaw-step"))) if args.yaw_step is not None else None
    top = parse_count(args.top, "--top", 1, 100)
    workers = parse_count(args.workers, "--workers", 1, 1024) if args.workers is not None else None
    if args.png:
        check_png(args.png)
    if args.out_arm:
        for src in (args.arm, args.targets):
            if same_file(args.out_arm, src):
                raise UsageError(f"--out-arm must name a new file, not an input; got {args.out_arm!r}, which is "
                                 f"{src!r}")
    base_rpy = np.asarray(units.angle_in(np.array(spec.base_rpy, float)), float)
    try:
        g = grid(chain, x, y, z, yaw, step, yaw_step, base_rpy=base_rpy)
    except PoserValueError as exc:
        raise UsageError(f"--x/--y/--z/--yaw/--step: {exc}") from None
    scheduler = args.scheduler
    if scheduler is not None:
        try:
            import distributed  # noqa: F401
        except ImportError:
            raise UsageError("--scheduler needs dask.distributed, which is not installed (pip install "
                             "'poser[cluster]')") from None
    try:
        result = place(chain, tf.targets, g, top=top, progress=progress_printer("place"), workers=workers,
                       scheduler=scheduler)
    except PoserValueError as exc:
        raise UsageError(f"--scheduler: {exc}" if scheduler is not None else str(exc)) from None
    best = result.best[0]
    placed_chain = chain.with_base(best.base)
    study = reach(placed_chain, tf.targets, progress=progress_printer("reach study of the best placement"))
    if study.faults:
        bad = next(v for v in study.verdicts if v.status == "fault")
        raise UsageError(f"line {bad.target.line} '{report.printable(bad.target.name)}': "
                         f"{report.reach_words(placed_chain, bad)}")
    code = 0 if study.reached == len(study.verdicts) and not tf.skipped else 1
    if args.out_arm:
        from poser.armfile import ArmFileError, dumps

        try:
            text = dumps(placed_spec(spec, chain, best), args.out_arm)
        except ArmFileError as exc:
            raise UsageError(f"--out-arm: the placed arm is not valid: {exc.problems[0]}") from None
        write_output(args.out_arm, text, "--out-arm", (args.arm, args.targets))
    if args.png:
        draw("coverage", "draw_coverage", chain, result, tf.targets, path=args.png)
    if args.json:
        out = {"arm": chain.name, "units": {"length": units.length, "angle": units.angle},
               "targets_file": tf.file, **placement_json(chain, result, tf.targets),
               "study": study_json(placed_chain, study, tf), "png": args.png, "out_arm": args.out_arm}
        print(json.dumps(out, indent=2))
        return code
    L, A = units.length, units.angle
    print(f"Arm '{report.printable(chain.name)}' — lengths in {L}, angles in {A}; targets from "
          f"{report.printable(args.targets)} ({len(tf.targets)} targets)")
    print(f"Searched {g.size} placements: x {report.fmt(g.x[0], 3)} … {report.fmt(g.x[-1], 3)} ({len(g.x)}), "
          f"y {report.fmt(g.y[0], 3)} … {report.fmt(g.y[-1], 3)} ({len(g.y)}), z {report.fmt(g.z[0], 3)} … "
          f"{report.fmt(g.z[-1], 3)} ({len(g.z)}) {L}; yaw {report.fmt(float(units.angle_out(g.yaw[0])), 2)} … "
          f"{report.fmt(float(units.angle_out(g.yaw[-1])), 2)} ({len(g.yaw)}) {A}; roll and pitch as in the arm file")
    print("Best placements (targets reached, then smallest limit margin, then smallest manipulability):")
    for k, b in enumerate(result.best):
        print(f"  {k + 1}. {report.placement_words(chain, b, result.targets, [t.name for t in tf.targets])}")
    print(f"Reach study with the base at the best placement: {report.reach_summary(placed_chain, study, tf.skipped)}")
    missed = [v for v in study.verdicts if not v.reachable]
    for v in missed:
        print(f"  line {v.target.line} '{report.printable(v.target.name)}': {report.reach_words(placed_chain, v)}")
    if args.out_arm:
        print(f"Arm file with the chosen [base] written to {report.printable(args.out_arm)}")
    if args.png:
        print(f"Coverage map written to {report.printable(args.png)}")
    print(report.PLACEMENT_NOTE)
    print(report.STUDY_CAUTION)
    return code
