"""Geometric Jacobian, manipulability, condition number, limit margins (poser.core.jacobian)."""

from pathlib import Path

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

from poser.armfile import load
from poser.core.dh import DHRow, chain_from_dh
from poser.core.errors import PoserValueError
from poser.core.fk import fk, frames
from poser.core.jacobian import condition_number, jacobian, joint_axes, limit_margins, manipulability, task_space

DEMO_DIR = Path(__file__).resolve().parents[2] / "demo_arms"


def numeric_jacobian(chain, q, h):
    """Central finite differences of FK (common practice): linear rows from the tool position,
    angular rows from the world-frame rotation increment R(q + h) R(q - h)^T ≈ exp(2h [ω]x)."""
    n = chain.n
    J = np.zeros((6, n))
    for k in range(n):
        dq = np.zeros(n)
        dq[k] = h
        Tp, Tm = fk(chain, q + dq), fk(chain, q - dq)
        J[:3, k] = (Tp[:3, 3] - Tm[:3, 3]) / (2 * h)
        J[3:, k] = Rotation.from_matrix(Tp[:3, :3] @ Tm[:3, :3].T).as_rotvec() / (2 * h)
    return J


@pytest.mark.parametrize("convention", ["standard", "modified"])
@pytest.mark.parametrize("seed", range(4))
def test_jacobian_matches_central_differences_random_arms(convention, seed, random_rows, random_transform):
    # Geometric Jacobian (Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, ch. 4, from memory):
    # column k = [z × (p - o); z] for a revolute joint, [z; 0] for a prismatic one.  Checked against
    # central differences of FK, which knows nothing of axes.
    rng = np.random.default_rng(seed)
    rows = random_rows(rng, int(rng.integers(2, 8)), prismatic=0.4)
    chain = chain_from_dh(rows, convention, base=random_transform(rng), tool=random_transform(rng))
    for q in rng.uniform(-2.5, 2.5, (5, chain.n)):
        J = jacobian(chain, q)
        assert J.shape == (6, chain.n)
        np.testing.assert_allclose(J, numeric_jacobian(chain, q, 1e-6), atol=2e-8)
    # prismatic joints never rotate the tool
    assert np.all(jacobian(chain, q)[3:, ~chain.revolute] == 0.0)


def test_jacobian_matches_central_differences_demo_arms(demo_arm_path, rng):
    chain = load(demo_arm_path).to_chain()
    scale = max(1.0, np.abs(fk(chain, chain.home)[:3, 3]).max())
    for q in rng.uniform(chain.lower, chain.upper, (4, chain.n)):
        J = jacobian(chain, q)
        # central differences in internal units (rad, arm length unit); error O(h²)
        np.testing.assert_allclose(J, numeric_jacobian(chain, q, 1e-6), atol=1e-8 * scale)


def test_batched_jacobian_equals_single(rng):
    chain = load(DEMO_DIR / "lark7.toml").to_chain()
    q = rng.uniform(chain.lower, chain.upper, (3, 4, chain.n))
    J = jacobian(chain, q)
    assert J.shape == (3, 4, 6, 7)
    for i in range(3):
        for k in range(4):
            np.testing.assert_allclose(J[i, k], jacobian(chain, q[i, k]), atol=1e-12)
    np.testing.assert_allclose(chain.jacobian(q[0, 0]), J[0, 0], atol=1e-12)


def test_joint_axes_are_the_dh_z_axes():
    # Standard convention: joint i turns about z_{i-1}; modified: about z_i (Craig, Introduction to
    # Robotics, ch. 3; Spong, Hutchinson & Vidyasagar, ch. 3; from memory).
    rows = [DHRow("1", "revolute", a=0.3, alpha=np.pi / 2, d=0.2), DHRow("2", "prismatic", a=0.1, alpha=-0.4, d=0.1)]
    q = np.array([0.3, 0.05])
    std = chain_from_dh(rows, "standard")
    o, z, F = joint_axes(std, q)
    np.testing.assert_allclose(z, F[:2, :3, 2], atol=1e-15)
    np.testing.assert_allclose(o, F[:2, :3, 3], atol=1e-15)
    mod = chain_from_dh(rows, "modified")
    o, z, F = joint_axes(mod, q)
    np.testing.assert_allclose(z, F[1:3, :3, 2], atol=1e-15)
    # the returned origin is a point of the axis (here before the offset d along it)
    np.testing.assert_allclose(np.cross(o - F[1:3, :3, 3], z), 0.0, atol=1e-15)


