"""Quick commands: ``oneport check``, ``poles`` and ``check --report`` on the shipped examples,
against starting Python with numpy and scipy, each a fresh process, interleaved and repeated.

Run by hand from the repository root::

    python benchmarks/bench_commands.py [--repeats 7]

Each repeat runs every command once, in turn, so a busy moment hits them alike; min and median
are printed, and the ratios of the minima to ``python -c "import numpy, scipy"`` and to the
plain check. Targets: check <= 1.3x the import floor, poles <= 2x the check, --report <= 3x
the check.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples"


def commands(report: Path) -> dict[str, list[str]]:
    oneport = [sys.executable, "-m", "oneport"]
    pairs = [
        (EXAMPLES / name / "device.s1p", EXAMPLES / name / "load.s1p")
        for name in ("stable", "oscillates", "undecidable")
    ]
    found = {"import numpy, scipy": [sys.executable, "-c", "import numpy, scipy"]}
    for device, load in pairs:
        name = device.parent.name
        found[f"check {name}"] = [*oneport, "check", str(device), "--load", str(load), "-q"]
    device, load = pairs[0]
    found["poles stable"] = [*oneport, "poles", str(device), "--load", str(load), "-q"]
    found["check stable --report"] = [
        *oneport,
        "check",
        str(device),
        "--load",
        str(load),
        "-q",
        "--report",
        str(report),
    ]
    return found


def run(command: list[str]) -> float:
    start = time.perf_counter()
    subprocess.run(command, check=False, capture_output=True)
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=7)
    arguments = parser.parse_args()
    report = Path(tempfile.mkdtemp()) / "report.html"
    table = commands(report)
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} cores, Python"
        f" {platform.python_version()}; load average at start {os.getloadavg()[0]:.2f}"
    )
    for command in table.values():  # warm the file cache and the byte code
        run(command)
    times: dict[str, list[float]] = {name: [] for name in table}
    for _ in range(arguments.repeats):
        for name, command in table.items():
            times[name].append(run(command))
    floor = min(times["import numpy, scipy"])
    check = min(times["check stable"])
    print(f"{'':26s}{'min':>8s}{'median':>9s}{'/ import':>10s}{'/ check':>9s}")
    for name, values in times.items():
        best = min(values)
        print(
            f"{name:26s}{best:7.2f}s{statistics.median(values):8.2f}s"
            f"{best / floor:10.2f}{best / check:9.2f}"
        )
    print(f"load average at the end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
