"""Circuit engine against scikit-rf: ladders, lines, stubs, bridges and Touchstone blocks.

Every expected value here is computed by scikit-rf (media elements connected with ``**`` or
``skrf.circuit.Circuit``), or by an independent nodal model written in this file.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import skrf

from oneport.circuit import Circuit, parse_circuit
from oneport.reading.touchstone import read_touchstone

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples" / "circuits"
TRANSISTOR = EXAMPLES / "transistor.s2p"
Z0 = 50.0
C_LIGHT = 299_792_458.0


def _media(frequency_hz: np.ndarray) -> skrf.media.DefinedGammaZ0:
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    return skrf.media.DefinedGammaZ0(frequency, z0=Z0)


def _random_ladder(
    generator: np.random.Generator, frequency_hz: np.ndarray
) -> tuple[Circuit, skrf.Network]:
    """A random cascade of series and shunt R, L, C (some lossy), as a Circuit and in skrf."""
    media = _media(frequency_hz)
    omega = 2 * np.pi * frequency_hz
    circuit = Circuit("random ladder").port("n0")
    network = None
    node = "n0"
    for index in range(int(generator.integers(2, 7))):
        kind = str(generator.choice(["R", "L", "C"]))
        value = {
            "R": generator.uniform(5, 300),
            "L": generator.uniform(0.2e-9, 20e-9),
            "C": generator.uniform(0.1e-12, 10e-12),
        }[kind]
        loss = str(generator.choice(["none", "esr", "q"])) if kind != "R" else "none"
        loss_value = generator.uniform(0.1, 3) if loss == "esr" else generator.uniform(5, 200)
        impedance = {
            "R": np.full(frequency_hz.size, value, dtype=complex),
            "L": 1j * omega * value,
            "C": 1 / (1j * omega * value),
        }[kind]
        if loss == "esr":
            impedance = impedance + loss_value
        elif loss == "q":
            impedance = impedance + np.abs(impedance.imag) / loss_value
        keywords = {"esr": {"series_resistance": loss_value}, "q": {"quality_factor": loss_value}}
        extra = keywords.get(loss, {})
        shunt = bool(generator.integers(0, 2))
        name = f"{kind}{index}"
        if shunt:
            _add(circuit, kind, name, node, "0", value, extra)
            element = media.shunt(media.resistor(impedance) ** media.short())
        else:
            _add(circuit, kind, name, node, f"n{index + 1}", value, extra)
            node = f"n{index + 1}"
            element = media.resistor(impedance)
        network = element if network is None else network**element
    termination = generator.uniform(1, 200)
    circuit.resistor("Rend", node, "0", termination)
    assert network is not None
    return circuit, network ** (media.resistor(termination) ** media.short())


def _add(circuit: Circuit, kind: str, name: str, a: str, b: str, value: float, extra: dict) -> None:
    if kind == "R":
        circuit.resistor(name, a, b, value)
    elif kind == "L":
        circuit.inductor(name, a, b, value, **extra)
    else:
        circuit.capacitor(name, a, b, value, **extra)


@pytest.mark.parametrize("seed", range(12))
def test_random_ladders_match_scikit_rf(seed: int) -> None:
    generator = np.random.default_rng(seed)
    frequency_hz = np.linspace(10e6, 12e9, 301)
    circuit, network = _random_ladder(generator, frequency_hz)
    # scikit-rf media elements cascaded with ** (the reference)
    expected = network.s[:, 0, 0]
    np.testing.assert_allclose(circuit.gamma(frequency_hz, Z0), expected, rtol=0, atol=1e-9)
    by_elimination = circuit.evaluate(frequency_hz, Z0, {}, method="elimination")[0, 0]
    np.testing.assert_allclose(by_elimination, expected, rtol=0, atol=1e-9)


def test_negative_resistance_ladder_matches_scikit_rf() -> None:
    frequency_hz = np.linspace(0.1e9, 8e9, 200)
    media = _media(frequency_hz)
    circuit = parse_circuit(
        "Rs 1 2 4\nLs 2 3 0.6n\nRd 3 0 -80\nCj 3 0 2p\n.oneport 1", source="diode"
    )
    # scikit-rf: series Rs, series Ls, shunt (-80 ohm) and shunt Cj, open end
    reference = (
        media.resistor(4)
        ** media.inductor(0.6e-9)
        ** media.shunt(media.resistor(-80) ** media.short())
        ** media.shunt_capacitor(2e-12)
        ** media.open()
    )
    np.testing.assert_allclose(circuit.gamma(frequency_hz), reference.s[:, 0, 0], atol=1e-9)


@pytest.mark.parametrize("loss_db", [0.0, 0.8])
def test_line_and_stubs_match_scikit_rf(loss_db: float) -> None:
    frequency_hz = np.linspace(50e6, 10e9, 257)
    length, eeff, z_line, at = 0.023, 4.2, 35.0, 2e9
    beta = 2 * np.pi * frequency_hz * np.sqrt(eeff) / C_LIGHT
    alpha = loss_db * np.log(10) / 20 * np.sqrt(frequency_hz / at) / length
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    line_media = skrf.media.DefinedGammaZ0(
        frequency, z0_port=Z0, z0=z_line, gamma=alpha + 1j * beta
    )
    media = _media(frequency_hz)
    loss = f"loss={loss_db} at=2g" if loss_db else ""
    netlist = f"""
    T1 1 0 2 0 z0=35 len=23mm eeff=4.2 {loss}
    * an open stub and a shorted stub, both by delay
    T2 2 0 3 0 z0=70 delay=40p
    T3 2 0 4 0 z0=20 delay=15p
    T4 4 0 0 0 z0=20 delay=1e-12
    R1 2 0 120
    .oneport 1
    """
    circuit = parse_circuit(netlist, source="lines")

    def delay_media(z_stub: float) -> skrf.media.DefinedGammaZ0:
        return skrf.media.DefinedGammaZ0(
            frequency,
            z0_port=Z0,
            z0=z_stub,
            gamma=1j * 2 * np.pi * frequency_hz / C_LIGHT,
        )

    # scikit-rf: DefinedGammaZ0 lines (length in metres of a vacuum line for the delays)
    open_stub = delay_media(70).line(40e-12 * C_LIGHT, unit="m") ** media.open()
    short_stub = delay_media(20).line(16e-12 * C_LIGHT, unit="m") ** media.short()
    reference = (
        line_media.line(length, unit="m")
        ** media.shunt(open_stub)
        ** media.shunt(short_stub)
        ** media.shunt(media.resistor(120) ** media.short())
        ** media.open()
    )
    np.testing.assert_allclose(circuit.gamma(frequency_hz), reference.s[:, 0, 0], atol=1e-9)


def test_bridge_matches_scikit_rf_circuit() -> None:
    frequency_hz = np.linspace(0.2e9, 6e9, 120)
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    media = _media(frequency_hz)
    r1, r2, c3, l4, r5 = (
        media.resistor(20),
        media.resistor(75),
        media.capacitor(1.5e-12),
        media.inductor(4e-9),
        media.resistor(33),
    )
    for network, name in ((r1, "R1"), (r2, "R2"), (c3, "C3"), (l4, "L4"), (r5, "R5")):
        network.name = name
    port = skrf.circuit.Circuit.Port(frequency, "port", z0=Z0)
    ground = skrf.circuit.Circuit.Ground(frequency, "ground", z0=Z0)
    connections = [
        [(port, 0), (r1, 0), (r2, 0)],
        [(r1, 1), (c3, 0), (l4, 0)],
        [(r2, 1), (c3, 1), (r5, 0)],
        [(l4, 1), (r5, 1), (ground, 0)],
    ]
    # scikit-rf's Circuit solves the bridge (not series-parallel)
    expected = skrf.circuit.Circuit(connections).network.s[:, 0, 0]
    circuit = parse_circuit(
        "R1 a b 20\nR2 a c 75\nC3 b c 1.5p\nL4 b 0 4n\nR5 c 0 33\n.oneport a", source="bridge"
    )
    assert not circuit.is_series_parallel
    np.testing.assert_allclose(circuit.gamma(frequency_hz), expected, atol=1e-9)


def test_two_port_file_terminated_at_port_two_matches_scikit_rf(tmp_path: Path) -> None:
    data = read_touchstone(TRANSISTOR)
    frequency = skrf.Frequency.from_f(data.frequency_hz, unit="Hz")
    transistor = skrf.Network(frequency=frequency, s=np.moveaxis(data.s, -1, 0), z0=Z0)
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    load = media.resistor(30) ** media.inductor(1e-9) ** media.short()
    # scikit-rf: the two-port's port 2 terminated by the load with **
    expected = (transistor**load).s[:, 0, 0]
    circuit = parse_circuit(
        f'N1 1 2 file="{TRANSISTOR}"\nR1 2 3 30\nL1 3 0 1n\n.oneport 1', source="terminated"
    )
    np.testing.assert_allclose(circuit.gamma(data.frequency_hz), expected, atol=1e-9)
    # Inside the band on another grid: scikit-rf's linear interpolation of S (real, imaginary)
    grid = np.linspace(0.35e9, 17.3e9, 77)
    interpolated = transistor.interpolate(skrf.Frequency.from_f(grid, unit="Hz"), kind="linear")
    load_grid = skrf.media.DefinedGammaZ0(interpolated.frequency, z0=Z0)
    load_on_grid = load_grid.resistor(30) ** load_grid.inductor(1e-9) ** load_grid.short()
    np.testing.assert_allclose(
        circuit.gamma(grid), (interpolated**load_on_grid).s[:, 0, 0], atol=1e-9
    )


def _y_from_s(s: np.ndarray) -> np.ndarray:
    """Y-parameters (f, 2, 2) from S (f, 2, 2) at Z0: Y = (I − S)(I + S)^-1 / Z0."""
    identity = np.eye(2)
    return (identity - s) @ np.linalg.inv(identity + s) / Z0


def _s_from_y(y: np.ndarray) -> np.ndarray:
    identity = np.eye(2)
    return (identity - Z0 * y) @ np.linalg.inv(identity + Z0 * y)


def test_common_source_to_common_gate_with_gate_inductor() -> None:
    data = read_touchstone(TRANSISTOR)
    frequency_hz = data.frequency_hz
    inductance = 0.9e-9
    circuit = parse_circuit(
        f'N1 g d s file="{TRANSISTOR}"\nLg g 0 0.9n\n.twoport s d', source="common gate"
    )
    result = circuit.s_parameters(frequency_hz)
    # Independent nodal model (this test): the common-source Y (gate, drain; source common)
    # becomes a 3x3 indefinite admittance matrix over (g, d, s) whose rows and columns sum to
    # zero; the gate inductor adds 1/(jωL) at g; eliminating g leaves Y over (s, d).
    y = _y_from_s(np.moveaxis(data.s, -1, 0))
    indefinite = np.zeros((frequency_hz.size, 3, 3), dtype=complex)
    indefinite[:, :2, :2] = y
    indefinite[:, :2, 2] = -y.sum(axis=2)
    indefinite[:, 2, :2] = -y.sum(axis=1)
    indefinite[:, 2, 2] = y.sum(axis=(1, 2))
    indefinite[:, 0, 0] += 1 / (2j * np.pi * frequency_hz * inductance)
    keep, drop = [2, 1], 0
    reduced = indefinite[:, keep][:, :, keep] - (
        indefinite[:, keep, drop][:, :, None]
        * indefinite[:, drop, keep][:, None, :]
        / indefinite[:, drop, drop][:, None, None]
    )
    expected = np.moveaxis(_s_from_y(reduced), 0, -1)
    np.testing.assert_allclose(result, expected, atol=1e-9)
    # The same two-port with an explicit third node for the reference gives the same answer.
    circuit_ground_gate = parse_circuit(
        f'N1 g d s file="{TRANSISTOR}"\nLg g 0 0.9n\n.twoport s 0 d 0', source="common gate"
    )
    np.testing.assert_allclose(circuit_ground_gate.s_parameters(frequency_hz), expected, atol=1e-9)
