"""The SVG charts: marks that read without colour, labelled limits, round ticks, the same bytes each time."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from bracer.report import plots
from bracer.report.plots import (
    Band,
    Bar,
    BarChart,
    Chart,
    Level,
    Marker,
    Panel,
    Series,
    Span,
    nice_ticks,
    render,
)

NS = {"s": "http://www.w3.org/2000/svg"}


def _chart(t1: float = 10.0) -> Chart:
    t = np.linspace(0.0, t1, 200)
    panel = Panel(
        "position (deg)",
        (Series("", ((t, 60 + 40 * np.sin(t)),)),),
        bands=(
            Band(120, +1, "planned", "planned 120 deg"),
            Band(130, +1, "device", "device 130 deg"),
            Band(140, +1, "mechanical", "mechanical 140 deg"),
        ),
        levels=(Level(135, "participant", "participant 135 deg (measured)"),),
        spans=(Span(t1 * 0.4, t1 * 0.5, "F3"),),
        markers=(Marker(t1 * 0.7, "S1", "trigger"),),
    )
    return Chart((panel,), 0.0, t1)


def test_every_limit_layer_has_its_own_dash_and_zone_pattern() -> None:
    # Greyscale and colour-blind reading: the layers must differ by line dash and by zone fill, not by colour.
    dashes = [plots._LAYER_LINE[k][1] for k in ("planned", "device", "mechanical", "participant")]
    assert len(set(dashes)) == 4
    fills = [plots._band_fill(k, "u")[0] for k in ("planned", "device", "mechanical")]  # type: ignore[arg-type]
    assert len(set(fills)) == 3
    assert len({d for _, d in plots._SERIES}) == len(plots._SERIES)  # series differ by dash too


def test_every_limit_line_and_event_is_labelled_in_words() -> None:
    svg = render(_chart(), "c1", standalone=True, title="elbow")
    texts = [el.text for el in ET.fromstring(svg).iter("{http://www.w3.org/2000/svg}text")]
    for label in (
        "planned 120 deg",
        "device 130 deg",
        "mechanical 140 deg",
        "participant 135 deg (measured)",
        "F3",
        "S1",
        "position (deg)",
    ):
        assert label in texts


def test_ids_are_prefixed_so_that_charts_can_share_a_page() -> None:
    a = render(_chart(), "zoom-F1", standalone=False)
    b = render(_chart(), "zoom-F2", standalone=False)
    ids_a = set(re.findall(r'id="([^"]+)"', a))
    ids_b = set(re.findall(r'id="([^"]+)"', b))
    assert ids_a and not ids_a & ids_b
    assert all(i.startswith("zoom-F1") for i in ids_a)
    assert "xmlns" not in a and 'xmlns="http://www.w3.org/2000/svg"' in render(_chart(), "x", standalone=True)


def test_rendering_is_deterministic() -> None:
    assert render(_chart(), "c", standalone=True) == render(_chart(), "c", standalone=True)


@pytest.mark.parametrize(
    ("lo", "hi", "expected"),
    [
        # hand-worked: the raw step (hi − lo)/5 rounded up to 1, 2, 2.5 or 5 × 10^k
        (0.0, 10.0, [0.0, 2.0, 4.0, 6.0, 8.0, 10.0]),  # raw 2 -> 2
        (-30.0, 150.0, [0.0, 50.0, 100.0, 150.0]),  # raw 36 -> 50
        (92.8, 93.45, [92.8, 93.0, 93.2, 93.4]),  # raw 0.13 -> 0.2
        (0.0, 0.75, [0.0, 0.2, 0.4, 0.6]),  # raw 0.15 -> 0.2
    ],
)
def test_ticks_are_round_numbers_inside_the_range(lo: float, hi: float, expected: list[float]) -> None:
    assert nice_ticks(lo, hi, 5) == pytest.approx(expected)


@settings(max_examples=200, deadline=None)
@given(st.floats(-1e6, 1e6), st.floats(1e-6, 1e6))
def test_ticks_are_evenly_spaced_round_steps_within_the_range(lo: float, width: float) -> None:
    # an axis spans at least a millionth of its own magnitude (below that float64 ticks lose their digits)
    assume(width >= 1e-6 * max(1.0, abs(lo)))
    hi = lo + width
    ticks = nice_ticks(lo, hi, 5)
    assert 1 <= len(ticks) <= 11
    tol = 1e-9 * max(1.0, abs(lo), abs(hi))
    assert all(lo - tol <= t <= hi + tol for t in ticks)
    if len(ticks) > 1:
        steps = np.diff(ticks)
        assert np.allclose(steps, steps[0], rtol=1e-6)
        mantissa = steps[0] / 10 ** np.floor(np.log10(steps[0]))
        assert min(abs(mantissa - m) for m in (1, 2, 2.5, 5, 10)) < 1e-6


def test_a_long_session_is_labelled_in_minutes() -> None:
    svg = render(_chart(1800.0), "c", standalone=True)
    assert "time on the log clock (min)" in svg
    texts = [el.text for el in ET.fromstring(svg).iter("{http://www.w3.org/2000/svg}text")]
    assert {"0", "10", "20", "30"} <= set(texts)
    assert "time on the log clock (s)" in render(_chart(600.0), "c", standalone=True)


def test_a_stop_that_never_came_is_drawn_open_and_said_in_words() -> None:
    chart = BarChart(
        (
            Bar("S1 to standstill", 387.0, 300.0, "ms", note="387 ms, over the 300 ms budget"),
            Bar("S1 to torque off", None, 400.0, "ms", "torque_off", note="not off before log end"),
        ),
        "time after the trigger (ms)",
        cap=900.0,
    )
    root = ET.fromstring(render(chart, "b", standalone=True))
    texts = {el.text: el for el in root.iter("{http://www.w3.org/2000/svg}text")}
    assert texts["387 ms, over the 300 ms budget"].get("font-weight") == "bold"
    assert "not off before log end" in texts
    assert {"budget 300 ms", "budget 400 ms"} <= set(texts)
    dashed = [r for r in root.iter("{http://www.w3.org/2000/svg}rect") if r.get("stroke-dasharray")]
    assert len(dashed) == 1  # the open bar of the event that never came
