"""Netlist reading: values, syntax, and one clear line (exit 2) for each malformed netlist."""

from __future__ import annotations

import io
from pathlib import Path

import numpy as np
import pytest

from oneport.circuit import Circuit, parse_circuit, read_circuit
from oneport.circuit.values import ParameterReference, ValueTokenError, parse_number, parse_value
from oneport.cli import main
from oneport.errors import FileFormatError, InputError

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples" / "circuits"


@pytest.mark.parametrize(
    ("token", "value"),
    [
        ("10", 10.0),
        ("-80", -80.0),
        ("3.3nH", 3.3e-9),
        ("2.2p", 2.2e-12),
        ("1pF", 1e-12),
        ("5meg", 5e6),
        ("5MEG", 5e6),
        ("5megohm", 5e6),
        ("2m", 2e-3),
        ("12mm", 12e-3),
        ("1f", 1e-15),
        ("1ff", 1e-15),
        ("4.7k", 4.7e3),
        ("1e-9", 1e-9),
        (".5u", 0.5e-6),
        ("1g", 1e9),
        ("2.4ghz", 2.4e9),
        ("50ohm", 50.0),
        ("12ps", 12e-12),
        ("0.3db", 0.3),
    ],
)
def test_numbers_with_netlist_suffixes(token: str, value: float) -> None:
    # common practice of netlists: m is milli, meg is mega, f is femto, unit letters optional
    assert parse_number(token) == pytest.approx(value, rel=1e-15)


@pytest.mark.parametrize("token", ["10x", "5M", "100MHz", "1Mohm", "3nQ", "1e999"])
def test_bad_numbers_are_refused_with_a_reason(token: str) -> None:
    with pytest.raises(ValueTokenError, match="|".join(["suffix", "milli", "finite"])):
        parse_number(token)


def test_parameter_references() -> None:
    assert parse_value("RD") == ParameterReference("RD")
    assert parse_value("-rd") == ParameterReference("rd", negate=True)
    with pytest.raises(ValueTokenError, match="not a value"):
        parse_value("a-b")


def test_syntax_features() -> None:
    circuit = parse_circuit(
        """
        * comment line
        .set RD = 80 cj=2p   * spaces around = and a trailing comment
        R1 1 2 10
        + * a continuation line holding only a comment is allowed
        L1 2 3 1n
        +  esr=0.2
        RD1 3 0 -Rd
        C1 3 0 CJ q = 50
        .oneport 1
        .end
        X1 this line is after .end and is not read
        """,
        source="features",
    )
    assert circuit.parameters == {"RD": 80.0, "cj": 2e-12}
    assert [element.name for element in circuit.elements] == ["R1", "L1", "RD1", "C1"]
    assert circuit.elements[1].values == {"inductance": 1e-9, "esr": 0.2}
    assert circuit.elements[3].values["q"] == 50.0
    gamma = circuit.gamma([1e9], 50.0, rd=100.0)
    assert gamma.shape == (1,)


def test_parameter_names_ignore_case_and_unknown_names_are_refused() -> None:
    circuit = read_circuit(EXAMPLES / "tunnel_diode.cir")
    np.testing.assert_allclose(circuit.gamma([1e9], rd=80), circuit.gamma([1e9], RD=80))
    with pytest.raises(InputError, match="unknown parameter 'RX'; known: RS, LS, RD, CJ"):
        circuit.gamma([1e9], RX=1.0)
    with pytest.raises(InputError, match="real, finite"):
        circuit.gamma([1e9], RD=np.nan)


def test_parameter_values_are_checked_against_element_rules() -> None:
    circuit = read_circuit(EXAMPLES / "tunnel_diode.cir")
    with pytest.raises(
        FileFormatError, match=r"tunnel_diode.cir:5: Rs: resistance = 0 ohm \(parameter"
    ):
        circuit.gamma([1e9], RS=[4.0, 0.0])


