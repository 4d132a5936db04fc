"""Poser: a workbench for posing serial robot arms.

The kinematic core lives in :mod:`poser.core` (numpy/scipy only), arm files in
:mod:`poser.armfile`, the command line in :mod:`poser.cli` and the window in
:mod:`poser.ui` (PySide6, imported only when a window is wanted).
"""

import os as _os
import sys as _sys

__version__ = "0.1.0"

# Poser's linear algebra is many small problems (3 × 3 to 7 × 7 solves, a quasi-Newton polish of six
# variables); a multithreaded BLAS only spins its threads on them, and on a busy machine that made one
# unreachable-target solve 25× slower (150 ms instead of 6).  Poser parallelises its batches itself.
# Effective when Poser is imported before numpy (the command line, the window, benchmarks/run.py).
if "numpy" not in _sys.modules:
    for _var in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS"):
        _os.environ.setdefault(_var, "1")
