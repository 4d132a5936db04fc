"""The ``poser`` command line: ``check`` and ``fk`` (poser.cli).

Most tests call ``poser.cli.main(argv)`` and read stdout/stderr; a few run
the real ``python -m poser`` in a subprocess.  Values are checked against the
core (poser.core.fk), not against printed numbers kept in the test.
"""

from __future__ import annotations

import json
import os
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from poser.armfile import ArmFileError, load
from poser.cli import main
from poser.core.transforms import matrix_to_rpy

ROOT = Path(__file__).resolve().parents[1]
DEMO_DIR = ROOT / "demo_arms"
HERON = str(DEMO_DIR / "heron6.toml")
PLANAR = str(DEMO_DIR / "planar3.toml")
QUILL = str(DEMO_DIR / "quill4.toml")


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def assert_single_error(code, out, err, pattern=None):
    """Exit 2, nothing on stdout, exactly one ``poser: error: …`` line on stderr, no traceback."""
    assert code == 2
    assert out == ""
    lines = err.splitlines()
    assert len(lines) == 1, err
    assert lines[0].startswith("poser: error: ")
    assert "Traceback" not in err
    if pattern:
        assert re.search(pattern, lines[0]), lines[0]


def fk_json(capsys, arm, joints):
    code, out, err = run(capsys, "fk", arm, "--joints", joints, "--json")
    assert code == 0, err
    return json.loads(out), err


# -- poser check --------------------------------------------------------------------


def test_check_accepts_every_demo_arm(demo_arm_path, capsys):
    code, out, err = run(capsys, "check", str(demo_arm_path))
    assert code == 0
    assert err == ""
    spec = load(demo_arm_path)
    assert out.startswith(f"{demo_arm_path}: valid")
    assert f"{len(spec.joints)} joints" in out and spec.units.length in out


def test_check_lists_every_problem_one_per_line(tmp_path, capsys):
    text = (DEMO_DIR / "quill4.toml").read_text()
    text = text.replace('length = "mm"', 'length = "cm"').replace("max = 145", "max = -150")
    text = text.replace('type = "prismatic"', 'type = "sliding"').replace("alpha = 180", "alpah = 180")
    path = tmp_path / "broken.toml"
    path.write_text(text)
    code, out, err = run(capsys, "check", str(path))
    assert code == 2
    assert out == ""
    with pytest.raises(ArmFileError) as info:
        load(path)
    expected = [str(p) for p in info.value.problems]
    assert len(expected) == 4
    assert err.splitlines() == expected
    assert all(line.startswith(f"{path}:") for line in err.splitlines())
    assert any("joint 'quill': unknown key 'alpah'" in line for line in expected)


@pytest.mark.parametrize(
    "content, message",
    [
        (None, "cannot read the file: No such file or directory"),
        (b"\x00\x01\x02binary", "this is a binary file, not a TOML arm file"),
        (b"format = 1\n[[joint]\n", "not valid TOML"),
        (b"format = 1\n", "the arm has no joints"),
    ],
    ids=["missing", "binary", "malformed", "empty"],
)
def test_check_refuses_broken_files(content, message, tmp_path, capsys):
    path = tmp_path / "arm.toml"
    if content is not None:
        path.write_bytes(content)
    code, out, err = run(capsys, "check", str(path))
    assert code == 2 and out == ""
    assert len(err.splitlines()) == 1 and message in err
    assert "Traceback" not in err


def test_check_without_a_file_is_a_usage_error(capsys):
    assert_single_error(*run(capsys, "check"), r"required: ARM\.toml")


# -- poser fk -----------------------------------------------------------------------


def test_fk_json_matches_the_core(capsys):
    q_user = [-30.0, 45.0, 0.0, 10.0, 20.0, 30.0]
    data, err = fk_json(capsys, HERON, ",".join(str(v) for v in q_user))
    assert err == ""
    assert {"tool", "xyz", "rpy", "frames", "warnings"} <= set(data)
    chain = load(HERON).to_chain()
    q = chain.q_from_user(q_user)
    T = chain.fk(q)
    np.testing.assert_allclose(data["tool"], T, atol=1e-9)
    np.testing.assert_allclose(data["xyz"], T[:3, 3], atol=1e-9)
    np.testing.assert_allclose(data["rpy"], np.degrees(matrix_to_rpy(T[:3, :3])), atol=1e-9)  # arm units: deg
    F = np.array(data["frames"])
    assert F.shape == (chain.n + 2, 4, 4)
    np.testing.assert_allclose(F, chain.frames(q), atol=1e-9)
    np.testing.assert_allclose(F[0], chain.base, atol=0)  # base first
    np.testing.assert_allclose(F[-1], T, atol=1e-9)  # tool last
    assert data["warnings"] == []
    assert data["units"] == {"length": "mm", "angle": "deg"}
    assert data["joints"] == q_user


