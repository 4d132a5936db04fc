"""Writing arm files: exactly what is given, atomically, nothing lost on the way.

:func:`dumps` turns an arm into text over the text it was loaded from (see
:mod:`poser.io.document`), after checking it, and reads its own output back
to make sure the text holds exactly this arm.  :func:`save` writes that text:

* **changed on disk** — when the spec was loaded from (or last saved to) this
  file and the file no longer holds those bytes, :class:`ChangedOnDiskError`;
  ``overwrite=True`` replaces it anyway;
* **read-only** — a file without write permission raises :class:`ReadOnlyError`
  unless ``allow_readonly=True`` (the file keeps its permissions);
* **symbolic link** — the link's target is written, next to the target, and the
  link stays a link;
* **hard link** (more than one name for the file) — a rename would cut the
  link, so the file is rewritten in place: its old bytes go to a backup file
  beside it first (fsynced), the new bytes are written and fsynced, then the
  backup is removed; on a failure the old bytes are written back (or, if even
  that fails, the backup stays and the error names it);
* otherwise **atomic** — a temporary file in the same folder, fsynced, given the
  old file's permissions (and owner, when run as root), renamed over the old
  file; a failure leaves the old file as it was and no temporary file behind.

Permissions are honoured as written even when Poser runs as root (root may
write anything; Poser does not write what is marked read-only without being
told).
"""

from __future__ import annotations

import os
import stat as _stat
import tempfile

from poser.io.document import ArmSource, default_name, render, render_fresh
from poser.io.errors import (
    ArmFileError,
    ChangedOnDiskError,
    FolderNotWritableError,
    NotARegularFileError,
    Problem,
    ReadOnlyError,
    SaveError,
)
from poser.io.reading import build_spec, loads
from poser.io.spec import ArmSpec, validate
from poser.io.stamp import DiskStamp, file_kind, read_regular
from poser.io.tomltext import TomlValueError, same

__all__ = ["dumps", "save", "write_text_atomic", "FROM_SPEC"]


class _FromSpec:
    def __repr__(self):
        return "FROM_SPEC"


FROM_SPEC = _FromSpec()
"""Default of ``save(expect=...)``: check against ``spec.stamp`` when it is a stamp of the same file."""


# -- text ---------------------------------------------------------------------------


def _same_arm(a: ArmSpec, b: ArmSpec) -> bool:
    if not (same(a.name, b.name) and a.convention == b.convention and a.units == b.units):
        return False
    for attr in ("base_xyz", "base_rpy", "tool_xyz", "tool_rpy", "notes"):
        if not same(getattr(a, attr), getattr(b, attr)):
            return False
    if len(a.joints) != len(b.joints):
        return False
    keys = ("name", "type", "a", "alpha", "d", "theta", "min", "max", "home")
    return all(same(getattr(x, k), getattr(y, k)) for x, y in zip(a.joints, b.joints) for k in keys)


def _reads_back(text: str, spec: ArmSpec, file: str) -> bool:
    src = spec.source
    try:
        if isinstance(src, ArmSource) and text == src.text:  # the loaded text: what it holds is known
            again = build_spec(src, file)
        else:
            again = loads(text, file)
    except ArmFileError:
        return False
    return _same_arm(again, spec)


def dumps(spec: ArmSpec, path=None) -> str:
    """The arm as TOML text, keeping the comments and layout of the text it was loaded from.

    Parameters
    ----------
    spec : ArmSpec
        Not changed.
    path : str or os.PathLike, optional
        The file the text is for: when the text gives no ``name``, a file
        named ``<name>.toml`` needs none, any other file gets one.  Default:
        the file the arm was loaded from.

    Returns
    -------
    str
        Text that loads back to exactly this arm (checked before it is returned).

    Raises
    ------
    ArmFileError
        When the arm is invalid (the problems loading would report), or its
        notes hold a value TOML cannot hold.
    """
    problems = validate(spec)
    if problems:
        raise ArmFileError(problems)
    src = spec.source if isinstance(spec.source, ArmSource) else None
    file = os.fspath(path) if path is not None else (src.file if src else "<arm>")
    try:
        text = render(spec, default_name(file) if path is not None else None)
        if _reads_back(text, spec, file):
            return text
        # Never write an arm other than this one: should the edited text not read back exactly
        # (it always should), a new document is written instead, without the old comments.
        text = render_fresh(spec, src.layout.newline if src else "\n")
    except TomlValueError as exc:
        raise ArmFileError([Problem(f"notes: {exc}", file)]) from None
    if not _reads_back(text, spec, file):
        raise ArmFileError([Problem("this arm cannot be written as an arm file that reads back the same "
                                    "(please report it)", file)])
    return text


