"""Forward kinematics (poser.core.fk): tool poses, frames, single and batched."""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import sympy as sp

from poser.armfile import load
from poser.core import fk as fkmod
from poser.core.chain import Chain, Joint
from poser.core.dh import DHRow, chain_from_dh, dh_matrix
from poser.core.errors import PoserValueError
from poser.core.fk import fk, frames, link_transforms
from poser.core.transforms import from_xyz_rpy, rot_x, rot_z

DEMO_DIR = Path(__file__).resolve().parents[2] / "demo_arms"
DEMO_ARMS = sorted(DEMO_DIR.glob("*.toml"))

# -- helpers ------------------------------------------------------------------


def _rows_of(spec):
    """DH rows (internal units) of an ArmSpec loaded from an arm file."""
    rad = spec.units.angle_to_rad
    rows = []
    for j in spec.joints:
        scale = rad if j.type == "revolute" else 1.0
        rows.append(
            DHRow(
                j.name,
                j.type,
                a=j.a,
                alpha=j.alpha * rad,
                d=j.d,
                theta=j.theta * rad,
                lower=j.min * scale,
                upper=j.max * scale,
            )
        )
    return rows


def _txrx(a, alpha):
    return dh_matrix(a, alpha, 0.0, 0.0, "standard")  # Tx(a) Rx(α)


def standard_to_modified(rows, base, tool):
    """Re-describe a standard-convention arm in the modified convention (same mechanism).

    Regrouping Rz(θ1)Tz(d1) · [Tx(a1)Rx(α1) Rz(θ2)Tz(d2)] · … · Tx(an)Rx(αn) gives the
    proximal rows (a_{i-1}, α_{i-1}, d_i, θ_i) and moves Tx(an)Rx(αn) into the tool
    (Craig, Introduction to Robotics, ch. 3, from memory: the two conventions attach
    frames differently to one mechanism).
    """
    out = []
    prev_a, prev_alpha = 0.0, 0.0
    for r in rows:
        out.append(
            DHRow(r.name, r.kind, a=prev_a, alpha=prev_alpha, d=r.d, theta=r.theta, lower=r.lower, upper=r.upper)
        )
        prev_a, prev_alpha = r.a, r.alpha
    return out, base, _txrx(prev_a, prev_alpha) @ tool


def modified_to_standard(rows, base, tool):
    """The inverse regrouping: the first row's Rx(α0)Tx(a0) moves into the base."""
    out = []
    for i, r in enumerate(rows):
        nxt = rows[i + 1] if i + 1 < len(rows) else DHRow("end", "revolute")
        out.append(DHRow(r.name, r.kind, a=nxt.a, alpha=nxt.alpha, d=r.d, theta=r.theta, lower=r.lower, upper=r.upper))
    return out, base @ _txrx(rows[0].a, rows[0].alpha), tool


def _q_random(chain, rng, shape=()):
    lo = np.where(chain.revolute, -np.pi, -1.0)
    hi = np.where(chain.revolute, np.pi, 1.0)
    return rng.uniform(lo, hi, shape + (chain.n,))


# -- against an independent symbolic model -------------------------------------


@pytest.mark.parametrize("convention", ["standard", "modified"])
@pytest.mark.parametrize("n, seed", [(1, 1), (2, 2), (3, 3), (4, 4), (6, 5), (6, 6), (7, 8)])
def test_fk_matches_symbolic_dh_product(convention, n, seed, sym, random_rows):
    # The DH A-matrices multiplied out symbolically (tests/core/conftest.py: standard form per
    # Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, ch. 3; modified form per Craig,
    # Introduction to Robotics, ch. 3; from memory) with a base and a tool pose given as
    # xyz + roll-pitch-yaw about fixed axes (common practice).
    rng = np.random.default_rng(seed)
    rows = random_rows(rng, n, prismatic=0.4)
    if n >= 2:  # every table of two or more rows has a sliding and a turning joint
        rows[0] = replace(rows[0], kind="revolute", lower=-np.pi, upper=np.pi)
        rows[1] = replace(rows[1], kind="prismatic", lower=-2.0, upper=2.0)
    bxyz, brpy, txyz, trpy = rng.uniform(-1, 1, 3), rng.uniform(-3, 3, 3), rng.uniform(-1, 1, 3), rng.uniform(-3, 3, 3)
    chain = chain_from_dh(rows, convention, base=from_xyz_rpy(bxyz, brpy), tool=from_xyz_rpy(txyz, trpy))
    base_s = sym.pose([sp.Float(v, 30) for v in bxyz], [sp.Float(v, 30) for v in brpy])
    tool_s = sym.pose([sp.Float(v, 30) for v in txyz], [sp.Float(v, 30) for v in trpy])
    q_s, frames_s, tool_pose = sym.chain_product(rows, convention, base_s, tool_s)
    frames_f = sp.lambdify([q_s], frames_s, "numpy")

    Q = _q_random(chain, rng, (9,))
    batched = fk(chain, Q)
    F = frames(chain, Q)
    for k, q in enumerate(Q):
        ref = np.array(tool_pose(q), dtype=float)
        np.testing.assert_allclose(fk(chain, q), ref, atol=1e-12)
        np.testing.assert_allclose(batched[k], ref, atol=1e-12)
        ref_frames = np.array([np.array(M, dtype=float) for M in frames_f(q)])
        np.testing.assert_allclose(F[k], ref_frames, atol=1e-12)


