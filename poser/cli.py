"""The ``poser`` command line.

    poser [ARM.toml] [--snapshot OUT.png] [--joints V1,...] [--target X,Y,Z[,R,P,Y]]
    poser check ARM.toml
    poser fk ARM.toml --joints V1,V2,... [--frames] [--json]
    poser ik ARM.toml --xyz X,Y,Z [--rpy R,P,Y] [--near V1,...] [--json]

Every value is read and printed in the arm's own units.  Bad input ends with
exit status 2 and one line ``poser: error: ...`` on stderr, never a traceback.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import sys

import numpy as np

from poser import __version__

SUBCOMMANDS = ("check", "fk", "ik")
LIST_OPTIONS = ("--joints", "--xyz", "--rpy", "--near", "--target")
_NUMBERISH = re.compile(r"^-[\d.]")
_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$", re.ASCII)
"""A plain decimal number as people type it (``float()`` would also take ``1_0``, ``inf`` or other scripts' digits)."""
MAX_VALUE = 1e12
"""Largest size of a number on the command line: beyond it results overflow or lose every digit."""


class UsageError(Exception):
    """Bad command-line input; the message becomes ``poser: error: ...``."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        raise UsageError(message)


def _glue_negative_lists(argv):
    """Let ``--joints -30,45,0`` work like ``--joints=-30,45,0``.

    argparse takes a value starting with '-' for an option; for our list
    options a following token that starts like a negative number is their value.
    """
    out = []
    i = 0
    while i < len(argv):
        tok = argv[i]
        if tok in LIST_OPTIONS and i + 1 < len(argv) and _NUMBERISH.match(argv[i + 1]):
            out.append(f"{tok}={argv[i + 1]}")
            i += 2
            continue
        out.append(tok)
        i += 1
    return out


def parse_list(text: str, what: str, count: int | None = None) -> np.ndarray:
    """Parse ``"1,-2.5,3"`` into floats; ``what`` names the option in messages."""
    parts = [p.strip() for p in text.split(",")]
    values = []
    for p in parts:
        if p.lower().lstrip("+-") in ("nan", "inf", "infinity"):
            raise UsageError(f"{what} must be finite numbers, got {p!r}")
        if not _NUMBER.match(p):
            raise UsageError(f"{what} must be comma-separated numbers, got {p!r} in {text!r}")
        v = float(p)
        if not np.isfinite(v) or abs(v) > MAX_VALUE:
            raise UsageError(f"{what} values must lie within ±1e12 (the arm's units), got {p!r}")
        values.append(v)
    if count is not None and len(values) != count:
        raise UsageError(f"{what} needs {count} values, got {len(values)} ({text!r})")
    return np.array(values)


def load_arm(path):
    """Load and check an arm file for the command line: ``(spec, chain)``; a bad file is a UsageError
    naming its first problem (``poser check`` lists them all)."""
    from poser.armfile import ArmFileError, load

    try:
        spec = load(path)
    except ArmFileError as exc:
        first = exc.problems[0]
        more = f" (and {len(exc.problems) - 1} more; run 'poser check {path}')" if len(exc.problems) > 1 else ""
        raise UsageError(f"{first}{more}") from None
    return spec, spec.to_chain()


def _fmt(v: float) -> str:
    v = 0.0 if abs(v) < 5e-13 else v
    return f"{v:.6f}".rstrip("0").rstrip(".") if abs(v) < 1e12 else f"{v:.6g}"


def _matrix_lines(T, indent="  "):
    cells = [[_fmt(x) for x in row] for row in T]
    w = max(len(c) for row in cells for c in row)
    return [indent + "[ " + "  ".join(c.rjust(w) for c in row) + " ]" for row in cells]


def limit_warnings(chain, names, q_user, lower_user, upper_user, unit_of):
    """Plain-language warnings for joint values beyond their limits (arm units)."""
    out = []
    for name, v, lo, hi, unit in zip(names, q_user, lower_user, upper_user, unit_of):
        if v < lo:
            out.append(
                f"joint {name!r} = {_fmt(v)} {unit} is below its lower limit {_fmt(lo)} {unit} by {_fmt(lo - v)} {unit}"
            )
        elif v > hi:
            out.append(
                f"joint {name!r} = {_fmt(v)} {unit} is above its upper limit {_fmt(hi)} {unit} by {_fmt(v - hi)} {unit}"
            )
    return out


def cmd_check(args) -> int:
    from poser.armfile import ArmFileError, load

    try:
        spec = load(args.arm)
    except ArmFileError as exc:
        for p in exc.problems:
            print(p, file=sys.stderr)
        return 2
    from poser.text import printable

    kinds = "".join("R" if j.type == "revolute" else "P" for j in spec.joints)
    print(
        f"{printable(args.arm)}: valid — '{printable(spec.name)}', {len(spec.joints)} joints ({kinds}), "
        f"{spec.convention} DH, {spec.units.length} and {spec.units.angle}"
    )
    return 0


def cmd_fk(args) -> int:
    from poser.core.transforms import as_xyz_rpy

    spec, chain = load_arm(args.arm)
    q_user = parse_list(args.joints, "--joints", chain.n)
    q = chain.q_from_user(q_user)
    units = spec.units
    unit_of = [units.joint_unit(j.type) for j in spec.joints]
    warnings = limit_warnings(
        chain, chain.names, q_user, [j.min for j in spec.joints], [j.max for j in spec.joints], unit_of
    )
    F = chain.frames(q)
    T = chain.fk(q)
    xyz, rpy = as_xyz_rpy(T)
    rpy_user = units.angle_out(rpy)
    if args.json:
        out = {
            "arm": spec.name,
            "units": {"length": units.length, "angle": units.angle},
            "joints": q_user.tolist(),
            "tool": T.tolist(),
            "xyz": xyz.tolist(),
            "rpy": np.asarray(rpy_user).tolist(),
            "frames": F.tolist(),
            "frame_names": ["base"] + [f"frame {i + 1} ({n})" for i, n in enumerate(chain.names)] + ["tool"],
            "warnings": warnings,
        }
        print(json.dumps(out, indent=2))
        return 0
    L, A = units.length, units.angle
    print(f"Arm {spec.name!r} — lengths in {L}, angles in {A}")
    print("Joints: " + ", ".join(f"{n} = {_fmt(v)} {u}" for n, v, u in zip(chain.names, q_user, unit_of)))
    print(f"Tool pose in world coordinates (translation column in {L}):")
    print("\n".join(_matrix_lines(T)))
    print(f"xyz = {', '.join(_fmt(v) for v in xyz)} {L}")
    print(f"rpy = {', '.join(_fmt(v) for v in rpy_user)} {A} (about fixed X, Y, Z)")
    if args.frames:
        names = ["base"] + [f"frame {i + 1} ({n})" for i, n in enumerate(chain.names)] + ["tool"]
        for name, Fi in zip(names, F):
            print(f"\nworld → {name}:")
            print("\n".join(_matrix_lines(Fi)))
    for w in warnings:
        print(f"warning: {w}", file=sys.stderr)
    return 0


def cmd_ik(args) -> int:
    try:
        from poser.ikcli import run_ik
    except ImportError:
        raise UsageError("inverse kinematics is not available in this build yet") from None
    spec, chain = load_arm(args.arm)
    return run_ik(args, spec, chain)


def _has_display() -> bool:
    """Whether Qt can open a window here (Qt aborts the process when it cannot)."""
    if os.environ.get("QT_QPA_PLATFORM"):
        return True
    if sys.platform.startswith("linux"):
        return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))
    return True


def cmd_window(args) -> int:
    if not _has_display():
        if not args.snapshot:
            raise UsageError(
                "no display to open the window on (DISPLAY is not set); run it on a desktop, under "
                "'xvfb-run -a -s \"-screen 0 1600x1000x24 +extension GLX +render\" poser …', "
                "or render a picture with --snapshot OUT.png"
            )
        # A snapshot needs no screen: Qt's offscreen platform draws the 2D three-view.
        os.environ["QT_QPA_PLATFORM"] = "offscreen"
    try:
        from poser.ui.app import run
    except ImportError as exc:
        print(f"poser: error: the window cannot start: {exc}", file=sys.stderr)
        return 2
    return run(args)


def build_parsers():
    common = dict(formatter_class=argparse.RawDescriptionHelpFormatter)
    main = _Parser(
        prog="poser",
        description="Poser — pose serial robot arms: forward and inverse kinematics, limits, singularities.\n\n"
        "  poser [ARM.toml]               open the posing window (default demo arm without ARM)\n"
        "  poser check ARM.toml           validate an arm file\n"
        "  poser fk ARM.toml --joints …   tool pose for joint values\n"
        "  poser ik ARM.toml --xyz …      every joint solution for a tool pose\n\n"
        "Values are in the arm's own units (see [units] in the arm file).\n"
        "Poser plans nothing for a real robot: verify every result on the robot's controller.",
        **common,
    )
    main.add_argument("--version", action="version", version=f"poser {__version__}")
    main.add_argument("arm", nargs="?", help="arm file to open (default: the Heron 6 demo arm)")
    main.add_argument("--snapshot", metavar="OUT.png", help="render the window to a PNG file and exit")
    main.add_argument("--joints", metavar="V1,V2,…", help="joint values to show, in the arm's units")
    main.add_argument("--target", metavar="X,Y,Z[,R,P,Y]", help="target tool pose to solve for, in the arm's units")
    main.add_argument("--size", metavar="WxH", default="1280x800", help="window size for --snapshot (default 1280x800)")

    check = _Parser(prog="poser check", description="Validate an arm file; exit 0 when valid, 2 otherwise.")
    check.add_argument("arm", metavar="ARM.toml")

    fk = _Parser(prog="poser fk", description="Forward kinematics: the tool pose for joint values (arm units).")
    fk.add_argument("arm", metavar="ARM.toml")
    fk.add_argument("--joints", required=True, metavar="V1,V2,…", help="one value per joint, in the arm's units")
    fk.add_argument("--frames", action="store_true", help="also print every frame's world pose")
    fk.add_argument("--json", action="store_true", help="print one JSON object")

    ik = _Parser(
        prog="poser ik",
        description="Inverse kinematics: every branch that puts the tool at a pose. "
        "Exit 0 when reachable within limits, 1 when not, 2 on bad input or a solver fault.",
    )
    ik.add_argument("arm", metavar="ARM.toml")
    ik.add_argument("--xyz", required=True, metavar="X,Y,Z", help="tool position in world coordinates, arm length unit")
    ik.add_argument(
        "--rpy",
        metavar="R,P,Y",
        help="tool orientation (roll, pitch, yaw about fixed X, Y, Z), arm angle unit; "
        "without it the solve is position-only",
    )
    ik.add_argument("--near", metavar="V1,V2,…", help="current joint values; branches are ranked by distance from them")
    ik.add_argument("--json", action="store_true", help="print one JSON object")
    return main, {"check": (check, cmd_check), "fk": (fk, cmd_fk), "ik": (ik, cmd_ik)}


def _tolerant_output():
    """Never fail on a terminal that cannot show a character (an ASCII or Latin-1 locale): escape it."""
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.reconfigure(errors="backslashreplace")
        except (AttributeError, ValueError, OSError):
            pass


def main(argv=None) -> int:
    _tolerant_output()
    argv = list(sys.argv[1:] if argv is None else argv)
    argv = _glue_negative_lists(argv)
    main_parser, subs = build_parsers()
    try:
        if argv and argv[0] in SUBCOMMANDS:
            parser, fn = subs[argv[0]]
            args = parser.parse_args(argv[1:])
            return fn(args)
        args = main_parser.parse_args(argv)
        return cmd_window(args)
    except UsageError as exc:
        print(f"poser: error: {exc}", file=sys.stderr)
        return 2
    except SystemExit as exc:  # --help and --version
        return int(exc.code or 0)
    except KeyboardInterrupt:
        print("poser: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return 0


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())


if __name__ == "__main__":
    entry()
