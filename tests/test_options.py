"""Every option's rule, once (``oneport/commands/options.py``), and the same in every command.

Each reproducer of issue 13 about options is a case here: values that gave a traceback, NaN or
infinity in the JSON, or tried to allocate tens of gigabytes are refused before any work with
exit code 2 and one line naming the option, the value and what is accepted (CONVENTIONS.md).
"""

from __future__ import annotations

import argparse
import json
import math
from pathlib import Path

import numpy as np
import pytest

from oneport.cli import build_parser
from oneport.commands import common, options

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = str(EXAMPLES / "stable" / "device.s1p")
LOAD = str(EXAMPLES / "stable" / "load.s1p")
DIODE_NETLIST = str(EXAMPLES / "circuits" / "tunnel_diode.cir")
BIAS_NETLIST = str(EXAMPLES / "circuits" / "bias_tee.cir")
TRANSISTOR = str(EXAMPLES / "circuits" / "transistor.s2p")
MANIFEST = str(EXAMPLES / "oscillator" / "tunnel_diode.toml")
OSCILLATOR_LOAD = str(EXAMPLES / "oscillator" / "load.s1p")


def refused(*argv: str, naming: str) -> str:
    """Run the command line; it must refuse with exit code 2 and one line naming ``naming``."""
    code, out, err = run_cli(*argv)
    assert (code, out) == (2, ""), (code, out, err)
    assert len(err.splitlines()) == 1 and err.endswith("\n"), err
    assert "Traceback" not in err and naming in err, err
    return err


# --- the reproducers of issue 13 -------------------------------------------------------------


@pytest.mark.parametrize(
    ("argv", "naming"),
    [
        # NaN in the JSON from a grid reaching 1e308 Hz
        (["check", DIODE_NETLIST, "--load", BIAS_NETLIST, "--start", "1MHz", "--stop", "1e308",
          "--json"], "--stop"),
        # a traceback (int overflow) from a count of 10^20 points
        (["check", DIODE_NETLIST, "--load", BIAS_NETLIST, "--start", "1MHz", "--stop", "6GHz",
          "--points", "99999999999999999999"], "--points"),
        (["export", BIAS_NETLIST, "--start", "1MHz", "--stop", "6GHz", "--points",
          "99999999999999999999", "-o", "never.s1p"], "--points"),
        # infinity in the JSON
        (["amplifier", DEVICE, "--gain-threshold", "1e999", "--json"], "--gain-threshold"),
        (["oscillator", MANIFEST, "--load", OSCILLATOR_LOAD, "--injection-below=-1e308"],
         "--injection-below"),
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--tolerance", "RSUPPLY=5%", "--seed=-1"],
         "--seed"),
        # 10^10 samples tried to allocate 75 GiB; 10^20 overflowed
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--tolerance", "RSUPPLY=5%", "--samples",
          "10000000000"], "--samples"),
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--tolerance", "RSUPPLY=5%", "--samples",
          "99999999999999999999"], "--samples"),
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:99999999999"],
         "--vary"),
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:100000", "--vary",
          "LCHOKE=1n:2n:100000"], "--vary"),
        (["watch", ".", "--load", LOAD, "--interval", "1e10"], "--interval"),
        # accepted but meaningless
        (["terminations", TRANSISTOR, "--at", "8GHz", "--reference-impedance", "-1"],
         "--reference-impedance"),
        (["terminations", TRANSISTOR, "--at", "8GHz", "--reference-impedance", "nan"],
         "--reference-impedance"),
        (["terminations", TRANSISTOR, "--at", "8GHz", "--reference-impedance", "abc"],
         "--reference-impedance"),
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=10:20:3",
          "--reference-impedance", "nan"], "--reference-impedance"),
        (["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=10:20:3",
          "--reference-impedance", "-50"], "--reference-impedance"),
        (["amplifier", DEVICE, "--measurement-impedance", "0"], "--measurement-impedance"),
        (["amplifier", DEVICE, "--measurement-impedance", "-50"], "--measurement-impedance"),
        (["check", DEVICE, "--load", LOAD, "--report="], "--report"),
        (["check", DEVICE, "--load", LOAD, "--plot="], "--plot"),
    ],
)  # fmt: skip
def test_issue_reproducers_are_refused_in_one_line(argv, naming):
    refused(*argv, naming=naming)


