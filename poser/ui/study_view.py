"""The studies in the 3D view: the workspace cloud and sections, the reach targets (one GL item each,
``gl_cloud``, ``gl_sections``, ``gl_reach``), drawn from ``state.studies`` and shown by its toggles.

Nothing of another arm is ever drawn: the studies clear themselves on an arm change, and every result
carries the arm generation it was computed for (:attr:`poser.ui.studies.Studies.workspace` gives None
for another).
"""

from __future__ import annotations

import numpy as np

from poser import report
from poser.ui.gl_cloud import GLCloud
from poser.ui.gl_coverage import GLCoverage
from poser.ui.gl_cube import GLCube
from poser.ui.gl_reach import GLReach
from poser.ui.gl_sections import GLSections

MARK = 0.03
"""Half size of a reach mark, as a share of the arm's size."""


class StudyLayers:
    """Owns the study drawables of one 3D view and keeps them in step with ``state.studies``."""

    def __init__(self, state, view, labels=None):
        self.state = state
        self.studies = state.studies
        self.cloud = GLCloud()
        self.sections = GLSections(labels)
        self.reach = GLReach()
        self.coverage = GLCoverage(labels)
        self.cube = GLCube(labels)
        self.cube_marks = GLReach()  # the cube's test positions, shaped by their verdicts like reach targets
        for group in (self.cloud, self.sections, self.reach, self.coverage, self.cube, self.cube_marks):
            group.add_to(view)
            group.set_visible(False)
        self._view = view
        self.studies.changed.connect(self._on_studies)
        state.changed.connect(self._on_state)
        self.redraw()

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self.redraw()

    def _on_studies(self, field: str) -> None:
        if field in ("workspace", "sections", "reach", "placement", "cube", "show"):
            self.redraw()

    def redraw(self) -> None:
        st, s = self.state, self.studies
        w = s.workspace
        on = w is not None and s.shown("cloud") and len(w.ws.points) > 0
        if on:
            self.cloud.setData(points=w.ws.points, values=w.ws.dexterity)
        self.cloud.set_visible(on)
        on = w is not None and s.shown("sections") and (w.vertical is not None or w.horizontal is not None)
        if on:
            label = "" if w.height is None else f"section z = {report.length(st.chain, w.height, 1)}"
            self.sections.setData(vertical=w.vertical.lines if w.vertical else [],
                                  horizontal=w.horizontal.lines if w.horizontal else [], label=label)
        self.sections.set_visible(on)
        r = s.reach
        on = r is not None and s.shown("reach") and len(r.study.verdicts) > 0
        if on:
            vs = r.study.verdicts
            self.reach.setData(points=np.array([v.target.xyz for v in vs]), verdicts=[v.status for v in vs],
                               size=MARK * st.scale)
        self.reach.set_visible(on)
        p = s.placement
        on = p is not None and s.shown("coverage")
        if on:
            pl = p.placement
            g, b = pl.grid, pl.best[0]
            text = (f"best: {b.reached} of {pl.targets} reached, yaw {report.angle(st.chain, b.yaw, 1)}"
                    if b.reached else "no placement reaches a target")
            self.coverage.setData(x=g.x, y=g.y, z=float(g.z.min()), counts=pl.coverage(), total=pl.targets,
                                  best=b.xyz, label=text, size=MARK * st.scale)
        self.coverage.set_visible(on)
        c = s.cube
        on = c is not None and s.shown("cube") and c.cube.edge > 0
        if on:
            cb = c.cube
            vs = cb.study.verdicts
            self.cube.setData(corners=cb.corners, plane=cb.plane_corners, positions=cb.positions,
                              names=[v.target.name for v in vs])
            self.cube_marks.setData(points=cb.positions, verdicts=[v.status for v in vs], size=MARK * st.scale)
        self.cube.set_visible(on)
        self.cube_marks.set_visible(on)
        self._view.update()
