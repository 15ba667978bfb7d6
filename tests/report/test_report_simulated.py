"""The report of a simulated session against the simulator's ground truth (``truth.json``): the scripted
incidents are computed from closed-form motion and tissue models independently of the audit, so every
exceedance, stop and candidate incident the report shows can be checked against them."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from reportkit import inside

from bracer.report.plots import Chart

EXAMPLE = Path(__file__).resolve().parents[2] / "protocols" / "alder4-upper-limb.yaml"


@pytest.fixture(scope="module")
def simulated(tmp_path_factory: pytest.TempPathFactory) -> tuple[Any, dict[str, Any]]:
    simulate_mod = pytest.importorskip("bracer.simulate")
    from bracer.protocol.load import load_protocol
    from bracer.report.run import ReportRequest, make_report

    folder = tmp_path_factory.mktemp("sim")
    out = simulate_mod.simulate(load_protocol(EXAMPLE), folder, participant="AV-P01", seed=1)
    truth = json.loads(out.truth_path.read_text(encoding="utf-8"))
    with inside(folder):
        doc = make_report(ReportRequest(EXAMPLE, tuple(out.files), "AV-P01", "SIM-1"))
    return doc, truth


def _entries(truth: dict[str, Any], kind: str, quantities: tuple[str, ...]) -> list[dict[str, Any]]:
    return [e for e in truth["incidents"] if e["kind"] == kind and e["quantity"] in quantities]


def test_every_scripted_exceedance_is_in_the_findings_table(simulated) -> None:  # type: ignore[no-untyped-def]
    doc, truth = simulated
    scripted = _entries(truth, "violation", ("position", "speed", "force", "sustained_force"))
    assert len(scripted) >= 4
    for e in scripted:
        hits = [
            f
            for f in doc.findings
            if f.kind == "violation"
            and f.subject == e["subject"]
            and f.quantity == e["quantity"]
            and f.t_start is not None
            and abs(f.t_start - e["t_start"]) < 0.05
        ]
        assert hits, f"no finding for {e['incident']} on {e['subject']}"
        f = hits[0]
        assert f.unit == e["unit"]
        assert f.peak == pytest.approx(e["peak"], rel=0.02)
        assert f.limit == pytest.approx(e["limit"])
        # an exceedance has a zoom plot of its own, and the summary counts it in its class
        assert f.plot == f"zoom-{f.ref}"
        assert any(f.ref in c.refs and c.violations for c in doc.summary)


def test_the_stops_table_matches_the_scripted_stops(simulated) -> None:  # type: ignore[no-untyped-def]
    doc, truth = simulated
    latencies = _entries(truth, "stop", ("stop_latency",)) + _entries(truth, "violation", ("stop_latency",))
    assert len(doc.stops) == len(latencies) >= 2
    for s, e in zip(doc.stops, sorted(latencies, key=lambda e: e["t_start"]), strict=True):
        assert s.t_trigger == pytest.approx(e["t_start"], abs=2e-3)
        assert s.latency == pytest.approx(e["peak"], abs=2.0)  # ms: about one sample each way at 1 kHz
        assert s.latency_budget == pytest.approx(e["limit"])
        assert s.outside == (e["peak"] > e["limit"])


def test_candidate_incidents_follow_from_the_exceedances(simulated) -> None:  # type: ignore[no-untyped-def]
    doc, _ = simulated
    by_finding = {i.finding: i for i in doc.incidents}
    for f in doc.findings:
        if f.code in ("A111", "A113") and f.kind == "violation":
            assert by_finding[f.ref].categories == ("adverse event", "device deficiency")
        if f.code == "A201" and f.kind == "violation":
            assert by_finding[f.ref].categories == ("device deficiency",)
            assert "slower than its latency budget" in by_finding[f.ref].event
        if f.kind != "violation":
            assert f.ref not in by_finding


def test_the_overview_plot_keeps_the_force_peak(simulated) -> None:  # type: ignore[no-untyped-def]
    # The plotted line of two minutes at 500 Hz, decimated to the plot's pixel columns, still reaches the peak
    # the audit's summary reports for the cuff (the same valid samples, not an approximation).
    doc, _ = simulated
    peak = next(c for c in doc.sources["audit"]["summary"]["contacts"] if c["contact"] == "upper_arm_cuff")[
        "peak"
    ]
    chart = next(f.chart for f in doc.figures if f.id == "contact-upper_arm_cuff")
    assert isinstance(chart, Chart)
    plotted = max(float(np.max(x)) for _, x in chart.panels[0].series[0].pieces)
    assert plotted == pytest.approx(peak, rel=1e-12)
    n_points = sum(t.size for _, t in chart.panels[0].series[0].pieces)
    assert n_points < 60_000 / 10  # 60 000 samples drawn as far fewer points


def test_the_logging_gap_is_named_as_not_analysed(simulated) -> None:  # type: ignore[no-untyped-def]
    doc, truth = simulated
    gaps = [e for e in truth["incidents"] if e["quantity"] == "gap"]
    assert gaps
    dq = next(c for c in doc.summary if c.key == "data_quality")
    assert dq.events >= 1
    assert doc.coverage is not None and doc.coverage.fraction < 1.0


def test_every_finding_with_a_time_links_to_a_plot_that_shows_it(simulated) -> None:  # type: ignore[no-untyped-def]
    doc, _ = simulated
    ids = {f.id for f in doc.figures}
    for f in doc.findings:
        if f.t_start is not None:
            assert f.plot in ids, f"{f.ref} ({f.code}) has no plot"
    gap = next(f for f in doc.findings if f.code == "Q104")
    chart = doc.figure(gap.plot).chart
    assert any(sp.label == gap.ref for p in chart.panels for sp in p.spans)  # the gap is marked where it is
