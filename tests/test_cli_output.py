"""Output errors are not answers: a failed write to stdout gives exit 2 and one line on stderr — under a
buffered and an unbuffered stdout, for answers, --help and --version, to a full disk, a closed pipe and a
closed stdout (exit 1 would mean "not reachable").  Each command runs in a subprocess with a timeout."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

HERON = str(Path(__file__).resolve().parent.parent / "demo_arms" / "heron6.toml")
COMMANDS = [
    ("fk", HERON, "--joints", "0,0,90,0,0,0", "--frames"),
    ("ik", HERON, "--xyz", "900,-300,900", "--rpy", "180,0,0"),
    ("ik", HERON, "--xyz", "9000,0,0"),  # not reachable: exit 1 only when the answer was written
    ("check", HERON),
    ("--help",),
    ("fk", "--help"),
    ("--version",),
]
BUFFERING = {"buffered": None, "unbuffered": "1"}


def _env(buffering):
    env = dict(os.environ)
    env.pop("PYTHONUNBUFFERED", None)
    if BUFFERING[buffering]:
        env["PYTHONUNBUFFERED"] = "1"
    return env


def _poser(args, buffering, **kw):
    return subprocess.run([sys.executable, "-m", "poser", *args], stderr=subprocess.PIPE, text=True, timeout=120,
                          env=_env(buffering), **kw)


def _one_error(res, reason):
    assert res.returncode == 2, res.stderr
    lines = res.stderr.strip().splitlines()
    assert lines == [f"poser: error: cannot write the output: {reason}"], res.stderr


@pytest.mark.parametrize("buffering", list(BUFFERING))
@pytest.mark.parametrize("args", COMMANDS, ids=lambda a: " ".join(a[:1] + a[2:3]))
def test_a_full_disk(args, buffering):
    with open("/dev/full", "w") as full:
        _one_error(_poser(args, buffering, stdout=full), "No space left on device")


@pytest.mark.parametrize("buffering", list(BUFFERING))
@pytest.mark.parametrize("args", COMMANDS, ids=lambda a: " ".join(a[:1] + a[2:3]))
def test_a_pipe_nobody_reads(args, buffering):
    r, w = os.pipe()
    os.close(r)
    try:
        res = _poser(args, buffering, stdout=w)
    finally:
        os.close(w)
    _one_error(res, "Broken pipe")


@pytest.mark.parametrize("buffering", list(BUFFERING))
@pytest.mark.parametrize("args", COMMANDS, ids=lambda a: " ".join(a[:1] + a[2:3]))
def test_no_stdout_at_all(args, buffering):
    # started with file descriptor 1 closed (`poser fk … >&-`): Python's sys.stdout is None, and print() to it
    # silently writes nothing — the answer must not vanish with exit 0 (or 1, "not reachable")
    res = _poser(args, buffering, stdout=subprocess.DEVNULL, preexec_fn=lambda: os.close(1))
    _one_error(res, "standard output is closed")


def test_no_stdout_and_no_stderr_still_exit_2():
    res = subprocess.run([sys.executable, "-m", "poser", "ik", HERON, "--xyz", "9000,0,0"], timeout=120,
                         stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                         preexec_fn=lambda: (os.close(1), os.close(2)))
    assert res.returncode == 2


@pytest.mark.parametrize("buffering", list(BUFFERING))
def test_a_good_answer_still_exits_with_its_own_status(buffering):
    ok = _poser(("ik", HERON, "--xyz", "9000,0,0"), buffering, stdout=subprocess.PIPE)
    assert ok.returncode == 1 and "nearest reachable point" in ok.stdout and ok.stderr == ""
    ok = _poser(("--version",), buffering, stdout=subprocess.PIPE)
    assert ok.returncode == 0 and ok.stdout.startswith("poser ")


@pytest.mark.parametrize("joints, message", [
    ("", "--joints needs 6 comma-separated numbers, got nothing"),
    ("1,,2,3,4,5", "--joints has an empty value (number 2) in '1,,2,3,4,5'; write one number between each two commas"),
    ("0,0,0,0,0,0,", "--joints has an empty value (number 7) in '0,0,0,0,0,0,'; write one number between each two "
                     "commas"),
])
def test_empty_joint_values_are_named(joints, message, capsys):
    from poser.cli import main

    assert main(["fk", HERON, "--joints", joints]) == 2
    out, err = capsys.readouterr()
    assert out == "" and err == f"poser: error: {message}\n"
