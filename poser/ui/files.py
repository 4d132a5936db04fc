"""Recent files and recovery copies (no widgets; the main window asks the questions)."""

from __future__ import annotations

import hashlib
import os
from pathlib import Path

from poser.armfile import write_text_atomic

MAX_RECENT = 8


def recovery_dir() -> Path:
    """Where recovery copies live: ``$POSER_RECOVERY_DIR``, else the user's state folder."""
    env = os.environ.get("POSER_RECOVERY_DIR")
    if env:
        return Path(env)
    base = os.environ.get("XDG_STATE_HOME") or os.path.join(os.path.expanduser("~"), ".local", "state")
    return Path(base) / "poser" / "recovery"


def recovery_path(arm_path: Path | None) -> Path:
    """The recovery copy's file name for an arm file (or for an unsaved arm)."""
    key = str(Path(arm_path).resolve()) if arm_path else "untitled"
    stem = Path(arm_path).stem if arm_path else "untitled"
    digest = hashlib.sha1(key.encode("utf-8")).hexdigest()[:10]
    return recovery_dir() / f"{stem}-{digest}.toml"


def write_atomic(path: Path, text: str) -> None:
    """Write ``text`` to ``path`` through a temporary file and a rename, making the folder if needed."""
    path.parent.mkdir(parents=True, exist_ok=True)
    write_text_atomic(path, text)


def push_recent(recent: list[str], path) -> list[str]:
    """``recent`` with ``path`` first, no duplicates, at most :data:`MAX_RECENT`."""
    p = str(Path(path).resolve())
    return [p] + [r for r in recent if r != p][: MAX_RECENT - 1]
