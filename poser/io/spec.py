"""The arm as plain data (:class:`ArmSpec`, :class:`JointSpec`) and its validation.

An :class:`ArmSpec` holds the values exactly as written in the file, in the
arm's own units.  It is plain data: copies (:meth:`ArmSpec.copy`,
:func:`copy.deepcopy`) are independent, and nothing that reads a spec
(:func:`validate`, :func:`poser.io.writing.dumps`) changes it.  Two
read-only references ride along and are shared by copies, since nothing ever
changes them:

* ``source`` — the text the arm was loaded from (:class:`poser.io.document.ArmSource`),
  so a save keeps its comments and layout;
* ``JointSpec.origin`` — which ``[[joint]]`` of that text a joint came from
  (keep it when rebuilding a joint from an edited row, and the joint's
  comments stay with it wherever it moves).

``stamp`` (:class:`poser.io.stamp.DiskStamp`) records the file as it was on
disk when it was loaded or last saved; :func:`poser.io.writing.save` checks it
and updates it.
"""

from __future__ import annotations

import copy
import math
import unicodedata
from dataclasses import dataclass, field

import numpy as np

from poser.core.chain import Chain
from poser.core.dh import CONVENTIONS, DHRow, chain_from_dh
from poser.core.transforms import from_xyz_rpy
from poser.core.units import Units
from poser.io.errors import ArmFileError, Problem
from poser.text import brief, name_key, printable, visible

__all__ = [
    "ArmSpec",
    "JointSpec",
    "JointOrigin",
    "validate",
    "FORMAT",
    "MAX_JOINTS",
    "MAX_MAGNITUDE",
    "MAX_TURNS",
    "revolute_bound",
    "JOINT_TYPES",
    "TOP_KEYS",
    "JOINT_KEYS",
    "UNIT_KEYS",
    "PLACE_KEYS",
]

FORMAT = 1
MAX_JOINTS = 32
MAX_MAGNITUDE = 1e9
"""Largest size of any number in an arm file (its own units): larger ones are refused as absurd, since
kinematics with them overflows to infinity (1e9 mm is 1000 km)."""
_MAX_TEXT = "1e9"
MAX_TURNS = 100
"""A revolute joint's limits lie within ±MAX_TURNS turns (±36000 deg, ±200π rad): inverse kinematics
offers every extra turn a joint's range allows, so the range must stay bounded."""
JOINT_TYPES = ("revolute", "prismatic")
TOP_KEYS = ("format", "name", "convention", "units", "base", "tool", "joint", "notes")
JOINT_KEYS = ("name", "type", "a", "alpha", "d", "theta", "min", "max", "home")
UNIT_KEYS = ("length", "angle")
PLACE_KEYS = ("xyz", "rpy")


def revolute_bound(angle_unit: str) -> tuple[float, str]:
    """The bound of a revolute joint's limits in ``angle_unit`` and how to print it: ``(36000.0, "36000 deg")``."""
    if angle_unit == "deg":
        return 360.0 * MAX_TURNS, f"{360 * MAX_TURNS} deg"
    bound = 2.0 * math.pi * MAX_TURNS
    return bound, f"{bound!r} rad ({2 * MAX_TURNS}π)"


@dataclass(frozen=True, eq=False)
class JointOrigin:
    """Which ``[[joint]]`` of a loaded text a joint came from (read-only; shared by copies)."""

    source: object  # poser.io.document.ArmSource
    index: int

    def __copy__(self):
        return self

    def __deepcopy__(self, memo):
        return self

    def __repr__(self):
        return f"JointOrigin(joint {self.index + 1} of {self.source!r})"


@dataclass
class JointSpec:
    """One ``[[joint]]`` row, in the arm's units (as written in the file).

    ``_table`` is the joint's :class:`JointOrigin` (also readable as ``origin``):
    ``None`` for a joint that is not in the loaded text.  It takes no part in
    comparisons.
    """

    name: str
    type: str = "revolute"
    a: float = 0.0
    alpha: float = 0.0
    d: float = 0.0
    theta: float = 0.0
    min: float = -180.0
    max: float = 180.0
    home: float | None = None
    _table: JointOrigin | None = field(default=None, repr=False, compare=False)

    @property
    def origin(self) -> JointOrigin | None:
        """Where this joint came from in the loaded text (None: a new joint)."""
        return self._table


