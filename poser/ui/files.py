"""Recent files and recovery copies (no widgets; the main window asks the questions)."""

from __future__ import annotations

from pathlib import Path

from poser.io.recovery import recovery_dir, recovery_path, write_atomic  # noqa: F401 - Qt-free, moved

MAX_RECENT = 8


def push_recent(recent: list[str], path) -> list[str]:
    """``recent`` with ``path`` first, no duplicates, at most :data:`MAX_RECENT`."""
    p = str(Path(path).resolve())
    return [p] + [r for r in recent if r != p][: MAX_RECENT - 1]
