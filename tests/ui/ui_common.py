"""Constants and markers shared by the window's tests (imported by name; tests/ui is on sys.path)."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from poser.ui import ikbridge

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_arms"
HERON = DEMO / "heron6.toml"


def copy_demo(name: str, folder: Path) -> Path:
    """A copy of the demo arm ``name`` (``"wren6.toml"``) in ``folder`` (saving it is safe)."""
    p = Path(folder) / name
    shutil.copy(DEMO / name, p)
    return p

needs_ik = pytest.mark.skipif(not ikbridge.available(), reason=ikbridge.SKIP_REASON)
"""For tests that need poser.core.ik (skipped, with that reason, only in a build without it)."""
