"""Target lists (CSV) for reach studies and placement: reading them, and writing a study's report.

The format (also in DEVELOPERS.md and ``poser reach --help``)::

    # a comment line; blank lines are skipped
    name,x,y,z,roll,pitch,yaw,free_spin
    weld 1,850,-120,640,180,0,90,no
    drill 2,900,0,400,180,0,0,yes
    probe 3,700,200,300,,,,

* The first line that is neither blank nor a comment is the header.  ``name, x, y, z`` are needed;
  ``roll, pitch, yaw`` (all three or none) and ``free_spin`` may follow, in any order.  Names are
  compared without case and surrounding spaces.  Other columns are ignored, with a warning.
* ``x, y, z``: the tool point in world coordinates, in the arm's length unit.
* ``roll, pitch, yaw``: the tool orientation about the fixed world X, Y, Z axes, in the arm's angle unit
  (as ``poser ik --rpy``).  Left empty on a row (all three): that target is position-only.
* ``free_spin``: ``yes``/``no`` (also ``true``/``false``, ``1``/``0``; empty is ``no``): any rotation
  about the tool's own Z axis will do (drilling, gluing, welding).  Needs the orientation.
* Numbers are plain decimals (``-12.5``, ``1e3``), finite, within ±10¹².

A malformed row is reported with its line number and skipped — never silently dropped; the rest are read.
A file that cannot be read at all (missing, not a regular file, not UTF-8, no header) raises
:class:`TargetFileError`.
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from dataclasses import dataclass

import numpy as np

from poser.core.errors import PoserError
from poser.io.errors import Problem
from poser.io.stamp import file_kind
from poser.text import printable

__all__ = ["TargetFile", "TargetFileError", "read_targets", "parse_targets", "REQUIRED", "ORIENTATION", "SPIN",
           "MAX_TARGET_BYTES", "report_csv"]

REQUIRED = ("name", "x", "y", "z")
ORIENTATION = ("roll", "pitch", "yaw")
SPIN = "free_spin"
MAX_TARGET_BYTES = 64 << 20
"""Largest target file read (64 MiB: about a million targets)."""
MAX_VALUE = 1e12
_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$", re.ASCII)
_YES = {"yes", "y", "true", "1"}
_NO = {"no", "n", "false", "0", ""}


class TargetFileError(PoserError):
    """A target file could not be read at all; ``problems`` says why (file and line where known)."""

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


@dataclass(frozen=True)
class TargetFile:
    """A target list as read.

    Attributes
    ----------
    targets : tuple of poser.core.reach.Target
        The good rows, in file order; ``Target.line`` is the line each came from.
    problems : tuple of Problem
        Every row skipped (with its line) and every warning (unknown columns, repeated names).
    skipped : int
        Rows skipped as malformed.
    columns : tuple of str
        The header's columns as written.
    has_orientation : bool
        The file has roll, pitch and yaw columns.
    file : str
    """

    targets: tuple
    problems: tuple
    skipped: int
    columns: tuple
    has_orientation: bool
    file: str


def read_targets(path, units) -> TargetFile:
    """Read a target CSV (see the module docstring) in the arm's ``units`` (:class:`poser.core.units.Units`).

    Raises
    ------
    TargetFileError
        Missing, not readable, not a regular file, larger than :data:`MAX_TARGET_BYTES`, not UTF-8, or
        without a usable header.
    """
    file = os.fspath(path)
    try:
        st = os.stat(file)
        kind = file_kind(st.st_mode)
        if kind:
            raise TargetFileError([Problem(f"is {kind}; a target list must be a regular CSV file", file)])
        if st.st_size > MAX_TARGET_BYTES:
            raise TargetFileError([Problem(f"file is {st.st_size} bytes; a target list may hold at most "
                                           f"{MAX_TARGET_BYTES} (64 MiB)", file)])
        with open(file, "rb") as fh:
            raw = fh.read(MAX_TARGET_BYTES + 1)
    except TargetFileError:
        raise
    except (OSError, ValueError) as exc:
        raise TargetFileError([Problem(f"cannot read the file: {getattr(exc, 'strerror', None) or exc}", file)]) \
            from None
    if len(raw) > MAX_TARGET_BYTES:
        raise TargetFileError([Problem(f"file holds more than {MAX_TARGET_BYTES} bytes (64 MiB)", file)])
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise TargetFileError([Problem(f"is not UTF-8 text (byte {exc.start}); save the CSV as UTF-8", file, line)]) \
            from None
    return parse_targets(text, units, file)


def _number(cell, what):
    c = cell.strip()
    if not _NUMBER.match(c):
        raise ValueError(f"{what} must be a number, got {printable(cell)!r}")
    v = float(c)
    if not math.isfinite(v) or abs(v) > MAX_VALUE:
        raise ValueError(f"{what} must lie within ±1e12, got {printable(cell)!r}")
    return v


def parse_targets(text: str, units, file: str = "<targets>") -> TargetFile:
    """:func:`read_targets` on text already read."""
    from poser.core.reach import Target
    from poser.core.transforms import rpy_to_matrix

    lines = text.splitlines()
    header_line = None
    for k, line in enumerate(lines, 1):
        s = line.strip()
        if s and not s.startswith("#"):
            header_line = k
            break
    if header_line is None:
        raise TargetFileError([Problem("holds no header; expected a first line like 'name,x,y,z' "
                                       "(optionally roll,pitch,yaw and free_spin)", file)])
    try:
        head = next(csv.reader([lines[header_line - 1]]))
    except csv.Error as exc:
        raise TargetFileError([Problem(f"header is not valid CSV: {exc}", file, header_line)]) from None
    keys = [h.strip().lower() for h in head]
    problems = []
    missing = [c for c in REQUIRED if c not in keys]
    if missing:
        raise TargetFileError([Problem(
            f"header must name the columns {', '.join(REQUIRED)} (optionally {', '.join(ORIENTATION)}, {SPIN}); "
            f"missing {', '.join(missing)} in {printable(lines[header_line - 1])!r}", file, header_line)])
    twice = sorted({k for k in keys if k and keys.count(k) > 1})
    if twice:
        raise TargetFileError([Problem(f"header names a column more than once: {', '.join(twice)}", file,
                                       header_line)])
    have_o = [c for c in ORIENTATION if c in keys]
    if have_o and len(have_o) < 3:
        raise TargetFileError([Problem(f"header must name all of roll, pitch, yaw or none; got only "
                                       f"{', '.join(have_o)}", file, header_line)])
    known = set(REQUIRED) | set(ORIENTATION) | {SPIN}
    extra = [h.strip() for h, k in zip(head, keys) if k not in known]
    if extra:
        problems.append(Problem(f"warning: columns ignored (not part of a target): "
                                f"{', '.join(printable(e) for e in extra)}", file, header_line))
    col = {k: i for i, k in enumerate(keys)}
    has_o = bool(have_o)
    spin_col = col.get(SPIN)
    targets, seen, skipped = [], {}, 0
    body = "\n".join(lines[header_line:])
    reader = csv.reader(io.StringIO(body))
    angle_in = units.angle_in
    while True:
        try:
            row = next(reader)
        except StopIteration:
            break
        except csv.Error as exc:
            k = header_line + reader.line_num
            problems.append(Problem(f"row skipped: not valid CSV ({exc})", file, k))
            skipped += 1
            continue
        k = header_line + reader.line_num
        if not row or (len(row) == 1 and not row[0].strip()) or row[0].lstrip().startswith("#"):
            continue
        try:
            if len(row) != len(keys):
                raise ValueError(f"expected {len(keys)} fields ({', '.join(head)}), got {len(row)}")
            name = row[col["name"]].strip()
            if not name:
                raise ValueError("name must not be empty")
            xyz = [_number(row[col[c]], c) for c in ("x", "y", "z")]
            R = None
            spin = False
            if has_o:
                cells = [row[col[c]].strip() for c in ORIENTATION]
                if any(cells):
                    if not all(cells):
                        raise ValueError("roll, pitch and yaw must all be given or all left empty, got "
                                         + ", ".join(repr(c) for c in cells))
                    rpy = [_number(row[col[c]], c) for c in ORIENTATION]
                    R = rpy_to_matrix(np.asarray(angle_in(np.array(rpy)), float))
            if spin_col is not None:
                cell = row[spin_col].strip().lower()
                if cell in _YES:
                    spin = True
                elif cell not in _NO:
                    raise ValueError(f"free_spin must be yes or no, got {printable(row[spin_col])!r}")
                if spin and R is None:
                    raise ValueError("free_spin needs the tool orientation (roll, pitch, yaw); the row has none")
        except ValueError as exc:
            problems.append(Problem(f"row skipped: {exc}", file, k))
            skipped += 1
            continue
        if name in seen:
            problems.append(Problem(f"warning: name {printable(name)!r} also on line {seen[name]} (both kept)", file,
                                    k))
        else:
            seen[name] = k
        targets.append(Target(name, np.array(xyz), R, spin, k))
    return TargetFile(tuple(targets), tuple(problems), skipped, tuple(h.strip() for h in head), has_o, file)


def report_csv(rows, columns) -> str:
    """A report as CSV text: ``columns`` (header names) and ``rows`` (sequences of cells)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for r in rows:
        w.writerow(r)
    return buf.getvalue()
