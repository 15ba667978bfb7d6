"""Simulate one session of a protocol: plan it, sample every stream, write the logs and their ground truth."""

from __future__ import annotations

import dataclasses
import hashlib
import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from bracer import __version__
from bracer.protocol.load import LoadedProtocol
from bracer.protocol.resolve import resolve
from bracer.simulate.body import build_arm
from bracer.simulate.envelope import build_envelope
from bracer.simulate.guard import Guard
from bracer.simulate.incidents import BuildContext, SimulationError, supported
from bracer.simulate.params import SimulationParameters
from bracer.simulate.planner import Plan, clocks_for, make_plan
from bracer.simulate.recipes import RECIPES, ScenarioItem
from bracer.simulate.render import ChannelInfo, RenderedStream, render_stream
from bracer.simulate.truth import TruthEntry, incident_entries
from bracer.simulate.write import Format, write_stream

__all__ = ["GroundTruth", "SimulationError", "SimulationOutput", "default_scenario", "simulate"]

TRUTH_FILE = "truth.json"


@dataclass(frozen=True, slots=True)
class ProtocolRef:
    id: str
    version: str
    path: str
    sha256: str


@dataclass(frozen=True, slots=True)
class StreamFile:
    name: str
    file: str
    rows: int
    sample_rate: float  # Hz
    time_column: str
    time_unit: str
    t_first: float  # s
    t_last: float  # s


@dataclass(frozen=True, slots=True)
class Skipped:
    incident: str
    reason: str


@dataclass(frozen=True, slots=True)
class ModelJoint:
    joint: str
    model: str | None
    sign: float


@dataclass(frozen=True, slots=True)
class ModelLink:
    link: str
    mass: float  # kg
    com: tuple[float, float, float]  # m, in the link's frame


@dataclass(frozen=True, slots=True)
class ContactTissue:
    contact: str
    stiffness: float  # N/m
    damping: float  # N·s/m
    source: str


@dataclass(frozen=True, slots=True)
class GroundTruth:
    """The ground-truth document written beside the logs (truth.json)."""

    generator: str
    seed: int
    protocol: ProtocolRef
    participant: str | None
    cautions: tuple[str, ...]
    duration: float  # s
    start_time: float  # s
    format: str
    scenario: tuple[str, ...]
    skipped: tuple[Skipped, ...]
    streams: tuple[StreamFile, ...]
    incidents: tuple[TruthEntry, ...]
    channels: tuple[ChannelInfo, ...]
    joints: tuple[ModelJoint, ...]
    links: tuple[ModelLink, ...]
    tissue: tuple[ContactTissue, ...]
    parameters: dict[str, Any]
    notes: tuple[str, ...]
    bracer_simulation: int = 1

    def to_json(self) -> str:
        return json.dumps(dataclasses.asdict(self), indent=2, ensure_ascii=False)


@dataclass(frozen=True, slots=True)
class SimulationOutput:
    files: tuple[Path, ...]
    truth_path: Path
    truth: GroundTruth


_NOTES = (
    "Joint torque is the rigid-body torque of limb and device links (recursive Newton-Euler over the arm "
    "model); interaction forces at the cuffs are not fed back into it.",
    "Segment parameters: Winter, Biomechanics and Motor Control of Human Movement, 4th ed., Table 4.1 "
    "(masses, centres of mass, radii of gyration) and Fig. 4.1 (lengths, as fractions of height; from "
    "memory, [M]); Table 4.1's hand fractions are applied to Fig. 4.1's wrist-to-fingertip length.",
    "Cuff force: F = k*delta + c*delta_dot per axis, with k and m_H of the body region from ISO/TS "
    "15066:2016 Annex A Table A.3 and c = 2*zeta*sqrt(k*m_H); the limb lags the device by tracking_lag; "
    "no axial load.",
    "Times in this file are seconds on the log's clock; i_* are 0-based data rows of the stream's file.",
    "Spans are taken from the noise-free signal; the logged values add each channel's offset, noise and "
    "quantisation (see channels).",
    "The safety_state trigger, if logged, stays at its normal value; only the scripted trigger changes.",
    "parameters are in SI units (kg, m, s, rad, rad/s, N*m, N); channels give each column's sensor model in "
    "the column's declared unit.",
)


