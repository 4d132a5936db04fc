"""Poser's posing window (PySide6 + pyqtgraph).

One :class:`~poser.ui.state.PoseState` holds everything the panels show;
panels observe it and write to it, never to each other.  Pure helpers
(geometry, formatting, limit wording) live in :mod:`poser.ui.geometry` and
:mod:`poser.ui.words` and are testable without a display.  The core
(:mod:`poser.core`) never imports anything from here.
"""

from poser.ui._singletons import keep_singletons_alive as _keep_singletons_alive

_keep_singletons_alive()  # before any Qt call: see poser/ui/_singletons.py
