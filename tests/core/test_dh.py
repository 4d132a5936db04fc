"""DH A-matrices and chains built from DH tables (poser.core.dh)."""

import numpy as np
import pytest
import sympy as sp

from poser.core.chain import Chain, Joint
from poser.core.dh import DHRow, chain_from_dh, dh_matrix
from poser.core.errors import PoserValueError
from poser.core.fk import link_transforms

a, alpha, d, theta = sp.symbols("a alpha d theta", real=True)


def test_standard_a_matrix_closed_form(sym):
    # Spong, Hutchinson & Vidyasagar, Robot Modeling and Control, ch. 3 (from memory):
    # A_i = Rot_z,θ Trans_z,d Trans_x,a Rot_x,α written out element by element.
    ct, st, ca, sa = sp.cos(theta), sp.sin(theta), sp.cos(alpha), sp.sin(alpha)
    printed = sp.Matrix(
        [
            [ct, -st * ca, st * sa, a * ct],
            [st, ct * ca, -ct * sa, a * st],
            [0, sa, ca, d],
            [0, 0, 0, 1],
        ]
    )
    assert sp.simplify(sym.a_matrix(a, alpha, d, theta, "standard") - printed) == sp.zeros(4, 4)


def test_modified_a_matrix_closed_form(sym):
    # Craig, Introduction to Robotics, ch. 3 (from memory): the link transform
    # T_{i-1→i} = Rx(α_{i-1}) Dx(a_{i-1}) Rz(θ_i) Dz(d_i) written out element by element.
    ct, st, ca, sa = sp.cos(theta), sp.sin(theta), sp.cos(alpha), sp.sin(alpha)
    printed = sp.Matrix(
        [
            [ct, -st, 0, a],
            [st * ca, ct * ca, -sa, -sa * d],
            [st * sa, ct * sa, ca, ca * d],
            [0, 0, 0, 1],
        ]
    )
    assert sp.simplify(sym.a_matrix(a, alpha, d, theta, "modified") - printed) == sp.zeros(4, 4)


@pytest.mark.parametrize("convention", ["standard", "modified"])
def test_dh_matrix_matches_symbolic_and_broadcasts(convention, sym, rng):
    f = sp.lambdify([a, alpha, d, theta], sym.a_matrix(a, alpha, d, theta, convention), "numpy")
    A = rng.uniform(-2, 2, (5, 1))
    AL = rng.uniform(-np.pi, np.pi, (1, 3))
    D = rng.uniform(-2, 2, (5, 3))
    TH = rng.uniform(-np.pi, np.pi, (5, 3))
    M = dh_matrix(A, AL, D, TH, convention)
    assert M.shape == (5, 3, 4, 4)
    for i in range(5):
        for j in range(3):
            np.testing.assert_allclose(M[i, j], np.array(f(A[i, 0], AL[0, j], D[i, j], TH[i, j]), float), atol=1e-14)


def test_dh_matrix_rejects_unknown_convention():
    with pytest.raises(PoserValueError, match="convention must be 'standard' or 'modified', got 'distal'"):
        dh_matrix(0, 0, 0, 0, "distal")
    with pytest.raises(PoserValueError, match="convention must be 'standard' or 'modified', got 'craig'"):
        chain_from_dh([DHRow("j", "revolute")], "craig")


@pytest.mark.parametrize("convention", ["standard", "modified"])
def test_link_transforms_are_the_a_matrices_with_joint_values_added(convention, rng, random_rows):
    # A revolute joint's value adds to θ, a prismatic joint's to d (the DH definition; common practice).
    rows = random_rows(rng, 7, prismatic=0.4)
    chain = chain_from_dh(rows, convention)
    q = rng.uniform(-1.5, 1.5, (4, 7))
    A = link_transforms(chain, q)
    assert A.shape == (4, 7, 4, 4)
    for k, row in enumerate(rows):
        rev = row.kind == "revolute"
        ref = dh_matrix(
            row.a, row.alpha, row.d + (0 if rev else q[:, k]), row.theta + (q[:, k] if rev else 0), convention
        )
        np.testing.assert_allclose(A[:, k], ref, atol=1e-14)