def test_fk_json_in_metres_and_radians(capsys):
    data, _ = fk_json(capsys, str(DEMO_DIR / "boom3.toml"), "0.5,1.0,0.3")
    chain = load(DEMO_DIR / "boom3.toml").to_chain()
    T = chain.fk([0.5, 1.0, 0.3])
    np.testing.assert_allclose(data["tool"], T, atol=1e-12)
    np.testing.assert_allclose(data["rpy"], matrix_to_rpy(T[:3, :3]), atol=1e-12)  # rad stays rad


def test_fk_human_output_shows_pose_and_units(capsys):
    code, out, err = run(capsys, "fk", HERON, "--joints", "-30,45,0,10,20,30")
    assert code == 0 and err == ""
    chain = load(HERON).to_chain()
    T = chain.fk(chain.q_from_user([-30, 45, 0, 10, 20, 30]))
    assert "lengths in mm, angles in deg" in out
    assert "J1 turret = -30 deg" in out
    xyz = re.search(r"^xyz = (.*) mm$", out, re.M).group(1)
    np.testing.assert_allclose([float(v) for v in xyz.split(",")], T[:3, 3], atol=1e-6)
    rpy = re.search(r"^rpy = (.*) deg \(about fixed X, Y, Z\)$", out, re.M).group(1)
    np.testing.assert_allclose([float(v) for v in rpy.split(",")], np.degrees(matrix_to_rpy(T[:3, :3])), atol=1e-6)
    rows = [line for line in out.splitlines() if line.strip().startswith("[")]
    assert len(rows) == 4
    np.testing.assert_allclose([[float(v) for v in r.strip(" []").split()] for r in rows], T, atol=1e-6)


def test_fk_frames_option_prints_every_frame(capsys):
    code, out, _ = run(capsys, "fk", PLANAR, "--joints", "10,20,30", "--frames")
    assert code == 0
    titles = re.findall(r"^world → (.*):$", out, re.M)
    assert titles == ["base", "frame 1 (shoulder)", "frame 2 (elbow)", "frame 3 (wrist)", "tool"]


def test_negative_values_work_as_people_type_them(capsys):
    a = run(capsys, "fk", PLANAR, "--joints", "-30,45,0")
    b = run(capsys, "fk", PLANAR, "--joints=-30,45,0")
    c = run(capsys, "fk", "--joints", "-30,45,0", PLANAR)
    assert a[0] == b[0] == c[0] == 0
    assert a == b == c
    d = run(capsys, "fk", QUILL, "--joints", "-.5,-1e1,20,-360", "--json")
    assert d[0] == 0 and json.loads(d[1])["joints"] == [-0.5, -10.0, 20.0, -360.0]


def test_values_beyond_limits_are_warned_about(capsys):
    code, out, err = run(capsys, "fk", HERON, "--joints", "0,0,0,0,0,400")
    assert code == 0 and out
    assert err.splitlines() == ["warning: joint 'J6 flange' = 400 deg is above its upper limit 350 deg by 50 deg"]
    data, err = fk_json(capsys, QUILL, "-150,0,200,0")
    assert err == ""
    assert data["warnings"] == [
        "joint 'inner swing' = -150 deg is below its lower limit -140 deg by 10 deg",
        "joint 'quill' = 200 mm is above its upper limit 180 mm by 20 mm",
    ]
    # the pose is still computed for the values given
    chain = load(QUILL).to_chain()
    np.testing.assert_allclose(data["tool"], chain.fk(chain.q_from_user([-150, 0, 200, 0])), atol=1e-9)


@pytest.mark.parametrize(
    "argv, pattern",
    [
        (["fk", HERON, "--joints", "1,2,3"], r"--joints needs 6 values, got 3"),
        (["fk", HERON, "--joints", "1,2,3,4,5,6,7"], r"--joints needs 6 values, got 7"),
        (["fk", HERON, "--joints", "1,2,x,4,5,6"], r"--joints must be comma-separated numbers, got 'x'"),
        (["fk", HERON, "--joints", "1,2,,4,5,6"], r"--joints has an empty value \(number 3\)"),
        (["fk", HERON, "--joints", "1,2,nan,4,5,6"], r"--joints must be finite numbers"),
        (["fk", HERON, "--joints=1,2,inf,4,5,6"], r"--joints must be finite numbers"),
        (["fk", HERON], r"the following arguments are required: --joints"),
        (["fk", "--joints", "1,2"], r"required: ARM\.toml"),
        (["fk", HERON, "--joints", "0,0,0,0,0,0", "--bogus"], r"unrecognized arguments: --bogus"),
        (["fk", "/no/such/arm.toml", "--joints", "1"], r"/no/such/arm\.toml: cannot read the file"),
    ],
)
def test_bad_input_gives_one_error_line(argv, pattern, capsys):
    assert_single_error(*run(capsys, *argv), pattern)


