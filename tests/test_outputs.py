"""Files the tool writes (CONVENTIONS.md): never onto an input, never two outputs on one path,
targets checked before any work, written whole or not at all.

The reproducers of issue 13: ``--report dev.s1p`` replaced the device file with HTML,
``--report net.cir`` destroyed the load netlist, ``--plot`` and ``--report`` on one path left a
``.png`` holding HTML, and a missing folder was found only after 18.9 s of computing.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest

from oneport.errors import InputError
from oneport.rendering import files

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = EXAMPLES / "stable" / "device.s1p"
LOAD = EXAMPLES / "stable" / "load.s1p"
BIAS_NETLIST = EXAMPLES / "circuits" / "bias_tee.cir"
TRANSISTOR = EXAMPLES / "circuits" / "transistor.s2p"
MANIFEST = EXAMPLES / "oscillator" / "tunnel_diode.toml"
OSCILLATOR_LOAD = EXAMPLES / "oscillator" / "load.s1p"


def refused(*argv: object, naming: str) -> str:
    code, out, err = run_cli(*map(str, argv))
    assert (code, out) == (2, ""), (code, out, err)
    assert len(err.splitlines()) == 1 and naming in err, err
    return err


@pytest.fixture
def copies(tmp_path: Path) -> dict[str, Path]:
    """The stable example pair and the bias-tee netlist, copied into a fresh folder."""
    made = {}
    for name, source in (("device", DEVICE), ("load", LOAD), ("netlist", BIAS_NETLIST)):
        made[name] = tmp_path / source.name
        made[name].write_bytes(source.read_bytes())
    return made


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in folder.rglob("*") if p.is_file()}


# --- never onto an input -----------------------------------------------------------------------


@pytest.mark.parametrize("link", ["symlink", "hardlink"])
@pytest.mark.parametrize("which", ["device", "load", "netlist"])
def test_a_report_onto_an_input_is_refused_and_the_input_kept(copies, tmp_path, link, which):
    target = tmp_path / "report.html"
    (os.symlink if link == "symlink" else os.link)(copies[which], target)
    before = _snapshot(tmp_path)
    load = copies["netlist"] if which == "netlist" else copies["load"]
    err = refused("check", copies["device"], "--load", load, "--report", target, naming="input")
    assert "--report" in err
    assert _snapshot(tmp_path) == before


def test_plain_input_names_are_refused_by_their_suffix_before_anything(copies):
    # --report dev.s1p and --report net.cir: refused as reports (.html) before any reading
    refused("check", copies["device"], "--load", copies["load"], "--report", copies["device"],
            naming="--report")  # fmt: skip
    refused("check", copies["device"], "--load", copies["netlist"], "--report",
            copies["netlist"], naming="--report")  # fmt: skip
    assert copies["device"].read_bytes() == DEVICE.read_bytes()
    assert copies["netlist"].read_bytes() == BIAS_NETLIST.read_bytes()


def test_a_netlist_s_block_file_is_an_input_too(tmp_path):
    block = tmp_path / "block.s2p"
    block.write_bytes(TRANSISTOR.read_bytes())
    netlist = tmp_path / "amp.cir"
    netlist.write_text("N1 g d s file=block.s2p\nLg g 0 1.2n\n.twoport s d\n")
    target = tmp_path / "chart.png"
    os.symlink(block, target)
    refused("terminations", netlist, "--at", "5GHz", "--start", "1GHz", "--stop", "10GHz",
            "--plot", target, naming="block.s2p")  # fmt: skip
    assert block.read_bytes() == TRANSISTOR.read_bytes()


def test_a_manifest_s_data_are_inputs_too(tmp_path):
    table = tmp_path / "iv.csv"
    table.write_text("voltage_v,current_a\n0,0\n0.1,0.001\n0.2,0.0005\n0.3,0.002\n0.4,0.004\n")
    manifest = tmp_path / "iv.toml"
    manifest.write_text('kind = "iv-curve"\nbias_voltage_v = 0.15\n[iv]\ntable = "iv.csv"\n')
    target = tmp_path / "plot.png"
    os.link(table, target)
    refused("oscillator", manifest, "--load", OSCILLATOR_LOAD, "--plot", target, naming="iv.csv")


def test_two_outputs_of_one_run_on_one_path_are_refused(copies, tmp_path):
    plot = tmp_path / "a.png"
    report = tmp_path / "a.html"
    os.symlink(plot, report)  # one file by two names (the plot does not exist yet)
    err = refused(
        "check", copies["device"], "--load", copies["load"], "--plot", plot, "--report", report,
        naming="writes there too",
    )  # fmt: skip
    assert "--plot" in err and not plot.exists()


# --- targets checked before any work -----------------------------------------------------------


def _no_work(monkeypatch: pytest.MonkeyPatch) -> None:
    """Make every product's work fail loudly: a refusal must come before it."""

    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("work began before the outputs were checked")

    import oneport.products.amplifier
    import oneport.products.check
    import oneport.products.export
    import oneport.products.oscillator
    import oneport.products.stabilise
    import oneport.products.sweep.sources

    monkeypatch.setattr(oneport.products.check, "check", forbidden)
    monkeypatch.setattr(oneport.products.amplifier, "amplifier", forbidden)
    monkeypatch.setattr(oneport.products.export, "export_circuit", forbidden)
    monkeypatch.setattr(oneport.products.oscillator, "oscillator", forbidden)
    monkeypatch.setattr(oneport.products.stabilise, "stabilise", forbidden)
    monkeypatch.setattr(oneport.products.sweep.sources, "prepare_sweep", forbidden)