@pytest.mark.parametrize("option", ["--threads", "--workers", "--chunk-size"])
@pytest.mark.parametrize("value", ["0", "-1", "2.5", "many"])
def test_parallel_counts_take_one_or_more(option, value):
    refused(
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:3", f"{option}={value}",
        naming=option,
    )  # fmt: skip


@pytest.mark.parametrize(
    ("rule", "text", "value"),
    [
        (options.frequency, "2.4GHz", 2.4e9),
        (options.frequency, "0", 0.0),
        (options.impedance, "50ohm", 50.0),
        (options.impedance, "75", 75.0),
        (options.dc_resistance, "-76ohm", -76.0),
        (options.termination, "0", 0.0),
        (options.delay, "-12ps", -12e-12),
        (options.interval, "50ms", 0.05),
        (options.return_loss, "15dB", 15.0),
        (options.gain, "-3dB", -3.0),
        (options.points, "1e6", 1_000_000),
        (options.samples, "100_000", 100_000),
        (options.seed, "0", 0),
        (options.gamma_uncertainty, "0.01,0.02", (0.01, 0.02)),
        (options.port_pairs, "1,3:2,4", ((1, 3), (2, 4))),
        (options.parameter, "RL=75", ("RL", 75.0)),
        (options.vary, "L=1n:5n:3", "L=1n:5n:3"),  # checked; the product reads the text
        (options.scheduler, "tcp://127.0.0.1:8786", "tcp://127.0.0.1:8786"),
    ],
)
def test_rules_return_si_values(rule, text, value):
    got = rule(text, "--x")
    if (isinstance(value, tuple) and isinstance(value[0], tuple)) or isinstance(value, str):
        assert got == value
    else:
        assert got == pytest.approx(value)


@pytest.mark.parametrize(
    ("rule", "text"),
    [
        (options.frequency, "-1GHz"),
        (options.frequency, "2e15"),
        (options.frequency, "inf"),
        (options.frequency, "1e999"),
        (options.impedance, "0"),
        (options.impedance, "1e300"),
        (options.impedance, "nan"),
        (options.dc_resistance, "1e300"),
        (options.termination, "-10"),
        (options.delay, "1"),
        (options.interval, "1e-9"),
        (options.return_loss, "-1dB"),
        (options.return_loss, "1e999"),
        (options.gain, "nan"),
        (options.points, "0"),
        (options.points, "1.5"),
        (options.points, "1e400"),
        (options.samples, "100000001"),
        (options.seed, "-1"),
        (options.seed, str(2**64)),
        (options.model_order, "100000"),
        (options.gamma_uncertainty, "1"),
        (options.parameter, "RL=inf"),
        (options.parameter, "=5"),
        (options.scheduler, "localhost"),
        (options.scheduler, "tcp://host:99999"),
        (options.plot, "x.pdf"),
        (options.plot, ""),
        (options.report, "x.png"),
        (options.table, "x.json"),
        (options.touchstone_output, "x.s3p"),
        (options.input_path, " "),
        (options.folder, ""),
        # No file name holds a NUL byte (POSIX, "Filename"): refused as typed, for every
        # kind of path, before the system is asked (it raises ValueError on such a name).
        (options.input_path, "12\0"),
        (options.folder, "be\0nch"),
        (options.plot, "a\0.png"),
        (options.report, "\0.html"),
        (options.table, "t\0.csv"),
    ],
)
def test_rules_refuse_with_one_line_naming_the_option(rule, text):
    with pytest.raises(options.InputError) as caught:
        rule(text, "--x")
    message = str(caught.value)
    assert message.startswith("--x") and "\n" not in message


def _rules_by_option() -> dict[str, dict[str, object]]:
    """Every option of every command and what checks its value."""
    parser, _ = build_parser()
    subparsers = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    found: dict[str, dict[str, object]] = {}
    for name, command in subparsers.choices.items():
        for action in command._actions:
            if isinstance(action, options._Renamed):
                continue  # an old spelling, refused with the new one
            for flag in action.option_strings:
                rule = getattr(action, "rule", None) or (action.type, action.choices)
                found.setdefault(flag, {})[name] = rule
    return found