# -- files ----------------------------------------------------------------------------


def _umask() -> int:
    """The process umask, read without changing it where the system tells it (other threads may be creating files)."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for row in fh:
                if row.startswith("Umask:"):
                    return int(row.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _root() -> bool:
    return hasattr(os, "geteuid") and os.geteuid() == 0


def _may_write(path: str, st: os.stat_result) -> bool:
    if _root():
        return bool(st.st_mode & 0o222)  # root ignores permissions; Poser does not
    return os.access(path, os.W_OK)


def _read_only_fs(folder: str) -> bool:
    try:
        return bool(os.statvfs(folder).f_flag & os.ST_RDONLY)
    except (OSError, AttributeError):
        return False


def _check_folder(given: str, folder: str, allow_readonly: bool) -> None:
    try:
        st = os.stat(folder)
    except OSError as exc:
        raise FolderNotWritableError(given, folder, exc.strerror or str(exc)) from None
    if not _stat.S_ISDIR(st.st_mode):
        raise FolderNotWritableError(given, folder, "it is not a folder")
    if _read_only_fs(folder):
        raise FolderNotWritableError(given, folder, "its file system is mounted read-only")
    if allow_readonly:
        return
    ok = bool(st.st_mode & 0o222) if _root() else os.access(folder, os.W_OK | os.X_OK)
    if not ok:
        perms = f"{st.st_mode & 0o7777:04o}"
        raise FolderNotWritableError(given, folder, f"no permission to add files (permissions {perms})")


def _fsync_folder(folder: str) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _write_atomic(given: str, target: str, data: bytes, st: os.stat_result | None) -> None:
    folder = os.path.dirname(target) or "."
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{os.path.basename(target)}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise FolderNotWritableError(given, folder, exc.strerror or str(exc)) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, (st.st_mode & 0o7777) if st is not None else (0o666 & ~_umask()))
        if st is not None and _root() and (st.st_uid, st.st_gid) != (0, 0):
            try:
                os.chown(tmp, st.st_uid, st.st_gid)  # a file saved by root stays its owner's
            except OSError:
                pass
        os.replace(tmp, target)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if isinstance(exc, OSError):
            raise SaveError(given, f"cannot write the file: {exc.strerror or exc}; the file on disk is unchanged") \
                from exc
        raise
    _fsync_folder(folder)


def _rewrite(fh, data: bytes) -> None:
    fh.seek(0)
    fh.write(data)
    fh.truncate()
    fh.flush()
    os.fsync(fh.fileno())


def _write_in_place(given: str, target: str, data: bytes) -> None:
    """Rewrite a hard-linked file in place (every name keeps seeing it), a backup of the old bytes beside it."""
    folder = os.path.dirname(target) or "."
    old, _ = read_regular(target, limit=1 << 62)
    try:
        fd, backup = tempfile.mkstemp(prefix=f".{os.path.basename(target)}.", suffix=".poser-backup", dir=folder)
    except OSError as exc:
        raise FolderNotWritableError(
            given, folder, f"{exc.strerror or exc} (a hard-linked file is rewritten in place, with a backup beside it)"
        ) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(old)
            fh.flush()
            os.fsync(fh.fileno())
    except OSError as exc:
        os.unlink(backup)
        raise SaveError(given, f"cannot make the backup copy: {exc.strerror or exc}; the file is unchanged") from exc
    try:
        fh = open(target, "r+b")  # noqa: SIM115 - closed below, after a possible restore
    except OSError as exc:
        os.unlink(backup)
        raise SaveError(given, f"cannot open the file for writing: {exc.strerror or exc}; the file is unchanged") \
            from exc
    with fh:
        try:
            _rewrite(fh, data)
        except OSError as exc:
            try:
                _rewrite(fh, old)
            except OSError:
                raise SaveError(given, f"cannot write the file: {exc.strerror or exc}; its old content is kept in "
                                       f"{backup}") from exc
            os.unlink(backup)
            raise SaveError(given, f"cannot write the file: {exc.strerror or exc}; its old content was put back") \
                from exc
    os.unlink(backup)
    _fsync_folder(folder)


def _target(given: str):
    """The file to write (symbolic links followed) and its stat (None when it does not exist)."""
    target = os.path.realpath(given)
    try:
        st = os.stat(target)
    except FileNotFoundError:
        return target, None
    except OSError as exc:
        raise SaveError(given, f"cannot look at the file: {exc.strerror or exc}") from None
    kind = file_kind(st.st_mode)
    if kind:
        raise NotARegularFileError(given, kind)
    return target, st


def write_text_atomic(path, text: str) -> None:
    """Write ``text`` (UTF-8) to ``path`` atomically: a temporary file in the same folder, then a rename.

    A symbolic link is followed (the link stays); an existing file keeps its
    permissions; a new one gets the usual ``0o666 & ~umask``.  A failure
    leaves the old file as it was and no temporary file behind.  No checks
    for changes on disk or read-only files (that is :func:`save`).

    Raises
    ------
    FolderNotWritableError
        When no file can be made in the folder (missing, no permission, read-only file system).
    NotARegularFileError
        When ``path`` is a folder, pipe, device or socket.
    SaveError
        When writing fails (disk full, …); the old file is unchanged.
    """
    given = os.fspath(path)
    target, st = _target(given)
    _check_folder(given, os.path.dirname(target) or ".", allow_readonly=False)
    _write_atomic(given, target, text.encode("utf-8"), st)


def _same_file(a: str, b: str) -> bool:
    return os.path.realpath(a) == os.path.realpath(b)


def save(spec: ArmSpec, path, *, expect=FROM_SPEC, overwrite: bool = False, allow_readonly: bool = False) -> DiskStamp:
    """Write the arm to ``path`` (see the module docstring for how), keeping its comments and layout.

    Parameters
    ----------
    spec : ArmSpec
        Written exactly (:func:`dumps`).  Its ``stamp`` is set to the new file's.
    path : str or os.PathLike
    expect : DiskStamp or None, optional
        What the file should still be.  Default: ``spec.stamp`` if it is a
        stamp of this same file (an arm loaded from, or last saved to, it);
        None: no check.
    overwrite : bool
        Replace the file even if it changed on disk.
    allow_readonly : bool
        Replace a file (or write into a folder) without write permission where
        the system allows it; the file keeps its permissions.

    Returns
    -------
    DiskStamp
        Of the file as written (also stored in ``spec.stamp``).

    Raises
    ------
    ArmFileError
        The arm is invalid (nothing written).
    ChangedOnDiskError
        The file changed since it was loaded or last saved.
    ReadOnlyError
        The file has no write permission.
    FolderNotWritableError
        No file can be made in the folder.
    NotARegularFileError
        ``path`` is a folder, pipe, device or socket.
    SaveError
        Writing failed; the file is unchanged (or, for a hard-linked file that
        could not even be put back, the error names the backup).
    """
    given = os.fspath(path)
    text = dumps(spec, given)
    src = spec.source if isinstance(spec.source, ArmSource) else None
    data = (b"\xef\xbb\xbf" if src is not None and src.bom else b"") + text.encode("utf-8")
    target, st = _target(given)
    if not overwrite:
        stamp = spec.stamp if expect is FROM_SPEC else expect
        if isinstance(stamp, DiskStamp) and (expect is not FROM_SPEC or _same_file(stamp.path, given)):
            if not stamp.matches(given):
                raise ChangedOnDiskError(given, stamp, DiskStamp.read(given))
    folder = os.path.dirname(target) or "."
    if st is not None and not allow_readonly and not _may_write(target, st):
        if _read_only_fs(folder):
            raise FolderNotWritableError(given, folder, "its file system is mounted read-only")
        raise ReadOnlyError(given, st.st_mode)
    _check_folder(given, folder, allow_readonly)
    if st is not None and st.st_nlink > 1:
        _write_in_place(given, target, data)
    else:
        _write_atomic(given, target, data, st)
    try:
        new_st = os.stat(target)
    except OSError as exc:
        raise SaveError(given, f"the file was written but cannot be looked at: {exc.strerror or exc}") from None
    stamp = DiskStamp.of_bytes(given, new_st, data)
    spec.stamp = stamp
    return stamp
