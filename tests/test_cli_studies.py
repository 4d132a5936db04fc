"""``poser place`` and ``poser cube`` on every demo arm: JSON keys, exit codes, the written arm file and the
pictures, errors that name the option.  The figures themselves are checked in tests/core/test_place.py and
tests/core/test_cube.py."""

from __future__ import annotations

import json

import numpy as np
import pytest

from poser.armfile import load
from poser.cli import main
from poser.core.fk import fk
from tests.conftest import DEMO_ARMS, DEMO_DIR
from tests.test_cli_workspace import png_size


def _run(capsys, *argv):
    code = main([*map(str, argv)])
    out, err = capsys.readouterr()
    return code, out, err


def _targets_csv(path, tmp_path, count=3):
    """Targets made from poses of the arm near home (world, arm units), with orientation (position only for an
    arm that sets only its tool position)."""
    from poser.core.jacobian import task_space
    from poser.core.transforms import matrix_to_rpy

    chain = load(path).to_chain()
    rng = np.random.default_rng(11)
    Q = chain.home + 0.15 * (rng.random((count, chain.n)) - 0.5) * (chain.upper - chain.lower)
    T = fk(chain, Q)
    rows = ["name,x,y,z,roll,pitch,yaw"]
    for i, t in enumerate(T):
        rpy = chain.units.angle_out(matrix_to_rpy(t[:3, :3]))
        cells = [repr(float(v)) for v in (*t[:3, 3], *rpy)]
        if task_space(chain).name == "position":
            cells[3:] = ["", "", ""]
        rows.append(",".join([f"t{i + 1}"] + cells))
    f = tmp_path / "targets.csv"
    f.write_text("\n".join(rows) + "\n")
    return chain, f


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_place_works_on_every_demo_arm(path, tmp_path, capsys):
    chain, csv = _targets_csv(path, tmp_path)
    x0, y0 = chain.base[0, 3], chain.base[1, 3]
    s = 0.05 * chain.scale
    out_arm = tmp_path / "placed.toml"
    code, out, err = _run(capsys, "place", path, csv, "--x", f"{x0 - s}..{x0 + s}", "--y", f"{y0}..{y0}",
                          "--step", s, "--json", "--out-arm", out_arm, "--workers", "1")
    assert code == 0, err
    d = json.loads(out)
    assert d["grid"]["placements"] == 3 and d["grid"]["x"]["count"] == 3
    best = d["best"][0]
    assert best["reached"] == 3 and best["count"] == 3 and d["study"]["reached"] == 3
    assert np.allclose(best["xyz"], [x0 + s * (best["index"] - 1), y0, chain.base[2, 3]])
    placed = load(out_arm)
    assert np.allclose(placed.base_xyz, best["xyz"])
    assert placed.joints == load(path).joints  # everything else of the arm file kept
    cov = d["coverage"]["reached"]
    assert len(cov) == 1 and len(cov[0]) == 3 and max(cov[0]) == 3


def test_place_text_png_and_a_target_out_of_reach(tmp_path, capsys):
    path = DEMO_DIR / "heron6.toml"
    chain, csv = _targets_csv(path, tmp_path, 4)
    csv.write_text(csv.read_text() + "far away,9000,0,0,,,\n")
    png = tmp_path / "cov.png"
    code, out, err = _run(capsys, "place", path, csv, "--x", "-100..100", "--y", "-100..100", "--step", "100",
                          "--png", png, "--yaw", "-10..10", "--yaw-step", "10")
    assert code == 1, err  # the best placement does not reach 'far away'
    assert "Searched 27 placements" in out and "4 of 5 targets reached" in out and "'far away'" in out
    assert "Coverage map written to" in out and png_size(png) == (1600, 900)
    assert "verify every result on the robot's controller" in out


