"""Loading arm files: safe reading, strict TOML 1.0, every problem at once.

The text is parsed by the standard library's :mod:`tomllib` (strict TOML 1.0,
as other programs reading arm files expect: no newlines or trailing commas in
inline tables, no ``\\e`` escapes, no times without seconds).  Before it, a
quick count refuses texts that would take long to parse (more than
:data:`MAX_ITEMS` ``=``, ``,``, ``[``, ``{`` and ``#`` signs, or a dotted key of more
than :data:`MAX_KEY_PARTS` parts); after it, nesting deeper than
:data:`MAX_DEPTH` is refused.  The layout (where each key stands, for line
numbers and comment-keeping saves) is read only when it is needed.
"""

from __future__ import annotations

import copy
import os
import re
import tomllib

from poser.core.units import ANGLE_UNITS, LENGTH_UNITS, Units
from poser.io.document import ArmSource, default_name
from poser.io.errors import ArmFileError, Problem
from poser.io.spec import (
    FORMAT,
    JOINT_KEYS,
    MAX_JOINTS,
    PLACE_KEYS,
    TOP_KEYS,
    UNIT_KEYS,
    ArmSpec,
    JointOrigin,
    JointSpec,
    validate,
)
from poser.io.stamp import MAX_BYTES, DiskStamp, read_regular
from poser.text import brief

__all__ = ["load", "loads", "loads_bytes", "MAX_ITEMS", "MAX_DEPTH", "MAX_KEY_PARTS"]

MAX_ITEMS = 20_000
"""Most ``=``, ``,``, ``[``, ``{`` and ``#`` signs an arm file may hold (keys, values, tables, comments; an arm
needs about a hundred)."""
MAX_DEPTH = 32
"""Deepest nesting of arrays and tables."""
MAX_KEY_PARTS = 32
"""Most parts of one dotted key (``a.b.c`` has 3)."""
MAX_DIGITS = 4300
"""Most digits of an integer Python reads (``sys.get_int_max_str_digits``); more is refused with a message."""

_KEY_PART = r"""(?:[A-Za-z0-9_-]+|"[^"\r\n]*"|'[^'\r\n]*')"""
_LONG_KEY = re.compile(r"(?:^|[{,\[])[ \t]*(?:" + _KEY_PART + r"[ \t]*\.[ \t]*){" + str(MAX_KEY_PARTS) + "}", re.M)
_TOML_AT = re.compile(r"\s*\((?:at line (\d+), column (\d+)|at end of document)\)$")


def _prescan(text: str, file: str) -> None:
    signs = sum(text.count(c) for c in "=,[{#")
    if signs > MAX_ITEMS:
        raise ArmFileError([Problem(
            f"the file holds {signs} '=', ',', '[', '{{' and '#' signs (keys, values, tables and comments); an arm "
            f"file may hold at most {MAX_ITEMS} — it would take too long to read", file)])
    m = _LONG_KEY.search(text)
    if m:
        line = text.count("\n", 0, m.start()) + 1
        raise ArmFileError([Problem(f"a dotted key has more than {MAX_KEY_PARTS} parts; an arm file needs no such key",
                                    file, line)])


_DIGITS = re.compile(r"[0-9][0-9_]{" + str(MAX_DIGITS - 1) + ",}")


def _long_integer(text: str, file: str) -> Problem:
    m = _DIGITS.search(text)
    line = text.count("\n", 0, m.start()) + 1 if m else None
    size = f" of {len(m.group(0).replace('_', ''))} digits" if m else ""
    return Problem(f"an integer{size} is far beyond any value an arm file holds (numbers lie within ±1e9)",
                   file, line)


def _depth(data) -> int:
    deepest, stack = 0, [(data, 0)]
    while stack:
        v, d = stack.pop()
        if d > deepest:
            deepest = d
            if d > MAX_DEPTH:
                break
        if isinstance(v, dict):
            stack.extend((x, d + 1) for x in v.values())
        elif isinstance(v, list):
            stack.extend((x, d + 1) for x in v)
    return deepest


