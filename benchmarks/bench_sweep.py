"""Sweep benchmark: a load with a line, 10,000 (L, C) variants x 2,001 log points, side by side.

Run by hand from the repository root: ``python benchmarks/bench_sweep.py`` (``--quick`` for a
smaller smoke run). The workload: an invented demo diode (a fixed device, written as a
Touchstone file on 2,001 logarithmic points, 10 MHz to 20 GHz) against a 6-element load netlist
with a 1 cm line -- series L, shunt C, line, shunt R, series C, R -- swept over a 100 x 100
grid of (L, C). In one process, interleaved and repeated (min and median printed):

1. ``oneport sweep`` through its command-line entry in this process (``oneport.cli.main``):
   reading both files, planning, every variant's check, the Parquet table written;
2. a bare numpy floor written here: the same load in closed form (the line by its input
   impedance), the loop gain, its unwrapped phase and the encirclement count, chunked -- the
   unavoidable work, on complex arrays as one would first write it;
3. a scikit-rf loop written here: each load built from ``skrf.media`` elements (``**``,
   ``line``) and its loop gain's count taken as in the floor; timed on a subset and scaled
   linearly (each variant is independent);

then the growth with variants and with points (time linear in both).
"""

from __future__ import annotations

import argparse
import contextlib
import io
import os
import platform
import statistics
import tempfile
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

from oneport.cli import main as oneport_main

Z0 = 50.0
C_LIGHT = 299_792_458.0
LINE_LENGTH_M, LINE_EEFF, LINE_Z0 = 0.01, 3.0, 50.0
NETLIST = """* invented load: series L, shunt C, a 1 cm line, shunt R, series C, R
.set L=5n C=1p
L1 1 2 L
C1 2 0 C
T1 2 0 3 0 z0=50 len=10m eeff=3
R1 3 0 300
C2 3 4 10p
R2 4 0 50
.oneport 1
"""
R_SHUNT, C_SERIES, R_END = 300.0, 10e-12, 50.0


def device_gamma(frequency_hz: np.ndarray) -> np.ndarray:
    """The invented demo diode: Rs + sLs + (−Rd ∥ Cj)."""
    s = 2j * np.pi * frequency_hz
    z = 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)
    return (z - Z0) / (z + Z0)


def write_device(path: Path, frequency_hz: np.ndarray) -> None:
    gamma = device_gamma(frequency_hz)
    rows = "\n".join(
        f"{f:.12g} {g.real:.15g} {g.imag:.15g}" for f, g in zip(frequency_hz, gamma, strict=True)
    )
    path.write_text(f"! invented demo diode\n# HZ S RI R 50\n{rows}\n")


def load_gamma(frequency_hz: np.ndarray, inductance: np.ndarray, capacitance: np.ndarray):
    """Γ of the load for columns of (L, C), plainly with complex numbers."""
    s = 2j * np.pi * frequency_hz
    z_end = R_END + 1 / (s * C_SERIES)  # series C into R
    z_t = R_SHUNT * z_end / (R_SHUNT + z_end)  # shunt R
    t = np.tanh(s * LINE_LENGTH_M * np.sqrt(LINE_EEFF) / C_LIGHT)
    z_line = LINE_Z0 * (z_t + LINE_Z0 * t) / (LINE_Z0 + z_t * t)  # the line's input
    y = 1 / z_line + s * capacitance[:, None]  # shunt C
    z = s * inductance[:, None] + 1 / y  # series L
    return (z - Z0) / (z + Z0)


def counts(f: np.ndarray) -> np.ndarray:
    """Encirclements of 0 by F = 1 − L from its unwrapped phase, each edge closed to the real
    axis on the side of Re F there (a sign-only closure: the floor's stand-in)."""
    phase = np.unwrap(np.angle(f), axis=-1)
    in_band = phase[:, -1] - phase[:, 0]
    f_low, f_high = f[:, 0], f[:, -1]
    side = lambda v: np.where(v < 0, -1.0, 1.0)  # noqa: E731
    low = np.angle(f_low) - np.where(f_low.real > 0, 0, side(f_low.imag) * np.pi)
    high = np.where(f_high.real > 0, 0, side(f_high.imag) * np.pi) - np.angle(f_high)
    return np.rint(-(in_band + low + high) / np.pi).astype(int)


def numpy_floor(frequency_hz, inductance, capacitance, chunk=500) -> np.ndarray:
    gamma_device = device_gamma(frequency_hz)
    found = []
    for first in range(0, inductance.size, chunk):
        part = slice(first, first + chunk)
        f = 1 - gamma_device * load_gamma(frequency_hz, inductance[part], capacitance[part])
        found.append(counts(f))
    return np.concatenate(found)


def scikit_rf_loop(frequency_hz, inductance, capacitance) -> np.ndarray:
    import skrf

    frequency = skrf.Frequency.from_f(frequency_hz, unit="hz")
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    beta = 2 * np.pi * frequency_hz * np.sqrt(LINE_EEFF) / C_LIGHT
    line_media = skrf.media.DefinedGammaZ0(frequency, z0_port=Z0, z0=LINE_Z0, gamma=1j * beta)
    gamma_device = device_gamma(frequency_hz)
    found = []
    for inductor, capacitor in zip(inductance, capacitance, strict=True):
        load = (
            media.inductor(inductor)
            ** media.shunt_capacitor(capacitor)
            ** line_media.line(LINE_LENGTH_M, unit="m")
            ** media.shunt(media.resistor(R_SHUNT) ** media.short())
            ** media.capacitor(C_SERIES)
            ** media.resistor(R_END)
            ** media.short()
        )
        found.append(counts((1 - gamma_device * load.s[:, 0, 0])[None, :])[0])
    return np.array(found)


