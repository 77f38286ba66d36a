"""Benchmark: stabilising advice for a measured pair of 2,001 points, all four families.

Run by hand from the repository root (not a unit test)::

    python benchmarks/bench_stabilise.py                # 2,001 points, best of 3
    python benchmarks/bench_stabilise.py --points 4001 --repeats 5

An invented measured pair is written as two Touchstone files into a temporary folder and read
back (the demo diode of the shipped examples into 10 ohm + 3 nH, 1 MHz to 6 GHz, with the
examples' noise of 0.003 per part): it oscillates. Then, side by side in one process:

1. the scans alone: 1,000 candidate values per family, judged at once by the check's
   vectorised judgement through ``Scanner.evaluate`` — a line of 1,000 resistances for the
   series and shunt resistors, a 40 × 25 grid of resistance × corner frequency for ``shunt-rc``
   and ``series-rl`` — four scans;
2. the whole ``oneport.stabilise`` call: the scans, the finer lines through the chosen point of
   the two-element families, the bisection of every edge, the preferred values, and the full
   check of each suggestion (up to three per family);
3. one full single check of the pair, for scale.

Wall-clock time (``time.perf_counter``), best of ``--repeats`` runs after one warm-up run.
"""

from __future__ import annotations

import argparse
import os
import platform
import tempfile
import time
from pathlib import Path

import numpy as np

import oneport
from oneport.products.stabilise import adapter, families, goal, placements, scan

Z0 = 50.0
SEED = 20240611


def _impedance_diode(s: np.ndarray) -> np.ndarray:
    """Demo diode D1 (touchstone_examples/README.md): 4 ohm + 0.6 nH + (-80 ohm ∥ 2 pF)."""
    return 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)


def _write(path: Path, frequency_hz: np.ndarray, gamma: np.ndarray) -> None:
    lines = [
        "! invented benchmark data, written by benchmarks/bench_stabilise.py",
        "# Hz S RI R 50",
    ]
    lines += [
        f"{f:.10g} {g.real:.10g} {g.imag:.10g}" for f, g in zip(frequency_hz, gamma, strict=True)
    ]
    path.write_text("\n".join(lines) + "\n", encoding="ascii")


def measured_pair(folder: Path, points: int) -> tuple[Path, Path]:
    """Two invented one-port files on one grid, with the shipped examples' noise."""
    frequency = np.linspace(1e6, 6e9, points)
    s = 2j * np.pi * frequency
    rng = np.random.default_rng(SEED)
    files = []
    for name, z in (("device", _impedance_diode(s)), ("load", 10.0 + s * 3e-9)):
        gamma = (z - Z0) / (z + Z0)
        gamma = gamma + 0.003 * (rng.standard_normal(points) + 1j * rng.standard_normal(points))
        path = folder / f"{name}.s1p"
        _write(path, frequency, gamma)
        files.append(path)
    return files[0], files[1]


def time_scans(device: Path, load: Path) -> tuple[float, int]:
    """The four 1,000-candidate scans (the issue's figure), one judgement call each."""
    pair = adapter.prepare_pair(device, load)
    band = (float(pair.frequency_hz[0]), 3e9)
    requirement = goal.Requirement(goal.DEFAULT_MIN_DISTANCE, None, None, band, True)
    scanner = scan.Scanner(pair, requirement, None, None, False)
    chosen = placements.port_placements(pair, tuple(families.FAMILIES))
    resistances = np.geomspace(0.05, 8e4, 1000)
    grid_r, grid_corner = np.meshgrid(
        np.geomspace(1.0, 2500.0, 40), np.geomspace(1e5, 6e9, 25), indexing="ij"
    )
    start = time.perf_counter()
    judged = 0
    for placement in chosen:
        if placement.family.corner:
            r = grid_r.ravel()
            second = families.second_element_for_corner(placement.family, r, grid_corner.ravel())
            values = {"resistance_ohm": r, placement.family.elements[1]: second}
        else:
            values = {"resistance_ohm": resistances}
        evaluation = scanner.evaluate(placement, values)
        judged += evaluation.goal_met.size
    return time.perf_counter() - start, judged


def time_advice(device: Path, load: Path) -> tuple[float, int, str]:
    start = time.perf_counter()
    result = oneport.stabilise(device, load)
    return time.perf_counter() - start, result.candidates_judged, result.verdict


def time_check(device: Path, load: Path) -> float:
    start = time.perf_counter()
    oneport.check(device, load)
    return time.perf_counter() - start


def _processor() -> str:
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or platform.machine()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=2001)
    parser.add_argument("--repeats", type=int, default=3)
    arguments = parser.parse_args()
    print(f"machine: {_processor()}, {os.cpu_count()} cores,")
    print(f"  Python {platform.python_version()}, numpy {np.__version__}")
    print(f"load average at start: {os.getloadavg()[0]:.2f}")
    with tempfile.TemporaryDirectory() as folder:
        device, load = measured_pair(Path(folder), arguments.points)
        time_advice(device, load)  # warm-up: imports, first allocations
        scans = min(time_scans(device, load)[0] for _ in range(arguments.repeats))
        judged_scans = time_scans(device, load)[1]
        advice_runs = [time_advice(device, load) for _ in range(arguments.repeats)]
        advice = min(run[0] for run in advice_runs)
        check = min(time_check(device, load) for _ in range(arguments.repeats))
    print(f"pair: {arguments.points} points; verdict of the advice: {advice_runs[0][2]}")
    print(f"four scans of 1,000 candidates ({judged_scans} judged): {scans:.3f} s")
    print(f"whole advice, four families ({advice_runs[0][1]} judged, verified): {advice:.3f} s")
    print(f"one single check of the pair, for scale: {check:.3f} s")
    print(f"load average at end: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
