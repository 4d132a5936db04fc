"""Argument helpers shared by the ``poser`` subcommands (and the window's command line).

No Qt, no subcommand logic: parsing numbers as people type them, loading an arm
file with one clear error, and the one error type the command line reports.
"""

from __future__ import annotations

import argparse
import re

import numpy as np

__all__ = ["UsageError", "Parser", "parse_list", "glue_negative_lists", "load_arm", "MAX_VALUE", "LIST_OPTIONS",
           "same_file", "write_output", "progress_printer", "load_targets", "parse_count", "parse_range",
           "check_png", "draw"]

LIST_OPTIONS = ("--joints", "--xyz", "--rpy", "--near", "--target", "--x", "--y", "--z", "--yaw", "--height")
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


def same_file(a, b) -> bool:
    """Whether two paths name one file (following links); False when either does not exist."""
    import os

    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def write_output(path, text: str, option: str, inputs=()) -> None:
    """Write an output file atomically; refuse to write over one of the ``inputs`` (nothing lost).

    Errors are :class:`UsageError` naming ``option``, what was expected and what came.
    """
    from poser.armfile import SaveError
    from poser.io.writing import write_text_atomic

    for src in inputs:
        if same_file(path, src):
            raise UsageError(f"{option} must name a new file, not an input; got {path!r}, which is {src!r}")
    try:
        write_text_atomic(path, text)
    except SaveError as exc:
        raise UsageError(f"{option}: cannot write {path!r}: {exc.problems[0].message}") from None


def progress_printer(label: str):
    """A ``progress(fraction)`` callback that shows ``label: 42 %`` on a terminal's stderr; None elsewhere."""
    import sys

    if not getattr(sys.stderr, "isatty", lambda: False)():
        return None
    last = [-1]

    def show(fraction):
        pct = int(100 * fraction)
        if pct != last[0]:
            last[0] = pct
            end = "\n" if pct >= 100 else ""
            print(f"\r{label}: {pct:3d} %", end=end, file=sys.stderr, flush=True)
        return None

    return show


def load_targets(path, chain, inputs=()):
    """Read a target CSV for ``chain``: (TargetFile); its problems go to stderr as ``FILE:LINE: ...`` lines.

    A file that cannot be read, or holds no good row, is a :class:`UsageError`.
    """
    import sys

    from poser.io.targets import TargetFileError, read_targets
    from poser.report import printable

    try:
        tf = read_targets(path, chain.units)
    except TargetFileError as exc:
        raise UsageError(str(exc.problems[0])) from None
    for p in tf.problems:
        print(printable(str(p)), file=sys.stderr)
    if not tf.targets:
        rows = f" ({tf.skipped} malformed row{'s' if tf.skipped != 1 else ''} skipped)" if tf.skipped else ""
        raise UsageError(f"{path}: holds no target to check{rows}; expected rows of name,x,y,z"
                         "[,roll,pitch,yaw][,free_spin]")
    return tf


def parse_count(text: str, what: str, lo: int, hi: int) -> int:
    """A whole number as typed (``500000``, ``5e5``) within [lo, hi]; a UsageError naming ``what`` otherwise."""
    try:
        v = float(parse_list(text, what, 1)[0])
    except UsageError:
        raise UsageError(f"{what} must be a whole number from {lo} to {hi}, got {text!r}") from None
    if v != int(v) or not lo <= v <= hi:
        raise UsageError(f"{what} must be a whole number from {lo} to {hi}, got {text!r}")
    return int(v)


_RANGE = re.compile(r"^\s*(\S+?)\s*\.\.\s*(\S+)\s*$")


def parse_range(text: str, what: str) -> tuple[float, float]:
    """``"A..B"`` (or one value ``"A"``: from A to A) as two numbers, low first; a UsageError naming ``what``."""
    m = _RANGE.match(text)
    parts = [m.group(1), m.group(2)] if m else [text.strip()]
    try:
        vals = [float(parse_list(p, what, 1)[0]) for p in parts]
    except UsageError:
        raise UsageError(f"{what} must be a range LOW..HIGH of two numbers (or one number), got {text!r}") from None
    lo, hi = vals[0], vals[-1]
    if hi < lo:
        raise UsageError(f"{what} must run from low to high (LOW..HIGH), got {text!r}")
    return lo, hi


def check_png(path, option="--png"):
    """Refuse a picture path that cannot be written before any work is done (UsageError naming ``option``)."""
    import os

    folder = os.path.dirname(os.path.abspath(path))
    if not str(path).lower().endswith(".png"):
        raise UsageError(f"{option} must name a .png file, got {path!r}")
    if not os.path.isdir(folder):
        raise UsageError(f"{option}: folder {folder!r} does not exist")


def draw(module: str, func: str, *args, option="--png", path=None, **kwargs):
    """Draw a picture with ``poser.plot.<module>.<func>(*args, path, **kwargs)`` — imported only now: Qt is
    loaded for pictures alone.  A picture that cannot be written is a UsageError naming ``option``."""
    import importlib

    mod = importlib.import_module(f"poser.plot.{module}")
    try:
        getattr(mod, func)(*args, path, **kwargs)
    except OSError as exc:
        raise UsageError(f"{option}: cannot write {path!r}: {exc}") from None
