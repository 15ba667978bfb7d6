"""A generated one-hour 1 kHz session for the audit benchmark (protocol: bench/bench-8-joints.yaml).

Invented data, vectorised with numpy (no loop over samples): eight joints doing minimum-jerk reaching
repetitions (Flash & Hogan 1985: x(τ) = A + (B − A)(10τ³ − 15τ⁴ + 6τ⁵)) within their planned ranges, with
sensor noise; torque from a gravity term, damping and noise; two cuffs whose 3-axis force follows the motion;
four status columns.  A few incidents give the checks real work without a storm of findings:

* one repetition of the elbow faster than its planned speed, one of the shoulder flexion near its planned end;
* an emergency stop (with a safety-state change) and a protective stop whose braking is too slow for the
  latency budget; the joints brake at constant deceleration after the reaction time, hold, then return;
* a quasi-static force exceedance on the forearm cuff, a transient contact on the upper-arm cuff;
* software limits off for two seconds while the arm moves;
* a NaN run in one torque channel and a 40-sample gap in the clock.

Values are rounded as a logger writes them (positions 1e-4 deg, the rest 1e-3), so CSV and Parquet hold the
same numbers.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

__all__ = ["COLUMNS", "JOINTS", "generate", "write"]

RATE = 1000.0  # Hz
DURATION = 3600.0  # s
MOVE = 4.5  # s, slot for one movement (out or back)
REST = 1.0  # s, rest after each movement slot
CYCLE = 2 * (MOVE + REST)  # s
DEFAULT_D = 3.0  # s, duration of one minimum-jerk movement


@dataclass(frozen=True, slots=True)
class JointPlan:
    """One joint's repetitions: from ``a`` to ``b`` deg, torque ``gravity`` N*m at full amplitude."""

    name: str
    prefix: str
    a: float
    b: float
    gravity: float
    damping: float  # N*m per deg/s
    decel: float  # deg/s^2 during a stop


JOINTS: tuple[JointPlan, ...] = (
    JointPlan("shoulder_flexion", "sh_flex", 0.0, 60.0, 6.0, 0.02, 600.0),
    JointPlan("shoulder_abduction", "sh_abd", 20.0, 70.0, 5.0, 0.02, 600.0),
    JointPlan("shoulder_rotation", "sh_rot", -20.0, 30.0, 2.0, 0.01, 800.0),
    JointPlan("elbow_flexion", "elb", 30.0, 100.0, 3.0, 0.01, 900.0),
    JointPlan("forearm_rotation", "fa_rot", -20.0, 20.0, 0.5, 0.004, 900.0),
    JointPlan("wrist_flexion", "wr_flex", -20.0, 25.0, 0.5, 0.004, 900.0),
    JointPlan("wrist_deviation", "wr_dev", -5.0, 10.0, 0.3, 0.003, 900.0),
    JointPlan("shoulder_elevation", "sh_elev", 0.0, 10.0, 3.0, 0.02, 600.0),
)
CUFFS = (("ua", (0.8, 0.5, 0.33)), ("fa", (0.6, 0.7, 0.38)))
STATUS = ("estop", "pstop", "safety_state", "soft_limits_on")
COLUMNS: tuple[str, ...] = (
    "t",
    *(f"{j.prefix}_{q}" for j in JOINTS for q in ("pos", "vel", "tau")),
    *(f"{c}_f{axis}" for c, _ in CUFFS for axis in "xyz"),
    *STATUS,
)

# Incidents, times in s on the log's clock.
FAST_ELBOW_CYCLE = 82  # elbow out-move in 1.3 s: 1.875 * 70 / 1.3 = 101 deg/s > 90 deg/s planned
NEAR_END_CYCLE = 150  # shoulder flexion out to 117.5 deg (planned end 120 deg, near-miss band 3 deg)
ESTOP_AT = 163 * CYCLE + 1.0  # 1 s into an out-move
PSTOP_AT = 245 * CYCLE + 1.2
SLOW_PSTOP_DECEL = 120.0  # deg/s^2: braking too slow for the 300 ms budget
FORCE_QS = (1200.0, 1.2, 58.0)  # forearm cuff: start s, duration s, peak N (quasi-static limit 50 N)
FORCE_TR = (2400.0, 0.25, 84.0)  # upper-arm cuff: transient contact, below its 90 N transient limit
SOFT_OFF = (272 * CYCLE + 6.0, 2.0)  # software limits off during a back-move: start s, duration s
NAN_RUN = ("elb_tau", 1500.0, 20)  # column, start s, samples
GAP = (2000.0, 40)  # start s, samples left out


