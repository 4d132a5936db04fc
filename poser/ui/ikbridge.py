"""The window's one door to inverse kinematics.

``poser.core.ik`` may be missing from a build; the window then works
without the target panel's solving and says why.
"""

from __future__ import annotations

try:  # pragma: no cover - depends on the build
    from poser.core.ik import solve as _solve
except ImportError as exc:  # pragma: no cover
    _solve = None
    IK_MISSING = f"inverse kinematics is not available in this build ({exc})"
else:
    IK_MISSING = None

SKIP_REASON = "poser.core.ik not available yet"


def available() -> bool:
    """True when ``poser.core.ik.solve`` can be called."""
    return _solve is not None


def solve(chain, xyz, R=None, near=None, **options):
    """Call ``poser.core.ik.solve``; raises RuntimeError when IK is missing."""
    if _solve is None:
        raise RuntimeError(IK_MISSING)
    return _solve(chain, xyz, R=R, near=near, **options)
