"""The performance-test cube: the largest cube with edges parallel to the base axes inside the workspace, and the
test positions on one of its diagonal planes as ISO 9283 lays them out, each checked for reach.

The search (:func:`largest_cube`)
    Works on any region given by a test ``inside(points) -> bool`` (for an arm: :func:`poser.core.workspace.contains`
    in base coordinates).  A cube (centre c, edge a) counts as inside when every point of a lattice of
    :data:`LATTICE`³ points spanning it (its corners, edges, faces and interior) is inside; for a fixed centre
    this is monotone in a, so the largest edge is found by bisection (to :data:`BISECT_SHARE` of the region's
    size).  The centres tried are the region's sample points (the workspace's kept tool points), thinned to
    :data:`SEEDS`; from the :data:`POLISH` best a pattern search moves the centre while the edge grows (to the
    best of its 26 neighbours ±δ along the axes, the face and the space diagonals), halving δ down to the
    tolerance.  The result is checked on a finer lattice (:data:`CHECK_LATTICE`³) and shrunk by bisection if
    that finds a point outside.

Accuracy
    The edge is good to about one workspace cell (``Workspace.resolution``: the boundary is known to a cell) and
    the search tolerance; a hole narrower than the check lattice's spacing (edge / (CHECK_LATTICE − 1)) can go
    unseen; the pattern search finds the best cube near its start points, which is the largest one for the
    convex or star-shaped regions tried in the tests (a ball, a spherical shell) — not a proof for any region.
    :attr:`Cube.accuracy` is the first of these figures.

ISO 9283 positions (from memory — check against the standard before a formal test)
    The standard's performance tests use positions in a cube inside the working space: P1 at the cube's centre
    and P2 … P5 on one of the cube's diagonal planes (a plane through two opposite edges; here any of six,
    default the plane through the edge at low x, low z and the edge at high x, high z, both parallel to the
    base's y axis), each at 10 % of the plane's diagonal from a corner of that plane, on the diagonal towards
    the centre.  The plane's diagonal is the cube's space diagonal, L = a·√3, so Pk = Ck + 0.1·L·(P1 − Ck)/|P1 − Ck|
    = Ck + 0.2·(P1 − Ck).  P2 … P5 go round the plane: low edge at the low end of its direction, low edge at the
    high end, high edge at the high end, high edge at the low end.  The tool orientation is the user's choice,
    the same at every position.  (The standard lets the positions sit 10 % ± 2 % from the corners; this module
    puts them at 10 %.)
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.progress import reporter
from poser.core.transforms import invert

__all__ = ["Cube", "largest_cube", "iso9283_positions", "cube", "cube_corners", "PLANES", "DEFAULT_PLANE",
           "CORNER_SHARE", "LATTICE", "CHECK_LATTICE", "SEEDS", "POLISH", "BISECT_SHARE"]

LATTICE = 7
"""Lattice points per edge of a cube tested during the search (7³ = 343 points)."""
CHECK_LATTICE = 17
"""Lattice points per edge of the final check (17³ = 4913 points)."""
SEEDS = 400
"""Centres tried at first."""
POLISH = 6
"""Best starts refined by the pattern search."""
BISECT_SHARE = 1e-4
"""Bisection of the edge stops at this share of the region's size."""
CORNER_SHARE = 0.1
"""P2 … P5 lie this share of the plane's diagonal from the plane's corners (ISO 9283, from memory)."""

PLANES = {
    # name: (direction of the two edges it holds, (sign of the low edge's first other axis, of its second))
    "y+": (1, 0, 2, +1), "y-": (1, 0, 2, -1),
    "x+": (0, 1, 2, +1), "x-": (0, 1, 2, -1),
    "z+": (2, 0, 1, +1), "z-": (2, 0, 1, -1),
}
"""The six diagonal planes: ``"y+"`` holds the edges parallel to y at (x low, z low) and (x high, z high);
``"y-"`` those at (x low, z high) and (x high, z low); likewise for x (other axes y, z) and z (other axes x, y)."""
DEFAULT_PLANE = "y+"


def _lattice(m):
    t = np.linspace(-0.5, 0.5, m)
    return np.stack(np.meshgrid(t, t, t, indexing="ij"), axis=-1).reshape(-1, 3)


def cube_corners(centre, edge, axes=None):
    """The 8 corners (8, 3) of a cube: ``centre`` (3,), ``edge``, edge directions ``axes`` (3, 3) as columns
    (default the world axes); corner ``i`` has signs (bit 0 → x, bit 1 → y, bit 2 → z; 0 low, 1 high)."""
    A = np.eye(3) if axes is None else np.asarray(axes, float)
    s = np.array([[(i >> k) & 1 for k in range(3)] for i in range(8)], float) - 0.5
    return np.asarray(centre, float) + (s * float(edge)) @ A.T


