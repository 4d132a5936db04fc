"""A guard against a reference-count fault of PySide6 6.12.0 on CPython 3.11.

With that pair, Qt calls made from Python drop references to ``None``,
``True`` and ``False`` that they never took: every signal delivered to a Python
slot costs ``True`` one reference, every call of a method that returns nothing
(``QSlider.setValue``, leaving a ``QSignalBlocker`` …) costs ``None`` one.
The wheels treat these objects as immortal, which they are only from CPython
3.12 on.  Once a count reaches zero CPython aborts ("none_dealloc:
deallocating None"); in the window that happens after a few thousand slider
moves.  PySide6 6.11.3 does not have the fault.

:func:`keep_singletons_alive` gives the three objects the effect they have on
CPython 3.12 — a count that never reaches zero — by adding a very large count
once.  Nothing else changes: these objects are never deallocated in any case.
"""

from __future__ import annotations

import sys

BOOST = 1 << 40
_done = False


AFFECTED = ("6.12.0",)
"""shiboken6 releases with the fault; pyproject.toml excludes them, this guard is for
installations that have one anyway."""


def _affected() -> bool:
    try:
        from importlib.metadata import version

        return version("shiboken6") in AFFECTED
    except Exception:  # no metadata: be safe
        return True


def keep_singletons_alive() -> bool:
    """Add :data:`BOOST` to the reference counts of None, True and False (CPython < 3.12); True if done now."""
    global _done
    if _done or sys.implementation.name != "cpython" or sys.version_info >= (3, 12) or not _affected():
        return False
    import ctypes

    for obj in (None, True, False):
        ctypes.c_ssize_t.from_address(id(obj)).value += BOOST  # ob_refcnt is a PyObject's first field
    _done = True
    return True
