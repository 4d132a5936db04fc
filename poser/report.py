"""Every sentence and number-as-text of a verdict, for the command line and the window alike.

The core (:mod:`poser.core`) returns plain data; this module words it in the
arm's own units.  When the command line and the window show the same thing,
they call the same function here, so they show the same words and the same
digits: limits, singularities, manipulability, families, misses, the verdict
of an IK solve.  No Qt here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "fmt",
    "num",
    "printable",
    "length",
    "angle",
    "joint_value",
    "joint_unit",
    "LimitState",
    "limit_state",
    "limit_states",
    "violation_words",
    "violations_words",
    "worst_violation",
    "limits_cell",
    "manipulability_text",
    "manipulability_unit",
    "manipulability_tip",
    "condition_text",
    "singularity_words",
    "finding_words",
    "family_words",
    "largest_move",
    "distance_text",
    "miss_words",
    "solver_words",
    "ik_message",
    "ik_summary",
    "nearest_point_words",
    "parts_text",
    "margin_words",
    "miss_text",
    "spin_text",
    "reach_words",
    "reach_summary",
    "margin_cell",
    "manipulability_figure",
    "move_cells",
    "spin_cell",
    "configuration_cell",
    "inside_workspace_words",
    "ISO_9283_NOTE",
    "NEAR_LIMIT_MARGIN",
    "STUDY_CAUTION",
    "length_digits",
    "point_text",
    "size_text",
    "workspace_lines",
    "placement_words",
    "PLACEMENT_NOTE",
    "cube_lines",
]

NEAR_LIMIT_MARGIN = 0.05
"""A joint within this fraction of its range from a limit is near it (the window's default)."""


# -- numbers ---------------------------------------------------------------------------------------


def fmt(v: float, digits: int = 3) -> str:
    """A number for a label: fixed decimals, no trailing zeros, no '-0'; ∞ for infinity."""
    v = float(v)
    if not math.isfinite(v):
        return "∞" if v > 0 else "-∞" if v < 0 else "–"
    text = f"{v:.{digits}f}"
    if "." in text:  # only decimals lose their trailing zeros (310 stays 310)
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def num(v: float) -> str:
    """A number for command-line output: six decimals without trailing zeros (large values in %g)."""
    v = float(v)
    v = 0.0 if abs(v) < 5e-13 else v
    return f"{v:.6f}".rstrip("0").rstrip(".") if abs(v) < 1e12 else f"{v:.6g}"


_CONTROL = {0x07: "\\a", 0x08: "\\b", 0x09: "\\t", 0x0A: "\\n", 0x0B: "\\v", 0x0C: "\\f", 0x0D: "\\r"}


def printable(text) -> str:
    """``text`` with control characters shown as escapes (``\\n``, ``\\x07``), safe to print anywhere."""
    try:
        from poser.text import printable as _p  # the arm-file layer's one home, where present
    except ImportError:  # pragma: no cover - until it lands
        _p = None
    if _p is not None:
        return _p(text)
    out = []
    for ch in str(text):
        o = ord(ch)
        if o < 0x20 or o == 0x7F or 0x80 <= o < 0xA0:
            out.append(_CONTROL.get(o, f"\\x{o:02x}"))
        else:
            out.append(ch)
    return "".join(out)


def decimals(chain, kind: str) -> int:
    """Decimals that give a value back within a tenth of what Poser calls reaching — the digits of every
    number meant to be typed in again (joint values, the nearest reachable point and its orientation).

    ``kind`` is ``"length"`` (a tenth of :func:`poser.core.ik.result.default_tolerance`'s position, so
    it follows the arm's size and length unit: 4 for a 2 m arm in mm, 7 in m) or ``"angle"`` (a tenth of
    the orientation tolerance in the arm's angle unit: 6 in deg, 7 in rad).
    """
    from poser.core.ik.result import default_tolerance

    pos, ori = default_tolerance(chain)
    if kind == "length":
        step = 0.1 * pos
    elif kind == "angle":
        step = 0.1 * float(chain.units.angle_out(ori))
    else:
        raise ValueError(f"kind must be 'length' or 'angle', got {kind!r}")
    if not (math.isfinite(step) and step > 0):
        return 6
    return int(min(15, max(3, math.ceil(-math.log10(step)))))


def joint_decimals(chain, i: int) -> int:
    """:func:`decimals` of joint ``i``'s values (angle for revolute, length for prismatic joints)."""
    return decimals(chain, "angle" if chain.revolute[i] else "length")


def _angle_digits(chain) -> int:
    return 1 if chain.units.angle == "deg" else 3


def length(chain, v: float, digits: int = 3) -> str:
    """``"12.5 mm"`` in the arm's length unit."""
    return f"{fmt(v, digits)} {chain.units.length}"


def angle(chain, rad: float, digits: int | None = None) -> str:
    """An angle given in radians, as text in the arm's angle unit: ``"12.5 deg"``."""
    d = _angle_digits(chain) if digits is None else digits
    return f"{fmt(float(chain.units.angle_out(rad)), d)} {chain.units.angle}"


def joint_unit(chain, i: int) -> str:
    return chain.units.joint_unit(chain.kinds[i])


def joint_value(chain, i: int, v: float, digits: int | None = None) -> str:
    """A value (or difference) of joint ``i`` in internal units, as text in the arm's units."""
    if chain.revolute[i]:
        return angle(chain, v, digits)
    return length(chain, v, 3 if digits is None else digits)


def _name(chain, i):
    return printable(chain.names[i])


# -- limits ----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class LimitState:
    """Where one joint stands against its limits.

    ``level`` is ``"ok"``, ``"near"`` (within the margin), ``"at"`` (on a limit) or ``"beyond"``;
    ``words`` says the same for a person; ``fraction`` is the margin to the nearer limit as a
    fraction of the range (0 at a limit, 0.5 mid-range, negative beyond).
    """

    level: str
    words: str
    side: str | None
    fraction: float


def limit_state(value: float, lower: float, upper: float, margin: float = NEAR_LIMIT_MARGIN,
                unit: str = "") -> LimitState:
    """Classify ``value`` against ``[lower, upper]`` (same units); ``margin`` is a fraction of the range."""
    span = upper - lower
    tol = 1e-9 * max(span, 1.0)
    to_lo, to_hi = value - lower, upper - value
    side = "lower" if to_lo <= to_hi else "upper"
    left = min(to_lo, to_hi)
    frac = left / span if span > 0 else 0.0
    u = f" {unit}" if unit else ""
    if left < -tol:
        return LimitState("beyond", f"BEYOND {side} limit by {fmt(-left)}{u}", side, frac)
    if left <= tol:
        return LimitState("at", f"AT {side} limit", side, frac)
    if frac < margin:
        return LimitState("near", f"near {side} limit: {fmt(left)}{u} left", side, frac)
    return LimitState("ok", f"free: {fmt(left)}{u} to {side} limit", side, frac)


def limit_states(chain, q, margin: float = NEAR_LIMIT_MARGIN) -> list[LimitState]:
    """:func:`limit_state` of every joint of ``q`` (n,) internal units, in the arm's units."""
    qu = chain.q_to_user(np.asarray(q, float))
    lo, hi = chain.q_to_user(chain.lower), chain.q_to_user(chain.upper)
    return [limit_state(float(v), float(a), float(b), margin, joint_unit(chain, i))
            for i, (v, a, b) in enumerate(zip(qu, lo, hi))]


def violation_words(chain, v) -> str:
    """``"J3 elbow: 12.5 deg over upper"`` for a :class:`poser.core.ik.Violation`."""
    where = "over upper" if v.side == "upper" else "under lower"
    return f"{printable(v.name)}: {joint_value(chain, v.joint, v.excess)} {where}"


def _excess_user(chain, v) -> float:
    return float(chain.units.angle_out(v.excess)) if chain.revolute[v.joint] else float(v.excess)


def violations_words(chain, violations) -> list[str]:
    """Every limit violation in words, largest first (compared in the arm's units)."""
    vs = sorted(violations or (), key=lambda v: -_excess_user(chain, v))
    return [violation_words(chain, v) for v in vs]


def worst_violation(chain, branch) -> str:
    """The branch's largest limit violation in words, or ``"none"``."""
    w = violations_words(chain, branch.violations)
    return w[0] if w else "none"


def limits_cell(chain, branch) -> str:
    """``"yes"`` or ``"NO: J5 wrist bend 44.9 deg under"`` (the worst violation, short)."""
    if branch.within_limits:
        return "yes"
    worst = worst_violation(chain, branch)
    if worst == "none":
        return "NO"
    return "NO: " + worst.replace(": ", " ", 1).replace(" over upper", " over").replace(" under lower", " under")


# -- manipulability and singularities ----------------------------------------------------------------


def manipulability_unit(chain) -> str:
    """The unit of :func:`poser.core.jacobian.manipulability` for this arm, e.g. ``"mm³"``."""
    from poser.core.jacobian import task_space

    return task_space(chain).unit(chain.units.length)


def manipulability_text(chain, m: float) -> str:
    """``"4.635e+08 mm³"``, ``"0.3600 m²"``: four significant digits and the unit; ``"0 mm³"`` at a singularity."""
    u = manipulability_unit(chain)
    if not math.isfinite(m):
        return "–"
    if m == 0.0:
        return f"0 {u}"
    text = f"{m:#.4g}"  # four significant digits, trailing zeros kept: the width stays as the pose moves
    return f"{text} {u}"


def manipulability_tip(chain) -> str:
    """What the manipulability figure is, for a tooltip or a footnote."""
    from poser.core.jacobian import task_space

    ts = task_space(chain)
    return (
        f"manipulability: Yoshikawa's measure, the product of the singular values of the Jacobian over the "
        f"directions this arm controls ({ts.name}); in {manipulability_unit(chain)}. 0 at a singularity; "
        "larger means the tool moves more freely in every direction. Compare it between poses of the same arm."
    )


def condition_text(kappa: float) -> str:
    """A condition number as text (``∞`` at a singularity)."""
    return fmt(kappa, 1)


def finding_words(chain, f) -> str:
    """One :class:`poser.core.singularity.Finding` in words, with the joints involved."""
    names = " and ".join(_name(chain, j) for j in f.joints) if len(f.joints) <= 2 else \
        ", ".join(_name(chain, j) for j in f.joints)
    if f.kind == "elbow":
        what = "arm stretched out" if f.detail == "stretched" else "arm folded back"
        return f"{what} ({names}: at the edge of the workspace)"
    if f.kind == "wrist":
        return f"wrist axes aligned ({names} turn about one line: only their sum counts)"
    if f.kind == "shoulder":
        if f.detail in ("plane", "tool plane"):
            point = "tool point" if f.detail == "tool plane" else "wrist centre"
            return (f"{point} in the plane of the base and shoulder axes ({names} moves it only along a "
                    "direction the other joints also give)")
        return f"{_SHOULDER_WHAT.get(f.detail, _SHOULDER_WHAT['axis'])} ({names} cannot move it)"
    return f"the Jacobian loses rank (joints involved: {names})"


_SHORT = {"wrist": "wrist axes aligned", "generic": "rank lost"}
_SHOULDER_WHAT = {"axis": "wrist centre on the base axis", "plane": "wrist centre in the shoulder plane",
                  "tool": "tool point on the base axis", "tool plane": "tool point in the shoulder plane"}


def _short_finding(chain, f) -> str:
    if f.kind == "shoulder":
        what = _SHOULDER_WHAT.get(f.detail, _SHOULDER_WHAT["axis"])
    else:
        what = _SHORT.get(f.kind) or ("arm stretched out" if f.detail == "stretched" else "arm folded back")
    nums = [str(j + 1) for j in f.joints]
    joints = f"joint {nums[0]}" if len(nums) == 1 else f"joints {', '.join(nums[:-1])} and {nums[-1]}"
    return f"{what} ({joints})"


def singularity_words(chain, s, short: bool = False) -> tuple[str, str]:
    """(level, words) for a :class:`poser.core.singularity.Singularity`; level ``"ok"``, ``"near"`` or ``"at"``.

    ``short`` names the joints by number (for a status line); the long form names them and says why.
    """
    kinds = "; ".join((_short_finding if short else finding_words)(chain, f) for f in s.findings)
    if s.level == "at":
        return "at", f"AT A SINGULARITY: {kinds}" if kinds else "AT A SINGULARITY (some tool motions impossible)"
    if s.level == "near":
        return "near", f"near a singularity: {kinds}" if kinds else "near a singularity"
    return "ok", "clear of singularities"


# -- families --------------------------------------------------------------------------------------


def _ranges_text(chain, i, ranges) -> str:
    if not ranges:
        return "nowhere"
    parts = [f"{fmt(float(chain.joint_to_user(i, a)), 2)} to {fmt(float(chain.joint_to_user(i, b)), 2)}"
             for a, b in ranges[:6]]
    more = f" and {len(ranges) - 6} more ranges" if len(ranges) > 6 else ""
    return ", ".join(parts) + f" {joint_unit(chain, i)}" + more


def family_words(chain, fam) -> str:
    """What a :class:`poser.core.ik.Family` leaves free and where it stays within limits, in one sentence."""
    if fam.kind == "joint":
        main = fam.joints[0] if fam.joints else None
        if main is None:
            names = " and ".join(printable(n) for n in fam.free)
            return f"{names} free"
        name = _name(chain, main)
        others = [_name(chain, j) for j in fam.follows]
        if len(fam.joints) >= 2:
            ranges = "; ".join(f"{_name(chain, j)} {_ranges_text(chain, j, r)}"
                               for j, r in zip(fam.joints, fam.ranges or ()))
            head = " and ".join(_name(chain, j) for j in fam.joints)
            if not fam.within_limits:
                return f"{head} free, but every member breaks a limit"
            return f"{head} free: within limits for {ranges}"
        r = (fam.ranges or ((),))[0]
        lo, hi = chain.lower[main], chain.upper[main]
        follow = f" ({', '.join(others)} follow{'s' if len(others) == 1 else ''})" if others else ""
        if not r:
            return f"{name} free, but every value breaks a limit{follow}"
        whole = len(r) == 1 and abs(r[0][0] - lo) < 1e-9 and abs(r[0][1] - hi) < 1e-9
        if whole:
            span = _ranges_text(chain, main, r)
            return f"{name} free: any value from {span.replace(' to ', ' to ', 1)} keeps the tool here{follow}"
        return f"{name} free: {_ranges_text(chain, main, r)} keep the tool here within limits{follow}"
    if fam.kind == "turn":
        r = (fam.ranges or ((),))[0]
        if not r:
            return "tool turn free, but every turn breaks a limit"
        parts = ", ".join(f"{fmt(float(chain.units.angle_out(a)), 2)} to {fmt(float(chain.units.angle_out(b)), 2)}"
                          for a, b in r[:6])
        return f"tool turn free: {parts} {chain.units.angle} keep every joint within limits"
    if fam.kind == "orientation":
        pct = fmt(100.0 * fam.fraction, 1)
        if not fam.within_limits:
            return (f"tool orientation free, but none of the {fam.samples} orientations tried keeps every joint "
                    "within limits")
        return f"tool orientation free: {pct} % of the {fam.samples} orientations tried keep every joint within limits"
    return "redundant arm: one of a family of solutions (self-motion); other members may suit better"


# -- moves, distances, misses ---------------------------------------------------------------------


def largest_move(chain, q_from, q_to) -> str:
    """The largest single joint move between two configurations, in words: ``"J2 shoulder by 12.5 deg"``.

    On an arm with both joint kinds the largest turn and the largest slide are given separately
    (degrees and millimetres are never compared).
    """
    d = np.asarray(q_to, float) - np.asarray(q_from, float)
    parts = []
    for mask in (chain.revolute, ~chain.revolute):
        idx = np.flatnonzero(mask)
        if idx.size:
            k = int(idx[np.argmax(np.abs(d[idx]))])
            parts.append(f"{_name(chain, k)} by {joint_value(chain, k, abs(float(d[k])))}")
    return "; ".join(parts)


def distance_text(chain, branch) -> str:
    """A branch's joint-space distance from the present pose: ``"12.3 deg"``, or ``"12.3 deg and 40 mm"``."""
    return parts_text(chain, branch.distance_parts)


def parts_text(chain, parts) -> str:
    """A joint-space distance given as (revolute part rad, prismatic part length): ``"12.3 deg and 40 mm"``;
    ``"–"`` for None.  The joint kinds the arm lacks are left out (degrees and millimetres never added)."""
    if parts is None:
        return "–"
    a, b = parts
    out = []
    if chain.revolute.any():
        out.append(angle(chain, a))
    if (~chain.revolute).any():
        out.append(length(chain, b))
    return " and ".join(out)


def miss_words(chain, branch, position_only: bool = False) -> str:
    """How far a branch that does not reach is off: ``"misses by 12 mm and 4.5 deg in orientation"``."""
    parts = []
    if branch.position_error > 0:
        parts.append(length(chain, branch.position_error, 1 if branch.position_error >= 1 else 4))
    if not position_only and branch.orientation_error > 1e-9:
        parts.append(f"{angle(chain, branch.orientation_error)} in orientation")
    return "misses by " + (" and ".join(parts) or "a hair")


def solver_words(result) -> str:
    """``"closed form"``, ``"numerical"`` or ``"none"``."""
    return result.method


def nearest_point_words(chain, result) -> str:
    """The nearest reachable point with the orientation it assumes: ``"x, y, z mm at rpy r, p, y deg"``."""

    return point_words(chain, result.nearest_point, result.nearest_rotation)


def point_words(chain, p, R=None) -> str:
    """A point ``p`` (3,) and, when given, the tool orientation ``R`` (3, 3) there, with the digits that carry
    them back in (:func:`decimals`): ``"x, y, z mm with the tool at rpy r, p, y deg"``; "" for None."""
    from poser.core.transforms import matrix_to_rpy

    if p is None:
        return ""
    xyz = f"{', '.join(fmt(v, decimals(chain, 'length')) for v in p)} {chain.units.length}"
    if R is None:
        return xyz
    rpy = chain.units.angle_out(matrix_to_rpy(R))
    return f"{xyz} with the tool at rpy {', '.join(fmt(v, decimals(chain, 'angle')) for v in rpy)} {chain.units.angle}"


def ik_message(chain, result) -> str:
    """The verdict of an IK solve in one to three plain sentences (what ``poser ik`` prints last)."""
    if result.status == "fault":
        return (f"The solver failed on this target ({result.fault}). This is a fault in Poser, not an answer "
                "about the target.")
    reach = [b for b in result.branches if b.reaches]
    inside = [b for b in reach if b.within_limits]
    blocked = [b for b in reach if not b.within_limits]
    fam = " (solutions form families; each listed branch stands for one)" if result.redundant and reach else ""
    cut = "" if result.complete else " The search was cut short by its time limit: branches may be missing."
    more = f" {result.unlisted} more turn variants are not listed." if result.unlisted else ""

    def blocking(b):
        v = max(b.violations, key=lambda x: x.excess / (1.0 if chain.revolute[x.joint] else chain.scale))
        return (f"'{printable(b.label)}' needs {_name(chain, v.joint)} at {joint_value(chain, v.joint, v.value)} "
                f"({v.side} limit {joint_value(chain, v.joint, v.limit)})")

    if result.reachable:
        from poser.core.reach import within_limits_count

        n_in, n_all = within_limits_count(result), len(reach) + result.unlisted
        s = f"Reachable{fam}: {n_in} of {n_all} branches reach the target within limits"
        s += f"; nearest the present pose: {printable(inside[0].label)}."
        if inside[0].family is not None:
            s += f" It is one of a family: {family_words(chain, inside[0].family)}."
        if blocked:
            s += f" Blocked by limits: {blocking(blocked[0])}" + (f" and {len(blocked) - 1} more." if len(blocked) > 1
                                                                   else ".")
        return s + more + cut
    c = result.closest
    if c is not None:
        if c.position_error <= result.tolerance[0] and not result.position_only:
            miss = f"reaches the position but misses the orientation by {angle(chain, c.orientation_error)}"
        else:
            miss = f"misses the position by {length(chain, c.position_error, 4)}"
            if not result.position_only:
                miss += f" and the orientation by {angle(chain, c.orientation_error)}"
    else:
        miss = None
    tail = f" The closest approach within limits {miss}." if miss else ""
    if result.nearest_point is not None:
        tail += f" The nearest reachable point is {nearest_point_words(chain, result)}."
    from poser.core.jacobian import task_space

    if not result.position_only and task_space(chain).rank < 6:
        tail += (f" An arm with {chain.n} joints cannot take every orientation: try a position-only target "
                 "(or an orientation it can take).")
    if blocked:
        fams = [b for b in blocked if b.family is not None]
        extra = f" Searched over each family: {family_words(chain, fams[0].family)}." if fams else ""
        return (f"Not reachable within limits{fam}: every branch that reaches the target breaks a limit — "
                f"{blocking(blocked[0])}.{extra}{tail}{cut}")
    return f"Out of reach{fam}: no branch reaches the target.{tail}{cut}"


def ik_summary(chain, result) -> tuple[str, str]:
    """(level, words) of an IK result for the window's summary line (short; :func:`ik_message` has it all)."""
    if result is None:
        return "ok", ""
    if result.status == "fault":
        return "at", f"Not solved: {result.fault}. The target may still be reachable."
    kind = "position only" if result.position_only else "position and orientation"
    n = len(result.branches)
    head = f"{n} branch{'es' if n != 1 else ''} ({kind}, {solver_words(result)} solver)"
    if result.unlisted:
        head += f", {result.unlisted} more not listed"
    inside = [b for b in result.branches if b.within_limits and b.reaches]
    cut = " Search cut short: branches may be missing." if not result.complete else ""
    if not result.reachable:
        reach = [b for b in result.branches if b.reaches]
        if reach:
            return "near", f"{head}: every branch breaks a joint limit. {ik_message(chain, result)}"
        return "at", ik_message(chain, result)
    family = " Redundant arm: each branch stands for a family." if result.redundant else ""
    return "ok", f"{head}: {len(inside)} within limits.{family}{cut}"


# -- studies: reach, placement, the test cube ----------------------------------------------------------

ISO_9283_NOTE = ("test positions laid out after ISO 9283 (the performance-test cube and its diagonal plane), "
                 "from memory of the standard, not from its text: check them against the standard before a "
                 "formal test")
"""Said wherever the ISO 9283 layout is used (the CLI, the JSON, the drawing)."""


def margin_words(chain, q, joint: int) -> str:
    """The worst limit margin of pose ``q`` at ``joint`` in words: ``"J5 wrist bend free: 40 deg to upper limit
    (16 % of its range)"`` (:func:`limit_states`' words, with the share of the range)."""
    st = limit_states(chain, q)[joint]
    return f"{_name(chain, joint)} {st.words} ({fmt(100.0 * st.fraction, 1)} % of its range)"


def miss_text(chain, miss) -> str:
    """How far a closest approach is off, from (position error, orientation error rad): ``"45 mm and 3 deg"``."""
    if miss is None:
        return "–"
    from poser.core.reach import tolerance

    pe, oe = miss
    tp, to = tolerance(chain)
    parts = [length(chain, pe, 1 if pe >= 1 else 4)] if pe > tp else []
    if oe > to:
        parts.append(f"{angle(chain, oe)} in orientation")
    if parts and pe <= tp:
        return parts[0] + " (the position is reached)"
    return " and ".join(parts) or "a hair"


def margin_cell(chain, v) -> str:
    """A reach verdict's worst limit margin as a table cell: ``"J5 40 deg (16.2 %)"``; ``"–"`` without a branch."""
    if v.margin_joint is None:
        return "–"
    j = v.margin_joint
    return f"{printable(chain.names[j])} {joint_value(chain, j, v.margin)} ({fmt(100 * v.margin_fraction, 1)} %)"


def manipulability_figure(chain, m) -> str:
    """The figure of :func:`manipulability_text` without its unit (the unit goes in a column header); ``"–"``
    for None."""
    return "–" if m is None else manipulability_text(chain, m).split(" ")[0]


def move_cells(chain, v) -> tuple[str, str]:
    """A reach verdict's joint moves as two cells: (turns in the arm's angle unit, slides in its length unit)."""
    a = "–" if v.move is None else fmt(float(chain.units.angle_out(v.move[0])), 2)
    b = "–" if v.move is None else fmt(v.move[1], 2)
    return a, b


def configuration_cell(v) -> str:
    """A reach verdict's chosen configuration as a table cell, ``" (changed)"`` when it differs from the one
    before; ``"–"`` without a branch."""
    return "–" if v.configuration is None else printable(v.configuration) + (" (changed)" if v.changed else "")


def spin_cell(chain, spin) -> str:
    """The chosen spin about tool Z as a table cell, the unit in the header: ``"35.2"``; ``"–"`` without one."""
    return "–" if spin is None else fmt(float(chain.units.angle_out(spin)), 2)


def spin_text(chain, spin) -> str:
    """The chosen spin about tool Z of a free-spin target: ``"35.2 deg"``; ``"–"`` without one."""
    return "–" if spin is None else angle(chain, spin)


def reach_words(chain, v) -> str:
    """One target's verdict of a reach study (:class:`poser.core.reach.Verdict`) in one or two sentences."""
    from poser.core import reach as r

    if v.status == r.FAULT:
        return (f"The solver failed on this target ({v.fault}). This is a fault in Poser, not an answer about "
                "the target.")
    spin = f" with the tool turned {spin_text(chain, v.spin)} about its Z axis" if v.spin is not None else ""
    if v.status == r.REACHED:
        n = v.branches
        s = (f"Reached{spin}: {n} branch{'es' if n != 1 else ''} within limits; chosen {printable(v.configuration)}"
             f" (joint moves {parts_text(chain, v.move)})")
        if v.changed:
            s += ", a change of configuration from the target before"
        s += f". Worst limit margin: {margin_words(chain, v.q, v.margin_joint)}; manipulability "
        s += f"{manipulability_text(chain, v.manipulability)}."
        if v.family is not None:
            s += f" It is one of a family: {family_words(chain, v.family)}."
        return s
    tail = ""
    if v.miss is not None:
        tail = f" The closest approach within limits misses by {miss_text(chain, v.miss)}."
    if v.nearest_point is not None:
        tail += f" Nearest reachable point: {point_words(chain, v.nearest_point, v.nearest_rotation)}."
    if v.target.free_spin:
        tail += (f" No spin about tool Z helps (sampled every {angle(chain, r.SPIN_STEP)}, refined to "
                 f"{angle(chain, r.spin_resolution(), 3)}).")
    if v.status == r.BLOCKED:
        what = "; ".join(violations_words(chain, v.violations)) or "a joint limit"
        return f"Blocked by limits{spin}: every branch that reaches it breaks a limit; nearest: " \
               f"'{printable(v.blocked_label)}' needs {what}.{tail}"
    return f"Out of reach{spin}: no configuration reaches it, whatever the limits.{tail}"


def reach_summary(chain, study, skipped: int = 0) -> str:
    """The whole study in one sentence: how many reached, blocked, out of reach; configuration changes."""
    from poser.core import reach as r

    vs = study.verdicts
    n = len(vs)
    counts = {s: sum(v.status == s for v in vs) for s in (r.REACHED, r.BLOCKED, r.OUT_OF_REACH, r.FAULT)}
    s = f"{counts[r.REACHED]} of {n} target{'s' if n != 1 else ''} reached within limits"
    if counts[r.BLOCKED]:
        s += f"; {counts[r.BLOCKED]} blocked by limits"
    if counts[r.OUT_OF_REACH]:
        s += f"; {counts[r.OUT_OF_REACH]} out of reach"
    if counts[r.FAULT]:
        s += f"; {counts[r.FAULT]} not judged (solver fault)"
    changes = sum(v.changed for v in vs)
    s += f"; {changes} change{'s' if changes != 1 else ''} of configuration along the sequence"
    if skipped:
        s += f"; {skipped} malformed row{'s' if skipped != 1 else ''} skipped (not checked)"
    return s + "."


STUDY_CAUTION = ("Joint limits, base and tool are included; links may still collide with each other, the cell or "
                 "the work: verify every result on the robot's controller before it moves.")
"""Said under every study (CLI, pictures, window)."""

_LENGTH_DIGITS = {"mm": 1, "in": 3, "m": 4}


def length_digits(chain) -> int:
    """Decimals a position is shown with in the arm's length unit (0.1 mm, 0.001 in, 0.1 mm in m)."""
    return _LENGTH_DIGITS.get(chain.units.length, 3)


def point_text(chain, p) -> str:
    """A world point: ``"x 850.0, y -120.0, z 640.0 mm"``."""
    d = length_digits(chain)
    return f"x {fmt(p[0], d)}, y {fmt(p[1], d)}, z {fmt(p[2], d)} {chain.units.length}"


def size_text(chain, ws) -> str:
    """A workspace's size with its error, in m³ (m²) and in the arm's unit: ``"Volume 34.47 m³ ± 0.2078 m³ (0.6 %,
    estimated error) = 3.447e+10 mm³"`` (four significant digits)."""
    from poser.core.units import LENGTH_UNITS

    L = chain.units.length
    k = 2 if ws.planar else 3
    what, sup = ("Area", "²") if ws.planar else ("Volume", "³")
    f = LENGTH_UNITS[L] ** k
    text = (f"{what} {ws.size * f:.4g} m{sup} ± {ws.error * f:.4g} m{sup} ({fmt(100 * ws.relative_error, 2)} %, "
            "estimated error)")
    if L != "m":
        text += f" = {ws.size:.4g} {L}{sup}"
    return text


def workspace_lines(chain, ws) -> list[str]:
    """What ``poser workspace`` says of a :class:`poser.core.workspace.Workspace` (one line each)."""
    from poser.core.workspace import BOUNDARY_SHARE

    L = chain.units.length
    d = length_digits(chain)
    lo, hi = ws.bounds
    lines = [size_text(chain, ws),
             f"Method: {ws.method}; finest cell {fmt(ws.resolution, d + 1)} {L}; {ws.samples} joint samples "
             f"(stratified, {fmt(100 * BOUNDARY_SHARE, 0)} % with one joint at a limit)",
             f"Bounds: x {fmt(lo[0], d)} … {fmt(hi[0], d)}, y {fmt(lo[1], d)} … {fmt(hi[1], d)}, "
             f"z {fmt(lo[2], d)} … {fmt(hi[2], d)} {L}"]
    if len(ws.dexterity):
        import numpy as np

        lines.append(f"Manipulability over the tool points: median "
                     f"{manipulability_text(chain, float(np.median(ws.dexterity)))}, largest "
                     f"{manipulability_text(chain, float(ws.dexterity.max()))}")
    return lines


PLACEMENT_NOTE = ("A placement search is a screening on a grid (free-spin targets at the reach study's coarse spin "
                  "steps): check the chosen placement with a reach study of the placed arm.")
"""Said under every placement search."""


def placement_words(chain, placed, count: int, names=None) -> str:
    """One placement (:class:`poser.core.place.Placed`) of a search over ``count`` targets, in one sentence;
    ``names``: the targets' names (the target of the smallest margin is named, else numbered from 1)."""
    yaw = angle(chain, placed.yaw, 2)
    s = f"Base at {point_text(chain, placed.xyz)}, yaw {yaw}: {placed.reached} of {count} targets reached"
    if placed.reached:
        j = placed.margin_joint
        s += (f"; smallest limit margin {fmt(100 * placed.margin, 2)} % of the range of {_name(chain, j)}"
              f" (target {placed.margin_target + 1}"
              + (f" '{printable(names[placed.margin_target])}'" if names is not None else "")
              + "); smallest manipulability "
              f"{manipulability_text(chain, placed.manipulability)}")
    return s + "."


def cube_lines(chain, cube) -> list[str]:
    """What ``poser cube`` says of a :class:`poser.core.cube.Cube` (one line each)."""
    from poser.core.transforms import matrix_to_rpy

    L = chain.units.length
    d = length_digits(chain)
    if cube.edge <= 0:
        return ["No cube fits in the workspace."]
    lines = [f"Largest cube with edges along the base axes: edge {fmt(cube.edge, d)} {L} (good to about "
             f"{fmt(cube.accuracy, d)} {L}), centre {point_text(chain, cube.centre)}",
             f"Positions on the diagonal plane '{cube.plane}', 10 % of the diagonal from its corners; "
             + ("position only (the arm does not set its tool orientation)" if cube.R is None else
                "tool orientation roll, pitch, yaw "
                + ", ".join(fmt(float(chain.units.angle_out(a)), 2) for a in matrix_to_rpy(cube.R))
                + f" {chain.units.angle} (fixed X, Y, Z)")]
    for v, p in zip(cube.study.verdicts, cube.positions):
        lines.append(f"  {v.target.name}  {point_text(chain, p)}: {reach_words(chain, v)}")
    lines.append(f"{cube.study.reached} of {len(cube.study.verdicts)} positions reached within limits.")
    lines.append(ISO_9283_NOTE[0].upper() + ISO_9283_NOTE[1:] + ".")
    return lines


def inside_workspace_words(chain, inside) -> str:
    """Whether the target lies inside the computed workspace (``inside`` True / False, or None when no
    workspace is computed for this arm)."""
    if inside is None:
        return "Workspace: none computed yet for this arm (Studies ▸ Workspace), so no inside/outside verdict."
    if inside:
        return ("Inside the computed workspace: some pose within the limits puts the tool point there "
                "(orientation not considered; within one grid cell of the boundary it may go either way).")
    return ("Outside the computed workspace: no pose within the limits puts the tool point there (within one "
            "grid cell of the boundary it may go either way).")
