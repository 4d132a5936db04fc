"""The Studies panel: run a workspace or a reach study on a worker, with progress and Cancel; the results
in words, the reach table, and the 3D view's study toggles.

A thin view over ``state.studies`` (:class:`poser.ui.studies.Studies`): it writes inputs and requests
there and shows what it holds; it talks to no other panel.
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDoubleSpinBox,
    QFileDialog,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QProgressBar,
    QPushButton,
    QSpinBox,
    QTableWidgetItem,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from poser import report
from poser.ui import palette
from poser.ui.gl_cloud import HIGH, LOW
from poser.ui.reach_table import ReachView
from poser.ui.studies import MAX_SAMPLES, MIN_SAMPLES, SHOW, TITLES, VERDICT_SYMBOLS
from poser.ui.tables import CompactTable

SHOW_TITLES = {"cloud": "Workspace cloud", "sections": "Sections", "reach": "Reach targets", "coverage": "Coverage",
               "cube": "Cube"}
SHORTCUTS = {"workspace": "Ctrl+Shift+W", "load": "Ctrl+Shift+L", "reach": "Ctrl+Shift+R", "placement": "Ctrl+Shift+P",
             "cube": "Ctrl+Shift+B", "cancel": "Ctrl+."}
PLACE_COLUMNS = ("#", "x", "y", "z", "yaw", "reached", "smallest margin [% of range]", "manip.")
ORIENTATIONS = ("tool as at home", "roll, pitch, yaw")


def _wrapped(name: str) -> QLabel:
    lab = QLabel()
    lab.setWordWrap(True)
    lab.setAccessibleName(name)
    lab.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    return lab


def _note(text: str) -> QLabel:
    lab = QLabel(text)
    lab.setWordWrap(True)
    lab.setStyleSheet(f"color: {palette.MUTED}")
    return lab


class StudiesPanel(QWidget):
    """Inputs, Run and Cancel for each study, progress, the results in words and the reach table."""

    def __init__(self, state, parent=None):
        super().__init__(parent)
        self.state = state
        self.studies = state.studies
        lay = QVBoxLayout(self)
        lay.setContentsMargins(4, 4, 4, 4)

        # progress, Cancel, the last words, the 3D toggles ------------------------------------------------
        tl = QHBoxLayout()
        tl.addWidget(QLabel("Show in 3D:"))
        self.toggles = {}
        for key in SHOW:
            cb = QCheckBox(SHOW_TITLES[key])
            cb.setToolTip(SHOW[key])
            cb.setChecked(self.studies.shown(key))
            cb.toggled.connect(lambda on, k=key: self.studies.set_show(k, on))
            tl.addWidget(cb)
            self.toggles[key] = cb
        tl.addStretch(1)
        row = QHBoxLayout()
        self.progress = QProgressBar()
        self.progress.setRange(0, 1000)
        self.progress.setAccessibleName("study progress")
        self.progress.setTextVisible(True)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setToolTip(f"stop the running study; every result stays as it was ({SHORTCUTS['cancel']}, "
                                      "or Esc in this panel)")
        self.cancel_button.clicked.connect(self.studies.cancel)
        esc = QAction(self)  # Esc anywhere in the panel cancels too
        esc.setShortcut(QKeySequence(Qt.Key.Key_Escape))
        esc.setShortcutContext(Qt.ShortcutContext.WidgetWithChildrenShortcut)
        esc.triggered.connect(self.studies.cancel)
        self.addAction(esc)
        row.addWidget(self.progress, 1)
        row.addWidget(self.cancel_button)
        lay.addLayout(row)
        self.message = _wrapped("study message")
        lay.addWidget(self.message)
        lay.addLayout(tl)
        self.caution = _note(report.STUDY_CAUTION)  # under the toggles: always in sight, never scrolled away
        self.caution.setAccessibleName("studies caution")
        lay.addWidget(self.caution)

        # workspace -----------------------------------------------------------------------------
        self.tabs = QTabWidget()
        self.tabs.setDocumentMode(True)
        box = QWidget()
        wl = QVBoxLayout(box)
        row = QHBoxLayout()
        self.samples = QSpinBox()
        self.samples.setRange(MIN_SAMPLES, MAX_SAMPLES)
        self.samples.setSingleStep(50_000)
        self.samples.setGroupSeparatorShown(True)
        self.samples.setValue(self.studies.samples)
        self.samples.setSuffix(" samples")
        self.samples.setAccessibleName("workspace joint samples")
        self.samples.setToolTip("joint samples to take (stratified over every joint's range, a quarter with one "
                                "joint at a limit); more samples, a finer grid and a smaller error")
        self.samples.valueChanged.connect(self.studies.set_samples)
        lab = QLabel("Sa&mples")
        lab.setBuddy(self.samples)
        self.run_workspace_button = QPushButton("Run wor&kspace")
        self.run_workspace_button.setToolTip(f"measure the workspace on a worker ({SHORTCUTS['workspace']})")
        self.run_workspace_button.clicked.connect(lambda: self.studies.run("workspace"))
        row.addWidget(lab)
        row.addWidget(self.samples, 1)
        row.addWidget(self.run_workspace_button)
        wl.addLayout(row)
        row = QHBoxLayout()
        self.height = QDoubleSpinBox()
        self.height.setRange(-1e6, 1e6)
        self.height.setDecimals(1)
        self.height.setAccessibleName("horizontal section height")
        self.height.setToolTip("world height z of the horizontal section outline")
        self.height.editingFinished.connect(lambda: self.studies.set_section_height(self.height.value()))
        hl = QLabel("Section height &z")
        hl.setBuddy(self.height)
        self.mid_button = QPushButton("Mid-height")
        self.mid_button.setToolTip("the horizontal section half-way up the workspace's bounds")
        self.mid_button.clicked.connect(lambda: self.studies.set_section_height(None))
        row.addWidget(hl)
        row.addWidget(self.height, 1)
        row.addWidget(self.mid_button)
        wl.addLayout(row)
        self.workspace_words = _wrapped("workspace result")
        wl.addWidget(self.workspace_words)
        self.legend = _wrapped("cloud colour legend")
        wl.addWidget(self.legend)
        wl.addStretch(1)
        self.tabs.addTab(box, "Workspace")

        # reach ---------------------------------------------------------------------------------
        box = QWidget()
        rl = QVBoxLayout(box)
        row = QHBoxLayout()
        self.load_button = QPushButton("Load targ&ets…")
        self.load_button.setToolTip("read a target list (CSV: name, x, y, z; optional roll, pitch, yaw and free_spin) "
                                    f"in the arm's units ({SHORTCUTS['load']})")
        self.load_button.clicked.connect(self.choose_targets)
        self.run_reach_button = QPushButton("Run &reach study")
        self.run_reach_button.setToolTip("check every target from the arm's home, each from the one before, as "
                                         f"poser reach does ({SHORTCUTS['reach']})")
        self.run_reach_button.clicked.connect(lambda: self.studies.run("reach"))
        row.addWidget(self.load_button)
        row.addWidget(self.run_reach_button)
        row.addStretch(1)
        rl.addLayout(row)
        self.targets_words = _wrapped("target list")
        rl.addWidget(self.targets_words)
        self.reach_words = _wrapped("reach summary")
        rl.addWidget(self.reach_words)
        self.table = ReachView(state)
        self.table.setMinimumHeight(6 * self.table.verticalHeader().defaultSectionSize())
        rl.addWidget(self.table, 1)
        self.tabs.addTab(box, "Reach")
        self.tabs.addTab(self._placement_tab(), "Placement")
        self.tabs.addTab(self._cube_tab(), "Cube")
        lay.addWidget(self.tabs, 1)

        self.studies.changed.connect(self._on_studies)
        state.changed.connect(self._on_state)
        self._units()
        self._show_all()

    def _spin(self, name, lo=-1e6, hi=1e6, decimals=1):
        sp = QDoubleSpinBox()
        sp.setRange(lo, hi)
        sp.setDecimals(decimals)
        sp.setAccessibleName(name)
        return sp

    def _placement_tab(self) -> QWidget:
        box = QWidget()
        pl = QVBoxLayout(box)
        pl.addWidget(_note("Base positions on a grid, each scored by the loaded targets it reaches, then by the "
                           "smallest limit margin, then by manipulability (uses the Reach tab's target list)."))
        grid = QGridLayout()
        self.place = {}
        for r, (key, what) in enumerate((("x", "base x"), ("y", "base y"), ("z", "base z"), ("yaw", "base yaw"))):
            lo, hi = self._spin(f"{what} from"), self._spin(f"{what} to")
            grid.addWidget(QLabel(what), r, 0)
            grid.addWidget(lo, r, 1)
            grid.addWidget(QLabel("to"), r, 2)
            grid.addWidget(hi, r, 3)
            self.place[key] = (lo, hi)
        self.place_step = self._spin("position step", 1e-6, 1e6, 3)
        self.yaw_step = self._spin("yaw step", 1e-3, 360.0, 2)
        grid.addWidget(QLabel("step"), 4, 0)
        grid.addWidget(self.place_step, 4, 1)
        grid.addWidget(QLabel("yaw step"), 4, 2)
        grid.addWidget(self.yaw_step, 4, 3)
        pl.addLayout(grid)
        row = QHBoxLayout()
        self.run_place_button = QPushButton("R&un placement search")
        self.run_place_button.setToolTip(f"search the grid on a worker ({SHORTCUTS['placement']})")
        self.run_place_button.clicked.connect(self.run_placement)
        self.place_count = QLabel()
        self.place_count.setStyleSheet(f"color: {palette.MUTED}")
        row.addWidget(self.run_place_button)
        row.addWidget(self.place_count, 1)
        pl.addLayout(row)
        for lo, hi in self.place.values():
            lo.valueChanged.connect(self._count_placements)
            hi.valueChanged.connect(self._count_placements)
        self.place_step.valueChanged.connect(self._count_placements)
        self.yaw_step.valueChanged.connect(self._count_placements)
        self.place_words = _wrapped("placement result")
        pl.addWidget(self.place_words)
        self.place_table = CompactTable(0, len(PLACE_COLUMNS), preferred_rows=5)
        self.place_table.setAccessibleName("best placements")
        self.place_table.verticalHeader().setVisible(False)
        self.place_table.setEditTriggers(CompactTable.EditTrigger.NoEditTriggers)
        pl.addWidget(self.place_table, 1)
        self._placement_defaults()
        return box

    def _cube_tab(self) -> QWidget:
        box = QWidget()
        cl = QVBoxLayout(box)
        cl.addWidget(_note("The largest cube with edges along the base axes inside the workspace (the Workspace "
                           "tab's, else measured with its sample count) and the five ISO 9283 test positions on a "
                           "diagonal plane, each checked for reach with the tool orientation chosen here."))
        row = QHBoxLayout()
        self.cube_mode = QComboBox()
        self.cube_mode.addItems(ORIENTATIONS)
        self.cube_mode.setAccessibleName("test cube tool orientation")
        row.addWidget(QLabel("tool orientation"))
        row.addWidget(self.cube_mode)
        self.cube_rpy = [self._spin(f"test cube {n}", -360.0, 360.0, 2) for n in ("roll", "pitch", "yaw")]
        for n, sp in zip(("r", "p", "y"), self.cube_rpy):
            row.addWidget(QLabel(n))
            row.addWidget(sp, 1)
        cl.addLayout(row)
        self.cube_mode.currentIndexChanged.connect(self._cube_mode_changed)
        row = QHBoxLayout()
        from poser.core.cube import DEFAULT_PLANE, PLANES

        self.cube_plane = QComboBox()
        self.cube_plane.addItems(list(PLANES))
        self.cube_plane.setCurrentText(DEFAULT_PLANE)
        self.cube_plane.setAccessibleName("diagonal plane of the test positions")
        self.cube_plane.setToolTip("y+: the plane through the cube's edges along y at (x low, z low) and (x high, "
                                   "z high); y−: at (x low, z high) and (x high, z low); likewise x±, z±")
        row.addWidget(QLabel("diagonal plane"))
        row.addWidget(self.cube_plane)
        self.run_cube_button = QPushButton("Find test cu&be")
        self.run_cube_button.setToolTip(f"search the cube and check its positions on a worker ({SHORTCUTS['cube']})")
        self.run_cube_button.clicked.connect(self.run_cube)
        row.addWidget(self.run_cube_button)
        row.addStretch(1)
        cl.addLayout(row)
        self.cube_words = _wrapped("test cube result")
        cl.addWidget(self.cube_words)
        cl.addStretch(1)
        self._cube_mode_changed()
        return box

    def _placement_defaults(self) -> None:
        """A square of the arm's size about its present base, at its height and yaw; 11 × 11 positions."""
        chain = self.state.chain
        from poser.core.transforms import matrix_to_rpy

        B = chain.base
        half = 0.5 * chain.scale
        step = report.fmt(chain.scale / 10.0, 0 if chain.units.length == "mm" else 3)
        yaw = float(chain.units.angle_out(matrix_to_rpy(B[:3, :3])[2]))
        for (lo, hi), (a, b) in zip(self.place.values(),
                                   ((B[0, 3] - half, B[0, 3] + half), (B[1, 3] - half, B[1, 3] + half),
                                    (B[2, 3], B[2, 3]), (yaw, yaw))):
            for sp, v in ((lo, a), (hi, b)):
                sp.blockSignals(True)
                sp.setValue(float(v))
                sp.blockSignals(False)
        self.place_step.setValue(float(step))
        self.yaw_step.setValue(15.0 if chain.units.angle == "deg" else 0.26)
        self._count_placements()

    def placement_ranges(self) -> dict:
        """The grid typed, in internal units (rad for yaw)."""
        a = self.state.chain.units.angle_in
        r = {k: (lo.value(), hi.value()) for k, (lo, hi) in self.place.items()}
        r["yaw"] = (float(a(r["yaw"][0])), float(a(r["yaw"][1])))
        return dict(r, step=self.place_step.value(), yaw_step=float(a(self.yaw_step.value())))

    def _count_placements(self) -> None:
        from poser.core.errors import PoserValueError
        from poser.core.place import grid

        try:
            g = grid(self.state.chain, **self.placement_ranges())
        except PoserValueError as exc:
            self.place_count.setText(f"grid not usable: {exc}")
            self.place_count.setStyleSheet(f"color: {palette.AT}")
            return
        self.place_count.setText(f"{g.size:,} placements ({len(g.x)} × {len(g.y)} × {len(g.z)} × {len(g.yaw)} "
                                 "x, y, z, yaw)")
        self.place_count.setStyleSheet(f"color: {palette.MUTED}")

    def run_placement(self) -> bool:
        from poser.core.errors import PoserValueError
        from poser.core.place import grid

        ranges = self.placement_ranges()
        try:
            grid(self.state.chain, **ranges)
        except PoserValueError as exc:
            self.studies._say("at", f"Placement search not started: {exc}.")
            return False
        return self.studies.run("placement", **ranges)

    def _cube_mode_changed(self, *_):
        on = self.cube_mode.currentIndex() == 1
        for sp in self.cube_rpy:
            sp.setEnabled(on)

    def cube_rotation(self):
        """The tool orientation for the cube (3, 3), or None for "as at home"."""
        if self.cube_mode.currentIndex() == 0:
            return None
        from poser.core.transforms import rpy_to_matrix

        a = self.state.chain.units.angle_in
        return rpy_to_matrix(np.array([float(a(sp.value())) for sp in self.cube_rpy]))

    def run_cube(self) -> bool:
        return self.studies.run("cube", R=self.cube_rotation(), plane=self.cube_plane.currentText())

    def _show_placement(self) -> None:
        p = self.studies.placement
        chain = self.state.chain
        u = chain.units
        heads = list(PLACE_COLUMNS)
        for k in (1, 2, 3):
            heads[k] += f" [{u.length}]"
        heads[4] += f" [{u.angle}]"
        heads[5] += f" [of {p.placement.targets}]" if p is not None else ""
        heads[7] += f" [{report.manipulability_unit(chain)}]"
        self.place_table.setHorizontalHeaderLabels(heads)
        self.place_table.setRowCount(0)
        if p is None:
            self.place_words.setText("No placement search run for this arm and list.")
            return
        pl = p.placement
        best = pl.best
        names = [t.name for t in p.file.targets]
        self.place_words.setText(
            f"{pl.grid.size:,} placements searched. Best: {report.placement_words(chain, best[0], pl.targets, names)}"
            "\nCoverage map in the 3D view: a tile per base position, pale (none reached) → amber (half) → green "
            f"(all), the best over the heights and yaws; the ring marks the best placement.\n{report.PLACEMENT_NOTE}")
        self.place_table.setRowCount(len(best))
        for r, b in enumerate(best):
            d = report.length_digits(chain)
            cells = [str(r + 1), report.fmt(b.xyz[0], d), report.fmt(b.xyz[1], d), report.fmt(b.xyz[2], d),
                     report.fmt(float(u.angle_out(b.yaw)), 2), str(b.reached),
                     report.fmt(100 * b.margin, 2) if b.reached else "–",
                     report.manipulability_figure(chain, b.manipulability if b.reached else None)]
            for c, text in enumerate(cells):
                self.place_table.setItem(r, c, QTableWidgetItem(text))
        self.place_table.resizeColumnsToContents()

    def _show_cube(self) -> None:
        c = self.studies.cube
        chain = self.state.chain
        if c is None:
            self.cube_words.setText("No test cube found for this arm yet.")
            return
        cb = c.cube
        lines = report.cube_lines(chain, cb)  # what poser cube prints
        marks = {v.target.name: VERDICT_SYMBOLS.get(v.status, "?") for v in cb.study.verdicts}
        lines = [f"{marks[ln.split()[0]]} {ln.strip()}" if ln.startswith("  ") and ln.split()[0] in marks else ln
                 for ln in lines]
        self.cube_words.setText("\n".join(lines))

    # -- the menu ---------------------------------------------------------------------------------
    def fill_menu(self, menu) -> list:
        """Add the studies' actions (with shortcuts) and the 3D toggles to ``menu``; returns the actions."""
        acts = []

        def act(text, slot, key=None, checkable=False):
            a = QAction(text, menu)
            if key:
                a.setShortcut(QKeySequence(key))
            a.setCheckable(checkable)
            (a.toggled if checkable else a.triggered).connect(slot)
            menu.addAction(a)
            acts.append(a)
            return a

        act("Run wor&kspace", lambda _=False: self.studies.run("workspace"), SHORTCUTS["workspace"])
        act("&Load targets…", lambda _=False: self.choose_targets(), SHORTCUTS["load"])
        act("Run &reach study", lambda _=False: self.studies.run("reach"), SHORTCUTS["reach"])
        act("Run &placement search", lambda _=False: self.run_placement(), SHORTCUTS["placement"])
        act("Find the test &cube", lambda _=False: self.run_cube(), SHORTCUTS["cube"])
        self.cancel_action = act("Ca&ncel the running study", lambda _=False: self.studies.cancel(),
                                 SHORTCUTS["cancel"])
        menu.addSeparator()
        self.show_actions = {}
        for key in SHOW:
            a = act(f"Show {SHOW[key]}", lambda on, k=key: self.studies.set_show(k, on), checkable=True)
            a.setChecked(self.studies.shown(key))
            self.show_actions[key] = a
        self._show_running()
        return acts

    # -- actions ----------------------------------------------------------------------------------
    def choose_targets(self) -> bool:
        start = str(self.studies.targets_path or "")
        path, _ = QFileDialog.getOpenFileName(self, "Load a target list", start,
                                              "Target lists (*.csv);;All files (*)")
        return self.load_targets(path) if path else False

    def load_targets(self, path) -> bool:
        return self.studies.load_targets(path)

    # -- showing ----------------------------------------------------------------------------------
    def _units(self) -> None:
        u = self.state.chain.units
        self.height.setSuffix(f" {u.length}")
        for key, (lo, hi) in self.place.items():
            for sp in (lo, hi):
                sp.setSuffix(f" {u.angle if key == 'yaw' else u.length}")
        self.place_step.setSuffix(f" {u.length}")
        self.yaw_step.setSuffix(f" {u.angle}")
        for sp in self.cube_rpy:
            sp.setSuffix(f" {u.angle}")

    def _show_all(self) -> None:
        for f in ("workspace", "targets", "reach", "placement", "cube", "show", "running", "message"):
            self._on_studies(f)

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self._units()
            self._placement_defaults()
            self._show_all()

    def _show_running(self) -> None:
        s = self.studies
        kind = s.running
        self.cancel_button.setEnabled(kind is not None)
        if hasattr(self, "cancel_action"):
            self.cancel_action.setEnabled(kind is not None)
        self.progress.setValue(int(round(1000 * s.fraction)) if kind else 0)
        self.progress.setFormat(f"{TITLES[kind]}: %p %" if kind else "no study running")

    def _on_studies(self, field: str) -> None:
        s = self.studies
        chain = self.state.chain
        if field in ("workspace", "sections"):
            w = s.workspace
            if w is not None and field == "workspace":
                self.tabs.setCurrentIndex(0)
            self.workspace_words.setText(w.words if w is not None else "No workspace computed for this arm yet.")
            if w is not None and len(w.ws.dexterity):
                d = w.ws.dexterity
                self.legend.setText(
                    f"Cloud: {len(w.ws.points):,} of the tool points sampled, coloured by the rank of their "
                    f"manipulability [{report.manipulability_unit(chain)}] — <span style='color:{LOW}'>■ orange"
                    f"</span> lowest ({report.manipulability_figure(chain, float(d.min()))}), median "
                    f"{report.manipulability_figure(chain, float(np.median(d)))}, <span style='color:{HIGH}'>■ "
                    f"blue</span> highest ({report.manipulability_figure(chain, float(d.max()))}); 0 is a "
                    "singularity.")
            else:
                self.legend.setText("")
            self.height.setEnabled(w is not None and w.horizontal is not None)
            self.mid_button.setEnabled(w is not None and w.horizontal is not None)
            if w is not None and w.height is not None:
                self.height.blockSignals(True)
                self.height.setValue(w.height)
                self.height.blockSignals(False)
        elif field == "targets":
            self.targets_words.setText(s.targets_words())
            self.run_reach_button.setEnabled(s.targets is not None)
            self.run_place_button.setEnabled(s.targets is not None)
        elif field == "reach":
            r = s.reach
            if r is not None:
                self.tabs.setCurrentIndex(1)
            self.reach_words.setText(r.summary if r is not None else "No reach study run for this arm and list.")
        elif field == "show":
            for key, cb in self.toggles.items():
                if cb.isChecked() != s.shown(key):
                    cb.blockSignals(True)
                    cb.setChecked(s.shown(key))
                    cb.blockSignals(False)
                a = getattr(self, "show_actions", {}).get(key)
                if a is not None and a.isChecked() != s.shown(key):
                    a.blockSignals(True)
                    a.setChecked(s.shown(key))
                    a.blockSignals(False)
        elif field == "placement":
            if s.placement is not None:
                self.tabs.setCurrentIndex(2)
            self._show_placement()
        elif field == "cube":
            if s.cube is not None:
                self.tabs.setCurrentIndex(3)
            self._show_cube()
        elif field in ("running", "progress"):
            self._show_running()
        elif field == "message":
            level, text = s.message
            self.message.setText(text)
            colour = palette.LEVEL_COLOURS.get(level, palette.TEXT) if level != "ok" else palette.TEXT
            self.message.setStyleSheet(f"color: {colour}")


class WorkspaceVerdict(QLabel):
    """One line for the target panel: whether the target lies inside the computed workspace, or that none
    is computed yet (``state.studies.inside_words``)."""

    def __init__(self, state, parent=None):
        super().__init__(parent)
        self.state = state
        self.setWordWrap(True)
        self.setAccessibleName("target inside the workspace")
        state.changed.connect(lambda f: self.refresh() if f in ("target", "arm") else None)
        state.studies.changed.connect(lambda f: self.refresh() if f == "workspace" else None)
        self.refresh()

    def refresh(self) -> None:
        level, text = self.state.studies.inside_words()
        self.setText(text)
        self.setVisible(bool(text))
        colour = palette.LEVEL_COLOURS.get(level, palette.TEXT) if level != "ok" else palette.MUTED
        self.setStyleSheet(f"color: {colour}")
