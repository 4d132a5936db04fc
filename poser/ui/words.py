"""Plain-language wording for limits and singularities (no Qt), so colour is never the only signal."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = [
    "LimitState",
    "limit_state",
    "limit_states",
    "singularity_words",
    "fmt",
    "kind_words",
    "manipulability_text",
    "manipulability_unit",
    "MANIPULABILITY_TIP",
]

SINGULAR_KAPPA = 80.0
"""Above this (dimensionless) condition number the window warns of a nearby singularity."""


def fmt(v: float, digits: int = 3) -> str:
    """A number for a label: fixed decimals, no trailing zeros, no '-0'."""
    if not math.isfinite(v):
        return "∞" if v > 0 else "-∞" if v < 0 else "–"
    text = f"{v:.{digits}f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


@dataclass(frozen=True)
class LimitState:
    """Where one joint stands against its limits.

    ``level`` is ``"ok"``, ``"near"`` (within the margin), ``"at"`` (on a limit) or
    ``"beyond"``; ``words`` says the same for a person; ``fraction`` is the margin
    to the nearer limit as a fraction of the range (0 at a limit, 0.5 mid-range,
    negative beyond).
    """

    level: str
    words: str
    side: str | None
    fraction: float


def limit_state(value: float, lower: float, upper: float, margin: float = 0.05, unit: str = "") -> LimitState:
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


def limit_states(q_user, lower_user, upper_user, margin: float, units) -> list[LimitState]:
    """:func:`limit_state` for every joint (all in arm units); ``units`` lists each joint's unit label."""
    rows = zip(q_user, lower_user, upper_user, units)
    return [limit_state(float(v), float(lo), float(hi), margin, u) for v, lo, hi, u in rows]


def singularity_words(kappa: float) -> tuple[str, str]:
    """(level, words) for a dimensionless condition number: ``"ok"``, ``"near"`` or ``"at"``."""
    if not np.isfinite(kappa) or kappa > 1e8:
        return "at", "AT A SINGULARITY (some tool motions impossible)"
    if kappa > SINGULAR_KAPPA:
        return "near", "near a singularity (small tool moves need large joint moves)"
    return "ok", "clear of singularities"


KIND_WORDS = {"revolute": "rotary", "prismatic": "linear"}
"""What a technician calls each joint type (the file's words, revolute and prismatic, stay in tooltips)."""


def kind_words(kind: str, unit: str) -> tuple[str, str]:
    """(short text, tooltip) for a joint type: ``("rotary joint, deg", "revolute joint: turns about its axis; …")``."""
    if kind == "revolute":
        return (f"rotary joint, {unit}", f"revolute joint: turns about its axis; its value is an angle in {unit}")
    return (f"linear joint, {unit}", f"prismatic joint: slides along its axis; its value is a length in {unit}")


MANIPULABILITY_TIP = (
    "manipulability (normalised): Yoshikawa's measure sqrt(det(J Jᵀ)) of the Jacobian with every length "
    "divided by the arm's size L, so it has no unit and reads the same in mm, m or in. "
    "0 at a singularity; larger means the tool can move more freely in every direction. "
    "Compare it between poses of the same arm, not between arms."
)


def manipulability_text(w: float) -> str:
    """A normalised (unitless) manipulability for a label: three significant digits, ``"0"`` at a singularity."""
    if not math.isfinite(w):
        return "–"
    if w < 5e-5:
        return "0" if w < 1e-12 else "< 0.0001"
    return f"{w:.3g}" if w < 1000 else f"{w:.0f}"


_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def manipulability_unit(chain) -> str | None:
    """The unit of the raw (core) manipulability of ``chain``, or None when it has no single unit.

    The linear rows of the Jacobian carry the length unit for revolute columns and none for
    prismatic ones, so the product of the singular values scales cleanly with the length unit
    only for six joints (length³ over the prismatic count) or for more than six revolute joints
    (length³).  Fewer joints mix rows and columns of different units.
    """
    n = chain.n
    p = int((~np.asarray(chain.revolute)).sum())
    if n == 6:
        e = 3 - p
    elif n > 6 and p == 0:
        e = 3
    else:
        return None
    L = chain.units.length
    if e == 0:
        return "(no unit)"
    return L if e == 1 else f"{L}{str(e).translate(_SUPERSCRIPT)}"


def _joint_value_text(chain, joint: int, value: float) -> str:
    """A joint value or difference in internal units as text in the arm's units."""
    if chain.revolute[joint]:
        digits = 1 if chain.units.angle == "deg" else 3
        return f"{fmt(float(chain.units.angle_out(value)), digits)} {chain.units.angle}"
    return f"{fmt(value, 3)} {chain.units.length}"


def violation_words(chain, violation) -> str:
    """``"J3 elbow: 12.5 deg over upper"`` for a ``poser.core.ik.Violation``."""
    where = "over upper" if violation.side == "upper" else "under lower"
    return f"{violation.name}: {_joint_value_text(chain, violation.joint, violation.excess)} {where}"


