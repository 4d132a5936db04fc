"""The workspace picture: the vertical section through the base axis and a horizontal section, each with
the workspace's outline and the tool points near the plane coloured by manipulability."""

from __future__ import annotations

import numpy as np

from poser.plot.canvas import Figure, Panel, colour

__all__ = ["draw_workspace"]

OUTLINE = (20, 20, 20)
BASE = (200, 30, 30)


def _slab(dist, extent, want=1500):
    """Points within a slab about a plane: ±1 % of the extent, widened until ``want`` points fall in it."""
    for share in (0.01, 0.02, 0.04, 0.08):
        sel = np.abs(dist) <= share * extent
        if sel.sum() >= want:
            return sel, share * extent
    return sel, share * extent


def _scale(values):
    """Colour positions 0 … 1 between the 2nd and 98th percentile, and those two bounds."""
    if len(values) == 0:
        return np.zeros(0), 0.0, 1.0
    lo, hi = np.percentile(values, [2, 98])
    if hi <= lo:
        hi = lo + max(abs(lo), 1.0) * 1e-6
    return (values - lo) / (hi - lo), float(lo), float(hi)


def _world_axis(e):
    """(direction, its name): a world axis (made positive) is named ``x``/``y``/``z``; another direction is
    "along the arm's plane"."""
    k = int(np.argmax(np.abs(e)))
    if abs(e[k]) > 0.999:
        return e * np.sign(e[k]), f"world {'xyz'[k]}"
    return e, "along the arm's plane"


def _slabs(a, b, L, d):
    from poser import report

    return f"±{report.fmt(a, d)} {L} of the vertical and ±{report.fmt(b, d)} {L} of the horizontal section"


def draw_workspace(chain, ws, path, height=None, base=None):
    """Draw ``ws`` (:class:`poser.core.workspace.Workspace` of ``chain``) into the PNG ``path``.

    Parameters
    ----------
    height : float, optional
        World z of the horizontal section (arm length unit); default mid-height of the workspace.
    base : ndarray (4, 4), optional
        The base pose (default ``chain.base``) for the vertical plane's direction.
    """
    from poser import report

    L = chain.units.length
    mu = report.manipulability_unit(chain)
    B = chain.base if base is None else base
    fig = Figure(1600, 900, f"Workspace of '{report.printable(chain.name)}' — joint limits, base and tool included")
    try:
        _draw(fig, chain, ws, height, B, L, mu)
    except BaseException:
        fig.abort()
        raise
    fig.save(path)


