"""Plain-language wording for limits and singularities (no Qt), so colour is never the only signal."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["LimitState", "limit_state", "limit_states", "singularity_words", "fmt"]

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


def _joint_value_text(chain, joint: int, value: float) -> str:
    """A joint value or difference in internal units as text in the arm's units."""
    if chain.revolute[joint]:
        return f"{fmt(float(chain.units.angle_out(value)), 2)} {chain.units.angle}"
    return f"{fmt(value, 3)} {chain.units.length}"


def violation_words(chain, violation) -> str:
    """``"J3 elbow: 12.5 deg over upper"`` for a ``poser.core.ik.Violation``."""
    where = "over upper" if violation.side == "upper" else "under lower"
    return f"{violation.name}: {_joint_value_text(chain, violation.joint, violation.excess)} {where}"


def worst_violation(chain, branch) -> str:
    """The branch's largest limit violation in words, or ``"none"``."""
    vs = list(getattr(branch, "violations", ()) or ())
    if not vs:
        return "none"

    def size(v):  # compare in the arm's units so a degree and a millimetre are read as the user reads them
        return float(chain.units.angle_out(v.excess)) if chain.revolute[v.joint] else float(v.excess)

    return violation_words(chain, max(vs, key=size))


def largest_move(chain, q_from, q_to) -> str:
    """The largest single joint move between two configurations, in words (arm units)."""
    d = np.asarray(q_to, float) - np.asarray(q_from, float)
    user = np.where(chain.revolute, np.asarray(chain.units.angle_out(d)), d)
    k = int(np.argmax(np.abs(user)))
    return f"{chain.names[k]} {_joint_value_text(chain, k, abs(float(d[k])))}"


def ik_summary(chain, result) -> tuple[str, str]:
    """(level, words) explaining an IK result: reachable or not, and why not."""
    if result is None:
        return "ok", ""
    L = chain.units.length
    kind = "position only" if getattr(result, "position_only", False) else "position and orientation"
    n = len(result.branches)
    inside = [b for b in result.branches if b.within_limits and getattr(b, "reaches", True)]
    head = f"{n} branch{'es' if n != 1 else ''} found ({kind}; solver: {result.solver})"
    if getattr(result, "redundant", False):
        head += "; the arm is redundant, so these are samples of a family"
    msg = f" {result.message}" if getattr(result, "message", "") else ""
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
        return "at", " ".join(parts)  # the core's own message says the same at more length
    if not inside:
        best = min(result.branches, key=lambda b: len(b.violations)) if result.branches else None
        why = f" Least bad: {worst_violation(chain, best)}." if best is not None else ""
        return "near", f"{head}, but every branch breaks a joint limit.{why}{msg}"
    return "ok", f"{head}; {len(inside)} within limits.{msg}"
