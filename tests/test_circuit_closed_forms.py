"""Circuit engine against closed forms: characteristic polynomials, METHODS §7 reference circuits.

Sources are named beside each check: numpy.roots on polynomials built here, METHODS.md §7
formulas, common practice, or a textbook result recalled from memory.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from scipy.optimize import brentq

from oneport.circuit import Circuit, parse_circuit, read_circuit

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples" / "circuits"


def _impedance(gamma: np.ndarray, z0: float = 50.0) -> np.ndarray:
    return z0 * (1 + gamma) / (1 - gamma)


def _series(*parts: tuple[np.ndarray, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    numerator, denominator = parts[0]
    for n, d in parts[1:]:
        numerator = np.polyadd(np.polymul(numerator, d), np.polymul(n, denominator))
        denominator = np.polymul(denominator, d)
    return numerator, denominator


def _parallel(a: tuple[np.ndarray, np.ndarray], b: tuple[np.ndarray, np.ndarray]):
    (na, da), (nb, db) = a, b
    return np.polymul(na, nb), np.polyadd(np.polymul(na, db), np.polymul(nb, da))


def _r(value: float):
    return np.array([value]), np.array([1.0])


def _l(value: float):
    return np.array([value, 0.0]), np.array([1.0])


def _c(value: float):
    return np.array([1.0]), np.array([value, 0.0])


def _match(found: np.ndarray, expected: np.ndarray, rtol: float) -> None:
    assert found.size == expected.size, (found, expected)
    remaining = list(expected)
    for root in found:
        distances = [abs(root - other) for other in remaining]
        best = int(np.argmin(distances))
        assert distances[best] <= rtol * max(abs(root), 1.0), (root, remaining)
        remaining.pop(best)


def test_series_loop_roots_match_methods_reference() -> None:
    loop = parse_circuit(
        "Rd 1 0 -60\nRl 1 2 50\nLl 2 3 10n\nCl 3 0 2.533p\n.oneport 1", source="series loop"
    )
    roots = loop.natural_frequencies()  # the port left open: the loop as drawn
    # numpy.roots of L·C·s² + (Rd + Rl)·C·s + 1
    expected = np.roots([10e-9 * 2.533e-12, (-60 + 50) * 2.533e-12, 1.0])
    _match(roots, expected, rtol=1e-9)
    # METHODS.md §7: roots 5.0e8 ± j6.263e9 1/s (four figures)
    assert np.allclose(sorted(roots.imag), [-6.263e9, 6.263e9], rtol=1e-3)
    assert np.allclose(roots.real, 5.0e8, rtol=1e-2)


@pytest.mark.parametrize("seed", range(8))
def test_random_lumped_loops_roots_and_impedance(seed: int) -> None:
    generator = np.random.default_rng(100 + seed)
    rs, ls, rd, cj = (
        generator.uniform(1, 10),
        generator.uniform(0.2e-9, 2e-9),
        generator.uniform(40, 150),
        generator.uniform(0.5e-12, 4e-12),
    )
    rl, ll, cl, rp = (
        generator.uniform(5, 100),
        generator.uniform(1e-9, 20e-9),
        generator.uniform(0.2e-12, 5e-12),
        generator.uniform(50, 500),
    )
    device = _series(_r(rs), _l(ls), _parallel(_r(-rd), _c(cj)))
    load = _series(_r(rl), _parallel(_series(_l(ll), _r(1.0)), _parallel(_c(cl), _r(rp))))
    netlist = f"""
    Rs 1 a {rs!r}
    Ls a b {ls!r}
    Rd b 0 {-rd!r}
    Cj b 0 {cj!r}
    Rl 1 c {rl!r}
    Ll c 0 {ll!r} esr=1
    Cl c 0 {cl!r}
    Rp c 0 {rp!r}
    .oneport 1
    """
    loop = parse_circuit(netlist, source="loop")
    # numpy.roots of the characteristic polynomial n_d·d_L + n_L·d_d (METHODS §1)
    characteristic = np.polyadd(np.polymul(device[0], load[1]), np.polymul(load[0], device[1]))
    _match(loop.natural_frequencies(), np.roots(characteristic), rtol=1e-7)
    # The load alone, evaluated on jω, against its impedance polynomial ratio
    load_circuit = parse_circuit(
        "\n".join(
            line
            for line in netlist.splitlines()
            if line.strip()[:2] not in ("Rs", "Ls", "Rd", "Cj")
        ),
        source="load",
    )
    frequency_hz = np.linspace(1e6, 10e9, 97)
    s = 2j * np.pi * frequency_hz
    expected = np.polyval(load[0], s) / np.polyval(load[1], s)
    np.testing.assert_allclose(_impedance(load_circuit.gamma(frequency_hz)), expected, rtol=1e-9)


def test_tunnel_diode_cutoff_and_self_resonance() -> None:
    diode = read_circuit(EXAMPLES / "tunnel_diode.cir")
    values = diode.parameters
    rs, ls, rd, cj = values["RS"], values["LS"], values["RD"], values["CJ"]

    def impedance(frequency_hz: float) -> complex:
        return complex(_impedance(diode.gamma(np.array([frequency_hz])))[0])

    resistive = brentq(lambda f: impedance(f).real, 1e9, 10e9, xtol=1e-3, rtol=1e-14)
    reactive = brentq(lambda f: impedance(f).imag, 1e9, 10e9, xtol=1e-3, rtol=1e-14)
    # METHODS §7: f_r = sqrt(Rd/Rs − 1)/(2π·Rd·Cj), f_x = sqrt(1/(Ls·Cj) − 1/(Rd·Cj)²)/(2π)
    assert resistive == pytest.approx(math.sqrt(rd / rs - 1) / (2 * math.pi * rd * cj), rel=1e-9)
    assert reactive == pytest.approx(
        math.sqrt(1 / (ls * cj) - 1 / (rd * cj) ** 2) / (2 * math.pi), rel=1e-9
    )


@pytest.mark.parametrize(
    ("series_resistance", "series_inductance", "stable"),
    [
        (30.0, 2e-9, True),
        (90.0, 2e-9, False),
        (30.0, 6e-9, False),
        (5.0, 1e-9, False),
        (7.0, 1e-9, True),
    ],
)
def test_tunnel_diode_bias_stability_condition(
    series_resistance: float, series_inductance: float, stable: bool
) -> None:
    rd, cj = 80.0, 2e-12
    loop = (
        Circuit("biased diode")
        .resistor("Rt", "1", "2", series_resistance)
        .inductor("Lt", "2", "3", series_inductance)
        .resistor("Rd", "3", "0", -rd)
        .capacitor("Cj", "3", "0", cj)
        .port("1")
    )
    roots = loop.natural_frequencies(termination_ohm=0.0)  # the loop closed by a short
    # METHODS §7 (textbook result, memory): stable iff L_T/(Rd·Cj) < R_T < Rd
    assert stable == (series_inductance / (rd * cj) < series_resistance < rd)
    assert stable == bool(np.all(roots.real < 0))


def test_cross_coupled_pair_differential_resistance() -> None:
    pair = (
        Circuit("pair")
        .transconductance("G1", "d1", "0", "d2", "0", "GM")
        .transconductance("G2", "d2", "0", "d1", "0", "GM")
        .resistor("R1", "d1", "0", "RO")
        .resistor("R2", "d2", "0", "RO")
        .parameter("GM", 0.02)
        .parameter("RO", 2000.0)
        .port("d1", "d2")
    )
    gm = np.array([0.005, 0.02, 0.05])[:, None]
    ro = np.array([500.0, 2000.0, 10000.0])[None, :]
    gamma = pair.gamma(np.array([1e3, 1e6]), 50.0, GM=gm, RO=ro)
    assert gamma.shape == (3, 3, 2)
    # common practice: R_diff = −2·ro/(gm·ro − 1)
    expected = -2 * ro / (gm * ro - 1)
    np.testing.assert_allclose(_impedance(gamma[..., 0]), expected, rtol=1e-9)
    # And the shipped example has the pair's −105 ohm in parallel with its tank
    example = read_circuit(EXAMPLES / "cross_coupled_pair.cir")
    frequency_hz = np.array([3e9, 4e9])
    tank_only = (
        Circuit("tank")
        .inductor("L1", "d1", "0", 1.5e-9, quality_factor=12)
        .inductor("L2", "d2", "0", 1.5e-9, quality_factor=12)
        .capacitor("Ct", "d1", "d2", 0.4e-12)
        .port("d1", "d2")
    )
    admittance = 1 / _impedance(example.gamma(frequency_hz))
    pair_admittance = admittance - 1 / _impedance(tank_only.gamma(frequency_hz))
    values = example.parameters
    gm0, ro0 = values["GM"], values["RO"]
    np.testing.assert_allclose(pair_admittance, -(gm0 * ro0 - 1) / (2 * ro0), rtol=1e-9)


def test_negative_impedance_converter() -> None:
    nic = read_circuit(EXAMPLES / "negative_impedance_converter.cir")
    values = nic.parameters
    r1, r2, r3, a0, gbw = (values[k] for k in ("R1", "R2", "R3", "A0", "GBW"))
    frequency_hz = np.array([10.0, 1e3, 1e5])
    impedance = _impedance(nic.gamma(frequency_hz))
    # METHODS §7: Z_in = −R1·R3/R2 for an ideal op-amp (here at low frequency)
    assert impedance[0].real == pytest.approx(-r1 * r3 / r2, rel=1e-3)
    # Derived here for a finite gain A: Z_in = R1 / (1 − A/(1 + A·β)), β = R3/(R2 + R3)
    gain = 1 / (1 / a0 + 2j * np.pi * frequency_hz / (2 * np.pi * gbw))
    beta = r3 / (r2 + r3)
    np.testing.assert_allclose(impedance, r1 / (1 - gain / (1 + gain * beta)), rtol=1e-9)
    ideal = parse_circuit(
        ".opamp O1 out p n\nRf1 out p 1k\nRf2 out n 2k\nRg n 0 500\n.oneport p", source="ideal"
    )
    np.testing.assert_allclose(
        _impedance(ideal.gamma(np.array([1e3, 1e9]))), -r1 * r3 / r2, rtol=1e-9
    )


@pytest.mark.parametrize(("source_ohm", "stable"), [(100.0, True), (240.0, True), (260.0, False)])
def test_negative_impedance_converter_stable_only_below_its_resistance(
    source_ohm: float, stable: bool
) -> None:
    nic = read_circuit(EXAMPLES / "negative_impedance_converter.cir")
    roots = nic.natural_frequencies(termination_ohm=source_ohm, A0=1e9)
    # METHODS §7: with a single-pole op-amp the port is stable only into a source resistance
    # below R1·R3/R2 = 250 ohm (exact as a0 → ∞)
    assert stable == bool(np.all(roots.real < 0))
