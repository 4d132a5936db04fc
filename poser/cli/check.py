"""``poser check ARM.toml``: validate an arm file (exit 0 when valid, 2 otherwise)."""

from __future__ import annotations

import sys

from poser.report import printable

__all__ = ["add_parser", "run"]

HELP = "validate an arm file; exit 0 when valid, 2 otherwise"


def add_parser(make):
    p = make("check", description="Validate an arm file; exit 0 when valid, 2 otherwise.")
    p.add_argument("arm", metavar="ARM.toml")
    return p


def run(args) -> int:
    from poser.armfile import ArmFileError, load

    try:
        spec = load(args.arm)
    except ArmFileError as exc:
        for p in exc.problems:
            print(printable(str(p)), file=sys.stderr)
        return 2
    kinds = "".join("R" if j.type == "revolute" else "P" for j in spec.joints)
    print(
        f"{printable(args.arm)}: valid — '{printable(spec.name)}', {len(spec.joints)} joints ({kinds}), "
        f"{spec.convention} DH, {spec.units.length} and {spec.units.angle}"
    )
    return 0