def test_manipulability_is_sqrt_det_j_jt_over_the_task_space(rng):
    # Yoshikawa, "Manipulability of robotic mechanisms", Int. J. Robotics Research, 1985 (from memory):
    # w = sqrt(det(J J^T)) of the Jacobian of the task the arm controls — the full pose for six or more
    # axes (a square J: |det J|), the position for a three-axis positioning arm (|det J_v|).
    for name, rows in (("heron6.toml", slice(0, 6)), ("lark7.toml", slice(0, 6)), ("boom3.toml", slice(0, 3))):
        chain = load(DEMO_DIR / name).to_chain()
        q = rng.uniform(chain.lower, chain.upper, (6, chain.n))
        J = jacobian(chain, q)[:, rows, :]
        w = manipulability(chain, q)
        assert w.shape == (6,)
        ref = np.sqrt(np.linalg.det(J @ np.swapaxes(J, -1, -2)))
        np.testing.assert_allclose(w, ref, rtol=1e-8)
        np.testing.assert_allclose(manipulability(chain, J=jacobian(chain, q)), ref, rtol=1e-8)


def test_task_spaces_and_units_of_the_demo_arms():
    expect = {
        "heron6.toml": ("full pose", 6, "mm³"),
        "lark7.toml": ("full pose", 6, "m³"),
        "wren6.toml": ("full pose", 6, "mm³"),
        "boom3.toml": ("position", 3, "m²"),  # two turns (m each) and a slide (m per m)
        "planar3.toml": ("in-plane position and turn", 3, "mm²"),
        "quill4.toml": ("position and turn about the joint axes", 4, "mm²"),
    }
    for name, (words, rank, unit) in expect.items():
        chain = load(DEMO_DIR / name).to_chain()
        ts = task_space(chain)
        assert (ts.name, ts.rank, ts.unit(chain.units.length)) == (words, rank, unit)


def test_planar_two_link_manipulability_is_the_textbook_closed_form(rng):
    # Yoshikawa 1985 (the two-link example, from memory): w = |l1 l2 sin θ2|; zero stretched out or folded.
    for l1, l2 in ((0.7, 0.4), (300.0, 200.0)):
        chain = chain_from_dh([DHRow("1", "revolute", a=l1), DHRow("2", "revolute", a=l2)])
        q = rng.uniform(-np.pi, np.pi, (50, 2))
        np.testing.assert_allclose(manipulability(chain, q), np.abs(l1 * l2 * np.sin(q[:, 1])), rtol=1e-10, atol=1e-14)
        for stretched in ([0.3, 0.0], [1.2, np.pi], [-2.0, -np.pi]):
            assert manipulability(chain, stretched) == 0.0
            assert condition_number(chain, stretched) == np.inf
    # the same arm in mm and in m: length² scales by exactly 10⁶
    mm = chain_from_dh([DHRow("1", "revolute", a=700.0), DHRow("2", "revolute", a=400.0)])
    m = chain_from_dh([DHRow("1", "revolute", a=0.7), DHRow("2", "revolute", a=0.4)])
    q = rng.uniform(-np.pi, np.pi, (20, 2))
    np.testing.assert_allclose(manipulability(mm, q) / manipulability(m, q), 1e6, rtol=1e-12)
    np.testing.assert_allclose(condition_number(mm, q), condition_number(m, q), rtol=1e-9)


def test_planar_three_link_manipulability_in_position_and_turn(rng):
    # For (x, y, φ) of a planar 3R arm the Jacobian's determinant is l1 l2 sin θ2 — the third link only
    # shifts the point (a two-line derivation; Siciliano et al., sec. 3.3, from memory).
    rows = [DHRow("1", "revolute", a=0.5), DHRow("2", "revolute", a=0.35), DHRow("3", "revolute", a=0.1)]
    chain = chain_from_dh(rows)
    q = rng.uniform(-np.pi, np.pi, (40, 3))
    np.testing.assert_allclose(manipulability(chain, q), np.abs(0.5 * 0.35 * np.sin(q[:, 1])), rtol=1e-10, atol=1e-14)
    assert manipulability(chain, [0.3, 0.0, 1.0]) == 0.0


def test_elbow_arm_position_jacobian_determinant(rng):
    # Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, ch. 4 (elbow manipulator singularities,
    # from memory): det J_v = -a2 a3 s3 (a2 c2 + a3 c23); zero with the elbow stretched or folded (s3 = 0)
    # and with the wrist point on the base axis (a2 c2 + a3 c23 = 0).
    d1, a2, a3 = 0.4, 0.55, 0.35
    chain = chain_from_dh(
        [DHRow("1", "revolute", alpha=np.pi / 2, d=d1), DHRow("2", "revolute", a=a2), DHRow("3", "revolute", a=a3)]
    )
    assert task_space(chain).name == "position"
    q = rng.uniform(-np.pi, np.pi, (100, 3))
    Jv = jacobian(chain, q)[:, :3, :]
    c2, c23, s3 = np.cos(q[:, 1]), np.cos(q[:, 1] + q[:, 2]), np.sin(q[:, 2])
    np.testing.assert_allclose(np.linalg.det(Jv), -a2 * a3 * s3 * (a2 * c2 + a3 * c23), atol=1e-14)
    np.testing.assert_allclose(manipulability(chain, q), np.abs(a2 * a3 * s3 * (a2 * c2 + a3 * c23)), atol=1e-14)
    assert manipulability(chain, [0.4, 0.3, 0.0]) == 0.0
    assert condition_number(chain, [0.4, 0.3, 0.0]) == np.inf


