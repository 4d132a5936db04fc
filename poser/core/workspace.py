"""The workspace: every tool position the arm reaches within its joint limits, with its base and tool.

Sampling
    Joint values are sampled stratified over every joint's range (a revolute joint of more than a turn
    over one turn about the middle of its range: the positions repeat with whole turns), and a share of
    the samples hold one joint at a limit — those trace the workspace's boundary.  The seed is fixed: the
    same arm and sample count give the same figures on every run.

Measuring
    * **Sections about the base axis** (joint 1 turns, the arm is spatial).  Joint 1 turns everything
      after it about a fixed line, so the workspace is its half-plane section (distance r from the line,
      height z along it) swept about the line.  The samples are computed with joint 1 at zero; each cell
      of the section keeps the azimuths φ of its samples, and joint 1's range [lower, upper] turns each by
      that range: the cell covers the union of the arcs [φ + lower, φ + upper].  Volume = Σ r·Δr·Δz·(arc)
      (Pappus' theorem for a full turn).
    * **Rings about the first axis** (a planar arm whose joint 1 turns): the same in polar rings — an area.
    * Otherwise **voxels** in space (or **pixels** in the plane of a planar arm).

    On a grid of cell size h, the occupied cells overstate the region at its boundary and the occupied
    cells whose neighbours are all occupied understate it; their mean is the estimate V(h).  Cells left
    empty inside by sparse sampling are filled by a morphological closing (one cell).  The cell size is
    halved from span/32 while sampling stays dense enough (the closing filled under 1 % of the cells);
    the boundary error of V(h) shrinks in proportion to h, so the two finest grids give the Richardson
    extrapolation V = 2·V(h) − V(2h), and |V(h) − V(2h)| is reported as its error.  The arcs of a cell are
    taken from the samples of its parent cell (2h), which makes a sparsely sampled cell miss fewer of its
    azimuths.

Dexterity
    Each kept point carries the manipulability (:func:`poser.core.jacobian.manipulability`, in the task
    space's unit) and the share of approach directions reached: the tool Z directions of the samples in
    its coarse cell, binned into 96 directions of equal area (8 zones of equal height × 12 sectors; in the
    plane: 36 angles of the tool X axis), counted relative to the azimuth — a lower bound that grows with
    the samples.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from poser.core.errors import PoserValueError
from poser.core.fk import fk
from poser.core.jacobian import manipulability, task_space
from poser.core.lines import chain_lines
from poser.core.progress import reporter
from poser.core.transforms import TWO_PI

__all__ = ["Workspace", "workspace", "sample_joints", "section", "Section", "contains", "SECTIONS", "RINGS",
           "VOXELS", "PIXELS", "vertical_plane", "outline_in_plane"]

SECTIONS = "sections about the base axis"
RINGS = "rings about the first axis"
VOXELS = "voxels"
PIXELS = "pixels"

BOUNDARY_SHARE = 0.25
"""Share of the samples with one joint held at one of its limits (they trace the boundary)."""
TARGET_ERROR = 0.002
"""Stop refining once the error estimate is below this share of the size (0.2 %)."""
MAX_HOLES = 0.01
"""A grid is dense enough while the closing fills fewer than this share of its occupied cells."""
MIN_PER_CELL = 3.0
"""… and its occupied cells hold at least this many samples on average."""
MAX_CELLS = 8_000_000
"""No grid finer than this many cells."""
DISPLAY_POINTS = 20_000
"""Tool points kept for drawing, with their dexterity."""
DIRECTION_BINS = 96
PLANE_BINS = 36


@dataclass(frozen=True)
class Workspace:
    """The result of :func:`workspace` (arm length unit; angles rad).

    Attributes
    ----------
    planar : bool
        A planar arm: ``size`` is an area in its plane, else a volume.
    size : float
        Volume (length³) or area (length²).
    error : float
        Error estimate of ``size`` (same unit; see the module docstring).
    method : str
        :data:`SECTIONS`, :data:`RINGS`, :data:`VOXELS` or :data:`PIXELS`.
    resolution : float
        The finest cell size used (length unit).
    levels : tuple of (float, float)
        (cell size, V(h)) of every grid that was dense enough, coarse to fine.
    bounds : (ndarray (3,), ndarray (3,))
        Smallest and largest world coordinate of any tool point sampled.
    samples : int
        Joint samples taken.
    points : ndarray (M, 3)
        Tool points kept for drawing (world).
    dexterity : ndarray (M,)
        Manipulability at each kept point (the task space's unit).
    approach : ndarray (M,)
        Share (0 … 1) of approach directions reached in each kept point's coarse cell.
    axis : (ndarray (3,), ndarray (3,)) or None
        The joint 1 line (point, unit direction) the sections or rings are taken about.
    length_unit : str
    """

    planar: bool
    size: float
    error: float
    method: str
    resolution: float
    levels: tuple
    bounds: tuple
    samples: int
    points: np.ndarray
    dexterity: np.ndarray
    approach: np.ndarray
    axis: tuple | None
    length_unit: str = "mm"
    grid: dict = field(default_factory=dict, repr=False)

    @property
    def volume(self) -> float | None:
        return None if self.planar else self.size

    @property
    def area(self) -> float | None:
        return self.size if self.planar else None

    @property
    def relative_error(self) -> float:
        return self.error / self.size if self.size > 0 else math.inf


def sample_joints(chain, count: int, seed: int = 20261202, boundary_share: float = BOUNDARY_SHARE):
    """Joint samples (count, n), internal units: stratified over every joint's range, a share at a limit.

    Parameters
    ----------
    chain : Chain
    count : int
    seed : int
    boundary_share : float
        Share of the samples with one randomly chosen joint held at one of its limits.

    Returns
    -------
    ndarray, shape (count, n)
    """
    count = int(count)
    if count < 1:
        raise PoserValueError(f"count must be at least 1, got {count}")
    if not 0.0 <= boundary_share < 1.0:
        raise PoserValueError(f"boundary_share must be in [0, 1), got {boundary_share}")
    rng = np.random.default_rng(seed)
    n = chain.n
    lo, hi = np.array(chain.lower, float), np.array(chain.upper, float)
    wide = chain.revolute & (hi - lo > TWO_PI)
    mid = 0.5 * (lo + hi)
    slo = np.where(wide, mid - np.pi, lo)
    shi = np.where(wide, mid + np.pi, hi)
    U = np.empty((count, n))
    base = np.arange(count, dtype=float)
    for j in range(n):  # one stratum per sample in every joint, strata paired at random (Latin hypercube)
        U[:, j] = rng.permutation((base + rng.random(count)) / count)
    Q = slo + U * (shi - slo)
    nb = int(round(boundary_share * count))
    if nb:
        rows = rng.choice(count, size=nb, replace=False)
        joints = rng.integers(0, n, size=nb)
        at_upper = rng.random(nb) < 0.5
        Q[rows, joints] = np.where(at_upper, hi[joints], lo[joints])
    return Q


def workspace(chain, samples: int = 500_000, seed: int = 20261202, keep: int = DISPLAY_POINTS,
              progress=None) -> Workspace:
    """Sample and measure the workspace of ``chain`` (see the module docstring).

    Parameters
    ----------
    chain : Chain
    samples : int
        Joint samples, at least 1000 (10⁵–10⁶ give a volume to a fraction of a percent).
    seed : int
        The generator seed (the same seed, the same figures).
    keep : int
        Tool points kept for drawing, with their dexterity.
    progress : callable, optional
        ``progress(fraction) -> bool | None``; returning False raises :class:`poser.core.errors.Cancelled`.

    Returns
    -------
    Workspace
    """
    samples = int(samples)
    if samples < 1000:
        raise PoserValueError(f"samples must be at least 1000, got {samples}")
    keep = int(keep)
    if keep < 0:
        raise PoserValueError(f"keep must be at least 0, got {keep}")
    report = reporter(progress)
    report(0.0)
    Q = sample_joints(chain, samples, seed)
    L = chain_lines(chain)
    planar = task_space(chain).name.startswith("in-plane")
    spins = bool(L.revolute[0])
    T = _poses(chain, Q, spins, report.part(0.0, 0.5))
    P = T[:, :3, 3]
    if spins:
        o, w = L.o[0].copy(), L.w[0].copy()
        e1 = _perp_unit(w)
        e2 = np.cross(w, e1)
        rel = P - o
        z = rel @ w
        x1, x2 = rel @ e1, rel @ e2
        r = np.hypot(x1, x2)
        phi = np.arctan2(x2, x1)
        # each sample turned by its joint 1 value about the line: (x1, x2) in the plane across it turn
        cq, sq = np.cos(Q[:, 0]), np.sin(Q[:, 0])
        y1, y2 = x1 * cq - x2 * sq, x1 * sq + x2 * cq
        world = np.empty_like(P)
        for k in range(3):
            world[:, k] = o[k] + w[k] * z + e1[k] * y1 + e2[k] * y2
        frame = dict(axis_point=o, axis_dir=w, e1=e1, e2=e2, lower=float(chain.lower[0]),
                     length=float(chain.upper[0] - chain.lower[0]), plane_z=float(np.median(z)))
        if planar:
            coords, method = r[:, None], RINGS
        else:
            coords, method = np.stack([r, z], axis=1), SECTIONS
        origin = np.zeros(coords.shape[1])
        if not planar:
            origin[1] = z.min()
    else:
        world = P
        frame = {}
        if planar:
            e1 = _perp_unit(L.w[0])
            e2 = np.cross(L.w[0], e1)
            coords, method = np.stack([P @ e1, P @ e2], axis=1), PIXELS
            frame.update(e1=e1, e2=e2, normal=L.w[0].copy(), offset=float(np.median(P @ L.w[0])))
        else:
            coords, method = P, VOXELS
        origin = coords.min(axis=0)
        phi = None
    bounds = (world.min(axis=0), world.max(axis=0))
    span = float(max(np.max(coords.max(axis=0) - origin), 1e-12 * max(chain.scale, 1.0), 1e-300))
    grid = _Grid(method, coords, origin, phi, frame)
    levels, best = _refine(grid, span, report.part(0.5, 0.4))
    size, error, final = best
    if "arc_parents" in final:  # the finest grid's azimuths, sorted when contains() first needs them
        final["arc_source"] = (grid, final.pop("arc_parents"))
    rng = np.random.default_rng(seed + 1)
    pick = np.sort(rng.choice(samples, size=min(keep, samples), replace=False))
    report(0.92)
    dex = np.atleast_1d(manipulability(chain, Q[pick])) if len(pick) else np.zeros(0)
    appr = _approach(grid, T, phi, pick, planar, L)
    report(1.0)
    axis = (frame["axis_point"], frame["axis_dir"]) if spins else None
    return Workspace(planar, float(size), float(error), method, float(final["h"]), tuple(levels), bounds, samples,
                     world[pick], dex, appr, axis, chain.units.length, final)


def _poses(chain, Q, spins, report):
    """Tool poses of the samples (joint 1 at zero when it turns), in chunks that report progress."""
    Q0 = Q.copy()
    if spins:
        Q0[:, 0] = 0.0
    out = np.empty((len(Q), 4, 4))
    step = 1 << 17
    for s in range(0, len(Q), step):
        fk(chain, Q0[s:s + step], out=out[s:s + step])
        report((s + step) / len(Q))
    return out


def _perp_unit(w):
    a = np.array([1.0, 0.0, 0.0]) if abs(w[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    v = a - w * float(w @ a)
    return v / np.linalg.norm(v)


class _Grid:
    """Occupancy of the measuring coordinates (r | r, z | u, v | x, y, z) on grids of a chosen cell size.

    Along every coordinate the cells divide the samples' extent exactly (cell size extent/n ≤ h), so a flat
    face at a joint limit — a box's side, a slide's stroke — lies on a cell border, not inside a cell.
    """

    def __init__(self, method, coords, origin, phi, frame):
        self.method = method
        self.X = coords
        self.origin = origin
        self.extent = np.maximum(coords.max(axis=0) - origin, 0.0)
        self.phi = phi
        self.frame = frame
        self.partial = phi is not None and frame["length"] < TWO_PI - 1e-12

    def start(self, h0):
        """Fix the coarsest grid: cells at most h0 dividing every extent; each level halves them exactly."""
        self.h0 = h0
        self.n0 = np.maximum(np.ceil(self.extent / h0 - 1e-9), 1).astype(np.int64)

    def spacing(self, level):
        """(cell sizes (k,), shape) of the grid of ``level`` (0 = coarsest, each level halves the cells)."""
        n = self.n0 * (1 << level)
        size = np.where(self.extent > 0, self.extent / n, self.h0 / (1 << level))
        return size, tuple(int(v) for v in n)

    def indices(self, X, size, shape):
        """Cell index per coordinate (N, k), clipped into the grid."""
        idx = np.floor((X - self.origin) / size).astype(np.int64)
        np.clip(idx, 0, np.array(shape) - 1, out=idx)
        return idx

    def cells(self, level):
        size, shape = self.spacing(level)
        return np.ravel_multi_index(tuple(self.indices(self.X, size, shape).T), shape), shape

    def build(self, level):
        """(V(h), half spread, share of holes filled, mean samples per occupied cell, grid dict)."""
        import scipy.ndimage as nd

        size, shape = self.spacing(level)
        idx = self.indices(self.X, size, shape)
        cells = np.ravel_multi_index(tuple(idx.T), shape)
        counts = np.bincount(cells, minlength=int(np.prod(shape))).reshape(shape)
        occ = counts > 0
        k = occ.ndim
        faces = self._faces(idx, cells, shape)
        st = nd.generate_binary_structure(k, 1)
        closed = nd.binary_closing(_pad(occ, faces, 2), structure=st)[(slice(2, -2),) * k] | occ
        holes = int(closed.sum() - occ.sum())
        weight, arc_keys = self._weight(size, shape, idx, closed)
        pad = _pad(closed, faces, 1)
        inner = closed.copy()
        for ax in range(k):
            for shift in (1, -1):
                inner &= np.roll(pad, shift, axis=ax)[(slice(1, -1),) * k]
        outer_v, inner_v = float(weight[closed].sum()), float(weight[inner].sum())
        nocc = max(int(occ.sum()), 1)
        g = dict(kind=self.method, h=float(size.max()), size=size, shape=shape, occ=closed,
                 origin=self.origin.copy(), **self.frame)
        if arc_keys is not None:
            g["arc_parents"] = arc_keys
        return 0.5 * (outer_v + inner_v), 0.5 * (outer_v - inner_v), holes / nocc, float(counts.sum()) / nocc, g

    def _faces(self, idx, cells, shape):
        """Per axis and side, the border cells beyond which the region goes on or ends flat exactly on the
        grid's face — so their neighbour outside counts as occupied (the inner estimate keeps them):

        * across the axis r = 0 lies the same section turned half a turn (sections and rings);
        * a border cell holding samples exactly on the samples' extent (within 10⁻⁹ of it) is a flat face
          at a joint limit, a box's side or a slide's stroke; a curved region only touches its extent.
        """
        k = len(shape)
        out = []
        tol = 1e-9 * float(max(self.extent.max(), 1e-300))
        for ax in range(k):
            sides = []
            for side in (0, 1):
                flag = np.zeros(shape, bool)
                if side == 0 and ax == 0 and self.method in (SECTIONS, RINGS):
                    flag[0] = True
                else:
                    edge = self.origin[ax] + (self.extent[ax] if side else 0.0)
                    on = np.abs(self.X[:, ax] - edge) <= tol
                    flag.flat[cells[on]] = True
                border = np.take(flag, [shape[ax] - 1 if side else 0], axis=ax)
                sides.append(border)
            out.append(sides)
        return out

    def _weight(self, size, shape, idx, closed):
        k = len(shape)
        if self.method in (SECTIONS, RINGS):
            hr = size[0]
            rc = (np.arange(shape[0]) + 0.5) * hr
            w = rc * hr if k == 1 else (rc[:, None] * hr * size[1]) * np.ones(shape[1])
            if not self.partial:
                return w * TWO_PI, None
            arc, keys = self._arcs(shape, idx, closed)
            return w * arc, keys
        return np.full(shape, float(np.prod(size))), None

    def _arcs(self, shape, idx, closed):
        """Per cell, the measure of the union of arcs [φ, φ + length] over the samples of its parent cell
        (the 2 × 2 block it is in); and the parent shape and cells, for :meth:`arc_keys`.

        For a joint 1 range of half a turn or more only the largest gap between a parent's azimuths can
        exceed the range, so the union is min(2π, range + the shortest arc holding the azimuths): that arc
        is read about the azimuths' mean direction (sums per parent, no sorting).  A shorter range needs
        every gap: the azimuths are sorted within each parent.
        """
        import scipy.ndimage as nd

        length = self.frame["length"]
        pshape = tuple((s + 1) // 2 for s in shape)
        pcell = np.ravel_multi_index(tuple((idx // 2).T), pshape)
        npar = int(np.prod(pshape))
        if length >= math.pi:
            cs = np.bincount(pcell, np.cos(self.phi), minlength=npar)
            sn = np.bincount(pcell, np.sin(self.phi), minlength=npar)
            d = np.mod(self.phi - np.arctan2(sn, cs)[pcell] + math.pi, TWO_PI) - math.pi
            hi = np.full(npar, -np.inf)
            lo = np.full(npar, np.inf)
            np.maximum.at(hi, pcell, d)
            np.minimum.at(lo, pcell, d)
            seen = np.isfinite(hi)
            parc = np.zeros(npar)
            parc[seen] = np.minimum(TWO_PI, length + (hi[seen] - lo[seen]))
        else:
            c, p, starts = _sorted_by_cell(pcell, self.phi)
            last = np.r_[starts[1:], len(c)] - 1
            gaps = np.r_[np.diff(p), 0.0]
            gaps[last] = p[starts] + TWO_PI - p[last]  # each parent's wrap-around gap
            per = np.add.reduceat(np.maximum(gaps - length, 0.0), starts)
            parc = np.zeros(npar)
            parc[c[starts]] = TWO_PI - per
        arc = parc.reshape(pshape)
        for ax in range(len(shape)):
            arc = np.repeat(arc, 2, axis=ax)
        arc = arc[tuple(slice(0, s) for s in shape)].copy()
        lost = closed & (arc <= 0.0)  # a cell the closing filled under an empty parent: its neighbours' arc
        if lost.any():
            arc[lost] = nd.grey_dilation(arc, size=(3,) * len(shape))[lost]
        return arc, (pshape, pcell)

    def arc_keys(self, parents):
        """The sorted (parent cell, azimuth) keys :func:`contains` searches, for the finest grid's parents."""
        pshape, pcell = parents
        c, p, _ = _sorted_by_cell(pcell, self.phi)
        return c.astype(float) * 8.0 + p, pshape


def _sorted_by_cell(cell, phi):
    """``(cells, azimuths in [0, 2π), start of each cell's run)`` sorted by cell, then azimuth."""
    p = np.mod(phi, TWO_PI)
    order = np.lexsort((p, cell))
    c, p = cell[order], p[order]
    return c, p, np.flatnonzero(np.r_[True, c[1:] != c[:-1]])


def _pad(occ, faces, width):
    """``occ`` padded by ``width`` cells: empty, except beyond the border cells ``faces`` marks (and holds)."""
    k = occ.ndim
    out = np.pad(occ, width, constant_values=False)
    core = [slice(width, -width)] * k
    for ax in range(k):
        for side in (0, 1):
            border = np.take(occ, [occ.shape[ax] - 1 if side else 0], axis=ax) & faces[ax][side]
            sl = list(core)
            sl[ax] = slice(occ.shape[ax] + width, None) if side else slice(0, width)
            out[tuple(sl)] = np.repeat(border, width, axis=ax)
    return out


def _refine(grid, span, report):
    """Halve the cells from span/32 while the grid stays dense; Richardson on the two finest grids.

    Returns the levels [(cell size, V(h))] and (V, error, finest grid).  The error is the last step
    |V(h) − V(2h)|, and at least half the step before it (two steps agreeing by chance prove nothing).
    """
    grid.start(span / 32.0)
    k = grid.X.shape[1]
    levels, builds = [], []
    for level in range(10):
        size, shape = grid.spacing(level)
        if builds and np.prod(shape, dtype=float) > MAX_CELLS:
            break
        v, half, holes, per, g = grid.build(level)
        if builds and (holes > MAX_HOLES or per < MIN_PER_CELL):
            break
        levels.append((float(size.max()), v))
        builds.append((v, half, g))
        report((level + 1) / 6.0)
        if v > 0 and k > 1 and len(builds) >= 2 and _error(builds) <= TARGET_ERROR * v:
            break
    report(1.0)
    if len(builds) == 1 or grid.X.shape[1] == 1:
        # one grid, or rings: in one dimension the boundary error does not shrink evenly with h (it
        # depends on where the boundary falls in its cell), but it is at most the half spread
        v, half, g = builds[-1]
        return levels, (v, max(half, _error(builds)) if len(builds) > 1 else half, g)
    (vc, _, _), (vf, _, g) = builds[-2], builds[-1]
    return levels, (max(2.0 * vf - vc, 0.0), _error(builds), g)


def _error(builds):
    steps = [abs(builds[i][0] - builds[i - 1][0]) for i in range(1, len(builds))]
    return max(steps[-1], 0.5 * steps[-2]) if len(steps) >= 2 else steps[-1]


def _approach(grid, T, phi, pick, planar, L):
    """Share of approach directions reached in each picked sample's coarse cell (see the module docstring)."""
    if len(pick) == 0:
        return np.zeros(0)
    cells, shape = grid.cells(0)
    if planar:
        nrm = L.w[0]
        e1 = grid.frame.get("e1", _perp_unit(nrm))
        e2 = np.cross(nrm, e1)
        x = T[:, :3, 0]
        ang = np.arctan2(x @ e2, x @ e1)
        if phi is not None:
            ang = ang - phi
        bins, nb = np.floor(np.mod(ang, TWO_PI) / TWO_PI * PLANE_BINS).astype(np.int64) % PLANE_BINS, PLANE_BINS
    else:
        d = T[:, :3, 2]
        if phi is not None:  # relative to the azimuth: joint 1 turns the direction with the point
            f = grid.frame
            w, e1, e2 = f["axis_dir"], f["e1"], f["e2"]
            a, b, c = d @ e1, d @ e2, d @ w
            cp, sp = np.cos(phi), np.sin(phi)
            d = np.stack([a * cp + b * sp, -a * sp + b * cp, c], axis=1)
        bins, nb = _sphere_bins(d), DIRECTION_BINS
    hit = np.zeros((int(np.prod(shape)), nb), bool)
    hit[cells, bins] = True
    share = hit.sum(axis=1) / nb
    return share[cells[pick]]


def _sphere_bins(d):
    """Bin unit directions (N, 3) into 96 of equal area: 8 bands of equal height in z (a sphere's zones of
    equal height have equal area — Archimedes' hat-box theorem, common knowledge) × 12 equal sectors."""
    band = np.clip(((d[:, 2] + 1.0) * 4.0).astype(np.int64), 0, 7)
    sector = ((np.arctan2(d[:, 1], d[:, 0]) + math.pi) * (12.0 / TWO_PI)).astype(np.int64) % 12
    return band * 12 + sector


def contains(ws: Workspace, points):
    """Whether world points (..., 3) lie in the measured workspace (its finest dense grid).

    Returns
    -------
    ndarray of bool, shape (...)
        Points within a cell of the boundary may go either way; a planar arm's points must lie within a
        cell of its plane.
    """
    P = np.asarray(points, float)
    if P.shape[-1:] != (3,):
        raise PoserValueError(f"points must have shape (..., 3), got {P.shape}")
    g = ws.grid
    h, size, shape, occ = g["h"], g["size"], g["shape"], g["occ"]
    lead = P.shape[:-1]
    P = P.reshape(-1, 3)
    kind = g["kind"]
    on_plane = np.ones(len(P), bool)
    if kind in (SECTIONS, RINGS):
        o, w, e1, e2 = g["axis_point"], g["axis_dir"], g["e1"], g["e2"]
        rel = P - o
        z = rel @ w
        x1, x2 = rel @ e1, rel @ e2
        r, phi = np.hypot(x1, x2), np.arctan2(x2, x1)
        X = r[:, None] if kind == RINGS else np.stack([r, z], axis=1)
        if kind == RINGS:
            on_plane = np.abs(z - g["plane_z"]) <= h
    elif kind == PIXELS:
        X = np.stack([P @ g["e1"], P @ g["e2"]], axis=1)
        on_plane = np.abs(P @ g["normal"] - g["offset"]) <= h
    else:
        X = P
    idx = np.floor((X - g["origin"]) / size).astype(np.int64)
    top = (X - g["origin"]) <= size * np.array(shape) * (1 + 1e-12)  # the far faces belong to the last cells
    idx = np.where(top, np.minimum(idx, np.array(shape) - 1), idx)
    ok = np.all((idx >= 0) & (idx < np.array(shape)), axis=1) & on_plane
    inside = np.zeros(len(P), bool)
    inside[ok] = occ[tuple(idx[ok].T)]
    if "arc_source" in g and "arc_keys" not in g:
        grid, parents = g["arc_source"]
        g["arc_keys"] = grid.arc_keys(parents)
    if "arc_keys" in g and inside.any():
        keys, pshape = g["arc_keys"]
        sel = np.flatnonzero(inside)
        pidx = np.minimum(idx[sel] // 2, np.array(pshape) - 1)
        pc = np.ravel_multi_index(tuple(pidx.T), pshape).astype(float) * 8.0
        length = g["length"]
        eps = 1e-9  # the arc's ends belong to it (joint 1 at a limit), rounding aside
        a = np.mod(phi[sel] - g["lower"] - length - eps, TWO_PI)  # sample azimuths in [a, a + length] reach it
        end = a + length + 2 * eps
        hit = np.searchsorted(keys, pc + np.minimum(end, TWO_PI), "right") - np.searchsorted(keys, pc + a, "left")
        wrap = end > TWO_PI
        over = pc[wrap] + (end[wrap] - TWO_PI)
        hit[wrap] += np.searchsorted(keys, over, "right") - np.searchsorted(keys, pc[wrap], "left")
        inside[sel] = hit > 0
    return inside.reshape(lead)


@dataclass(frozen=True)
class Section:
    """The workspace's outline in a plane.

    Attributes
    ----------
    plane : str
        ``"horizontal"`` or ``"vertical"``.
    height : float or None
        World z of a horizontal plane (length unit).
    lines : list of ndarray (k, 3)
        Closed polylines in world coordinates around the region reached.
    """

    plane: str
    height: float | None
    lines: list


def section(ws: Workspace, plane: str = "vertical", height: float | None = None, base=None) -> Section:
    """The workspace's outline in a plane.

    Parameters
    ----------
    ws : Workspace
    plane : {"horizontal", "vertical"}
        ``"horizontal"``: at world height ``height`` (default mid-height); ``"vertical"``: the plane through
        the joint 1 line (or the base origin) spanned by it and the base frame's x axis.
    height : float, optional
    base : array_like (4, 4), optional
        The arm's base pose (for the vertical plane's direction; default identity).

    Returns
    -------
    Section
        Polylines traced between reached and unreached pixels of the grid's cell size (marching squares).
    """
    if plane not in ("horizontal", "vertical"):
        raise PoserValueError(f"plane must be 'horizontal' or 'vertical', got {plane!r}")
    if ws.planar:
        raise PoserValueError("a planar arm's workspace is an area in its plane; plane sections apply to spatial arms")
    h = ws.resolution
    lo, hi = ws.bounds[0] - 2 * h, ws.bounds[1] + 2 * h
    if plane == "horizontal":
        z0 = 0.5 * (lo[2] + hi[2]) if height is None else float(height)
        o, eu, ev = np.array([0.0, 0.0, z0]), np.array([1.0, 0.0, 0.0]), np.array([0.0, 1.0, 0.0])
        return Section(plane, z0, outline_in_plane(ws, o, eu, ev, (lo[0], hi[0]), (lo[1], hi[1])))
    o, ex, ez = vertical_plane(ws, base)
    corners = np.array([[x, y, z] for x in (lo[0], hi[0]) for y in (lo[1], hi[1]) for z in (lo[2], hi[2])]) - o
    us, vs = corners @ ex, corners @ ez
    reach = float(np.max(np.abs(us)))
    return Section(plane, None, outline_in_plane(ws, o, ex, ez, (-reach, reach), (float(vs.min()), float(vs.max()))))


def vertical_plane(ws: Workspace, base=None):
    """The vertical section's plane: (point (3,), in-plane direction across (3,), direction along the axis (3,))
    — through the joint 1 line (or the base origin), spanned by it and the base frame's x axis.

    Parameters
    ----------
    ws : Workspace
    base : array_like (4, 4), optional
        The arm's base pose (default identity).
    """
    B = np.eye(4) if base is None else np.asarray(base, float)
    o = ws.axis[0] if ws.axis is not None else B[:3, 3]
    ez = ws.axis[1] if ws.axis is not None else B[:3, 2]
    ex = B[:3, 0] - ez * float(B[:3, 0] @ ez)
    if np.linalg.norm(ex) < 1e-9:
        ex = _perp_unit(ez)
    return np.array(o, float), ex / np.linalg.norm(ex), np.array(ez, float)


def outline_in_plane(ws: Workspace, o, eu, ev, u_range, v_range, pixel=None) -> list:
    """The workspace's outline in the plane ``o + u·eu + v·ev`` over the given ranges (length unit).

    Parameters
    ----------
    ws : Workspace
    o, eu, ev : array_like (3,)
        A point of the plane and two unit directions in it.
    u_range, v_range : (float, float)
    pixel : float, optional
        Pixel size (default the grid's cell size; at most 4096 pixels a side).

    Returns
    -------
    list of ndarray (k, 3)
        Closed world polylines between reached and unreached pixels (marching squares).
    """
    span = max(float(u_range[1] - u_range[0]), float(v_range[1] - v_range[0]), 1e-300)
    h = max(ws.resolution if pixel is None else float(pixel), span / 4096)
    o, eu, ev = (np.asarray(a, float) for a in (o, eu, ev))
    u0, v0 = float(u_range[0]), float(v_range[0])
    nu, nv = int((u_range[1] - u0) / h) + 2, int((v_range[1] - v0) / h) + 2
    uu, vv = u0 + (np.arange(nu) + 0.5) * h, v0 + (np.arange(nv) + 0.5) * h
    U, V = np.meshgrid(uu, vv, indexing="ij")
    occ = contains(ws, o + U[..., None] * eu + V[..., None] * ev)
    return [o + np.outer(c[:, 0], eu) + np.outer(c[:, 1], ev) for c in _outline(occ, u0, v0, h)]


def _outline(occ, u0, v0, h):
    """Marching squares on a pixel grid ``occ`` (nu, nv) whose pixel (i, j) spans u0 + [i, i+1]·h: closed
    polylines (k, 2) along the borders between filled and empty pixels."""
    occ = np.pad(occ, 1, constant_values=False)
    u0, v0 = u0 - h, v0 - h
    segs = []
    for i, j in zip(*np.nonzero(occ[1:, :] != occ[:-1, :])):
        segs.append(((i + 1, j), (i + 1, j + 1)))
    for i, j in zip(*np.nonzero(occ[:, 1:] != occ[:, :-1])):
        segs.append(((i, j + 1), (i + 1, j + 1)))
    nbrs: dict = {}
    for a, b in segs:
        nbrs.setdefault(a, []).append(b)
        nbrs.setdefault(b, []).append(a)
    used: set = set()
    lines = []
    for a, b in segs:
        if (a, b) in used:
            continue
        used.add((a, b))
        used.add((b, a))
        line = [a, b]
        cur = b
        while cur != a:
            nxt = next((p for p in nbrs[cur] if (cur, p) not in used), None)
            if nxt is None:
                break
            used.add((cur, nxt))
            used.add((nxt, cur))
            line.append(nxt)
            cur = nxt
        arr = np.array(line, float)
        lines.append(np.stack([u0 + arr[:, 0] * h, v0 + arr[:, 1] * h], axis=1))
    return lines

