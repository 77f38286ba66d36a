"""Sweep benchmark: 10,000 variants x 2,001 frequencies of a 6-element load, side by side.

Run by hand: ``python benchmarks/bench_sweep.py`` (add ``--quick`` for a smaller smoke run).
It times, in one process on the same machine:

1. the sweep (``oneport.sweep.run_sweep``: netlist evaluation + the full per-variant check);
2. a bare numpy floor: the same load in closed form (chunked), the loop gain, its unwrapped
   phase and the encirclement count — the unavoidable work;
3. a hand-written loop that builds each load with scikit-rf media and runs ``oneport.check``
   (timed on a subset and scaled linearly, since 10,000 of them take many minutes);

then how the sweep time grows with variants and with frequency points, and 1 vs 2 Dask workers.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np

import oneport
from oneport.circuit import read_circuit
from oneport.sweep import monte_carlo_plan, run_sweep
from oneport.sweep.sources import LoopSource, Side

Z0 = 50.0
# An invented bias tee in front of a series resonator: six elements, all swept.
NETLIST = """* 6-element load for the sweep benchmark (invented values)
.set Rb=150
.set Lb=100n
.set Cb=10p
.set Rs=10
.set Ls=3n
.set Cs=4p
R1 1 2 Rb
L1 2 0 Lb
C1 1 3 Cb
R2 3 4 Rs
L2 4 5 Ls
C2 5 0 Cs
.oneport 1
"""
NOMINAL = {"Rb": 150.0, "Lb": 100e-9, "Cb": 10e-12, "Rs": 10.0, "Ls": 3e-9, "Cs": 4e-12}


def device_gamma(frequency_hz: np.ndarray) -> np.ndarray:
    """The invented demo diode: Rs + sLs + (−Rd ∥ Cj)."""
    s = 2j * np.pi * frequency_hz
    z = 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)
    return (z - Z0) / (z + Z0)


def closed_form_load(frequency_hz: np.ndarray, p: dict[str, np.ndarray]) -> np.ndarray:
    """(Rb + sLb) ∥ (1/(sCb) + Rs + sLs + 1/(sCs)), as Γ in Z0."""
    s = 2j * np.pi * frequency_hz
    col = {k: v[:, None] for k, v in p.items()}
    bias = col["Rb"] + s * col["Lb"]
    series = 1 / (s * col["Cb"]) + col["Rs"] + s * col["Ls"] + 1 / (s * col["Cs"])
    z = bias * series / (bias + series)
    return (z - Z0) / (z + Z0)


def numpy_floor(frequency_hz: np.ndarray, plan, chunk: int | None) -> float:
    """Closed-form load, loop gain, unwrapped phase and count, chunked: seconds."""
    gamma_device = device_gamma(frequency_hz)
    chunk = chunk or max(1, 1_000_000 // frequency_hz.size)
    start = time.perf_counter()
    for first in range(0, plan.variants, chunk):
        values = plan.chunk(first, first + chunk)
        loop = gamma_device * closed_form_load(frequency_hz, values)
        f = 1 - loop
        phase = np.unwrap(np.angle(f), axis=-1)
        sign_low = np.where(f[:, 0].real > 0, 1, -1)
        sign_high = np.where(f[:, -1].real > 0, 1, -1)
        side = lambda v: np.where(v < 0, -1.0, 1.0)  # noqa: E731
        low = np.angle(f[:, 0]) - np.where(sign_low < 0, side(f[:, 0].imag) * np.pi, 0)
        high = np.where(sign_high < 0, side(f[:, -1].imag) * np.pi, 0) - np.angle(f[:, -1])
        np.rint(-(phase[:, -1] - phase[:, 0] + low + high) / np.pi).astype(int)
    return time.perf_counter() - start


def sweep_seconds(frequency_hz, plan, circuit, **options) -> tuple[float, object]:
    source = LoopSource(
        frequency_hz,
        Z0,
        Side(gamma=device_gamma(frequency_hz)),
        Side(circuit=circuit, parameters=tuple(circuit.parameters)),
    )
    start = time.perf_counter()
    result = run_sweep(plan, source, frequency_hz, Z0, **options)
    return time.perf_counter() - start, result


def scikit_rf_loop(frequency_hz: np.ndarray, plan, count: int) -> float:
    """Per variant: build the load with scikit-rf media, then a single ``oneport.check``."""
    import skrf

    frequency = skrf.Frequency.from_f(frequency_hz, unit="hz")
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    device = oneport.OnePort(frequency_hz, device_gamma(frequency_hz), Z0, "device")
    start = time.perf_counter()
    for row in range(count):
        p = {name: float(column[row]) for name, column in plan.values.items()}
        bias = media.resistor(p["Rb"]) ** media.inductor(p["Lb"]) ** media.short()
        series = (
            media.capacitor(p["Cb"])
            ** media.resistor(p["Rs"])
            ** media.inductor(p["Ls"])
            ** media.capacitor(p["Cs"])
            ** media.short()
        )
        tee = media.tee()
        load = skrf.network.connect(skrf.network.connect(tee, 1, bias, 0), 1, series, 0)
        oneport.check(device, load)
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="1,000 variants, short loop")
    parser.add_argument("--no-dask", action="store_true", help="skip the Dask comparison")
    arguments = parser.parse_args()
    variants = 1_000 if arguments.quick else 10_000
    frequency_hz = np.linspace(1e6, 6e9, 2001)
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "load.cir"
        path.write_text(NETLIST)
        circuit = read_circuit(path)
    tolerances = [(name, 0.2) for name in NOMINAL]
    plan = monte_carlo_plan(tolerances, NOMINAL, variants, seed=1)
    chunk = None  # the runner's default (about 1e6 samples per chunk)

    warm_up = monte_carlo_plan(tolerances, NOMINAL, 50, seed=3)
    sweep_seconds(frequency_hz, warm_up, circuit)  # plans the circuit, touches the code paths
    seconds, result = min(
        (sweep_seconds(frequency_hz, plan, circuit, chunk_size=chunk) for _ in range(2)),
        key=lambda pair: pair[0],
    )
    one_thread = min(
        sweep_seconds(frequency_hz, plan, circuit, chunk_size=chunk, threads=1)[0] for _ in range(2)
    )
    floor = numpy_floor(frequency_hz, plan, chunk)
    loop_count = 20 if arguments.quick else 100
    loop = scikit_rf_loop(frequency_hz, plan, loop_count) * variants / loop_count
    stable = float(np.mean(result.table["verdict_code"] == 0))
    print(f"variants {variants} x {frequency_hz.size} points; {stable:.1%} stable")
    print(f"sweep, one thread per core {seconds:8.2f} s   (best of 2)")
    print(f"sweep, one thread          {one_thread:8.2f} s   (best of 2)")
    print(
        f"numpy floor (one thread)   {floor:8.2f} s   sweep / floor = {seconds / floor:5.2f}"
        f" (one thread: {one_thread / floor:.2f})"
    )
    print(
        f"scikit-rf loop             {loop:8.1f} s   loop / sweep = {loop / seconds:6.1f}"
        f" (one thread: {loop / one_thread:.1f})"
    )
    print(f"  (timed on {loop_count} variants, scaled linearly)")
    print("growth with variants (2,001 points):")
    for count in (variants // 4, variants // 2, variants):
        sub = monte_carlo_plan(tolerances, NOMINAL, count, seed=2)
        t, _ = sweep_seconds(frequency_hz, sub, circuit, chunk_size=chunk)
        print(f"  {count:7d} variants  {t:7.2f} s  {t / count * 1e6:7.1f} us/variant")
    print(f"growth with points ({variants // 4} variants):")
    sub = monte_carlo_plan(tolerances, NOMINAL, variants // 4, seed=2)
    for points in (501, 1001, 2001, 4001):
        grid = np.linspace(1e6, 6e9, points)
        t, _ = sweep_seconds(grid, sub, circuit, chunk_size=chunk)
        print(f"  {points:7d} points    {t:7.2f} s  {t / points * 1e3:7.3f} ms/point")
    if not arguments.no_dask:
        from distributed import LocalCluster

        print(f"in-process, one thread     {one_thread:8.2f} s")
        timings = {}
        for workers in (1, 2):
            # The cluster starts outside the timer: its start-up is paid once per session.
            with LocalCluster(
                n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None
            ) as cluster:
                # Each worker imports the package and plans the circuit on its first chunk.
                sweep_seconds(
                    frequency_hz,
                    warm_up,
                    circuit,
                    chunk_size=5,
                    scheduler=cluster.scheduler_address,
                )
                timings[workers], _ = sweep_seconds(
                    frequency_hz,
                    plan,
                    circuit,
                    chunk_size=chunk,
                    scheduler=cluster.scheduler_address,
                )
            print(f"Dask, {workers} worker(s)         {timings[workers]:8.2f} s")
        print(f"speed-up from 1 to 2 Dask workers: {timings[1] / timings[2]:4.2f}x")


if __name__ == "__main__":
    main()