# -- textbook closed forms -------------------------------------------------------


def test_two_link_planar_closed_form(rng):
    # Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, ch. 3 (two-link planar arm):
    # x = a1 c1 + a2 c12, y = a1 s1 + a2 s12, orientation Rz(θ1 + θ2).
    a1, a2 = 0.7, 0.45
    chain = chain_from_dh([DHRow("1", "revolute", a=a1), DHRow("2", "revolute", a=a2)])
    q = rng.uniform(-np.pi, np.pi, (200, 2))
    T = fk(chain, q)
    t1, t2 = q[:, 0], q[:, 1]
    np.testing.assert_allclose(T[:, 0, 3], a1 * np.cos(t1) + a2 * np.cos(t1 + t2), atol=1e-14)
    np.testing.assert_allclose(T[:, 1, 3], a1 * np.sin(t1) + a2 * np.sin(t1 + t2), atol=1e-14)
    np.testing.assert_allclose(T[:, 2, 3], 0.0, atol=0)
    np.testing.assert_allclose(T[:, :3, :3], rot_z(t1 + t2), atol=1e-14)
    for k in range(5):
        np.testing.assert_allclose(fk(chain, q[k]), T[k], atol=1e-14)


def test_planar_demo_arm_closed_form(rng):
    # The same closed form extended to three links (Spong, Hutchinson & Vidyasagar, ch. 3):
    # x = a1 c1 + a2 c12 + a3 c123.  demo_arms/planar3.toml turns its base by roll = 90° about
    # world X, 1200 mm up, so the arm's plane is world x-z.
    spec = load(DEMO_DIR / "planar3.toml")
    chain = spec.to_chain()
    a1, a2, a3 = 450.0, 350.0, 90.0
    q_deg = rng.uniform(-120, 120, (100, 3))
    T = fk(chain, chain.q_from_user(q_deg))
    t = np.radians(q_deg)
    c1, c12, c123 = np.cos(t[:, 0]), np.cos(t[:, :2].sum(1)), np.cos(t.sum(1))
    s1, s12, s123 = np.sin(t[:, 0]), np.sin(t[:, :2].sum(1)), np.sin(t.sum(1))
    np.testing.assert_allclose(T[:, 0, 3], a1 * c1 + a2 * c12 + a3 * c123, atol=1e-9)
    np.testing.assert_allclose(T[:, 1, 3], 0.0, atol=1e-9)
    np.testing.assert_allclose(T[:, 2, 3], 1200.0 + a1 * s1 + a2 * s12 + a3 * s123, atol=1e-9)