@pytest.mark.parametrize("argv,match", [
    (["--x", "1..0", "--y", "0..1"], "--x must run from low to high (LOW..HIGH), got '1..0'"),
    (["--x", "a..b", "--y", "0..1"], "--x must be a range LOW..HIGH of two numbers (or one number), got 'a..b'"),
    (["--x", "0..1", "--y", "0..1", "--step", "0"], "--step must be a positive number, got '0'"),
    (["--x", "0..1", "--y", "0..1", "--top", "0"], "--top must be a whole number from 1 to 100, got '0'"),
    (["--x", "0..1", "--y", "0..1", "--workers", "x"], "--workers must be a whole number from 1 to 1024"),
    (["--x", "0..1", "--y", "0..1", "--png", "a.gif"], "--png must name a .png file, got 'a.gif'"),
    (["--x", "0..1e7", "--y", "0..1e7", "--step", "1"], "range 0.0..10000000.0 at step 1.0 must give at most"),
    (["--x", "0..1", "--y", "0..1", "--out-arm", "{arm}"], "--out-arm must name a new file, not an input"),
    (["--y", "0..1"], "the following arguments are required: --x"),
])
def test_place_errors_name_the_option(argv, match, tmp_path, capsys):
    path = DEMO_DIR / "heron6.toml"
    _, csv = _targets_csv(path, tmp_path, 1)
    argv = [a.replace("{arm}", str(path)) for a in argv]
    code, out, err = _run(capsys, "place", path, csv, *argv)
    assert code == 2 and match in err and "Traceback" not in err


def test_place_with_negative_ranges_as_typed(tmp_path, capsys):
    path = DEMO_DIR / "heron6.toml"
    _, csv = _targets_csv(path, tmp_path, 1)
    code, out, err = _run(capsys, "place", path, csv, "--x", "-50..50", "--y", "-50", "--step", "50", "--json")
    assert code == 0, err
    assert json.loads(out)["grid"]["y"] == {"from": -50.0, "to": -50.0, "count": 1, "unit": "mm"}


SPATIAL = [p for p in DEMO_ARMS if p.stem != "planar3"]


@pytest.mark.parametrize("path", SPATIAL, ids=[p.stem for p in SPATIAL])
def test_cube_works_on_every_spatial_demo_arm(path, capsys):
    code, out, err = _run(capsys, "cube", path, "--samples", "30000", "--json")
    assert code in (0, 1), err
    d = json.loads(out)
    assert d["edge"] > 0 and len(d["positions"]) == 5 and d["plane"] == "y+"
    assert [p["name"] for p in d["positions"]] == ["P1", "P2", "P3", "P4", "P5"]
    assert code == (0 if d["reached"] == 5 else 1)
    assert np.allclose(d["positions"][0]["xyz"], d["centre"])  # P1 at the centre
    corners = np.array(d["corners"])
    assert np.allclose(corners.max(axis=0) - corners.min(axis=0), d["edge"])  # the base axes are the world's here
    assert "from memory" in d["note"]


def test_cube_text_and_picture(tmp_path, capsys):
    png = tmp_path / "cube.png"
    code, out, err = _run(capsys, "cube", DEMO_DIR / "heron6.toml", "--samples", "30000", "--rpy", "180,0,0",
                          "--plane", "x-", "--png", png)
    assert code in (0, 1), err
    assert "Largest cube with edges along the base axes: edge" in out and "diagonal plane 'x-'" in out
    assert "roll, pitch, yaw 180, 0, 0 deg" in out and "from memory" in out
    assert png_size(png) == (1600, 900)


@pytest.mark.parametrize("stem,argv,match", [
    ("planar3", [], "is a planar arm; its workspace is an area, which holds no cube"),
    ("boom3", ["--rpy", "0,0,0"], "sets only its tool position"),
    ("heron6", ["--plane", "q"], "--plane must be one of y+, y-, x+, x-, z+, z-, got 'q'"),
    ("heron6", ["--rpy", "1,2"], "--rpy needs 3 values, got 2"),
    ("heron6", ["--samples", "5"], "--samples must be a whole number from 1000 to 10000000, got '5'"),
])
def test_cube_errors_name_the_option(stem, argv, match, capsys):
    code, out, err = _run(capsys, "cube", DEMO_DIR / f"{stem}.toml", *argv)
    assert code == 2 and match in err and "Traceback" not in err


def test_the_demo_targets_read_cleanly_and_heron_reaches_them(capsys):
    code, out, err = _run(capsys, "reach", DEMO_DIR / "heron6.toml", DEMO_DIR / "heron6-frame-seams.csv", "--json")
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["count"] == d["reached"] == 9 and not d["skipped"] and not d["warnings"]
    assert sum(t["free_spin"] for t in d["targets"]) == 2 and sum(t["rpy"] is None for t in d["targets"]) == 1
