"""Audit benchmark: the full audit of an hour-long 1 kHz session against a bare pyarrow read of its columns.

Run: python bench/audit_bench.py [--runs N] [--regenerate]

Generates (once, into bench/out/, git-ignored) a one-hour 1 kHz session of eight joints (position, velocity,
torque), two cuffs x three force axes and four status columns (bench/bench_session.py), as CSV and zstd
Parquet, for the protocol bench/bench-8-joints.yaml.  Then, in this one run, it times each case in a fresh
subprocess (the cases alternate, round after round, so that load on this shared machine falls on both sides;
one warm-up round first, so that every case reads the files from the page cache):

* bare read: ``pyarrow.csv.read_csv(include_columns=...)`` / ``pyarrow.parquet.read_table(columns=...)`` of
  the columns the protocol maps, each converted to a numpy float64 array (the fair baseline any audit needs);
* audit: ``bracer.audit.run.audit(protocol, log, participant=...)`` of the same file.

Each child times itself from before its first heavy import (pyarrow / bracer) to the end of its work and
reports its own peak resident memory (``getrusage(RUSAGE_SELF).ru_maxrss``).  Targets: audit from Parquet at
most 1.5x the bare Parquet read, audit from CSV at most 1.2x the bare CSV read, peak memory of the audit at
most 1.5x the decoded size of the columns used (rows x columns x 8 bytes).  Not part of the test suite.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
OUT = HERE / "out"
PROTOCOL = HERE / "bench-8-joints.yaml"
PARTICIPANT = "AV-P21"
TARGETS = {"csv": 1.2, "parquet": 1.5}
MEMORY_TARGET = 1.5


# ------------------------------------------------------------------------------------------------ children


def _peak_mb() -> float:
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # KiB on Linux


def _cpu_s() -> float:
    """User + system CPU time of this process so far, all threads, s."""
    import resource

    use = resource.getrusage(resource.RUSAGE_SELF)
    return use.ru_utime + use.ru_stime


def _bare(fmt: str, path: str, columns: list[str]) -> dict[str, object]:
    start = time.perf_counter()
    import numpy as np

    if fmt == "csv":
        import pyarrow.csv as pcsv

        table = pcsv.read_csv(path, convert_options=pcsv.ConvertOptions(include_columns=columns))
    else:
        import pyarrow.parquet as pq

        table = pq.read_table(path, columns=columns)
    arrays = {}
    for name in columns:
        arrays[name] = np.asarray(table.column(name).to_numpy(), dtype=np.float64)
        table = table.drop_columns([name])
    del table
    rows = int(arrays[columns[0]].shape[0])
    return {"seconds": time.perf_counter() - start, "cpu_s": _cpu_s(), "peak_mb": _peak_mb(), "rows": rows}


def _audit(path: str) -> dict[str, object]:
    start = time.perf_counter()
    from bracer.audit.run import audit

    result = audit(PROTOCOL, path, participant=PARTICIPANT)
    seconds = time.perf_counter() - start
    counts: dict[str, int] = {}
    for f in result.findings:
        counts[f.code] = counts.get(f.code, 0) + 1
    return {
        "seconds": seconds,
        "cpu_s": _cpu_s(),
        "peak_mb": _peak_mb(),
        "findings": dict(sorted(counts.items())),
        "coverage": result.coverage.fraction,
    }


def _child(args: argparse.Namespace) -> None:
    if args.child == "audit":
        report = _audit(args.path)
    else:
        report = _bare(args.child, args.path, args.columns.split(","))
    print(json.dumps(report))


# ------------------------------------------------------------------------------------------------ parent


def _used_columns() -> list[str]:
    """Every column the protocol maps (time first), as the audit reads them."""
    from bracer.protocol.load import load_protocol
    from bracer.session.channelmap import channel_map

    needs = channel_map(load_protocol(PROTOCOL).protocol)
    return list(dict.fromkeys(c for sn in needs.values() for c in sn.columns()))


def _files(regenerate: bool) -> tuple[Path, Path]:
    csv_path, pq_path = OUT / "session-8j.csv", OUT / "session-8j.parquet"
    if regenerate or not (csv_path.exists() and pq_path.exists()):
        sys.path.insert(0, str(HERE))
        from bench_session import write

        start = time.perf_counter()
        write(OUT)
        print(f"generated {csv_path.name}, {pq_path.name} in {time.perf_counter() - start:.1f} s")
    return csv_path, pq_path


def _run(mode: str, path: Path, columns: list[str]) -> dict[str, object]:
    cmd = [sys.executable, __file__, "--child", mode, "--path", str(path), "--columns", ",".join(columns)]
    done = subprocess.run(cmd, capture_output=True, text=True, check=False)
    if done.returncode != 0:
        raise SystemExit(f"child {mode} {path.name} failed:\n{done.stderr}")
    return json.loads(done.stdout.strip().splitlines()[-1])  # type: ignore[no-any-return]


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    parser.add_argument("--regenerate", action="store_true")
    parser.add_argument("--child", choices=("csv", "parquet", "audit"), help=argparse.SUPPRESS)
    parser.add_argument("--path", help=argparse.SUPPRESS)
    parser.add_argument("--columns", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.child:
        _child(args)
        return

    csv_path, pq_path = _files(args.regenerate)
    columns = _used_columns()
    load_before = os.getloadavg()[0]
    cases = [("csv", csv_path), ("parquet", pq_path)]
    samples: dict[tuple[str, str], list[dict[str, object]]] = {}
    for fmt, path in cases:  # warm-up round: page cache, .pyc
        _run(fmt, path, columns)
        _run("audit", path, columns)
    for _ in range(args.runs):
        for fmt, path in cases:
            samples.setdefault((fmt, "bare"), []).append(_run(fmt, path, columns))
            samples.setdefault((fmt, "audit"), []).append(_run("audit", path, columns))

    rows = int(samples[("csv", "bare")][0]["rows"])  # type: ignore[call-overload]
    decoded = rows * len(columns) * 8 / 2**20
    load_after = os.getloadavg()[0]
    print(
        f"session: {rows} rows x {len(columns)} columns used (time + {len(columns) - 1}); decoded size "
        f"{decoded:.0f} MiB; CSV {csv_path.stat().st_size / 2**20:.0f} MiB, Parquet (zstd) "
        f"{pq_path.stat().st_size / 2**20:.0f} MiB"
    )
    print(
        f"median of {args.runs} runs per case, each in a fresh process; load average {load_before:.1f} "
        f"before, {load_after:.1f} after (2 cores, shared)"
    )
    found = samples[("parquet", "audit")][0]
    print(f"audit findings by code: {found['findings']}; analysed coverage {float(found['coverage']):.4f}")  # type: ignore[arg-type]
    print()
    head = (
        f"{'case':20} {'median s':>9} {'min s':>7} {'max s':>7} {'CPU s':>7} {'ratio':>6} {'target':>7} "
        f"{'peak MiB':>9}  verdict"
    )
    print(head)
    print("-" * (len(head) + 40))
    for fmt, _ in cases:
        bare, aud = samples[(fmt, "bare")], samples[(fmt, "audit")]
        b_med, a_med = _median(bare, "seconds"), _median(aud, "seconds")
        print(_row(f"bare read {fmt}", bare, "", "", ""))
        ratio, target = a_med / b_med, TARGETS[fmt]
        verdict = f"time {'within' if ratio <= target else 'over'} target ({ratio / target:.2f} of it)"
        print(_row(f"audit {fmt}", aud, f"{ratio:6.2f}", f"{target:6.2f}x", verdict))
        peak = max(float(s["peak_mb"]) for s in aud)  # type: ignore[arg-type]
        mem = peak / decoded
        print(
            f"{'  audit peak memory':20} {'':>9} {'':>7} {'':>7} {'':>7} {mem:6.2f} {MEMORY_TARGET:6.2f}x "
            f"{peak:9.0f}  memory {'within' if mem <= MEMORY_TARGET else 'over'} target "
            f"({mem / MEMORY_TARGET:.2f} of it: {peak:.0f} MiB / {decoded:.0f} MiB decoded)"
        )
    print()
    print(
        "ratio: median audit time / median bare-read time of the same file; peak: largest ru_maxrss of the "
        "runs; CPU s: median user + system time of the process (all threads)"
    )


def _median(runs: list[dict[str, object]], key: str) -> float:
    return statistics.median(float(r[key]) for r in runs)  # type: ignore[arg-type]


def _row(name: str, runs: list[dict[str, object]], ratio: str, target: str, verdict: str) -> str:
    times = [float(r["seconds"]) for r in runs]  # type: ignore[arg-type]
    peak = max(float(r["peak_mb"]) for r in runs)  # type: ignore[arg-type]
    return (
        f"{name:20} {statistics.median(times):9.3f} {min(times):7.3f} {max(times):7.3f} "
        f"{_median(runs, 'cpu_s'):7.2f} {ratio:>6} {target:>7} {peak:9.0f}  {verdict}"
    )


if __name__ == "__main__":
    main()
