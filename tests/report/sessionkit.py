"""A small, fixed session of the example protocol for the report's golden files: generated in code.

Built on the sample-log generator (tests/data/logs/logmaker.py): 3 s, joints at 1 kHz, cuffs at 500 Hz, with

* a push into the upper-arm cuff from 0.6 s to 1.4 s (45 N added on one axis, 50 ms smooth ramps): longer than
  the 500 ms allowed for transient contact, so over participant AV-P01's quasi-static limit of 40 N;
* an emergency stop at 2.0 s: after a 30 ms reaction every joint decelerates at a constant 300 deg/s² to rest,
  and the torque falls to near zero 60 ms after standstill (sensor noise kept throughout).

The kit does not depend on the simulator, so the golden files change only when the report or the audit does.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "data" / "logs"))
import logmaker  # noqa: E402

DURATION = 3.0
T_STOP = 2.0
REACTION = 0.030  # s
DECEL = 300.0  # deg/s^2
PUSH = (0.6, 1.4)  # s
PUSH_FORCE = 45.0  # N


def _ramp(t: np.ndarray, a: float, b: float, rise: float = 0.05) -> np.ndarray:
    """0 outside [a, b], 1 inside, with smooth (cosine) rises of ``rise`` seconds."""
    up = np.clip((t - a) / rise, 0.0, 1.0)
    down = np.clip((b - t) / rise, 0.0, 1.0)
    return 0.5 - 0.5 * np.cos(np.pi * np.minimum(up, down))


def tables() -> tuple[object, object]:
    rng = np.random.default_rng(7)
    main = logmaker.main_table(DURATION)
    cuffs = logmaker.cuff_table(DURATION)
    t = main.column("t").to_numpy()
    k = int(np.searchsorted(t, T_STOP))
    after = t[k:] - T_STOP
    estop = np.zeros(t.size, dtype=np.int64)
    estop[k : k + 300] = 1
    main = logmaker.replace_column(main, "estop", estop)
    for prefix in logmaker.JOINTS:
        pos = main.column(f"{prefix}_pos").to_numpy().copy()
        vel = main.column(f"{prefix}_vel").to_numpy().copy()
        tau = main.column(f"{prefix}_tau").to_numpy().copy()
        v0 = float(np.mean(vel[k - 5 : k]))
        braking = np.clip(after - REACTION, 0.0, None)
        v = np.sign(v0) * np.clip(abs(v0) - DECEL * braking, 0.0, None)
        t_still = REACTION + abs(v0) / DECEL
        vel[k:] = v + rng.normal(0, 0.05, after.size)
        pos[k:] = pos[k] + np.cumsum(v) / 1000.0 + rng.normal(0, 0.002, after.size)
        off = after > t_still + 0.06
        tau[k:][off] = 0.1 + rng.normal(0, 0.02, int(off.sum()))
        for name, x in ((f"{prefix}_pos", pos), (f"{prefix}_vel", vel), (f"{prefix}_tau", tau)):
            main = logmaker.replace_column(main, name, np.round(x, 4) + 0.0)
    tc = cuffs.column("t_cuff").to_numpy()
    fx = cuffs.column("ua_fx").to_numpy() + PUSH_FORCE * _ramp(tc, *PUSH)
    cuffs = logmaker.replace_column(cuffs, "ua_fx", np.round(fx, 4) + 0.0)
    return main, cuffs


def write_session(folder: Path) -> list[Path]:
    """Write main.csv and cuffs.csv into ``folder``; return their paths."""
    main, cuffs = tables()
    return logmaker.write_logs(Path(folder), ".csv", main, cuffs)  # type: ignore[arg-type]


PROTOCOL = logmaker.PROTOCOL
