"""Benchmark: a 6-element load netlist for many parameter sets, oneport against scikit-rf.

Run by hand from the repository root (not a unit test)::

    python benchmarks/bench_circuit.py                       # 10,000 sets x 2,001 frequencies
    python benchmarks/bench_circuit.py --variants 2000 --skrf-subset 100

oneport evaluates all parameter sets in one call (closed-form ladder path, then again forcing
the elimination path); scikit-rf builds each load from ``media`` elements joined with ``**``.
The scikit-rf loop is timed on a subset and scaled linearly to the full count (each load is
built independently, so its cost is linear in the count); the subset's results are compared
with oneport's. Peak resident memory comes from ``resource.getrusage`` after the oneport runs,
before scikit-rf is touched.
"""

from __future__ import annotations

import argparse
import resource
import time

import numpy as np

from oneport.circuit import parse_circuit

LOAD = """
* a 6-element load: series R and L, shunt C and L, series C, terminating R
.set RS=5 LS=2n CP=1p LP=8n CS=3p RL=50
Rs 1 2 RS
Ls 2 3 LS
Cp 3 0 CP
Lp 3 0 LP
Cs 3 4 CS
Rl 4 0 RL
.oneport 1
"""


def parameter_sets(count: int, seed: int = 1) -> dict[str, np.ndarray]:
    """Random, deterministic values for every parameter."""
    generator = np.random.default_rng(seed)
    return {
        "RS": generator.uniform(1, 20, count),
        "LS": generator.uniform(0.5e-9, 5e-9, count),
        "CP": generator.uniform(0.2e-12, 3e-12, count),
        "LP": generator.uniform(2e-9, 20e-9, count),
        "CS": generator.uniform(0.5e-12, 10e-12, count),
        "RL": generator.uniform(10, 200, count),
    }


def with_scikit_rf(frequency_hz: np.ndarray, params: dict[str, np.ndarray], indices) -> list:
    """Build each load one by one with scikit-rf media elements and ``**``."""
    import skrf

    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    media = skrf.media.DefinedGammaZ0(frequency, z0=50)
    results = []
    for i in indices:
        network = (
            media.resistor(params["RS"][i])
            ** media.inductor(params["LS"][i])
            ** media.shunt_capacitor(params["CP"][i])
            ** media.shunt_inductor(params["LP"][i])
            ** media.capacitor(params["CS"][i])
            ** media.resistor(params["RL"][i])
            ** media.short()
        )
        results.append(network.s[:, 0, 0])
    return results


def peak_rss_mib() -> float:
    """Peak resident set size of this process so far, MiB (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--variants", type=int, default=10_000)
    parser.add_argument("--points", type=int, default=2001)
    parser.add_argument("--skrf-subset", type=int, default=200)
    arguments = parser.parse_args()

    frequency_hz = np.linspace(1e6, 20e9, arguments.points)
    params = parameter_sets(arguments.variants)
    circuit = parse_circuit(LOAD, source="benchmark load")
    circuit.gamma(frequency_hz[:10], 50.0)  # plan once, outside the timing
    baseline = peak_rss_mib()

    start, cpu = time.perf_counter(), time.process_time()
    closed_form = circuit.evaluate(frequency_hz, 50.0, params)[:, 0, 0]
    closed_form_s, closed_form_cpu = time.perf_counter() - start, time.process_time() - cpu
    rss_closed = peak_rss_mib()
    subset = min(arguments.skrf_subset, arguments.variants)
    indices = np.linspace(0, arguments.variants - 1, subset).astype(int)
    closed_form_subset = closed_form[indices].copy()
    del closed_form
    start, cpu = time.perf_counter(), time.process_time()
    eliminated = circuit.evaluate(frequency_hz, 50.0, params, method="elimination")[:, 0, 0]
    elimination_s, elimination_cpu = time.perf_counter() - start, time.process_time() - cpu
    rss_elimination = peak_rss_mib()

    start, cpu = time.perf_counter(), time.process_time()
    reference = with_scikit_rf(frequency_hz, params, indices)
    skrf_subset_s, skrf_subset_cpu = time.perf_counter() - start, time.process_time() - cpu
    skrf_full_s = skrf_subset_s * arguments.variants / subset
    skrf_full_cpu = skrf_subset_cpu * arguments.variants / subset
    reference_array = np.array(reference)
    difference = max(
        float(np.abs(eliminated[indices] - reference_array).max()),
        float(np.abs(closed_form_subset - reference_array).max()),
    )
    output_mib = arguments.variants * arguments.points * 16 / 2**20

    print(f"load: 6 elements; {arguments.variants} parameter sets x {arguments.points} points")
    print("                           wall-clock    CPU time")
    print(f"oneport closed-form path : {closed_form_s:8.2f} s  {closed_form_cpu:8.2f} s")
    print(f"oneport elimination path : {elimination_s:8.2f} s  {elimination_cpu:8.2f} s")
    print(
        f"scikit-rf media and **   : {skrf_full_s:8.1f} s  {skrf_full_cpu:8.1f} s"
        f"  (timed on {subset} loads: {skrf_subset_s:.2f} s, scaled linearly)"
    )
    print(
        f"speed-up closed form     : {skrf_full_s / closed_form_s:8.0f} x "
        f"{skrf_full_cpu / closed_form_cpu:8.0f} x"
    )
    print(
        f"speed-up elimination     : {skrf_full_s / elimination_s:8.0f} x "
        f"{skrf_full_cpu / elimination_cpu:8.0f} x"
    )
    print(f"largest |difference| of either path vs scikit-rf on the subset: {difference:.2e}")
    print(
        f"peak RSS: {baseline:.0f} MiB before, {rss_closed:.0f} MiB after the closed form,"
        f" {rss_elimination:.0f} MiB after elimination (the result array alone is"
        f" {output_mib:.0f} MiB)"
    )


if __name__ == "__main__":
    main()
