"""Benchmark: read and check a 1,000,000-point device file against a 1,000,000-point load file.

Run from the repository root::

    python benchmarks/bench_large_file.py            # 1,000,000 points per file
    python benchmarks/bench_large_file.py --points 200000 --profile check

The script writes two invented one-port Touchstone files into a temporary folder (the demo
diode of ``touchstone_examples`` on a 1 MHz-6 GHz grid, S in MA; a 30 ohm + 1 nH load on a
different 0.5 MHz-6.5 GHz grid, S in RI, so the check interpolates), then times reading each
file, the check through the API, and the whole ``oneport check`` command in-process. Peak
resident memory is ``resource.getrusage(RUSAGE_SELF).ru_maxrss`` (a high-water mark: it only
grows), printed after each stage. ``--profile STAGE`` runs that stage under cProfile and prints
where the time goes. Nothing is asserted: this is a measurement, not a test.
"""

from __future__ import annotations

import argparse
import cProfile
import io
import pstats
import resource
import sys
import tempfile
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

Z0 = 50.0
# The invented demo diode (touchstone_examples/generate.py): Rs + s·Ls + (−Rd ∥ Cj).
RS, LS, RD, CJ = 4.0, 0.6e-9, 80.0, 2.0e-12
STAGES = ("write", "read-device", "read-load", "check", "command")


def diode_gamma(frequency_hz: np.ndarray) -> np.ndarray:
    """Γ in 50 ohm of the demo diode."""
    s = 2j * np.pi * frequency_hz
    z = RS + s * LS + 1.0 / (-1.0 / RD + s * CJ)
    return (z - Z0) / (z + Z0)


def load_gamma(frequency_hz: np.ndarray) -> np.ndarray:
    """Γ in 50 ohm of a 30 ohm + 1 nH load."""
    z = 30.0 + 2j * np.pi * frequency_hz * 1e-9
    return (z - Z0) / (z + Z0)


def write_files(folder: Path, points: int) -> tuple[Path, Path]:
    """Write the device (MHz, MA) and load (GHz, RI) files; return their paths."""
    device_hz = np.linspace(1e6, 6e9, points)
    load_hz = np.linspace(0.5e6, 6.5e9, points)
    device, load = diode_gamma(device_hz), load_gamma(load_hz)
    device_path, load_path = folder / "device.s1p", folder / "load.s1p"
    _write(
        device_path,
        "! invented benchmark data: demo diode\n# MHz S MA R 50\n",
        np.column_stack([device_hz / 1e6, np.abs(device), np.degrees(np.angle(device))]),
    )
    _write(
        load_path,
        "! invented benchmark data: 30 ohm + 1 nH\n# GHz S RI R 50\n",
        np.column_stack([load_hz / 1e9, load.real, load.imag]),
    )
    return device_path, load_path


def _write(path: Path, header: str, columns: np.ndarray) -> None:
    """A Touchstone one-port: the header lines, then one line of 12-digit numbers per point."""
    with path.open("w", encoding="ascii") as handle:
        handle.write(header)
        np.savetxt(handle, columns, fmt="%.12g")


def peak_rss_mib() -> float:
    """Peak resident set size of this process so far, MiB (Linux reports KiB)."""
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return peak / 1024 if sys.platform != "darwin" else peak / 2**20


def timed(stage: str, work: Callable[[], Any], profile: str | None) -> tuple[Any, float]:
    """Run ``work``; return its value and the wall time, s (under cProfile if asked)."""
    profiler = cProfile.Profile() if profile == stage else None
    start = time.perf_counter()
    value = profiler.runcall(work) if profiler is not None else work()
    elapsed = time.perf_counter() - start
    if profiler is not None:
        report = io.StringIO()
        pstats.Stats(profiler, stream=report).sort_stats("cumulative").print_stats(25)
        print(report.getvalue())
    return value, elapsed


def _read_and_check(device_path: Path, load_path: Path, profile: str | None) -> None:
    """Time reading each file and the check through the API, one line each."""
    import oneport

    device, elapsed = timed("read-device", lambda: oneport.read_one_port(device_path), profile)
    print(f"{'read device':<14}{elapsed:>10.2f}{peak_rss_mib():>15.0f}")
    load, elapsed = timed("read-load", lambda: oneport.read_one_port(load_path), profile)
    print(f"{'read load':<14}{elapsed:>10.2f}{peak_rss_mib():>15.0f}")
    result, elapsed = timed("check", lambda: oneport.check(device, load), profile)
    print(f"{'check':<14}{elapsed:>10.2f}{peak_rss_mib():>15.0f}   ({result.verdict})")


def main(argv: list[str] | None = None) -> int:
    """Run the benchmark and print one line per stage."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000, help="points per file")
    parser.add_argument("--profile", choices=STAGES, help="profile this stage with cProfile")
    arguments = parser.parse_args(argv)

    import oneport
    from oneport.cli import main as command_line

    print(f"oneport {oneport.__version__}, numpy {np.__version__}, {arguments.points:,} points")
    print(f"{'stage':<14}{'wall s':>10}{'peak RSS MiB':>15}")
    print(f"{'imports':<14}{'':>10}{peak_rss_mib():>15.0f}")
    with tempfile.TemporaryDirectory() as folder:
        profile = arguments.profile
        (device_path, load_path), elapsed = timed(
            "write", lambda: write_files(Path(folder), arguments.points), profile
        )
        sizes = device_path.stat().st_size + load_path.stat().st_size
        print(f"{'write':<14}{elapsed:>10.2f}{peak_rss_mib():>15.0f}   ({sizes / 2**20:.0f} MiB)")
        _read_and_check(device_path, load_path, profile)
        argv_check = ["check", str(device_path), "--load", str(load_path), "--quiet"]
        out = io.StringIO()
        code, elapsed = timed(
            "command", lambda: command_line(argv_check, stdout=out, stderr=out), profile
        )
        print(f"{'command':<14}{elapsed:>10.2f}{peak_rss_mib():>15.0f}   (exit {code})")
        print(out.getvalue().strip())
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
