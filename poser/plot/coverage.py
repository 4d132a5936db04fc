"""The placement coverage map: per base position (x, y) the targets reached (the best over the heights and
yaws searched), the best placements and the targets seen from above."""

from __future__ import annotations

import numpy as np

from poser.plot.canvas import Figure, Panel, colour

__all__ = ["draw_coverage"]

BEST = (200, 30, 30)
TARGET = (20, 20, 20)


def _edges(v, fallback):
    v = np.asarray(v, float)
    if len(v) == 1:
        return np.array([v[0] - fallback / 2, v[0] + fallback / 2])
    mid = 0.5 * (v[1:] + v[:-1])
    return np.r_[v[0] - (mid[0] - v[0]), mid, v[-1] + (v[-1] - mid[-1])]


def draw_coverage(chain, placement, targets, path):
    """Draw ``placement`` (:class:`poser.core.place.Placement`) for world ``targets`` into the PNG ``path``."""
    from poser import report

    fig = Figure(1600, 900, f"Where to mount '{report.printable(chain.name)}': targets reached from each base "
                 "position")
    try:
        _draw(fig, chain, placement, targets)
    except BaseException:
        fig.abort()
        raise
    fig.save(path)


def _draw(fig, chain, pl, targets):
    from poser import report

    L = chain.units.length
    g = pl.grid
    cov = pl.coverage()
    N = pl.targets
    step = float(max(np.ptp(g.x), np.ptp(g.y), 1e-9)) / 20
    xe, ye = _edges(g.x, step if len(g.y) == 1 else np.diff(g.y).mean()), _edges(g.y, step if len(g.x) == 1
                                                                                  else np.diff(g.x).mean())
    P = np.array([t.xyz for t in targets]).reshape(-1, 3)
    lo_x, hi_x = min(xe[0], P[:, 0].min()), max(xe[-1], P[:, 0].max())
    lo_y, hi_y = min(ye[0], P[:, 1].min()), max(ye[-1], P[:, 1].max())
    pad = 0.04 * max(hi_x - lo_x, hi_y - lo_y)
    pan = Panel(fig, (24, 70, 1180, 700), (lo_x - pad, hi_x + pad), (lo_y - pad, hi_y + pad), f"base x [{L}]",
                f"base y [{L}]", "Targets reached (best over the heights and yaws searched)")
    rgb = colour(cov / max(N, 1))
    rgb[cov == 0] = (235, 235, 235)
    pan.cells(xe, ye, rgb)
    pan.points(P[:, 0], P[:, 1], TARGET, 3.0)
    spots: dict = {}  # placements at one base position (other heights or yaws) share a label: "1, 2, 4"
    for k, b in enumerate(pl.best):
        spots.setdefault((float(b.xyz[0]), float(b.xyz[1])), []).append(k + 1)
    for (x, y), ranks in reversed(list(spots.items())):
        first = ranks[0] == 1
        pan.marker(x, y, "ring", BEST if first else (90, 90, 90), 9 if first else 6,
                   label=", ".join(map(str, ranks)))
    fig.colour_bar(1250, 150, 26, 330, 0, N, f"targets reached\n(of {N})", integer=True)
    fig.legend(1230, 520, [("square", (235, 235, 235), "none reached"),
                           ("dot", TARGET, "targets, seen from above"),
                           ("ring", BEST, "best placement (1), next best (2, 3, …)")], size=12, width=340)
    best = report.placement_words(chain, pl.best[0], N, [t.name for t in targets])
    note = (f"Best: {best} Grid: {len(g.x)} × {len(g.y)} positions, "
            f"{len(g.z)} height(s), {len(g.yaw)} yaw(s). {report.PLACEMENT_NOTE} {report.STUDY_CAUTION}")
    fig.text(24, 790, 1550, 100, note, size=13)
