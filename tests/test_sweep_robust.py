"""Sweeps under any input: bounded memory, a seeded stream independent of chunking, and the
finished chunks kept, written and marked on any failure (issue 13).

Reproducers: a Monte Carlo run drew every sample up front (531 MB at 2·10⁷ samples before the
first chunk), and a failure other than Ctrl-C lost the finished chunks.
"""

from __future__ import annotations

import json
import tracemalloc
from pathlib import Path

import numpy as np
import pytest

from oneport.errors import InputError
from oneport.products.sweep import grid_plan, monte_carlo_plan, run_sweep
from oneport.products.sweep.plan import MONTE_CARLO_BLOCK
from oneport.products.sweep.runner import chunk_bounds

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = EXAMPLES / "stable" / "device.s1p"
BIAS_NETLIST = EXAMPLES / "circuits" / "bias_tee.cir"
NOMINAL = {"R": 30.0, "L": 3e-9, "C": 1e-12}


@pytest.mark.parametrize("distribution", ["uniform", "normal"])
def test_monte_carlo_values_do_not_depend_on_the_chunking(distribution):
    plan = monte_carlo_plan([("R", 0.2), ("C", 0.05)], NOMINAL, 3 * MONTE_CARLO_BLOCK + 17, 7,
                            distribution)  # fmt: skip
    whole = plan.chunk(0, plan.variants)
    for size in (1, 5, 333, MONTE_CARLO_BLOCK, MONTE_CARLO_BLOCK + 1, plan.variants):
        parts = [plan.chunk(start, start + size) for start in range(0, plan.variants, size)]
        for name in ("R", "C"):
            np.testing.assert_array_equal(np.concatenate([p[name] for p in parts]), whole[name])


def test_a_variant_is_the_same_whatever_the_number_of_samples():
    small = monte_carlo_plan([("R", 0.2)], NOMINAL, 100, 3)
    large = monte_carlo_plan([("R", 0.2)], NOMINAL, 10 * MONTE_CARLO_BLOCK, 3)
    np.testing.assert_array_equal(small.values["R"], large.chunk(0, 100)["R"])
    other_seed = monte_carlo_plan([("R", 0.2)], NOMINAL, 100, 4)
    assert not np.array_equal(small.values["R"], other_seed.values["R"])


def test_the_stream_is_numpy_s_spawned_seed_sequence():
    # The documented stream (docs/sweep.md): block b drawn by the b-th child of SeedSequence(seed),
    # one parameter after another — rebuilt here with numpy alone.
    plan = monte_carlo_plan([("R", 0.2), ("L", 0.1)], NOMINAL, 2 * MONTE_CARLO_BLOCK, 11)
    child = np.random.SeedSequence(11).spawn(2)[1]
    rng = np.random.Generator(np.random.PCG64(child))
    r = 30.0 * (1 + rng.uniform(-0.2, 0.2, MONTE_CARLO_BLOCK))
    inductance = 3e-9 * (1 + rng.uniform(-0.1, 0.1, MONTE_CARLO_BLOCK))
    chunk = plan.chunk(MONTE_CARLO_BLOCK, 2 * MONTE_CARLO_BLOCK)
    np.testing.assert_array_equal(chunk["R"], r)
    np.testing.assert_array_equal(chunk["L"], inductance)


@pytest.mark.parametrize("samples", [100_000, 20_000_000])
def test_memory_up_to_the_first_chunk_does_not_grow_with_the_samples(samples):
    tracemalloc.start()
    try:
        plan = monte_carlo_plan([("R", 0.2), ("L", 0.1), ("C", 0.05)], NOMINAL, samples, 1)
        bounds = chunk_bounds(plan.variants, 2001)
        plan.chunk(*bounds[0])
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    # Three parameters of one 4096-variant block and one chunk: well under a megabyte, the
    # same at 10^5 and 2·10^7 samples (drawing up front took 531 MB at 2·10^7).
    assert peak < 2_000_000, peak


def test_chunk_bounds_are_made_on_demand():
    bounds = chunk_bounds(100_000_000, 2001, chunk_size=1)
    assert len(bounds) == 100_000_000 and bounds[-1] == (99_999_999, 100_000_000)
    assert bounds[3] == (3, 4) and list(chunk_bounds(10, 1, 4)) == [(0, 4), (4, 8), (8, 10)]


def test_grid_values_are_made_per_chunk_in_meshgrid_order():
    plan = grid_plan([("R", 1.0, 3.0, 3), ("L", 1e-9, 4e-9, 4)])
    mesh_r, mesh_l = np.meshgrid([1.0, 2.0, 3.0], np.linspace(1e-9, 4e-9, 4), indexing="ij")
    np.testing.assert_array_equal(plan.values["R"], mesh_r.reshape(-1))
    np.testing.assert_array_equal(plan.chunk(5, 9)["L"], mesh_l.reshape(-1)[5:9])


