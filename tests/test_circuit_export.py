"""``oneport export``: files that read back, the JSON record, and refused options (exit 2)."""

from __future__ import annotations

import io
import json
from pathlib import Path

import numpy as np
import pytest

from oneport.circuit import read_circuit
from oneport.cli import main
from oneport.products.export import frequency_grid
from oneport.reading.touchstone import read_one_port, read_touchstone

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples" / "circuits"


def _run(*arguments: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    code = main(list(arguments), stdout=out, stderr=err)
    return code, out.getvalue(), err.getvalue()


def test_one_port_export_reads_back(tmp_path: Path) -> None:
    output = tmp_path / "diode.s1p"
    netlist = str(EXAMPLES / "tunnel_diode.cir")
    code, out, err = _run(
        "export", netlist, "--start", "1MHz", "--stop", "20GHz", "--points", "2001",
        "-o", str(output), "--param", "RD=100", "--param", "cj=1.5p",
    )  # fmt: skip
    assert (code, err) == (0, "")
    assert out.startswith(f"wrote {output}: one-port, 2001 points, 1 MHz to 20 GHz")
    written = read_one_port(output)
    expected = read_circuit(netlist).gamma(written.frequency_hz, 50.0, RD=100, CJ=1.5e-12)
    np.testing.assert_allclose(written.frequency_hz, np.linspace(1e6, 20e9, 2001), rtol=1e-14)
    np.testing.assert_allclose(written.gamma, expected, rtol=0, atol=1e-13)
    assert "RD=100" in " ".join(written.comments)


def test_two_port_export_with_log_spacing_and_json(tmp_path: Path) -> None:
    netlist = tmp_path / "pi.cir"
    netlist.write_text("C1 1 0 1p\nL1 1 2 5n esr=0.7\nC2 2 0 2p\nR2 2 0 400\n.twoport 1 2\n")
    output = tmp_path / "pi.s2p"
    code, out, _ = _run(
        "export", str(netlist), "--start", "10MHz", "--stop", "10GHz", "--points", "31",
        "--spacing", "log", "-o", str(output), "--json", "--reference-impedance", "75ohm",
    )  # fmt: skip
    assert code == 0
    record = json.loads(out)
    assert record["schema"] == "oneport.export/2"
    assert record["output"] == {
        "path": str(output),
        "ports": 2,
        "points": 31,
        "start_hz": 1e7,
        "stop_hz": 1e10,
        "spacing": "log",
        "reference_impedance_ohm": 75.0,
    }
    (netlist_record,) = record["inputs"]
    assert len(netlist_record["sha256"]) == 64 and record["warnings"] == []
    written = read_touchstone(output)
    np.testing.assert_allclose(written.frequency_hz, np.geomspace(1e7, 1e10, 31), rtol=1e-14)
    np.testing.assert_allclose(written.reference_impedance_ohm, [75.0, 75.0])
    expected = read_circuit(netlist).s_parameters(written.frequency_hz, 75.0)
    # Touchstone 1.x two-port order S11 S21 S12 S22 (Touchstone specification, IBIS Open Forum)
    np.testing.assert_allclose(written.s, expected, rtol=0, atol=1e-13)


@pytest.mark.parametrize(
    ("options", "message"),
    [
        (["--start", "2GHz", "--stop", "1GHz"], "--stop 1e+09 Hz must be above --start"),
        (["--start", "0", "--stop", "1GHz", "--spacing", "log"], "--spacing log needs --start"),
        (["--start", "1GHz", "--stop", "2GHz", "--points", "0"], "--points: 0 is outside"),
        (["--start", "1Gohm", "--stop", "2GHz"], "--start: unknown unit"),
        (["--start", "1GHz", "--stop", "2GHz", "--param", "RX=3"], "unknown parameter 'RX'"),
        (["--start", "1GHz", "--stop", "2GHz", "--param", "RD"], "give NAME=VALUE"),
        (["--start", "1GHz", "--stop", "2GHz", "--param", "RD=5M"], "milli"),
        (
            ["--start", "1GHz", "--stop", "2GHz", "--reference-impedance", "-5"],
            "positive number of ohms",
        ),
    ],
)
def test_bad_options_exit_2(tmp_path: Path, options: list[str], message: str) -> None:
    output = tmp_path / "out.s1p"
    code, out, err = _run("export", str(EXAMPLES / "tunnel_diode.cir"), *options, "-o", str(output))
    assert code == 2 and out == ""
    assert len(err.splitlines()) == 1 and message in err
    assert not output.exists()


def test_output_suffix_must_match_the_port_count(tmp_path: Path) -> None:
    code, _, err = _run(
        "export", str(EXAMPLES / "tunnel_diode.cir"), "--start", "1GHz", "--stop", "2GHz",
        "-o", str(tmp_path / "out.s2p"),
    )  # fmt: skip
    assert code == 2 and "a 1-port is written as a .s1p file" in err


def test_frequency_grid_with_a_single_point() -> None:
    np.testing.assert_array_equal(frequency_grid(1e9, 1e9, 1, "linear"), [1e9])
