"""Poser's own colours: readable on screen and in print (light ground, dark bodies).

Axis colours follow the common practice x red, y green, z blue; everything
else is our own choice.  Colours are RGBA floats in 0..1 for OpenGL items and
hex text for widgets.
"""

from __future__ import annotations


def _rgba(hex_text: str, alpha: float = 1.0) -> tuple[float, float, float, float]:
    h = hex_text.lstrip("#")
    return (int(h[0:2], 16) / 255.0, int(h[2:4], 16) / 255.0, int(h[4:6], 16) / 255.0, alpha)


BACKGROUND = "#F5F4EF"  # warm paper
GRID = "#B9B6AA"
GRID_AXES = "#8C887B"
TEXT = "#23262B"
LINK = "#6686A3"  # slate blue bodies
REVOLUTE = "#24A096"  # teal drums for turning joints
PRISMATIC = "#A35C90"  # plum sleeves for sliding joints
JOINT_AXIS = "#23262B"
TOOL = "#2B2D33"
TRAIL = "#D2691E"
TARGET = "#C0177A"
GHOST = "#6A5ACD"
GHOST_HOVER = "#3F2FB0"
GHOST_OUT = "#7D5A6C"  # greyish mauve: a branch beyond a limit (also dashed, not only this colour)
GHOST_OUT_HOVER = "#9C2B4E"
MOUNT = "#7A776D"  # the mounting plate
NEAREST = "#C98A00"  # the nearest reachable point (amber, as a "near" verdict)
AXIS_X = "#D1404F"
AXIS_Y = "#2F9A45"
AXIS_Z = "#2D67D2"

OK = "#2E7D32"
NEAR = "#C98A00"  # amber
AT = "#C62828"  # red
MUTED = "#6B6F76"

AXIS_COLOURS = (AXIS_X, AXIS_Y, AXIS_Z)


def rgba(hex_text: str, alpha: float = 1.0) -> tuple[float, float, float, float]:
    """An ``#RRGGBB`` colour as OpenGL RGBA floats."""
    return _rgba(hex_text, alpha)


LEVEL_COLOURS = {"ok": OK, "near": NEAR, "at": AT, "beyond": AT}

PLANE_COLOURS = {"floor": AT, "mount": AT, "base": NEAR}
"""A part behind the floor or a wall/ceiling mount is red; below the top of a riser, amber."""
