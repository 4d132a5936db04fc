"""Arm files (format 1, TOML): load, validate, save.

The format is documented in ``docs/arm-file.md``.  Loading checks everything
and reports every problem at once (:class:`ArmFileError`, one
:class:`Problem` per finding, each with file, line where known, joint and
what was expected).  Saving is atomic and keeps the user's comments: the
document that was loaded is updated in place with tomlkit and written to a
temporary file that then replaces the original.

Values in an :class:`ArmSpec` are exactly as written in the file, in the
arm's own units; :meth:`ArmSpec.to_chain` converts angles to radians for the
core.
"""

from __future__ import annotations

import copy
import math
import os
import re
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import tomlkit
import tomlkit.exceptions
import tomlkit.items

from poser.core.chain import Chain
from poser.core.dh import CONVENTIONS, DHRow, chain_from_dh
from poser.core.errors import PoserError
from poser.core.transforms import from_xyz_rpy
from poser.core.units import ANGLE_UNITS, LENGTH_UNITS, Units

__all__ = [
    "ArmSpec",
    "JointSpec",
    "Problem",
    "ArmFileError",
    "load",
    "loads",
    "save",
    "dumps",
    "validate",
    "write_text_atomic",
]

FORMAT = 1
MAX_BYTES = 1 << 20
MAX_JOINTS = 32
MAX_MAGNITUDE = 1e9
"""Largest size of any number in an arm file (its own units): larger ones are refused as absurd, since
kinematics with them overflows to infinity (1e9 mm is 1000 km; 1e9 deg is millions of turns)."""
_MAX_TEXT = "1e9"
JOINT_TYPES = ("revolute", "prismatic")
TOP_KEYS = ("format", "name", "convention", "units", "base", "tool", "joint", "notes")
JOINT_KEYS = ("name", "type", "a", "alpha", "d", "theta", "min", "max", "home")
UNIT_KEYS = ("length", "angle")
PLACE_KEYS = ("xyz", "rpy")


@dataclass(frozen=True)
class Problem:
    """One finding in an arm file."""

    message: str
    file: str = "<arm>"
    line: int | None = None
    joint: str | None = None

    def __str__(self):
        where = self.file + (f":{self.line}" if self.line else "")
        who = f"joint {self.joint!r}: " if self.joint else ""
        return f"{where}: {who}{self.message}"


class ArmFileError(PoserError):
    """An arm file could not be read or is invalid; ``problems`` lists every finding."""

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


@dataclass
class JointSpec:
    """One ``[[joint]]`` row, in the arm's units (as written in the file)."""

    name: str
    type: str = "revolute"
    a: float = 0.0
    alpha: float = 0.0
    d: float = 0.0
    theta: float = 0.0
    min: float = -180.0
    max: float = 180.0
    home: float | None = None
    _table: object = field(default=None, repr=False, compare=False)


@dataclass
class ArmSpec:
    """An arm as described in an arm file, values in the arm's own units."""

    name: str
    joints: list[JointSpec]
    convention: str = "standard"
    units: Units = field(default_factory=Units)
    base_xyz: tuple = (0.0, 0.0, 0.0)
    base_rpy: tuple = (0.0, 0.0, 0.0)
    tool_xyz: tuple = (0.0, 0.0, 0.0)
    tool_rpy: tuple = (0.0, 0.0, 0.0)
    notes: dict = field(default_factory=dict)
    _doc: object = field(default=None, repr=False, compare=False)

    def to_chain(self) -> Chain:
        """The core's model of this arm (angles converted to radians)."""
        problems = validate(self)
        if problems:
            raise ArmFileError(problems)
        u = self.units
        rad = u.angle_to_rad
        rows = []
        for j in self.joints:
            scale = rad if j.type == "revolute" else 1.0
            home = j.home if j.home is not None else (0.0 if j.min <= 0.0 <= j.max else j.min / 2 + j.max / 2)
            rows.append(
                DHRow(
                    j.name,
                    j.type,
                    a=float(j.a),
                    alpha=float(j.alpha) * rad,
                    d=float(j.d),
                    theta=float(j.theta) * rad,
                    lower=float(j.min) * scale,
                    upper=float(j.max) * scale,
                    home=float(home) * scale,
                )
            )
        base = from_xyz_rpy(np.array(self.base_xyz, float), np.array(self.base_rpy, float) * rad)
        tool = from_xyz_rpy(np.array(self.tool_xyz, float), np.array(self.tool_rpy, float) * rad)
        return chain_from_dh(rows, self.convention, base=base, tool=tool, name=self.name, units=u)

    def home_values(self) -> list[float]:
        """Home value of every joint in the arm's units (0, or mid-range when 0 is outside the limits)."""
        out = []
        for j in self.joints:
            out.append(j.home if j.home is not None else (0.0 if j.min <= 0.0 <= j.max else j.min / 2 + j.max / 2))
        return out

    def copy(self) -> ArmSpec:
        """A deep copy that still saves into the same document's comments."""
        doc = self._doc
        self._doc = None
        tables = [j._table for j in self.joints]
        for j in self.joints:
            j._table = None
        try:
            new = copy.deepcopy(self)
        finally:
            self._doc = doc
            for j, t in zip(self.joints, tables):
                j._table = t
        new._doc = doc
        for j, t in zip(new.joints, tables):
            j._table = t
        return new


