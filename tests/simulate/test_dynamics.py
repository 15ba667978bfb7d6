"""Rigid-body torques against closed forms: statics of one and two segments, the planar two-link arm's
equations of motion, and gravity as the gradient of potential energy."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bracer.simulate.body import build_arm
from bracer.simulate.dynamics import Chain, fix_joints, forward_kinematics, inverse_dynamics
from bracer.simulate.params import SimulationParameters

G = 9.81
FLEX = (0.0, -1.0, 0.0)  # rotation about −y: 'flexion' lifts a hanging segment forward (+x)


def _chain(links: list[tuple[tuple[float, float, float], float, tuple[float, float, float], float]]) -> Chain:
    """Joints about −y: each (origin in parent frame, mass, centre of mass in own frame, inertia about y)."""
    return Chain(
        names=tuple(f"j{i}" for i in range(len(links))),
        origins=np.array([o for o, _, _, _ in links]),
        axes=np.array([FLEX] * len(links)),
        masses=np.array([m for _, m, _, _ in links]),
        coms=np.array([c for _, _, c, _ in links]),
        inertias=np.array([np.diag([i, i, i / 10]) for _, _, _, i in links]),
        gravity=np.array([0.0, 0.0, -G]),
    )


def _at_rest(chain: Chain, q: np.ndarray) -> np.ndarray:
    q = np.atleast_2d(q)
    return inverse_dynamics(chain, q, np.zeros_like(q), np.zeros_like(q))


@pytest.mark.parametrize("deg", [0.0, 30.0, 90.0, 135.0, -45.0])
def test_single_segment_hanging_needs_m_g_lc_sin(deg: float) -> None:
    # Statics of a pendulum hanging from its joint: holding torque m·g·l_c·sin(q), q from the vertical.
    m, lc = 2.5, 0.2
    chain = _chain([((0, 0, 0), m, (0, 0, -lc), 0.01)])
    q = math.radians(deg)
    assert _at_rest(chain, np.array([q]))[0, 0] == pytest.approx(m * G * lc * math.sin(q), abs=1e-12)


@pytest.mark.parametrize("deg", [0.0, 30.0, 90.0, 160.0])
def test_single_segment_from_horizontal_needs_m_g_lc_cos(deg: float) -> None:
    # The same segment with its zero horizontal (centre of mass along +x): holding torque m·g·l_c·cos(q).
    m, lc = 1.2, 0.15
    chain = _chain([((0, 0, 0), m, (lc, 0, 0), 0.01)])
    q = math.radians(deg)
    assert _at_rest(chain, np.array([q]))[0, 0] == pytest.approx(m * G * lc * math.cos(q), abs=1e-12)


def test_two_segment_chain_against_a_hand_calculation() -> None:
    # Upper segment m1 = 2 kg, l1 = 0.3 m, l_c1 = 0.13 m; lower m2 = 1.5 kg, l_c2 = 0.12 m; q1 = 60°, q2 =
    # 45°. By hand (statics, moments about each joint):
    #   τ2 = g·m2·l_c2·sin(q1 + q2) = 9.81·1.5·0.12·sin 105° = 1.70563 N·m
    #   τ1 = g·[m1·l_c1·sin q1 + m2·(l1·sin q1 + l_c2·sin(q1 + q2))]
    #      = 9.81·[2·0.13·0.86603 + 1.5·(0.3·0.86603 + 0.12·0.96593)] = 9.81·0.78875 = 7.73759 N·m
    chain = _chain([((0, 0, 0), 2.0, (0, 0, -0.13), 0.02), ((0, 0, -0.3), 1.5, (0, 0, -0.12), 0.01)])
    tau = _at_rest(chain, np.radians([60.0, 45.0]))[0]
    assert tau[1] == pytest.approx(1.70563, abs=5e-6)
    assert tau[0] == pytest.approx(7.73759, abs=5e-6)


@settings(max_examples=60, deadline=None)
@given(
    q=st.tuples(st.floats(-3, 3), st.floats(-3, 3)),
    qd=st.tuples(st.floats(-5, 5), st.floats(-5, 5)),
    qdd=st.tuples(st.floats(-20, 20), st.floats(-20, 20)),
)
def test_planar_two_link_arm_equations_of_motion(
    q: tuple[float, float], qd: tuple[float, float], qdd: tuple[float, float]
) -> None:
    # Planar two-link ('elbow') arm from Lagrange's equations, as in Spong, Hutchinson & Vidyasagar, Robot
    # Modeling and Control (2006), ch. 7 [M: written from memory, re-derived by hand], angles from the
    # vertical: M11 = m1 lc1² + I1 + m2 (l1² + lc2² + 2 l1 lc2 cos q2) + I2,  M12 = m2 (lc2² + l1 lc2 cos q2)
    # + I2, M22 = m2 lc2² + I2,  h = −m2 l1 lc2 sin q2,
    #   τ1 = M11 q̈1 + M12 q̈2 + h (2 q̇1 q̇2 + q̇2²) + g (m1 lc1 + m2 l1) sin q1 + g m2 lc2 sin(q1 + q2)
    #   τ2 = M12 q̈1 + M22 q̈2 − h q̇1² + g m2 lc2 sin(q1 + q2)
    m1, l1, lc1, i1 = 2.0, 0.3, 0.13, 0.02
    m2, lc2, i2 = 1.5, 0.12, 0.01
    chain = _chain([((0, 0, 0), m1, (0, 0, -lc1), i1), ((0, 0, -l1), m2, (0, 0, -lc2), i2)])
    (q1, q2), (d1, d2), (a1, a2) = q, qd, qdd
    m11 = m1 * lc1**2 + i1 + m2 * (l1**2 + lc2**2 + 2 * l1 * lc2 * math.cos(q2)) + i2
    m12 = m2 * (lc2**2 + l1 * lc2 * math.cos(q2)) + i2
    m22 = m2 * lc2**2 + i2
    h = -m2 * l1 * lc2 * math.sin(q2)
    g1 = G * (m1 * lc1 + m2 * l1) * math.sin(q1) + G * m2 * lc2 * math.sin(q1 + q2)
    g2 = G * m2 * lc2 * math.sin(q1 + q2)
    tau1 = m11 * a1 + m12 * a2 + h * (2 * d1 * d2 + d2**2) + g1
    tau2 = m12 * a1 + m22 * a2 - h * d1**2 + g2
    got = inverse_dynamics(chain, np.array([q]), np.array([qd]), np.array([qdd]))[0]
    np.testing.assert_allclose(got, [tau1, tau2], rtol=1e-10, atol=1e-10)


@settings(max_examples=40, deadline=None)
@given(q=st.lists(st.floats(-2.5, 2.5), min_size=6, max_size=6))
def test_arm_gravity_torque_is_the_gradient_of_potential_energy(q: list[float]) -> None:
    # Lagrange's equations at rest (principle of virtual work): the holding torque is ∂V/∂q with
    # V(q) = Σ m_i·g·z_i(q), z_i the height of each centre of mass (forward kinematics, central differences).
    chain = build_arm(SimulationParameters())
    q0 = np.array(q)

    def potential(qq: np.ndarray) -> float:
        _, coms = forward_kinematics(chain, qq[None])
        return float(np.sum(chain.masses * G * coms[0, :, 2]))

    step = 1e-6
    grad = np.array([(potential(q0 + step * e) - potential(q0 - step * e)) / (2 * step) for e in np.eye(6)])
    np.testing.assert_allclose(_at_rest(chain, q0)[0], grad, atol=2e-7)


def test_fixing_a_joint_at_zero_changes_no_other_torque() -> None:
    chain = build_arm(SimulationParameters())
    rng = np.random.default_rng(7)
    q, qd, qdd = (rng.normal(size=(50, 6)) for _ in range(3))
    q[:, 5] = qd[:, 5] = qdd[:, 5] = 0.0  # wrist held at zero
    q[:, 2] = qd[:, 2] = qdd[:, 2] = 0.0  # shoulder rotation held at zero
    full = inverse_dynamics(chain, q, qd, qdd)
    reduced = fix_joints(chain, {"wrist_flexion", "shoulder_rotation"})
    assert reduced.names == ("shoulder_abduction", "shoulder_flexion", "elbow_flexion", "forearm_rotation")
    keep = [0, 1, 3, 4]
    np.testing.assert_allclose(
        inverse_dynamics(reduced, q[:, keep], qd[:, keep], qdd[:, keep]), full[:, keep], atol=1e-12
    )


def test_the_arm_hangs_and_lifts_in_the_documented_directions() -> None:
    # The model's conventions (bracer.simulate.body): flexion lifts the arm forward (+x), abduction out to the
    # right side (−y); with the arm horizontal the shoulder holds the whole arm's moment.
    params = SimulationParameters()
    chain = build_arm(params)
    upper = 0.186 * params.height  # Winter Fig. 4.1 [M]: upper arm 0.186 H
    origins, _ = forward_kinematics(chain, np.radians([[0, 90, 0, 0, 0, 0], [90, 0, 0, 0, 0, 0]]))
    np.testing.assert_allclose(origins[0, 3], [upper, 0, 0], atol=1e-12)
    np.testing.assert_allclose(origins[1, 3], [0, -upper, 0], atol=1e-12)
    tau = _at_rest(chain, np.radians([0, 90, 0, 0, 0, 0]))[0]
    _, coms = forward_kinematics(chain, np.radians([[0, 90, 0, 0, 0, 0]]))
    moment = float(np.sum(chain.masses * G * coms[0, :, 0]))  # Σ m·g·(horizontal lever)
    assert tau[1] == pytest.approx(moment, rel=1e-12)


def test_batches_are_chunk_independent() -> None:
    # The recursion runs in chunks of samples; the answer must not depend on where a chunk ends.
    chain = build_arm(SimulationParameters())
    rng = np.random.default_rng(3)
    q, qd, qdd = (rng.normal(size=(70_000, 6)) for _ in range(3))
    whole = inverse_dynamics(chain, q, qd, qdd)
    parts = np.vstack(
        [
            inverse_dynamics(chain, q[s : s + 9_999], qd[s : s + 9_999], qdd[s : s + 9_999])
            for s in range(0, 70_000, 9_999)
        ]
    )
    np.testing.assert_array_equal(whole, parts)


def test_interpolated_move_torque_stays_within_a_fifth_of_the_adc_step(example, tmp_path) -> None:  # type: ignore[no-untyped-def]
    # Inside a minimum-jerk move the torque is computed every 4 ms and interpolated linearly; the error bound
    # of linear interpolation, h²/8·max|τ''|, keeps it far below the torque channel's ADC step (100 N·m /
    # 2¹⁶). Checked here against the recursion at every sample of a whole session with every incident.
    from bracer.protocol.resolve import resolve
    from bracer.simulate.envelope import build_envelope
    from bracer.simulate.planner import make_plan
    from bracer.simulate.session import default_scenario

    params = SimulationParameters()
    items, _ = default_scenario(example, None, params, 300.0)
    plan = make_plan(
        build_envelope(resolve(example.protocol), params.tissue_damping_ratio), params, items, 300.0, 9
    )
    t = plan.clocks["main"].times()
    state = plan.physics.motion(t)
    fast = plan.physics.torques(t, state)
    exact = plan.physics.torques(t, state, exact=True)
    assert np.abs(fast - exact).max() < 0.2 * params.sensors.torque.step