def _toml_problem(exc: tomllib.TOMLDecodeError, text: str, file: str) -> Problem:
    msg = str(exc)
    m = _TOML_AT.search(msg)
    line = column = None
    if m:
        msg = msg[: m.start()]
        if m.group(1):
            line, column = int(m.group(1)), int(m.group(2))
    if msg.startswith("Cannot overwrite a value") and line:
        row = text.splitlines()[line - 1] if line <= len(text.splitlines()) else ""
        key = re.match(r"\s*([^=]+?)\s*=", row)
        name = key.group(1).strip("\"'") if key else "a key"
        return Problem(f'not valid TOML: "{name}" is given twice', file, line)
    dup = re.match(r"Cannot declare \((.*)\) twice", msg)
    if dup:
        parts = [p.strip().strip("'\"") for p in dup.group(1).split(",") if p.strip()]
        return Problem(f"not valid TOML: the table [{'.'.join(parts)}] is given twice", file, line)
    where = f" (column {column})" if column else " (at the end of the file)" if m else ""
    return Problem(f"not valid TOML: {msg}{where}", file, line)


def loads(text: str, file: str = "<arm>", *, bom: bool = False) -> ArmSpec:
    """Parse and validate arm-file text.

    Parameters
    ----------
    text : str
        The file's text (no byte-order mark).
    file : str
        Named in every problem; its stem is the arm's name when the text gives none.
    bom : bool
        Whether the file carried a UTF-8 byte-order mark (kept by a save).

    Returns
    -------
    ArmSpec
        With ``source`` set (comments are kept when it is saved); ``stamp`` is None.

    Raises
    ------
    ArmFileError
        With every problem found.
    """
    _prescan(text, file)
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ArmFileError([_toml_problem(exc, text, file)]) from None
    except RecursionError:
        data = None
    except ValueError:  # an integer of more digits than Python converts (sys.get_int_max_str_digits)
        raise ArmFileError([_long_integer(text, file)]) from None
    if data is None or _depth(data) > MAX_DEPTH:
        raise ArmFileError([Problem(f"values are nested more than {MAX_DEPTH} levels deep; an arm file needs "
                                    "no such nesting", file)])
    source = ArmSource(text, data, file, bom)
    return _build(data, file, source)


def build_spec(source: ArmSource, file: str | None = None) -> ArmSpec:
    """The arm ``source`` holds, read again from what was parsed (no second parse), as if its file were ``file``.

    Raises
    ------
    ArmFileError
        As :func:`loads` would for that text.
    """
    return _build(source._data, source.file if file is None else file, source)


