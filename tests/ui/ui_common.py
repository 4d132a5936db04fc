"""Constants and markers shared by the window's tests (imported by name; tests/ui is on sys.path)."""

from __future__ import annotations

from pathlib import Path

import pytest

from poser.ui import ikbridge

ROOT = Path(__file__).resolve().parents[2]
HERON = ROOT / "demo_arms" / "heron6.toml"

needs_ik = pytest.mark.skipif(not ikbridge.available(), reason=ikbridge.SKIP_REASON)
"""For tests that need poser.core.ik (skipped, with that reason, only in a build without it)."""
