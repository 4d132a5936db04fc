"""IK branches as ghost arms, each with its row number; the hovered or selected one is drawn stronger.

* Branches within the limits are translucent bodies; branches beyond a limit are dashed lines along
  their links (and, when hovered, thin bodies), so the two read apart without colour.
* The faint ghosts are built once per set of branches (an IK result) and not touched again when the
  arm moves, the hover changes or a row is selected: every faint ghost is in one mesh (three draw
  calls in all) with fewer sides than the real arm, since software OpenGL pays per triangle.
* As many faint ghosts are drawn as :data:`BODY_BUDGET` bodies allow (plus dashed ones up to
  :data:`DASH_BUDGET` dashes), in the list's order; the hovered or selected ghost is always drawn,
  whatever its row, so every row highlights its ghost.
* Each ghost's row numbers ("3", or "3–5" for look-alike turn variants) stand at its
  :attr:`~poser.ui.geometry.GhostGroup.anchor`.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph.opengl as gl

from poser.core.errors import PoserValueError
from poser.ui import geometry, palette
from poser.ui.gl_arm import GLArm, body_arrays, concatenate_arrays
from poser.ui.gl_base import ItemGroup, as_size, check_keywords
from poser.ui.gl_labels import label_font

BODY_BUDGET = 420
"""Bodies (link bars and joint drums) the faint ghosts may have together: a frame budget for software
OpenGL (Heron 6 has 16 per ghost, so about 26 ghosts)."""

DASH_BUDGET = 600
"""Dashes the faint beyond-limit ghosts may have together (Heron 6 has about 20 per ghost)."""

FAINT_COLS = (8, 10)
"""Sides of a faint ghost's link bars and drums."""


def _arm(alpha, colour, cols=(16, 20)):
    colours = {"link": colour, "revolute": colour, "prismatic": colour}
    return GLArm(alpha=alpha, axes=False, colours=colours, link_cols=cols[0], drum_cols=cols[1])


def _lines(colour, alpha, width):
    item = gl.GLLinePlotItem(pos=np.zeros((2, 3)), mode="lines", width=width, antialias=False, glOptions="translucent",
                             color=palette.rgba(colour, alpha))
    item.setDepthValue(11)
    item._wanted = False
    return item