def test_three_link_elbow_arm_closed_form(rng):
    # Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, ch. 3, the three-link elbow
    # (anthropomorphic) arm, from memory: DH rows (a, α, d) = (0, 90°, d1), (a2, 0, 0), (a3, 0, 0);
    # p = (c1 (a2 c2 + a3 c23), s1 (a2 c2 + a3 c23), d1 + a2 s2 + a3 s23),
    # R = [[c1 c23, -c1 s23, s1], [s1 c23, -s1 s23, -c1], [s23, c23, 0]].
    d1, a2, a3 = 0.4, 0.55, 0.35
    chain = chain_from_dh(
        [
            DHRow("waist", "revolute", alpha=np.pi / 2, d=d1),
            DHRow("shoulder", "revolute", a=a2),
            DHRow("elbow", "revolute", a=a3),
        ]
    )
    q = rng.uniform(-np.pi, np.pi, (300, 3))
    T = fk(chain, q)
    c1, s1 = np.cos(q[:, 0]), np.sin(q[:, 0])
    c2, s2 = np.cos(q[:, 1]), np.sin(q[:, 1])
    c23, s23 = np.cos(q[:, 1] + q[:, 2]), np.sin(q[:, 1] + q[:, 2])
    r = a2 * c2 + a3 * c23
    np.testing.assert_allclose(T[:, :3, 3], np.column_stack([c1 * r, s1 * r, d1 + a2 * s2 + a3 * s23]), atol=1e-14)
    R = np.stack(
        [
            np.column_stack([c1 * c23, -c1 * s23, s1]),
            np.column_stack([s1 * c23, -s1 * s23, -c1]),
            np.column_stack([s23, c23, np.zeros_like(c1)]),
        ],
        axis=1,
    )
    np.testing.assert_allclose(T[:, :3, :3], R, atol=1e-14)


@pytest.mark.parametrize("seed", range(6))
def test_same_arm_in_both_conventions_random(seed, random_rows, random_transform):
    # Craig, Introduction to Robotics, ch. 3 (from memory): the modified convention attaches
    # frame i at joint i instead of at the distal end of link i; for one mechanism both
    # descriptions give the same tool pose, and the same joint axes in the world.
    from poser.core.jacobian import jacobian

    rng = np.random.default_rng(100 + seed)
    n = int(rng.integers(1, 8))
    rows = random_rows(rng, n, prismatic=0.3)
    base, tool = random_transform(rng), random_transform(rng)
    std = chain_from_dh(rows, "standard", base=base, tool=tool)
    mod_rows, mod_base, mod_tool = standard_to_modified(rows, base, tool)
    mod = chain_from_dh(mod_rows, "modified", base=mod_base, tool=mod_tool)
    q = _q_random(std, rng, (50,))
    np.testing.assert_allclose(fk(mod, q), fk(std, q), atol=1e-12)
    np.testing.assert_allclose(jacobian(mod, q), jacobian(std, q), atol=1e-12)
    # and back again
    rows2, base2, tool2 = modified_to_standard(mod_rows, mod_base, mod_tool)
    std2 = chain_from_dh(rows2, "standard", base=base2, tool=tool2)
    np.testing.assert_allclose(fk(std2, q), fk(std, q), atol=1e-12)


@pytest.mark.parametrize("path", DEMO_ARMS, ids=[p.stem for p in DEMO_ARMS])
def test_same_demo_arm_in_the_other_convention(path, rng):
    # Craig, Introduction to Robotics, ch. 3 (from memory), on our demo arms: each arm is
    # re-described in the other convention and must reach the same tool pose.
    spec = load(path)
    chain = spec.to_chain()
    rows = _rows_of(spec)
    if spec.convention == "standard":
        other_rows, base, tool = standard_to_modified(rows, chain.base, chain.tool)
        other = chain_from_dh(other_rows, "modified", base=base, tool=tool)
    else:
        other_rows, base, tool = modified_to_standard(rows, chain.base, chain.tool)
        other = chain_from_dh(other_rows, "standard", base=base, tool=tool)
    q = rng.uniform(chain.lower, chain.upper, (40, chain.n))
    scale = max(1.0, np.abs(fk(chain, q)[:, :3, 3]).max())
    np.testing.assert_allclose(fk(other, q), fk(chain, q), atol=1e-12 * scale)


