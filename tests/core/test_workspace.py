"""Workspace volumes and areas against closed forms.

The closed forms are elementary geometry: the volume of a spherical shell, 4/3·π·(R_out³ − R_in³), and
Pappus' centroid theorem (a plane region of area A swept through an angle Δ about an axis in its plane at
distance c from its centroid sweeps the volume Δ·c·A) — e.g. Apostol, *Calculus* vol. 1, §2.18–2.19
(from memory).  The arms are inventions for these checks.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from poser.core.dh import DHRow, chain_from_dh
from poser.core.errors import Cancelled, PoserValueError
from poser.core.fk import fk
from poser.core.workspace import RINGS, SECTIONS, VOXELS, contains, sample_joints, section, workspace

pi = math.pi
L1, L2 = 400.0, 250.0


def rev(name, **k):
    return DHRow(name, "revolute", **k)


def pri(name, **k):
    return DHRow(name, "prismatic", **k)


def elbow_arm(j1=(-pi, pi)):
    """Shoulder on the base axis, both links turning fully: the tool sweeps a spherical shell about the shoulder."""
    return chain_from_dh([rev("j1", alpha=pi / 2, lower=j1[0], upper=j1[1]), rev("j2", a=L1, lower=-pi, upper=pi),
                          rev("j3", a=L2, lower=-pi, upper=pi)])


SHELL = 4 / 3 * pi * ((L1 + L2) ** 3 - (L1 - L2) ** 3)


def check(ws, exact, within=0.01):
    assert ws.size == pytest.approx(exact, rel=within)
    # the error estimate is honest: the true error lies within it (with a margin for the sampling)
    assert abs(ws.size - exact) <= 2.0 * ws.error + 1e-3 * exact
    assert ws.error < 0.01 * exact


def test_full_elbow_arm_sweeps_a_spherical_shell():
    ws = workspace(elbow_arm(), 200_000)
    assert ws.method == SECTIONS and not ws.planar
    check(ws, SHELL)
    assert ws.volume == ws.size and ws.area is None


def test_limiting_the_base_turn_takes_a_known_fraction_of_the_shell():
    # At joint 1 = 0 the arm sweeps the whole annulus in its vertical plane, i.e. both half-planes of the
    # section at azimuths 0 and π.  Turning joint 1 through Δ ≤ π sweeps each half through Δ: V = (Δ/π)·V_shell.
    for lo, hi in ((-pi / 4, pi / 4), (0.2, 1.2)):
        ws = workspace(elbow_arm((lo, hi)), 200_000)
        check(ws, (hi - lo) / pi * SHELL)
    # a range of π or more covers the whole shell
    check(workspace(elbow_arm((-0.5, 2.9)), 200_000), SHELL)


@pytest.mark.parametrize("j1", [(-pi, pi), (-1.0, 2.0)])
def test_offset_arm_sweeps_a_torus_by_pappus(j1):
    # A 2R arm in the vertical plane 800 mm from the base axis, links 300 and 200: its section is the
    # annulus 100 ≤ ρ ≤ 500 about (r = 800); swept through Δ: V = Δ · 800 · π(500² − 100²).
    a1, m1, m2 = 800.0, 300.0, 200.0
    arm = chain_from_dh([rev("j1", a=a1, alpha=pi / 2, lower=j1[0], upper=j1[1]), rev("j2", a=m1, lower=-pi, upper=pi),
                         rev("j3", a=m2, lower=-pi, upper=pi)])
    check(workspace(arm, 200_000), (j1[1] - j1[0]) * a1 * pi * ((m1 + m2) ** 2 - (m1 - m2) ** 2))


def test_planar_2r_sweeps_an_annulus():
    arm = chain_from_dh([rev("j1", a=L1, lower=-pi, upper=pi), rev("j2", a=L2, lower=-pi, upper=pi)])
    ws = workspace(arm, 100_000)
    assert ws.planar and ws.method == RINGS and ws.area == ws.size and ws.volume is None
    check(ws, pi * ((L1 + L2) ** 2 - (L1 - L2) ** 2))


def test_planar_2r_with_limits_sweeps_a_sector_of_the_annulus():
    # With the elbow on one side (j2 in [0, π]) each distance ρ is reached at one angle offset ψ(ρ) from
    # joint 1; joint 1 in [α, β] turns it through β − α: area = ∫ ρ (β − α) dρ = (β − α)/2 · (R_out² − R_in²).
    al, be = -0.5, 1.7
    arm = chain_from_dh([rev("j1", a=L1, lower=al, upper=be), rev("j2", a=L2, lower=0.0, upper=pi)])
    check(workspace(arm, 100_000), (be - al) / 2 * ((L1 + L2) ** 2 - (L1 - L2) ** 2))


@pytest.mark.parametrize("j1", [(-pi, pi), (-2.5, 2.5)])
def test_prismatic_boom_sweeps_a_zone_of_a_spherical_shell(j1):
    # Turret (joint 1) about z, the boom pitching about a horizontal axis through the turret axis at
    # height 0.75 m, the tool 0.40 … 1.30 m from that axis point at elevations e in [−0.6, 1.1] rad.
    # In spherical coordinates about the pivot: V = ∫ρ² dρ · ∫cos e de · Δ = Δ/3 · (r2³ − r1³)(sin e_hi − sin e_lo).
    r1, r2, elo, ehi = 0.4, 1.3, -0.6, 1.1
    tool = np.eye(4)
    tool[2, 3] = 0.05
    arm = chain_from_dh([rev("turret", d=0.75, alpha=-pi / 2, lower=j1[0], upper=j1[1]),
                         rev("pitch", alpha=pi / 2, theta=pi / 2, lower=elo, upper=ehi),
                         pri("slide", d=0.35, lower=0.0, upper=0.9)], tool=tool)
    check(workspace(arm, 200_000), (j1[1] - j1[0]) / 3 * (r2**3 - r1**3) * (math.sin(ehi) - math.sin(elo)))


def test_cartesian_arm_fills_its_box_by_voxels():
    arm = chain_from_dh([pri("x", alpha=-pi / 2, theta=-pi / 2, lower=0.0, upper=300.0),
                         pri("y", alpha=-pi / 2, theta=-pi / 2, lower=0.0, upper=200.0),
                         pri("z", lower=0.0, upper=100.0)])
    ws = workspace(arm, 100_000)
    assert ws.method == VOXELS
    check(ws, 300.0 * 200.0 * 100.0)


def test_same_seed_same_figures_and_bounds_from_the_samples():
    arm = elbow_arm((-1.0, 1.0))
    a, b = workspace(arm, 20_000), workspace(arm, 20_000)
    assert a.size == b.size and a.error == b.error and np.array_equal(a.points, b.points)
    assert np.all(a.bounds[0] >= -(L1 + L2) - 1e-9) and np.all(a.bounds[1] <= L1 + L2 + 1e-9)
    assert a.bounds[1][2] == pytest.approx(L1 + L2, rel=1e-3)


def test_kept_points_are_tool_points_with_their_dexterity():
    arm = elbow_arm()
    ws = workspace(arm, 20_000, keep=500)
    d = np.linalg.norm(ws.points, axis=1)
    assert ws.points.shape == (500, 3) and np.all(d <= L1 + L2 + 1e-6) and np.all(d >= L1 - L2 - 1e-6)
    assert ws.dexterity.shape == (500,) and np.all(ws.dexterity >= 0)
    assert ws.approach.shape == (500,) and np.all((ws.approach > 0) & (ws.approach <= 1))


def test_samples_cover_every_range_and_hold_a_share_at_the_limits():
    arm = elbow_arm((-1.0, 2.0))
    Q = sample_joints(arm, 10_000)
    assert Q.shape == (10_000, 3)
    assert Q[:, 0].min() == -1.0 and Q[:, 0].max() == 2.0
    at_limit = np.isin(Q, [-1.0, 2.0, -pi, pi]).any(axis=1)
    assert at_limit.mean() == pytest.approx(0.25, abs=0.02)


def test_contains_tells_inside_from_outside_with_a_partial_base_turn():
    arm = elbow_arm((0.2, 1.2))
    ws = workspace(arm, 100_000)
    # points at 500 mm from the shoulder: inside for azimuths in [0.2, 1.2] (and, reaching over the top,
    # [0.2 + π, 1.2 + π]); outside elsewhere; the inner hole and beyond the reach are outside
    def at(az, rho=500.0, el=0.3):
        return np.array([rho * math.cos(el) * math.cos(az), rho * math.cos(el) * math.sin(az), rho * math.sin(el)])
    inside = [at(0.7), at(0.7 + pi), at(0.35, 300.0), at(1.05, 640.0)]
    outside = [at(-0.5), at(2.0), at(0.7, 100.0), at(0.7, 700.0), at(0.7 + pi / 2)]
    got = contains(ws, np.array(inside + outside))
    assert got.tolist() == [True] * len(inside) + [False] * len(outside)
    # every sampled tool point is inside, bar a few within a cell of the boundary
    q = sample_joints(arm, 2000, seed=7)
    assert contains(ws, fk(arm, q)[:, :3, 3]).mean() > 0.99


def test_sections_outline_the_shell():
    arm = elbow_arm()
    ws = workspace(arm, 100_000)
    vert = section(ws, "vertical")
    pts = np.concatenate(vert.lines)
    rho = np.linalg.norm(pts, axis=1)
    # the vertical outline is two circles (radius 650 and 150) within a cell or two
    assert rho.max() == pytest.approx(L1 + L2, abs=3 * ws.resolution)
    assert rho.min() == pytest.approx(L1 - L2, abs=3 * ws.resolution)
    assert np.all(np.abs(pts[:, 1]) < 1e-9)  # in the plane through the axis along base x
    hor = section(ws, "horizontal", height=300.0)
    pts = np.concatenate(hor.lines)
    r = np.hypot(pts[:, 0], pts[:, 1])
    assert np.all(pts[:, 2] == 300.0)
    assert r.max() == pytest.approx(math.sqrt(650.0**2 - 300.0**2), abs=3 * ws.resolution)


def test_cancel_stops_the_work_and_errors_name_the_argument():
    seen = []

    def stop_at_half(f):
        seen.append(f)
        return f < 0.5

    with pytest.raises(Cancelled):
        workspace(elbow_arm(), 20_000, progress=stop_at_half)
    assert seen and seen[-1] >= 0.5 and seen == sorted(seen)
    with pytest.raises(PoserValueError, match="samples must be at least 1000, got 10"):
        workspace(elbow_arm(), 10)
    with pytest.raises(PoserValueError, match="plane must be"):
        section(workspace(elbow_arm(), 5000), "oblique")
