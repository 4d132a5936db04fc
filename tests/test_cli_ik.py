"""``poser ik``: every demo arm solves with all its branches; JSON keys; units; exit status 0 / 1 / 2."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from poser import armfile
from poser.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = sorted((ROOT / "demo_arms").glob("*.toml"))


def _run(capsys, *argv):
    code = main(["ik", *map(str, argv)])
    out, err = capsys.readouterr()
    return code, out, err


def _csv(values):
    return ",".join(f"{v:.9g}" for v in values)


def _target(path, q_user=None):
    """A reachable target in the arm's units, from joint values in the arm's units (default: mid-range)."""
    from poser.core.transforms import as_xyz_rpy

    spec = armfile.load(path)
    chain = spec.to_chain()
    if q_user is None:
        q_user = np.array([0.3 * j.min + 0.7 * j.max if j.type == "prismatic" else 0.2 * j.max for j in spec.joints])
    T = chain.fk(chain.q_from_user(q_user))
    xyz, rpy = as_xyz_rpy(T)
    return chain, q_user, xyz, chain.units.angle_out(rpy)


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
def test_every_demo_arm_solves_with_all_its_branches(capsys, path):
    chain, q_user, xyz, rpy = _target(path)
    code, out, err = _run(capsys, path, "--xyz", _csv(xyz), "--rpy", _csv(rpy), "--json")
    assert code == 0, err
    data = json.loads(out)
    for key in ("reachable", "solver", "branches", "closest", "message", "position_only", "redundant"):
        assert key in data
    assert data["reachable"] is True and data["closest"] is None
    assert data["solver"] == "numerical" or data["solver"].startswith("closed-form: ")
    assert data["units"] == {"length": chain.units.length, "angle": chain.units.angle}
    for b in data["branches"]:
        for key in ("joints", "within_limits", "violations", "position_error", "orientation_error", "label"):
            assert key in b
        assert "manipulability" in b and len(b["joints"]) == chain.n
    # the joint values we started from (arm units) are among the branches, in arm units
    best = min(data["branches"], key=lambda b: np.max(np.abs(np.array(b["joints"]) - q_user)))
    assert np.allclose(best["joints"], q_user, atol=1e-5) or data["redundant"]
    assert any(b["reaches"] and b["within_limits"] for b in data["branches"])


@pytest.mark.parametrize("path", DEMO, ids=[p.stem for p in DEMO])
def test_table_output_has_units(capsys, path):
    chain, q_user, xyz, rpy = _target(path)
    code, out, _ = _run(capsys, path, "--xyz", _csv(xyz), "--near", _csv(q_user))
    assert code == 0
    L, A = chain.units.length, chain.units.angle
    assert f"lengths in {L}, angles in {A}" in out
    assert f"pos err [{L}]" in out and f"ori err [{A}]" in out
    assert "(position only)" in out and "Solver:" in out and "distance" in out
    for name, kind in zip(chain.names, chain.kinds):
        assert f"{name} [{chain.units.joint_unit(kind)}]" in out


def test_heron_json_branch_details(capsys):
    path = ROOT / "demo_arms" / "heron6.toml"
    chain, q_user, xyz, rpy = _target(path, np.array([10.0, 20.0, 30.0, 40.0, 50.0, 60.0]))
    code, out, _ = _run(capsys, path, "--xyz", _csv(xyz), "--rpy", _csv(rpy), "--near", _csv(q_user), "--json")
    data = json.loads(out)
    assert code == 0 and data["solver"].startswith("closed-form")
    first = data["branches"][0]
    assert np.allclose(first["joints"], q_user, atol=1e-6)  # nearest first; degrees, not radians
    assert first["distance"] == pytest.approx(0.0, abs=1e-6)
    assert first["label"] == "shoulder front · elbow up · wrist not flipped" or "·" in first["label"]
    configs = {b["configuration"] for b in data["branches"] if b["reaches"]}
    assert len(configs) <= 8
    blocked = [b for b in data["branches"] if b["reaches"] and not b["within_limits"]]
    for b in blocked:
        v = b["violations"][0]
        assert v["side"] in ("lower", "upper") and v["excess"] > 0
        # limits reported in degrees, as written in the arm file
        spec = armfile.load(path)
        j = spec.joints[v["index"]]
        assert v["limit"] == pytest.approx(j.min if v["side"] == "lower" else j.max)


def test_unreachable_exit_1_with_closest(capsys):
    path = ROOT / "demo_arms" / "heron6.toml"
    code, out, _ = _run(capsys, path, "--xyz", "5000,0,500", "--json")
    assert code == 1
    data = json.loads(out)
    assert data["reachable"] is False and data["closest"] is not None
    assert data["nearest_point"] is not None and data["nearest_distance"] > 2000
    code, out, _ = _run(capsys, path, "--xyz", "5000,0,500")
    assert code == 1 and "Closest approach within limits" in out and "Nearest reachable point" in out


def test_blocked_by_limit_exit_1_names_the_limit(capsys):
    code, out, _ = _run(capsys, ROOT / "demo_arms" / "boom3.toml", "--xyz", "0.5,0.3,1.2")
    assert code == 1
    assert "boom pitch" in out and "lower limit" in out


@pytest.mark.parametrize(
    "argv, word",
    [
        (["--xyz", "1,2"], "--xyz"),
        (["--xyz", "1,2,x"], "--xyz"),
        (["--xyz", "1,2,3", "--rpy", "0,0"], "--rpy"),
        (["--xyz", "1,2,3", "--near", "1,2"], "--near"),
        (["--xyz", "1,2,nan"], "--xyz"),
    ],
)
def test_bad_input_exit_2(capsys, argv, word):
    code, out, err = _run(capsys, ROOT / "demo_arms" / "planar3.toml", *argv)
    assert code == 2 and out == ""
    assert err.startswith("poser: error:") and word in err and "Traceback" not in err


def test_missing_arm_file_exit_2(capsys, tmp_path):
    code, _, err = _run(capsys, tmp_path / "nope.toml", "--xyz", "1,2,3")
    assert code == 2 and err.startswith("poser: error:")


def test_negative_values_and_radian_arm(capsys):
    """Boom 3 is in metres and radians: --rpy is read in radians; negative lists work without '='."""
    path = ROOT / "demo_arms" / "boom3.toml"
    chain, q_user, xyz, rpy = _target(path, np.array([-0.5, 0.4, 0.3]))
    code, out, _ = _run(capsys, path, "--xyz", _csv(xyz), "--near", _csv(q_user), "--json")
    assert code == 0
    data = json.loads(out)
    assert np.allclose(data["branches"][0]["joints"], q_user, atol=1e-9)