def _build(data: dict, file: str, source: ArmSource) -> ArmSpec:
    problems: list = []  # (message, where, joint); lines are looked up only when there are problems

    def bad(msg, where=None, joint=None):
        problems.append((msg, where, joint))

    for key in data:
        if key not in TOP_KEYS:
            bad(f"unknown key {brief(key)} at top level; expected one of {', '.join(TOP_KEYS)} "
                "(put your own data under [notes])", (key,))
    fmt = data.get("format")
    if fmt is None:
        bad("'format = 1' is missing at the top of the file")
    elif type(fmt) is not int or fmt != FORMAT:
        hint = " (an integer: write 1, not 1.0)" if type(fmt) is float and fmt == FORMAT else ""
        bad(f"format must be the integer 1, got {brief(fmt)}{hint}; this Poser reads arm-file format 1", ("format",))

    name = data.get("name", default_name(file))
    convention = data.get("convention", "standard")

    units_tbl = data.get("units", {})
    length, angle = "mm", "deg"
    if not isinstance(units_tbl, dict):
        bad(f"[units] must be a table, got {brief(units_tbl)}", ("units",))
    else:
        for key in units_tbl:
            if key not in UNIT_KEYS:
                bad(f"unknown key {brief(key)} in [units]; expected length or angle", ("units", key))
        length = units_tbl.get("length", "mm")
        angle = units_tbl.get("angle", "deg")
        if not isinstance(length, str) or length not in LENGTH_UNITS:
            bad(f"[units] length must be one of {', '.join(LENGTH_UNITS)}, got {brief(length)}", ("units", "length"))
            length = "mm"
        if not isinstance(angle, str) or angle not in ANGLE_UNITS:
            bad(f"[units] angle must be one of {', '.join(ANGLE_UNITS)}, got {brief(angle)}", ("units", "angle"))
            angle = "deg"

    places = {}
    for label in ("base", "tool"):
        tbl = data.get(label, {})
        places[label] = ((0.0, 0.0, 0.0), (0.0, 0.0, 0.0))
        if not isinstance(tbl, dict):
            bad(f"[{label}] must be a table with xyz and rpy, got {brief(tbl)}", (label,))
            continue
        for key in tbl:
            if key not in PLACE_KEYS:
                bad(f"unknown key {brief(key)} in [{label}]; expected xyz or rpy", (label, key))
        vecs = []
        for key in PLACE_KEYS:
            v = tbl.get(key, [0.0, 0.0, 0.0])
            if not isinstance(v, list):
                v = [v]
            vecs.append(tuple(v))
        places[label] = tuple(vecs)

    notes = data.get("notes", {})
    if not isinstance(notes, dict):
        bad(f"notes must be a table ([notes]), got {type(notes).__name__}", ("notes",))
        notes = {}

    joints_raw = data.get("joint", [])
    joints: list[JointSpec] = []
    if not isinstance(joints_raw, list) or not all(isinstance(t, dict) for t in joints_raw):
        bad("joints must be [[joint]] tables", ("joint",))
        joints_raw = []
    too_many = len(joints_raw) > MAX_JOINTS
    if too_many:
        bad(f"the arm has {len(joints_raw)} joints; at most {MAX_JOINTS} are supported")
        joints_raw = []
    for idx, tbl in enumerate(joints_raw):
        jname = tbl.get("name", f"J{idx + 1}")
        label = jname if isinstance(jname, str) and jname else f"#{idx + 1}"
        for key in tbl:
            if key not in JOINT_KEYS:
                bad(f"unknown key {brief(key)}; a joint takes {', '.join(JOINT_KEYS)}", ("joint", idx, key), label)
        if "type" not in tbl:
            bad('type is missing; give type = "revolute" or "prismatic"', ("joint", idx), label)
        joints.append(JointSpec(
            name=jname,
            type=tbl.get("type", "revolute"),
            a=tbl.get("a", 0.0),
            alpha=tbl.get("alpha", 0.0),
            d=tbl.get("d", 0.0),
            theta=tbl.get("theta", 0.0),
            min=tbl.get("min"),
            max=tbl.get("max"),
            home=tbl.get("home"),
            _table=JointOrigin(source, idx),
        ))

    spec = ArmSpec(
        name=name,
        joints=joints,
        convention=convention,
        units=Units(length, angle),
        base_xyz=places["base"][0],
        base_rpy=places["base"][1],
        tool_xyz=places["tool"][0],
        tool_rpy=places["tool"][1],
        notes=copy.deepcopy(notes),  # the spec's own: the source's data is never handed out
        source=source,
    )
    found = validate(spec, file)  # no lines yet: looked up below only if something is wrong
    if too_many:  # the joints were dropped above; "no joints" would be false
        found = [p for p in found if not p.message.startswith("the arm has no joints")]
    if problems or found:
        line = source.line_of
        out = [Problem(msg, file, line(where) if where else None, joint) for msg, where, joint in problems]
        out += validate(spec, file, line) if found else []
        if too_many:
            out = [p for p in out if not p.message.startswith("the arm has no joints")]
        raise ArmFileError(out)
    return spec


def loads_bytes(raw: bytes, file: str = "<arm>") -> ArmSpec:
    """Validate raw bytes as an arm file (size, binary content, UTF-8), then parse them (:func:`loads`)."""
    if len(raw) > MAX_BYTES:
        raise ArmFileError([Problem(f"file is {len(raw)} bytes; an arm file may hold at most {MAX_BYTES} (1 MiB)",
                                    file)])
    if b"\x00" in raw:
        raise ArmFileError([Problem("this is a binary file, not a TOML arm file", file)])
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ArmFileError(
            [Problem(f"not UTF-8 text (bad byte at offset {exc.start}); arm files are UTF-8 TOML", file)]
        ) from None
    bom = text.startswith("\ufeff")
    return loads(text[1:] if bom else text, file, bom=bom)


def load(path) -> ArmSpec:
    """Read and validate an arm file.

    A path that is not a regular file (folder, named pipe, device, socket) is
    refused before it is opened; at most 1 MiB is read.

    Returns
    -------
    ArmSpec
        With ``stamp`` (:class:`~poser.io.stamp.DiskStamp`) recording the file
        as read, for :func:`~poser.io.writing.save` and
        :func:`~poser.io.stamp.changed_on_disk`.

    Raises
    ------
    ArmFileError
        When the file cannot be read or holds any problem; every problem is listed.
    """
    file = os.fspath(path)
    raw, st = read_regular(file)
    spec = loads_bytes(raw, file)
    spec.stamp = DiskStamp.of_bytes(file, st, raw)
    return spec