def test_the_same_option_has_the_same_rule_in_every_command():
    for flag, rules in _rules_by_option().items():
        if flag == "--tolerance":
            continue  # sweep: NAME=PCT%; stabilise also takes PCT% for the added elements
        if flag in ("-o", "--output"):
            continue  # the command's own product: export's Touchstone file, sweep's table
        distinct = {id(rule) if callable(rule) else repr(rule) for rule in rules.values()}
        assert len(distinct) == 1, (flag, rules)


def test_every_value_option_is_checked_by_a_rule():
    """No option takes free text unchecked, except names the product looks up itself."""
    looked_up = {"--log", "--at-node"}  # parameter and node names, checked against the netlist
    for flag, rules in _rules_by_option().items():
        for command, rule in rules.items():
            if callable(rule) or flag in looked_up or flag in ("-h", "--help"):
                continue
            value_type, choices = rule  # type: ignore[misc]
            assert value_type is None or choices is not None, (command, flag)


# --- options as people type them ----------------------------------------------------------------


def test_a_negative_quantity_after_a_space_is_the_option_s_value():
    spaced = run_cli("check", DEVICE, "--load", LOAD, "--device-delay", "-12ps", "--json")
    joined = run_cli("check", DEVICE, "--load", LOAD, "--device-delay=-12ps", "--json")
    assert spaced[0] in (0, 3, 4) and spaced == joined
    spaced = run_cli(
        "check", DEVICE, "--load", LOAD, "--device-dc-resistance", "-76ohm",
        "--load-dc-resistance", "150", "--quiet",
    )  # fmt: skip
    joined = run_cli(
        "check", DEVICE, "--load", LOAD, "--device-dc-resistance=-76ohm",
        "--load-dc-resistance=150", "--quiet",
    )  # fmt: skip
    assert spaced == joined and spaced[0] in (0, 3, 4)


def test_join_negative_values_touches_only_values_of_options_that_take_one():
    takes = {"--device-delay", "--stop"}.__contains__
    assert options.join_negative_values(["--device-delay", "-12ps"], takes) == [
        "--device-delay=-12ps"
    ]
    assert options.join_negative_values(["-q", "-12"], takes) == ["-q", "-12"]
    assert options.join_negative_values(["--stop", "-x"], takes) == ["--stop", "-x"]
    assert options.join_negative_values(["--", "--stop", "-1"], takes) == ["--", "--stop", "-1"]


def test_a_missing_value_names_the_option_concerned():
    err = refused("check", DEVICE, "--load", LOAD, "--load-dc-resistance", naming="--load-dc-r")
    assert "--load-dc-resistance VALUE" in err and "device-delay" not in err


def test_a_grid_with_two_data_files_is_refused_not_ignored():
    err = refused(
        "check", DEVICE, "--load", LOAD, "--start", "1GHz", "--stop", "3GHz", naming="--start"
    )
    assert "data's own grid" in err
    refused("check", DEVICE, "--load", BIAS_NETLIST, "--points", "11", naming="--points")
    refused("stabilise", DEVICE, "--load", LOAD, "--stop", "3GHz", naming="--stop")
    refused(
        "sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:3", "--start", "1GHz",
        "--stop", "3GHz", naming="--start",
    )  # fmt: skip


def test_terminations_takes_the_terminated_port_and_refuses_the_old_spelling():
    err = refused(
        "terminations", TRANSISTOR, "--at", "8GHz", "--terminate", "1", naming="--terminate"
    )
    assert "--terminated-port" in err
    code, out, _ = run_cli(
        "terminations", TRANSISTOR, "--at", "8GHz", "--terminated-port", "1", "--json"
    )
    assert code == 0 and json.loads(out)["terminated_port"] == 1