def iso9283_positions(centre, edge, axes=None, plane: str = DEFAULT_PLANE):
    """P1 … P5 (5, 3) of the cube on ``plane`` (see the module docstring; ISO 9283 from memory).

    Parameters
    ----------
    centre : array_like (3,)
    edge : float
        Edge length (> 0).
    axes : array_like (3, 3), optional
        The cube's edge directions as columns (default the world axes).
    plane : str
        One of :data:`PLANES`.

    Returns
    -------
    positions : ndarray (5, 3)
        P1 (centre), P2 … P5.
    plane_corners : ndarray (4, 3)
        The plane's corners C2 … C5 that P2 … P5 lie near, in the same order.
    """
    if plane not in PLANES:
        raise PoserValueError(f"plane must be one of {', '.join(PLANES)}, got {plane!r}")
    edge = float(edge)
    if not (math.isfinite(edge) and edge > 0):
        raise PoserValueError(f"edge must be a positive length, got {edge}")
    A = np.eye(3) if axes is None else np.asarray(axes, float)
    c = np.asarray(centre, float)
    d, u, v, sign = PLANES[plane]
    low = np.zeros(3)
    low[u], low[v] = -0.5, -0.5 * sign
    high = -low
    corners = []
    for along, edge_pt in ((-0.5, low), (0.5, low), (0.5, high), (-0.5, high)):
        s = edge_pt.copy()
        s[d] = along
        corners.append(c + edge * (A @ s))
    C = np.array(corners)
    # 10 % of the diagonal a·√3 from each corner towards the centre, which is half a diagonal away
    P = C + (2.0 * CORNER_SHARE) * (c - C)
    return np.vstack([c, P]), C


def largest_cube(inside, seeds, size: float, tolerance: float, progress=None):
    """The largest axis-parallel cube in a region (see the module docstring), in the coordinates ``inside`` takes.

    Parameters
    ----------
    inside : callable
        ``inside(points (N, 3)) -> bool (N,)``.
    seeds : array_like (S, 3)
        Points of the region (candidate centres).
    size : float
        The region's size (its widest extent): the largest edge tried and the scale of the bisection.
    tolerance : float
        The centre search stops when its step is below this length.
    progress : callable or Reporter, optional

    Returns
    -------
    (centre (3,), edge) : (ndarray, float)
        Edge 0 when no seed is inside.
    """
    report = reporter(progress)
    S = np.asarray(seeds, float).reshape(-1, 3)
    if len(S) == 0:
        raise PoserValueError("seeds must hold at least one point, got none")
    size, tolerance = float(size), float(tolerance)
    if not (size > 0 and tolerance > 0):
        raise PoserValueError(f"size and tolerance must be positive lengths, got {size} and {tolerance}")
    if len(S) > SEEDS:
        S = S[np.linspace(0, len(S) - 1, SEEDS).round().astype(int)]
    U = _lattice(LATTICE)
    eps = BISECT_SHARE * size

    def fits(C, a, lattice=U):
        pts = C[:, None, :] + a[:, None, None] * lattice[None]
        return inside(pts.reshape(-1, 3)).reshape(len(C), -1).all(axis=1)

    def max_edge(C, lattice=U, hi=None):
        lo = np.zeros(len(C))
        hi = np.full(len(C), size) if hi is None else np.array(hi, float)
        ok0 = inside(C)
        while np.any(hi - lo > eps):
            mid = 0.5 * (lo + hi)
            f = fits(C, mid, lattice)
            lo = np.where(f, mid, lo)
            hi = np.where(f, hi, mid)
        return np.where(ok0, lo, 0.0)

    report(0.0)
    a0 = max_edge(S)
    report(0.3)
    order = np.lexsort((np.arange(len(S)), -a0))[:POLISH]
    best_c, best_a = S[order[0]].copy(), float(a0[order[0]])
    steps = np.array([d for d in np.ndindex(3, 3, 3) if d != (1, 1, 1)], float) - 1.0  # the 26 neighbours
    for n, k in enumerate(order.tolist()):
        c, a = S[k].copy(), float(a0[k])
        if a <= 0:
            continue
        delta = 0.25 * a
        while delta >= tolerance:
            C = c + delta * steps
            ae = max_edge(C)
            j = int(np.argmax(ae))
            if ae[j] > a + eps:
                c, a = C[j], float(ae[j])
            else:
                delta *= 0.5
        if a > best_a:
            best_c, best_a = c, a
        report(0.3 + 0.6 * (n + 1) / len(order))
    if best_a > 0 and not fits(best_c[None], np.array([best_a]), _lattice(CHECK_LATTICE))[0]:
        best_a = float(max_edge(best_c[None], _lattice(CHECK_LATTICE), hi=[best_a])[0])
    report(1.0)
    return np.array(best_c), best_a


