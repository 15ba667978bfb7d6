"""A small generator of session logs for the example protocol protocols/alder4-upper-limb.yaml.

Tests build their logs with it (then break them on purpose); ``python tests/data/logs/logmaker.py`` writes the
sample logs kept in this folder.  The movement is invented: every joint rests, makes one smooth out-and-back
movement (position centre + a·sin²(πu), so speed is zero at both ends), and rests again; the locked forearm
joint only shows sensor noise.  Values are rounded to 1e-4 so that CSV, Parquet and Feather hold the same
numbers.  A later issue adds a full simulator; this one stays small.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.feather as feather
import pyarrow.parquet as pq

HERE = Path(__file__).resolve().parent
PROTOCOL = HERE.parents[2] / "protocols" / "alder4-upper-limb.yaml"

#: joint column prefix -> (centre deg, movement amplitude deg, mean torque N*m, has velocity column)
JOINTS: dict[str, tuple[float, float, float, bool]] = {
    "sh_flex": (30.0, 6.0, 3.0, True),
    "sh_abd": (40.0, 5.0, 2.5, True),
    "sh_rot": (0.0, 4.0, 1.0, True),
    "elb": (60.0, 6.0, 2.0, True),
}
#: cuff column prefix -> force amplitude per axis, N
CUFFS: dict[str, tuple[float, float, float]] = {"ua": (6.0, 1.0, 4.0), "fa": (5.0, 0.5, 3.0)}
REST = 0.15  # s of rest at each end


def _round(x: np.ndarray) -> np.ndarray:
    return np.round(x, 4) + 0.0  # + 0.0 turns -0.0 into 0.0


def _shape(t: np.ndarray, duration: float) -> tuple[np.ndarray, np.ndarray]:
    """Movement profile p in [0, 1] and its time derivative dp/dt (1/s)."""
    span = duration - 2 * REST
    u = np.clip((t - REST) / span, 0.0, 1.0)
    moving = (t > REST) & (t < duration - REST)
    p = np.sin(np.pi * u) ** 2
    dp = np.where(moving, np.pi * np.sin(2 * np.pi * u) / span, 0.0)
    return p, dp


def main_table(duration: float = 1.0, rate: float = 1000.0, seed: int = 1) -> pa.Table:
    """Joint stream: t, position (deg), velocity (deg/s), torque (N*m) per joint; status columns."""
    rng = np.random.default_rng(seed)
    n = round(duration * rate)
    t = np.arange(n) / rate
    p, dp = _shape(t, duration)
    cols: dict[str, np.ndarray] = {"t": _round(t)}
    for prefix, (centre, amp, torque, has_vel) in JOINTS.items():
        cols[f"{prefix}_pos"] = _round(centre + amp * p + rng.normal(0, 0.002, n))
        if has_vel:
            cols[f"{prefix}_vel"] = _round(amp * dp + rng.normal(0, 0.05, n))
        cols[f"{prefix}_tau"] = _round(torque * (1 + 0.3 * p) + rng.normal(0, 0.02, n))
    cols["fa_rot_pos"] = _round(0.5 + rng.normal(0, 0.005, n))
    cols["fa_rot_tau"] = _round(0.1 + rng.normal(0, 0.02, n))
    data: dict[str, pa.Array] = {k: pa.array(v) for k, v in cols.items()}
    for name, value in (("estop", 0), ("pstop", 0), ("safety_state", 0), ("soft_limits_on", 1)):
        data[name] = pa.array(np.full(n, value, dtype=np.int64))
    return pa.table(data)


def cuff_table(duration: float = 1.0, rate: float = 500.0, seed: int = 2) -> pa.Table:
    """Cuff stream: t_cuff and three force axes (N) per cuff."""
    rng = np.random.default_rng(seed)
    n = round(duration * rate)
    t = np.arange(n) / rate
    p, _ = _shape(t, duration)
    cols: dict[str, np.ndarray] = {"t_cuff": _round(t)}
    for prefix, amps in CUFFS.items():
        for axis, amp in zip("xyz", amps, strict=True):
            cols[f"{prefix}_f{axis}"] = _round(amp * p + rng.normal(0, 0.2, n))
    return pa.table({k: pa.array(v) for k, v in cols.items()})


def combined_table(main: pa.Table, cuffs: pa.Table) -> pa.Table:
    """One table holding both streams: the cuff columns fill the rows whose main time they share, and the cuff
    time is empty on the other rows."""
    t_main = main.column("t").to_numpy()
    t_cuff = cuffs.column("t_cuff").to_numpy()
    at = np.searchsorted(t_main, t_cuff)
    if not np.array_equal(t_main[at], t_cuff):
        raise ValueError("cuff times must be a subset of the main times")
    out = main
    for name in cuffs.column_names:
        full = np.full(main.num_rows, np.nan)
        full[at] = cuffs.column(name).to_numpy()
        mask = np.isnan(full)
        out = out.append_column(name, pa.array(full, mask=mask))
    return out


def write(table: pa.Table, path: Path) -> Path:
    """Write ``table`` in the format named by the suffix (.csv, .parquet, .feather)."""
    path = Path(path)
    if path.suffix == ".csv":
        pacsv.write_csv(table, path, pacsv.WriteOptions(quoting_style="none"))
    elif path.suffix == ".parquet":
        pq.write_table(table, path)
    elif path.suffix == ".feather":
        feather.write_feather(table, path)
    else:
        raise ValueError(f"unknown suffix {path.suffix}")
    return path


#: The sample logs kept in this folder.
SAMPLES = ("alder4_main.csv", "alder4_cuffs.csv")


def samples() -> dict[str, pa.Table]:
    return {"alder4_main.csv": main_table(), "alder4_cuffs.csv": cuff_table()}


if __name__ == "__main__":
    folder = Path(sys.argv[1]) if len(sys.argv) > 1 else HERE
    for name, table in samples().items():
        print(write(table, folder / name))


# ------------------------------------------------------------------------------------ helpers for the tests


def protocol_variant(folder: Path, *replacements: tuple[str, str]) -> Path:
    """A copy of the example protocol with text replacements (each must match), written to ``folder``."""
    text = PROTOCOL.read_text(encoding="utf-8")
    for old, new in replacements:
        if old not in text:
            raise ValueError(f"not in the example protocol: {old!r}")
        text = text.replace(old, new)
    path = Path(folder) / "protocol.yaml"
    path.write_text(text, encoding="utf-8")
    return path


def replace_column(table: pa.Table, name: str, values: np.ndarray | pa.Array) -> pa.Table:
    """``table`` with column ``name`` replaced (same position)."""
    i = table.column_names.index(name)
    return table.set_column(i, name, values if isinstance(values, pa.Array) else pa.array(values))


def write_logs(
    folder: Path, suffix: str = ".csv", main: pa.Table | None = None, cuffs: pa.Table | None = None
) -> list[Path]:
    """The two-file session (joints at 1 kHz, cuffs at 500 Hz) written in one format; returns the paths."""
    folder = Path(folder)
    return [
        write(main if main is not None else main_table(), folder / f"main{suffix}"),
        write(cuffs if cuffs is not None else cuff_table(), folder / f"cuffs{suffix}"),
    ]


def quality_of(
    folder: Path,
    main: pa.Table | None = None,
    cuffs: pa.Table | None = None,
    protocol: Path | None = None,
    participant: str | None = None,
    suffix: str = ".parquet",
):  # -> bracer.audit.quality.QualityOutcome
    """Write the logs, read them and run the audit's data-quality pass."""
    from bracer.audit.quality import run_quality
    from bracer.protocol.load import load_protocol
    from bracer.protocol.resolve import resolve
    from bracer.session.read import read_session

    resolution = resolve(load_protocol(protocol or PROTOCOL).protocol, participant)
    session = read_session(resolution.protocol, write_logs(folder, suffix, main, cuffs))
    return run_quality(resolution, session)