def default_scenario(
    loaded: LoadedProtocol, participant: str | None, params: SimulationParameters, duration: float
) -> tuple[list[ScenarioItem], list[Skipped]]:
    """Every recipe the protocol can carry, in playing order, and the ones it cannot with the reason."""
    envelope = build_envelope(resolve(loaded.protocol, participant), params.tissue_damping_ratio)
    ctx = BuildContext(
        envelope, params, tuple(envelope.protocol.joints), clocks_for(envelope, duration, params.start_time)
    )
    items, skipped = [], []
    for recipe in RECIPES.values():
        item = ScenarioItem(recipe)
        reason = supported(item, ctx)
        if reason is None:
            items.append(item)
        else:
            skipped.append(Skipped(recipe.name, reason))
    return items, skipped


def _render_all(plan: Plan) -> list[RenderedStream]:
    guard = Guard(plan)
    streams = [render_stream(plan, name, guard) for name in plan.envelope.protocol.logging.streams]
    guard.raise_if_any()
    return streams


def _model(plan: Plan) -> tuple[tuple[ModelJoint, ...], tuple[ModelLink, ...], tuple[ContactTissue, ...]]:
    chain = build_arm(plan.params)
    joints = tuple(ModelJoint(n, je.mapping.model, je.mapping.sign) for n, je in plan.envelope.joints.items())
    links = tuple(
        ModelLink(name, float(m), (float(c[0]), float(c[1]), float(c[2])))
        for name, m, c in zip(chain.names, chain.masses, chain.coms, strict=True)
        if m > 0
    )
    tissue = tuple(
        ContactTissue(n, c.tissue.stiffness, c.tissue.damping, c.tissue.source)
        for n, c in plan.envelope.contacts.items()
    )
    return joints, links, tissue


def simulate(
    loaded: LoadedProtocol,
    out_dir: Path,
    *,
    participant: str | None = None,
    duration: float = 120.0,
    scenario: list[ScenarioItem] | None = None,
    seed: int = 1,
    params: SimulationParameters | None = None,
    fmt: Format = "parquet",
) -> SimulationOutput:
    """Simulate a session and write one log file per stream plus ``truth.json`` into ``out_dir``.

    Parameters
    ----------
    loaded
        The protocol, as :func:`bracer.protocol.load.load_protocol` returns it.
    participant
        Participant code (their cautions and overrides apply), or None for the protocol's nominal limits.
    duration
        Session length, s.
    scenario
        Incidents to play, in order; None plays every incident the protocol can carry; [] is a clean session.
    seed
        Same seed, same protocol and parameters: the same files, bit for bit.

    Raises
    ------
    SimulationError
        The protocol cannot carry a requested incident, the session is too short, or its limits leave no room.
    """
    params = params or SimulationParameters()
    if not duration > 0:
        raise SimulationError(f"duration must be above zero, found {duration} s")
    skipped: list[Skipped] = []
    if scenario is None:
        scenario, skipped = default_scenario(loaded, participant, params, duration)
    resolution = resolve(loaded.protocol, participant)
    envelope = build_envelope(resolution, params.tissue_damping_ratio)
    plan = make_plan(envelope, params, scenario, duration, seed)
    entries = incident_entries(plan)
    rendered = _render_all(plan)
    out_dir.mkdir(parents=True, exist_ok=True)
    files: list[Path] = []
    stream_files: list[StreamFile] = []
    channels: list[ChannelInfo] = []
    protocol = loaded.protocol
    for r in rendered:
        path = write_stream(r, out_dir, fmt)
        files.append(path)
        spec = protocol.logging.streams[r.name]
        clock = plan.clocks[r.name]
        channels.extend(r.channels)
        stream_files.append(
            StreamFile(
                r.name,
                path.name,
                r.rows,
                clock.rate,
                spec.time.column,
                spec.time.unit,
                clock.time_of(0),
                clock.time_of(clock.n - 1),
            )
        )
    joints, links, tissue = _model(plan)
    truth = GroundTruth(
        generator=f"bracer {__version__}",
        seed=seed,
        protocol=ProtocolRef(
            protocol.protocol.id,
            protocol.protocol.version,
            str(loaded.path),
            hashlib.sha256(Path(loaded.path).read_bytes()).hexdigest(),
        ),
        participant=participant,
        cautions=resolution.cautions,
        duration=duration,
        start_time=params.start_time,
        format=fmt,
        scenario=tuple(item.recipe.name + (f":{item.subject}" if item.subject else "") for item in scenario),
        skipped=tuple(skipped),
        streams=tuple(stream_files),
        incidents=tuple(entries),
        channels=tuple(channels),
        joints=joints,
        links=links,
        tissue=tissue,
        parameters=dataclasses.asdict(params),
        notes=_NOTES,
    )
    truth_path = out_dir / TRUTH_FILE
    truth_path.write_text(truth.to_json() + "\n", encoding="utf-8")
    return SimulationOutput(tuple(files), truth_path, truth)