def test_heron6_home_pose_by_hand():
    # demo_arms/heron6.toml at all joints 0, worked out by hand from its DH table:
    # riser 300, J1 d = 520 and a = 180, upper arm 700 straight up, forearm step 130 then
    # 760 forward, flange 110 forward, torch 310 forward and 40 aside, bent 35° about y.
    chain = load(DEMO_DIR / "heron6.toml").to_chain()
    T = fk(chain, np.zeros(6))
    # Frame 6 (the flange): x = 180 + 760 + 110 = 1050, z = 300 + 520 + 700 + 130 = 1650 (at J3 = 0 the
    # 130 mm step continues the upper arm upwards), flange z axis along world +x.
    F = frames(chain, np.zeros(6))
    np.testing.assert_allclose(F[6, :3, 3], [1050.0, 0.0, 1650.0], atol=1e-9)
    np.testing.assert_allclose(F[6, :3, 2], [1.0, 0.0, 0.0], atol=1e-12)
    # the tool point: 310 along the flange z (world +x), -40 along the flange y
    flange = F[6]
    np.testing.assert_allclose(T[:3, 3], flange[:3, 3] + flange[:3, :3] @ [0.0, -40.0, 310.0], atol=1e-9)
    np.testing.assert_allclose(T[:3, :3], flange[:3, :3] @ from_xyz_rpy([0, 0, 0], [0, np.radians(35), 0])[:3, :3])


# -- batched equals single -------------------------------------------------------


def _general_chain(rng, kinds):
    """A chain with arbitrary fixed transforms (not DH): some random, some exact 90° turns."""
    joints = []
    for i, kind in enumerate(kinds):
        parts = []
        for _ in range(2):
            if rng.random() < 0.5:
                R = rot_z(rng.integers(0, 4) * np.pi / 2) @ rot_x(rng.integers(0, 4) * np.pi / 2)
                T = np.eye(4)
                T[:3, :3] = R
                T[:3, 3] = rng.choice([0.0, 1.0, -0.5], 3)
            else:
                T = from_xyz_rpy(rng.uniform(-1, 1, 3), rng.uniform(-3, 3, 3))
            parts.append(T)
        joints.append(Joint(f"j{i}", kind, parts[0], parts[1], -3.0, 3.0))
    return Chain(
        joints,
        base=from_xyz_rpy(rng.uniform(-1, 1, 3), rng.uniform(-3, 3, 3)),
        tool=from_xyz_rpy(rng.uniform(-1, 1, 3), [0.0, np.pi / 2, 0.0]),
    )


def _product_reference(chain, q):
    """base @ A_1 … A_n @ tool by plain matrix products of link_transforms."""
    A = link_transforms(chain, q)
    T = np.broadcast_to(chain.base, q.shape[:-1] + (4, 4))
    for i in range(chain.n):
        T = T @ A[..., i, :, :]
    return T @ chain.tool


CHAINS = {
    "one revolute": ["revolute"],
    "one prismatic": ["prismatic"],
    "all prismatic": ["prismatic"] * 3,
    "RPRRPR": ["revolute", "prismatic", "revolute", "revolute", "prismatic", "revolute"],
    "seven revolute": ["revolute"] * 7,
}


@pytest.mark.parametrize("kinds", CHAINS.values(), ids=CHAINS.keys())
def test_general_chains_batched_and_single_match_matrix_products(kinds, rng):
    for _ in range(4):
        chain = _general_chain(rng, kinds)
        q = rng.uniform(-3, 3, (257, chain.n))
        ref = _product_reference(chain, q)
        np.testing.assert_allclose(fk(chain, q), ref, atol=1e-12)
        for k in range(0, 257, 37):
            np.testing.assert_allclose(fk(chain, q[k]), ref[k], atol=1e-12)


@pytest.mark.parametrize("kinds", CHAINS.values(), ids=CHAINS.keys())
def test_general_chains_threaded_batches(kinds, rng):
    # above the threading threshold and not a multiple of the chunk size
    chain = _general_chain(rng, kinds)
    N = 2 * fkmod._PARALLEL_MIN + 3 * fkmod.CHUNK // 2 + 1
    q = rng.uniform(-3, 3, (N, chain.n))
    T = fk(chain, q)
    np.testing.assert_allclose(T, _product_reference(chain, q), atol=1e-12)
    for k in (0, fkmod.CHUNK - 1, fkmod.CHUNK, N - 1):
        np.testing.assert_allclose(T[k], fk(chain, q[k]), atol=1e-12)