def _excess_user(chain, v) -> float:
    # compare in the arm's units so a degree and a millimetre are read as the user reads them
    return float(chain.units.angle_out(v.excess)) if chain.revolute[v.joint] else float(v.excess)


def worst_violation(chain, branch) -> str:
    """The branch's largest limit violation in words, or ``"none"``."""
    vs = list(getattr(branch, "violations", ()) or ())
    if not vs:
        return "none"
    return violation_words(chain, max(vs, key=lambda v: _excess_user(chain, v)))


def all_violations(chain, branch) -> list[str]:
    """Every limit violation of a branch in words, largest first."""
    vs = sorted(getattr(branch, "violations", ()) or (), key=lambda v: -_excess_user(chain, v))
    return [violation_words(chain, v) for v in vs]


def largest_move_parts(chain, q_from, q_to) -> tuple[str, str]:
    """(joint name, size in arm units) of the largest single joint move between two configurations."""
    d = np.asarray(q_to, float) - np.asarray(q_from, float)
    user = np.where(chain.revolute, np.asarray(chain.units.angle_out(d)), d)
    k = int(np.argmax(np.abs(user)))
    return chain.names[k], _joint_value_text(chain, k, abs(float(d[k])))


def largest_move(chain, q_from, q_to) -> str:
    """The largest single joint move between two configurations, in words (arm units)."""
    name, size = largest_move_parts(chain, q_from, q_to)
    return f"{name} {size}"


def miss_words(chain, branch, position_only: bool = False) -> str:
    """How far a branch that does not reach its target is off: ``"misses by 12 mm and 4.5 deg in orientation"``."""
    pos = f"{fmt(branch.position_error, 1)} {chain.units.length}"
    ori = float(getattr(branch, "orientation_error", 0.0) or 0.0)
    parts = [pos] if pos.split()[0] != "0" else []
    if not position_only and ori > 1e-6:
        digits = 1 if chain.units.angle == "deg" else 3
        parts.append(f"{fmt(float(chain.units.angle_out(ori)), digits)} {chain.units.angle} in orientation")
    return "misses by " + " and ".join(parts or [pos])


def solver_words(result) -> str:
    """``"closed form"`` or ``"numerical"`` for a result's solver name."""
    name = str(getattr(result, "solver", ""))
    return "closed form" if name.startswith("closed") else "numerical" if name else "unknown"


def ik_summary(chain, result) -> tuple[str, str]:
    """(level, words) explaining an IK result: reachable or not, and why not.

    Short enough for two lines of the target panel; :func:`ik_details` has the rest.
    """
    if result is None:
        return "ok", ""
    L = chain.units.length
    kind = "position only" if getattr(result, "position_only", False) else "position and orientation"
    n = len(result.branches)
    inside = [b for b in result.branches if b.within_limits and getattr(b, "reaches", True)]
    head = f"{n} branch{'es' if n != 1 else ''} ({kind}, {solver_words(result)} solver)"
    family = " The arm is redundant: these are samples of a family of solutions." if getattr(
        result, "redundant", False) else ""
    if getattr(result, "solver", "") == "none":
        # the solver broke on this target and reported it: no verdict on reach, so never "out of reach"
        msg = str(getattr(result, "message", "") or "").strip()
        return "at", f"Not solved: {msg or 'the solver failed on this target.'} The target may still be reachable."
    if not result.reachable:
        parts = ["Out of reach."]
        c = result.closest
        if c is not None:
            parts.append(f"Closest approach: {fmt(c.position_error, 3)} {L} from the target")
            if not getattr(result, "position_only", False) and c.orientation_error > 1e-6:
                parts[-1] += f" and {fmt(float(chain.units.angle_out(c.orientation_error)), 2)} {chain.units.angle} off"
            parts[-1] += "."
            if c.violations:
                parts.append(f"Blocking limit: {worst_violation(chain, c)}.")
        if getattr(result, "nearest_point", None) is not None:
            p = np.asarray(result.nearest_point, float)
            parts.append(f"Nearest reachable point: {', '.join(fmt(v, 2) for v in p)} {L}.")
        if not getattr(result, "position_only", False) and chain.n < 6:
            parts.append(f"An arm with {chain.n} joints cannot take every orientation: try 'position only'.")
        if len(parts) == 1 and str(getattr(result, "message", "") or "").strip():
            parts.append(str(result.message).strip())  # nothing to show but the solver's own words
        return "at", " ".join(parts)  # otherwise the core's own message says the same at more length
    if not inside:
        best = min(result.branches, key=lambda b: len(b.violations)) if result.branches else None
        why = f" Least bad: {worst_violation(chain, best)}." if best is not None else ""
        return "near", f"{head}, but every branch breaks a joint limit.{why}{family}"
    return "ok", f"{head}: {len(inside)} within limits.{family}"


def ik_details(result) -> str:
    """The solver's full name and its own message (for a tooltip beside :func:`ik_summary`)."""
    if result is None:
        return ""
    lines = [f"solver: {getattr(result, 'solver', '')}"]
    msg = str(getattr(result, "message", "") or "").strip()
    if msg:
        lines.append(msg)
    return "\n".join(lines)
