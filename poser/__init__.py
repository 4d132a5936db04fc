"""Poser: a workbench for posing serial robot arms.

The kinematic core lives in :mod:`poser.core` (numpy/scipy only), arm files in
:mod:`poser.armfile`, the command line in :mod:`poser.cli` and the window in
:mod:`poser.ui` (PySide6, imported only when a window is wanted).
"""

__version__ = "0.1.0"
