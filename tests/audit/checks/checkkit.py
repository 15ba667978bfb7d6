"""Tiny protocols and sessions for the audit check tests, built directly from numpy arrays.

The sessions do not go through the readers: channels are given in bracer's internal units (rad, rad/s, N*m,
N), as the readers would leave them, so each check is tested on its own.  The protocol is a small valid
protocol with one joint ("elbow") and one cuff; tests change it with :func:`protocol` patches.
"""

from __future__ import annotations

import copy
from collections.abc import Iterable, Mapping
from typing import Any

import numpy as np

from bracer.audit.context import AuditContext
from bracer.findings import Finding
from bracer.protocol.model import Protocol
from bracer.protocol.resolve import resolve
from bracer.session.model import InputFile, Session, Stream

DELETE = object()

BASE: dict[str, Any] = {
    "bracer_protocol": 1,
    "protocol": {
        "id": "TEST-01",
        "version": "1",
        "date": "2027-01-01",
        "title": "check tests",
        "population": "test population",
        "roles": ["responsible clinician"],
    },
    "device": {"name": "test rig (invented)", "kind": "upper-limb exoskeleton"},
    "joints": {
        "elbow": {
            "motion": "elbow flexion–extension",
            "positive": "flexion",
            "negative": "extension",
            "range": {
                "planned": {"min": "10 deg", "max": "100 deg"},
                "device": {"min": "0 deg", "max": "120 deg"},
                "mechanical": {"min": "-10 deg", "max": "130 deg"},
            },
            "speed": {"planned": "60 deg/s", "device": "90 deg/s"},
            "torque": {"planned": "8 N*m", "device": "12 N*m"},
            "stop_deceleration": "600 deg/s^2",
            "channels": {
                "position": {"column": "elb_pos", "unit": "deg"},
                "velocity": {"column": "elb_vel", "unit": "deg/s"},
                "torque": {"column": "elb_tau", "unit": "N*m"},
            },
        }
    },
    "contacts": {
        "cuff": {
            "kind": "cuff",
            "body_region": "lower_arm_wrist",
            "area": "40 cm^2",
            "force": {"quasi_static": "60 N", "transient": "90 N", "transient_max_duration": "500 ms"},
            "pressure": {"quasi_static": "2 N/cm^2", "transient": "3 N/cm^2"},
            "sustained": {"level": "35 N", "max_duration": "20 s"},
            "channels": {"force": {"columns": ["fx", "fy", "fz"], "unit": "N"}},
        }
    },
    "stop": {
        "category": 1,
        "latency_budget": "300 ms",
        "reaction_time": "30 ms",
        "standstill": {"speed": "2 deg/s", "hold": "50 ms"},
        "torque_off": {"level": "0.5 N*m", "within": "400 ms"},
        "stop_on_exceedance": ["device"],
    },
    "logging": {
        "streams": {"main": {"time": {"column": "t", "unit": "s"}, "sample_rate": "1000 Hz"}},
    },
    "audit": {"min_event_duration": "5 ms", "hysteresis": 0.02, "derivative_window": "21 ms"},
}


def _merge(base: dict[str, Any], patch: Mapping[str, Any]) -> dict[str, Any]:
    out = copy.deepcopy(base)
    for key, value in patch.items():
        if value is DELETE:
            out.pop(key, None)
        elif isinstance(value, Mapping) and isinstance(out.get(key), dict):
            out[key] = _merge(out[key], value)
        else:
            out[key] = copy.deepcopy(value)
    return out


def protocol(*patches: Mapping[str, Any]) -> Protocol:
    """The base protocol with nested patches applied in order (``DELETE`` removes a key)."""
    data = BASE
    for p in patches:
        data = _merge(data, p)
    return Protocol.model_validate(data)


def clock(duration: float, rate: float = 1000.0) -> np.ndarray:
    """Sample times 0, 1/rate, ... up to ``duration`` inclusive, s."""
    return np.arange(round(duration * rate) + 1) / rate


def stream(
    t: np.ndarray,
    channels: Mapping[str, np.ndarray],
    *,
    name: str = "main",
    states: Mapping[str, np.ndarray] | None = None,
    rate: float = 1000.0,
) -> Stream:
    """A stream with channels already in internal units."""
    return Stream(
        name=name,
        source=InputFile(f"{name}.csv", "0" * 64, 0, "csv"),
        time=np.asarray(t, dtype=np.float64),
        channels={k: np.asarray(v, dtype=np.float64) for k, v in channels.items()},
        units={k: "" for k in channels},
        expected_rate=rate,
        states=dict(states or {}),
    )


def context(
    proto: Protocol,
    *streams: Stream,
    participant: str | None = None,
    time_valid: Mapping[str, np.ndarray] | None = None,
) -> AuditContext:
    session = Session({s.name: s for s in streams}, time_valid=dict(time_valid or {}))
    return AuditContext(resolve(proto, participant), session)


def deg(x: Any) -> Any:
    return np.deg2rad(x)


def still_joint(t: np.ndarray, position_deg: float = 50.0) -> dict[str, np.ndarray]:
    """Channels of the base joint at rest at ``position_deg``, with no torque."""
    n = t.shape[0]
    return {
        "elb_pos": np.full(n, deg(position_deg)),
        "elb_vel": np.zeros(n),
        "elb_tau": np.zeros(n),
    }


def quiet_cuff(t: np.ndarray, force: float = 5.0) -> dict[str, np.ndarray]:
    n = t.shape[0]
    return {"fx": np.full(n, force), "fy": np.zeros(n), "fz": np.zeros(n)}


def plateau(t: np.ndarray, base: float, top: float, t0: float, t1: float) -> np.ndarray:
    """``base`` everywhere except ``top`` for t0 <= t <= t1 (a rectangular pulse)."""
    x = np.full(t.shape[0], base, dtype=np.float64)
    x[(t >= t0 - 1e-12) & (t <= t1 + 1e-12)] = top
    return x


def keys(findings: Iterable[Finding]) -> set[tuple[Any, ...]]:
    """Identity of each finding for exact-set checks: (code, kind, subject, quantity, layer, direction)."""
    return {(f.code, f.kind.value, f.subject, f.quantity, f.layer, f.direction) for f in findings}


def only(findings: list[Finding]) -> Finding:
    assert len(findings) == 1, [f.message for f in findings]
    return findings[0]
