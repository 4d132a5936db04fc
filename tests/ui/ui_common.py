"""Constants and markers shared by the window's tests (imported by name; tests/ui is on sys.path)."""

from __future__ import annotations

import shutil
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_arms"
HERON = DEMO / "heron6.toml"


def copy_demo(name: str, folder: Path) -> Path:
    """A copy of the demo arm ``name`` (``"wren6.toml"``) in ``folder`` (saving it is safe)."""
    p = Path(folder) / name
    shutil.copy(DEMO / name, p)
    return p

def wide_heron(folder: Path) -> Path:
    """Heron 6 with joints 1, 4 and 6 turning more than a turn (an edited copy): a target's branches then
    come with many turn variants — a long branch list (Heron 6 at 900, -300, 900 mm, rpy 180, 0, 0 deg:
    well over 30 branches in 8 configurations)."""
    text = (DEMO / "heron6.toml").read_text()
    edits = (("min = -170\nmax = 170", "min = -400\nmax = 400"), ("min = -190\nmax = 190", "min = -400\nmax = 400"),
             ("min = -350\nmax = 350", "min = -700\nmax = 700"))
    for old, new in edits:
        assert old in text, old
        text = text.replace(old, new)
    p = Path(folder) / "heron6_wide.toml"
    p.write_text(text)
    return p