def test_bad_file_gives_one_error_line_naming_the_first_problem(tmp_path, capsys):
    path = tmp_path / "arm.toml"
    path.write_text('format = 1\n[[joint]]\nname = "a"\ntype = "ball"\nmin = 1\nmax = 0\n')
    assert_single_error(
        *run(capsys, "fk", str(path), "--joints", "0"),
        rf"^poser: error: {re.escape(str(path))}:4: joint 'a': type must be 'revolute' or 'prismatic', got 'ball' "
        rf"\(and 1 more; run 'poser check {re.escape(str(path))}'\)$",
    )
    path.write_bytes(b"\xff\xfe\x00\x00")
    assert_single_error(*run(capsys, "fk", str(path), "--joints", "0"), "binary file")


def test_fk_and_check_work_on_every_demo_arm(demo_arm_path, capsys):
    spec = load(demo_arm_path)
    chain = spec.to_chain()
    home = spec.home_values()
    data, err = fk_json(capsys, str(demo_arm_path), ",".join(repr(float(v)) for v in home))
    assert err == "" and data["warnings"] == []
    np.testing.assert_allclose(data["tool"], chain.fk(chain.home), atol=1e-9)
    code, out, err = run(capsys, "fk", str(demo_arm_path), "--joints", ",".join(str(v) for v in home))
    assert code == 0 and err == "" and "xyz = " in out
    assert run(capsys, "check", str(demo_arm_path))[0] == 0


def test_help_and_version(capsys):
    code, out, _ = run(capsys, "--version")
    assert code == 0 and out.startswith("poser ")
    code, out, _ = run(capsys, "fk", "--help")
    assert code == 0 and "--joints" in out and "--json" in out


# -- the real command in a subprocess --------------------------------------------------


def _poser(*args, env=None):
    return subprocess.run(
        [sys.executable, "-m", "poser", *args],
        capture_output=True,
        text=True,
        cwd=ROOT,
        timeout=120,
        check=False,
        env=None if env is None else {**os.environ, **env},
    )


def test_subprocess_fk_json():
    proc = _poser("fk", "demo_arms/heron6.toml", "--joints", "-30,45,0,10,20,30", "--json")
    assert proc.returncode == 0, proc.stderr
    data = json.loads(proc.stdout)
    chain = load(HERON).to_chain()
    np.testing.assert_allclose(data["tool"], chain.fk(chain.q_from_user([-30, 45, 0, 10, 20, 30])), atol=1e-9)


def test_subprocess_errors_are_one_line_without_traceback(tmp_path):
    proc = _poser("fk", "demo_arms/planar3.toml", "--joints=-30,abc,0")
    assert proc.returncode == 2
    assert proc.stdout == ""
    assert proc.stderr.splitlines() == [
        "poser: error: --joints must be comma-separated numbers, got 'abc' in '-30,abc,0'"
    ]
    bad = tmp_path / "bad.toml"
    bad.write_text("format = 1\n")
    proc = _poser("check", str(bad))
    assert proc.returncode == 2
    assert proc.stderr.splitlines() == [f"{bad}: the arm has no joints; add at least one [[joint]] table"]
    proc = _poser("check", "demo_arms/lark7.toml")
    assert proc.returncode == 0 and "valid" in proc.stdout


def test_subprocess_on_a_terminal_that_cannot_show_unicode():
    # an ASCII-only output encoding must not turn "—" or "→" into a traceback
    env = {"PYTHONIOENCODING": "ascii"}
    proc = _poser("check", "demo_arms/heron6.toml", env=env)
    assert proc.returncode == 0 and "Traceback" not in proc.stderr
    assert "valid \\u2014 'Heron 6'" in proc.stdout
    proc = _poser("fk", "demo_arms/planar3.toml", "--joints", "-30,45,0", "--frames", env=env)
    assert proc.returncode == 0 and "Traceback" not in proc.stderr
    assert "world \\u2192 tool:" in proc.stdout


def test_window_without_display_is_a_clear_error(monkeypatch, capsys):
    """Without any display Qt would abort the process; poser says why and exits 2 instead."""
    import sys as _sys

    from poser import cli

    for var in ("DISPLAY", "WAYLAND_DISPLAY", "QT_QPA_PLATFORM"):
        monkeypatch.delenv(var, raising=False)
    monkeypatch.setattr(_sys, "platform", "linux")
    assert cli.main([]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("poser: error: no display")
    assert "--snapshot" in err[0]
