"""The side under test: Poser loaded from the arm-file text, its IK called through the API and the CLI."""

from __future__ import annotations

import contextlib
import io
import json
import os
import tempfile

import numpy as np

from . import reference as ref


def chain(a):
    from poser.armfile import loads

    return loads(ref.toml(a)).to_chain()


def solve(a, xyz, R=None, near=None, **options):
    from poser.core.ik import solve as _solve

    return _solve(chain(a), np.asarray(xyz, float), R, near, **options)


def cli(a, *args):
    """Run ``poser`` with the arm written to a file: (exit code, stdout, stderr)."""
    from poser.cli import main

    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "arm.toml")
        with open(path, "w", encoding="utf-8") as f:
            f.write(ref.toml(a))
        out, err = io.StringIO(), io.StringIO()
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main([args[0], path, *args[1:]])
        return code, out.getvalue(), err.getvalue()


def cli_json(a, *args):
    code, out, err = cli(a, *args, "--json")
    return code, (json.loads(out) if out.strip() else None), err


def csv(v):
    return ",".join(repr(float(x)) for x in v)
