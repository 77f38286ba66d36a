"""Benchmark: reading a 1,000,000-point one-port against the parse floor, then the whole check.

Run from the repository root::

    python benchmarks/bench_large_file.py                  # 1,000,000 points, 5 repeats
    python benchmarks/bench_large_file.py --points 200000 --repeats 3 --profile read-device

The script writes two invented one-port Touchstone files into a temporary folder (the demo
diode of ``touchstone_examples`` on a 1 MHz-6 GHz grid, MHz/MA; a 30 ohm + 1 nH load on a
0.5 MHz-6.5 GHz grid, GHz/RI, so the check interpolates) and measures, side by side in one run:

1. Reading each file with ``oneport.read_one_port`` against the *parse floor* on the same file:
   ``numpy.array(text.split()[k:], dtype=float)`` after ``Path.read_text()`` (``k`` skips the
   header's words), the least any Python reader of whitespace-separated numbers does. Floor and
   reader alternate, file by file, for ``--repeats`` rounds; min and median wall times.
2. Peak memory of one read of each, beyond what was allocated before it: ``tracemalloc``'s peak
   (numpy reports its buffers to it), and the rise of the peak resident set size (``VmHWM``)
   of a fresh child process that imports oneport and then reads.
3. The check through the API on the two records, and ``oneport check --quiet`` in-process.

Nothing is asserted: this is a measurement, not a test. The figures go into
``benchmarks/README.md`` with the machine and the load average printed here.
"""

from __future__ import annotations

import argparse
import cProfile
import io
import os
import platform
import pstats
import resource
import statistics
import subprocess
import sys
import tempfile
import time
import tracemalloc
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

Z0 = 50.0
# The invented demo diode (touchstone_examples/generate.py): Rs + s·Ls + (−Rd ∥ Cj).
RS, LS, RD, CJ = 4.0, 0.6e-9, 80.0, 2.0e-12
STAGES = ("read-device", "read-load", "check", "command")


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


def header_words(path: Path) -> int:
    """How many whitespace-separated words the lines before the first data line hold."""
    words = 0
    with path.open(encoding="ascii") as handle:
        for line in handle:
            if line.lstrip()[:1] not in ("!", "#"):
                return words
            words += len(line.split())
    return words


def floor(path: Path, skip: int) -> np.ndarray:
    """The parse floor: read the text, split it, convert every number with numpy."""
    return np.array(path.read_text(encoding="ascii").split()[skip:], dtype=float)


def reader(path: Path) -> Any:
    """oneport's reader."""
    import oneport

    return oneport.read_one_port(path)


def timed(work: Callable[[], Any]) -> float:
    start = time.perf_counter()
    work()
    return time.perf_counter() - start


def compare_reading(paths: list[Path], repeats: int) -> dict[str, dict[str, list[float]]]:
    """Floor and reader alternating, file by file, ``repeats`` rounds: wall times, s."""
    skips = {path.name: header_words(path) for path in paths}
    times: dict[str, dict[str, list[float]]] = {
        path.name: {"floor": [], "reader": []} for path in paths
    }
    reader(paths[0])  # imports and first-call costs out of the way
    for _ in range(repeats):
        for path in paths:
            times[path.name]["floor"].append(timed(lambda p=path: floor(p, skips[p.name])))
            times[path.name]["reader"].append(timed(lambda p=path: reader(p)))
    return times


def traced_peak(work: Callable[[], Any]) -> float:
    """Peak bytes allocated by ``work`` beyond what was allocated before it (tracemalloc)."""
    tracemalloc.start()
    base = tracemalloc.get_traced_memory()[0]
    result = work()
    peak = tracemalloc.get_traced_memory()[1] - base
    tracemalloc.stop()
    del result
    return float(peak)


_RSS_CHILD = """
import sys
from pathlib import Path
sys.path.insert(0, {bench!r})
import bench_large_file as bench
import oneport, numpy
path = Path({path!r})
skip = bench.header_words(path)
before = bench.peak_rss_bytes()
result = bench.floor(path, skip) if {which!r} == "floor" else bench.reader(path)
print(bench.peak_rss_bytes() - before)
"""


def peak_rss_bytes() -> float:
    """This process's peak resident set size, bytes: ``VmHWM`` of ``/proc/self/status``.

    Not ``ru_maxrss``: on Linux a child started by ``subprocess`` reports its parent's peak
    there until it exceeds it, which hides a child's own rise.
    """
    try:
        for line in Path("/proc/self/status").read_text().splitlines():
            if line.startswith("VmHWM:"):
                return float(line.split()[1]) * 1024
    except OSError:
        pass
    return float(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss) * 1024


