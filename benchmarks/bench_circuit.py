"""Circuit engine benchmark: a bridged netlist against numpy.linalg.solve, the elimination
budget, and large netlists (a 2,000-element LC ladder and resistor mesh).

Run by hand from the repository root (not a unit test)::

    python benchmarks/bench_circuit.py                  # all three parts
    python benchmarks/bench_circuit.py --part bridge    # or budget, large

1. **bridge**: a 12-node netlist that no series–parallel reduction takes (a bridge and a
   transconductance ``G``), 1,000 variants (gm, bridging C) x 2,001 points, by
   ``Circuit.evaluate`` against ``numpy.linalg.solve`` batched over the same nodal matrices
   (assembled here, outside that timing: numpy is timed on the solve alone); interleaved,
   repeated, min and median; the answers compared.
2. **budget**: the same evaluation with ``engine.MATRIX_BUDGET_BYTES`` from 1 to 64 MiB.
3. **large**: an LC ladder and a resistor mesh of about 2,000 elements each, over 2,001 points:
   planning (validation, ordering, symbolic elimination) and evaluation, each side by side
   with the same netlists at 62, 114 and 222 elements, and the mesh answer compared with
   numpy.linalg.solve.
"""

from __future__ import annotations

import argparse
import os
import platform
import statistics
import time

import numpy as np

from oneport.circuit import engine, parse_circuit

Z0 = 50.0
BRIDGE = """* invented: a gain stage's small-signal model with a bridging feedback path
.set GM=40m CB=0.5p
R1 1 2 20
R2 1 3 75
C3 2 3 CB
L4 2 4 4n
R5 3 5 33
C6 5 0 1p
L7 4 6 2n
R8 6 0 40
G1 7 0 2 0 GM
R9 7 0 200
C10 7 3 0.3p
L11 7 8 1n
R12 8 9 10
C13 9 0 2p
R14 9 1 500
L15 5 10 3n
R16 10 11 60
C17 11 0 0.7p
R18 11 12 25
L19 12 0 6n
.oneport 1
"""


def bridge_matrices(frequency_hz: np.ndarray, gm: np.ndarray, cb: np.ndarray) -> np.ndarray:
    """Nodal admittance matrices of BRIDGE with the port's 50 ohm, (variants, n, 12, 12)."""
    nodes = [str(k) for k in range(1, 13)]
    where = {node: i for i, node in enumerate(nodes)}
    s = 2j * np.pi * frequency_hz[None, :]
    matrix = np.zeros((gm.size, frequency_hz.size, 12, 12), dtype=complex)

    def admittance(a: str, b: str, y) -> None:
        y = np.broadcast_to(y, matrix.shape[:2])
        for x, other in ((a, b), (b, a)):
            if x != "0":
                matrix[:, :, where[x], where[x]] += y
                if other != "0":
                    matrix[:, :, where[x], where[other]] -= y

    for line in BRIDGE.splitlines():
        parts = line.split()
        if not parts or parts[0][0] in "*.":
            continue
        name, a, b, value = parts[0], parts[1], parts[2], parts[-1]
        if name[0] == "G":
            # current gm·V(2) from node 7 to ground: row 7, column 2
            matrix[:, :, where["7"], where["2"]] += gm[:, None]
            continue
        number = {"CB": cb[:, None], "GM": gm[:, None]}.get(value)
        number = float(value.replace("n", "e-9").replace("p", "e-12")) if number is None else number
        y = {"R": lambda v: 1 / v, "L": lambda v: 1 / (s * v), "C": lambda v: s * v}[name[0]](
            number
        )
        admittance(a, b, y)
    matrix[:, :, 0, 0] += 1 / Z0
    return matrix


def timed(call) -> tuple[float, object]:
    start = time.perf_counter()
    result = call()
    return time.perf_counter() - start, result


def bridge(repeats: int, variants: int) -> None:
    frequency_hz = np.linspace(1e6, 20e9, 2001)
    generator = np.random.default_rng(3)
    gm, cb = generator.uniform(-0.2, 0.2, variants), generator.uniform(0.1e-12, 2e-12, variants)
    circuit = parse_circuit(BRIDGE, source="bridge")
    assert not circuit.is_series_parallel
    circuit.gamma(frequency_hz[:10], Z0)
    matrices = bridge_matrices(frequency_hz, gm, cb)
    current = np.zeros((12, 1), dtype=complex)
    current[0] = 1.0
    ours, theirs = [], []
    for _ in range(repeats):  # interleaved
        seconds, gamma = timed(lambda: circuit.gamma(frequency_hz, Z0, GM=gm, CB=cb))
        ours.append(seconds)
        seconds, voltage = timed(lambda: np.linalg.solve(matrices, current)[..., 0, 0])
        theirs.append(seconds)
    reference = 2 * voltage / Z0 - 1  # a unit current into the port and its Z0 in parallel
    print(f"bridge: 12 nodes with G, {variants} variants x {frequency_hz.size} points")
    print(f"  {'':34s}{'min':>8s}{'median':>9s}")
    print(f"  {'oneport Circuit.gamma':34s}{min(ours):7.2f}s{statistics.median(ours):8.2f}s")
    label = "numpy.linalg.solve (solve only)"
    print(f"  {label:34s}{min(theirs):7.2f}s{statistics.median(theirs):8.2f}s")
    print(
        f"  numpy / oneport = {min(theirs) / min(ours):.2f} (target >= 2);"
        f" largest |ΔΓ| = {np.abs(gamma - reference).max():.1e}"
    )


