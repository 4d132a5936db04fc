"""Progress and cancel for long computations (workspace, reach, placement).

A long core function takes ``progress=None`` or a callable ``progress(fraction) -> bool | None`` that it
calls with the share of the work done (0 … 1).  Returning ``False`` stops the work: the function raises
:class:`poser.core.errors.Cancelled` and returns nothing — the caller's state is left as it was.  The
core never looks at a clock: the same input does the same work.
"""

from __future__ import annotations

from poser.core.errors import Cancelled

__all__ = ["Reporter", "reporter"]


class Reporter:
    """Calls ``callback`` with the share done, within ``[start, start + span]`` of an outer task."""

    def __init__(self, callback=None, start: float = 0.0, span: float = 1.0):
        self.callback = callback
        self.start = float(start)
        self.span = float(span)

    def __call__(self, fraction: float) -> None:
        """Report ``fraction`` (0 … 1) of this part done; raise Cancelled when the callback says stop."""
        if self.callback is None:
            return
        f = self.start + self.span * min(max(float(fraction), 0.0), 1.0)
        if self.callback(f) is False:
            raise Cancelled("cancelled")

    def part(self, start: float, span: float) -> Reporter:
        """The reporter of a sub-task covering ``[start, start + span]`` of this one."""
        return Reporter(self.callback, self.start + self.span * start, self.span * span)


def reporter(progress) -> Reporter:
    """A :class:`Reporter` from a callback, a Reporter or None."""
    return progress if isinstance(progress, Reporter) else Reporter(progress)
