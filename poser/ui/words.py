"""Words the window shows.  Every verdict's sentence and number comes from :mod:`poser.report` (the same as
the command line's); this module adds only what is the window's own (joint-kind labels)."""

from __future__ import annotations

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