def budget(repeats: int) -> None:
    frequency_hz = np.linspace(1e6, 20e9, 2001)
    generator = np.random.default_rng(3)
    gm, cb = generator.uniform(-0.2, 0.2, 1000), generator.uniform(0.1e-12, 2e-12, 1000)
    circuit = parse_circuit(BRIDGE, source="bridge")
    default = engine.MATRIX_BUDGET_BYTES
    sizes = (1, 2, 4, 8, 16, 32, 64)
    times: dict[int, list[float]] = {size: [] for size in sizes}
    for _ in range(repeats):
        for size in sizes:
            engine.MATRIX_BUDGET_BYTES = size * 2**20
            times[size].append(timed(lambda: circuit.gamma(frequency_hz, Z0, GM=gm, CB=cb))[0])
    engine.MATRIX_BUDGET_BYTES = default
    print(f"budget (bridge, 1000 variants x 2001 points; default {default // 2**20} MiB):")
    for size in sizes:
        median = statistics.median(times[size])
        print(f"  {size:3d} MiB  min {min(times[size]):5.2f} s  median {median:5.2f} s")


def ladder_netlist(elements: int) -> str:
    sections = elements // 2
    lines = [
        f"L{k} n{k} n{k + 1} {1e-9 * (1 + k % 3)}\nC{k} n{k + 1} 0 {1e-12 * (1 + k % 5)}"
        for k in range(sections)
    ]
    return "\n".join(lines) + f"\nR0 n{sections} 0 50\n.oneport n0"


def mesh_netlist(elements: int) -> tuple[str, int, list[tuple[str, str, float]]]:
    """A square resistor mesh of at most ``elements`` resistors, port at one corner and
    ground at the other."""
    side = 2
    while 2 * (side + 1) * side <= elements:
        side += 1

    def name(i: int, j: int) -> str:
        return "p" if (i, j) == (0, 0) else "0" if (i, j) == (side - 1, side - 1) else f"n{i}_{j}"

    resistors = []
    for i in range(side):
        for j in range(side):
            if i + 1 < side:
                resistors.append((name(i, j), name(i + 1, j), 10.0 + len(resistors) % 7))
            if j + 1 < side:
                resistors.append((name(i, j), name(i, j + 1), 10.0 + len(resistors) % 5))
    text = "\n".join(f"R{k} {a} {b} {r}" for k, (a, b, r) in enumerate(resistors))
    return text + "\n.oneport p", len(resistors), resistors


def mesh_reference(resistors: list[tuple[str, str, float]]) -> complex:
    nodes = sorted({n for a, b, _ in resistors for n in (a, b)} - {"0"})
    where = {node: i for i, node in enumerate(nodes)}
    matrix = np.zeros((len(nodes), len(nodes)))
    for a, b, r in resistors:
        for x in (a, b):
            if x != "0":
                matrix[where[x], where[x]] += 1 / r
        if "0" not in (a, b):
            matrix[where[a], where[b]] -= 1 / r
            matrix[where[b], where[a]] -= 1 / r
    current = np.zeros(len(nodes))
    current[where["p"]] = 1.0
    impedance = np.linalg.solve(matrix, current)[where["p"]]
    return (impedance - Z0) / (impedance + Z0)


def large() -> None:
    frequency_hz = np.geomspace(1e6, 6e9, 2001)
    print("large netlists over 2001 points (plan = read and plan once; evaluate = all points):")
    for elements in (62, 114, 222, 2000):
        start = time.perf_counter()
        circuit = parse_circuit(ladder_netlist(elements), source="ladder")
        plan_s = time.perf_counter() - start
        evaluate_s, gamma = timed(lambda: circuit.gamma(frequency_hz, Z0))  # noqa: B023
        forced_s, forced = timed(
            lambda: circuit.evaluate(frequency_hz, Z0, {}, method="elimination")  # noqa: B023
        )
        difference = np.abs(gamma - forced[0, 0]).max()
        print(
            f"  LC ladder {elements + 1:5d} elements: plan {plan_s:6.2f} s, closed form"
            f" {evaluate_s:6.2f} s, elimination {forced_s:6.2f} s, |Δ| {difference:.0e}"
        )
        text, count, resistors = mesh_netlist(elements)
        start = time.perf_counter()
        circuit = parse_circuit(text, source="mesh")
        plan_s = time.perf_counter() - start
        evaluate_s, gamma = timed(lambda: circuit.gamma(frequency_hz, Z0))  # noqa: B023
        error = np.abs(gamma - mesh_reference(resistors)).max()
        print(
            f"  R mesh    {count:5d} elements: plan {plan_s:6.2f} s, elimination"
            f" {evaluate_s:6.2f} s ({len(circuit.plan.entries)} stored coefficients),"
            f" |Δ| against numpy.linalg.solve {error:.0e}"
        )


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--part", choices=("bridge", "budget", "large"), action="append")
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--variants", type=int, default=1000)
    arguments = parser.parse_args()
    parts = arguments.part or ["bridge", "budget", "large"]
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} cores, Python"
        f" {platform.python_version()}, numpy {np.__version__}; load average at start"
        f" {os.getloadavg()[0]:.2f}"
    )
    if "bridge" in parts:
        bridge(arguments.repeats, arguments.variants)
    if "budget" in parts:
        budget(max(2, arguments.repeats // 2))
    if "large" in parts:
        large()
    print(f"load average at the end {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
