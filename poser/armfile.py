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

from poser.io import *  # noqa: F401,F403 - the public face re-exports poser.io
from poser.io import __all__  # noqa: F401