@pytest.mark.parametrize(
    "argv",
    [
        ["check", DEVICE, "--load", LOAD],
        ["sweep", DEVICE, "--load", BIAS_NETLIST, "--vary", "RSUPPLY=1:2:3"],
        ["oscillator", MANIFEST, "--load", OSCILLATOR_LOAD],
        ["amplifier", DEVICE],
        ["terminations", TRANSISTOR, "--at", "8GHz"],
        ["stabilise", DEVICE, "--load", LOAD],
    ],
)
@pytest.mark.parametrize("name", ["plot.pdf", "plot.jpg", "plot", ""])
def test_every_plot_takes_png_or_svg_only(argv, name, tmp_path):
    err = refused(*argv, f"--plot={tmp_path / name if name else ''}", naming="--plot")
    assert ".png or .svg" in err
    assert list(tmp_path.iterdir()) == []


# --- strict JSON ---------------------------------------------------------------------------------


def test_the_json_writer_refuses_non_finite_numbers_and_writes_nothing():
    import io

    out = io.StringIO()
    with pytest.raises(common.NonFiniteJSONError, match=r"\$\.bands\[1\]\.peak_db \(inf\)"):
        common.write_json({"bands": [{"peak_db": 1.0}, {"peak_db": math.inf}]}, out)
    assert out.getvalue() == ""


def test_a_non_finite_number_reaching_the_json_is_one_line_and_exit_1(monkeypatch):
    from oneport.analysis.result import CheckResult

    original = CheckResult.to_dict

    def with_nan(self, include_arrays=False):
        data = original(self, include_arrays=include_arrays)
        data["injected"] = float("nan")
        return data

    monkeypatch.setattr(CheckResult, "to_dict", with_nan)
    code, out, err = run_cli("check", DEVICE, "--load", LOAD, "--json")
    assert (code, out) == (1, "")
    assert len(err.splitlines()) == 1 and "$.injected (nan)" in err


def _strict(text: str) -> object:
    def refuse(name: str) -> None:
        raise ValueError(f"non-standard JSON constant {name}")

    return json.loads(text, parse_constant=refuse)


@pytest.mark.parametrize(
    "argv",
    [
        ["check", DEVICE, "--load", LOAD, "--json"],
        ["check", DEVICE, "--load-return-loss", "100dB", "--json"],
        ["amplifier", DEVICE, "--gain-threshold", "100dB", "--port-return-loss", "0dB", "--json"],
        ["amplifier", DEVICE, "--gain-threshold=-100dB", "--json"],
        ["export", BIAS_NETLIST, "--start", "0", "--stop", "1e15", "--points", "3", "--json",
         "-o", "{tmp}/edge.s1p"],
        # the smallest subnormal: its echo in the report once divided by 10**-324 == 0
        ["check", DIODE_NETLIST, "--load", BIAS_NETLIST, "--load-dc-resistance=5e-324"],
    ],
)  # fmt: skip
def test_outputs_at_the_limits_are_strict_json(argv, tmp_path):
    code, out, err = run_cli(*(a.format(tmp=tmp_path) for a in argv))
    if code == 2:
        assert len(err.splitlines()) == 1
        return
    assert code in (0, 3, 4), err
    if "--json" in argv:
        _strict(out)
    else:
        assert err == "" and "4.94e-324 ohm" in out, "the DC fact is echoed in the report"


def test_export_at_the_grid_limit_writes_only_finite_numbers(tmp_path):
    target = tmp_path / "edge.s1p"
    code, _, err = run_cli(
        "export", BIAS_NETLIST, "--start", "0", "--stop", "1e15", "--points", "5", "-o", target
    )
    if code == 2:  # refused: the element values have no finite answer there
        assert len(err.splitlines()) == 1 and not target.exists()
        return
    numbers = [line.split() for line in target.read_text().splitlines() if line[0].isdigit()]
    assert np.isfinite(np.asarray(numbers, dtype=float)).all()


def test_a_nul_byte_in_any_path_is_one_line(tmp_path):
    # A campaign case: watch with a second --load holding a NUL byte ended in a traceback.
    folder = tmp_path / "bench"
    folder.mkdir()
    err = refused("watch", str(folder), "--load", LOAD, "--load", "12\0", naming="--load 12\\x00")
    assert "NUL byte" in err
    refused("check", "dev\0.s1p", "--load", LOAD, naming="DEVICE dev\\x00.s1p")
