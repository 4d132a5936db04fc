"""``poser workspace``: JSON keys (volume or area, error, bounds, samples, method, resolution, unit), the PNG,
errors that name the option.  The figures themselves are checked against closed forms in
tests/core/test_workspace.py."""

from __future__ import annotations

import json
import struct

import pytest

from poser.cli import main
from tests.conftest import DEMO_ARMS, DEMO_DIR


def _run(capsys, *argv):
    code = main([*map(str, argv)])
    out, err = capsys.readouterr()
    return code, out, err


def png_size(path):
    """(width, height) from a PNG's IHDR chunk (PNG specification, W3C/ISO 15948, §11.2.2)."""
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", data[16:24])


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_every_demo_arm_gives_its_figures_as_json(path, capsys):
    code, out, err = _run(capsys, "workspace", path, "--samples", "20000", "--json")
    assert code == 0, err
    d = json.loads(out)
    for key in ("volume", "volume_error", "area", "bounds", "samples", "method", "resolution", "unit",
                "relative_error", "units"):
        assert key in d
    L = d["units"]["length"]
    if d["planar"]:
        assert d["area"] > 0 and d["volume"] is None and d["unit"] == f"{L}²" and d["area_error"] >= 0
    else:
        assert d["volume"] > 0 and d["area"] is None and d["unit"] == f"{L}³" and d["volume_error"] >= 0
    assert d["samples"] == 20000
    assert all(a <= b for a, b in zip(d["bounds"]["min"], d["bounds"]["max"]))


@pytest.mark.parametrize("stem", ["heron6", "planar3"])
def test_the_picture_is_written(stem, tmp_path, capsys):
    png = tmp_path / "ws.png"
    code, out, err = _run(capsys, "workspace", DEMO_DIR / f"{stem}.toml", "--samples", "20000", "--png", png)
    assert code == 0, err
    assert png_size(png) == (1600, 900)
    assert f"Picture written to {png}" in out
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".poser-")]  # no temporary file left


@pytest.mark.parametrize("argv,match", [
    (["--samples", "10"], "--samples must be a whole number from 1000 to 10000000, got '10'"),
    (["--samples", "2.5e3x"], "--samples must be a whole number"),
    (["--png", "out.jpg"], "--png must name a .png file, got 'out.jpg'"),
    (["--png", "/no/such/folder/out.png"], "--png: folder '/no/such/folder' does not exist"),
    (["--samples", "2000", "--png", "{tmp}/a.png", "--height", "1e6"],
     "--height must lie within the workspace's heights"),
])
def test_bad_options_are_named(argv, match, capsys, tmp_path):
    argv = [a.replace("{tmp}", str(tmp_path)) for a in argv]
    code, out, err = _run(capsys, "workspace", DEMO_DIR / "heron6.toml", *argv)
    assert code == 2 and match in err and "Traceback" not in err