@pytest.mark.parametrize(
    "lead",
    [(1,), (7,), (fkmod.CHUNK - 1,), (fkmod.CHUNK + 3,), (2 * fkmod._PARALLEL_MIN + 13,), (2, 3), (3, 1, 5), (0,)],
    ids=["N=1", "N=7", "CHUNK-1", "CHUNK+3", "threaded", "(2,3)", "(3,1,5)", "N=0"],
)
def test_batched_equals_single(lead, rng):
    spec = load(DEMO_DIR / "heron6.toml")
    chain = spec.to_chain()
    q = rng.uniform(chain.lower, chain.upper, lead + (chain.n,))
    T = fk(chain, q)
    assert T.shape == lead + (4, 4)
    flat_q, flat_T = q.reshape(-1, chain.n), T.reshape(-1, 4, 4)
    np.testing.assert_array_equal(flat_T[:, 3], np.tile([0.0, 0.0, 0.0, 1.0], (len(flat_T), 1)))
    picks = sorted(set(np.linspace(0, max(len(flat_q) - 1, 0), 25).astype(int))) if len(flat_q) else []
    for k in picks:
        np.testing.assert_allclose(flat_T[k], fk(chain, flat_q[k]), atol=1e-10)
    if len(flat_q):
        np.testing.assert_allclose(flat_T, _product_reference(chain, flat_q), atol=1e-9)


def test_batched_equals_single_for_every_demo_arm(demo_arm_path, rng):
    chain = load(demo_arm_path).to_chain()
    q = rng.uniform(chain.lower, chain.upper, (fkmod.CHUNK + 5, chain.n))
    T = fk(chain, q)
    for k in range(0, len(q), 411):
        np.testing.assert_allclose(T[k], fk(chain, q[k]), atol=1e-9)
    np.testing.assert_allclose(T, _product_reference(chain, q), atol=1e-9)
    assert chain.fk(q[0]).shape == (4, 4)
    np.testing.assert_array_equal(chain.fk(q[0]), fk(chain, q[0]))


def test_threaded_and_serial_paths_agree(rng, monkeypatch):
    chain = load(DEMO_DIR / "lark7.toml").to_chain()
    q = rng.uniform(chain.lower, chain.upper, (fkmod._PARALLEL_MIN * 2 + 1, chain.n))
    threaded = fk(chain, q)
    monkeypatch.setattr(fkmod, "_workers", lambda: 1)
    serial = fk(chain, q)
    np.testing.assert_array_equal(threaded, serial)


def test_fk_out_argument_and_input_untouched(rng):
    chain = load(DEMO_DIR / "quill4.toml").to_chain()
    q = rng.uniform(chain.lower, chain.upper, (4, 5, chain.n))
    q_copy = q.copy()
    out = np.full((4, 5, 4, 4), np.nan)
    res = fk(chain, q, out=out)
    assert res is out
    np.testing.assert_array_equal(out, fk(chain, q))
    np.testing.assert_array_equal(q, q_copy)
    # one configuration into a given (4, 4)
    out1 = np.zeros((4, 4))
    assert fk(chain, q[0, 0], out=out1) is out1
    np.testing.assert_array_equal(out1, fk(chain, q[0, 0]))
    # an out that cannot receive the result in place is refused, never silently ignored
    for bad in (
        np.zeros((5, 4, 4, 4)).transpose(1, 0, 2, 3),
        np.zeros((4, 5, 4, 4), dtype=np.float32),
        np.zeros((20, 4, 4)),
    ):
        with pytest.raises(
            PoserValueError, match=r"out must be a writeable C-contiguous float64 array of shape \(4, 5, 4, 4\)"
        ):
            fk(chain, q, out=bad)
    # integer joint values are accepted
    np.testing.assert_allclose(fk(chain, [0, 0, 10, 0]), fk(chain, np.array([0.0, 0.0, 10.0, 0.0])))


# -- frames ----------------------------------------------------------------------


