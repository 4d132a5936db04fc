"""``poser --snapshot``: a real picture of the window, made in a fresh process (the display is pytest-xvfb's)."""

from __future__ import annotations

import os
import subprocess
import sys

import numpy as np
import pytest
from PySide6.QtGui import QImage
from ui_common import ROOT

pytestmark = pytest.mark.gui


def poser(*args, env=None, timeout=60):
    e = dict(os.environ)
    e.update(env or {})
    return subprocess.run([sys.executable, "-m", "poser", *args], capture_output=True, text=True, cwd=ROOT,
                          env=e, timeout=timeout)


def pixels(path) -> np.ndarray:
    img = QImage(str(path)).convertToFormat(QImage.Format.Format_RGB888)
    w, h = img.width(), img.height()
    raw = np.frombuffer(img.constBits(), np.uint8, count=img.sizeInBytes()).reshape(h, img.bytesPerLine())
    return raw[:, : 3 * w].reshape(h, w, 3).astype(int)


def body_mask(px) -> np.ndarray:
    """Pixels of the arm's dark, bluish bodies (links #44617B, shaded; drums #1F8A84)."""
    r, g, b = px[..., 0], px[..., 1], px[..., 2]
    return (r < 110) & (b > r + 8) & (g < 150)


@pytest.fixture(scope="module")
def two_snapshots(tmp_path_factory):
    d = tmp_path_factory.mktemp("snap")
    a, b = d / "a.png", d / "b.png"
    ra = poser("--snapshot", str(a), "--joints", "20,30,20,30,-40,10")
    rb = poser("--snapshot", str(b), "--joints", "-60,-20,70,0,60,0")
    assert ra.returncode == 0, ra.stderr
    assert rb.returncode == 0, rb.stderr
    return pixels(a), pixels(b)


def test_the_snapshot_is_not_blank(two_snapshots):
    px, _ = two_snapshots
    assert px.shape == (800, 1280, 3)  # the default --size
    assert px.std() > 20
    colours = np.unique(px.reshape(-1, 3) // 4, axis=0)
    assert len(colours) > 300
    view = px[90:760, :600]
    assert body_mask(view).sum() > 5000, "the arm's bodies must be drawn in the 3D view"


def test_the_arm_moves_in_the_snapshot_when_the_joints_change(two_snapshots):
    a, b = (p[90:760, :600] for p in two_snapshots)
    ma, mb = body_mask(a), body_mask(b)
    changed = (np.abs(a - b).sum(axis=-1) > 40).mean()
    assert changed > 0.03
    ya, xa = np.argwhere(ma).mean(axis=0)
    yb, xb = np.argwhere(mb).mean(axis=0)
    assert np.hypot(xa - xb, ya - yb) > 15, "the arm's body must be somewhere else"


def test_size_is_taken_and_other_arms_work(tmp_path):
    out = tmp_path / "boom.png"
    r = poser(str(ROOT / "demo_arms" / "boom3.toml"), "--snapshot", str(out), "--size", "1000x700",
              "--joints", "0.5,0.2,1.0")
    assert r.returncode == 0, r.stderr
    assert pixels(out).shape == (700, 1000, 3)


@pytest.mark.parametrize(
    "args, words",
    [
        (["--joints", "1,2"], "--joints needs 6 values"),
        (["--joints", "1,2,x,4,5,6"], "--joints must be comma-separated numbers"),
        (["--target", "1,2"], "--target needs 3 values"),
        (["--size", "big"], "--size must look like WIDTHxHEIGHT"),
        (["no-such-arm.toml"], "cannot read the file"),
    ],
)
def test_bad_input_ends_with_one_error_line_and_status_2(tmp_path, args, words):
    r = poser(*args, "--snapshot", str(tmp_path / "x.png"))
    assert r.returncode == 2
    assert r.stderr.startswith("poser: error: ") and words in r.stderr
    assert "Traceback" not in r.stderr
    assert not (tmp_path / "x.png").exists()