def _min_jerk(tau: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Normalised minimum-jerk profile and its derivative over τ in [0, 1] (clipped outside)."""
    s = np.clip(tau, 0.0, 1.0)
    s2 = s * s
    pos = s2 * s * (10.0 - 15.0 * s + 6.0 * s2)
    vel = 30.0 * s2 * (1.0 - 2.0 * s + s2)
    return pos, vel


def _joint_motion(t: np.ndarray, plan: JointPlan, rng: np.random.Generator) -> tuple[np.ndarray, np.ndarray]:
    """Position (deg) and velocity (deg/s) of one joint's repetitions, before incidents and noise."""
    n_cycles = int(np.ceil(DURATION / CYCLE)) + 1
    cycle = (t // CYCLE).astype(np.int64)
    phase = t - cycle * CYCLE
    amp = (plan.b - plan.a) * rng.uniform(0.9, 1.05, n_cycles)
    dur = np.full(n_cycles, DEFAULT_D) * rng.uniform(0.95, 1.05, n_cycles)
    if plan.name == "elbow_flexion":
        dur[FAST_ELBOW_CYCLE] = 1.3
        amp[FAST_ELBOW_CYCLE] = plan.b - plan.a
    if plan.name == "shoulder_flexion":
        amp[NEAR_END_CYCLE] = 117.5 - plan.a
        dur[NEAR_END_CYCLE] = 4.4
    back = phase >= MOVE + REST
    local = np.where(back, phase - (MOVE + REST), phase)
    d = dur[cycle]
    shape, rate = _min_jerk(local / d)
    rate[local > d] = 0.0
    sign = np.where(back, -1.0, 1.0)
    a = amp[cycle]
    pos = np.where(back, plan.a + a, plan.a) + sign * a * shape
    vel = sign * a * rate / d
    return pos, vel


def _stop(
    t: np.ndarray, pos: np.ndarray, vel: np.ndarray, at: float, decel: float, home: float
) -> np.ndarray:
    """Brake at ``decel`` after the 30 ms reaction time, hold, then return to ``home`` by the end of the
    cycle (``pos``, ``vel`` in place).  Returns the mask of samples whose torque is off (category 1: torque
    held while braking, off 60 ms after standstill until the return starts)."""
    i0 = int(np.searchsorted(t, at))
    end = int(np.searchsorted(t, (np.floor(at / CYCLE) + 1) * CYCLE)) - 1
    seg = slice(i0, end)
    ts = t[seg] - at
    v0, x0 = float(vel[i0]), float(pos[i0])
    react = 0.03
    t_brake = abs(v0) / decel
    sgn = np.sign(v0)
    tb = np.clip(ts - react, 0.0, t_brake)
    v = np.where(ts < react, v0, v0 - sgn * decel * tb)
    x = x0 + v0 * np.minimum(ts, react) + v0 * tb - sgn * 0.5 * decel * tb * tb
    x_stop = x0 + v0 * react + 0.5 * v0 * t_brake
    t_ret = (end - i0) / RATE - 3.5  # return over 3 s, ending 0.5 s before the cycle ends
    shape, rate = _min_jerk((ts - t_ret) / 3.0)
    ret = ts >= t_ret
    pos[seg] = np.where(ret, x_stop + (home - x_stop) * shape, x)
    vel[seg] = np.where(ret, (home - x_stop) * rate / 3.0, v)
    off = np.zeros(t.shape, dtype=bool)
    off[seg] = (ts >= react + t_brake + 0.06) & ~ret
    return off


def _bump(t: np.ndarray, start: float, duration: float) -> np.ndarray:
    """A smooth 0..1..0 bump (sin²) over [start, start + duration]."""
    u = (t - start) / duration
    return np.where((u >= 0) & (u <= 1), np.sin(np.pi * np.clip(u, 0, 1)) ** 2, 0.0)


def generate(seed: int = 8) -> dict[str, np.ndarray]:
    """The session's columns (see :data:`COLUMNS`), float64 in the protocol's units, status as int8."""
    rng = np.random.default_rng(seed)
    n = int(DURATION * RATE)
    t = np.arange(n) / RATE
    cols: dict[str, np.ndarray] = {"t": t}
    speed_sum = np.zeros(n)
    estop = np.zeros(n, dtype=np.int8)
    pstop = np.zeros(n, dtype=np.int8)
    estop[(t >= ESTOP_AT) & (t < ESTOP_AT + 3.0)] = 1
    pstop[(t >= PSTOP_AT) & (t < PSTOP_AT + 2.0)] = 1
    for plan in JOINTS:
        pos, vel = _joint_motion(t, plan, rng)
        span = plan.b - plan.a
        off = _stop(t, pos, vel, ESTOP_AT, plan.decel, plan.a)
        slow = SLOW_PSTOP_DECEL if plan.name == "elbow_flexion" else plan.decel
        off |= _stop(t, pos, vel, PSTOP_AT, slow, plan.a)
        tau = plan.gravity * (0.4 + 0.6 * (pos - plan.a) / span) + plan.damping * vel
        tau[off] = 0.0
        speed_sum += np.abs(vel) / span
        pos += rng.normal(0.0, 0.01, n)
        vel += rng.normal(0.0, 0.2, n)
        tau += rng.normal(0.0, 0.02, n)
        cols[f"{plan.prefix}_pos"] = np.round(pos, 4)
        cols[f"{plan.prefix}_vel"] = np.round(vel, 3)
        cols[f"{plan.prefix}_tau"] = np.round(tau, 3)
    effort = speed_sum / len(JOINTS)  # 1/s, about 0..0.6
    for cuff, weights in CUFFS:
        magnitude = 0.4 + 25.0 * effort
        if cuff == "fa":
            magnitude = magnitude + (FORCE_QS[2] - 15.0) * _bump(t, FORCE_QS[0], FORCE_QS[1]) ** 0.25
        else:
            magnitude = magnitude + (FORCE_TR[2] - 10.0) * _bump(t, FORCE_TR[0], FORCE_TR[1])
        norm = float(np.sqrt(sum(w * w for w in weights)))
        for axis, w in zip("xyz", weights, strict=True):
            f = magnitude * (w / norm) + rng.normal(0.0, 0.15, n)
            cols[f"{cuff}_f{axis}"] = np.round(f, 3)
    safety = np.zeros(n, dtype=np.int8)
    safety[(t >= ESTOP_AT) & (t < ESTOP_AT + 3.5)] = 2
    soft = np.ones(n, dtype=np.int8)
    soft[(t >= SOFT_OFF[0]) & (t < SOFT_OFF[0] + SOFT_OFF[1])] = 0
    cols.update(estop=estop, pstop=pstop, safety_state=safety, soft_limits_on=soft)
    col, at, count = NAN_RUN
    i = int(at * RATE)
    cols[col][i : i + count] = np.nan
    cols["t"] = np.round(t, 3)
    keep = np.ones(n, dtype=bool)
    keep[int(GAP[0] * RATE) : int(GAP[0] * RATE) + GAP[1]] = False
    return {name: cols[name][keep] for name in COLUMNS}


def write(out: Path, seed: int = 8) -> tuple[Path, Path]:
    """Write the session as CSV and zstd Parquet into ``out``; returns (csv, parquet)."""
    import pyarrow as pa
    import pyarrow.csv as pcsv
    import pyarrow.parquet as pq

    out.mkdir(parents=True, exist_ok=True)
    cols = generate(seed)
    table = pa.table(cols)
    del cols
    csv_path, pq_path = out / "session-8j.csv", out / "session-8j.parquet"
    pq.write_table(table, pq_path, compression="zstd")
    pcsv.write_csv(table, csv_path)
    return csv_path, pq_path
