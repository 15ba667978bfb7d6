"""Session summary figures, and the check registry (codes, names, documentation, imports)."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from checkkit import DELETE, clock, context, deg, plateau, protocol, quiet_cuff, still_joint, stream

from bracer.audit.checks import ALL
from bracer.audit.summary import summarise
from bracer.findings import CHECKS


def test_summary_figures() -> None:
    t = clock(10.0)
    ch = still_joint(t) | quiet_cuff(t)
    ch["elb_vel"] = deg(plateau(t, 0.0, 30.0, 2.0, 5.0))  # moving 3 s (3001 samples of 1 ms)
    ch["elb_pos"] = deg(np.clip(20.0 + 10.0 * (t - 2.0), 20.0, 50.0))
    # force: 30 N for 4 s, 10 N otherwise (6 s): RMS = sqrt((4·900 + 6·100)/10) = sqrt(420)
    ch["fx"] = plateau(t, 10.0, 30.0, 1.0, 5.0 - 1e-3)
    ch["fy"] = np.zeros(t.size)
    estop = plateau(t, 0.0, 1.0, 7.0, 8.0)
    ctx = context(
        protocol({"logging": {"triggers": {"emergency_stop": {"column": "estop", "active": [1]}}}}),
        stream(t, ch, states={"estop": estop}),
    )
    s = summarise(ctx)
    assert s.duration == pytest.approx(10.0)
    assert s.active_time == pytest.approx(3.001, abs=1e-9) and s.motion_unknown_time == 0.0
    (cuff,) = s.contacts
    assert (cuff.contact, cuff.unit) == ("cuff", "N")
    assert cuff.peak == pytest.approx(30.0) and cuff.t_peak == pytest.approx(1.0)
    assert cuff.rms == pytest.approx(np.sqrt(420.0), rel=1e-3) and cuff.coverage == 1.0
    (elbow,) = s.joints
    assert (elbow.min, elbow.max, elbow.range_used, elbow.unit) == (
        pytest.approx(20.0),
        pytest.approx(50.0),
        pytest.approx(30.0),
        "deg",
    )
    assert elbow.speed_source == "logged"
    assert s.stops == 1 and dict(s.stops_by_source) == {"emergency_stop": 1}
    assert s.to_dict()["stops_by_source"] == {"emergency_stop": 1}


def test_summary_states_derived_speed_and_what_was_not_available() -> None:
    t = clock(2.0)
    ch = still_joint(t)
    del ch["elb_vel"]
    ch["elb_pos"][500:600] = np.nan
    ctx = context(protocol({"joints": {"elbow": {"channels": {"velocity": DELETE}}}}), stream(t, ch))
    s = summarise(ctx)
    (elbow,) = s.joints
    assert elbow.speed_source == "derived" and "21 samples" in elbow.speed_note
    assert elbow.coverage == pytest.approx(1 - 100 / t.size)
    # derived speed invalid over the NaN run and half a window either side: motion unknown, not "at rest"
    assert s.motion_unknown_time == pytest.approx(0.120, abs=2e-3)
    (cuff,) = s.contacts
    assert cuff.peak is None and "not in the log" in cuff.note


def test_every_check_is_registered_once_with_its_code_documented() -> None:
    codes = [m.CHECK.code for m in ALL]
    assert len(set(codes)) == len(codes) == 15
    for m in ALL:
        assert CHECKS[m.CHECK.code] is m.CHECK
        doc = m.__doc__ or ""
        assert doc.startswith(f"{m.CHECK.code} {m.CHECK.name}:"), m.__name__
        assert callable(m.run)
    assert {c[0] for c in codes} == {"A"}
    assert sorted(codes) == codes  # ALL runs in code order


def test_checks_import_neither_the_cli_nor_report_writers_nor_scipy() -> None:
    code = (
        "import sys, bracer.audit.checks, bracer.audit.summary;"
        "bad = [m for m in sys.modules if m.startswith(('bracer.cli', 'bracer.report', 'scipy', 'pandas'))];"
        "print(bad)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"
