"""Sweep benchmark: 10,000 variants x 2,001 frequencies of a 6-element load, side by side.

Run by hand: ``python benchmarks/bench_sweep.py`` (add ``--quick`` for a smaller smoke run).
It times, in one process on the same machine:

1. the sweep (``oneport.products.sweep.run_sweep``: netlist evaluation + the full per-variant
check); 2. bare numpy floors: the same load in closed form (chunked), the loop gain, its unwrapped
   phase and the encirclement count — the unavoidable work — written twice: plainly (complex
   arrays, a million samples per chunk, ``numpy.unwrap``) and tuned with the sweep's own
   techniques (real and imaginary parts apart, cache-sized chunks, in-place buffers);
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
from oneport.products.sweep import monte_carlo_plan, run_sweep
from oneport.products.sweep.sources import LoopSource, Side

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


def sign_only_count(in_band: np.ndarray, f_low: np.ndarray, f_high: np.ndarray) -> np.ndarray:
    """The count from F's in-band phase change, each edge closed to the real axis on the side
    of Re F there (a sign-only closure, the floors' stand-in for the check's founded one)."""
    side = lambda v: np.where(v < 0, -1.0, 1.0)  # noqa: E731
    low = np.angle(f_low) - np.where(f_low.real > 0, 0, side(f_low.imag) * np.pi)
    high = np.where(f_high.real > 0, 0, side(f_high.imag) * np.pi) - np.angle(f_high)
    return np.rint(-(in_band + low + high) / np.pi).astype(int)


def numpy_floor(frequency_hz: np.ndarray, plan, chunk: int | None) -> tuple[float, np.ndarray]:
    """Closed-form load, loop gain, unwrapped phase and count, chunked: seconds, counts."""
    gamma_device = device_gamma(frequency_hz)
    chunk = chunk or max(1, 1_000_000 // frequency_hz.size)
    counts = []
    start = time.perf_counter()
    for first in range(0, plan.variants, chunk):
        values = plan.chunk(first, first + chunk)
        loop = gamma_device * closed_form_load(frequency_hz, values)
        f = 1 - loop
        phase = np.unwrap(np.angle(f), axis=-1)
        counts.append(sign_only_count(phase[:, -1] - phase[:, 0], f[:, 0], f[:, -1]))
    return time.perf_counter() - start, np.concatenate(counts)


def tuned_floor(frequency_hz: np.ndarray, plan, rows: int = 32) -> tuple[float, np.ndarray]:
    """The floor's work with the sweep's techniques, for this load only: seconds, counts.

    The closed form on real and imaginary parts ((Rb + jωLb) and Rs + jX in parallel, as
    conductance and negated susceptance), Γ written into a reused buffer, the loop gain and
    F in place, the phase steps wrapped in place and summed, blocks of ``rows`` variants.
    """
    gamma_device = device_gamma(frequency_hz)
    points = frequency_hz.size
    omega = 2 * np.pi * frequency_hz[None, :]
    inverse_omega = 1.0 / omega
    loop = np.empty((rows, points), dtype=complex)
    angle = np.empty((rows, points))
    steps = np.empty((rows, points - 1))
    c = 1.0 / Z0
    counts = []
    start = time.perf_counter()
    for first in range(0, plan.variants, rows):
        p = {k: v[:, None] for k, v in plan.chunk(first, first + rows).items()}
        size = p["Rb"].shape[0]
        reactance = omega * p["Lb"]
        magnitude = p["Rb"] ** 2 + reactance * reactance
        conductance = p["Rb"] / magnitude
        susceptance = reactance / magnitude
        reactance = (
            inverse_omega * (-1 / p["Cb"]) + omega * p["Ls"] + inverse_omega * (-1 / p["Cs"])
        )
        magnitude = p["Rs"] ** 2 + reactance * reactance
        conductance = conductance + p["Rs"] / magnitude
        susceptance = susceptance + reactance / magnitude
        r = conductance + c
        k = (2 * c) / (r * r + susceptance * susceptance)
        block = loop[:size]
        np.subtract(r * k, 1.0, out=block.real)
        np.multiply(susceptance, k, out=block.imag)
        np.multiply(block, gamma_device, out=block)
        np.subtract(1.0, block, out=block)  # F = 1 − L
        theta = np.arctan2(block.imag, block.real, out=angle[:size])
        step = np.subtract(theta[:, 1:], theta[:, :-1], out=steps[:size])
        step[step > np.pi] -= 2 * np.pi
        step[step < -np.pi] += 2 * np.pi
        counts.append(sign_only_count(step.sum(axis=-1), block[:, 0], block[:, -1]))
    return time.perf_counter() - start, np.concatenate(counts)


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
    two_threads = min(
        sweep_seconds(frequency_hz, plan, circuit, chunk_size=chunk, threads=2)[0] for _ in range(2)
    )
    floor, floor_counts = min(
        (numpy_floor(frequency_hz, plan, chunk) for _ in range(2)), key=lambda p: p[0]
    )
    tuned, tuned_counts = min(
        (tuned_floor(frequency_hz, plan) for _ in range(2)), key=lambda p: p[0]
    )
    loop_count = 20 if arguments.quick else 100
    loop = scikit_rf_loop(frequency_hz, plan, loop_count) * variants / loop_count
    table = result.table
    shares = np.bincount(table["verdict_code"], minlength=3) / variants
    known = table["count_known"]
    print(
        f"variants {variants} x {frequency_hz.size} points; stable {shares[0]:.1%}, unstable"
        f" {shares[1]:.1%}, inconclusive {shares[2]:.1%}"
    )
    print(f"sweep (one thread, default)  {seconds:8.2f} s   (best of 2)")
    print(f"sweep, two threads           {two_threads:8.2f} s   (best of 2)")
    print(f"numpy floor, plain           {floor:8.2f} s   sweep / floor = {seconds / floor:5.2f}")
    print(f"numpy floor, tuned           {tuned:8.2f} s   sweep / floor = {seconds / tuned:5.2f}")
    print(
        f"  the floors' counts agree: {np.array_equal(floor_counts, tuned_counts)}; with the"
        f" sweep's where its count is known ({known.mean():.1%} of variants):"
        f" {np.array_equal(floor_counts[known], table['encirclements'][known])}"
    )
    print(f"scikit-rf loop               {loop:8.1f} s   loop / sweep = {loop / seconds:6.1f}")
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

        print(f"in-process, one thread       {seconds:8.2f} s")
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