COMMANDS_WITH_OUTPUTS = {
    "check --plot": (["check", DEVICE, "--load", LOAD, "--plot"], ".png"),
    "check --report": (["check", DEVICE, "--load", LOAD, "--report"], ".html"),
    "sweep -o": (["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:3", "-o"],
                 ".parquet"),
    "sweep --plot": (["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:3",
                      "--plot"], ".svg"),
    "export -o": (["export", BIAS_NETLIST, "--start", "1MHz", "--stop", "1GHz", "-o"], ".s1p"),
    "oscillator --plot": (["oscillator", MANIFEST, "--load", OSCILLATOR_LOAD, "--plot"], ".png"),
    "amplifier --plot": (["amplifier", DEVICE, "--plot"], ".png"),
    "terminations --plot": (["terminations", TRANSISTOR, "--at", "8GHz", "--plot"], ".png"),
    "stabilise --plot": (["stabilise", DEVICE, "--load", LOAD, "--plot"], ".png"),
}  # fmt: skip


@pytest.mark.parametrize("case", list(COMMANDS_WITH_OUTPUTS))
@pytest.mark.parametrize(
    ("where", "naming"),
    [
        ("{tmp}/missing/out", "no folder"),
        ("/proc/out", "/proc"),
        ("/sys/out", "/sys"),
        ("/dev/out", "/dev"),
        ("{tmp}/folder{suffix}/", "folder"),
        ("{tmp}/fifo", "named pipe"),
    ],
)
def test_bad_targets_are_refused_before_any_work(case, where, naming, tmp_path, monkeypatch):
    argv, suffix = COMMANDS_WITH_OUTPUTS[case]
    (tmp_path / f"folder{suffix}").mkdir()
    os.mkfifo(tmp_path / f"fifo{suffix}")
    target = where.format(tmp=tmp_path, suffix=suffix)
    target = target if target.endswith("/") else target + suffix
    _no_work(monkeypatch)
    before = _snapshot(tmp_path)
    refused(*argv, target, naming=naming)
    assert _snapshot(tmp_path) == before


def test_a_special_file_as_target_is_refused(monkeypatch, tmp_path):
    _no_work(monkeypatch)
    refused("check", DEVICE, "--load", LOAD, "--plot", "/dev/null.png", naming="/dev")
    os.mkfifo(tmp_path / "pipe.html")
    refused("check", DEVICE, "--load", LOAD, "--report", tmp_path / "pipe.html", naming="pipe")


def test_a_read_only_folder_is_refused_before_any_work(tmp_path, monkeypatch):
    if os.geteuid() == 0:
        pytest.skip("root writes into read-only folders")
    folder = tmp_path / "locked"
    folder.mkdir(mode=0o555)
    _no_work(monkeypatch)
    refused("check", DEVICE, "--load", LOAD, "--report", folder / "r.html", naming="cannot be")


