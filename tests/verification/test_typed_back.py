"""What `poser ik` prints, typed back in: the nearest reachable point must be reached, joint values must be the
ones solved (to the tolerance), and the JSON must carry the same numbers as the text.

The nearest reachable point is the closest approach's tool pose; typing it back in must reach (the
project's own description of the quantity).  Tolerances: Poser's own ``result.tolerance`` (a fraction of
the arm size for position, radians for orientation).
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from . import arms
from . import poserside as ps
from . import reference as ref

NEAREST = re.compile(r"Nearest reachable point: ([-\d.e+, ]+) (mm|m|in) with the tool at rpy ([-\d.e+, ]+) (deg|rad)")

# (arm, target xyz in arm units, rpy or None): every target is out of reach
FAR = {
    "six_plain mm": (arms.six_plain(), (3000, 200, 500), None),
    "six_plain mm, pose": (arms.six_plain(), (3000, 200, 500), (0, 90, 0)),
    "planar2 m": (arms.scaled(arms.planar2(), 1e-3, "m"), (0.9, 0.1, 0), None),
    "five_axis m": (arms.scaled(arms.five_axis(), 1e-3, "m"), (2, 0.1, 0.3), None),
    "five_axis mm, pose": (arms.five_axis(), (2000, 300, 500), (10, 80, 30)),
    "six modified m rad, pose": (arms.six_modified_m_rad(), (3, 1, 1), (0.1, 1.5, 0.2)),
    "planar2 miniature mm": (arms.scaled(arms.planar2(), 1e-3, "mm"), (0.9, 0.1, 0), None),
}


def _args(xyz, rpy):
    return ["--xyz", ps.csv(xyz)] + (["--rpy", ps.csv(rpy)] if rpy is not None else [])


@pytest.mark.parametrize("case", sorted(FAR))
def test_nearest_point_from_json_typed_back_is_reached(case):
    a, xyz, rpy = FAR[case]
    code, js, err = ps.cli_json(a, "ik", *_args(xyz, rpy))
    assert code == 1 and js["nearest_point"] is not None
    back, _, _ = ps.cli(a, "ik", *_args(js["nearest_point"], None if rpy is None else js["nearest_rpy"]))
    assert back == 0


@pytest.mark.parametrize("case", sorted(FAR))
def test_nearest_point_as_printed_typed_back_is_reached(case):
    a, xyz, rpy = FAR[case]
    code, out, err = ps.cli(a, "ik", *_args(xyz, rpy))
    m = NEAREST.search(out)
    assert code == 1 and m, out[-400:]
    args = ["--xyz", m.group(1).replace(" ", "")] + (["--rpy", m.group(3).replace(" ", "")] if rpy else [])
    back, out2, _ = ps.cli(a, "ik", *args)
    assert back == 0, out2.splitlines()[-1]


def test_joint_values_printed_by_ik_typed_into_fk_reach_the_target():
    a = arms.scaled(arms.cylindrical(), 1e-3, "m")
    q_user = [30, 0.3456789, 0.4567891]
    T = ref.fk(a, ref.to_internal(a, q_user))
    code, out, err = ps.cli(a, "ik", "--xyz", ps.csv(T[:3, 3]))
    assert code == 0
    row = next(line for line in out.splitlines() if line.startswith("1 "))
    printed = [float(v) for v in row.split()[1:4]]
    res = ps.solve(a, T[:3, 3], None)
    pe = ref.errors(a, ref.to_internal(a, printed), T[:3, 3])[0]
    assert pe <= res.tolerance[0], f"printed {printed} misses by {pe:.3g} m (tolerance {res.tolerance[0]:.3g} m)"


@pytest.mark.parametrize("name,q_user", [("six_round", [20, 40, 30, 10, 30, 15]), ("scara_rrpr", [30, 40, 100, 200]),
                                         ("cylindrical", [-40, 300, 450]), ("srs7", [10, 30, 20, 40, 20, 30, 10])])
def test_json_and_text_carry_the_same_branches(name, q_user):
    a = getattr(arms, name)()
    T = ref.fk(a, ref.to_internal(a, q_user))
    R = T[:3, :3] if len(q_user) >= 4 else None
    args = ["--xyz", ps.csv(T[:3, 3])] + (["--rpy", ps.csv(np.degrees(ref.rpy_of(R)))] if R is not None else [])
    code, out, err = ps.cli(a, "ik", *args)
    code_j, js, _ = ps.cli_json(a, "ik", *args)
    assert code == code_j == 0
    rows = [line for line in out.splitlines() if re.match(r"^\d+ ", line)]
    assert len(rows) == js["listed"] == len(js["branches"])
    n = len(q_user)
    for line, jb in zip(rows, js["branches"]):
        cells = line.split()
        assert np.allclose([float(c) for c in cells[1:1 + n]], jb["joints"], atol=5e-4 + 1e-9)
        assert jb["configuration"] in line
        manip = float(cells[1 + n + 2])  # after the position and orientation errors
        assert abs(manip - jb["manipulability"]) <= 1e-3 * abs(jb["manipulability"]) + 1e-12
    m = re.search(r"\((\d+) listed of (\d+) found", out)
    assert m and int(m.group(1)) == js["listed"] and int(m.group(2)) == js["branch_count"]
