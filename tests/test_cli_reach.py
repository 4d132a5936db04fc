"""``poser reach``: verdicts agree with ``poser ik`` target by target on every demo arm; malformed rows are
reported by line and skipped; JSON, the CSV report, exit status 0 / 1 / 2."""

from __future__ import annotations

import csv
import json

import numpy as np
import pytest

from poser import armfile
from poser.cli import main
from poser.core.fk import fk
from poser.core.transforms import matrix_to_rpy
from tests.conftest import DEMO_ARMS, DEMO_DIR


def _run(capsys, *argv):
    code = main([*map(str, argv)])
    out, err = capsys.readouterr()
    return code, out, err


def _num(v):
    return repr(float(v))


def write_targets(path, chain, rng, count=10, orientation=True):
    """A job in the arm's units from poses partly beyond the limits; every fourth pushed out of reach."""
    span = chain.upper - chain.lower
    Q = chain.lower - 0.15 * span + rng.random((count, chain.n)) * 1.3 * span
    T = fk(chain, Q)
    lines = ["name,x,y,z,roll,pitch,yaw" if orientation else "name,x,y,z"]
    o = chain.base[:3, 3]
    for i in range(count):
        p = T[i, :3, 3] if i % 4 else o + (T[i, :3, 3] - o) * 3.0 + chain.scale
        row = [f"t{i}", *map(_num, p)]
        if orientation:
            row += map(_num, chain.units.angle_out(matrix_to_rpy(T[i, :3, :3])))
        lines.append(",".join(row))
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_reach_agrees_with_poser_ik_target_by_target(path, tmp_path, capsys, rng):
    chain = armfile.load(path).to_chain()
    csv_path = write_targets(tmp_path / "job.csv", chain, rng)
    code, out, err = _run(capsys, "reach", path, csv_path, "--json")
    data = json.loads(out)
    assert code == (0 if data["reached"] == data["count"] else 1), err
    assert data["count"] == 10 and data["units"]["angle"] == chain.units.angle
    rows = list(csv.DictReader(csv_path.open()))
    near = None
    seen = set()
    for row, v in zip(rows, data["targets"]):
        argv = ["ik", path, "--xyz", ",".join(row[c] for c in "xyz"), "--rpy",
                ",".join(row[c] for c in ("roll", "pitch", "yaw")), "--json"]
        if near is not None:
            argv += ["--near", ",".join(map(_num, near))]
        icode, iout, ierr = _run(capsys, *argv)
        ik = json.loads(iout)
        assert ik["reachable"] == v["reachable"], row["name"]
        assert icode == (0 if v["reachable"] else 1)
        seen.add(v["status"])
        if v["reachable"]:
            first = ik["branches"][0]
            np.testing.assert_allclose(v["joints"], first["joints"], atol=1e-5, err_msg=row["name"])
            assert v["configuration"] == first["configuration"]
            near = v["joints"]
        else:
            assert v["joints"] is None and v["miss"] is not None
            assert v["words"].startswith(("Blocked by limits", "Out of reach"))
    assert "reached" in seen and "out of reach" in seen


def test_malformed_rows_are_reported_by_line_and_skipped(tmp_path, capsys):
    arm = DEMO_DIR / "heron6.toml"
    chain = armfile.load(arm).to_chain()
    T = fk(chain, chain.home)
    xyz = ",".join(map(_num, T[:3, 3]))
    rpy = ",".join(map(_num, np.degrees(matrix_to_rpy(T[:3, :3]))))
    job = tmp_path / "job.csv"
    job.write_text(f"name,x,y,z,roll,pitch,yaw\nhome,{xyz},{rpy}\nbroken,1,2\nword,a,b,c,0,0,0\nagain,{xyz},{rpy}\n")
    code, out, err = _run(capsys, "reach", arm, job)
    assert code == 1  # every target reached, but rows were skipped
    assert f"{job}:3: row skipped: expected 7 fields" in err
    assert f"{job}:4: row skipped: x must be a number, got 'a'" in err
    assert "2 of 2 targets reached within limits" in out and "2 malformed rows skipped (not checked)" in out
    code, out, err = _run(capsys, "reach", arm, job, "--json")
    data = json.loads(out)
    assert [s["line"] for s in data["skipped"]] == [3, 4]
    assert [t["line"] for t in data["targets"]] == [2, 5]


def test_every_row_reached_exits_0_and_the_csv_report_has_units(tmp_path, capsys):
    arm = DEMO_DIR / "heron6.toml"
    chain = armfile.load(arm).to_chain()
    T = fk(chain, chain.home)
    job = tmp_path / "job.csv"
    rows = []
    for i, dy in enumerate((0, 50, 100)):
        p = T[:3, 3] + [0, dy, 0]
        rows.append(f"p{i}," + ",".join(map(_num, p)) + "," + ",".join(map(_num, np.degrees(matrix_to_rpy(T[:3, :3])))))
    job.write_text("name,x,y,z,roll,pitch,yaw\n" + "\n".join(rows) + "\n")
    rep = tmp_path / "report.csv"
    code, out, err = _run(capsys, "reach", arm, job, "--out", rep)
    assert code == 0, err
    assert "lengths in mm, angles in deg" in out and "manip. [mm³]" in out and "verify every result" in out
    got = list(csv.DictReader(rep.open()))
    assert [r["name"] for r in got] == ["p0", "p1", "p2"]
    assert {"J1 turret [deg]", "manipulability [mm³]", "move [deg]", "worst_margin_unit"} <= set(got[0])
    assert all(r["status"] == "reached" for r in got)


def test_the_report_never_replaces_an_input(tmp_path, capsys):
    arm = DEMO_DIR / "heron6.toml"
    job = tmp_path / "job.csv"
    job.write_text("name,x,y,z\na,1000,0,1000\n")
    before = job.read_text()
    code, out, err = _run(capsys, "reach", arm, job, "--out", job)
    assert code == 2 and "--out must name a new file, not an input" in err
    assert job.read_text() == before


@pytest.mark.parametrize("text,match", [
    ("name,x,y\n", "header must name the columns name, x, y, z"),
    ("name,x,y,z\nbad,1,2\n", "holds no target to check (1 malformed row skipped)"),
])
def test_unusable_files_exit_2_with_one_line(tmp_path, capsys, text, match):
    job = tmp_path / "job.csv"
    job.write_text(text)
    code, out, err = _run(capsys, "reach", DEMO_DIR / "heron6.toml", job)
    assert code == 2 and match in err and "Traceback" not in err


def test_free_spin_rows_report_the_spin(tmp_path, capsys):
    arm = DEMO_DIR / "heron6.toml"
    chain = armfile.load(arm).to_chain()
    T = fk(chain, chain.home)
    job = tmp_path / "job.csv"
    job.write_text("name,x,y,z,roll,pitch,yaw,free_spin\ndrill," + ",".join(map(_num, T[:3, 3]))
                   + ",180,0,0,yes\n")
    code, out, err = _run(capsys, "reach", arm, job, "--json")
    v = json.loads(out)["targets"][0]
    assert v["free_spin"] is True and v["spin"] is not None and 0 <= v["spin"] < 360
    assert ("turned" in v["words"]) and "about its Z axis" in v["words"]