@pytest.mark.parametrize("convention", ["standard", "modified"])
def test_frames_base_first_tool_last_and_products_of_a_matrices(convention, rng, random_rows, random_transform):
    rows = random_rows(rng, 5, prismatic=0.4)
    chain = chain_from_dh(rows, convention, base=random_transform(rng), tool=random_transform(rng))
    q = _q_random(chain, rng, (3, 4))
    F = frames(chain, q)
    assert F.shape == (3, 4, chain.n + 2, 4, 4)
    np.testing.assert_array_equal(F[..., 0, :, :], np.broadcast_to(chain.base, (3, 4, 4, 4)))
    np.testing.assert_allclose(F[..., -1, :, :], fk(chain, q), atol=1e-12)
    A = link_transforms(chain, q)
    T = np.broadcast_to(chain.base, (3, 4, 4, 4))
    for i in range(chain.n):
        T = T @ A[..., i, :, :]
        np.testing.assert_allclose(F[..., i + 1, :, :], T, atol=1e-13)
    np.testing.assert_allclose(F[..., -1, :, :], T @ chain.tool, atol=1e-13)
    # one configuration: (n + 2, 4, 4)
    assert frames(chain, q[0, 0]).shape == (chain.n + 2, 4, 4)
    np.testing.assert_allclose(frames(chain, q[0, 0]), F[0, 0], atol=1e-15)


def test_frame_i_is_the_dh_frame_of_its_convention():
    # For a modified table, frame i sits on joint i's axis: its origin does not move when joint i turns
    # (Craig, Introduction to Robotics, ch. 3, from memory); for a standard table frame i sits at the far
    # end of link i, so it swings by a_i when joint i turns (Spong, Hutchinson & Vidyasagar, ch. 3).
    rows = [DHRow("1", "revolute", a=0.5), DHRow("2", "revolute", a=0.3)]
    mod = chain_from_dh(rows, "modified")  # here a = 0.5 is a_0 and a = 0.3 is a_1
    std = chain_from_dh(rows, "standard")
    for t in (0.0, 0.7, -2.0):
        np.testing.assert_allclose(frames(mod, [t, 0.0])[1, :3, 3], [0.5, 0.0, 0.0], atol=1e-15)
        np.testing.assert_allclose(frames(mod, [0.0, t])[2, :3, 3], [0.8, 0.0, 0.0], atol=1e-15)
        np.testing.assert_allclose(frames(std, [t, 0.0])[1, :3, 3], [0.5 * np.cos(t), 0.5 * np.sin(t), 0], atol=1e-15)


# -- shapes ----------------------------------------------------------------------


@pytest.mark.parametrize("fn", [fk, frames, link_transforms], ids=["fk", "frames", "link_transforms"])
def test_wrong_shapes_are_refused_with_a_clear_message(fn):
    chain = load(DEMO_DIR / "heron6.toml").to_chain()
    with pytest.raises(PoserValueError, match=r"^q must have shape \(\.\.\., 6\), got shape \(3,\)$"):
        fn(chain, np.zeros(3))
    with pytest.raises(PoserValueError, match=r"^q must have shape \(\.\.\., 6\), got shape \(\)$"):
        fn(chain, 0.5)
    with pytest.raises(PoserValueError, match=r"^q must have shape \(\.\.\., 6\), got shape \(10, 7\)$"):
        fn(chain, np.zeros((10, 7)))
    with pytest.raises(PoserValueError, match=r"q_user must have shape \(\.\.\., 6\), got shape \(2,\)"):
        chain.q_from_user([1.0, 2.0])


def test_the_arm_size_depends_on_the_arm_not_on_its_description():
    """The same physical arm described in the standard and in the modified DH convention (converted by
    poser.armfile.convert_convention, which keeps every tool pose) has one size, so tolerances and
    condition numbers do not change with the description (common practice: a characteristic length
    makes a Jacobian's condition number unit-consistent)."""
    from pathlib import Path

    from poser.armfile import convert_convention, load
    from poser.core.jacobian import condition_number

    for path in sorted((Path(__file__).resolve().parents[2] / "demo_arms").glob("*.toml")):
        spec = load(path)
        other = "modified" if spec.convention == "standard" else "standard"
        a, b = spec.to_chain(), convert_convention(spec, other).to_chain()
        assert a.scale == pytest.approx(b.scale, rel=1e-12), path.name
        q = a.home
        np.testing.assert_allclose(a.fk(q), b.fk(q), atol=1e-9 * a.scale)
        assert condition_number(a, q) == pytest.approx(condition_number(b, q), rel=1e-9), path.name


# -- the compiled backend ------------------------------------------------------------------------


