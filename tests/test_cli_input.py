"""Command-line input a user can get wrong, and answers that must not mislead.

* numbers are read as people type them, and only those (``float()`` alone also takes ``1_0``,
  digits of other scripts and ``infinity``);
* numbers too large to compute with are refused, so no ``inf``, ``NaN`` or invalid JSON comes out;
* a solver fault is an error (exit 2), never "not reachable" (exit 1);
* the ``--near`` distance column carries its unit.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from poser.cli import main

ROOT = Path(__file__).resolve().parents[1]
HERON = str(ROOT / "demo_arms" / "heron6.toml")
QUILL = str(ROOT / "demo_arms" / "quill4.toml")


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def assert_single_error(code, out, err, pattern):
    assert code == 2
    assert out == ""
    lines = err.splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("poser: error: ") and pattern in lines[0], lines[0]
    assert "Traceback" not in err and "Warning" not in err


@pytest.mark.parametrize("bad", ["1_0", "\u0661", "0x10", "1.2.3", "e5", "--", "1e", "١٢"])
def test_only_plain_decimal_numbers_are_accepted(bad, capsys):
    assert_single_error(*run(capsys, "fk", HERON, f"--joints={bad},0,0,0,0,0"), "must be comma-separated numbers")


@pytest.mark.parametrize("bad", ["nan", "-inf", "Infinity", "+NaN"])
def test_not_a_number_and_infinity_are_named_as_such(bad, capsys):
    assert_single_error(*run(capsys, "fk", HERON, f"--joints={bad},0,0,0,0,0"), "must be finite numbers")


@pytest.mark.parametrize("good, value", [("1e3", 1000.0), (".5", 0.5), ("5.", 5.0), ("+3", 3.0), ("-1e-3", -1e-3)])
def test_usual_spellings_still_work(good, value, capsys):
    code, out, err = run(capsys, "fk", HERON, f"--joints={good},0,0,0,0,0", "--json")
    assert code == 0
    assert json.loads(out)["joints"][0] == value


@pytest.mark.parametrize(
    "argv",
    [
        ["fk", HERON, "--joints", "1e308,0,0,0,0,0"],
        ["fk", HERON, "--joints", "-1e13,0,0,0,0,0"],
        ["ik", HERON, "--xyz", "900,-300,900", "--near", "1e308,0,0,0,0,0", "--json"],
        ["ik", HERON, "--xyz", "900,-300,900", "--rpy", "1e300,0,0"],
        ["ik", HERON, "--xyz", "1e13,0,0"],
    ],
)
def test_numbers_too_large_to_compute_with_are_refused(argv, capsys):
    # 1e308 deg used to print a pose made of noise; --near 1e308 printed overflow warnings and
    # "distance": Infinity, which is not JSON.
    assert_single_error(*run(capsys, *argv), "values must lie within ±1e12")


def test_the_largest_accepted_values_give_finite_valid_json(tmp_path, capsys):
    arm = tmp_path / "slides.toml"
    arm.write_text(
        'format = 1\n[[joint]]\nname = "s1"\ntype = "prismatic"\nmin = -1e9\nmax = 1e9\n'
        '[[joint]]\nname = "s2"\ntype = "prismatic"\nmin = -1e9\nmax = 1e9\n'
    )
    code, out, err = run(capsys, "fk", str(arm), "--joints", "1e12,1e12", "--json")
    assert code == 0
    data = json.loads(out, parse_constant=lambda c: pytest.fail(f"{c} in JSON output"))
    assert data["xyz"] == [0.0, 0.0, 2e12]
    assert len(data["warnings"]) == 2 and "above its upper limit" in data["warnings"][0]


def test_a_solver_fault_is_an_error_not_an_unreachable_target(monkeypatch, capsys):
    """The core reports a fault as a result with status 'fault' (it never raises to the window);
    printed as "No branch reaches the target" with exit 1, a user would take it for a verdict."""
    import numpy as np

    import poser.core.ik as ik
    from poser.core.ik import IKResult

    fault = IKResult("fault", "none", (), False, None, None, None, True, False, (1e-3, 1e-6),
                     fault="LinAlgError: SVD did not converge", xyz=np.zeros(3))
    monkeypatch.setattr(ik, "solve", lambda *a, **k: fault)
    for extra in ([], ["--json"]):
        code, out, err = run(capsys, "ik", HERON, "--xyz", "900,-300,900", *extra)
        assert_single_error(code, out, err, "The solver failed on this target (LinAlgError")
        assert "not an answer about the target" in err


def test_the_near_distance_carries_its_unit(capsys):
    code, out, _ = run(capsys, "ik", HERON, "--xyz", "900,-300,900", "--rpy", "180,0,0", "--near", "0,0,0,0,0,0")
    assert code == 0
    assert "distance [deg]" in out
    code, out, _ = run(capsys, "ik", QUILL, "--xyz", "400,250,200", "--near", "0,0,20,0")
    assert code == 0
    assert "distance [deg & mm]" in out  # a mixed arm: degrees and millimetres, given apart
    code, out, _ = run(capsys, "ik", QUILL, "--xyz", "400,250,200", "--near", "0,0,20,0", "--json")
    data = json.loads(out)
    assert data["distance_unit"] == "deg & mm"
    b = data["branches"][0]
    d = np.array(b["joints"]) - [0, 0, 20, 0]
    assert b["distance"] is None  # never a sum of degrees and millimetres
    assert b["distance_parts"]["angle"] == pytest.approx(np.linalg.norm(d[[0, 1, 3]]))
    assert b["distance_parts"]["length"] == pytest.approx(abs(d[2]))


def test_position_only_shows_no_orientation_error_and_large_misses_read_plainly(capsys):
    planar = str(ROOT / "demo_arms" / "planar3.toml")
    code, out, _ = run(capsys, "ik", planar, "--xyz", "5000,0,1500")
    assert code == 1
    lines = out.splitlines()
    row = lines[lines.index(next(ln for ln in lines if ln.startswith("Closest approach"))) + 2]
    cells = row.split()
    # columns: #, three joints, pos err, ori err, …: the miss is 4119 mm (not 4.12e+03) and no orientation
    # was asked for, so its error is a dash, not a 0 that would claim a match
    assert cells[4] == "4119" and cells[5] == "–"


# -- output errors are not answers -----------------------------------------------------------------


def _poser(*args, stdout):
    import subprocess
    import sys

    return subprocess.run([sys.executable, "-m", "poser", *args], stdout=stdout, stderr=subprocess.PIPE, text=True,
                          timeout=120)


def test_a_full_disk_is_an_error_not_an_answer():
    """Writing the answer to /dev/full fails: exit 2 and one line on stderr (exit 1 would mean "not reachable")."""
    with open("/dev/full", "w") as full:
        for args in (("ik", HERON, "--xyz", "3000,0,900", "--rpy", "180,0,0"), ("fk", HERON, "--joints", "0,0,0,0,0,0"),
                     ("check", HERON)):
            res = _poser(*args, stdout=full)
            assert res.returncode == 2, (args, res.stderr)
            lines = res.stderr.strip().splitlines()
            assert len(lines) == 1 and lines[0].startswith("poser: error: cannot write the output"), res.stderr
            assert "Traceback" not in res.stderr


def test_a_closed_pipe_is_an_error_not_an_answer():
    import os
    import subprocess
    import sys

    r, w = os.pipe()
    os.close(r)  # nobody reads: the first write breaks the pipe
    try:
        res = subprocess.run([sys.executable, "-m", "poser", "ik", HERON, "--xyz", "900,-300,900", "--rpy", "180,0,0"],
                             stdout=w, stderr=subprocess.PIPE, text=True, timeout=120)
    finally:
        os.close(w)
    assert res.returncode == 2
    assert res.stderr.strip().startswith("poser: error: cannot write the output")
    assert "Traceback" not in res.stderr


@pytest.mark.parametrize("bad", ["-nan", "-inf", "nan", "inf"])
def test_not_a_number_after_a_list_option_is_named(bad, capsys):
    code, out, err = run(capsys, "fk", HERON, "--joints", f"{bad},0,0,0,0,0")
    assert_single_error(code, out, err, "--joints must be finite numbers")


def test_a_mistyped_command_is_named_with_a_suggestion(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, out, err = run(capsys, "fkk", "arm.toml")
    assert_single_error(code, out, err, "unknown command 'fkk'; did you mean 'fk'?")
