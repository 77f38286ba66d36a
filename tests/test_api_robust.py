"""The robustness rules hold from Python too: the product functions meet the command line's
bounds with its own line, check their files before any work and write them whole, and a sweep
stopped early keeps its finished variants (issue 13's reproducers, called as functions).

The option rules and the product readers are one set of functions: a test below checks that
every rule an option of a product uses *is* the reader in ``oneport.products.options`` (or the
product's own parser), so no bound can be written twice.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

import oneport
from oneport.commands import options as command_options
from oneport.errors import InputError
from oneport.products import options as product_options

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = EXAMPLES / "stable" / "device.s1p"
LOAD = EXAMPLES / "stable" / "load.s1p"
BIAS_NETLIST = EXAMPLES / "circuits" / "bias_tee.cir"


def _same_line(call, *argv: object) -> str:
    """The function's InputError is the command's one stderr line (without ``oneport: ``)."""
    with pytest.raises(InputError) as caught:
        call()
    code, out, err = run_cli(*map(str, argv))
    assert (code, out) == (2, ""), (code, out, err)
    assert err == f"oneport: {caught.value}\n"
    return str(caught.value)


# --- one rule, one place ------------------------------------------------------------------------


def test_the_option_rules_are_the_product_readers():
    for name in (
        "frequency", "positive_frequency", "impedance", "dc_resistance", "termination", "delay",
        "interval", "return_loss", "gain", "injection_below", "points", "samples", "chunk_size",
        "threads", "workers", "seed", "model_order", "scheduler", "parameter",
    ):  # fmt: skip
        assert getattr(command_options, name) is getattr(product_options, name), name
    for name in ("MAX_FREQUENCY_HZ", "MAX_POINTS", "MAX_VARIANTS", "MAX_SEED",
                 "IMPEDANCE_RANGE_OHM", "RETURN_LOSS_RANGE_DB", "GAIN_RANGE_DB"):  # fmt: skip
        assert getattr(command_options, name) is getattr(product_options, name), name


def test_the_sweep_plan_takes_the_readers_bounds():
    from oneport.products.sweep import plan

    assert plan.MAX_VARIANTS is product_options.MAX_VARIANTS
    with pytest.raises(InputError, match="--samples: 100000001 is outside"):
        plan.monte_carlo_plan([("R", 0.1)], {"R": 1.0}, 100_000_001, 1)
    with pytest.raises(InputError, match="--seed: -1 is outside"):
        plan.monte_carlo_plan([("R", 0.1)], {"R": 1.0}, 10, -1)


# --- issue 13's reproducers, called from Python -------------------------------------------------


def test_a_negative_measurement_impedance_is_refused_with_the_command_s_line():
    message = _same_line(
        lambda: oneport.check(DEVICE, LOAD, measurement_impedance_ohm="-5ohm"),
        "check", DEVICE, "--load", LOAD, "--measurement-impedance", "-5ohm",
    )  # fmt: skip
    assert message.startswith("--measurement-impedance: -5 ohm is not accepted")


def test_ten_billion_samples_are_refused_before_any_work(monkeypatch):
    import oneport.products.sweep.sources

    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("work began before the samples were checked")

    monkeypatch.setattr(oneport.products.sweep.sources, "prepare_sweep", forbidden)
    message = _same_line(
        lambda: oneport.sweep(DEVICE, BIAS_NETLIST, tolerance="RSUPPLY=5%", samples=10**10),
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--tolerance", "RSUPPLY=5%", "--samples",
        "10000000000",
    )  # fmt: skip
    assert "100,000,000" in message


@pytest.mark.parametrize(
    ("keywords", "naming"),
    [
        ({"seed": -1}, "--seed"),
        ({"seed": 2**64}, "--seed"),
        ({"threads": 0}, "--threads"),
        ({"workers": 65}, "--workers"),
        ({"chunk_size": 0}, "--chunk-size"),
        ({"samples": 2.5}, "--samples"),
        ({"samples": True}, "--samples"),
        ({"scheduler": "localhost"}, "--scheduler"),
        ({"frequency_hz": [1e6, 1e308]}, "frequency_hz"),
    ],
)
def test_sweep_arguments_meet_the_option_limits(keywords, naming):
    with pytest.raises(InputError, match=naming):
        oneport.sweep(DEVICE, BIAS_NETLIST, tolerance="RSUPPLY=5%", **keywords)


def test_other_products_meet_the_option_limits():
    with pytest.raises(InputError, match="--load-return-loss: 150 dB is not accepted"):
        oneport.check(DEVICE, load_return_loss_db="150dB")
    with pytest.raises(InputError, match="--gain-threshold: inf is not a finite level"):
        oneport.amplifier(DEVICE, gain_threshold_db=float("inf"))
    with pytest.raises(InputError, match="--max-order: 100000 is outside"):
        oneport.poles(DEVICE, LOAD, max_order=100_000)
    with pytest.raises(InputError, match="--device-delay: 1 s of line"):
        oneport.check(DEVICE, LOAD, device_delay_s=1)
    grid = oneport.frequency_grid("1MHz", "1GHz", 3)
    with pytest.raises(InputError, match="--stop: 1e\\+308 Hz is outside"):
        oneport.frequency_grid("1MHz", 1e308, 3)
    assert grid.size == 3


# --- files written from Python ------------------------------------------------------------------


@pytest.fixture
def copies(tmp_path: Path) -> dict[str, Path]:
    made = {}
    for name, source in (("device", DEVICE), ("netlist", BIAS_NETLIST)):
        made[name] = tmp_path / source.name
        made[name].write_bytes(source.read_bytes())
    return made


@pytest.mark.parametrize("which", ["device", "netlist"])
def test_a_sweep_table_onto_an_input_is_refused_before_any_work(copies, tmp_path, which,
                                                               monkeypatch):  # fmt: skip
    import oneport.products.sweep.sources

    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("work began before the target was checked")

    monkeypatch.setattr(oneport.products.sweep.sources, "prepare_sweep", forbidden)
    target = tmp_path / "table.parquet"
    os.link(copies[which], target)  # the same file under a table's name
    before = copies[which].read_bytes()
    with pytest.raises(InputError, match="that is an input of this run"):
        oneport.sweep(copies["device"], copies["netlist"], vary="RSUPPLY=10:20:3", output=target)
    assert copies[which].read_bytes() == before


@pytest.mark.parametrize(
    ("target", "naming"),
    [("/proc/table.parquet", "/proc holds"), ("{tmp}/missing/t.parquet", "no folder"),
     ("{tmp}/t.json", ".parquet or .csv")],
)  # fmt: skip
def test_a_sweep_table_target_is_checked_first(copies, tmp_path, target, naming):
    with pytest.raises(InputError, match=naming):
        oneport.sweep(copies["device"], copies["netlist"], vary="RSUPPLY=10:20:3",
                      output=target.format(tmp=tmp_path))  # fmt: skip


def test_a_long_csv_table_is_refused_before_the_run(copies, tmp_path, monkeypatch):
    from oneport.products.sweep import runner

    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("the run began")

    monkeypatch.setattr(runner, "run_sweep", forbidden)
    with pytest.raises(InputError, match="too many rows for CSV"):
        oneport.sweep(copies["device"], copies["netlist"], tolerance="RSUPPLY=5%",
                      samples=300_000, output=tmp_path / "big.csv")  # fmt: skip


def test_a_sweep_table_from_python_is_written_through_a_temporary_file(copies, tmp_path,
                                                                      monkeypatch):  # fmt: skip
    from oneport.rendering import files

    written = []
    original = files.write_through

    def spying(target, writer):
        written.append(Path(target))
        return original(target, writer)

    monkeypatch.setattr(files, "write_through", spying)
    monkeypatch.setattr("oneport.rendering.sweep_table.write_through", spying)
    target = tmp_path / "table.csv"
    result = oneport.sweep(copies["device"], copies["netlist"], vary="RSUPPLY=10:20:3",
                           output=target)  # fmt: skip
    assert written == [target] and result.table_path == str(target)
    assert result.complete and result.error is None
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


def test_a_sweep_stopped_by_a_refused_variant_returns_its_finished_rows(copies, tmp_path):
    target = tmp_path / "table.csv"
    # LCHOKE beyond the netlist's 1000 H bound (docs/netlist.md) from the third variant on.
    result = oneport.sweep(copies["device"], copies["netlist"], vary="LCHOKE=100:2500:5",
                           chunk_size=1, output=target)  # fmt: skip
    assert not result.complete and not result.interrupted
    assert isinstance(result.error, InputError) and "Lch" in str(result.error)
    data = result.to_dict()
    assert (data["complete"], data["completed"], data["variants"]) == (False, 2, 5)
    assert data["error"] and data["verdict"] != "stable"
    assert any("Stopped by an error after 2 of 5 variants" in r for r in data["reasons"])
    rows = target.read_text().splitlines()[1:]
    assert len(rows) == 2 and all(row.endswith(",False") for row in rows)


def test_export_onto_its_netlist_is_refused_and_the_netlist_kept(copies, tmp_path):
    target = tmp_path / "load.s1p"
    os.symlink(copies["netlist"], target)
    before = copies["netlist"].read_bytes()
    with pytest.raises(InputError, match="that is an input of this run"):
        oneport.export(copies["netlist"], target, oneport.frequency_grid("1MHz", "1GHz", 11))
    assert copies["netlist"].read_bytes() == before


def test_watch_reports_are_refused_in_a_system_folder(tmp_path):
    with pytest.raises(InputError, match="--report-dir /proc/reports: /proc holds"):
        oneport.watch(EXAMPLES / "stable", LOAD, report_dir="/proc/reports")
