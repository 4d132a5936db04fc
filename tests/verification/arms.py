"""Arms invented for these checks (no commercial arm's numbers): DH tables as plain dicts (see reference.py)."""

from __future__ import annotations

from .reference import arm

R = "revolute"
P = "prismatic"


def six_offsets(**kw):
    """Six axes, spherical wrist, shoulder offset 150 and forearm step 110 (standard DH, mm/deg)."""
    return arm([
        dict(a=150, alpha=-90, d=480, min=-165, max=165),
        dict(a=600, theta=-90, min=-95, max=150),
        dict(a=110, alpha=-90, min=-130, max=155),
        dict(alpha=90, d=680, min=-185, max=185),
        dict(alpha=-90, min=-120, max=120),
        dict(d=95, min=-355, max=355),
    ], tool=((0, 0, 150), (0, 0, 0)), name="six offsets", **kw)


def six_plain(**kw):
    """Six axes, spherical wrist, no offsets at all (standard DH, mm/deg)."""
    return arm([
        dict(alpha=90, d=400, min=-170, max=170),
        dict(a=500, min=-180, max=180),
        dict(alpha=90, min=-170, max=170),
        dict(alpha=-90, d=450, min=-180, max=180),
        dict(alpha=90, min=-125, max=125),
        dict(d=80, min=-180, max=180),
    ], name="six plain", **kw)


def six_lateral(**kw):
    """Six axes, spherical wrist, a lateral shoulder offset d2 = 140 and forearm step (standard DH, mm/deg)."""
    return arm([
        dict(a=90, alpha=-90, d=420, min=-170, max=170),
        dict(a=520, d=140, theta=-90, min=-110, max=140),
        dict(a=70, alpha=-90, min=-140, max=150),
        dict(alpha=90, d=560, min=-200, max=200),
        dict(alpha=-90, min=-130, max=130),
        dict(d=70, min=-360, max=360),
    ], tool=((0, 30, 120), (0, 20, 0)), name="six lateral", **kw)


def six_modified_m_rad(**kw):
    """Six axes, spherical wrist, modified DH in metres and radians, with offsets."""
    import math

    h = math.pi / 2
    return arm([
        dict(d=0.36, min=-2.9, max=2.9),
        dict(a=0.12, alpha=-h, theta=-h, min=-1.8, max=2.5),
        dict(a=0.58, min=-2.2, max=2.7),
        dict(a=0.095, alpha=-h, d=0.62, min=-3.2, max=3.2),
        dict(alpha=h, min=-2.1, max=2.1),
        dict(alpha=-h, min=-6.2, max=6.2),
    ], convention="modified", length="m", angle="rad", tool=((0.01, 0, 0.13), (0, 0, 0.3)),
        name="six modified", **kw)


def stanford_like(**kw):
    """RRP boom with a spherical wrist (standard DH, mm/deg)."""
    return arm([
        dict(alpha=-90, d=330, min=-170, max=170),
        dict(alpha=90, d=130, min=-110, max=110),
        dict(type=P, min=250, max=950),
        dict(alpha=-90, min=-175, max=175),
        dict(alpha=90, min=-115, max=115),
        dict(d=90, min=-350, max=350),
    ], name="boom wrist", **kw)


def cylindrical(**kw):
    """Cylindrical RPP: a turn, a lift, a radial slide (standard DH, mm/deg)."""
    return arm([
        dict(d=200, min=-160, max=160),
        dict(type=P, alpha=-90, min=100, max=800),
        dict(type=P, min=200, max=700),
    ], name="cylinder", **kw)


def cartesian_wrist(**kw):
    """Cartesian PPP with a spherical wrist (standard DH, mm/deg)."""
    return arm([
        dict(type=P, alpha=-90, theta=-90, min=0, max=900),
        dict(type=P, alpha=-90, theta=-90, min=0, max=700),
        dict(type=P, min=100, max=600),
        dict(alpha=-90, min=-180, max=180),
        dict(alpha=90, min=-120, max=120),
        dict(d=60, min=-270, max=270),
    ], name="gantry wrist", **kw)


def scara_rrpr(**kw):
    """Table arm: two swings, a quill (slide), a gripper turn (standard DH, mm/deg)."""
    return arm([
        dict(a=330, d=400, min=-150, max=150),
        dict(a=270, alpha=180, min=-140, max=140),
        dict(type=P, min=0, max=220),
        dict(d=40, min=-400, max=400),
    ], name="table rrpr", **kw)


def scara_rrrp(**kw):
    """Table arm with the slide last: swing, swing, turn, quill (standard DH, mm/deg)."""
    return arm([
        dict(a=310, d=380, min=-150, max=150),
        dict(a=250, min=-145, max=145),
        dict(alpha=180, min=-360, max=360),
        dict(type=P, d=30, min=20, max=260),
    ], name="table rrrp", **kw)


