"""Start-up benchmark: median wall time of `bracer --help` and `bracer review` of the example, against budgets.

Run: python bench/startup.py [--runs N]
Prints each command's median and its ratio to the budget (0.3 s for --help, 1 s for the review), measured in
this one run. Not part of the test suite: the machines are shared and timed unit tests would be flaky.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
EXAMPLE = ROOT / "protocols" / "alder4-upper-limb.yaml"

CASES = [
    ("bracer --help", [sys.executable, "-m", "bracer", "--help"], 0.3),
    ("bracer review (example, AV-P01)",
     [sys.executable, "-m", "bracer", "review", str(EXAMPLE), "--participant", "AV-P01"], 1.0),
]


def wall(cmd: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=11)
    args = parser.parse_args()
    print(f"{'command':36} {'median s':>9} {'min s':>7} {'max s':>7} {'budget s':>9} {'ratio':>6}")
    for name, cmd, budget in CASES:
        wall(cmd)  # warm-up (file cache, .pyc)
        times = [wall(cmd) for _ in range(args.runs)]
        med = statistics.median(times)
        print(f"{name:36} {med:9.3f} {min(times):7.3f} {max(times):7.3f} {budget:9.2f} {med / budget:6.2f}")


if __name__ == "__main__":
    main()