def sweep_cli(device: Path, load: Path, table: Path, shape: tuple[int, int], extra=()) -> None:
    """``oneport sweep DEVICE --load LOAD --vary L=… --vary C=… -o TABLE`` in this process."""
    arguments = ["sweep", str(device), "--load", str(load), "--vary", f"L=1n:20n:{shape[0]}"]
    arguments += ["--vary", f"C=0.1p:5p:{shape[1]}", "-o", str(table), "--quiet", *extra]
    with contextlib.redirect_stdout(io.StringIO()):
        code = oneport_main(arguments)
    assert code in (0, 3, 4), code


def timed(call: Callable[[], object]) -> float:
    start = time.perf_counter()
    call()
    return time.perf_counter() - start


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="1,024 variants, fewer repeats")
    parser.add_argument("--repeats", type=int, default=5)
    arguments = parser.parse_args()
    count = 1024 if arguments.quick else 10_000
    repeats = 2 if arguments.quick else arguments.repeats
    side = round(np.sqrt(count))
    frequency_hz = np.geomspace(10e6, 20e9, 2001)
    inductance_axis, capacitance_axis = (
        np.linspace(1e-9, 20e-9, side),
        np.linspace(0.1e-12, 5e-12, side),
    )
    inductance, capacitance = (
        grid.ravel() for grid in np.meshgrid(inductance_axis, capacitance_axis, indexing="ij")
    )
    folder = Path(tempfile.mkdtemp())
    device, load, table = folder / "device.s1p", folder / "load.cir", folder / "table.parquet"
    write_device(device, frequency_hz)
    load.write_text(NETLIST)

    print(
        f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores,"
        f" Python {platform.python_version()}, numpy {np.__version__};"
        f" load average at start {os.getloadavg()[0]:.2f}"
    )
    print(f"workload: {side * side} (L, C) variants x {frequency_hz.size} log points")
    sweep_cli(device, load, table, (4, 4))  # imports and first calls outside the timing
    numpy_floor(frequency_hz, inductance[:10], capacitance[:10])
    subset = 20 if arguments.quick else 100
    picks = np.linspace(0, inductance.size - 1, subset).astype(int)
    scikit_rf_loop(frequency_hz, inductance[:2], capacitance[:2])

    timings: dict[str, list[float]] = {"sweep": [], "floor": [], "scikit-rf": []}
    for _ in range(repeats):  # interleaved: each repeat runs all three in turn
        timings["sweep"].append(timed(lambda: sweep_cli(device, load, table, (side, side))))
        timings["floor"].append(timed(lambda: numpy_floor(frequency_hz, inductance, capacitance)))
        loop = timed(lambda: scikit_rf_loop(frequency_hz, inductance[picks], capacitance[picks]))
        timings["scikit-rf"].append(loop * inductance.size / subset)
    print(f"{'':28s}{'min':>9s}{'median':>9s}")
    for name, values in timings.items():
        print(f"{name:28s}{min(values):8.2f}s{statistics.median(values):8.2f}s")
    sweep, floor, loop = (min(timings[k]) for k in ("sweep", "floor", "scikit-rf"))
    print(
        f"sweep / floor = {sweep / floor:.2f} (target <= 1.5); scikit-rf / sweep ="
        f" {loop / sweep:.0f} (target >= 50); scikit-rf timed on {subset}, scaled"
    )

    import pyarrow.parquet as pq

    written = pq.read_table(table).to_pydict()
    floor_counts = numpy_floor(frequency_hz, inductance, capacitance)
    known = np.asarray(written["count_known"])
    same = np.array_equal(np.asarray(written["encirclements"])[known], floor_counts[known])
    loop_counts = scikit_rf_loop(frequency_hz, inductance[picks], capacitance[picks])
    print(
        f"counts: the table's equal the floor's where the check's closure is founded"
        f" ({known.mean():.1%} of variants): {same}; scikit-rf's equal the floor's on its"
        f" {subset}: {np.array_equal(loop_counts, floor_counts[picks])}"
    )
    gamma_oneport = _oneport_load(load, frequency_hz, inductance[picks], capacitance[picks])
    gamma_floor = load_gamma(frequency_hz, inductance[picks], capacitance[picks])
    difference = np.abs(gamma_oneport - gamma_floor).max()
    print(f"largest |ΔΓ| of the load, oneport against the floor: {difference:.1e}")

    print("growth with variants (2,001 points), min of 2:")
    for share in (4, 2, 1):
        n = (side // share) * side
        shape = (side // share, side)
        t = min(timed(lambda: sweep_cli(device, load, table, shape)) for _ in range(2))  # noqa: B023
        print(f"  {n:7d} variants  {t:7.2f} s  {t / n * 1e6:7.1f} us/variant")
    print(f"growth with points ({side // 4 * side} variants), min of 2:")
    for points in (501, 1001, 2001, 4001):
        grid_device = folder / f"device{points}.s1p"
        write_device(grid_device, np.geomspace(10e6, 20e9, points))
        shape = (side // 4, side)
        t = min(timed(lambda: sweep_cli(grid_device, load, table, shape)) for _ in range(2))  # noqa: B023
        print(f"  {points:7d} points    {t:7.2f} s  {t / points * 1e3:7.3f} ms/point")
    print(f"load average at the end {os.getloadavg()[0]:.2f}")


def _oneport_load(load: Path, frequency_hz, inductance, capacitance) -> np.ndarray:
    from oneport.circuit import read_circuit

    return read_circuit(load).gamma(frequency_hz, Z0, L=inductance, C=capacitance)


if __name__ == "__main__":
    main()
