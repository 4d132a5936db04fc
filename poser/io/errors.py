"""Exception types of the arm-file layer.

* :class:`ArmFileError` — a file could not be read, or an arm is invalid;
  ``problems`` lists every finding (:class:`Problem`).
* :class:`SaveError` (an :class:`ArmFileError`) — a save was refused or failed;
  the file on disk is as it was.  Its subclasses say why, so a window can ask
  the right question:

  - :class:`ChangedOnDiskError` — the file changed since it was loaded
    (``expected`` and ``found`` stamps); save again with ``overwrite=True``
    to replace it anyway, or reload.
  - :class:`ReadOnlyError` — the file has no write permission; save again with
    ``allow_readonly=True`` to replace it anyway (it stays read-only).
  - :class:`FolderNotWritableError` — the folder takes no new files, so no
    atomic save is possible there; save elsewhere.
  - :class:`NotARegularFileError` — the path is a folder, pipe, device or socket.
"""

from __future__ import annotations

from dataclasses import dataclass

from poser.core.errors import PoserError
from poser.text import printable

__all__ = [
    "Problem",
    "ArmFileError",
    "SaveError",
    "ChangedOnDiskError",
    "ReadOnlyError",
    "FolderNotWritableError",
    "NotARegularFileError",
]


@dataclass(frozen=True)
class Problem:
    """One finding in an arm file: what is wrong and what was expected, with file, line and joint where known."""

    message: str
    file: str = "<arm>"
    line: int | None = None
    joint: str | None = None

    def __str__(self):
        where = printable(self.file) + (f":{self.line}" if self.line else "")
        who = f"joint '{printable(self.joint)}': " if self.joint else ""
        return f"{where}: {who}{self.message}"


class ArmFileError(PoserError):
    """An arm file could not be read, is invalid, or could not be written; ``problems`` lists every finding."""

    def __init__(self, problems):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


class SaveError(ArmFileError):
    """A save was refused or failed; the file on disk is unchanged.  ``path`` is the file that was to be written."""

    def __init__(self, path, message: str):
        self.path = str(path)
        super().__init__([Problem(message, self.path)])


class ChangedOnDiskError(SaveError):
    """The file changed on disk since it was loaded (or last saved).

    Attributes
    ----------
    expected : poser.io.stamp.DiskStamp
        What the file was when it was loaded.
    found : poser.io.stamp.DiskStamp or None
        What it is now (``None``: the file is gone).
    """

    def __init__(self, path, expected, found):
        self.expected, self.found = expected, found
        if found is None:
            what = "was removed or renamed since it was loaded"
        else:
            what = (f"was changed by another program since it was loaded "
                    f"({expected.size} bytes then, {found.size} bytes now)")
        super().__init__(path, f"{what}; saving would replace that version — reload it, or save with overwrite")


class ReadOnlyError(SaveError):
    """The file has no write permission (for this user; Poser honours the permission bits even for root)."""

    def __init__(self, path, mode: int):
        self.mode = mode
        super().__init__(path, f"the file is read-only (permissions {mode & 0o7777:04o}); "
                               "it is not replaced without being asked (allow_readonly)")


class FolderNotWritableError(SaveError):
    """The folder takes no new files (permissions, read-only file system), so no atomic save is possible."""

    def __init__(self, path, folder, reason: str):
        self.folder = str(folder)
        super().__init__(path, f"cannot save in the folder {printable(self.folder)}: {reason}; save it elsewhere")


class NotARegularFileError(SaveError):
    """The path names a folder, named pipe, device or socket, not a file."""

    def __init__(self, path, kind: str):
        self.kind = kind
        super().__init__(path, f"is {kind}, not an arm file")
