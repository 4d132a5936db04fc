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
    QDoubleSpinBox,
    QFileDialog,
    QHBoxLayout,
    QLabel,
    QProgressBar,
    QPushButton,
    QSpinBox,
    QTabWidget,
    QVBoxLayout,
    QWidget,
)

from poser import report
from poser.ui import palette
from poser.ui.gl_cloud import HIGH, LOW
from poser.ui.reach_table import ReachView
from poser.ui.studies import MAX_SAMPLES, MIN_SAMPLES, SHOW, TITLES

SHOW_TITLES = {"cloud": "Workspace cloud", "sections": "Sections", "reach": "Reach targets"}
SHORTCUTS = {"workspace": "Ctrl+Shift+W", "load": "Ctrl+Shift+L", "reach": "Ctrl+Shift+R", "cancel": "Ctrl+."}


def _wrapped(name: str) -> QLabel:
    lab = QLabel()
    lab.setWordWrap(True)
    lab.setAccessibleName(name)
    lab.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
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
        lay.addWidget(self.tabs, 1)

        self.studies.changed.connect(self._on_studies)
        state.changed.connect(self._on_state)
        self._units()
        self._show_all()

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

        act("Run w&orkspace", lambda _=False: self.studies.run("workspace"), SHORTCUTS["workspace"])
        act("&Load targets…", lambda _=False: self.choose_targets(), SHORTCUTS["load"])
        act("Run &reach study", lambda _=False: self.studies.run("reach"), SHORTCUTS["reach"])
        self.cancel_action = act("&Cancel the running study", lambda _=False: self.studies.cancel(),
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
        self.height.setSuffix(f" {self.state.chain.units.length}")

    def _show_all(self) -> None:
        for f in ("workspace", "targets", "reach", "show", "running", "message"):
            self._on_studies(f)

    def _on_state(self, field: str) -> None:
        if field == "arm":
            self._units()
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
