"""Audit benchmark: the full audit of a one-hour 1 kHz session against a bare pyarrow read of the same columns.

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
    return {"seconds": time.perf_counter() - start, "peak_mb": _peak_mb(), "rows": rows}


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
    decoded_mb = rows * len(columns) * 8 / 2**20
    print(
        f"session: {rows} rows x {len(columns)} columns used (time + {len(columns) - 1}); decoded size "
        f"{decoded_mb:.0f} MB; CSV {csv_path.stat().st_size / 2**20:.0f} MB, Parquet (zstd) "
        f"{pq_path.stat().st_size / 2**20:.0f} MB; median of {args.runs} runs, each in a fresh process"
    )
    first = samples[("parquet", "audit")][0]
    print(f"audit findings by code: {first['findings']}; analysed coverage {float(first['coverage']):.4f}")  # type: ignore[arg-type]
    print()
    head = f"{'case':24} {'median s':>9} {'min s':>7} {'max s':>7} {'ratio':>6} {'target':>7}  {'peak MB':>8}  verdict"
    print(head)
    print("-" * len(head))
    for fmt, _ in cases:
        bare = samples[(fmt, "bare")]
        aud = samples[(fmt, "audit")]
        b_med = statistics.median(float(s["seconds"]) for s in bare)  # type: ignore[arg-type]
        a_times = [float(s["seconds"]) for s in aud]  # type: ignore[arg-type]
        a_med = statistics.median(a_times)
        b_peak = max(float(s["peak_mb"]) for s in bare)  # type: ignore[arg-type]
        a_peak = max(float(s["peak_mb"]) for s in aud)  # type: ignore[arg-type]
        b_times = [float(s["seconds"]) for s in bare]  # type: ignore[arg-type]
        print(
            f"{'bare read ' + fmt:24} {b_med:9.3f} {min(b_times):7.3f} {max(b_times):7.3f} {'':>6} {'':>7}  "
            f"{b_peak:8.0f}"
        )
        ratio = a_med / b_med
        target = TARGETS[fmt]
        verdict = "within target" if ratio <= target else "over target"
        print(
            f"{'audit ' + fmt:24} {a_med:9.3f} {min(a_times):7.3f} {max(a_times):7.3f} {ratio:6.2f} "
            f"{target:6.2f}x  {a_peak:8.0f}  time {verdict} ({ratio / target:.2f} of target)"
        )
        mem = a_peak / decoded_mb
        mem_verdict = "within target" if mem <= MEMORY_TARGET else "over target"
        print(
            f"{'  peak memory ' + fmt:24} {'':>9} {'':>7} {'':>7} {mem:6.2f} {MEMORY_TARGET:6.2f}x  "
            f"{a_peak:8.0f}  memory {mem_verdict} ({mem / MEMORY_TARGET:.2f} of target; "
            f"{a_peak:.0f} MB / {decoded_mb:.0f} MB decoded)"
        )


if __name__ == "__main__":
    main()
