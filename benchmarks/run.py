#!/usr/bin/env python3
"""Poser's speed figures.  A script, not a timed test: it prints figures and
the goals they are read against; it never fails because of a figure.

    python benchmarks/run.py          # a table
    python benchmarks/run.py --json   # one JSON object

Sections live beside this file: fk_bench.py (issue: kinematic core),
ik_bench.py (inverse kinematics), gui.py (window; run under Xvfb).  A section
whose module is missing or fails is reported under "errors", not hidden.
"""

from __future__ import annotations

import argparse
import importlib
import json
import os
import platform
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
sys.path.insert(0, str(HERE))
import poser  # noqa: E402,F401 - before numpy: Poser's BLAS settings (one BLAS thread) hold for every section

SECTIONS = ("fk_bench", "ik_bench", "io_bench", "study_bench", "gui")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--json", action="store_true", help="print one JSON object")
    ap.add_argument("--only", choices=SECTIONS, action="append", help="run only these sections")
    ap.add_argument("--quick", action="store_true", help="smaller problem sizes (for a smoke run)")
    args = ap.parse_args(argv)
    figures: dict = {}
    goals: dict = {}
    errors: dict = {}
    t0 = time.perf_counter()
    for name in args.only or SECTIONS:
        try:
            mod = importlib.import_module(name)
        except ImportError as exc:
            errors[name] = f"section not available: {exc}"
            continue
        try:
            figs, gls = mod.run(quick=args.quick)
            figures.update(figs)
            goals.update(gls)
        except Exception as exc:  # report, do not hide
            errors[name] = f"{type(exc).__name__}: {exc}"
    meta = {
        "python": platform.python_version(),
        "machine": platform.machine(),
        "cpus": os.cpu_count(),
        "seconds": round(time.perf_counter() - t0, 1),
    }
    if args.json:
        print(json.dumps({**figures, "goals": goals, "errors": errors, "meta": meta}, indent=2))
        return 0
    w = max((len(k) for k in figures), default=10)
    for k, v in figures.items():
        goal = goals.get(k, "")
        print(f"{k.ljust(w)}  {v:>14,.3f}   {goal}" if isinstance(v, float) else f"{k.ljust(w)}  {v!s:>14}   {goal}")
    for k, v in errors.items():
        print(f"[{k}] {v}", file=sys.stderr)
    print(f"({meta['cpus']} CPUs, Python {meta['python']}, {meta['seconds']} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
