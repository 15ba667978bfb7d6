"""The reference tables in limits/ against their published sources.

Every expected value below is transcribed from the source named beside it (via bracer's reference notes,
with their confidence tags: [C1] primary text or abstract, [C2] secondary public text, [M] from memory,
[V] recomputed here).  These are reference values for review, not clinical limits.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

import pytest

from bracer.protocol.model import BODY_REGIONS
from bracer.reference import (
    body_model,
    body_region_limits,
    rom_reference,
    rom_rows,
    sha256,
    table_paths,
)
from bracer.resources import data_dir
from bracer.units import parse_quantity

CONFIDENCE_MARKS = {"C1", "C2", "M"}

# ------------------------------------------------------------------------------ every row is sourced


@pytest.mark.parametrize("path", sorted(data_dir("limits").glob("*.csv")), ids=lambda p: p.name)
def test_every_row_has_a_source_and_a_confidence_mark(path: Path) -> None:
    # Every table in limits/, including ones added later: a value without source or mark is no reference.
    lines = [
        ln for ln in path.read_text(encoding="utf-8").splitlines() if ln.strip() and not ln.startswith("#")
    ]
    rows = list(csv.DictReader(lines))
    assert rows, path.name
    marks = [c for c in rows[0] if c == "confidence" or c.endswith("_confidence")]
    assert "confidence" in marks and "source" in rows[0], path.name
    for row in rows:
        assert all(row[c] in CONFIDENCE_MARKS for c in marks), row
        assert row["source"].strip(), row
        assert None not in row and all(v is not None and v.strip() for v in row.values()), (
            row
        )  # no ragged row


def test_the_three_review_tables_are_listed() -> None:
    assert set(table_paths()) == {
        "upper_limb_rom.csv",
        "iso_ts_15066_force_pressure.csv",
        "iso_ts_15066_body_model.csv",
    }


def test_tables_load_through_the_reference_module() -> None:
    assert len(rom_rows()) == 13 * 5 + 4  # 13 motions x 5 sources (Norkin & White) + 4 Zwerus rows
    assert len(body_region_limits()) == 23
    assert len(body_model()) == 12
    for path in table_paths().values():
        assert path.is_file()
        assert len(sha256(path)) == 64


def test_no_duplicate_rows() -> None:
    rom_keys = [(r.motion, r.source) for r in rom_rows()]
    assert len(rom_keys) == len(set(rom_keys))
    area_keys = [(r.region, r.specific_area) for r in body_region_limits()]
    assert len(area_keys) == len(set(area_keys))


# ------------------------------------------------------------------------------ ISO/TS 15066 Annex A

# ISO/TS 15066:2016 Annex A Table A.2 (transcribed, [C2]): quasi-static pressure (N/cm^2) and force (N).
TABLE_A2 = [
    ("skull_forehead", "middle of forehead", 130, 130),
    ("skull_forehead", "temple", 110, 130),
    ("face", "masticatory muscle", 110, 65),
    ("neck", "neck muscle", 140, 150),
    ("neck", "seventh neck muscle", 210, 150),
    ("back_shoulders", "shoulder joint", 160, 210),
    ("back_shoulders", "fifth lumbar vertebra", 210, 210),
    ("chest", "sternum", 120, 140),
    ("chest", "pectoral muscle", 170, 140),
    ("upper_arm_elbow", "deltoid muscle", 190, 150),
    ("upper_arm_elbow", "humerus", 220, 150),
    ("lower_arm_wrist", "radial bone", 190, 160),
    ("lower_arm_wrist", "forearm muscle", 180, 160),
    ("lower_arm_wrist", "arm nerve", 180, 160),
    ("hand_fingers", "forefinger pad dominant", 300, 140),
    ("hand_fingers", "forefinger pad non-dominant", 270, 140),
    ("hand_fingers", "forefinger end joint dominant", 280, 140),
    ("hand_fingers", "forefinger end joint non-dominant", 220, 140),
    ("hand_fingers", "thenar eminence", 200, 140),
    ("hand_fingers", "palm dominant", 260, 140),
    ("hand_fingers", "palm non-dominant", 260, 140),  # [M]: the non-dominant palm value is from memory
    ("hand_fingers", "back of hand dominant", 200, 140),
    ("hand_fingers", "back of hand non-dominant", 190, 140),
]


@pytest.mark.parametrize(
    ("region", "area", "pressure", "force"), TABLE_A2, ids=[f"{r}/{a}" for r, a, _, _ in TABLE_A2]
)
def test_table_a2_values(region: str, area: str, pressure: float, force: float) -> None:
    # ISO/TS 15066:2016 Annex A Table A.2 (transcribed, [C2]; palm non-dominant [M])
    rows = {(r.region, r.specific_area): r for r in body_region_limits()}
    row = rows[(region, area)]
    assert (row.pressure_n_per_cm2, row.force_n) == (pressure, force)
    assert row.confidence == ("M" if area == "palm non-dominant" else "C2")
    assert "ISO/TS 15066:2016 Annex A Table A.2" in row.source
    # the pascal value the review compares with: 1 N/cm^2 = 1e4 Pa
    assert row.pressure_pa == pytest.approx(parse_quantity(f"{pressure} N/cm^2").si)


def test_table_a2_has_exactly_the_transcribed_rows() -> None:
    assert sorted((r.region, r.specific_area) for r in body_region_limits()) == sorted(
        (r, a) for r, a, _, _ in TABLE_A2
    )


# ISO/TS 15066:2016 Annex A Table A.3 (transcribed, [C2]):
# effective spring constant k (N/mm), effective body mass m_H (kg).
TABLE_A3 = {
    "skull_forehead": (150, 4.4),
    "face": (75, 4.4),
    "neck": (50, 1.2),
    "back_shoulders": (35, 40),
    "chest": (25, 40),
    "abdomen": (10, 40),
    "pelvis": (25, 40),
    "upper_arm_elbow": (30, 3),
    "lower_arm_wrist": (40, 2),
    "hand_fingers": (75, 0.6),
    "thigh_knee": (50, 75),
    "lower_leg": (60, 75),
}


@pytest.mark.parametrize("region", list(TABLE_A3))
def test_table_a3_values(region: str) -> None:
    # ISO/TS 15066:2016 Annex A Table A.3 (transcribed, [C2])
    row = body_model()[region]
    assert (row.k_n_per_mm, row.m_h_kg) == TABLE_A3[region]
    assert row.confidence == "C2"
    assert "Table A.3" in row.source


def test_body_region_keys_equal_the_model() -> None:
    assert set(body_model()) == set(BODY_REGIONS)
    assert list(body_model()) == list(BODY_REGIONS)  # same order as the model's Literal
    # Table A.2 regions: every one is a model region; the four without a confirmed row are left out on purpose
    # (limits/iso_ts_15066_force_pressure.csv header).
    a2_regions = {r.region for r in body_region_limits()}
    assert a2_regions <= set(BODY_REGIONS)
    assert set(BODY_REGIONS) - a2_regions == {"abdomen", "pelvis", "thigh_knee", "lower_leg"}


@pytest.mark.parametrize("row", body_region_limits(), ids=lambda r: f"{r.region}/{r.specific_area}")
def test_transient_factor(row) -> None:  # type: ignore[no-untyped-def]
    # ISO/TS 15066:2016 Annex A (transcribed, [C2]): transient limit = 2 x quasi-static, except face and
    # skull/forehead, where transient contact is not permissible.
    expected = 0 if row.region in ("face", "skull_forehead") else 2
    assert row.transient_factor == expected


@pytest.mark.parametrize(("m_r", "v_max"), [(1.0, 1.670), (5.0, 1.397), (20.0, 1.340)])
def test_worked_transient_example_from_the_tables(m_r: float, v_max: float) -> None:
    # ISO/TS 15066 Annex A two-body model, worked check [V] in bracer's reference notes: hand, transient
    # F = 2 x 140 N = 280 N, k = 75 N/mm -> E = F^2 / (2k) = 0.5227 J; v_max = F / sqrt(mu k),
    # mu = (1/m_H + 1/m_R)^-1 -> 1.670 / 1.397 / 1.340 m/s for m_R = 1 / 5 / 20 kg.
    hand = body_model()["hand_fingers"]
    force = max(r.force_n * r.transient_factor for r in body_region_limits() if r.region == "hand_fingers")
    k = hand.k_n_per_mm * 1000.0  # N/mm -> N/m
    assert force == 280.0
    assert force**2 / (2 * k) == pytest.approx(0.5227, abs=5e-5)
    mu = 1.0 / (1.0 / hand.m_h_kg + 1.0 / m_r)
    assert force / math.sqrt(mu * k) == pytest.approx(v_max, abs=5e-4)


# ------------------------------------------------------------------------------ range of motion

SOURCES = ("AAOS", "AMA", "Boone & Azen 1979", "Walker", "Macedo & Magee")

# Norkin & White, Measurement of Joint Motion, appendix table of normative values (transcribed, [C2]),
# degrees, in the order of SOURCES: AAOS, AMA Guides, Boone & Azen 1979, Walker, Macedo & Magee.
NORKIN_WHITE = {
    "shoulder flexion": (180, 180, 167, 165, 188),
    "shoulder extension": (60, 50, 62, 44, 70),
    "shoulder abduction": (180, 170, 184, 165, 188),
    "shoulder internal rotation": (70, 80, 69, 62, 94),
    "shoulder external rotation": (90, 60, 104, 81, 108),
    "elbow flexion": (150, 140, 143, 143, 149),
    "elbow extension": (0, 0, 1, -4, 2),
    "forearm pronation": (80, 80, 76, 71, 92),
    "forearm supination": (80, 80, 82, 74, 96),
    "wrist flexion": (80, 60, 76, 64, 93),
    "wrist extension": (70, 60, 75, 63, 86),
    "radial deviation": (20, 20, 22, 19, 18),
    "ulnar deviation": (30, 30, 36, 26, 41),
}

# Zwerus et al. 2017, Shoulder & Elbow 11:215, n = 352, active, dominant arm (abstract, [C1]), degrees.
ZWERUS_2017 = {
    "elbow flexion": 146,
    "elbow extension": -2,
    "forearm pronation": 80,
    "forearm supination": 87,
}


@pytest.mark.parametrize("motion", list(NORKIN_WHITE))
def test_rom_values_match_norkin_and_white(motion: str) -> None:
    # Norkin & White appendix table of normative values (transcribed, [C2])
    for source, degrees in zip(SOURCES, NORKIN_WHITE[motion], strict=True):
        row = rom_reference(motion, source)
        assert row is not None, (motion, source)
        assert row.degrees == degrees, (motion, source)
        assert row.confidence == "C2"


@pytest.mark.parametrize("motion", list(ZWERUS_2017))
def test_rom_values_match_zwerus_2017(motion: str) -> None:
    # Zwerus et al. 2017, Shoulder & Elbow 11:215 (abstract, [C1])
    row = rom_reference(motion, "Zwerus et al. 2017")
    assert row is not None
    assert row.degrees == ZWERUS_2017[motion]
    assert row.confidence == "C1"
    assert "Shoulder & Elbow 11:215" in row.citation


def test_rom_table_has_exactly_these_rows() -> None:
    expected = {(m, s) for m in NORKIN_WHITE for s in SOURCES} | {
        (m, "Zwerus et al. 2017") for m in ZWERUS_2017
    }
    assert {(r.motion, r.source) for r in rom_rows()} == expected


def test_rom_reference_defaults_to_aaos_and_returns_none_when_absent() -> None:
    row = rom_reference("elbow flexion")
    assert row is not None and row.source == "AAOS" and row.degrees == 150  # Norkin & White, AAOS [C2]
    assert rom_reference("knee flexion") is None
    assert rom_reference("elbow flexion", "Nobody 2099") is None


# Cross-check between sources.  Tolerance: how far two normative adult sources may disagree on one motion.
# The Norkin & White appendix itself shows adult sources differing by up to about 20 % of the motion (shoulder
# external rotation AAOS 90 vs Boone & Azen 104 deg, 16 %; ulnar deviation 30 vs 36 deg, 20 %), and small
# motions near zero by a few degrees (elbow extension 0 vs 1 vs 2 deg): goniometric readings differ by a few
# degrees between raters and sessions (common practice, [M]).  So two sources agree when
#     |a - b| <= max(3 deg, 0.2 x max(|a|, |b|)).
# This must still catch a transcription error of 10x (a dropped or doubled digit) on every non-zero row;
# the test after the cross-checks proves that it does.
def _agree(a: float, b: float) -> bool:
    return abs(a - b) <= max(3.0, 0.2 * max(abs(a), abs(b)))


@pytest.mark.parametrize("motion", list(NORKIN_WHITE))
def test_rom_aaos_agrees_with_boone_and_azen(motion: str) -> None:
    # AAOS vs Boone & Azen 1979 (both via Norkin & White appendix, [C2]), values read from limits/ (not from
    # the transcription above), so a wrong CSV row shows up here even if the transcription test were edited.
    aaos = rom_reference(motion, "AAOS")
    boone = rom_reference(motion, "Boone & Azen 1979")
    assert aaos is not None and boone is not None
    assert _agree(aaos.degrees, boone.degrees), (motion, aaos.degrees, boone.degrees)


@pytest.mark.parametrize("motion", list(ZWERUS_2017))
def test_rom_aaos_agrees_with_zwerus_for_elbow_and_forearm(motion: str) -> None:
    # AAOS (Norkin & White, [C2]) vs Zwerus et al. 2017 (abstract, [C1]); Zwerus is active ROM, and passive is
    # 3-5 deg larger (same abstract), well inside the tolerance.
    aaos = rom_reference(motion, "AAOS")
    zwerus = rom_reference(motion, "Zwerus et al. 2017")
    assert aaos is not None and zwerus is not None
    assert _agree(aaos.degrees, zwerus.degrees), (motion, aaos.degrees, zwerus.degrees)


def test_the_tolerance_catches_a_tenfold_transcription_error() -> None:
    # Every row mis-scaled by 10 (either way, either source) must fail the cross-check, unless the error
    # itself is within the 3-degree floor (1 deg read as 0.1 deg; 0 stays 0): the exact-value tests catch it.
    pairs = [(m, "Boone & Azen 1979") for m in NORKIN_WHITE] + [
        (m, "Zwerus et al. 2017") for m in ZWERUS_2017
    ]
    checked = 0
    for motion, other in pairs:
        aaos = rom_reference(motion, "AAOS")
        row = rom_reference(motion, other)
        assert aaos is not None and row is not None
        for wrong_aaos, wrong_other in [
            (aaos.degrees * 10, row.degrees),
            (aaos.degrees / 10, row.degrees),
            (aaos.degrees, row.degrees * 10),
            (aaos.degrees, row.degrees / 10),
        ]:
            error = abs(wrong_aaos - aaos.degrees) + abs(wrong_other - row.degrees)
            if error <= 3.0:
                continue
            checked += 1
            assert not _agree(wrong_aaos, wrong_other), (motion, other, wrong_aaos, wrong_other)
    assert checked >= 60  # of 68 cases: all but the near-zero elbow extension rows
