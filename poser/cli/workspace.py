"""``poser workspace ARM.toml``: the volume (or area) the tool point reaches within the joint limits.

Exit status 0 with a figure, 2 on bad input.
"""

from __future__ import annotations

import json

import numpy as np

from poser import report
from poser.cli.args import UsageError, check_png, draw, load_arm, parse_count, parse_list, progress_printer

__all__ = ["add_parser", "run", "workspace_json", "MAX_SAMPLES"]

HELP = "the workspace's volume (area), bounds and sections"
MAX_SAMPLES = 10_000_000


def add_parser(make):
    p = make(
        "workspace",
        description="The workspace: every tool position the arm reaches within its joint limits, with its base "
        "and tool. Volume (an area for planar arms) by cell occupancy refined until it converges, with method, "
        "cell size and an error estimate; bounds; a picture of the sections with --png.",
    )
    p.add_argument("arm", metavar="ARM.toml")
    p.add_argument("--samples", default="500000", metavar="N",
                   help="joint samples (1000 … 10000000; default 500000: a fraction of a percent)")
    p.add_argument("--height", metavar="Z",
                   help="world height of the horizontal section in the picture, arm length unit "
                   "(default: mid-height of the workspace)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.add_argument("--png", metavar="OUT.png", help="draw the sections and the tool-point cloud into a PNG")
    return p


def workspace_json(chain, ws) -> dict:
    """The JSON object of ``poser workspace`` (arm length unit)."""
    L = chain.units.length
    dex = ws.dexterity
    return {
        "arm": chain.name,
        "units": {"length": L, "angle": chain.units.angle},
        "planar": ws.planar,
        "volume": ws.volume,
        "volume_error": None if ws.planar else ws.error,
        "area": ws.area,
        "area_error": ws.error if ws.planar else None,
        "unit": f"{L}²" if ws.planar else f"{L}³",
        "relative_error": ws.relative_error,
        "method": ws.method,
        "resolution": ws.resolution,
        "levels": [{"cell": h, "size": v} for h, v in ws.levels],
        "bounds": {"min": [float(v) for v in ws.bounds[0]], "max": [float(v) for v in ws.bounds[1]]},
        "samples": ws.samples,
        "manipulability_unit": report.manipulability_unit(chain),
        "dexterity": {"min": float(dex.min()) if len(dex) else None,
                      "median": float(np.median(dex)) if len(dex) else None,
                      "max": float(dex.max()) if len(dex) else None},
    }


def run(args) -> int:
    """Run ``poser workspace`` for parsed ``args``; return the exit status."""
    from poser.core.workspace import workspace

    spec, chain = load_arm(args.arm)
    samples = parse_count(args.samples, "--samples", 1000, MAX_SAMPLES)
    height = None
    png = getattr(args, "png", None)
    if getattr(args, "height", None) is not None:
        height = float(parse_list(args.height, "--height", 1)[0])
        if not png:
            raise UsageError(f"--height sets the picture's horizontal section and needs --png, got --height "
                             f"{args.height} alone")
    if png:
        check_png(png)
    keep = 200_000 if png else 20_000
    ws = workspace(chain, samples, keep=min(keep, samples), progress=progress_printer("workspace"))
    if png:
        if height is not None and ws.planar:
            raise UsageError(f"--height applies to spatial arms (a planar arm's workspace is an area in its plane), "
                             f"got --height {args.height}")
        if height is not None and not ws.bounds[0][2] <= height <= ws.bounds[1][2]:
            lo, hi, d = ws.bounds[0][2], ws.bounds[1][2], report.length_digits(chain)
            raise UsageError(f"--height must lie within the workspace's heights {report.fmt(lo, d)} … "
                             f"{report.fmt(hi, d)} {chain.units.length}, got {args.height}")
        draw("workspace", "draw_workspace", chain, ws, path=png, height=height)
    if getattr(args, "json", False):
        out = workspace_json(chain, ws)
        if png:
            out["png"] = png
        print(json.dumps(out, indent=2))
        return 0
    print(f"Arm '{report.printable(chain.name)}' — lengths in {chain.units.length}")
    print("\n".join(report.workspace_lines(chain, ws)))
    if png:
        print(f"Picture written to {report.printable(png)}")
    print(report.STUDY_CAUTION)
    return 0
