"""Protocols for the review tests, built in code: a small clean base and patches of it.

A module of its own (not conftest.py) so that test modules import it by a name no other test folder uses.
"""

from __future__ import annotations

import copy
from pathlib import Path
from typing import Any

from bracer.findings import Finding, Severity
from bracer.protocol.model import Protocol
from bracer.protocol.resolve import Resolution, resolve

ROOT = Path(__file__).resolve().parents[2]
EXAMPLE = ROOT / "protocols" / "alder4-upper-limb.yaml"
FLAWED = ROOT / "protocols" / "flawed-example.yaml"

#: Marks a key to delete in :func:`build`.
DELETE = object()


def _base() -> dict[str, Any]:
    """One elbow joint, one forearm cuff, a stop function and one 1 kHz stream; participant P1 measured.

    Reviewed for P1 it has no finding at warning or error: every test changes one thing and asserts exactly
    what that change brings.  (Invented values, chosen only to be consistent.)
    """
    return {
        "bracer_protocol": 1,
        "protocol": {
            "id": "T-1",
            "version": "1",
            "date": "2027-01-01",
            "title": "review test protocol",
            "population": "adults (test)",
            "roles": ["responsible clinician"],
        },
        "device": {"name": "test rig (invented)", "kind": "upper-limb exoskeleton"},
        "joints": {
            "elbow": {
                "motion": "elbow flexion–extension",
                "positive": "flexion",
                "negative": "extension",
                "reference": {"positive": "elbow flexion", "negative": "elbow extension"},
                "range": {
                    "planned": {"min": "20 deg", "max": "120 deg"},
                    "device": {"min": "10 deg", "max": "130 deg"},
                    "mechanical": {"min": "5 deg", "max": "140 deg"},
                },
                "speed": {"planned": "30 deg/s", "device": "60 deg/s"},
                "torque": {"planned": "5 N*m", "device": "8 N*m"},
                "stop_deceleration": "1000 deg/s^2",
                "channels": {
                    "position": {"column": "elb_pos", "unit": "deg"},
                    "velocity": {"column": "elb_vel", "unit": "deg/s"},
                    "torque": {"column": "elb_tau", "unit": "N*m"},
                },
            },
        },
        "contacts": {
            "cuff": {
                "kind": "cuff",
                "body_region": "lower_arm_wrist",
                "specific_area": "forearm muscle",
                "area": "30 cm^2",
                "lever_arms": {"elbow": "0.2 m"},
                "force": {"quasi_static": "50 N", "transient": "75 N"},
                "pressure": {"quasi_static": "3 N/cm^2"},
                "sustained": {"level": "30 N", "max_duration": "20 s"},
                "channels": {"force": {"column": "cuff_f", "unit": "N"}},
            },
        },
        "stop": {
            "category": 1,
            "latency_budget": "300 ms",
            "reaction_time": "30 ms",
            "standstill": {"speed": "2 deg/s", "hold": "50 ms"},
        },
        "logging": {
            "streams": {"main": {"time": {"column": "t"}, "sample_rate": "1000 Hz"}},
            "triggers": {"emergency_stop": {"column": "estop", "active": [1]}},
        },
        "cautions": {},
        "participants": {
            "P1": {
                "rom": {
                    "elbow": {"min": "0 deg", "max": "145 deg", "date": "2027-01-02", "method": "goniometry"}
                }
            }
        },
    }


def _merge(target: dict[str, Any], patch: dict[str, Any]) -> None:
    for key, value in patch.items():
        if value is DELETE:
            target.pop(key, None)
        elif isinstance(value, dict) and isinstance(target.get(key), dict):
            _merge(target[key], value)
        else:
            target[key] = copy.deepcopy(value)


def build(patch: dict[str, Any] | None = None) -> Protocol:
    """The base protocol with ``patch`` merged in (nested dicts merge; :data:`DELETE` removes a key)."""
    data = _base()
    _merge(data, patch or {})
    return Protocol.model_validate(data)


def resolved(patch: dict[str, Any] | None = None, participant: str | None = "P1") -> Resolution:
    return resolve(build(patch), participant)


def keyset(findings: tuple[Finding, ...], min_severity: Severity = Severity.INFO) -> set[tuple[Any, ...]]:
    """(code, severity label, subject, quantity, direction, layer) of each finding at or above a severity."""
    return {
        (f.code, f.severity.label, f.subject, f.quantity, f.direction, f.layer)
        for f in findings
        if f.severity >= min_severity
    }
