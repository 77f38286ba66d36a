"""Dask benchmark: a 10^5-variant Monte Carlo sweep in this process, on one and on two local
worker processes, each run as a user runs it (a fresh ``oneport sweep`` process).

Run by hand from the repository root::

    python benchmarks/bench_dask.py [--samples 100000] [--repeats 3]

The workload is the sweep benchmark's (``bench_sweep.py``): the invented demo diode on 2,001
log points against the 6-element load with a 1 cm line, here with L and C drawn within ±20 %.
The three runs are interleaved and repeated; min and median are printed, the tables are
compared, and anything a run wrote on stderr is shown (there should be nothing). Then the same
three through the API in this process (``run_sweep``: the sweep alone, the cluster's start
and close included, the imports and the table not), and the cluster's start-up and shutdown
timed apart (``_local_cluster``, as ``--workers`` starts it).
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

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))
from bench_sweep import NETLIST, write_device


def sweep_command(device: Path, load: Path, table: Path, samples: int, extra: list[str]):
    return [
        sys.executable, "-m", "oneport", "sweep", str(device), "--load", str(load),
        "--tolerance", "L=20%", "--tolerance", "C=20%", "--samples", str(samples),
        "--seed", "5", "-o", str(table), "--quiet", *extra,
    ]  # fmt: skip


def start_up() -> tuple[float, float]:
    """Seconds to start a two-worker cluster and a client, and to close both."""
    import dask
    from distributed import Client
    from distributed.utils import silence_logging_cmgr

    from oneport.products.sweep.runner import _QUIET_DASK, _local_cluster

    with dask.config.set(_QUIET_DASK), silence_logging_cmgr("error"):
        start = time.perf_counter()
        cluster = _local_cluster(2)
        client = Client(cluster)
        client.submit(sum, [1, 2]).result()
        started = time.perf_counter() - start
        start = time.perf_counter()
        client.close()
        cluster.close()
        return started, time.perf_counter() - start


def sweep_in_process(device: Path, load: Path, samples: int, repeats: int):
    """``run_sweep`` here, on one and on two local workers: seconds per run."""
    import distributed  # noqa: F401  (imported once, outside the timing)

    from oneport.circuit import read_circuit
    from oneport.products.sweep import monte_carlo_plan, run_sweep
    from oneport.products.sweep.sources import LoopSource, Side
    from oneport.reading.touchstone import read_one_port

    device_port = read_one_port(device)
    circuit = read_circuit(load)
    frequency_hz = device_port.frequency_hz
    source = LoopSource(
        frequency_hz,
        50.0,
        Side(gamma=device_port.gamma),
        Side(circuit=circuit, parameters=("L", "C")),
    )
    plan = monte_carlo_plan([("L", 0.2), ("C", 0.2)], circuit.parameters, samples, seed=5)
    runs = {"in this process": None, "1 worker": 1, "2 workers": 2}
    times: dict[str, list[float]] = {name: [] for name in runs}
    for _ in range(repeats):
        for name, workers in runs.items():
            start = time.perf_counter()
            run_sweep(plan, source, frequency_hz, 50.0, workers=workers)
            times[name].append(time.perf_counter() - start)
    return times


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--samples", type=int, default=100_000)
    parser.add_argument("--repeats", type=int, default=3)
    arguments = parser.parse_args()
    folder = Path(tempfile.mkdtemp())
    device, load = folder / "device.s1p", folder / "load.cir"
    write_device(device, np.geomspace(10e6, 20e9, 2001))
    load.write_text(NETLIST)
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} cores, Python"
        f" {platform.python_version()}; load average at start {os.getloadavg()[0]:.2f}"
    )
    print(f"workload: {arguments.samples} Monte Carlo variants x 2001 points, a line in the load")
    runs = {
        "in this process": [],
        "--workers 1": ["--workers", "1"],
        "--workers 2": ["--workers", "2"],
    }
    times: dict[str, list[float]] = {name: [] for name in runs}
    errors: dict[str, str] = {}
    for _ in range(arguments.repeats):
        for name, extra in runs.items():
            table = folder / f"{name.replace(' ', '_')}.parquet"
            start = time.perf_counter()
            done = subprocess.run(
                sweep_command(device, load, table, arguments.samples, extra),
                capture_output=True,
                text=True,
            )
            times[name].append(time.perf_counter() - start)
            if done.stderr:
                errors[name] = done.stderr
    print(f"{'':20s}{'min':>8s}{'median':>9s}")
    for name, values in times.items():
        print(f"{name:20s}{min(values):7.2f}s{statistics.median(values):8.2f}s")
    one, two = min(times["--workers 1"]), min(times["--workers 2"])
    here = min(times["in this process"])
    print(
        f"2 workers: {one / two:.2f}x faster than 1 worker (target >= 1.6),"
        f" {here / two:.2f}x faster than in this process (target > 1)"
    )
    import pyarrow.parquet as pq

    tables = [pq.read_table(folder / f"{name.replace(' ', '_')}.parquet") for name in runs]
    same = all(
        np.array_equal(
            np.asarray(table[column].to_pylist(), dtype=object).astype(str),
            np.asarray(tables[0][column].to_pylist(), dtype=object).astype(str),
        )
        for table in tables[1:]
        for column in tables[0].column_names
    )
    print(f"tables identical: {same}; stderr: {errors or 'nothing'}")
    api = sweep_in_process(device, load, arguments.samples, arguments.repeats)
    print(f"{'run_sweep (API)':20s}{'min':>8s}{'median':>9s}")
    for name, values in api.items():
        print(f"{name:20s}{min(values):7.2f}s{statistics.median(values):8.2f}s")
    one, two, here = (min(api[name]) for name in ("1 worker", "2 workers", "in this process"))
    print(f"run_sweep: 2 workers {one / two:.2f}x faster than 1, {here / two:.2f}x than here")
    started, closed = start_up()
    print(f"two-worker cluster: start-up {started:.2f} s, shutdown {closed:.2f} s")
    print(f"load average at the end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
