"""Arm files, Qt-free: the plain-data spec, the comment-keeping document, safe reading and writing.

| module | role |
|---|---|
| :mod:`~poser.io.spec` | :class:`ArmSpec`, :class:`JointSpec` (plain data) and :func:`validate` |
| :mod:`~poser.io.reading` | :func:`load`, :func:`loads`, :func:`loads_bytes`: safe reading, strict TOML 1.0 |
| :mod:`~poser.io.writing` | :func:`dumps`, :func:`save`, :func:`write_text_atomic` |
| :mod:`~poser.io.document` | the loaded text and the edited text over it (comments kept with their joints) |
| :mod:`~poser.io.layout` | where every key and table stands in a TOML text |
| :mod:`~poser.io.tomltext` | writing plain values as TOML |
| :mod:`~poser.io.stamp` | :class:`DiskStamp`, :func:`changed_on_disk`, :func:`read_regular` |
| :mod:`~poser.io.errors` | :class:`ArmFileError` and the save refusals |
| :mod:`~poser.io.recovery` | recovery copies: paths and :class:`RecoveryWriter` |
| :mod:`~poser.io.convert` | :func:`convert_convention` |

:mod:`poser.armfile` is the public face that re-exports all of this.
"""

from poser.io.convert import convert_convention
from poser.io.errors import (
    ArmFileError,
    ChangedOnDiskError,
    FolderNotWritableError,
    NotARegularFileError,
    Problem,
    ReadOnlyError,
    SaveError,
)
from poser.io.reading import MAX_DEPTH, MAX_ITEMS, MAX_KEY_PARTS, load, loads, loads_bytes
from poser.io.recovery import RecoveryWriter, recovery_dir, recovery_path
from poser.io.spec import (
    FORMAT,
    JOINT_KEYS,
    JOINT_TYPES,
    MAX_JOINTS,
    MAX_MAGNITUDE,
    MAX_TURNS,
    PLACE_KEYS,
    TOP_KEYS,
    UNIT_KEYS,
    ArmSpec,
    JointOrigin,
    JointSpec,
    revolute_bound,
    validate,
)
from poser.io.stamp import MAX_BYTES, DiskStamp, changed_on_disk, read_regular
from poser.io.writing import FROM_SPEC, dumps, save, write_text_atomic

__all__ = [
    "ArmSpec", "JointSpec", "JointOrigin", "validate", "revolute_bound",
    "load", "loads", "loads_bytes", "dumps", "save", "write_text_atomic", "FROM_SPEC",
    "DiskStamp", "changed_on_disk", "read_regular",
    "Problem", "ArmFileError", "SaveError", "ChangedOnDiskError", "ReadOnlyError", "FolderNotWritableError",
    "NotARegularFileError",
    "RecoveryWriter", "recovery_dir", "recovery_path",
    "convert_convention",
    "FORMAT", "MAX_BYTES", "MAX_JOINTS", "MAX_MAGNITUDE", "MAX_TURNS", "MAX_ITEMS", "MAX_DEPTH", "MAX_KEY_PARTS",
    "JOINT_TYPES", "TOP_KEYS", "JOINT_KEYS", "UNIT_KEYS", "PLACE_KEYS",
]
