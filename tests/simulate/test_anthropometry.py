"""Winter's segment table (limits/segments_winter.csv) and its scaling to a body."""

from __future__ import annotations

import math

import pytest

from bracer.simulate.anthropometry import segment_inertia, winter_segments


def test_table_rows_match_winter_table_4_1() -> None:
    # Winter, Biomechanics and Motor Control of Human Movement, 4th ed., Table 4.1 (confirmed against a public
    # transcription, [C2]): upper arm 0.028 M, centre of mass 0.436 from proximal, radius of gyration 0.322;
    # forearm 0.016 M, 0.430, 0.303; hand 0.006 M, 0.506, 0.297.
    rows = winter_segments()
    assert (rows["upper_arm"].mass_fraction, rows["upper_arm"].com_proximal, rows["upper_arm"].rg_com) == (
        0.028,
        0.436,
        0.322,
    )
    assert (rows["forearm"].mass_fraction, rows["forearm"].com_proximal, rows["forearm"].rg_com) == (
        0.016,
        0.430,
        0.303,
    )
    assert (rows["hand"].mass_fraction, rows["hand"].com_proximal, rows["hand"].rg_com) == (
        0.006,
        0.506,
        0.297,
    )
    assert all(r.confidence == "C2" and "Winter" in r.source for r in rows.values())
    assert all(r.length_confidence == "M" for r in rows.values())  # Fig. 4.1 lengths are from memory


@pytest.mark.parametrize("segment", ["hand", "forearm", "upper_arm", "foot", "leg", "thigh"])
def test_radii_of_gyration_obey_the_parallel_axis_theorem(segment: str) -> None:
    # Parallel-axis theorem (k_end² = k_cm² + d²) on the published fractions: a transcription error in any
    # of the three radii or the centre of mass shows up here.  Tolerance 0.005: the table's own rounding
    # (the upper arm's distal radius is 0.645 where the theorem gives 0.649).
    r = winter_segments()[segment]
    assert r.com_proximal + r.com_distal == pytest.approx(1.0, abs=1e-9)
    assert math.hypot(r.rg_com, r.com_proximal) == pytest.approx(r.rg_proximal, abs=0.005)
    assert math.hypot(r.rg_com, r.com_distal) == pytest.approx(r.rg_distal, abs=0.005)


def test_scaling_to_a_70_kg_1_70_m_body() -> None:
    # mass = fraction·M, length = fraction·H (Winter Fig. 4.1 [M]: upper arm 0.186 H), I = m·(ρ·L)².
    s = segment_inertia("upper_arm", 70.0, 1.70)
    assert s.mass == pytest.approx(1.96)
    assert s.length == pytest.approx(0.3162)
    assert s.com == pytest.approx(0.436 * 0.3162)
    assert s.inertia_transverse == pytest.approx(1.96 * (0.322 * 0.3162) ** 2)


def test_unknown_segment_names_the_known_ones() -> None:
    with pytest.raises(KeyError, match="upper_arm"):
        segment_inertia("upperarm", 70.0, 1.7)
