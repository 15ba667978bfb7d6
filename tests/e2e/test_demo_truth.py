"""Every demo session's audit against the simulator's ground truth: exactly the scripted incidents, nothing at
warning level or above in a clean session, stop latencies within one sample period of the closed form.

The ground truth is computed by the simulator from closed-form motion (minimum-jerk moves; a stop as a
reaction delay then constant deceleration, t = t_r + v0/a; REFERENCES.md [V]) on the noise-free signal,
independently of the audit, which sees only the logged files.  The matching rule is in e2ekit's docstring.
"""

from __future__ import annotations

import pytest
from e2ekit import DemoRun, Session, match

from bracer.demo.study import STUDY, DemoSession

IDS = [f"{s.participant}-{s.session}" for s in STUDY]


def _load(demo_run: DemoRun, spec: DemoSession) -> Session:
    assert demo_run.exit_code == 0, demo_run.output
    entry = demo_run.session(spec.participant, spec.session)
    return Session.load((demo_run.folder / entry["truth"]).parent)


@pytest.mark.parametrize("spec", STUDY, ids=IDS)
def test_the_audit_finds_exactly_the_scripted_incidents(demo_run: DemoRun, spec: DemoSession) -> None:
    s = _load(demo_run, spec)
    assert s.truth["scenario"] == list(spec.incidents)
    assert not s.truth["skipped"]
    # every scripted event lasts at least the protocol's minimum event duration, so the audit must report it
    min_duration = s.protocol.audit.min_event_duration.si
    for e in s.truth["incidents"]:
        if e["kind"] in ("violation", "near_miss") and e["quantity"] != "stop_latency":
            assert e["t_end"] - e["t_start"] >= min_duration, e
    problems, left_over = match(s)
    assert problems == []
    assert left_over == [], [f"{f['code']} {f['severity']}: {f['message']}" for f in left_over]


@pytest.mark.parametrize("spec", STUDY, ids=IDS)
def test_each_scripted_incident_kind_leaves_its_trace(demo_run: DemoRun, spec: DemoSession) -> None:
    # One truth entry at least per scripted incident (a stop gives several), so none was dropped unseen.
    s = _load(demo_run, spec)
    played = {e["incident"] for e in s.truth["incidents"]}
    assert played == {text.split(":")[0] for text in spec.incidents}


@pytest.mark.parametrize("spec", [s for s in STUDY if s.clean], ids=lambda s: f"{s.participant}-{s.session}")
def test_a_clean_session_has_nothing_at_warning_or_above(demo_run: DemoRun, spec: DemoSession) -> None:
    s = _load(demo_run, spec)
    assert s.truth["incidents"] == []
    serious = [f for f in s.findings if f["severity"] in ("warning", "error")]
    assert serious == [], [f["message"] for f in serious]
    assert s.audit["coverage"]["fraction"] > 0.99


@pytest.mark.parametrize(
    "spec",
    [s for s in STUDY if any("stop" in i for i in s.incidents)],
    ids=lambda s: f"{s.participant}-{s.session}",
)
def test_stop_latencies_are_within_one_sample_of_the_closed_form(
    demo_run: DemoRun, spec: DemoSession
) -> None:
    s = _load(demo_run, spec)
    stops = [e for e in s.truth["incidents"] if e["quantity"] == "stop_latency"]
    assert stops
    for e in stops:
        stop = e["stop"]
        # closed form, written out from the truth's own inputs (REFERENCES.md [V]): the slowest joint falls
        # below the standstill speed v_s after t_r + (v0 - v_s)/a; every joint's t_r + v0/a
        for j in stop["joints"]:
            assert j["latency"] == pytest.approx(
                stop["reaction_time"] + j["v0"] / j["deceleration"], rel=1e-12
            )
        assert e["peak"] == pytest.approx(stop["latency_to_standstill_speed"] * 1e3, rel=1e-12)
        dt_ms = 1e3 * s.period(e["stream"])
        found = [
            f
            for f in s.findings
            if f["code"] == "A201"
            and f["extra"]["trigger"] == stop["trigger"]
            and abs(f["t_start"] - stop["t_trigger"]) <= s.period(e["stream"])
        ]
        assert len(found) == 1
        assert found[0]["unit"] == "ms"
        assert abs(found[0]["peak"] - e["peak"]) <= dt_ms
        assert (found[0]["kind"] == "violation") == (e["peak"] > e["limit"])
