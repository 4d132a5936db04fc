"""Arm files (format 1, TOML): load, validate, save — the public face of :mod:`poser.io`.

The format is documented in ``docs/arm-file.md``.  Loading checks everything
and reports every problem at once (:class:`ArmFileError`, one
:class:`Problem` per finding, each with file, line where known, joint and
what was expected).  Saving writes exactly the arm it is given, keeps the
user's comments with their joints, and refuses with a specific
:class:`SaveError` what it must not do silently (a file changed on disk, a
read-only file, a folder that takes no files).

Values in an :class:`ArmSpec` are exactly as written in the file, in the
arm's own units; :meth:`ArmSpec.to_chain` converts angles to radians for the
core.  Everything here lives in :mod:`poser.io`; this module re-exports it.
"""

from poser.io import (
    FORMAT,
    FROM_SPEC,
    JOINT_KEYS,
    JOINT_TYPES,
    MAX_BYTES,
    MAX_DEPTH,
    MAX_ITEMS,
    MAX_JOINTS,
    MAX_KEY_PARTS,
    MAX_MAGNITUDE,
    MAX_TURNS,
    PLACE_KEYS,
    TOP_KEYS,
    UNIT_KEYS,
    ArmFileError,
    ArmSpec,
    ChangedOnDiskError,
    DiskStamp,
    FolderNotWritableError,
    JointOrigin,
    JointSpec,
    NotARegularFileError,
    Problem,
    ReadOnlyError,
    RecoveryWriter,
    SaveError,
    changed_on_disk,
    convert_convention,
    dumps,
    load,
    loads,
    loads_bytes,
    read_regular,
    recovery_dir,
    recovery_path,
    revolute_bound,
    save,
    validate,
    write_text_atomic,
)

__all__ = [
    "ArmSpec",
    "JointSpec",
    "JointOrigin",
    "validate",
    "revolute_bound",
    "load",
    "loads",
    "loads_bytes",
    "dumps",
    "save",
    "write_text_atomic",
    "FROM_SPEC",
    "DiskStamp",
    "changed_on_disk",
    "read_regular",
    "Problem",
    "ArmFileError",
    "SaveError",
    "ChangedOnDiskError",
    "ReadOnlyError",
    "FolderNotWritableError",
    "NotARegularFileError",
    "RecoveryWriter",
    "recovery_dir",
    "recovery_path",
    "convert_convention",
    "FORMAT",
    "MAX_BYTES",
    "MAX_JOINTS",
    "MAX_MAGNITUDE",
    "MAX_TURNS",
    "MAX_ITEMS",
    "MAX_DEPTH",
    "MAX_KEY_PARTS",
    "JOINT_TYPES",
    "TOP_KEYS",
    "JOINT_KEYS",
    "UNIT_KEYS",
    "PLACE_KEYS",
]
