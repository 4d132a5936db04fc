"""Compiled backends: generated kernels compiled by numba, kept in a cache on disk.

Forward kinematics runs here (:func:`fk_kernel`, the loop of :func:`poser.core._fkkernel.build_loop_source`:
the one plan that also has numpy and plain-float renderings).  Why: numpy's float64 sine and cosine cost
~11 ns a value here and every numpy operation streams its whole chunk, so the numpy kernel runs at about
5× a compiled loop.  (The closed-form IK's scalar kernel compiled the same way ran no faster than its
numpy rendering — its arctangents and square roots are library calls that do not vectorise — so it is
not compiled; :func:`load` serves any generated module.)

How: a generated module is written once into the kernel cache (``POSER_CACHE_DIR`` or
``$XDG_CACHE_HOME/poser/kernels``, else ``~/.cache/poser/kernels``), named by a hash of its text, and
imported; numba keeps the machine code beside it (``cache=True``), so only the first large batch of a
new arm on a machine pays the compilation (about a second).  numba is imported only when such a batch
comes: the window's start-up and single poses never touch it.  Without numba (or with
``POSER_NO_COMPILE=1``) the numpy backends serve every size; :func:`problem` says why.
"""

from __future__ import annotations

import hashlib
import importlib.util
import os
import sys
import tempfile
import threading
from pathlib import Path

import numpy as np

from poser.core._fkkernel import build_loop_source

__all__ = ["available", "fk_kernel", "load", "cache_dir", "problem"]

_lock = threading.Lock()
_state: dict = {}


def available() -> bool:
    """Whether the compiled backend can be used here (numba imports; not switched off)."""
    if os.environ.get("POSER_NO_COMPILE", "") not in ("", "0"):
        return False
    if "numba" not in _state:
        try:
            import numba  # noqa: F401
        except Exception as exc:  # pragma: no cover - depends on the installation
            _state["numba"] = None
            _state["problem"] = f"numba does not import: {exc}"
        else:
            _state["numba"] = numba.__version__
    return _state["numba"] is not None


def problem() -> str | None:
    """Why the compiled backend was not used last (None when nothing went wrong)."""
    if os.environ.get("POSER_NO_COMPILE", "") not in ("", "0"):
        return "switched off by POSER_NO_COMPILE"
    return _state.get("problem")


def cache_dir() -> Path:
    """Where generated kernels and their machine code are kept (made if missing)."""
    env = os.environ.get("POSER_CACHE_DIR")
    if env:
        base = Path(env)
    else:
        xdg = os.environ.get("XDG_CACHE_HOME")
        base = (Path(xdg) if xdg else Path.home() / ".cache") / "poser"
    d = base / "kernels"
    try:
        d.mkdir(parents=True, exist_ok=True)
        probe = d / f".probe-{os.getpid()}"
        probe.write_text("")
        probe.unlink()
    except OSError:
        d = Path(tempfile.gettempdir()) / f"poser-kernels-{os.getuid() if hasattr(os, 'getuid') else 'user'}"
        d.mkdir(parents=True, exist_ok=True)
    return d


def fk_kernel(chain):
    """The chain's compiled FK kernel ``kernel(Q (m, n), out (m, 4, 4))`` (made once per chain), or None when
    the backend is not available or the kernel cannot be built here (then the numpy backend is used)."""
    return chain.derived("fk_compiled", _make_fk)


def _make_fk(chain):
    source = build_loop_source(chain._head, chain._links, chain._tail, chain.revolute)
    n = chain.n
    return load("fk", source, "kernel", lambda k: k(np.zeros((1, n)), np.empty((1, 4, 4))), chain.name)


def load(prefix: str, source: str, entry: str, warm, what: str = ""):
    """Write ``source`` (a module) into the kernel cache, import it and return its function ``entry``,
    compiled (or loaded from numba's cache) by calling ``warm(function)`` once — under one lock, so two
    threads never compile the same kernel.  None when numba is missing or anything fails (the reason is
    kept for :func:`problem`)."""
    if not available():
        return None
    digest = hashlib.sha256((source + _state["numba"]).encode()).hexdigest()[:20]
    with _lock:
        try:
            d = cache_dir()
            path = d / f"{prefix}_{digest}.py"
            if not path.exists() or path.read_text() != source:
                tmp = d / f".{prefix}_{digest}.{os.getpid()}.{threading.get_ident()}.tmp"
                tmp.write_text(source)
                os.replace(tmp, path)
            name = f"poser_{prefix}_{digest}"
            module = sys.modules.get(name)
            if module is None:
                spec = importlib.util.spec_from_file_location(name, path)
                module = importlib.util.module_from_spec(spec)
                sys.modules[name] = module  # numba's cache finds the module by name when it loads
                spec.loader.exec_module(module)
            fn = getattr(module, entry)
            warm(fn)
            return fn
        except Exception as exc:  # pragma: no cover - an unwritable cache, a broken numba: numpy instead
            where = f" for {what!r}" if what else ""
            _state["problem"] = f"the compiled {prefix} kernel{where} could not be built: {exc}"
            return None