def planar2(**kw):
    return arm([dict(a=400, min=-170, max=170), dict(a=300, min=-160, max=160)], name="planar two", **kw)


def planar3(**kw):
    return arm([dict(a=420, min=-170, max=170), dict(a=330, min=-165, max=165), dict(a=90, min=-180, max=180)],
               name="planar three", **kw)


def five_axis(**kw):
    """Five axes: turn, shoulder, elbow, wrist pitch, flange roll (standard DH, mm/deg)."""
    return arm([
        dict(alpha=-90, d=310, min=-170, max=170),
        dict(a=420, theta=-90, min=-100, max=135),
        dict(a=380, min=-150, max=150),
        dict(alpha=-90, theta=-90, min=-120, max=120),
        dict(d=110, min=-350, max=350),
    ], name="five axis", **kw)


def srs7(**kw):
    """Seven axes, shoulder-roll-spherical (standard DH, mm/deg)."""
    return arm([
        dict(alpha=-90, d=340, min=-170, max=170),
        dict(alpha=90, min=-120, max=120),
        dict(alpha=90, d=420, min=-170, max=170),
        dict(alpha=-90, min=-120, max=120),
        dict(alpha=-90, d=400, min=-170, max=170),
        dict(alpha=90, min=-120, max=120),
        dict(d=126, min=-175, max=175),
    ], name="srs seven", **kw)


def wide_turns(**kw):
    """six_plain with ±360° on five joints (all but the shoulder)."""
    a = six_plain(**kw)
    for i in (0, 2, 3, 4, 5):
        a["joints"][i]["min"], a["joints"][i]["max"] = -360, 360
    a["name"] = "wide turns"
    return a


CEILING = ((0, 0, 2400), (180, 0, 0))
WALL = ((0, 1500, 1000), (90, 0, 0))


# ------------------------------------------------------------------------------------------- round two
def six_round(**kw):
    """Six axes, spherical wrist, no offsets, round numbers: shoulder 350 up, upper arm 600, forearm 550, flange 100
    (standard DH, mm/deg).  J3 = 90° stretches the arm, J3 = −90° folds it; J2 = J3 = 90° puts the wrist centre
    on axis 1."""
    return arm([
        dict(alpha=90, d=350, min=-170, max=170),
        dict(a=600, min=-100, max=150),
        dict(alpha=90, min=-150, max=160),
        dict(alpha=-90, d=550, min=-190, max=190),
        dict(alpha=90, min=-120, max=120),
        dict(d=100, min=-360, max=360),
    ], name="six round", **kw)


def rail7(**kw):
    """six_round on a 2 m linear rail along world x (the rail is joint 1; standard DH, mm/deg)."""
    six = six_round()["joints"]
    kw.setdefault("base", ((0, 0, 0), (0, 90, 0)))
    return arm([dict(type=P, alpha=90, theta=-90, min=0, max=2000)] + six, name="rail seven", **kw)


def to_modified(s):
    """The same physical arm as standard-DH arm ``s`` written in modified DH: row i takes a_{i-1}, α_{i-1}; the
    last row's Tx(a_n) Rx(α_n) moves into the tool (Craig, *Introduction to Robotics*, ch. 3, the two link-frame
    conventions; from memory)."""
    import numpy as np

    from .reference import pose, rpy_of

    rows, out, prev = s["joints"], [], {"a": 0.0, "alpha": 0.0}
    for j in rows:
        m = dict(j)
        m["a"], m["alpha"] = prev["a"], prev["alpha"]
        prev = j
        out.append(m)
    unit = (lambda v: np.radians(v)) if s["angle"] == "deg" else (lambda v: np.asarray(v, float))
    back = (lambda v: np.degrees(v)) if s["angle"] == "deg" else (lambda v: np.asarray(v, float))
    T = pose((rows[-1]["a"], 0, 0), (float(unit(rows[-1]["alpha"])), 0, 0)) @ pose(s["tool"][0], unit(s["tool"][1]))
    tool = (tuple(map(float, T[:3, 3])), tuple(map(float, back(rpy_of(T[:3, :3])))))
    return arm(out, convention="modified", length=s["length"], angle=s["angle"], base=s["base"], tool=tool,
               name=s["name"] + " (modified)")


def scaled(s, f, unit):
    """Arm ``s`` with every length times ``f``, written in length unit ``unit`` (the same arm in m, or a miniature)."""
    import copy

    b = copy.deepcopy(s)
    b["length"] = unit
    for j in b["joints"]:
        j["a"] *= f
        j["d"] *= f
        if j["type"] == P:
            j["min"] *= f
            j["max"] *= f
    b["tool"] = (tuple(float(v) * f for v in b["tool"][0]), b["tool"][1])
    b["base"] = (tuple(float(v) * f for v in b["base"][0]), b["base"][1])
    return b