def test_ninety_degree_twists_give_exact_zeros():
    # A real DH table is full of ±90° twists; their cosines must be exactly 0, not 6e-17.
    chain = chain_from_dh([DHRow("j1", "revolute", a=1.0, alpha=np.pi / 2, theta=-np.pi / 2, d=0.5)])
    post = chain.joints[0].post
    np.testing.assert_array_equal(post, [[0, 0, -1, 0], [-1, 0, 0, -1.0], [0, 1, 0, 0.5], [0, 0, 0, 1]])
    chain = chain_from_dh([DHRow("j1", "revolute", a=1.0, alpha=-np.pi / 2)], "modified")
    np.testing.assert_array_equal(chain.joints[0].pre, [[1, 0, 0, 1], [0, 0, 1, 0], [0, -1, 0, 0], [0, 0, 0, 1]])


def test_chain_keeps_limits_home_and_names():
    rows = [
        DHRow("turn", "revolute", lower=-1.0, upper=2.0, home=0.5),
        DHRow("slide", "prismatic", d=0.1, lower=0.0, upper=0.4, home=0.2),
    ]
    chain = chain_from_dh(rows, name="two", base=np.eye(4))
    assert chain.names == ("turn", "slide")
    assert chain.kinds == ("revolute", "prismatic")
    np.testing.assert_array_equal(chain.lower, [-1.0, 0.0])
    np.testing.assert_array_equal(chain.upper, [2.0, 0.4])
    np.testing.assert_array_equal(chain.home, [0.5, 0.2])
    np.testing.assert_array_equal(chain.revolute, [True, False])
    assert chain == chain_from_dh(rows, name="two")
    assert chain != chain_from_dh(rows, name="other")


def test_chain_and_joint_reject_bad_input():
    with pytest.raises(PoserValueError, match="joints must hold at least one joint"):
        Chain([])
    with pytest.raises(PoserValueError, match="kind must be 'revolute' or 'prismatic', got 'spherical'"):
        Joint("ball", "spherical")
    with pytest.raises(PoserValueError, match="lower limit must be below upper"):
        Joint("j", "revolute", lower=1.0, upper=1.0)
    with pytest.raises(PoserValueError, match="upper must be finite"):
        Joint("j", "revolute", upper=np.inf)
    with pytest.raises(PoserValueError, match="base must be a 4x4 transform, got shape \\(3, 3\\)"):
        Chain([Joint("j", "revolute")], base=np.eye(3))
    with pytest.raises(PoserValueError, match="tool must have a proper rotation"):
        Chain([Joint("j", "revolute")], tool=np.diag([1.0, 1.0, -1.0, 1.0]))


def test_user_units_conversion():
    # Joint values are typed in the arm's units and kept in radians / length units inside.
    from poser.core.units import Units

    rows = [DHRow("r", "revolute", lower=-3.0, upper=3.0), DHRow("p", "prismatic", lower=0.0, upper=500.0)]
    chain = chain_from_dh(rows, units=Units("mm", "deg"))
    q = chain.q_from_user([[90.0, 120.0], [-45.0, 0.5]])
    np.testing.assert_allclose(q, [[np.pi / 2, 120.0], [-np.pi / 4, 0.5]])
    np.testing.assert_allclose(chain.q_to_user(q), [[90.0, 120.0], [-45.0, 0.5]])
    rad = chain_from_dh(rows, units=Units("m", "rad"))
    np.testing.assert_array_equal(rad.q_from_user([1.0, 0.2]), [1.0, 0.2])
    u = Units("in", "deg")
    assert (u.joint_unit("revolute"), u.joint_unit("prismatic")) == ("deg", "in")
    assert u.metres(10.0) == pytest.approx(0.254)
    np.testing.assert_allclose(u.angle_out(u.angle_in([30.0, -720.0])), [30.0, -720.0])
    with pytest.raises(PoserValueError, match=r"length unit must be one of \['in', 'm', 'mm'\], got 'km'"):
        Units("km", "deg")
    with pytest.raises(PoserValueError, match=r"angle unit must be one of \['deg', 'rad'\], got 'grad'"):
        Units("mm", "grad")


