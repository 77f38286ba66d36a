"""Memory of a Monte Carlo sweep up to its first chunk, against the number of samples.

Run by hand from the repository root: ``python benchmarks/bench_sweep_memory.py`` (``--base
DIR`` adds the same measurement of another checkout, e.g. an older commit exported with
``git archive COMMIT | tar -x -C DIR``, side by side). For each number of samples a fresh
child process runs ``oneport sweep`` on the stable example device against the bias-tee netlist
with three tolerances (``--tolerance LCHOKE=10% --tolerance CBLOCK=10% --tolerance
RSUPPLY=50%``) through ``oneport.cli.main``, and stops right after the first chunk has been
judged, printing its peak resident set size (``VmHWM`` of ``/proc/self/status``) and the same
figure just before the run, after the imports. The rise is what the plan and the first chunk
cost: flat in the samples when the variants are drawn chunk by chunk.
"""

from __future__ import annotations

import argparse
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

CHILD = r"""
import os, sys
sys.path.insert(0, {code!r})

def peak_kib():
    for line in open("/proc/self/status"):
        if line.startswith("VmHWM:"):
            return int(line.split()[1])

import oneport.cli
from oneport.products.sweep import runner
original = runner.run_chunk

def first_chunk(*args, **kwargs):
    original(*args, **kwargs)
    print(before, peak_kib(), flush=True)
    os._exit(0)

runner.run_chunk = first_chunk
examples = {examples!r}
before = peak_kib()
oneport.cli.main([
    "sweep", examples + "/stable/device.s1p", "--load", examples + "/circuits/bias_tee.cir",
    "--tolerance", "LCHOKE=10%", "--tolerance", "CBLOCK=10%", "--tolerance", "RSUPPLY=50%",
    "--samples", {samples!r}, "--quiet",
])
"""


def measure(code: Path, samples: int) -> tuple[float, float, float]:
    """(peak before the run, peak at the first chunk, seconds), MiB and s."""
    started = time.perf_counter()
    done = subprocess.run(
        [sys.executable, "-c", CHILD.format(code=str(code), samples=str(samples),
                                            examples=str(ROOT / "touchstone_examples"))],
        capture_output=True, text=True, check=False,
    )  # fmt: skip
    seconds = time.perf_counter() - started
    fields = done.stdout.split()
    if done.returncode != 0 or len(fields) != 2:
        raise RuntimeError(f"{code} with {samples} samples: {done.stderr[-400:]}")
    return int(fields[0]) / 1024, int(fields[1]) / 1024, seconds


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--samples", type=int, nargs="+", default=[100_000, 20_000_000])
    parser.add_argument("--base", type=Path, help="another checkout to measure beside this one")
    arguments = parser.parse_args()
    machine = platform.processor() or platform.machine()
    print(f"{machine}, {os.cpu_count()} cores, Python {platform.python_version()};"
          f" load average {os.getloadavg()[0]:.2f}")  # fmt: skip
    checkouts = [("this checkout", ROOT)] + ([("base", arguments.base)] if arguments.base else [])
    print(
        f"{'code':14s} {'samples':>12s} {'before MiB':>11s} {'first chunk MiB':>16s}"
        f" {'rise MiB':>9s} {'seconds':>8s}"
    )
    for name, code in checkouts:
        for samples in arguments.samples:
            before, peak, seconds = measure(code, samples)
            print(f"{name:14s} {samples:12,d} {before:11.1f} {peak:16.1f} {peak - before:9.1f}"
                  f" {seconds:8.2f}")  # fmt: skip
    print(f"load average at the end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