def test_builder_errors_name_the_circuit() -> None:
    circuit = Circuit("my load").resistor("R1", "1", "0", 50)
    with pytest.raises(InputError, match="my load: r1 is defined twice"):
        circuit.resistor("r1", "1", "0", 50)
    with pytest.raises(InputError, match="my load: no port"):
        circuit.gamma([1e9])
    with pytest.raises(InputError, match="inductance: '3q' has an unknown suffix"):
        circuit.inductor("L1", "1", "0", "3q")


_MALFORMED = [
    ("X1 1 0 5\n.oneport 1", 1, "unknown element letter 'X'"),
    ("R1 1 0 10x\n.oneport 1", 1, "unknown suffix 'x'"),
    ("R1 1 0 5M\n.oneport 1", 1, "milli"),
    ("R1 1 50\n.oneport 1", 1, "R1 needs 2 nodes and a value"),
    ("R1 1 0 50 7\n.oneport 1", 1, "got 4 plain tokens"),
    ("L1 1 0 1n foo=3\n.oneport 1", 1, "unknown parameter 'foo='; accepted: esr=, q="),
    ("L1 1 0 1n esr=1 q=20\n.oneport 1", 1, "not both"),
    ("L1 1 0 1n q=-3\n.oneport 1", 1, "q = -3; it must be positive"),
    ("R1 1 0 RX\n.oneport 1", 1, "unknown parameter 'RX'"),
    ("R1 1 0 0\n.oneport 1", 1, "a resistance of 0"),
    ("R1 1 1 5\nR2 1 0 5\n.oneport 1", 1, "joins node 1 to itself"),
    ("R1 1 0 50\nR1 1 0 50\n.oneport 1", 2, "R1 is defined twice (first on line 1)"),
    ("R1 1 0 50\n", 1, "ends without a port"),
    (".oneport 1\nR1 1 0 50\n.oneport 1", 3, "a second port directive (the first is on line 1)"),
    ("R1 1 0 50\n.oneport 1 1", 2, "shorted port"),
    ("R1 1 0 50\n.oneport 0", 2, "shorted port"),
    ("R1 1 0 50\nR2 2 0 50\n.twoport 1 0 0 1", 3, "shorted ports"),
    ("R1 1 0 50\n.oneport 7", 2, "port node 7 is not connected"),
    ("R1 1 0 50\nR2 2 3 10\nR3 3 2 20\n.oneport 1", 2, "floating node 2"),
    ("R1 1 0 50\nR2 1 5 10\n.oneport 1", 2, "dangling node 5"),
    ("R1 1 0 50\nG1 1 0 9 0 0.1\n.oneport 1", 2, "floating node 9"),
    (
        ".opamp O1 1 2 0\n.opamp O2 1 3 0\nR1 1 0 50\nR2 2 0 50\nR3 3 0 50\n.oneport 1",
        2,
        "singular circuit",
    ),
    ("T1 1 0 2 0 len=1m\nR1 2 0 50\n.oneport 1", 1, "needs z0="),
    ("T1 1 0 2 0 z0=50 len=1m delay=1n\nR1 2 0 50\n.oneport 1", 1, "not both"),
    ("T1 1 0 2 0 z0=50 delay=1n loss=1\nR1 2 0 50\n.oneport 1", 1, "needs at="),
    ("T1 1 0 2 0 z0=50 delay=1n eeff=2\nR1 2 0 50\n.oneport 1", 1, "eeff= goes with len="),
    ("N1 1 2 file=missing.s2p\n.oneport 1", 1, "missing.s2p: no such file"),
    ("N1 1 file=transistor.s2p\n.oneport 1", 1, "has 2 ports, so give 2 nodes"),
    ("N1 1 2\nR1 2 0 5\n.oneport 1", 1, "one file=PATH"),
    (".set RD\nR1 1 0 RD\n.oneport 1", 1, "is not NAME=VALUE"),
    (".set RD=RS\nR1 1 0 RD\n.oneport 1", 1, "must be a number"),
    (".set RD=1 RD=2\nR1 1 0 RD\n.oneport 1", 1, "parameter RD is set twice"),
    (".param X=1\nR1 1 0 5\n.oneport 1", 1, "unknown directive '.param'"),
    (".twoport 1 2 3\nR1 1 0 5\n", 1, ".twoport with 3 nodes"),
    ('N1 1 2 file="transistor.s2p\n.oneport 1', 1, "quote"),
    ("+ R1 1 0 5\n.oneport 1", 1, "continuation"),
    ("R1 1 0 = 5\n.oneport 1", 1, "'=' needs a keyword name"),
    ("R1 1 0 z0=50\n.oneport 1", 1, "R1 needs 2 nodes and a value"),
    # Other dialects' spellings are refused with a hint, never read as something else: a SPICE
    # lossy line (O, four nodes and a model name: common SPICE practice) and rser=.
    ("O1 1 0 2 0 lossy\nR1 2 0 50\n.oneport 1", 1, "lossy transmission line in the common SPICE"),
    ("O1 out p n\nR1 out 0 50\n.oneport p", 1, "an op-amp as .opamp NAME OUT IN+ IN-"),
    ("L1 1 0 1n rser=0.4\n.oneport 1", 1, "write the series resistance as esr= (the equivalent"),
    (".opamp\nR1 1 0 5\n.oneport 1", 1, ".opamp needs a name, then OUT IN+ IN-"),
    (".opamp U1 1 2\nR1 1 0 5\n.oneport 1", 1, "U1 needs 3 nodes"),
]