def _draw(fig, chain, ws, height, B, L, mu):
    from poser import report
    from poser.core.workspace import outline_in_plane, section, vertical_plane

    extent = float(np.max(ws.bounds[1] - ws.bounds[0]))
    t, lo, hi = _scale(ws.dexterity)
    cols = colour(t)
    P = ws.points
    if ws.planar:
        g = ws.grid
        o = np.zeros(3) if ws.axis is None else ws.axis[0]
        nrm = ws.axis[1] if ws.axis is not None else g["normal"]
        e1 = g.get("e1")
        if e1 is None:
            e1 = np.array([1.0, 0.0, 0.0]) - nrm * nrm[0]
            e1 /= np.linalg.norm(e1)
        e2 = np.cross(nrm, e1)
        e1, n1 = _world_axis(e1)
        e2, n2 = _world_axis(e2)
        off = float(np.median((P - o) @ nrm)) if len(P) else 0.0
        oc = o + off * nrm
        u, v = (P - oc) @ e1, (P - oc) @ e2
        r = float(max(np.abs(u).max(), np.abs(v).max())) if len(P) else 1.0
        r *= 1.04
        c1, c2 = float(oc @ e1), float(oc @ e2)  # drawn in world coordinates along e1, e2
        pan = Panel(fig, (24, 70, 1120, 700), (c1 - r, c1 + r), (c2 - r, c2 + r), f"{n1} [{L}]", f"{n2} [{L}]",
                    "The area reached in the arm's plane")
        pan.points(u + c1, v + c2, cols, 2.2)
        for line in outline_in_plane(ws, oc, e1, e2, (-r, r), (-r, r), pixel=r / 400):
            pan.polyline(line @ e1, line @ e2, OUTLINE, 2.2, closed=True)
        pan.marker(B[:3, 3] @ e1, B[:3, 3] @ e2, "cross", BASE, label="base")
        x_legend = 1170
    else:
        o, ex, ez = vertical_plane(ws, B)
        n = np.cross(ex, ez)
        sel, slab_v = _slab((P - o) @ n, extent)
        u, v = (P - o) @ ex, P @ ez
        vlines = section(ws, "vertical", base=B).lines
        ulim = max(float(np.max(np.abs(np.concatenate([(ln - o) @ ex for ln in vlines])))) if vlines else 1.0,
                   1.0)
        vv = np.concatenate([ln @ ez for ln in vlines]) if vlines else np.array([0.0, 1.0])
        vertical_up = abs(ez[2]) > 0.999
        ylabel = f"height z [{L}]" if vertical_up else f"along the first joint's axis [{L}]"
        pv = Panel(fig, (24, 70, 760, 650), (-ulim * 1.04, ulim * 1.04), (vv.min() - 0.04 * extent,
                                                                          vv.max() + 0.04 * extent),
                   f"across, in the base's x direction [{L}] (behind the base axis < 0)", ylabel,
                   "Vertical section through the base axis")
        pv.points(u[sel], v[sel], cols[sel], 2.0)
        for ln in vlines:
            pv.polyline((ln - o) @ ex, ln @ ez, OUTLINE, 2.2, closed=True)
        pv.polyline(np.array([0.0, 0.0]), np.array([vv.min() - extent, vv.max() + extent]), BASE, 1.5, dash=True)
        pv.marker((B[:3, 3] - o) @ ex, B[:3, 3] @ ez, "cross", BASE, label="base")
        hs = section(ws, "horizontal", height=height)
        z0 = hs.height
        selh, slab_h = _slab(P[:, 2] - z0, extent)
        lo3, hi3 = ws.bounds
        pad = 0.04 * extent
        ph = Panel(fig, (800, 70, 560, 650), (lo3[0] - pad, hi3[0] + pad), (lo3[1] - pad, hi3[1] + pad), f"x [{L}]",
                   f"y [{L}]",
                   f"Horizontal section at z = {report.fmt(z0, 1)} {L}")
        ph.points(P[selh, 0], P[selh, 1], cols[selh], 2.0)
        for ln in hs.lines:
            ph.polyline(ln[:, 0], ln[:, 1], OUTLINE, 2.2, closed=True)
        ph.marker(B[0, 3], B[1, 3], "cross", BASE, label="base")
        if vertical_up:
            pv.polyline(np.array([-2 * ulim, 2 * ulim]), np.array([z0, z0]), (90, 90, 90), 1.2, dash=True)
            pv.fig.text(pv.px[0] + 6, float(pv.map(0, z0)[1]) - 20, 300, 18, "horizontal section", size=11,
                        backdrop=True, colour=(90, 90, 90))
        x_legend = 1380
    fig.colour_bar(x_legend + 10, 150, 26, 330, lo, hi, f"manipulability\n[{mu}]")
    items = [("line", OUTLINE, "workspace outline"),
             ("dot", tuple(int(c) for c in colour(0.6)), "tool points near\nthe plane"),
             ("cross", BASE, "base origin")]
    if not ws.planar:
        items.insert(2, ("line", BASE, "base axis (dashed)"))
    fig.legend(x_legend - 10, 520, items, size=12, width=1600 - x_legend - 30)
    d = report.length_digits(chain)
    where = "the plane" if ws.planar else _slabs(slab_v, slab_h, L, d)
    note = (". ".join(report.workspace_lines(chain, ws)[:3]) + f". Dots: tool points within {where}, coloured by "
            f"manipulability (2nd–98th percentile). {report.STUDY_CAUTION}")
    fig.text(24, 790, 1550, 100, note, size=13)