def _home(j: JointSpec) -> float:
    return j.home if j.home is not None else (0.0 if j.min <= 0.0 <= j.max else j.min / 2 + j.max / 2)


@dataclass
class ArmSpec:
    """An arm as described in an arm file, values in the arm's own units (plain data; see the module docstring)."""

    name: str
    joints: list[JointSpec]
    convention: str = "standard"
    units: Units = field(default_factory=Units)
    base_xyz: tuple = (0.0, 0.0, 0.0)
    base_rpy: tuple = (0.0, 0.0, 0.0)
    tool_xyz: tuple = (0.0, 0.0, 0.0)
    tool_rpy: tuple = (0.0, 0.0, 0.0)
    notes: dict = field(default_factory=dict)
    source: object = field(default=None, repr=False, compare=False)  # poser.io.document.ArmSource or None
    stamp: object = field(default=None, repr=False, compare=False)  # poser.io.stamp.DiskStamp or None

    @property
    def _doc(self):
        """The loaded text (:attr:`source`); the name older code knew it by.  Setting None forgets it."""
        return self.source

    @_doc.setter
    def _doc(self, value):
        self.source = value

    def to_chain(self) -> Chain:
        """The core's model of this arm (angles converted to radians).

        Raises
        ------
        ArmFileError
            When the arm is invalid (every problem listed).
        """
        problems = validate(self)
        if problems:
            raise ArmFileError(problems)
        u = self.units
        rad = u.angle_to_rad
        rows = []
        for j in self.joints:
            scale = rad if j.type == "revolute" else 1.0
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
                    home=float(_home(j)) * scale,
                )
            )
        base = from_xyz_rpy(np.array(self.base_xyz, float), np.array(self.base_rpy, float) * rad)
        tool = from_xyz_rpy(np.array(self.tool_xyz, float), np.array(self.tool_rpy, float) * rad)
        return chain_from_dh(rows, self.convention, base=base, tool=tool, name=self.name, units=u)

    def home_values(self) -> list[float]:
        """Home value of every joint in the arm's units (0, or mid-range when 0 is outside the limits)."""
        return [_home(j) for j in self.joints]

    def copy(self) -> ArmSpec:
        """An independent copy (the read-only source and joint origins are shared, so it saves with the comments)."""
        return copy.deepcopy(self)


# -- validation -----------------------------------------------------------


def _is_number(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool)


def _is_finite(v) -> bool:
    """``math.isfinite`` that answers False (instead of raising) for integers too large for a float."""
    try:
        return math.isfinite(v)
    except OverflowError:
        return False


def _looks(name: str) -> str:
    """How a name looks once printed: escapes shown, Unicode form and kinds of space ignored."""
    return "".join(unicodedata.normalize("NFKC", printable(name)).split())


def _no_line(_path):
    return None


