"""The cuff's spring–damper, F = k·δ + c·δ̇, and the pushes that drive it."""

from __future__ import annotations

import math

import numpy as np
import pytest

from bracer.simulate.events import Push
from bracer.simulate.tissue import Tissue, tissue_for_region


def test_force_on_a_sinusoid() -> None:
    # Linear spring–damper (any mechanics text): δ = A·sin ωt gives F = k·A·sin ωt + c·A·ω·cos ωt.
    k, c, amp, omega = 40_000.0, 120.0, 0.002, 2 * math.pi * 1.5
    tissue = Tissue(k, c, "test")
    t = np.linspace(0.0, 2.0, 4001)
    force = tissue.force(amp * np.sin(omega * t), amp * omega * np.cos(omega * t))
    expected = k * amp * np.sin(omega * t) + c * amp * omega * np.cos(omega * t)
    np.testing.assert_allclose(force, expected, rtol=0, atol=1e-9)
    # amplitude A·√(k² + (cω)²) and phase lead atan(cω/k) of a Kelvin–Voigt element
    assert force.max() == pytest.approx(amp * math.hypot(k, c * omega), rel=1e-5)
    lead = math.atan2(c * omega, k)
    assert t[np.argmax(force[:1334])] == pytest.approx((math.pi / 2 - lead) / omega, abs=6e-4)


def test_region_stiffness_comes_from_iso_ts_15066_table_a3() -> None:
    # ISO/TS 15066:2016 Annex A Table A.3 (transcribed, [C2]): lower arm and wrist k = 40 N/mm, m_H = 2 kg;
    # upper arm and elbow k = 30 N/mm, m_H = 3 kg.  Damping c = 2ζ√(k·m_H).
    lower = tissue_for_region("lower_arm_wrist", 0.2)
    assert lower.stiffness == 40_000.0
    assert lower.damping == pytest.approx(2 * 0.2 * math.sqrt(40_000.0 * 2.0))
    upper = tissue_for_region("upper_arm_elbow", 0.5)
    assert upper.stiffness == 30_000.0
    assert upper.damping == pytest.approx(2 * 0.5 * math.sqrt(30_000.0 * 3.0))
    assert "Table A.3" in upper.source


def test_push_displacement_rate_is_its_derivative() -> None:
    # The push's δ̇ is the closed-form derivative of its δ: compare with a central difference (second-order
    # accurate, error ~ h²·δ''' / 6).
    push = Push("cuff", start=1.0, rise=0.06, hold=0.04, fall=0.08, depth=0.003)
    t = np.linspace(0.9, 1.3, 40_001)
    delta, rate = push.displacement(t)
    numeric = np.gradient(delta, t)
    inside = (t > 1.0005) & (t < 1.1795)
    np.testing.assert_allclose(rate[inside], numeric[inside], atol=5e-6)
    assert delta.max() == pytest.approx(0.003) and delta[0] == 0 and delta[-1] == 0
    hold = (t >= 1.06) & (t < 1.10)
    assert np.all(delta[hold] == 0.003) and np.all(rate[hold] == 0)


def test_held_push_force_is_k_times_depth() -> None:
    # During the hold δ̇ = 0, so F = k·δ exactly: a push to 36 N on 30 N/mm tissue is 1.2 mm deep.
    tissue = tissue_for_region("upper_arm_elbow", 0.2)
    depth = tissue.displacement_for(36.0)
    assert depth == pytest.approx(0.0012)
    push = Push("cuff", 0.0, 0.5, 10.0, 0.5, depth)
    delta, rate = push.displacement(np.array([2.0, 5.0]))
    np.testing.assert_allclose(tissue.force(delta, rate), [36.0, 36.0])


def test_cuff_force_follows_the_limb_lagging_the_device(example) -> None:  # type: ignore[no-untyped-def]
    # The forearm cuff of the example protocol: lever arms 0.18 m to the elbow and 0.45 m to shoulder flexion
    # (both load its normal axis; forearm rotation is 'not modelled'); the limb follows the device
    # tracking_lag later, so δ = Σ r·(q(t) − q(t − lag)) and F = k·δ + c·δ̇ with k = 40 N/mm and m_H = 2 kg
    # (ISO/TS 15066 Annex A Table A.3, lower arm and wrist, [C2]) and c = 2ζ√(k·m_H).
    from bracer.protocol.resolve import resolve
    from bracer.simulate.envelope import build_envelope
    from bracer.simulate.params import SimulationParameters
    from bracer.simulate.planner import make_plan

    params = SimulationParameters()
    plan = make_plan(
        build_envelope(resolve(example.protocol), params.tissue_damping_ratio), params, [], 60.0, 4
    )
    t = plan.clocks["cuffs"].times()
    q, qd, _ = plan.physics.motion(t)
    q_lag, qd_lag, _ = plan.physics.motion(t - params.tracking_lag)
    names = plan.joint_names
    e, s = names.index("elbow_flexion"), names.index("shoulder_flexion")
    delta = 0.18 * (q[:, e] - q_lag[:, e]) + 0.45 * (q[:, s] - q_lag[:, s])
    rate = 0.18 * (qd[:, e] - qd_lag[:, e]) + 0.45 * (qd[:, s] - qd_lag[:, s])
    k, c = 40_000.0, 2 * params.tissue_damping_ratio * math.sqrt(40_000.0 * 2.0)
    parts = plan.physics.cuff_components(plan.envelope.contacts["forearm_cuff"], t)
    np.testing.assert_allclose(parts["normal"], k * delta + c * rate, rtol=1e-12, atol=1e-12)
    assert np.all(parts["axial"] == 0) and np.all(parts["lateral"] == 0)  # no abduction lever on this cuff
    assert 2.0 < np.abs(parts["normal"]).max() < 40.0  # a few newtons to a few tens while the arm moves
