"""Reading a file safely, and knowing whether it changed on disk since.

:func:`read_regular` refuses anything that is not a regular file *before*
opening it for reading (a named pipe would block the reader forever, a device
could stream without end), opens without blocking and reads at most
``limit + 1`` bytes.

:class:`DiskStamp` records a file as it was read: modification time (ns),
size, inode and device, and the SHA-256 of its bytes.  :meth:`DiskStamp.matches`
tells cheaply whether the file is still that file: one ``stat`` when nothing
moved; the bytes are read and hashed only when the time, size or inode
differ (so a file touched but not changed still matches).
"""

from __future__ import annotations

import hashlib
import os
import stat as _stat
from dataclasses import dataclass

from poser.io.errors import ArmFileError, Problem

__all__ = ["DiskStamp", "read_regular", "file_kind", "changed_on_disk", "MAX_BYTES"]

MAX_BYTES = 1 << 20
"""Largest arm file read (1 MiB)."""

# O_NONBLOCK: should the name have been swapped for a pipe since the stat, opening does not wait
_READ_FLAGS = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0) | getattr(os, "O_CLOEXEC", 0)


def file_kind(mode: int) -> str | None:
    """None for a regular file, else what it is in words (``"a named pipe (FIFO)"``, ``"a folder"``, …)."""
    if _stat.S_ISREG(mode):
        return None
    if _stat.S_ISDIR(mode):
        return "a folder"
    if _stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if _stat.S_ISSOCK(mode):
        return "a socket"
    if _stat.S_ISCHR(mode):
        return "a character device"
    if _stat.S_ISBLK(mode):
        return "a block device"
    return "not a regular file"


def _too_big(size, file):
    return ArmFileError([Problem(f"file is {size} bytes; an arm file may hold at most {MAX_BYTES} (1 MiB)", file)])


def read_regular(path, limit: int = MAX_BYTES):
    """The bytes of a regular file, refusing anything else before opening it.

    Parameters
    ----------
    path : str or os.PathLike
        Followed through symbolic links.
    limit : int
        Largest size accepted, in bytes.

    Returns
    -------
    raw : bytes
    st : os.stat_result
        Of the opened file (``fstat``).

    Raises
    ------
    ArmFileError
        Missing, not readable, not a regular file (folder, FIFO, device,
        socket), or larger than ``limit``.
    """
    file = os.fspath(path)
    try:
        st = os.stat(file)
        kind = file_kind(st.st_mode)
        if kind:
            raise ArmFileError([Problem(f"is {kind}, not an arm file; arm files are regular files", file)])
        if st.st_size > limit:
            raise _too_big(st.st_size, file)
        fd = os.open(file, _READ_FLAGS)
        try:
            fst = os.fstat(fd)
            kind = file_kind(fst.st_mode)
            if kind:
                raise ArmFileError([Problem(f"is {kind}, not an arm file; arm files are regular files", file)])
            chunks, got = [], 0
            while got <= limit:
                chunk = os.read(fd, min(limit + 1 - got, 1 << 20))
                if not chunk:
                    break
                chunks.append(chunk)
                got += len(chunk)
        finally:
            os.close(fd)
    except ArmFileError:
        raise
    except (OSError, ValueError) as exc:  # ValueError: e.g. a NUL character in the path
        raise ArmFileError([Problem(f"cannot read the file: {getattr(exc, 'strerror', None) or exc}", file)]) from None
    raw = b"".join(chunks)
    if len(raw) > limit:
        raise ArmFileError([Problem(f"file holds more than {limit} bytes; an arm file may hold at most 1 MiB", file)])
    return raw, fst


@dataclass(frozen=True)
class DiskStamp:
    """A file as it was read or written: where, when, how big, and a hash of its bytes.

    Attributes
    ----------
    path : str
        The path it was read through (a symbolic link is followed, not resolved).
    mtime_ns : int
        Modification time, nanoseconds.
    size : int
        Size in bytes.
    sha256 : str
        SHA-256 (hex) of the bytes read.
    inode, device : int
        Identify the file on its file system (a file replaced by a rename gets another inode).
    """

    path: str
    mtime_ns: int
    size: int
    sha256: str
    inode: int = 0
    device: int = 0

    @classmethod
    def of_bytes(cls, path, st: os.stat_result, raw: bytes) -> DiskStamp:
        """The stamp of ``raw`` just read from (or written to) ``path`` whose ``stat`` is ``st``."""
        return cls(os.fspath(path), st.st_mtime_ns, st.st_size, hashlib.sha256(raw).hexdigest(), st.st_ino, st.st_dev)

    @classmethod
    def read(cls, path) -> DiskStamp | None:
        """The stamp of the file at ``path`` now (None when it is missing, unreadable or not a regular file).

        The bytes are hashed as they are read, so a file of any size costs no more memory than a block.
        """
        file = os.fspath(path)
        try:
            if file_kind(os.stat(file).st_mode):
                return None
            fd = os.open(file, _READ_FLAGS)
            try:
                st = os.fstat(fd)
                if file_kind(st.st_mode):
                    return None
                h = hashlib.sha256()
                while chunk := os.read(fd, 1 << 20):
                    h.update(chunk)
            finally:
                os.close(fd)
        except (OSError, ValueError):
            return None
        return cls(file, st.st_mtime_ns, st.st_size, h.hexdigest(), st.st_ino, st.st_dev)

    def matches(self, path=None) -> bool:
        """Whether the file at ``path`` (default: this stamp's path) still holds the bytes this stamp saw.

        One ``os.stat`` when the time, size, inode and device are unchanged;
        otherwise the file is read and hashed.  A missing file, or one that is
        no longer a regular file, does not match.
        """
        path = self.path if path is None else os.fspath(path)
        try:
            st = os.stat(path)
        except (OSError, ValueError):
            return False
        if file_kind(st.st_mode):
            return False
        if (st.st_mtime_ns, st.st_size, st.st_ino, st.st_dev) == (self.mtime_ns, self.size, self.inode, self.device):
            return True
        if st.st_size != self.size:
            return False
        now = DiskStamp.read(path)
        return now is not None and now.sha256 == self.sha256


def changed_on_disk(stamp: DiskStamp, path=None) -> bool:
    """True when the file at ``path`` (default ``stamp.path``) no longer holds what ``stamp`` saw.

    Cheap enough to poll (see :meth:`DiskStamp.matches`).
    """
    return not stamp.matches(path)