def validate(spec: ArmSpec, file: str = "<arm>", lines=None) -> list[Problem]:
    """Check an :class:`ArmSpec` and return every problem found (empty when valid).

    Parameters
    ----------
    spec : ArmSpec
    file : str
        Named in each problem.
    lines : callable, optional
        ``lines(path) -> int | None`` gives the line of a key path such as
        ``("joint", 2, "min")`` or ``("units", "length")``.
    """
    line = lines or _no_line
    out: list[Problem] = []

    def bad(msg, where=None, joint=None):
        out.append(Problem(msg, file, line(where) if where else None, joint))

    if not isinstance(spec.name, str) or not spec.name:
        bad(f"name must be a non-empty text, got {brief(spec.name)}", ("name",))
    elif not visible(spec.name):
        bad(f"name must hold a visible character (not only spaces or invisible characters), got {brief(spec.name)}",
            ("name",))
    if spec.convention not in CONVENTIONS:
        bad(f"convention must be 'standard' or 'modified', got {brief(spec.convention)}", ("convention",))
    for label, key in (("base", "xyz"), ("base", "rpy"), ("tool", "xyz"), ("tool", "rpy")):
        vec = getattr(spec, f"{label}_{key}")
        try:
            vec = list(vec)
        except TypeError:
            vec = [vec]
        if len(vec) != 3 or not all(_is_number(v) for v in vec):
            bad(f"[{label}] {key} must be a list of three numbers, got {brief(vec)}", (label, key))
        elif not all(_is_finite(v) or isinstance(v, int) for v in vec):
            bad(f"[{label}] {key} must be finite, got {brief(vec)}", (label, key))
        elif not all(abs(v) <= MAX_MAGNITUDE for v in vec):  # also an integer too large for a float
            vunit = spec.units.length if key == "xyz" else spec.units.angle
            bad(f"[{label}] {key} must lie within ±{_MAX_TEXT} {vunit}, got {brief(vec)}", (label, key))
    if not spec.joints:
        bad("the arm has no joints; add at least one [[joint]] table")
    if len(spec.joints) > MAX_JOINTS:
        bad(f"the arm has {len(spec.joints)} joints; at most {MAX_JOINTS} are supported")
    seen: dict = {}  # exact name → index
    keys: dict = {}  # name_key → index
    for idx, j in enumerate(spec.joints):
        named = isinstance(j.name, str) and bool(visible(j.name))
        jname = j.name if named else f"#{idx + 1}"
        if not isinstance(j.name, str) or not j.name:
            bad(f"name must be a non-empty text, got {brief(j.name)}", ("joint", idx, "name"), jname)
        elif not named:
            bad(f"name must hold a visible character (not only spaces or invisible characters), got {brief(j.name)}",
                ("joint", idx, "name"), jname)
        elif j.name in seen:
            bad(f"name is used twice (also joint {seen[j.name] + 1}); joint names must be unique",
                ("joint", idx, "name"), jname)
        elif name_key(j.name) in keys:
            k = keys[name_key(j.name)]
            other = spec.joints[k].name
            alike = _looks(j.name) == _looks(other)  # even as printed: their code points tell them apart
            written = f" (written {ascii(j.name)} and {ascii(other)})" if alike else ""
            bad(f"name '{printable(j.name)}' and joint {k + 1}'s name '{printable(other)}'{written} differ only by "
                "spaces, invisible characters or Unicode form; joint names must be told apart at a glance",
                ("joint", idx, "name"), jname)
        else:
            seen[j.name] = idx
            keys[name_key(j.name)] = idx
        if j.type not in JOINT_TYPES:
            bad(f"type must be 'revolute' or 'prismatic', got {brief(j.type)}", ("joint", idx, "type"), jname)
        unit = spec.units.angle if j.type == "revolute" else spec.units.length
        bad_keys = set()  # keys whose value is missing or not a finite number
        for key in ("a", "alpha", "d", "theta", "min", "max", "home"):
            v = getattr(j, key)
            where = ("joint", idx, key)
            if key == "home" and v is None:
                continue
            if v is None:
                bad(f"{key} is missing; give the joint's {'lower' if key == 'min' else 'upper'} limit in {unit}",
                    ("joint", idx), jname)
                bad_keys.add(key)
            elif not _is_number(v):
                bad(f"{key} must be a number, got {brief(v)}", where, jname)
                bad_keys.add(key)
            elif not _is_finite(v) and not isinstance(v, int):  # an integer too large for a float: its size below
                bad(f"{key} must be finite, got {brief(v)}", where, jname)
                bad_keys.add(key)
            elif abs(v) > MAX_MAGNITUDE:
                key_unit = {"a": spec.units.length, "d": spec.units.length, "alpha": spec.units.angle,
                            "theta": spec.units.angle}.get(key, unit)
                bad(f"{key} must lie within ±{_MAX_TEXT} {key_unit} (larger is absurd for an arm), got {brief(v)}",
                    where, jname)
                bad_keys.add(key)
            elif key in ("min", "max") and j.type == "revolute":
                bound, text = revolute_bound(spec.units.angle)
                if abs(v) > bound:
                    bad(f"{key} must lie within ±{text} ({MAX_TURNS} turns) for a revolute joint, got {brief(v)}",
                        where, jname)
                    bad_keys.add(key)
        if not bad_keys & {"min", "max"}:  # the limits are checked even when, say, a is wrong
            if not j.min < j.max:
                bad(f"min must be below max, got min = {j.min} and max = {j.max} {unit}", ("joint", idx, "min"), jname)
            elif j.home is not None and "home" not in bad_keys and not j.min <= j.home <= j.max:
                bad(f"home must lie within [{j.min}, {j.max}] {unit}, got {j.home}", ("joint", idx, "home"), jname)
    return out