def test_watch_report_folder_is_checked_before_watching(tmp_path):
    afile = tmp_path / "not-a-folder"
    afile.write_text("x")
    refused("watch", tmp_path, "--load", LOAD, "--report-dir", afile, naming="not a folder")
    refused("watch", tmp_path, "--load", LOAD, "--report-dir", "/proc/reports", naming="/proc")
    refused("watch", tmp_path, "--load", LOAD, "--report-dir=", naming="--report-dir")


def test_check_target_refuses_names_the_temporary_file_could_not_have(tmp_path):
    with pytest.raises(InputError, match="too long"):
        files.check_target(tmp_path / ("x" * 250 + ".png"), "--plot")
    files.check_target(tmp_path / ("x" * 200 + ".png"), "--plot")


# --- written whole or not at all -------------------------------------------------------------


def test_a_failed_write_leaves_the_earlier_file_and_no_temporary(tmp_path):
    target = tmp_path / "table.csv"
    target.write_text("earlier\n")

    def half_then_fail(temporary: Path) -> None:
        temporary.write_text("half a ta")
        raise OSError(28, "No space left on device")

    with pytest.raises(InputError, match="No space left on device"):
        files.write_through(target, half_then_fail)
    assert target.read_text() == "earlier\n"
    assert [p.name for p in tmp_path.iterdir()] == ["table.csv"]


def test_an_interrupted_write_leaves_the_earlier_file(tmp_path):
    target = tmp_path / "plot.png"
    target.write_bytes(b"earlier")

    def interrupted(temporary: Path) -> None:
        temporary.write_bytes(b"half")
        raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        files.write_through(target, interrupted)
    assert target.read_bytes() == b"earlier"
    assert [p.name for p in tmp_path.iterdir()] == ["plot.png"]


def test_a_failing_parquet_writer_leaves_the_earlier_table(tmp_path, monkeypatch):
    pyarrow_parquet = pytest.importorskip("pyarrow.parquet")
    from oneport.rendering.sweep_table import write_table

    target = tmp_path / "table.parquet"
    table = {"R": np.array([1.0, 2.0]), "verdict_code": np.array([0, 1])}
    write_table(table, target)
    earlier = target.read_bytes()

    def failing(arrow: object, where: object) -> None:
        Path(str(where)).write_bytes(b"PAR1 half")
        raise OSError(5, "Input/output error")

    monkeypatch.setattr(pyarrow_parquet, "write_table", failing)
    with pytest.raises(InputError, match="Input/output error"):
        write_table({"R": np.array([3.0]), "verdict_code": np.array([0])}, target)
    assert target.read_bytes() == earlier
    assert [p.name for p in tmp_path.iterdir()] == ["table.parquet"]


def test_export_writes_whole_and_refuses_a_wrong_suffix_before_evaluating(tmp_path, monkeypatch):
    target = tmp_path / "bias.s2p"  # the bias tee is a one-port
    import oneport.circuit.model

    def forbidden(*args: object, **kwargs: object) -> None:
        raise AssertionError("evaluated before the suffix was checked")

    monkeypatch.setattr(oneport.circuit.model.Circuit, "s_parameters", forbidden)
    refused("export", BIAS_NETLIST, "--start", "1MHz", "--stop", "1GHz", "-o", target,
            naming=".s1p")  # fmt: skip
    assert list(tmp_path.iterdir()) == []


def test_a_run_writes_nothing_but_its_named_outputs(tmp_path):
    plot, report = tmp_path / "quick.png", tmp_path / "check.html"
    code, _, err = run_cli(
        "check", EXAMPLES / "oscillates" / "device.s1p", "--load",
        EXAMPLES / "oscillates" / "load.s1p", "--plot", plot, "--report", report,
    )  # fmt: skip
    assert code == 3 and err == ""
    assert sorted(p.name for p in tmp_path.iterdir()) == ["check.html", "quick.png"]
    assert plot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert report.read_text().lstrip().lower().startswith("<!doctype html")