@dataclass(frozen=True)
class Cube:
    """The result of :func:`cube` (world coordinates, the arm's length unit; angles rad).

    Attributes
    ----------
    centre : ndarray (3,)
    edge : float
        Edge length (0: no cube found).
    axes : ndarray (3, 3)
        Edge directions as columns: the base frame's axes in the world.
    corners : ndarray (8, 3)
        See :func:`cube_corners`.
    accuracy : float
        The edge is good to about this length (the workspace's finest cell; see the module docstring).
    plane : str
        The diagonal plane of the positions (:data:`PLANES`).
    positions : ndarray (5, 3)
        P1 … P5.
    plane_corners : ndarray (4, 3)
    R : ndarray (3, 3) or None
        The tool orientation checked at every position (world); None: position only.
    study : poser.core.reach.ReachStudy
        The reach verdict of P1 … P5, in that order, from the arm's home.
    workspace : poser.core.workspace.Workspace
    """

    centre: np.ndarray
    edge: float
    axes: np.ndarray
    corners: np.ndarray
    accuracy: float
    plane: str
    positions: np.ndarray
    plane_corners: np.ndarray
    R: np.ndarray
    study: object
    workspace: object

    @property
    def reached(self) -> int:
        return self.study.reached


POSITION_NAMES = ("P1", "P2", "P3", "P4", "P5")


def cube(chain, R=None, ws=None, plane: str = DEFAULT_PLANE, samples: int = 300_000, progress=None) -> Cube:
    """The test cube of ``chain`` and its ISO 9283 positions checked for reach (see the module docstring).

    Parameters
    ----------
    chain : Chain
        A spatial arm (a planar arm's workspace holds no cube).
    R : array_like (3, 3), optional
        Tool orientation (world) at every position.  Default: the tool's orientation at the arm's home; for an
        arm that controls only its tool position, None (position only; a rotation is refused).
    ws : Workspace, optional
        The arm's workspace (default: measured here with ``samples``).
    plane : str
        The diagonal plane of the positions (:data:`PLANES`).
    samples : int
        Joint samples of the workspace when ``ws`` is not given.
    progress : callable or Reporter, optional
        ``progress(fraction) -> bool | None``; False cancels (:class:`poser.core.errors.Cancelled`).

    Returns
    -------
    Cube
    """
    from poser.core.fk import fk
    from poser.core.reach import Target, reach
    from poser.core.workspace import contains, workspace

    if plane not in PLANES:
        raise PoserValueError(f"plane must be one of {', '.join(PLANES)}, got {plane!r}")
    from poser.core.jacobian import task_space

    position_only = task_space(chain).name == "position"
    if R is None:
        R = None if position_only else fk(chain, chain.home)[:3, :3]
    elif position_only:
        raise PoserValueError("R must be None for an arm that controls only its tool position, got a rotation")
    else:
        R = np.array(R, float)
        if R.shape != (3, 3) or np.abs(R.T @ R - np.eye(3)).max() > 1e-6 or np.linalg.det(R) < 0:
            raise PoserValueError(f"R must be a 3 x 3 rotation matrix, got shape {R.shape}")
    report = reporter(progress)
    report(0.0)
    if ws is None:
        ws = workspace(chain, samples, progress=report.part(0.0, 0.5))
    if ws.planar:
        raise PoserValueError("chain must be a spatial arm for a test cube, got a planar arm (its workspace is an "
                              "area)")
    B = chain.base
    A = B[:3, :3]
    Binv = invert(B)

    def inside(p_local):
        return contains(ws, p_local @ A.T + B[:3, 3])

    local = ws.points @ Binv[:3, :3].T + Binv[:3, 3]
    lo, hi = local.min(axis=0), local.max(axis=0)
    size = float(np.max(hi - lo)) if len(local) else 0.0
    if size <= 0:
        raise PoserValueError("the workspace must hold tool points for a test cube, got none")
    c_local, edge = largest_cube(inside, local, size, 0.5 * ws.resolution, report.part(0.5, 0.45))
    centre = A @ c_local + B[:3, 3]
    if edge > 0:
        pos, pc = iso9283_positions(centre, edge, A, plane)
    else:
        pos, pc = np.repeat(centre[None], 5, axis=0), np.repeat(centre[None], 4, axis=0)
    targets = [Target(name, p, R) for name, p in zip(POSITION_NAMES, pos)]
    study = reach(chain, targets, progress=report.part(0.95, 0.05))
    report(1.0)
    return Cube(centre, float(edge), A.copy(), cube_corners(centre, edge, A), float(ws.resolution), plane, pos, pc,
                R, study, ws)
