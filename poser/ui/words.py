"""Words the window shows.  Every verdict's sentence and number comes from :mod:`poser.report` (the same as
the command line's); this module adds only what is the window's own: joint-kind labels, the branch list's
cells (:func:`branch_rows`, made of report's texts), the warning of a point below the mounting plane."""

from __future__ import annotations

from dataclasses import dataclass

from poser import report
from poser.report import (  # noqa: F401 - the window's names for the shared wording
    LimitState,
    fmt,
    ik_message,
    ik_summary,
    largest_move,
    limit_state,
    limit_states,
    limits_cell,
    manipulability_text,
    manipulability_tip,
    manipulability_unit,
    miss_words,
    singularity_words,
    solver_words,
    violations_words,
    worst_violation,
)

KIND_WORDS = {"revolute": "rotary", "prismatic": "linear"}
"""What a technician calls each joint type (the file's words, revolute and prismatic, stay in tooltips)."""


def kind_words(kind: str, unit: str) -> tuple[str, str]:
    """(short text, tooltip) for a joint type: ``("rotary joint, deg", "revolute joint: turns about its axis; …")``."""
    if kind == "revolute":
        return (f"rotary joint, {unit}", f"revolute joint: turns about its axis; its value is an angle in {unit}")
    return (f"linear joint, {unit}", f"prismatic joint: slides along its axis; its value is a length in {unit}")


BELOW_HEADS = {"floor": "BELOW THE FLOOR", "mount": "BEHIND THE MOUNTING SURFACE"}
"""The status bar's head for parts behind each plane that a real arm would hit (see geometry.PLANE_WORDS)."""


def below_mount_words(chain, found) -> str:
    """The status bar's warning for what :func:`poser.ui.geometry.below_mount` found ("" when clear).

    Only the floor and a wall or ceiling mount count here: a part below the top of a riser (plane
    ``"base"``) is only marked in the 3D view.  Each part is named with its depth and plane, in the words
    the view's label uses: ``"BELOW THE FLOOR: tool 85.2 mm below the floor"``.
    """
    from poser.ui.geometry import PLANE_WORDS

    hits = [b for b in (found or ()) if getattr(b, "plane", "floor") in BELOW_HEADS]
    if not hits:
        return ""
    planes = {b.plane for b in hits}
    head = BELOW_HEADS[planes.pop()] if len(planes) == 1 else "BEHIND THE FLOOR AND THE MOUNTING SURFACE"
    parts = [f"{report.printable(b.what)} {report.length(chain, b.depth, 1)} {PLANE_WORDS[b.plane]}" for b in hits]
    return f"{head}: {', '.join(parts)}"


# -- the branch list's texts (no Qt: the solver's worker thread makes them) --------------------------



def joints_line(chain, q, digits: int = 3) -> str:
    """Joint values ``q`` (n,) internal units as one line in the arm's units: ``"86.048, -21.563, 0"``.

    The digits of ``poser ik``'s table (three decimals; trailing zeros dropped).
    """
    return ", ".join(report.fmt(float(chain.joint_to_user(i, v)), digits) for i, v in enumerate(q))


def joints_copy_line(chain, q) -> str:
    """Joint values as one line to paste (``poser fk --joints …``, ``--near …``): six decimals, arm units."""
    return ",".join(report.num(float(chain.joint_to_user(i, v))) for i, v in enumerate(q))


def move_cell(chain, q_from, q_to) -> tuple[str, str]:
    """(cell, tooltip) of the largest move: the size only (``"94 deg"``; turns and slides apart on a mixed
    arm, ``"0.1 rad; 0.1 m"``), and :func:`poser.report.largest_move`'s whole words."""
    move = report.largest_move(chain, q_from, q_to)
    cell = "; ".join(part.split(" by ", 1)[-1] for part in move.split("; "))
    return cell, move


@dataclass(frozen=True)
class BranchRow:
    """Every text of one branch's row that does not depend on the present pose."""

    number: int  # 1-based, the same number as ``poser ik`` and the ghost's label
    label: str
    label_tip: str
    limits: str
    limits_tip: str
    within: bool
    reaches: bool
    manip: str
    manip_tip: str
    level: str  # singularity level: ok / near / at
    joints: str
    joints_tip: str
    copy: str
    configuration: str
    turn_words: str = ""  # the label's extra-turn words ("J6 flange +1 turn"; "" for none)


def branch_rows(chain, result, infos) -> tuple:
    """A :class:`BranchRow` per branch of ``result`` (``infos``: :func:`poser.ui.state.branch_infos`)."""
    P = report.printable
    rows = []
    position_only = bool(getattr(result, "position_only", False))
    for k, (b, info) in enumerate(zip(result.branches, infos)):
        label = P(b.label)
        config = P(b.configuration)
        turn_words = label[len(config) + 3:] if label.startswith(config + " · ") else ""
        if not b.reaches:
            label = f"{label} — {report.miss_words(chain, b, position_only)}"
        tip = label
        if b.family is not None:
            label += " · family"
            tip = f"{label}\n{report.family_words(chain, b.family)}"
        if b.variants > 1:
            tip += f"\n{b.variants} turn variants of this configuration are within limits"
        manip = report.manipulability_text(chain, b.manipulability).split(" ")[0]
        if info.level != "ok":
            manip += " singular" if info.level == "at" else " near singular"
        manip_tip = (f"manipulability {report.manipulability_text(chain, b.manipulability)}, condition "
                     f"{report.condition_text(info.condition)}: {info.words}")
        unit_names = [f"{P(n)} {report.joint_value(chain, i, v, 3)}" for i, (n, v) in enumerate(zip(chain.names, b.q))]
        rows.append(BranchRow(
            number=k + 1, label=label, label_tip=tip,
            limits=report.limits_cell(chain, b),
            limits_tip="; ".join(report.violations_words(chain, b.violations)) or "every joint within its limits",
            within=bool(b.within_limits), reaches=bool(b.reaches),
            manip=manip, manip_tip=manip_tip, level=info.level,
            joints=joints_line(chain, b.q), joints_tip="\n".join(unit_names),
            copy=joints_copy_line(chain, b.q), configuration=b.configuration, turn_words=turn_words,
        ))
    return tuple(rows)


def variant_label(row: BranchRow) -> str:
    """The label of a turn variant's row under its configuration's: what tells it apart, first
    (``"J6 flange +1 turn · same configuration"``) — the configuration's words are the row above."""
    family = " · family" if row.label.endswith(" · family") else ""
    return f"{row.turn_words or 'no extra turn'}{family} · same configuration"


def group_branches(branches, shown) -> list[list[int]]:
    """Branch indices grouped by configuration (turn variants together), in the order of their best member.

    ``shown`` lists the branch indices to include (the list's filter).  Branches that do not reach are
    never grouped with reaching ones.
    """
    groups: dict = {}
    for i in shown:
        b = branches[i]
        key = (b.configuration, bool(b.reaches))
        groups.setdefault(key, []).append(i)
    return list(groups.values())
