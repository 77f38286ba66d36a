"""``oneport stabilise`` on the command line: exit codes, JSON, the text report, pictures.

Expected outcomes come from the shipped examples' READMEs (touchstone_examples/*/README.md:
which pairs oscillate, latch up or cannot be decided) and CONVENTIONS.md (exit codes 0, 2, 3,
4; JSON without NaN; one line on stderr for bad input).
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import oneport

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
OSCILLATES = (
    EXAMPLES / "oscillates" / "device.s1p",
    "--load",
    EXAMPLES / "oscillates" / "load.s1p",
)


def _refuse_nan(token: str) -> float:
    raise ValueError(f"JSON holds {token}")


def test_json_is_what_the_python_api_returns():
    code, out, err = run_cli("stabilise", *OSCILLATES, "--family", "series-resistor", "--json")
    assert code == 0, err  # CONVENTIONS.md: 0 when the property holds (a network reaches it)
    data = json.loads(out, parse_constant=_refuse_nan)
    assert data["schema"] == "oneport.stabilise/2" and data["verdict"] == "stabilised"
    api = oneport.stabilise(
        str(OSCILLATES[0]), str(OSCILLATES[2]), families=["series-resistor"]
    ).to_dict()
    assert json.loads(json.dumps(api)) == data


def test_text_report_reads_verdict_first_and_cautions_last():
    code, out, _ = run_cli("stabilise", *OSCILLATES, "--family", "shunt-resistor")
    assert code == 0
    lines = out.splitlines()
    assert lines[0].startswith("STABILISED")
    assert "shunt R 10 ohm" in lines[0], "the network in words and units"
    assert out.index("Suggestions") < out.index("Cautions")
    assert "A stabilising resistor" in out  # its caution (cautions.py)


def test_quiet_prints_one_line():
    code, out, _ = run_cli("stabilise", *OSCILLATES, "--family", "series-resistor", "-q")
    assert code == 0 and len(out.splitlines()) == 1


def test_no_network_reaches_an_impossible_margin():
    # CONVENTIONS.md: 3 when the property fails; the report says why.
    code, out, _ = run_cli(
        "stabilise", *OSCILLATES, "--family", "series-resistor", "--margin", "0.95"
    )
    assert code == 3
    assert out.startswith("NOT STABILISED")
    assert "short of the margin" in out or "none with" in out


def test_undecidable_pair_is_inconclusive():
    # undecidable/README.md: the sweep starts too high to close the loop towards DC.
    undecidable = EXAMPLES / "undecidable"
    code, out, _ = run_cli(
        "stabilise", undecidable / "device.s1p", "--load", undecidable / "load.s1p"
    )
    assert code == 4
    assert "--device-dc-resistance" in out  # what would decide it


def test_dc_facts_let_the_undecidable_pair_be_advised():
    # undecidable/README.md: the truth is the latch-up (device -76 ohm at DC, bias 150 ohm).
    undecidable = EXAMPLES / "undecidable"
    code, out, err = run_cli(
        "stabilise",
        undecidable / "device.s1p",
        "--load",
        undecidable / "load.s1p",
        "--device-dc-resistance=-76ohm",
        "--load-dc-resistance",
        "150ohm",
        "--family",
        "shunt-resistor",
        "--family",
        "series-resistor",
        "--json",
    )
    assert code == 0, err
    data = json.loads(out)
    (shunt,) = data["suggestions"]
    assert shunt["topology"] == "shunt-resistor"
    # At DC the shunt must bring 150 ohm ∥ R below 76 ohm: R < 154.05 ohm (closed form).
    assert shunt["elements"]["resistance_ohm"] < 154.05
    assert shunt["stable_range"]["resistance_ohm"]["high"] <= 154.05 * 1.02
    assert data["families_without_solution"][0]["topology"] == "series-resistor"


def test_plot_is_written(tmp_path):
    target = tmp_path / "advice.png"
    code, _, err = run_cli(
        "stabilise", *OSCILLATES, "--family", "series-resistor", "--plot", target, "-q"
    )
    assert code == 0, err
    assert target.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (("--margin", "2"), "--margin"),
        (("--keep", "3GHz"), "--keep"),
        (("--band", "2GHz"), "--band"),
        (("--at-node", "n1"), "--at-node"),
        (("--bias-current", "20mV"), "--bias-current"),
        (("--plot", "advice.pdf"), "advice.pdf"),
        (("--only-at-node",), "--only-at-node"),
    ],
)
def test_bad_input_is_one_line_and_exit_2(extra, message):
    code, out, err = run_cli("stabilise", *OSCILLATES, *extra)
    assert code == 2 and out == ""
    assert len(err.strip().splitlines()) == 1 and message in err


def test_plot_may_not_overwrite_an_input(tmp_path):
    device = tmp_path / "device.png"
    device.write_bytes((EXAMPLES / "oscillates" / "device.s1p").read_bytes())
    code, _, err = run_cli("stabilise", device, "--load", OSCILLATES[2], "--plot", device)
    assert code == 2 and "input" in err
