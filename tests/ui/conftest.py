"""Fixtures for the window's tests (pytest-qt; under pytest-xvfb with GLX).

* every test gets its own recovery folder and settings file, so nothing touches the user's;
* ``heron_path``: a copy of the Heron 6 demo arm in a temporary folder (saving is safe);
* ``make_window``: a :class:`poser.ui.main_window.MainWindow` that asks no questions (answers are queued).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from PySide6.QtCore import QCoreApplication, Qt
from ui_common import HERON

# Every window's GL view shares one OpenGL context group, so pyqtgraph's cached shader programs stay valid
# in the next window (the application does the same before its QApplication exists).
QCoreApplication.setAttribute(Qt.ApplicationAttribute.AA_ShareOpenGLContexts)


@pytest.fixture(autouse=True)
def _own_folders(tmp_path, monkeypatch):
    monkeypatch.setenv("POSER_RECOVERY_DIR", str(tmp_path / "recovery"))
    monkeypatch.delenv("POSER_NO_GL", raising=False)


@pytest.fixture
def heron_path(tmp_path) -> Path:
    p = tmp_path / "heron6.toml"
    shutil.copy(HERON, p)
    return p


@pytest.fixture
def make_window(qtbot, tmp_path):
    from PySide6.QtCore import QSettings

    from poser import armfile
    from poser.ui.main_window import MainWindow

    made = []

    def make(path=None, size=(1280, 800), show=True):
        path = Path(path) if path else tmp_path / "heron6.toml"
        if not path.exists():
            shutil.copy(HERON, path)
        settings = QSettings(str(tmp_path / "settings.ini"), QSettings.Format.IniFormat)
        win = MainWindow(armfile.load(path), path, interactive=False, settings=settings)
        qtbot.addWidget(win)
        win.resize(*size)
        if show:
            win.show()
            qtbot.waitExposed(win)
        made.append(win)
        return win

    yield make
    from PySide6.QtCore import QEvent
    from PySide6.QtWidgets import QApplication

    for w in made:
        w.state.set_arm(w.state.spec, dirty=False)  # no prompt on close
        w.close()
        # Delete the window now, as the application does: a closed but living window whose 3D view
        # (a QWindow in a container) outlives its GL window crashes QApplication's destructor at exit.
        w.deleteLater()
    QApplication.sendPostedEvents(None, QEvent.Type.DeferredDelete)
    QApplication.processEvents()