def _random_chain(seed, n=6):
    """A random DH chain (our own numbers), revolute and prismatic joints mixed, with base and tool."""
    rng = np.random.default_rng(seed)
    rows = []
    for i in range(n):
        kind = "prismatic" if rng.random() < 0.3 else "revolute"
        lo, hi = (-3.0, 3.0) if kind == "revolute" else (0.0, 500.0)
        rows.append(DHRow(f"J{i + 1}", kind, a=float(rng.uniform(-400, 400)), alpha=float(rng.uniform(-3, 3)),
                          d=float(rng.uniform(-300, 300)), theta=float(rng.uniform(-3, 3)), lower=lo, upper=hi))
    base = from_xyz_rpy(rng.uniform(-500, 500, 3), rng.uniform(-3, 3, 3))
    tool = from_xyz_rpy(rng.uniform(-100, 100, 3), rng.uniform(-3, 3, 3))
    return chain_from_dh(rows, "standard" if seed % 2 else "modified", base=base, tool=tool)


def test_the_compiled_backend_gives_the_numpy_backends_poses(tmp_path, monkeypatch):
    """Large batches go through the compiled loop (numba); it must give the generated numpy kernel's poses
    to rounding, on every demo arm and on random arms with slides, wide angles and any convention."""
    from poser.core import _compiled

    monkeypatch.setenv("POSER_CACHE_DIR", str(tmp_path))
    assert _compiled.available(), _compiled.problem()
    arms = [load(p).to_chain() for p in sorted((Path(__file__).resolve().parents[2] / "demo_arms").glob("*.toml"))]
    arms += [_random_chain(s, n) for s, n in ((1, 6), (2, 7), (3, 3), (4, 1), (5, 9))]
    N = fkmod.COMPILED_MIN
    for chain in arms:
        rng = np.random.default_rng(7)
        q = rng.uniform(chain.lower, chain.upper, size=(N, chain.n))
        q[:100] *= 40.0  # angles of many turns too
        assert fkmod._backend(chain, N) is not None and fkmod._backend(chain, N - 1) is None
        big = fk(chain, q)
        small = np.concatenate([fk(chain, q[s : s + 1000]) for s in range(0, N, 1000)])  # the numpy kernel
        np.testing.assert_allclose(big, small, rtol=0, atol=2e-15 * chain.scale * 40)
        assert np.array_equal(big[:, 3], np.broadcast_to([0.0, 0.0, 0.0, 1.0], (N, 4)))
    assert sorted(p.suffix for p in tmp_path.glob("kernels/fk_*.py")) != []  # the generated modules are kept


def test_the_compiled_sine_and_cosine_are_accurate():
    """The vectorisable sincos of the compiled loop against numpy's sin and cos (the C library's, correctly
    rounded to within 1 ulp): within 2.3e-16 over ±700 rad and at the quadrant boundaries."""
    import numba

    from poser.core._fkkernel import SINCOS_SOURCE

    ns = {"numba": numba, "np": np}
    exec(SINCOS_SOURCE, ns)
    sincos = ns["sincos"]

    @numba.njit(fastmath={"contract"})
    def both(x, s, c):
        for i in range(x.size):
            s[i], c[i] = sincos(x[i])

    rng = np.random.default_rng(3)
    k = np.arange(-400, 401)
    x = np.concatenate([rng.uniform(-700, 700, 1_000_000), rng.uniform(-1, 1, 100_000) * 1e-3, k * np.pi / 4,
                        np.nextafter(k * np.pi / 4, np.inf), np.nextafter(k * np.pi / 4, -np.inf), [0.0, -0.0]])
    s, c = np.empty_like(x), np.empty_like(x)
    both(x, s, c)
    assert np.max(np.abs(s - np.sin(x))) <= 2.3e-16
    assert np.max(np.abs(c - np.cos(x))) <= 2.3e-16


def test_without_numba_every_batch_takes_the_numpy_backend(monkeypatch):
    from poser.core import _compiled

    monkeypatch.setenv("POSER_NO_COMPILE", "1")
    chain = _random_chain(11)  # a new chain: nothing compiled for it yet
    assert not _compiled.available() and _compiled.problem() == "switched off by POSER_NO_COMPILE"
    assert fkmod._backend(chain, 10 * fkmod.COMPILED_MIN) is None
    q = np.zeros((fkmod.COMPILED_MIN, chain.n))
    np.testing.assert_allclose(fk(chain, q), np.broadcast_to(chain.fk(np.zeros(chain.n)), (len(q), 4, 4)),
                               atol=1e-12 * chain.scale)
