"""Argument helpers shared by the ``poser`` subcommands (and the window's command line).

No Qt, no subcommand logic: parsing numbers as people type them, loading an arm
file with one clear error, and the one error type the command line reports.
"""

from __future__ import annotations

import argparse
import re

import numpy as np

__all__ = ["UsageError", "Parser", "parse_list", "glue_negative_lists", "load_arm", "MAX_VALUE", "LIST_OPTIONS"]

LIST_OPTIONS = ("--joints", "--xyz", "--rpy", "--near", "--target")
_NUMBERISH = re.compile(r"^-([\d.]|nan|inf)", re.IGNORECASE)
_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$", re.ASCII)
"""A plain decimal number as people type it (``float()`` would also take ``1_0``, ``inf`` or other scripts' digits)."""
MAX_VALUE = 1e12
"""Largest size of a number on the command line: beyond it results overflow or lose every digit."""


class UsageError(Exception):
    """Bad command-line input; the message becomes ``poser: error: ...`` and the exit status 2."""


class Parser(argparse.ArgumentParser):
    """An argparse parser whose errors are :class:`UsageError` (one line, exit 2, no usage dump)."""

    def error(self, message):
        raise UsageError(message)


def glue_negative_lists(argv):
    """Let ``--joints -30,45,0`` work like ``--joints=-30,45,0`` (also ``-nan`` and ``-inf``, to be refused
    with their own message).

    argparse takes a value starting with '-' for an option; for our list options a following token
    that starts like a negative number is their value.
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
    """Load and check an arm file: ``(spec, chain)``; a bad file is a UsageError naming its first problem
    (``poser check`` lists them all)."""
    from poser.armfile import ArmFileError, load

    try:
        spec = load(path)
    except ArmFileError as exc:
        first = exc.problems[0]
        more = f" (and {len(exc.problems) - 1} more; run 'poser check {path}')" if len(exc.problems) > 1 else ""
        raise UsageError(f"{first}{more}") from None
    return spec, spec.to_chain()