# -- validation -----------------------------------------------------------


def _is_number(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _is_finite(v) -> bool:
    """``math.isfinite`` that answers False (instead of raising) for integers too large for a float."""
    try:
        return math.isfinite(v)
    except OverflowError:
        return False


def validate(spec: ArmSpec, file: str = "<arm>", lines: _Lines | None = None) -> list[Problem]:
    """Check an :class:`ArmSpec` and return every problem found (empty when valid)."""
    lines = lines or _Lines("")
    out: list[Problem] = []

    def bad(msg, line=None, joint=None):
        out.append(Problem(msg, file, line, joint))

    if not isinstance(spec.name, str) or not spec.name.strip():
        bad(f"name must be a non-empty text, got {spec.name!r}", lines.key(None, "name"))
    if spec.convention not in CONVENTIONS:
        bad(f"convention must be 'standard' or 'modified', got {spec.convention!r}", lines.key(None, "convention"))
    for label, key in (("base", "xyz"), ("base", "rpy"), ("tool", "xyz"), ("tool", "rpy")):
        vec = getattr(spec, f"{label}_{key}")
        if len(vec) != 3 or not all(_is_number(v) for v in vec):
            bad(f"[{label}] {key} must be a list of three numbers, got {list(vec)!r}", lines.key(label, key))
        elif not all(_is_finite(v) for v in vec):
            bad(f"[{label}] {key} must be finite, got {list(vec)!r}", lines.key(label, key))
        elif not all(abs(v) <= MAX_MAGNITUDE for v in vec):
            vunit = spec.units.length if key == "xyz" else spec.units.angle
            bad(f"[{label}] {key} must lie within ±{_MAX_TEXT} {vunit}, got {list(vec)!r}", lines.key(label, key))
    if not spec.joints:
        bad("the arm has no joints; add at least one [[joint]] table")
    if len(spec.joints) > MAX_JOINTS:
        bad(f"the arm has {len(spec.joints)} joints; at most {MAX_JOINTS} are supported")
    seen = {}
    for idx, j in enumerate(spec.joints):
        jname = j.name if isinstance(j.name, str) and j.name else f"#{idx + 1}"

        def jline(key, idx=idx):
            return lines.key(("joint", idx), key)

        if not isinstance(j.name, str) or not j.name.strip():
            bad(f"name must be a non-empty text, got {j.name!r}", jline("name"), f"#{idx + 1}")
        elif j.name in seen:
            bad(f"name is used twice (also joint {seen[j.name] + 1}); joint names must be unique", jline("name"), jname)
        else:
            seen[j.name] = idx
        if j.type not in JOINT_TYPES:
            bad(f"type must be 'revolute' or 'prismatic', got {j.type!r}", jline("type"), jname)
        unit = spec.units.angle if j.type == "revolute" else spec.units.length
        bad_keys = set()  # keys whose value is missing or not a finite number
        for key in ("a", "alpha", "d", "theta", "min", "max", "home"):
            v = getattr(j, key)
            if key == "home" and v is None:
                continue
            if v is None:
                bad(
                    f"{key} is missing; give the joint's {'lower' if key == 'min' else 'upper'} limit in {unit}",
                    lines.table(("joint", idx)),
                    jname,
                )
                bad_keys.add(key)
            elif not _is_number(v):
                bad(f"{key} must be a number, got {v!r}", jline(key), jname)
                bad_keys.add(key)
            elif not _is_finite(v):
                bad(f"{key} must be finite, got {v!r}", jline(key), jname)
                bad_keys.add(key)
            elif abs(v) > MAX_MAGNITUDE:
                key_unit = {"a": spec.units.length, "d": spec.units.length, "alpha": spec.units.angle,
                            "theta": spec.units.angle}.get(key, unit)
                bad(f"{key} must lie within ±{_MAX_TEXT} {key_unit} (larger is absurd for an arm), got {v!r}",
                    jline(key), jname)
                bad_keys.add(key)
        if not bad_keys & {"min", "max"}:  # the limits are checked even when, say, a is wrong
            if not j.min < j.max:
                bad(f"min must be below max, got min = {j.min} and max = {j.max} {unit}", jline("min"), jname)
            elif j.home is not None and "home" not in bad_keys and not j.min <= j.home <= j.max:
                bad(f"home must lie within [{j.min}, {j.max}] {unit}, got {j.home}", jline("home"), jname)
    return out


# -- reading --------------------------------------------------------------


class _Lines:
    """Finds the line of a table or key in the source text (1-based), where it can.

    One pass indexes every table header and every ``key =`` line by the table
    it sits in (``None`` for the top level, ``"units"`` for ``[units]``,
    ``("joint", i)`` for the i-th ``[[joint]]``); a dotted key is indexed by
    its first part.  Lookups are then constant time.
    """

    _HEADER = re.compile(r"^\s*(\[\[?)\s*([^\[\]#]+?)\s*\]\]?\s*(#.*)?$")
    _KEY = re.compile(r"""^\s*("[^"]*"|'[^']*'|[A-Za-z0-9_-]+)\s*[.=]""")

    def __init__(self, text: str):
        self.headers: dict = {}
        self.keys: dict = {}
        self.repeats: dict = {}  # key or table name → line of its first repetition
        counts: dict = {}
        where = None
        for i, row in enumerate(text.splitlines()):
            m = self._HEADER.match(row)
            if m:
                name = m.group(2)
                if m.group(1) == "[[":
                    where = (name, counts.get(name, 0))
                    counts[name] = where[1] + 1
                else:
                    where = name
                if where in self.headers and not isinstance(where, tuple):
                    self.repeats.setdefault(name, i + 1)
                self.headers.setdefault(where, i + 1)
                continue
            m = self._KEY.match(row)
            if m:
                k = (where, m.group(1).strip("\"'"))
                if k in self.keys:
                    self.repeats.setdefault(k[1], i + 1)
                self.keys.setdefault(k, i + 1)

    def table(self, which):
        return None if which is None else self.headers.get(which)

    def key(self, which, key):
        return self.keys.get((which, key))

    def repeat(self, name):
        return self.repeats.get(name)


def _plain(v):
    return v.unwrap() if hasattr(v, "unwrap") else v


def loads(text: str, file: str = "<arm>") -> ArmSpec:
    """Parse and validate arm-file text.

    Raises
    ------
    ArmFileError
        With every problem found.
    """
    lines = _Lines(text)
    problems: list[Problem] = []

    def bad(msg, line=None, joint=None):
        problems.append(Problem(msg, file, line, joint))

    try:
        doc = tomlkit.parse(text)
    except Exception as exc:  # ParseError, and a few plain errors on odd input
        dup = re.match(r'Key "(.*)" already exists', str(exc))
        if dup:  # tomlkit places these on the line after the repeat, or nowhere: find the repeat ourselves
            raise ArmFileError(
                [Problem(f'not valid TOML: "{dup.group(1)}" is given twice', file, lines.repeat(dup.group(1)))]
            ) from None
        raise ArmFileError([Problem(f"not valid TOML: {exc}", file, getattr(exc, "line", None))]) from None
    data = _plain(doc)

    for key in data:
        if key not in TOP_KEYS:
            bad(
                f"unknown key {key!r} at top level; expected one of {', '.join(TOP_KEYS)} "
                "(put your own data under [notes])",
                lines.key(None, key) or lines.table(key),
            )
    fmt = data.get("format")
    if fmt is None:
        bad("'format = 1' is missing at the top of the file")
    elif not (_is_number(fmt) and fmt == FORMAT):
        bad(f"format must be 1, got {fmt!r}; this Poser reads arm-file format 1", lines.key(None, "format"))

    name = data.get("name", Path(file).stem if file and not file.startswith("<") else "arm")
    convention = data.get("convention", "standard")

    units_tbl = data.get("units", {})
    length, angle = "mm", "deg"
    if not isinstance(units_tbl, dict):
        bad(f"[units] must be a table, got {units_tbl!r}", lines.key(None, "units"))
    else:
        for key in units_tbl:
            if key not in UNIT_KEYS:
                bad(f"unknown key {key!r} in [units]; expected length or angle", lines.key("units", key))
        length = units_tbl.get("length", "mm")
        angle = units_tbl.get("angle", "deg")
        if not isinstance(length, str) or length not in LENGTH_UNITS:
            bad(
                f"[units] length must be one of {', '.join(LENGTH_UNITS)}, got {length!r}", lines.key("units", "length")
            )
            length = "mm"
        if not isinstance(angle, str) or angle not in ANGLE_UNITS:
            bad(f"[units] angle must be one of {', '.join(ANGLE_UNITS)}, got {angle!r}", lines.key("units", "angle"))
            angle = "deg"

    places = {}
    for label in ("base", "tool"):
        tbl = data.get(label, {})
        places[label] = ((0.0, 0.0, 0.0), (0.0, 0.0, 0.0))
        if not isinstance(tbl, dict):
            bad(f"[{label}] must be a table with xyz and rpy, got {tbl!r}", lines.key(None, label))
            continue
        for key in tbl:
            if key not in PLACE_KEYS:
                bad(f"unknown key {key!r} in [{label}]; expected xyz or rpy", lines.key(label, key))
        vecs = []
        for key in PLACE_KEYS:
            v = tbl.get(key, [0.0, 0.0, 0.0])
            if not isinstance(v, list):
                v = [v]
            vecs.append(tuple(v))
        places[label] = tuple(vecs)

    notes = data.get("notes", {})
    if not isinstance(notes, dict):
        bad(f"notes must be a table ([notes]), got {type(notes).__name__}", lines.key(None, "notes"))
        notes = {}

    joints_raw = data.get("joint", [])
    joints: list[JointSpec] = []
    tables = doc.get("joint") if isinstance(joints_raw, list) else None
    if not isinstance(joints_raw, list) or not all(isinstance(t, dict) for t in joints_raw):
        bad("joints must be [[joint]] tables", lines.key(None, "joint") or lines.table("joint"))
        joints_raw = []
    too_many = len(joints_raw) > MAX_JOINTS
    if too_many:
        bad(f"the arm has {len(joints_raw)} joints; at most {MAX_JOINTS} are supported")
        joints_raw = []
    for idx, tbl in enumerate(joints_raw):
        jname = tbl.get("name", f"J{idx + 1}")
        label = jname if isinstance(jname, str) else f"#{idx + 1}"
        for key in tbl:
            if key not in JOINT_KEYS:
                bad(
                    f"unknown key {key!r}; a joint takes {', '.join(JOINT_KEYS)}", lines.key(("joint", idx), key), label
                )
        if "type" not in tbl:
            bad('type is missing; give type = "revolute" or "prismatic"', lines.table(("joint", idx)), label)
        j = JointSpec(
            name=jname,
            type=tbl.get("type", "revolute"),
            a=tbl.get("a", 0.0),
            alpha=tbl.get("alpha", 0.0),
            d=tbl.get("d", 0.0),
            theta=tbl.get("theta", 0.0),
            min=tbl.get("min"),
            max=tbl.get("max"),
            home=tbl.get("home"),
            _table=tables[idx] if tables is not None else None,
        )
        joints.append(j)

    spec = ArmSpec(
        name=name,
        joints=joints,
        convention=convention,
        units=Units(length, angle),
        base_xyz=places["base"][0],
        base_rpy=places["base"][1],
        tool_xyz=places["tool"][0],
        tool_rpy=places["tool"][1],
        notes=notes,
        _doc=doc,
    )
    found = validate(spec, file, lines)
    if too_many:  # the joints were dropped above; "no joints" would be false
        found = [p for p in found if not p.message.startswith("the arm has no joints")]
    problems += found
    if problems:
        raise ArmFileError(problems)
    return spec


def load(path) -> ArmSpec:
    """Read and validate an arm file.

    Raises
    ------
    ArmFileError
        When the file cannot be read or holds any problem; every problem is listed.
    """
    path = Path(path)
    file = str(path)
    try:
        size = path.stat().st_size
        if path.is_dir():
            raise ArmFileError([Problem("is a folder, not an arm file", file)])
        if size > MAX_BYTES:
            raise ArmFileError(
                [Problem(f"file is {size} bytes; an arm file may hold at most {MAX_BYTES} (1 MiB)", file)]
            )
        with open(path, "rb") as fh:  # bounded: a device or pipe may report size 0 and never end
            raw = fh.read(MAX_BYTES + 1)
        if len(raw) > MAX_BYTES:
            too_big = f"file holds more than {MAX_BYTES} bytes; an arm file may hold at most 1 MiB"
            raise ArmFileError([Problem(too_big, file)])
    except ArmFileError:
        raise
    except (OSError, ValueError) as exc:  # ValueError: e.g. a NUL character in the path
        raise ArmFileError([Problem(f"cannot read the file: {getattr(exc, 'strerror', None) or exc}", file)]) from None
    return loads_bytes(raw, file)


def loads_bytes(raw: bytes, file: str = "<arm>") -> ArmSpec:
    """Validate raw bytes as an arm file (size, binary content, UTF-8), then parse them."""
    if len(raw) > MAX_BYTES:
        raise ArmFileError(
            [Problem(f"file is {len(raw)} bytes; an arm file may hold at most {MAX_BYTES} (1 MiB)", file)]
        )
    if b"\x00" in raw:
        raise ArmFileError([Problem("this is a binary file, not a TOML arm file", file)])
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ArmFileError(
            [Problem(f"not UTF-8 text (bad byte at offset {exc.start}); arm files are UTF-8 TOML", file)]
        ) from None
    if text.startswith("\ufeff"):
        text = text[1:]
    return loads(text, file)


# -- writing --------------------------------------------------------------


def _num(v):
    """A number as TOML writes it: integers stay integers."""
    if isinstance(v, float) and v.is_integer() and abs(v) < 1e15:
        return int(v)
    return v


def _set(tbl, key, value, default=None):
    """Set ``key`` in a tomlkit table only if the value changed, so formatting and comments stay."""
    if value is None or (default is not None and value == default and key not in tbl):
        if key in tbl and value is None:
            del tbl[key]
        return
    if key in tbl and _plain(tbl[key]) == value and type(_plain(tbl[key])) is type(value):
        return
    if key in tbl and _is_number(_plain(tbl[key])) and _is_number(value) and _plain(tbl[key]) == value:
        return
    tbl[key] = _num(value) if _is_number(value) else value


def _set_vec(doc, label, xyz, rpy):
    zero = (0.0, 0.0, 0.0)
    if tuple(xyz) == zero and tuple(rpy) == zero and label not in doc:
        return
    if label not in doc:
        doc[label] = tomlkit.table()
    tbl = doc[label]
    for key, vec in (("xyz", xyz), ("rpy", rpy)):
        if key in tbl and [float(v) for v in _plain(tbl[key])] == [float(v) for v in vec]:
            continue
        if key not in tbl and tuple(vec) == zero:
            continue
        arr = tomlkit.array()
        arr.extend(_num(float(v)) for v in vec)
        tbl[key] = arr


def dumps(spec: ArmSpec) -> str:
    """The arm as TOML text, keeping the comments of the document it was loaded from."""
    problems = validate(spec)
    if problems:
        raise ArmFileError(problems)
    doc = spec._doc
    if doc is None:
        doc = tomlkit.document()
        doc.add(tomlkit.comment(f"Poser arm file: {spec.name}"))
        doc.add(tomlkit.comment("Format: docs/arm-file.md. Lengths in [units] length, angles in [units] angle."))
        doc.add(tomlkit.nl())
    doc = tomlkit.parse(tomlkit.dumps(doc)) if spec._doc is None else doc
    _set(doc, "format", FORMAT)
    _set(doc, "name", spec.name)
    _set(doc, "convention", spec.convention, default="standard")
    if "units" not in doc:
        doc["units"] = tomlkit.table()
    _set(doc["units"], "length", spec.units.length)
    _set(doc["units"], "angle", spec.units.angle)
    _set_vec(doc, "base", spec.base_xyz, spec.base_rpy)
    _set_vec(doc, "tool", spec.tool_xyz, spec.tool_rpy)
    if "notes" in doc:
        if _plain(doc["notes"]) != spec.notes:
            if spec.notes:
                doc["notes"] = spec.notes
            else:
                del doc["notes"]
    elif spec.notes:
        doc["notes"] = spec.notes
    tables = []
    for j in spec.joints:
        tbl = j._table if isinstance(j._table, tomlkit.items.Table) else tomlkit.table()
        _set(tbl, "name", j.name)
        _set(tbl, "type", j.type)
        for key in ("a", "alpha", "d", "theta"):
            _set(tbl, key, getattr(j, key), default=0.0)
        _set(tbl, "min", j.min)
        _set(tbl, "max", j.max)
        _set(tbl, "home", j.home)
        tables.append(tbl)
    old = doc.get("joint")
    if isinstance(old, tomlkit.items.AoT) and len(old) == len(tables) and all(a is b for a, b in zip(old, tables)):
        return tomlkit.dumps(doc)  # same joints in the same order: edited in place, layout untouched
    # Joints added, removed or reordered: rebuild the array.  A parsed AoT adds no blank line before
    # tables that already carry their own spacing (an unparsed one would add one on every save).
    aot = tomlkit.items.AoT([], name="joint", parsed=True)
    keys = list(doc.keys())
    more_after = "joint" in keys and keys.index("joint") + 1 < len(keys)  # e.g. [notes] after the joints
    for k, tbl in enumerate(tables):
        if not any(tbl is t for t in (old or [])):  # a new table: one blank line before it
            if k and not tables[k - 1].as_string().endswith("\n\n") and "\n" not in tbl.trivia.indent:
                tbl.trivia.indent = "\n" + tbl.trivia.indent
            if k + 1 < len(tables) or more_after:
                tbl.add(tomlkit.nl())
        aot.append(tbl)
    if "joint" in doc:
        doc["joint"] = aot
    else:
        doc.append("joint", aot)
    return tomlkit.dumps(doc)


def write_text_atomic(path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path`` atomically: a temporary file in the same folder, then a rename.

    An existing file keeps its permissions; a new one gets the usual ``0o666 & ~umask``.
    A failure leaves the old file as it was and no temporary file behind.

    Raises
    ------
    ArmFileError
        When no temporary file can be made in the folder (missing, not writable).
    """
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise ArmFileError([Problem(f"cannot save here: {exc.strerror or exc}", str(path))]) from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        if path.exists():
            mode = path.stat().st_mode & 0o777
        else:  # a new file gets the usual permissions, not mkstemp's private 0600
            umask = os.umask(0)
            os.umask(umask)
            mode = 0o666 & ~umask
        os.chmod(tmp, mode)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def save(spec: ArmSpec, path) -> None:
    """Write the arm to ``path`` atomically (:func:`write_text_atomic`).

    Comments and formatting of the loaded document are kept.  After saving,
    ``spec`` refers to the written document, so later saves keep them too.
    """
    path = Path(path)
    text = dumps(spec)
    write_text_atomic(path, text)
    fresh = loads(text, str(path))
    spec._doc = fresh._doc
    for j, fj in zip(spec.joints, fresh.joints):
        j._table = fj._table
