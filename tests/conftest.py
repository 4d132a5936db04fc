"""Shared fixtures for the whole suite (no Qt here: the core tests must run without it).

* ``DEMO_ARMS`` / ``demo_arm_path``: every demo arm file, one test per arm.
* ``rng``: a seeded random generator, so every run checks the same arms.
* ``random_rows``: random DH tables with revolute and prismatic joints.
* ``write_arm``: writes arm-file text (or bytes) into a temporary folder.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO_DIR = ROOT / "demo_arms"
DEMO_ARMS = sorted(DEMO_DIR.glob("*.toml"))


@pytest.fixture(params=DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def demo_arm_path(request) -> Path:
    """Each demo arm file in turn."""
    return request.param


@pytest.fixture
def rng():
    return np.random.default_rng(20261201)


def make_random_rows(rng, n, prismatic=0.3, special_angles=True):
    """A random DH table of ``n`` rows (``poser.core.dh.DHRow``), angles in radians.

    Twists and offsets are often exact multiples of 90° (as in real tables),
    lengths are sometimes exactly zero, and about ``prismatic`` of the joints
    slide.  Limits are wide (±π, or ±2 length units).
    """
    from poser.core.dh import DHRow

    rows = []
    for i in range(n):
        kind = "prismatic" if rng.random() < prismatic else "revolute"

        def angle():
            if special_angles and rng.random() < 0.5:
                return float(rng.integers(-2, 3)) * np.pi / 2
            return float(rng.uniform(-np.pi, np.pi))

        def length():
            return 0.0 if rng.random() < 0.3 else float(rng.uniform(-1.0, 1.0))

        lo, hi = (-np.pi, np.pi) if kind == "revolute" else (-2.0, 2.0)
        rows.append(DHRow(f"j{i + 1}", kind, a=length(), alpha=angle(), d=length(), theta=angle(), lower=lo, upper=hi))
    return rows


def random_pose(rng, scale=1.0):
    """A random rigid transform (4, 4)."""
    from poser.core.transforms import from_xyz_rpy

    return from_xyz_rpy(rng.uniform(-scale, scale, 3), rng.uniform(-np.pi, np.pi, 3))


@pytest.fixture
def random_rows():
    """``random_rows(rng, n, prismatic=0.3)`` → list of DHRow."""
    return make_random_rows


@pytest.fixture
def random_transform():
    """``random_transform(rng, scale=1.0)`` → a random rigid (4, 4) transform."""
    return random_pose


@pytest.fixture
def write_arm(tmp_path):
    """``write_arm(content, name="arm.toml")`` writes text or bytes and returns the path."""

    def write(content, name="arm.toml"):
        path = tmp_path / name
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")
        return path

    return write
