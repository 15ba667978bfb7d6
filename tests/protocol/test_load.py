"""The example protocol loads, its values arrive in the internal units, and the model round-trips."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from bracer.protocol.load import LoadedProtocol, effect_dimension, load_protocol
from bracer.protocol.model import BODY_REGIONS, LAYERS, ChannelRef, Protocol
from bracer.protocol.quantities import Directional, exact_text
from bracer.units import quantity

DEG = math.pi / 180  # 1 deg = pi/180 rad (definition of the degree)
EXAMPLE = Path(__file__).resolve().parents[2] / "protocols" / "alder4-upper-limb.yaml"


@pytest.fixture(scope="module")
def loaded() -> LoadedProtocol:
    return load_protocol(EXAMPLE)


def test_example_loads(loaded: LoadedProtocol) -> None:
    p = loaded.protocol
    assert p.bracer_protocol == 1
    assert p.protocol.id == "AVRU-EXO-01"
    assert list(p.joints) == [
        "shoulder_flexion",
        "shoulder_abduction",
        "shoulder_rotation",
        "elbow_flexion",
        "forearm_rotation",
    ]
    assert list(p.contacts) == ["upper_arm_cuff", "forearm_cuff"]
    assert list(p.participants) == ["AV-P01", "AV-P02"]
    assert loaded.path.name == "alder4-upper-limb.yaml"


def test_example_values_are_in_internal_units(loaded: LoadedProtocol) -> None:
    p = loaded.protocol
    elbow = p.joints["elbow_flexion"]
    planned = elbow.range.planned
    assert planned is not None
    assert planned.min.si == pytest.approx(15 * DEG)
    assert planned.max.si == pytest.approx(120 * DEG)
    speed = elbow.speed.planned
    assert isinstance(speed, Directional) and speed.symmetric
    assert speed.positive.si == pytest.approx(math.pi / 2)  # 90 deg/s = pi/2 rad/s
    assert elbow.torque.device is not None and elbow.torque.device.negative.si == pytest.approx(12.0)
    assert elbow.stop_deceleration is not None
    assert elbow.stop_deceleration.si == pytest.approx(900 * DEG)
    cuff = p.contacts["upper_arm_cuff"]
    assert cuff.area.si == pytest.approx(40e-4)  # 1 cm^2 = 1e-4 m^2
    assert cuff.pressure is not None
    assert cuff.pressure.quasi_static.si == pytest.approx(2e4)  # 1 N/cm^2 = 1e4 Pa (Pa = N/m^2)
    assert cuff.force.transient_max_duration.si == pytest.approx(0.5)
    assert cuff.lever_arms["shoulder_rotation"] == "not modelled"
    assert cuff.lever_arms["shoulder_flexion"].si == pytest.approx(0.16)  # type: ignore[union-attr]
    assert p.stop is not None and p.stop.latency_budget.si == pytest.approx(0.3)
    assert p.logging.streams["cuffs"].sample_rate.si == pytest.approx(500.0)
    # Defaults filled in where the file says nothing.
    assert p.audit.min_event_duration.si == pytest.approx(0.005)
    assert p.joints["forearm_rotation"].channels.velocity is None


def test_channels_carry_their_units(loaded: LoadedProtocol) -> None:
    ch = loaded.protocol.joints["shoulder_flexion"].channels
    assert ch.position is not None and ch.velocity is not None and ch.torque is not None
    assert (ch.position.column, ch.position.unit, ch.position.stream) == ("sh_flex_pos", "deg", "main")
    assert all(isinstance(c, ChannelRef) for c in (ch.position, ch.velocity, ch.torque))
    force = loaded.protocol.contacts["forearm_cuff"].channels.force
    assert force is not None and force.all_columns == ["fa_fx", "fa_fy", "fa_fz"] and force.stream == "cuffs"


def test_model_round_trips_through_json(loaded: LoadedProtocol) -> None:
    dumped = loaded.protocol.model_dump(mode="json")
    assert Protocol.model_validate(dumped) == loaded.protocol


@given(st.floats(min_value=-1e9, max_value=1e9, allow_nan=False, allow_infinity=False))
def test_exact_text_reads_back_the_same_number(value: float) -> None:
    # A resolved limit (e.g. 120 deg x 0.6) must survive a JSON dump without rounding.
    q = quantity(value, "deg/s")
    from bracer.units import parse_quantity

    back = parse_quantity(exact_text(q))
    assert back.magnitude == q.magnitude
    assert back.si == q.si


def test_model_is_frozen(loaded: LoadedProtocol) -> None:
    from pydantic import ValidationError

    with pytest.raises(ValidationError):
        loaded.protocol.protocol.id = "X"  # type: ignore[misc]


def test_public_names_stay() -> None:
    # Other parts of bracer code against these names.
    import bracer.protocol.load as load
    import bracer.protocol.model as model
    import bracer.protocol.resolve as resolve

    for mod, names in [
        (
            model,
            [
                "BODY_REGIONS",
                "LAYERS",
                "Bounds",
                "Caution",
                "Contact",
                "Effect",
                "Joint",
                "Participant",
                "Protocol",
                "ChannelRef",
                "ForceChannel",
                "Override",
            ],
        ),
        (
            resolve,
            ["Change", "ParticipantRange", "Resolution", "ResolveProblem", "participant_range", "resolve"],
        ),
        (load, ["LoadedProtocol", "load_protocol"]),
    ]:
        for name in names:
            assert hasattr(mod, name), (mod.__name__, name)
    assert LAYERS == ("planned", "device", "mechanical")
    assert len(BODY_REGIONS) == 12


@pytest.mark.parametrize(
    ("quantity_name", "item", "dimension"),
    [
        ("range", "quasi_static", "angle"),
        ("speed", "quasi_static", "angular speed"),
        ("torque", "quasi_static", "torque"),
        ("acceleration", "quasi_static", "angular acceleration"),
        ("force", "transient", "force"),
        ("pressure", "quasi_static", "pressure"),
        ("sustained", "level", "force"),
        ("sustained", "max_duration", "time"),
        ("force", "max_duration", None),
    ],
)
def test_effect_dimension(quantity_name: str, item: str, dimension: str | None) -> None:
    assert effect_dimension(quantity_name, item) == dimension


def test_load_accepts_str_and_path(example_protocol: Path) -> None:
    assert load_protocol(str(example_protocol)).protocol == load_protocol(example_protocol).protocol