# -- converting a table between the conventions ------------------------------------------------------


@pytest.mark.parametrize("seed", range(8))
def test_convert_dh_keeps_the_tool_pose_and_the_joint_axes(seed, random_rows, random_transform):
    # Craig, Introduction to Robotics, ch. 3 (from memory): the proximal convention attaches frame i at
    # joint i instead of at the far end of link i; one mechanism, two tables, the same tool pose.
    from poser.core.dh import convert_dh
    from poser.core.fk import fk, frames
    from poser.core.jacobian import jacobian

    rng = np.random.default_rng(300 + seed)
    n = int(rng.integers(1, 8))
    rows = random_rows(rng, n, prismatic=0.3)
    base, tool = random_transform(rng), random_transform(rng)
    q = rng.uniform(-np.pi, np.pi, (30, n))
    for source, target in (("standard", "modified"), ("modified", "standard")):
        one = chain_from_dh(rows, source, base=base, tool=tool)
        new_rows, new_base, new_tool = convert_dh(rows, source, target, base=base, tool=tool)
        other = chain_from_dh(new_rows, target, base=new_base, tool=new_tool)
        np.testing.assert_allclose(fk(other, q), fk(one, q), atol=1e-12)
        np.testing.assert_allclose(jacobian(other, q), jacobian(one, q), atol=1e-12)
        assert [(r.name, r.kind, r.d, r.theta, r.lower, r.upper) for r in new_rows] == [
            (r.name, r.kind, r.d, r.theta, r.lower, r.upper) for r in rows]
        # and back: the same table, up to the folding into the base or tool
        back, back_base, back_tool = convert_dh(new_rows, target, source, base=new_base, tool=new_tool)
        again = chain_from_dh(back, source, base=back_base, tool=back_tool)
        np.testing.assert_allclose(fk(again, q), fk(one, q), atol=1e-12)
        folded = n - 1 if source == "standard" else 0  # the row whose (a, alpha) went into the tool / base
        for k, (r, b) in enumerate(zip(rows, back)):
            if k == folded:
                assert (b.a, b.alpha) == (0.0, 0.0)
            else:
                assert (b.a, b.alpha, b.d, b.theta) == (r.a, r.alpha, r.d, r.theta)
    # the intermediate frames are not the same (distal versus proximal), unless every a and alpha is 0
    std = chain_from_dh(rows, "standard", base=base, tool=tool)
    mod_rows, mb, mt = convert_dh(rows, "standard", "modified", base=base, tool=tool)
    mod = chain_from_dh(mod_rows, "modified", base=mb, tool=mt)
    if any(r.a or r.alpha for r in rows[:-1]):
        assert not np.allclose(frames(std, q[0])[1:-1], frames(mod, q[0])[1:-1])


def test_convert_dh_by_hand_and_bad_input():
    from poser.core.dh import convert_dh

    rows = [DHRow("j1", "revolute", a=1.0, alpha=np.pi / 2, d=0.5), DHRow("j2", "revolute", a=2.0)]
    mod, base, tool = convert_dh(rows, "standard", "modified")
    assert [(r.a, r.alpha, r.d) for r in mod] == [(0.0, 0.0, 0.5), (1.0, np.pi / 2, 0.0)]
    np.testing.assert_array_equal(base, np.eye(4))
    np.testing.assert_array_equal(tool, dh_matrix(2.0, 0.0, 0.0, 0.0))  # Tx(2)
    same, b2, t2 = convert_dh(rows, "modified", "modified")
    assert same == rows and np.array_equal(b2, np.eye(4)) and np.array_equal(t2, np.eye(4))
    with pytest.raises(PoserValueError, match="target convention must be 'standard' or 'modified', got 'dh'"):
        convert_dh(rows, "standard", "dh")
    with pytest.raises(PoserValueError, match=r"tool must have shape \(4, 4\), got shape \(3, 3\)"):
        convert_dh(rows, "standard", "modified", tool=np.eye(3))