def test_manipulability_zero_with_the_elbow_stretched_out_heron6():
    # Elbow singularity (Spong, Hutchinson & Vidyasagar, ch. 4, from memory): the wrist centre lies on the
    # line of the upper arm.  For demo_arms/heron6.toml the wrist centre sits at Rz(θ3)·(130, 760) from the
    # elbow in the upper arm's frame, so the arm is stretched at θ3 = -atan2(760, 130) ≈ -80.3°.
    chain = load(DEMO_DIR / "heron6.toml").to_chain()
    t3 = -np.arctan2(760.0, 130.0)
    q_bent = chain.q_from_user([10.0, 30.0, 0.0, 20.0, 40.0, 50.0])
    q_stretched = q_bent.copy()
    q_stretched[2] = t3
    w_bent = manipulability(chain, q_bent)
    w_stretched = manipulability(chain, q_stretched)
    assert w_bent > 1e6  # mm-scale arm: a healthy pose has a large measure (mm³)
    assert w_stretched < 1e-12 * w_bent
    assert condition_number(chain, q_stretched) > 1e12
    # just off the singularity the measure grows again, linearly in the distance
    q_near = q_stretched.copy()
    q_near[2] += 1e-3
    w_near = manipulability(chain, q_near)
    assert 1e-8 * w_bent < w_near < 1e-1 * w_bent
    # the stretched pose puts the wrist centre (frame 4 origin) on the line through J2 and J3
    F = frames(chain, q_stretched)
    o1, o2, wc = F[1, :3, 3], F[2, :3, 3], F[4, :3, 3]
    assert np.linalg.norm(np.cross(o2 - o1, wc - o1)) / np.linalg.norm(o2 - o1) < 1e-9


def test_condition_number_is_infinite_at_an_exact_singularity():
    # Two-link planar arm stretched out: the planar position Jacobian [[0, 0], [a1 + a2, a2]] is singular.
    chain = chain_from_dh([DHRow("1", "revolute", a=1.0), DHRow("2", "revolute", a=0.5)])
    assert manipulability(chain, [0.0, 0.0]) == 0.0
    assert condition_number(chain, [0.0, 0.0]) == np.inf
    assert condition_number(chain, [0.0, np.pi / 2]) < 10


def test_limit_margins():
    rows = [
        DHRow("r", "revolute", lower=-1.0, upper=2.0),
        DHRow("p", "prismatic", lower=0.0, upper=0.5),
    ]
    chain = chain_from_dh(rows)
    q = np.array([[0.5, 0.25], [-1.0, 0.5], [2.5, -0.1], [1.9, 0.05]])
    margin, fraction = limit_margins(chain, q)
    np.testing.assert_allclose(margin, [[1.5, 0.25], [0.0, 0.0], [-0.5, -0.1], [0.1, 0.05]], atol=1e-15)
    np.testing.assert_allclose(fraction, margin / np.array([3.0, 0.5]), atol=1e-15)
    assert fraction[0, 0] == pytest.approx(0.5) and fraction[0, 1] == pytest.approx(0.5)
    m1, f1 = limit_margins(chain, q[0])
    assert m1.shape == f1.shape == (2,)


def test_wrong_shapes_are_refused():
    chain = load(DEMO_DIR / "boom3.toml").to_chain()
    with pytest.raises(PoserValueError, match=r"^q must have shape \(\.\.\., 3\), got shape \(4,\)$"):
        jacobian(chain, np.zeros(4))
    with pytest.raises(PoserValueError, match=r"^q must have shape \(\.\.\., 3\), got shape \(2, 2\)$"):
        limit_margins(chain, np.zeros((2, 2)))
    with pytest.raises(PoserValueError, match=r"^J must have shape \(\.\.\., 6, 3\), got shape \(6,\)$"):
        manipulability(chain, J=np.zeros(6))
    with pytest.raises(PoserValueError, match=r"^q must have shape \(\.\.\., 3\), got shape \(\)$"):
        condition_number(chain, 1.0)
    with pytest.raises(PoserValueError, match="give q"):
        manipulability(chain)
