"""Quick commands: ``oneport check``, ``poles`` and ``check --report`` on the shipped examples,
against starting Python with numpy and scipy, each a fresh process, interleaved and repeated;
wall-clock and CPU time.

Run by hand from the repository root::

    python benchmarks/bench_commands.py [--repeats 7] [--against OTHER_CHECKOUT]

``--against`` runs the check and poles of another checkout of the package beside these (its
``oneport`` found first on ``PYTHONPATH``), so a change is measured side by side in one run.

Each repeat runs every command once, in turn, so a busy moment hits them alike; min and median
are printed, and the ratios of the CPU minima to ``python -c "import numpy, scipy"`` and to the
plain check (CPU time, the process's own, is what a busy shared machine does not inflate).
Targets: check <= 1.3x the import floor, poles <= 2x the check, --report <= 3x the check.
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples"


def commands(report: Path, against: Path | None = None) -> dict[str, list[str]]:
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
    if against is not None:
        other = ["env", f"PYTHONPATH={against}", *oneport]
        found["check stable (other)"] = [*other, "check", str(device), "--load", str(load), "-q"]
        found["poles stable (other)"] = [*other, "poles", str(device), "--load", str(load), "-q"]
    return found


def run(command: list[str]) -> tuple[float, float]:
    """Wall-clock and CPU seconds (user + system, the child's own) of one fresh process.

    On a shared machine the wall clock waits for other work; the CPU time is what the command
    itself costs, so its ratios hold even when the load average does not stay low.
    """
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    # From a neutral folder: ``python -m`` puts the working folder first on sys.path, which
    # would shadow ``--against``'s checkout.
    subprocess.run(command, check=False, capture_output=True, cwd=tempfile.gettempdir())
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=7)
    parser.add_argument("--against", type=Path, help="another checkout to run beside this one")
    arguments = parser.parse_args()
    report = Path(tempfile.mkdtemp()) / "report.html"
    table = commands(report, arguments.against)
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} cores, Python"
        f" {platform.python_version()}; load average at start {os.getloadavg()[0]:.2f}"
    )
    for command in table.values():  # warm the file cache and the byte code
        run(command)
    walls: dict[str, list[float]] = {name: [] for name in table}
    cpus: dict[str, list[float]] = {name: [] for name in table}
    for _ in range(arguments.repeats):
        for name, command in table.items():
            wall, cpu = run(command)
            walls[name].append(wall)
            cpus[name].append(cpu)
    floor = min(cpus["import numpy, scipy"])
    check = min(cpus["check stable"])
    print(
        f"{'':26s}{'wall min':>9s}{'median':>8s}{'CPU min':>9s}{'median':>8s}"
        f"{'/ import':>10s}{'/ check':>9s}   (ratios of the CPU minima)"
    )
    for name in table:
        best = min(cpus[name])
        print(
            f"{name:26s}{min(walls[name]):8.2f}s{statistics.median(walls[name]):7.2f}s"
            f"{best:8.2f}s{statistics.median(cpus[name]):7.2f}s"
            f"{best / floor:10.2f}{best / check:9.2f}"
        )
    print(f"load average at the end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
