"""The core's exception types.

Messages name the argument, what was expected and what came, in the style
of ``scipy.spatial.transform``: ``"q must have shape (..., 6), got (3,)"``.
"""


class PoserError(Exception):
    """Base class of every error Poser raises on purpose."""


class PoserValueError(PoserError, ValueError):
    """An argument has the wrong shape, type or value."""


class Cancelled(PoserError):
    """A long computation stopped because its ``progress`` callback asked it to (it returned False)."""