class GLGhosts(ItemGroup):
    """``setData(groups=, radius=, strong=-1, within_only=False)``.

    ``groups`` are :func:`poser.ui.geometry.ghost_groups` output (the same list object for the same
    IK result: its meshes are kept), ``strong`` the index of the group to highlight (-1 for none),
    ``within_only`` leaves out the ghosts beyond the limits (except a highlighted one).
    """

    def __init__(self, layer=None):
        super().__init__()
        self._layer = layer
        self._faint = _arm(0.22, palette.GHOST, FAINT_COLS)
        self._strong = _arm(0.55, palette.GHOST_HOVER)
        self._strong_out = _arm(0.45, palette.GHOST_OUT_HOVER)
        self._dashes = _lines(palette.GHOST_OUT, 0.85, 2.0)
        self._strong_dashes = _lines(palette.GHOST_OUT_HOVER, 1.0, 3.0)
        self._parts = (self._faint, self._strong, self._strong_out)
        for part in self._parts:
            self.items += part.items
        self._own(self._dashes)
        self._own(self._strong_dashes)
        self._font = label_font(9)
        self._labels: list = []
        self.groups: list = []
        self.drawn: list[int] = []  # groups drawn faint (solid or dashed)
        self.strong = -1
        self.within_only = False
        self.radius = 0.0
        self._cache: dict = {}
        self._faint_key = None

    @property
    def count(self) -> int:
        """How many ghosts are drawn (faint ones and the highlighted one)."""
        return len(set(self.drawn) | ({self.strong} if self.strong >= 0 else set()))

    def add_to(self, view) -> None:
        super().add_to(view)
        for part in self._parts:
            part._view = view

    def set_visible(self, on: bool) -> None:
        self._visible = bool(on)
        for part in self._parts:
            part.set_visible(on)
        for item in (self._dashes, self._strong_dashes):
            item.setVisible(self._visible and item._wanted)
        for lab in self._labels:
            lab.setVisible(self._visible and getattr(lab, "_wanted", False))

    # -- data -------------------------------------------------------------------------------------
    def _coarse(self, k: int) -> dict:
        if k not in self._cache:
            g = self.groups[k]
            self._cache[k] = body_arrays(g.drawing, 0.9 * self.radius, *FAINT_COLS)
        return self._cache[k]

    def _dash_of(self, k: int, radius: float) -> np.ndarray:
        key = ("dash", k)
        if key not in self._cache:
            segs = self.groups[k].drawing.segments
            self._cache[key] = geometry.dash_segments(segs, 2.2 * radius, 1.4 * radius)
        return self._cache[key]

    def setData(self, **kw) -> None:
        check_keywords("GLGhosts", kw, ("groups", "radius"), ("strong", "within_only"))
        groups = kw["groups"]
        if not isinstance(groups, list) or not all(isinstance(g, geometry.GhostGroup) for g in groups):
            raise PoserValueError("groups must be a list of GhostGroup (poser.ui.geometry.ghost_groups), "
                                  f"got {type(groups).__name__}")
        radius = as_size("radius", kw["radius"])
        strong = int(kw.get("strong", -1))
        if not -1 <= strong < len(groups):
            raise PoserValueError(f"strong must be -1 or a group index below {len(groups)}, got {strong}")
        within_only = bool(kw.get("within_only", False))
        if groups is not self.groups or radius != self.radius:
            self._cache = {}
            self._faint_key = None
        self.groups, self.radius, self.within_only = groups, radius, within_only
        key = (id(groups), radius, within_only)
        if key != self._faint_key:
            self._build_faint()
            self._faint_key = key
        self.strong = strong
        self._build_strong()
        self._build_labels()
        self.set_visible(self._visible)

    def _build_faint(self) -> None:
        bodies = dashes = 0
        solid, dashed = [], []
        for k, g in enumerate(self.groups):
            if bodies >= BODY_BUDGET and (dashes >= DASH_BUDGET or self.within_only):
                break  # drawings are made only for ghosts that are drawn
            if g.within_limits and bodies < BODY_BUDGET:
                n = len(g.drawing.segments) + len(g.drawing.kinds)
                if bodies + n <= BODY_BUDGET:
                    solid.append(k)
                bodies += n
            elif not g.within_limits and not self.within_only and dashes < DASH_BUDGET:
                d = self._dash_of(k, self.radius)
                if dashes + len(d) <= DASH_BUDGET:
                    dashed.append(k)
                dashes += len(d)
        self.drawn = sorted(solid + dashed)
        self.solid, self.dashed = solid, dashed
        if solid:
            self._faint.show_arrays(concatenate_arrays([self._coarse(k) for k in solid]))
        for item in self._faint.items:
            item._wanted = bool(solid) and item._wanted
        if dashed:
            self._dashes.setData(pos=np.concatenate([self._dash_of(k, self.radius) for k in dashed]).reshape(-1, 3))
        self._dashes._wanted = bool(dashed)

    def _build_strong(self) -> None:
        k = self.strong
        for part in (self._strong, self._strong_out):
            for item in part.items:
                item._wanted = False
        self._strong_dashes._wanted = False
        if k < 0:
            return
        g = self.groups[k]
        if g.within_limits:
            self._strong.setData(drawing=g.drawing, radius=0.97 * self.radius)
        else:
            self._strong_out.setData(drawing=g.drawing, radius=0.5 * self.radius)
            self._strong_dashes.setData(pos=self._dash_of(k, self.radius).reshape(-1, 3))
            self._strong_dashes._wanted = True

    def _build_labels(self) -> None:
        if self._layer is None:
            return
        shown = sorted(set(self.drawn) | ({self.strong} if self.strong >= 0 else set()))
        # ghosts whose anchors coincide (wrist flipped or not: the same elbow) share one label, their rows merged
        same = geometry.coinciding_groups([self.groups[k].anchor for k in shown], 0.05 * self.radius)
        while len(self._labels) < len(same):
            self._labels.append(self._own_label(self._layer.new_label("ghost", palette.GHOST_HOVER, self._font)))
        for j, lab in enumerate(self._labels):
            if j < len(same):
                ks = [shown[m] for m in same[j]]
                rows = [r + 1 for k in ks for r in self.groups[k].rows]
                inside = any(self.groups[k].within_limits for k in ks)
                lab.setData(pos=self.groups[ks[0]].anchor, text=geometry.number_list(rows),
                            colour=palette.GHOST_HOVER if inside else palette.GHOST_OUT_HOVER,
                            priority=5 if self.strong in ks else 0)
                lab._wanted = True
            else:
                lab._wanted = False

    def label_texts(self) -> list[str]:
        """The row-number labels now given to the layer (for tests and the 2D view's legend)."""
        return [lab.text for lab in self._labels if getattr(lab, "_wanted", False)]