def _source(values):
    """Reflections of a passive load against a mild device: every variant stable."""
    rows = next(iter(values.values())).size
    frequency = np.linspace(1e8, 1e9, 32)
    return np.full((rows, 32), 0.1 + 0j), np.full((rows, 32), 0.2 + 0j) + 0 * frequency


@pytest.mark.parametrize("failure", [InputError("a refused variant"), RuntimeError("a bug")])
def test_any_failure_keeps_the_finished_chunks(failure):
    calls = []

    def failing(values):
        calls.append(1)
        if len(calls) == 4:
            raise failure
        return _source(values)

    plan = grid_plan([("R", 1.0, 100.0, 50)])
    result = run_sweep(plan, failing, np.linspace(1e8, 1e9, 32), 50.0, chunk_size=10)
    assert result.error is failure and not result.interrupted and not result.complete
    assert result.completed == 30
    np.testing.assert_array_equal(result.table["R"], plan.values["R"][:30])


def test_a_variant_refused_mid_run_keeps_the_table_marks_it_and_exits_2(tmp_path):
    parquet = pytest.importorskip("pyarrow.parquet")
    table = tmp_path / "table.parquet"
    # LCHOKE (element Lch) beyond the netlist's 1000 H bound (docs/netlist.md) from the third
    # variant on: 100, 700, 1300, 1900, 2500 H.
    code, out, err = run_cli(
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "LCHOKE=100:2500:5", "--chunk-size",
        "1", "-o", table, "--json",
    )  # fmt: skip
    assert code == 2 and len(err.splitlines()) == 1 and "Lch" in err, err
    summary = json.loads(out)
    assert summary["complete"] is False and summary["completed"] == 2
    assert summary["error"] and summary["verdict"] != "stable" and summary["table"]
    written = parquet.read_table(table)
    assert written.num_rows == 2 and written.column("complete").to_pylist() == [False] * 2
    metadata = written.schema.metadata
    assert metadata[b"oneport:variants_planned"] == b"5"
    assert metadata[b"oneport:variants_written"] == b"2"


def test_the_text_summary_says_the_run_stopped(tmp_path):
    table = tmp_path / "table.csv"
    code, out, err = run_cli(
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "LCHOKE=100:2500:5", "--chunk-size",
        "2", "-o", table,
    )  # fmt: skip
    assert code == 2 and len(err.splitlines()) == 1
    assert "stopped by an error after 2 of 5 variants" in out and "partial" in out
    header, *rows = table.read_text().splitlines()
    assert header.split(",")[-1] == "complete" and len(rows) == 2
    assert all(row.endswith(",False") for row in rows)


def test_an_internal_error_mid_run_writes_the_table_then_surfaces(tmp_path, monkeypatch):
    from oneport.products.sweep import runner

    original = runner.run_chunk
    calls = []

    def failing(*args, **kwargs):
        calls.append(1)
        if len(calls) == 3:
            raise RuntimeError("a bug")
        return original(*args, **kwargs)

    monkeypatch.setattr(runner, "run_chunk", failing)
    table = tmp_path / "table.csv"
    with pytest.raises(RuntimeError, match="a bug"):
        run_cli(
            "sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=10:20:6", "--chunk-size",
            "2", "-o", table,
        )  # fmt: skip
    assert len(table.read_text().splitlines()) == 1 + 4


def test_a_complete_table_is_marked_complete(tmp_path):
    table = tmp_path / "table.csv"
    code, _, err = run_cli(
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=10:20:3", "-o", table
    )
    assert code in (0, 3, 4) and err == ""
    assert all(row.endswith(",True") for row in table.read_text().splitlines()[1:])


def test_a_csv_table_over_its_limit_is_refused_before_the_run(tmp_path):
    code, out, err = run_cli(
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--tolerance", "RSUPPLY=5%", "--samples",
        "300000", "-o", tmp_path / "big.csv",
    )  # fmt: skip
    assert (code, out) == (2, "") and "parquet" in err and len(err.splitlines()) == 1


@pytest.mark.parametrize("chunk", ["1", "7", "1000"])
def test_the_command_s_monte_carlo_table_does_not_depend_on_the_chunk_size(chunk, tmp_path):
    argv = ["sweep", DEVICE, "--load", BIAS_NETLIST, "--tolerance", "RSUPPLY=20%",
            "--tolerance", "LCHOKE=10%", "--samples", "40", "--seed", "5"]  # fmt: skip
    run_cli(*argv, "-o", tmp_path / "reference.csv")
    run_cli(*argv, "--chunk-size", chunk, "-o", tmp_path / "chunked.csv")
    assert (tmp_path / "reference.csv").read_text() == (tmp_path / "chunked.csv").read_text()