@pytest.mark.parametrize(("text", "line", "message"), _MALFORMED)
def test_malformed_netlists_exit_2_with_one_line(
    tmp_path: Path, text: str, line: int, message: str
) -> None:
    netlist = tmp_path / "bad.cir"
    netlist.write_text(text)
    (tmp_path / "transistor.s2p").write_bytes((EXAMPLES / "transistor.s2p").read_bytes())
    out, err = io.StringIO(), io.StringIO()
    arguments = ["export", str(netlist), "--start", "1GHz", "--stop", "2GHz", "--points", "3"]
    code = main([*arguments, "-o", str(tmp_path / "out.s1p")], stdout=out, stderr=err)
    assert code == 2
    lines = err.getvalue().splitlines()
    assert len(lines) == 1, lines
    assert f"bad.cir:{line}:" in lines[0]
    assert message in lines[0]
    assert out.getvalue() == ""


def test_binary_and_missing_files_are_refused(tmp_path: Path) -> None:
    binary = tmp_path / "binary.cir"
    binary.write_bytes(b"\x80\x04R1\x00")
    with pytest.raises(FileFormatError, match="binary content"):
        read_circuit(binary)
    with pytest.raises(FileFormatError, match="no such file"):
        read_circuit(tmp_path / "absent.cir")


def test_grid_outside_a_block_band_is_refused_not_extrapolated() -> None:
    circuit = read_circuit(EXAMPLES / "series_feedback_transistor.cir")
    with pytest.raises(InputError, match=r"NQ1 \(line 7\): the analysis grid .* leaves the band"):
        circuit.gamma(np.linspace(50e6, 1e9, 5))
    with pytest.raises(InputError, match="leaves the band"):
        circuit.gamma(np.linspace(1e9, 19e9, 5))
    assert np.all(np.isfinite(circuit.gamma(np.linspace(0.1e9, 18e9, 5))))


def test_block_reference_node_may_be_a_netlist_node() -> None:
    circuit = read_circuit(EXAMPLES / "series_feedback_transistor.cir")
    block = circuit.elements[0]
    assert block.nodes == ("g", "d", "s")
    gamma = circuit.gamma(np.linspace(6e9, 12e9, 7))
    # The gate inductor makes the source's resistance negative: |Γ| > 1 in part of the band.
    assert np.abs(gamma).max() > 1.0