def rss_rise(path: Path, which: str) -> float:
    """The rise of peak RSS, bytes, when a fresh process that has imported oneport reads."""
    program = _RSS_CHILD.format(bench=str(Path(__file__).parent), path=str(path), which=which)
    done = subprocess.run(
        [sys.executable, "-c", program], capture_output=True, text=True, check=True
    )
    return float(done.stdout.strip())


def machine() -> str:
    """CPU model, cores and memory, as far as the platform tells."""
    model = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
        memory_kib = next(
            int(line.split()[1])
            for line in Path("/proc/meminfo").read_text().splitlines()
            if line.startswith("MemTotal")
        )
        memory = f", {memory_kib / 2**20:.0f} GiB RAM"
    except (OSError, StopIteration):
        memory = ""
    return f"{model}, {os.cpu_count()} cores{memory}"


def profiled(stage: str, profile: str | None, work: Callable[[], Any]) -> Any:
    if profile != stage:
        return work()
    profiler = cProfile.Profile()
    value = profiler.runcall(work)
    report = io.StringIO()
    pstats.Stats(profiler, stream=report).sort_stats("cumulative").print_stats(25)
    print(report.getvalue())
    return value


def main(argv: list[str] | None = None) -> int:
    """Run the benchmark and print its tables."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1_000_000, help="points per file")
    parser.add_argument("--repeats", type=int, default=5, help="interleaved rounds")
    parser.add_argument("--profile", choices=STAGES, help="profile this stage with cProfile")
    arguments = parser.parse_args(argv)

    import oneport
    from oneport.cli import main as command_line

    print(f"machine: {machine()}")
    print(
        f"python {platform.python_version()}, numpy {np.__version__}, oneport"
        f" {oneport.__version__}; load average at start {os.getloadavg()[0]:.2f}"
    )
    with tempfile.TemporaryDirectory() as folder:
        device_path, load_path = write_files(Path(folder), arguments.points)
        paths = [device_path, load_path]
        print(f"\nreading {arguments.points:,} points, {arguments.repeats} interleaved rounds")
        print(
            f"{'file':<12}{'MB':>7}{'floor min/med s':>18}{'reader min/med s':>19}"
            f"{'reader/floor min, med':>24}"
        )
        times = compare_reading(paths, arguments.repeats)
        for path in paths:
            f, r = times[path.name]["floor"], times[path.name]["reader"]
            print(
                f"{path.name:<12}{path.stat().st_size / 1e6:>7.1f}"
                f"{min(f):>9.2f} /{statistics.median(f):>5.2f}"
                f"{min(r):>10.2f} /{statistics.median(r):>5.2f}"
                f"{min(r) / min(f):>15.2f},{statistics.median(r) / statistics.median(f):>6.2f}"
            )
        print("\npeak memory of one read beyond what was there before, in file sizes")
        print(
            f"{'file':<12}{'floor traced':>14}{'reader traced':>15}"
            f"{'floor RSS':>11}{'reader RSS':>12}"
        )
        for path in paths:
            size = path.stat().st_size
            skip = header_words(path)
            traced_floor = traced_peak(lambda p=path, k=skip: floor(p, k)) / size
            traced_reader = traced_peak(lambda p=path: reader(p)) / size
            rss_floor = rss_rise(path, "floor") / size
            rss_reader = rss_rise(path, "reader") / size
            print(
                f"{path.name:<12}{traced_floor:>13.2f}x{traced_reader:>14.2f}x"
                f"{rss_floor:>10.2f}x{rss_reader:>11.2f}x"
            )
        print("\nthe whole check")
        device = profiled("read-device", arguments.profile, lambda: reader(device_path))
        load = profiled("read-load", arguments.profile, lambda: reader(load_path))
        start = time.perf_counter()
        result = profiled("check", arguments.profile, lambda: oneport.check(device, load))
        print(
            f"check (API, records in memory) {time.perf_counter() - start:8.2f} s"
            f"  ({result.verdict})"
        )
        out = io.StringIO()
        argv_check = ["check", str(device_path), "--load", str(load_path), "--quiet"]
        start = time.perf_counter()
        code = profiled(
            "command",
            arguments.profile,
            lambda: command_line(argv_check, stdout=out, stderr=out),
        )
        print(f"oneport check end to end       {time.perf_counter() - start:8.2f} s  (exit {code})")
        peak = peak_rss_bytes() / 2**20
        print(f"peak RSS of this process {peak:.0f} MiB; {out.getvalue().strip()}")
    print(f"load average at end {os.getloadavg()[0]:.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
