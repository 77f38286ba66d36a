"""Sweeps: analytic stability boundaries, Monte Carlo fractions, equality with single checks,
the Dask path, and the command line."""

from __future__ import annotations

import json

import numpy as np
import pytest

import oneport
from oneport.analysis.variants import STABLE, VERDICT_CODES
from oneport.circuit import read_circuit
from oneport.products.sweep import grid_plan, monte_carlo_plan, run_sweep
from oneport.products.sweep.sources import LoopSource, Side

from helpers import Z0, run_cli

RS, LS, RD, CJ = 4.0, 0.6e-9, 80.0, 2e-12  # invented tunnel-diode-like device
FREQUENCY_HZ = np.linspace(1e6, 8e9, 1601)
LOAD_NETLIST = """* series R-L load (invented)
.set R=20
.set Lt=3n
R1 1 2 R
L1 2 0 Lt
.oneport 1
"""


def _device_gamma() -> np.ndarray:
    s = 2j * np.pi * FREQUENCY_HZ
    z = RS + s * LS + 1.0 / (-1.0 / RD + s * CJ)
    return (z - Z0) / (z + Z0)


def _rhp_roots(resistance: float, inductance: float) -> int:
    """Right-half-plane roots of Zd + R + sL = 0 (truth: numpy.roots).

    (Rs + R + s(Ls + L))(1 − s·Rd·Cj) − Rd = 0 after multiplying by (−1/Rd + sCj)·(−Rd).
    """
    series = np.array([LS + inductance, RS + resistance])
    polynomial = np.polysub(np.polymul(series, [-RD * CJ, 1.0]), [RD])
    return int(np.sum(np.roots(polynomial).real > 0))


@pytest.fixture
def load_circuit(tmp_path):
    path = tmp_path / "load.cir"
    path.write_text(LOAD_NETLIST)
    return read_circuit(path)


def _source(circuit) -> LoopSource:
    return LoopSource(
        FREQUENCY_HZ,
        Z0,
        Side(gamma=_device_gamma()),
        Side(circuit=circuit, parameters=tuple(circuit.parameters)),
    )


def test_grid_matches_the_analytic_boundary(load_circuit):
    plan = grid_plan([("R", 1.0, 100.0, 12), ("Lt", 0.5e-9, 8e-9, 11)])
    result = run_sweep(plan, _source(load_circuit), FREQUENCY_HZ, Z0, chunk_size=37)
    # Truth: numpy.roots of the characteristic polynomial; the window is the textbook
    # L_T/(Rd·Cj) < R_T < Rd (from memory), which the roots confirm.
    for row in range(plan.variants):
        resistance, inductance = result.table["R"][row], result.table["Lt"][row]
        roots = _rhp_roots(resistance, inductance)
        r_total, l_total = RS + resistance, LS + inductance
        assert (roots == 0) == (l_total / (RD * CJ) < r_total < RD)
        if result.table["count_known"][row]:
            assert result.table["encirclements"][row] == roots
        assert (result.table["verdict_code"][row] == STABLE) == (roots == 0)


def test_monte_carlo_fraction_matches_the_analytic_probability(load_circuit):
    # One parameter: R uniform in 20 ohm ± 60 % with Lt = 3 nH; stable iff
    # (Lt + Ls)/(Rd·Cj) − Rs < R < Rd − Rs (bias-stability window, confirmed above by numpy.roots).
    low = (3e-9 + LS) / (RD * CJ) - RS
    high = RD - RS
    nominal, tolerance = 20.0, 0.6
    lower, upper = nominal * (1 - tolerance), nominal * (1 + tolerance)
    probability = (min(upper, high) - max(lower, low)) / (upper - lower)
    samples = 4000
    plan = monte_carlo_plan([("R", tolerance)], {"R": nominal, "Lt": 3e-9}, samples, seed=3)
    result = run_sweep(plan, _source(load_circuit), FREQUENCY_HZ, Z0)
    fraction = float(np.mean(result.table["verdict_code"] == STABLE))
    sigma = np.sqrt(probability * (1 - probability) / samples)  # binomial standard error
    assert abs(fraction - probability) < 4 * sigma


def test_normal_tolerances_are_truncated_and_repeatable():
    first = monte_carlo_plan([("C", 0.05)], {"C": 1e-12}, 5000, seed=11, distribution="normal")
    second = monte_carlo_plan([("C", 0.05)], {"C": 1e-12}, 5000, seed=11, distribution="normal")
    relative = first.values["C"] / 1e-12 - 1
    np.testing.assert_array_equal(first.values["C"], second.values["C"])
    assert np.all(np.abs(relative) <= 0.05)
    # sigma = tol/3, slightly reduced by the truncation at 3 sigma (0.986 sigma; normal tables).
    assert np.std(relative) == pytest.approx(0.05 / 3 * 0.986, rel=0.05)


