"""Layers stay apart: the core imports no Qt and nothing above it; nothing imports in a circle.

* a fresh interpreter imports every core module and checks that no Qt/GL module and no module of the
  command line, window, file layer or wording was loaded;
* the command line and the wording import no Qt; the file layer imports neither Qt nor the core's solvers;
* the module-level imports of the package (read from the source with ``ast``) form no cycle — e.g. the
  command line and the window, or the IK evaluation and its labels, do not import each other.
"""

import ast
import subprocess
import sys
from pathlib import Path

PKG = Path(__file__).resolve().parents[1] / "poser"
QT = ("PySide6", "PyQt5", "PyQt6", "pyqtgraph", "OpenGL")


def _loaded_after(imports: str) -> set[str]:
    code = f"import sys\n{imports}\nprint(','.join(sorted(sys.modules)))\n"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return set(out.stdout.strip().split(","))


def _core_modules():
    mods = []
    for p in sorted((PKG / "core").rglob("*.py")):
        rel = p.relative_to(PKG.parent).with_suffix("")
        parts = list(rel.parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        mods.append(".".join(parts))
    return mods


def test_the_core_imports_no_qt_and_nothing_above_it():
    loaded = _loaded_after("\n".join(f"import {m}" for m in _core_modules()))
    bad = sorted(m for m in loaded if m.split(".")[0] in QT)
    assert not bad, f"Qt/GL modules imported by the core: {bad}"
    above = sorted(m for m in loaded if m.startswith(("poser.ui", "poser.cli", "poser.io", "poser.armfile",
                                                       "poser.report")))
    assert not above, f"the core imports layers above it: {above}"


def test_the_command_line_and_the_words_import_no_qt():
    loaded = _loaded_after("import poser.cli, poser.cli.ik, poser.cli.fk, poser.cli.check, poser.cli.reach, "
                           "poser.cli.workspace, poser.cli.place, poser.cli.cube, poser.report, poser.armfile, "
                           "poser.io.targets, poser.core.place, poser.core.cube")
    assert not sorted(m for m in loaded if m.split(".")[0] in QT)
    assert not sorted(m for m in loaded if m.startswith(("poser.ui", "poser.plot")))  # pictures load Qt on demand
    assert not sorted(m for m in loaded if m.split(".")[0] in ("dask", "distributed"))  # only for --scheduler


def test_the_file_layer_stays_below_the_solvers():
    loaded = _loaded_after("import poser.io, poser.armfile, poser.text")
    assert not sorted(m for m in loaded if m.split(".")[0] in QT)
    assert not sorted(m for m in loaded if m.startswith(("poser.core.ik", "poser.ui", "poser.cli")))


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(PKG.parent).with_suffix("").parts)
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _top_level_imports(path: Path, name: str, is_pkg: bool) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    out = set()
    base = name if is_pkg else name.rsplit(".", 1)[0]
    for node in tree.body:  # module level only: imports inside functions are deliberate late imports
        if isinstance(node, ast.Import):
            out.update(a.name for a in node.names if a.name.startswith("poser"))
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                parts = base.split(".")
                mod = ".".join(parts[: len(parts) - node.level + 1] + ([node.module] if node.module else []))
            else:
                mod = node.module or ""
            if mod.startswith("poser"):
                out.add(mod)
                out.update(f"{mod}.{a.name}" for a in node.names)
    return out


def test_no_module_level_import_cycles():
    files = {_module_name(p): p for p in PKG.rglob("*.py")}
    graph = {}
    for name, path in files.items():
        deps = _top_level_imports(path, name, path.name == "__init__.py")
        graph[name] = {d for d in deps if d in files and d != name}
    # a package's __init__ importing its own submodules is how a package shows its face: not a cycle
    for name in graph:
        graph[name] = {d for d in graph[name] if not (files[name].name == "__init__.py" and d.startswith(name + "."))}
    seen, stack, cycles = set(), [], []

    def visit(n):
        if n in stack:
            cycles.append(stack[stack.index(n):] + [n])
            return
        if n in seen:
            return
        seen.add(n)
        stack.append(n)
        for d in sorted(graph.get(n, ())):
            visit(d)
        stack.pop()

    for n in sorted(graph):
        visit(n)
    assert not cycles, f"import cycles: {cycles[:5]}"


def test_numba_is_loaded_only_for_large_batches():
    """The compiled FK backend's numba (about 0.3 s to import, seconds to compile) stays out of the window's
    start-up and of every import: only a batch of COMPILED_MIN poses or more loads it."""
    import subprocess
    import sys

    code = ("import sys, numpy as np; import poser.core, poser.core.ik, poser.cli, poser.ui.main_window; "
            "from poser.armfile import load; c = load('demo_arms/heron6.toml').to_chain(); "
            "from poser.core.fk import COMPILED_MIN; c.fk(np.zeros((COMPILED_MIN - 1, 6))); "
            "print('numba' in sys.modules)")
    root = __import__("pathlib").Path(__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], cwd=root, capture_output=True, text=True, timeout=120,
                         env={**__import__("os").environ, "QT_QPA_PLATFORM": "offscreen"})
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "False"


def test_poser_asks_for_one_blas_thread_when_imported_first():
    """Small linear algebra on a multithreaded BLAS only spins threads (a busy machine made an unreachable
    solve 25× slower): importing Poser before numpy sets one BLAS thread unless the user chose otherwise."""
    import os
    import subprocess
    import sys

    code = "import os, poser, numpy; print(os.environ.get('OPENBLAS_NUM_THREADS'))"
    env = {k: v for k, v in os.environ.items() if k != "OPENBLAS_NUM_THREADS"}
    root = __import__("pathlib").Path(__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], cwd=root, capture_output=True, text=True, env=env, timeout=60)
    assert out.stdout.strip() == "1", out.stderr
    out = subprocess.run([sys.executable, "-c", code], cwd=root, capture_output=True, text=True,
                         env={**env, "OPENBLAS_NUM_THREADS": "3"}, timeout=60)
    assert out.stdout.strip() == "3", out.stderr
