"""The test-cube picture: the cube and its ISO 9283 positions (from memory) seen along the base's y axis and from
above, inside the workspace's outlines through the cube's centre, each position marked by its reach verdict."""

from __future__ import annotations

import numpy as np

from poser.plot.canvas import Figure, Panel

__all__ = ["draw_cube"]

OUTLINE = (20, 20, 20)
CUBE = (38, 52, 110)
PLANE = (214, 150, 40)
REACHED = (31, 122, 60)
MISSED = (181, 40, 30)
BASE = (120, 120, 120)


def draw_cube(chain, k, path):
    """Draw ``k`` (:class:`poser.core.cube.Cube` of ``chain``) into the PNG ``path``."""
    from poser import report

    fig = Figure(1600, 900, f"Test cube of '{report.printable(chain.name)}' and its positions (ISO 9283 layout, "
                 "from memory)")
    try:
        _draw(fig, chain, k)
    except BaseException:
        fig.abort()
        raise
    fig.save(path)


def _draw(fig, chain, k):
    from poser import report
    from poser.core.workspace import outline_in_plane

    L = chain.units.length
    ws = k.workspace
    A, c = k.axes, k.centre
    ex, ey, ez = A[:, 0], A[:, 1], A[:, 2]
    lo, hi = ws.bounds
    span = float(np.max(hi - lo))
    pad = 0.04 * span
    # panels in base-axis coordinates through the cube's centre: (ex, ez) seen along y, (ex, ey) from above
    views = [("Seen along the base's y axis, through the cube's centre", ex, ez, ey, "x", "z"),
             ("Seen from above (along the base's z axis), through the cube's centre", ex, ey, ez, "x", "y")]
    d = report.length_digits(chain)
    for n, (title, eu, ev, _, nu, nv) in enumerate(views):
        corners = np.array([[x, y, z] for x in (lo[0], hi[0]) for y in (lo[1], hi[1]) for z in (lo[2], hi[2])])
        us, vs = (corners - c) @ eu, (corners - c) @ ev
        ur = (float(us.min()) - pad, float(us.max()) + pad)
        vr = (float(vs.min()) - pad, float(vs.max()) + pad)
        cu, cv = float(c @ eu), float(c @ ev)
        pan = Panel(fig, (24 + n * 700, 70, 690, 640), (cu + ur[0], cu + ur[1]), (cv + vr[0], cv + vr[1]),
                    f"base {nu} direction, world coordinate [{L}]", f"base {nv} direction, world coordinate [{L}]",
                    title)
        for line in outline_in_plane(ws, c, eu, ev, ur, vr):
            pan.polyline(line @ eu, line @ ev, OUTLINE, 2.0, closed=True)
        if k.edge > 0:
            h = k.edge / 2
            sq_u = cu + np.array([-h, h, h, -h])
            sq_v = cv + np.array([-h, -h, h, h])
            pan.polyline(sq_u, sq_v, CUBE, 2.5, closed=True)
            pc = k.plane_corners
            pan.polyline(pc @ eu, pc @ ev, PLANE, 1.8, closed=True, dash=True)
        b = chain.base[:3, 3]
        pan.marker(b @ eu, b @ ev, "square", BASE, 9)
        if k.edge > 0:
            tol = 0.01 * k.edge  # positions on one line of sight share a label: "P2, P3"
            seen = []
            for v, p in zip(k.study.verdicts, k.positions):
                kind, col = ("ring", REACHED) if v.reachable else ("cross", MISSED)
                pan.marker(p @ eu, p @ ev, kind, col, 7)
                for entry in seen:
                    if abs(entry[0] - p @ eu) < tol and abs(entry[1] - p @ ev) < tol:
                        entry[2].append(v.target.name)
                        break
                else:
                    seen.append([p @ eu, p @ ev, [v.target.name]])
            for u_, v_, names in seen:
                pan.marker(u_, v_, "none", col, 7, label=", ".join(names))
        pan.fig.text(float(pan.map(b @ eu, b @ ev)[0]) - 60, float(pan.map(b @ eu, b @ ev)[1]) + 8, 120, 18, "base",
                     size=12, align="centre", backdrop=True)
    items = [("line", OUTLINE, "workspace outline through the cube's centre"),
             ("line", CUBE, f"cube, edge {report.fmt(k.edge, d)} {L}"),
             ("line", PLANE, f"diagonal plane '{k.plane}' (dashed)"),
             ("ring", REACHED, "position reached within limits"),
             ("cross", MISSED, "position not reached"),
             ("square", BASE, "base origin")]
    fig.legend(40, 745, items[:3], size=12, width=700)
    fig.legend(760, 745, items[3:], size=12, width=700)
    lines = report.cube_lines(chain, k)
    summary = lines[0] + ". " + lines[1] + ". " + lines[-2]
    fig.text(24, 830, 1550, 60, summary + " " + report.STUDY_CAUTION, size=12)