def test_a_random_subset_equals_single_checks(load_circuit):
    plan = monte_carlo_plan([("R", 0.9), ("Lt", 0.8)], {"R": 30.0, "Lt": 3e-9}, 300, seed=5)
    result = run_sweep(plan, _source(load_circuit), FREQUENCY_HZ, Z0, chunk_size=64)
    device = oneport.OnePort(FREQUENCY_HZ, _device_gamma(), Z0, "device")
    rng = np.random.default_rng(0)
    for row in rng.choice(plan.variants, 25, replace=False):
        gamma = load_circuit.gamma(
            FREQUENCY_HZ, Z0, R=result.table["R"][row], Lt=result.table["Lt"][row]
        )
        single = oneport.check(device, oneport.OnePort(FREQUENCY_HZ, gamma, Z0, "load"))
        assert VERDICT_CODES[result.table["verdict_code"][row]] == single.verdict
        if single.encirclements is not None:
            assert result.table["encirclements"][row] == single.encirclements
        assert result.table["min_distance"][row] == pytest.approx(single.margins.modulus_margin)


def test_interrupted_sweep_keeps_the_finished_chunks(load_circuit):
    source = _source(load_circuit)
    calls = []

    def interrupting(values):
        calls.append(1)
        if len(calls) == 3:
            raise KeyboardInterrupt
        return source(values)

    plan = grid_plan([("R", 1.0, 100.0, 50)])
    result = run_sweep(plan, interrupting, FREQUENCY_HZ, Z0, chunk_size=10, threads=1)
    assert result.interrupted
    assert result.completed == 20
    assert result.table["R"].size == 20
    np.testing.assert_array_equal(result.table["R"], plan.values["R"][:20])


def test_threads_give_the_sequential_result(load_circuit):
    plan = monte_carlo_plan([("R", 0.9), ("Lt", 0.5)], {"R": 30.0, "Lt": 3e-9}, 200, seed=4)
    sequential = run_sweep(plan, _source(load_circuit), FREQUENCY_HZ, Z0, chunk_size=16, threads=1)
    threaded = run_sweep(plan, _source(load_circuit), FREQUENCY_HZ, Z0, chunk_size=16, threads=3)
    for name, column in sequential.table.items():
        np.testing.assert_array_equal(threaded.table[name], column)


def test_dask_cluster_gives_the_local_result(load_circuit):
    distributed = pytest.importorskip("distributed")
    plan = monte_carlo_plan([("R", 0.9)], {"R": 30.0, "Lt": 3e-9}, 120, seed=9)
    local = run_sweep(plan, _source(load_circuit), FREQUENCY_HZ, Z0, chunk_size=25)
    with distributed.LocalCluster(
        host="127.0.0.1",
        n_workers=2,
        threads_per_worker=1,
        processes=True,
        dashboard_address=None,
    ) as cluster:
        remote = run_sweep(
            plan,
            _source(load_circuit),
            FREQUENCY_HZ,
            Z0,
            chunk_size=25,
            scheduler=cluster.scheduler_address,
        )
    assert remote.completed == local.completed
    for name, column in local.table.items():
        np.testing.assert_array_equal(remote.table[name], column)


def test_command_line_writes_table_and_summary(tmp_path):
    from oneport.reading.touchstone import read_one_port

    pyarrow_parquet = pytest.importorskip("pyarrow.parquet")
    device = tmp_path / "device.s1p"
    gamma = _device_gamma()
    lines = ["# Hz S RI R 50"] + [
        f"{f:.12g} {g.real:.12g} {g.imag:.12g}"
        for f, g in zip(FREQUENCY_HZ.tolist(), gamma.tolist(), strict=True)
    ]
    device.write_text("\n".join(lines) + "\n")
    assert read_one_port(device).points == FREQUENCY_HZ.size
    load = tmp_path / "load.cir"
    load.write_text(LOAD_NETLIST)
    table = tmp_path / "table.parquet"
    code, out, _ = run_cli(
        "sweep",
        device,
        "--load",
        load,
        "--vary",
        "R=1:100:9",
        "--vary",
        "Lt=1n:8n:5",
        "-o",
        table,
        "--json",
    )
    summary = json.loads(out)
    assert code == 3  # some variants unstable (CONVENTIONS exit code 3)
    assert summary["schema"] == "oneport.sweep/2"
    assert summary["variants"] == 45 and summary["completed"] == 45
    assert 0 < summary["stable_fraction"] < 1
    assert pyarrow_parquet.read_table(table).num_rows == 45
    assert summary["cautions"]


def test_command_line_refuses_unknown_parameters(tmp_path):
    load = tmp_path / "load.cir"
    load.write_text(LOAD_NETLIST)
    code, _, err = run_cli(
        "sweep", "touchstone_examples/stable/device.s1p", "--load", load, "--vary", "Q=1:2:3"
    )
    assert code == 2
    assert len(err.strip().splitlines()) == 1
    assert "Q" in err and "Traceback" not in err
