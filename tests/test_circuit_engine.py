"""The circuit engine's own guarantees: paths agree, chunks agree, shapes broadcast, errors speak.

Outside references are named beside the checks (scikit-rf for the two-port, python-free
closed forms otherwise); the rest compares the engine with itself under different settings.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import skrf

import oneport
from oneport.circuit import Circuit, engine, one_port_from_circuit, parse_circuit, read_circuit
from oneport.errors import InputError

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples" / "circuits"
LADDER = """
.set RS=10 LS=2n CP=1.5p RP=300 LQ=5n CC=0.7p
Rs 1 2 RS
Ls 2 3 LS esr=0.3
Cp 3 0 CP q=80
Rp 3 0 RP
Lq 3 4 LQ q=40
Cc 4 0 CC esr=0.5
.oneport 1
"""


def test_closed_form_and_elimination_agree_over_many_variants() -> None:
    circuit = parse_circuit(LADDER, source="ladder")
    assert circuit.is_series_parallel
    generator = np.random.default_rng(7)
    params = {
        "RS": generator.uniform(-40, 40, 50),
        "LS": generator.uniform(0.5e-9, 5e-9, 50),
        "CP": generator.uniform(0.5e-12, 3e-12, 50),
    }
    frequency_hz = np.linspace(1e6, 20e9, 401)
    closed = circuit.evaluate(frequency_hz, 50.0, params)
    eliminated = circuit.evaluate(frequency_hz, 50.0, params, method="elimination")
    np.testing.assert_allclose(closed, eliminated, rtol=0, atol=1e-10)


def test_chunked_evaluation_equals_one_chunk(monkeypatch: pytest.MonkeyPatch) -> None:
    circuit = read_circuit(EXAMPLES / "bias_tee.cir")
    frequency_hz = np.geomspace(1e6, 6e9, 301)
    params = {"LCHOKE": np.linspace(100e-9, 400e-9, 37)}
    whole = circuit.evaluate(frequency_hz, 50.0, params, method="elimination")
    monkeypatch.setattr(engine, "MATRIX_BUDGET_BYTES", 16 * 100 * 40)
    monkeypatch.setattr(engine, "LEAST_POINTS", 1)
    chunked = circuit.evaluate(frequency_hz, 50.0, params, method="elimination")
    np.testing.assert_array_equal(whole.shape, (37, 1, 1, 301))
    np.testing.assert_allclose(chunked, whole, rtol=0, atol=1e-13)
    np.testing.assert_allclose(
        circuit.gamma(frequency_hz, 50.0, **params), whole[:, 0, 0], atol=1e-12
    )


def test_array_parameters_broadcast_to_leading_axes() -> None:
    circuit = read_circuit(EXAMPLES / "tunnel_diode.cir")
    frequency_hz = np.linspace(0.5e9, 5e9, 11)
    rd = np.array([60.0, 80.0])[:, None]
    cj = np.array([1e-12, 2e-12, 3e-12])[None, :]
    batch = circuit.gamma(frequency_hz, 50.0, RD=rd, CJ=cj)
    assert batch.shape == (2, 3, 11)
    for i in range(2):
        for j in range(3):
            one = circuit.gamma(frequency_hz, 50.0, RD=float(rd[i, 0]), CJ=float(cj[0, j]))
            np.testing.assert_allclose(batch[i, j], one, rtol=0, atol=1e-14)
    assert circuit.gamma(frequency_hz).shape == (11,)
    assert circuit.gamma(frequency_hz, RD=[80.0]).shape == (1, 11)


def test_dc_points_fall_back_to_elimination() -> None:
    series_capacitor = parse_circuit("C1 1 2 1p\nR1 2 0 20\n.oneport 1", source="dc block")
    shunt_inductor = parse_circuit("L1 1 0 1n\nR1 1 0 20\n.oneport 1", source="choke")
    frequency_hz = np.array([0.0, 1e9])
    # At 0 Hz a series capacitor is an open (Γ = 1) and a shunt inductor a short (Γ = −1).
    assert series_capacitor.gamma(frequency_hz)[0] == pytest.approx(1.0, abs=1e-15)
    assert shunt_inductor.gamma(frequency_hz)[0] == pytest.approx(-1.0, abs=1e-15)
    line = parse_circuit("T1 1 0 2 0 z0=75 len=0.1 eeff=2\nR1 2 0 30\n.oneport 1", source="line")
    # A line at 0 Hz is a plain connection: Γ of 30 ohm in 50 ohm.
    assert line.gamma(frequency_hz)[0] == pytest.approx(-0.25, abs=1e-15)


@pytest.mark.parametrize(
    "netlist",
    [
        "C1 1 2 1p\nC2 2 0 2p\nR1 1 0 30\n.oneport 1",  # node 2 reached only through capacitors
        "L1 2 0 1n\nL2 2 0 2n\nR1 1 2 30\n.oneport 1",  # a loop of inductors
    ],
)
def test_closed_form_refuses_at_dc_what_elimination_refuses(netlist: str) -> None:
    # At 0 Hz these circuits have no unique solution; the closed form must not return its
    # ω → 0 limit where elimination, the reference path, refuses.
    circuit = parse_circuit(netlist, source="dc")
    frequency_hz = np.array([0.0, 1e6, 1e9])
    with pytest.raises(InputError, match="singular"):
        circuit.evaluate(frequency_hz, 50.0, {}, method="elimination")
    with pytest.raises(InputError, match="singular"):
        circuit.evaluate(frequency_hz, 50.0, {})
    above = frequency_hz[1:]
    np.testing.assert_allclose(
        circuit.evaluate(above, 50.0, {}),
        circuit.evaluate(above, 50.0, {}, method="elimination"),
        rtol=0,
        atol=1e-13,
    )


def test_resistances_cancelling_the_reference_take_the_elimination_answer() -> None:
    # −50 Ω in parallel with 50 Ω is an open: Γ = 1 would need 0/0 in the closed form. Here
    # 50 Ω in series with −50 Ω is a short across 20 Ω: Γ = −1 (hand calculation).
    short = parse_circuit("R1 1 2 50\nR2 2 0 -50\nR3 1 0 20\n.oneport 1", source="short")
    frequency_hz = np.array([1e9, 2e9])
    np.testing.assert_allclose(short.gamma(frequency_hz), [-1.0, -1.0], rtol=0, atol=1e-15)
    cancelling = parse_circuit("R1 1 0 -50\n.oneport 1", source="cancelling")
    for method in ("elimination", "auto"):
        with pytest.raises(InputError, match="singular"):
            cancelling.evaluate(frequency_hz, 50.0, {}, method=method)


def test_singular_equations_are_refused_with_frequency_and_variant() -> None:
    circuit = parse_circuit(".set R=-30\nR1 1 0 R\n.oneport 1", source="pole")
    # −50 ohm in a 50 ohm reference puts a pole of Γ on the axis: no unique solution.
    with pytest.raises(InputError, match=r"singular at 1 GHz \(parameter set \(1,\): R=-50\)"):
        circuit.gamma([1e9], 50.0, R=[-30.0, -50.0])


def test_pivoting_handles_zero_diagonals() -> None:
    # Ideal op-amp follower driving a resistor: every op-amp row has a zero diagonal.
    follower = parse_circuit(
        ".opamp O1 out in out\nRload out 0 10\nRin in 0 1k\n"
        ".opamp O2 x in 0 gbw=1g\nRx x 0 1k\n.oneport in",
        source="follower",
    )
    gamma = follower.gamma(np.array([1e3, 1e6, 1e9]))
    # The inputs draw no current: the port sees Rin = 1 kohm alone.
    np.testing.assert_allclose(gamma, (1000 - 50) / (1000 + 50), rtol=0, atol=1e-12)


def test_two_port_pi_network_matches_scikit_rf() -> None:
    frequency_hz = np.linspace(0.1e9, 5e9, 60)
    circuit = parse_circuit(
        "C1 1 0 1p\nL1 1 2 5n esr=0.7\nC2 2 0 2p\nR2 2 0 400\n.twoport 1 2", source="pi"
    )
    media = skrf.media.DefinedGammaZ0(skrf.Frequency.from_f(frequency_hz, unit="Hz"), z0=50)
    # scikit-rf: shunt C, series L and R, shunt C and R, cascaded with **
    expected = (
        media.shunt_capacitor(1e-12)
        ** media.inductor(5e-9)
        ** media.resistor(0.7)
        ** media.shunt_capacitor(2e-12)
        ** media.shunt(media.resistor(400) ** media.short())
    ).s
    np.testing.assert_allclose(
        np.moveaxis(circuit.s_parameters(frequency_hz), -1, 0), expected, atol=1e-9
    )
    with pytest.raises(InputError, match="has two ports; use s_parameters"):
        circuit.gamma(frequency_hz)


def test_natural_frequencies_refuse_what_has_no_polynomial() -> None:
    with pytest.raises(InputError, match=r"T1 \(line 6\)"):
        read_circuit(EXAMPLES / "bias_tee.cir").natural_frequencies()
    with pytest.raises(InputError, match="give one value"):
        read_circuit(EXAMPLES / "tunnel_diode.cir").natural_frequencies(RD=[1.0, 2.0])


def test_circuit_one_ports_feed_the_check_and_agree_with_natural_frequencies() -> None:
    frequency_hz = np.linspace(1e6, 20e9, 4001)
    device = one_port_from_circuit(EXAMPLES / "tunnel_diode.cir", frequency_hz)
    assert device.version == "netlist" and len(device.sha256 or "") == 64
    for resistance, inductance in ((30.0, 2e-9), (10.0, 2e-9), (90.0, 2e-9)):
        load = (
            Circuit("bias").resistor("R", "1", "2", resistance).inductor("L", "2", "0", inductance)
        )
        result = oneport.check(device, one_port_from_circuit(load.port("1"), frequency_hz))
        loop = read_circuit(EXAMPLES / "tunnel_diode.cir")
        loop.resistor("RB", "1", "b", resistance).inductor("LB", "b", "0", inductance)
        # The Nyquist count of the check equals the loop's right-half-plane natural frequencies
        # (eigenvalues of its own equations, an independent route).
        assert result.encirclements == int(np.sum(loop.natural_frequencies().real > 0))
