"""``poser cube ARM.toml``: the performance-test cube in the workspace and its ISO 9283 positions (from memory).

Exit status 0 when every position is reached within limits with the chosen tool orientation, 1 when some is not
(or no cube fits), 2 on bad input or an output that cannot be written.
"""

from __future__ import annotations

import json

from poser import report
from poser.cli.args import UsageError, check_png, draw, load_arm, parse_count, parse_list, progress_printer
from poser.cli.reach import verdict_json
from poser.cli.workspace import MAX_SAMPLES

__all__ = ["add_parser", "run", "cube_json"]

HELP = "the performance-test cube and its ISO 9283 positions, checked for reach"


def add_parser(make):
    from poser.core.cube import DEFAULT_PLANE, PLANES

    p = make(
        "cube",
        description="The largest cube with edges along the base axes inside the workspace, and the test positions "
        "P1 … P5 on one of its diagonal planes as ISO 9283 lays them out (from memory of the standard: P1 at the "
        "centre, P2 … P5 at 10 % of the diagonal from the plane's corners), each checked for reach with the tool "
        "orientation you choose. Exit 0 when every position is reached, 1 when not, 2 on bad input.",
    )
    p.add_argument("arm", metavar="ARM.toml")
    p.add_argument("--rpy", metavar="R,P,Y", help="tool orientation at every position: roll, pitch, yaw about fixed "
                   "X, Y, Z in the arm's angle unit (default: the tool's orientation at home)")
    p.add_argument("--plane", default=DEFAULT_PLANE, metavar="P",
                   help=f"the diagonal plane: {', '.join(PLANES)} (default {DEFAULT_PLANE}: through the edges along "
                   "the base y axis at low x, low z and at high x, high z)")
    p.add_argument("--samples", default="300000", metavar="N",
                   help="joint samples of the workspace (1000 … 10000000; default 300000)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--png", metavar="OUT.png", help="draw the cube and its positions into a PNG")
    return p


def cube_json(chain, k) -> dict:
    """The JSON object of ``poser cube`` (arm units)."""
    from poser.core.transforms import matrix_to_rpy

    units = chain.units
    return {
        "arm": chain.name,
        "units": {"length": units.length, "angle": units.angle},
        "edge": k.edge,
        "accuracy": k.accuracy,
        "centre": [float(v) for v in k.centre],
        "axes": [[float(v) for v in col] for col in k.axes.T],
        "corners": [[float(v) for v in c] for c in k.corners],
        "plane": k.plane,
        "plane_corners": [[float(v) for v in c] for c in k.plane_corners],
        "positions": [{"name": v.target.name, "xyz": [float(x) for x in p], "status": v.status,
                       "reachable": v.reachable} for v, p in zip(k.study.verdicts, k.positions)],
        "rpy": None if k.R is None else [float(v) for v in units.angle_out(matrix_to_rpy(k.R))],
        "reached": k.reached,
        "workspace": {"volume": k.workspace.volume, "volume_error": k.workspace.error,
                      "resolution": k.workspace.resolution, "samples": k.workspace.samples},
        "note": report.ISO_9283_NOTE,
        "manipulability_unit": report.manipulability_unit(chain),
        "verdicts": [verdict_json(chain, v) for v in k.study.verdicts],
    }


def run(args) -> int:
    """Run ``poser cube`` for parsed ``args``; return the exit status."""
    from poser.core.cube import PLANES, cube
    from poser.core.errors import PoserValueError
    from poser.core.jacobian import task_space
    from poser.core.transforms import rpy_to_matrix

    spec, chain = load_arm(args.arm)
    samples = parse_count(args.samples, "--samples", 1000, MAX_SAMPLES)
    if args.plane not in PLANES:
        raise UsageError(f"--plane must be one of {', '.join(PLANES)}, got {args.plane!r}")
    R = None
    if args.rpy is not None:
        if task_space(chain).name == "position":
            raise UsageError(f"--rpy: '{report.printable(chain.name)}' sets only its tool position, so the positions "
                             f"are checked position only; got --rpy {args.rpy}")
        R = rpy_to_matrix(chain.units.angle_in(parse_list(args.rpy, "--rpy", 3)))
    if args.png:
        check_png(args.png)
    if task_space(chain).name.startswith("in-plane"):
        raise UsageError(f"ARM.toml: '{report.printable(chain.name)}' is a planar arm; its workspace is an area, "
                         "which holds no cube (run 'poser workspace' for the area)")
    try:
        k = cube(chain, R, plane=args.plane, samples=samples, progress=progress_printer("cube"))
    except PoserValueError as exc:
        raise UsageError(str(exc)) from None
    if k.study.faults:
        bad = next(v for v in k.study.verdicts if v.status == "fault")
        raise UsageError(f"{bad.target.name}: {report.reach_words(chain, bad)}")
    code = 0 if k.edge > 0 and k.reached == len(k.study.verdicts) else 1
    if args.png:
        draw("cube", "draw_cube", chain, k, path=args.png)
    if args.json:
        out = cube_json(chain, k)
        out["png"] = args.png
        print(json.dumps(out, indent=2))
        return code
    print(f"Arm '{report.printable(chain.name)}' — lengths in {chain.units.length}, angles in {chain.units.angle}")
    print(report.size_text(chain, k.workspace) + f"; {k.workspace.samples} joint samples")
    print("\n".join(report.cube_lines(chain, k)))
    if args.png:
        print(f"Picture written to {report.printable(args.png)}")
    print(report.STUDY_CAUTION)
    return code

