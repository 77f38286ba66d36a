"""Bench-ready check, end to end: terminations, mixed mode, planes, DC facts, bounds, doubts.

Each test writes invented Touchstone files into ``tmp_path`` and runs ``oneport check`` in-process
(or the API on arrays), then compares with a reference from outside the project, named beside the
check: scikit-rf (``skrf.network.connect``, ``Network.se2gmm``, media lines cascaded with ``**``),
numpy.roots of the circuit's characteristic polynomial, closed forms derived by hand, METHODS.md §7
values and common practice. Circuits are lumped models; impedances are polynomials in s
(numerator, denominator, highest power first), so the same description gives both the sampled
data and the exact natural frequencies.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
import skrf

import oneport
from oneport import OnePort
from oneport.analysis import nyquist
from oneport.reading.preparation import PortSetup, prepare
from oneport.units import to_decibels

from helpers import Z0, gamma_of, one_port, run_cli, write_touchstone
from lumped import (
    Impedance,
    capacitor,
    circuit,
    impedance,
    inductor,
    parallel,
    resistor,
    right_half_plane_roots,
    series,
)

# CONVENTIONS.md: stable 0, unstable 3, inconclusive 4.
EXIT_CODES = {"stable": 0, "unstable": 3, "inconclusive": 4}

# --- files and the command line ----------------------------------------------------------------


def write_network(path: Path, network: skrf.Network) -> Path:
    """Write a scikit-rf network (one- or two-port, one real reference) with our writer."""
    reference = complex(network.z0[0, 0]).real
    return write_touchstone(path, network.f, np.moveaxis(network.s, 0, -1).squeeze(), reference)


def run_json(*argv: str | Path) -> tuple[int, dict]:
    """Run ``oneport check … --json --include-arrays``; return exit code and the JSON object."""
    code, out, err = run_cli(*argv, "--json", "--include-arrays")
    assert code in EXIT_CODES.values(), (code, err)
    data = json.loads(out)
    assert EXIT_CODES[data["verdict"]] == code
    return code, data


def complex_array(values: list[dict]) -> np.ndarray:
    """A JSON list of {"re", "im"} back to a complex array."""
    return np.array([complex(v["re"], v["im"]) for v in values])


def crossing_frequencies(data: dict) -> np.ndarray:
    """The crossing frequencies of a check's JSON, Hz."""
    return np.array([c["frequency_hz"] for c in data["crossings"]])


# --- shared invented circuits ------------------------------------------------------------------

# A tunnel-diode-like device Rs + sLs + (−Rd ∥ Cj) (METHODS §7), values of the shipped examples.
DIODE = series(resistor(4.0), inductor(0.6e-9), parallel(resistor(-80.0), capacitor(2e-12)))
# It oscillates into 10 Ω + 3 nH: L_T/(Rd·Cj) = 22.5 Ω > R_T = 14 Ω (METHODS §7, memory).
OSCILLATING_LOAD = series(resistor(10.0), inductor(3e-9))
WIDE_GRID_HZ = np.linspace(1e6, 6e9, 1601)


def test_the_shared_circuits_behave_as_stated():
    # source: numpy.roots of the characteristic polynomial; no RHP root in Z0 (the premise).
    assert right_half_plane_roots(DIODE, resistor(Z0)).size == 0
    assert right_half_plane_roots(DIODE, OSCILLATING_LOAD).size == 2


# --- two-port termination ------------------------------------------------------------------------

TERMINATION_GRID_HZ = np.linspace(10e6, 10e9, 1000)


def _terminated_device_networks() -> tuple[skrf.Network, skrf.Network]:
    """An invented two-port (diode in shunt between two series arms) and its termination.

    Port 1: 4 Ω, 0.6 nH in series, then −80 Ω ∥ 2 pF to ground, then 20 Ω in series to port 2.
    The termination, 300 Ω ∥ 0.3 pF, is measured in 75 Ω, so it must be referred to port 2's 50 Ω.
    """
    frequency = skrf.Frequency.from_f(TERMINATION_GRID_HZ, unit="Hz")
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    media_75 = skrf.media.DefinedGammaZ0(frequency, z0=75.0)
    two_port = (
        media.resistor(4.0)
        ** media.inductor(0.6e-9)
        ** media.shunt_capacitor(2e-12)
        ** media.shunt(media.resistor(-80.0) ** media.short())
        ** media.resistor(20.0)
    )
    termination = media_75.shunt_capacitor(0.3e-12) ** media_75.resistor(300.0) ** media_75.short()
    return two_port, termination


TERMINATED_DEVICE = series(
    resistor(4.0),
    inductor(0.6e-9),
    parallel(
        resistor(-80.0),
        capacitor(2e-12),
        series(resistor(20.0), parallel(resistor(300.0), capacitor(0.3e-12))),
    ),
)
TERMINATION_LOAD = series(resistor(5.0), inductor(3e-9))


def test_terminated_two_port_matches_scikit_rf_connect_and_the_roots(tmp_path):
    two_port, termination = _terminated_device_networks()
    device_path = write_network(tmp_path / "device.s2p", two_port)
    termination_path = write_network(tmp_path / "termination.s1p", termination)
    load_path = write_touchstone(
        tmp_path / "load.s1p",
        TERMINATION_GRID_HZ,
        gamma_of(impedance(TERMINATION_LOAD, TERMINATION_GRID_HZ)),
    )
    # source: scikit-rf skrf.network.connect (handles the 75 Ω / 50 Ω step itself)
    reference = skrf.network.connect(two_port, 1, termination, 0)
    prepared = prepare(device_path, PortSetup(terminate_path=str(termination_path)), "device")
    np.testing.assert_allclose(prepared.one_port.gamma, reference.s[:, 0, 0], atol=1e-12)
    assert prepared.one_port.reference_impedance_ohm == Z0

    code, data = run_json(
        "check", device_path, "--terminate", termination_path, "--load", load_path
    )
    np.testing.assert_allclose(
        complex_array(data["arrays"]["gamma_device"]), reference.s[:, 0, 0], atol=1e-12
    )
    expected = oneport.check(reference, load_path)
    assert data["verdict"] == expected.verdict
    assert data["encirclements"] == expected.encirclements
    # source: numpy.roots: a complex pair near 1.68 GHz, nothing real
    roots = right_half_plane_roots(TERMINATED_DEVICE, TERMINATION_LOAD)
    assert roots.size == 2 and np.all(roots.imag != 0)
    assert data["verdict"] == "unstable" and code == 3
    assert data["encirclements"] == roots.size
    # The crossing frequency is a Z0-dependent estimate of the mode (METHODS §1): within 10 %.
    (frequency,) = data["oscillation_frequencies_hz"]
    assert frequency == pytest.approx(abs(roots[0].imag) / (2 * np.pi), rel=0.1)


def test_termination_by_impedance_matches_scikit_rf_connect(tmp_path):
    two_port, _ = _terminated_device_networks()
    device_path = write_network(tmp_path / "device.s2p", two_port)
    media = skrf.media.DefinedGammaZ0(two_port.frequency, z0=Z0)
    # source: scikit-rf skrf.network.connect with a 300 Ω resistor to ground
    reference = skrf.network.connect(two_port, 1, media.resistor(300.0) ** media.short(), 0)
    prepared = prepare(device_path, PortSetup(terminate_impedance_ohm=300.0), "device")
    np.testing.assert_allclose(prepared.one_port.gamma, reference.s[:, 0, 0], atol=1e-12)


# --- mixed mode -----------------------------------------------------------------------------------

MIXED_GRID_HZ = np.linspace(10e6, 20e9, 2000)
# A balanced device measured on two ports (invented): a floating −200 Ω ∥ 0.4 pF between the
# two terminals (a cross-coupled pair), each terminal 2 kΩ ∥ 0.5 pF to ground.
FLOATING_CONDUCTANCE_S, FLOATING_CAPACITANCE_F = -1 / 200.0, 0.4e-12
GROUND_CONDUCTANCE_S, GROUND_CAPACITANCE_F = 1 / 2000.0, 0.5e-12
# Differential: −G ∥ C with G = 1/200 − 1/4000 S and C = 0.4 + 0.25 pF: 1/G = 210 Ω exceeds the
# 100 Ω differential reference, so Γ has no RHP pole there (METHODS §3).
DIFFERENTIAL_DEVICE = (
    np.poly1d([1.0]),
    np.poly1d(
        [
            FLOATING_CAPACITANCE_F + GROUND_CAPACITANCE_F / 2,
            FLOATING_CONDUCTANCE_S + GROUND_CONDUCTANCE_S / 2,
        ]
    ),
)
DIFFERENTIAL_LOAD = series(resistor(40.0), inductor(10e-9))


def _balanced_two_port(frequency_hz: np.ndarray) -> np.ndarray:
    """Single-ended S (n, 2, 2) of the balanced device, from its admittance matrix (scikit-rf)."""
    s = 2j * np.pi * frequency_hz
    floating = FLOATING_CONDUCTANCE_S + s * FLOATING_CAPACITANCE_F
    ground = GROUND_CONDUCTANCE_S + s * GROUND_CAPACITANCE_F
    admittance = np.empty((frequency_hz.size, 2, 2), dtype=complex)
    admittance[:, 0, 0] = admittance[:, 1, 1] = ground + floating
    admittance[:, 0, 1] = admittance[:, 1, 0] = -floating
    return skrf.network.y2s(admittance, z0=Z0)


def test_differential_ports_match_scikit_rf_se2gmm(tmp_path):
    s = _balanced_two_port(MIXED_GRID_HZ)
    device_path = write_touchstone(tmp_path / "balanced.s2p", MIXED_GRID_HZ, np.moveaxis(s, 0, -1))
    network = skrf.Network(frequency=skrf.Frequency.from_f(MIXED_GRID_HZ, unit="Hz"), s=s, z0=Z0)
    network.se2gmm(p=1)  # source: scikit-rf mixed-mode conversion, differential reference 2·Z0
    sdd11 = network.s[:, 0, 0]
    assert complex(network.z0[0, 0]).real == 2 * Z0
    # source: hand derivation: the differential one-port is the floating element ∥ half of each
    # ground element, Zdiff = 1/(Yf + Yg/2), seen in 100 Ω.
    z_differential = impedance(DIFFERENTIAL_DEVICE, MIXED_GRID_HZ)
    np.testing.assert_allclose(sdd11, (z_differential - 100) / (z_differential + 100), atol=1e-12)

    load_path = write_touchstone(
        tmp_path / "load.s1p",
        MIXED_GRID_HZ,
        gamma_of(impedance(DIFFERENTIAL_LOAD, MIXED_GRID_HZ), 100.0),
        100.0,
    )
    code, data = run_json("check", device_path, "--differential-ports", "1,2", "--load", load_path)
    assert data["reference_impedance_ohm"] == 2 * Z0
    np.testing.assert_allclose(complex_array(data["arrays"]["gamma_device"]), sdd11, atol=1e-12)
    differential = OnePort(
        frequency_hz=MIXED_GRID_HZ, gamma=sdd11, reference_impedance_ohm=100.0, source="sdd11"
    )
    expected = oneport.check(differential, load_path)
    assert (data["verdict"], data["encirclements"]) == (expected.verdict, expected.encirclements)
    # source: numpy.roots of Zdiff + ZL: a complex pair near 1.76 GHz
    roots = right_half_plane_roots(DIFFERENTIAL_DEVICE, DIFFERENTIAL_LOAD)
    assert roots.size == 2
    # −G ∥ C keeps its gain at every frequency, and the inductive load's |ΓL| tends to 1: |L| is
    # still above 1 at 20 GHz, so the loop cannot be closed towards infinity (METHODS §2).
    assert (data["verdict"], data["encirclements"], code) == ("inconclusive", None, 4)
    assert data["closure"]["high"]["founded"] is False


# --- reference planes -----------------------------------------------------------------------------


def _media(frequency_hz: np.ndarray) -> skrf.media.DefinedGammaZ0:
    """A lossless, dispersionless 50 Ω medium (β = ω/c) on a grid."""
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    speed_of_light = 299_792_458.0
    return skrf.media.DefinedGammaZ0(frequency, z0=Z0, gamma=1j * frequency.w / speed_of_light)


def test_ten_picoseconds_at_ten_gigahertz_is_seventy_two_degrees(tmp_path):
    grid_hz = np.array([5e9, 10e9, 15e9])
    media = _media(grid_hz)
    behind_line = media.line(10.0, unit="ps") ** media.open()
    # common practice: the loop phase of a one-way delay τ is 2·360°·f·τ = 72° at 10 GHz, 10 ps;
    # source: scikit-rf media line (10 ps) cascaded with an open
    assert np.degrees(np.angle(behind_line.s[1, 0, 0])) == pytest.approx(-72.0, abs=1e-9)
    open_path = write_touchstone(tmp_path / "open.s1p", grid_hz, np.ones(3, dtype=complex))
    added = prepare(open_path, PortSetup(delay_s=10e-12), "device").one_port
    assert np.degrees(np.angle(added.gamma[1])) == pytest.approx(-72.0, abs=1e-9)
    np.testing.assert_allclose(added.gamma, behind_line.s[:, 0, 0], atol=1e-12)


def test_removing_a_known_line_restores_the_bare_device(tmp_path):
    media = _media(WIDE_GRID_HZ)
    bare = gamma_of(impedance(DIODE, WIDE_GRID_HZ))
    bare_network = media.load(bare)  # a one-port with Γ = bare
    # source: scikit-rf media line (12 ps, matched) cascaded with ** in front of the device
    measured = media.line(12.0, unit="ps") ** bare_network
    bare_path = write_touchstone(tmp_path / "bare.s1p", WIDE_GRID_HZ, bare)
    measured_path = write_network(tmp_path / "measured.s1p", measured)
    load_path = write_touchstone(
        tmp_path / "load.s1p", WIDE_GRID_HZ, gamma_of(impedance(OSCILLATING_LOAD, WIDE_GRID_HZ))
    )
    _, truth = run_json("check", bare_path, "--load", load_path)
    code, shifted = run_json("check", measured_path, "--load", load_path, "--device-delay=-12ps")
    assert (shifted["verdict"], shifted["encirclements"]) == (
        truth["verdict"],
        truth["encirclements"],
    )
    assert (truth["verdict"], truth["encirclements"], code) == ("unstable", 2, 3)
    np.testing.assert_allclose(
        crossing_frequencies(shifted), crossing_frequencies(truth), rtol=1e-9
    )
    # Left in place, the 12 ps (52° of loop phase at 6 GHz) moves the crossings.
    _, uncorrected = run_json("check", measured_path, "--load", load_path)
    assert not np.allclose(
        crossing_frequencies(uncorrected)[: len(truth["crossings"])],
        crossing_frequencies(truth),
        rtol=1e-3,
    )


def test_fixture_deembedding_through_the_cli_matches_the_bare_device(tmp_path):
    media = _media(WIDE_GRID_HZ)
    bare = gamma_of(impedance(DIODE, WIDE_GRID_HZ))
    # An invented, lossy and mismatched fixture: 2 Ω, 15 ps of line, a 0.2 pF pad, a 0.3 nH wire.
    fixture = (
        media.resistor(2.0)
        ** media.line(15.0, unit="ps")
        ** media.shunt_capacitor(0.2e-12)
        ** media.inductor(0.3e-9)
    )
    measured = fixture ** media.load(bare)  # source: scikit-rf cascade, port 1 at the instrument
    fixture_path = write_network(tmp_path / "fixture.s2p", fixture)
    measured_path = write_network(tmp_path / "measured.s1p", measured)
    bare_path = write_touchstone(tmp_path / "bare.s1p", WIDE_GRID_HZ, bare)
    load_path = write_touchstone(
        tmp_path / "load.s1p", WIDE_GRID_HZ, gamma_of(impedance(OSCILLATING_LOAD, WIDE_GRID_HZ))
    )
    _, truth = run_json("check", bare_path, "--load", load_path)
    _, deembedded = run_json(
        "check", measured_path, "--load", load_path, "--device-fixture", fixture_path
    )
    np.testing.assert_allclose(complex_array(deembedded["arrays"]["gamma_device"]), bare, atol=1e-9)
    assert (deembedded["verdict"], deembedded["encirclements"]) == ("unstable", 2)
    assert (truth["verdict"], truth["encirclements"]) == ("unstable", 2)
    np.testing.assert_allclose(
        crossing_frequencies(deembedded), crossing_frequencies(truth), rtol=1e-9
    )
    assert "premise-through-fixture" in {w["code"] for w in deembedded["warnings"]}


# --- DC facts close the contour towards DC -------------------------------------------------------

# A bias network (invented): 50 Ω behind a 10 pF DC block, in parallel with 150 Ω + 100 nH.
BIAS_NETWORK = parallel(
    series(resistor(50.0), capacitor(10e-12)), series(resistor(150.0), inductor(100e-9))
)


def test_latch_up_below_the_sweep_needs_the_dc_resistances(tmp_path):
    device_grid_hz = np.linspace(200e6, 6e9, 1201)
    load_grid_hz = np.linspace(200e6, 6.5e9, 801)
    device_path = write_touchstone(
        tmp_path / "diode.s1p", device_grid_hz, gamma_of(impedance(DIODE, device_grid_hz))
    )
    load_path = write_touchstone(
        tmp_path / "bias.s1p", load_grid_hz, gamma_of(impedance(BIAS_NETWORK, load_grid_hz))
    )
    # source: numpy.roots: exactly one RHP root, and it is real (a latch-up, no frequency)
    roots = right_half_plane_roots(DIODE, BIAS_NETWORK)
    assert roots.size == 1 and roots[0].imag == 0

    code, blind = run_json("check", device_path, "--load", load_path)
    assert (blind["verdict"], blind["encirclements"], code) == ("inconclusive", None, 4)
    assert blind["closure"]["low"]["basis"] == "not-founded"

    # DC resistances by hand: device Rs − Rd = 4 − 80 = −76 Ω; bias network 150 Ω (block open).
    code, informed = run_json(
        "check",
        device_path,
        "--load",
        load_path,
        "--device-dc-resistance=-76ohm",
        "--load-dc-resistance",
        "150",
    )
    assert (informed["verdict"], code) == ("unstable", 3)
    assert informed["encirclements"] == roots.size
    assert informed["encirclements"] % 2 == 1 and informed["latch_up"] is True
    assert informed["closure"]["low"]["basis"] == "dc-resistances"
    result = oneport.check(
        device_path, load_path, device_dc_resistance_ohm=-76.0, load_dc_resistance_ohm=150.0
    )
    assert result.closures[0].basis == "dc-resistances"
    assert result.encirclements == roots.size


# --- worst-case load: the return-loss bound -------------------------------------------------------

BOUND_GRID_HZ = np.linspace(100e6, 3e9, 30)


@pytest.mark.parametrize("resistance_ohm", [100.0, 60.0, 250.0])
def test_return_loss_bound_of_a_pure_negative_resistance(tmp_path, resistance_ohm):
    # source: METHODS §6 closed form: −R in Z0 has |Γd| = (R + Z0)/(R − Z0); the load class
    # needs a return loss of 20·log10 of that.
    gamma = (resistance_ohm + Z0) / (resistance_ohm - Z0)
    required_db = 20 * np.log10(gamma)
    device_path = write_touchstone(
        tmp_path / "negative.s1p", BOUND_GRID_HZ, np.full(BOUND_GRID_HZ.size, gamma, complex)
    )
    code, out, err = run_cli("check", device_path, f"--load-return-loss={required_db + 0.01:.6f}dB")
    assert (code, err) == (0, ""), out
    assert out.startswith("GUARANTEED")  # the verdict first (CONVENTIONS.md)
    code, out, err = run_cli("check", device_path, f"--load-return-loss={required_db - 0.01:.6f}dB")
    assert (code, err) == (3, ""), out
    assert "not guaranteed" in out.splitlines()[0].lower()
    code, text, _ = run_cli(
        "check", device_path, f"--load-return-loss={required_db - 0.01:.6f}dB", "--json"
    )
    data = json.loads(text)
    assert data["verdict"] == "not-guaranteed"  # CONVENTIONS.md: the words of a guarantee
    assert data["required_return_loss"]["worst_db"] == pytest.approx(required_db, abs=1e-9)


# --- |Γ| uncertainty: the count is at stake exactly when the worst |ΔL| reaches the margin --------

# Device: a pure −100 Ω in 50 Ω, Γd = 3. Load: a 0.3 mismatch behind 1 ns of matched line,
# ΓL = 0.3·exp(−j·4πfτ). So L = 0.9·exp(−jθ) and min |1 − L| = 1 − 0.9 = 0.1 where θ = 0 mod 2π,
# at every multiple of 500 MHz, which the 10 MHz grid holds (derived by hand).
UNCERTAINTY_GRID_HZ = np.linspace(100e6, 3e9, 291)
DEVICE_GAMMA, LOAD_RHO, LINE_DELAY_S = 3.0, 0.3, 1e-9
MARGIN = 1.0 - DEVICE_GAMMA * LOAD_RHO


def _worst_change(device_error: float, load_error: float) -> float:
    """|Γd|·δL + |ΓL|·δd + δd·δL (METHODS §2, "Noise"; oneport's stated bound)."""
    return DEVICE_GAMMA * load_error + LOAD_RHO * device_error + device_error * load_error


@pytest.fixture
def uncertainty_files(tmp_path) -> tuple[Path, Path]:
    device = np.full(UNCERTAINTY_GRID_HZ.size, DEVICE_GAMMA, dtype=complex)
    load = LOAD_RHO * np.exp(-4j * np.pi * UNCERTAINTY_GRID_HZ * LINE_DELAY_S)
    return (
        write_touchstone(tmp_path / "device.s1p", UNCERTAINTY_GRID_HZ, device),
        write_touchstone(tmp_path / "load.s1p", UNCERTAINTY_GRID_HZ, load),
    )


def _equal_errors_at_the_margin() -> float:
    # δ² + (|Γd| + |ΓL|)·δ − margin = 0, the positive root (quadratic formula).
    total = DEVICE_GAMMA + LOAD_RHO
    return float(-total + np.sqrt(total**2 + 4 * MARGIN)) / 2


@pytest.mark.parametrize(
    ("errors", "expected"),
    [
        ((_equal_errors_at_the_margin() * 0.999,) * 2, "stable"),
        ((_equal_errors_at_the_margin() * 1.001,) * 2, "inconclusive"),
        ((0.01, (MARGIN - 0.3 * 0.01) / (3.0 + 0.01) * 0.999), "stable"),
        ((0.01, (MARGIN - 0.3 * 0.01) / (3.0 + 0.01) * 1.001), "inconclusive"),
    ],
)
def test_uncertainty_flips_the_verdict_exactly_at_the_margin(uncertainty_files, errors, expected):
    device_path, load_path = uncertainty_files
    device_error, load_error = (float(e) for e in errors)
    assert abs(_worst_change(device_error, load_error) - MARGIN) < 2e-3 * MARGIN
    stated = (
        f"{device_error!r}" if device_error == load_error else f"{device_error!r},{load_error!r}"
    )
    code, data = run_json("check", device_path, "--load", load_path, "--gamma-uncertainty", stated)
    assert data["verdict"] == expected and code == EXIT_CODES[expected]
    uncertainty = data["uncertainty"]
    # source: the closed form above: the slack is the margin less the worst change
    assert uncertainty["largest_loop_gain_change"] == pytest.approx(
        _worst_change(device_error, load_error), rel=1e-9
    )
    assert uncertainty["smallest_slack"] == pytest.approx(
        MARGIN - _worst_change(device_error, load_error), abs=1e-9
    )
    assert uncertainty["count_at_stake"] is (expected == "inconclusive")
    if expected == "inconclusive":
        # only the samples where θ = 0 mod 2π, the multiples of 500 MHz, are at stake
        ranges = uncertainty["at_stake_ranges_hz"]
        assert ranges == [[f, f] for f in np.arange(500e6, 3.01e9, 500e6)]


def test_without_uncertainty_the_margin_is_the_closed_form(uncertainty_files):
    device_path, load_path = uncertainty_files
    code, data = run_json("check", device_path, "--load", load_path)
    assert (data["verdict"], data["encirclements"], code) == ("stable", 0, 0)
    # source: hand derivation above, min |1 − L| = 1 − |Γd|·ρ = 0.1
    assert data["margins"]["min_distance_to_critical_point"] == pytest.approx(MARGIN, abs=1e-12)


# --- a resonance hidden between samples (Foster's reactance theorem) ------------------------------

COARSE_GRID_HZ = np.arange(10e6, 4e9 + 1.0, 10e6)  # 10 MHz steps: resolves loaded Q ≈ 50 at 1 GHz
FINE_GRID_HZ = np.arange(10e6, 4e9 + 1.0, 0.1e6)  # 100 times finer


def tank(resistance_ohm: float, quality_factor: float, resonance_hz: float) -> Impedance:
    """A parallel RLC tank of the given loaded Q: Rp ∥ L ∥ C with Q = Rp/(ω0·L)."""
    omega = 2 * np.pi * resonance_hz
    inductance = resistance_ohm / (quality_factor * omega)
    return parallel(
        resistor(resistance_ohm), inductor(inductance), capacitor(1 / (omega**2 * inductance))
    )


# A Q = 1000 tank at 1.006 GHz reached through a 0.65 nH wire (invented): the wire and the tank's
# capacitive side make a sharp series resonance near 1.0145 GHz, between two 10 MHz samples.
COUPLED_TANK = series(inductor(0.65e-9), tank(70.0, 1000.0, 1.006e9))
TANK_DEVICE = series(resistor(3.0), parallel(resistor(-60.0), capacitor(5e-12)))


def _check_on(grid_hz: np.ndarray, device: Impedance, load: Impedance):
    """``oneport.check`` of two circuits sampled on one grid (API, no files)."""
    return oneport.check(
        one_port(grid_hz, gamma_of(impedance(device, grid_hz)), "device"),
        one_port(grid_hz, gamma_of(impedance(load, grid_hz)), "load"),
    )


def test_resonance_between_samples_is_flagged_and_the_count_left_open():
    # source: numpy.roots: a complex pair near 1.005 GHz, so the true count is 2
    roots = right_half_plane_roots(TANK_DEVICE, COUPLED_TANK)
    assert roots.size == 2
    assert np.abs(roots.imag) / (2 * np.pi) == pytest.approx(1.005e9, rel=2e-3)
    assert right_half_plane_roots(TANK_DEVICE, resistor(Z0)).size == 0  # the premise holds

    coarse = _check_on(COARSE_GRID_HZ, TANK_DEVICE, COUPLED_TANK)
    codes = [w.code for w in coarse.warnings]
    assert "resonance-between-samples" in codes
    # Foster's theorem finds the series resonance; the tank's own (1.006 GHz) shows as an
    # isolated jump of gamma_load in the interval below it.
    (hidden,) = [r for r in coarse.hidden_resonances if r.kind != "jump"]
    assert hidden.start_hz < 1.0145e9 < hidden.stop_hz
    assert [(r.start_hz, r.stop_hz) for r in coarse.hidden_resonances if r.kind == "jump"] == [
        (1.0e9, 1.01e9)
    ]
    for feature in coarse.hidden_resonances:
        near = (coarse.frequency_hz >= feature.start_hz) & (coarse.frequency_hz <= feature.stop_hz)
        assert np.all(np.abs(coarse.gamma_device[near]) >= 1.0)
    assert coarse.verdict == "inconclusive"
    assert all(c.founded for c in coarse.closures)  # the doubt is the hidden feature alone
    # Without the test the count would be wrong: unwrapping the coarse samples gives 0, the phase
    # never stepping by more than about 35 degrees.
    low, high = coarse.closures
    unwrapped = nyquist.count_encirclements(
        coarse.loop_gain, np.array(low.sign_at_limit), np.array(high.sign_at_limit)
    )
    assert int(unwrapped) == 0 != roots.size
    assert np.degrees(coarse.largest_phase_step_rad) < 45.0
    # The 100 times finer grid resolves the resonance: no flag, and the count is the roots'.
    fine = _check_on(FINE_GRID_HZ, TANK_DEVICE, COUPLED_TANK)
    assert fine.hidden_resonances == ()
    assert (fine.verdict, fine.encirclements) == ("unstable", roots.size)


# METHODS §2's example: a plain Q = 1000 tank (Rp = 100 Ω) on a 10 MHz grid; the device
# 1 Ω + (−80 Ω ∥ 0.1 pF) has |Γd| ≈ 4 there. Im Z of the tank is only ±10 Ω (0.2·Z0) at the
# samples beside the resonance, yet the loop gain's hidden excursion encircles +1.
PLAIN_TANK = tank(100.0, 1000.0, 1.005e9)
PLAIN_TANK_DEVICE = series(resistor(1.0), parallel(resistor(-80.0), capacitor(0.1e-12)))
# This device keeps its gain up to about 180 GHz, so both grids go on logarithmically to 10 THz,
# where |L| < 1 closes the loop towards infinity (METHODS §2).
TAIL_HZ = np.geomspace(4.1e9, 1e13, 300)


def test_plain_high_q_tank_between_samples_is_not_called_stable():
    # source: numpy.roots: a complex pair at 1.005 GHz (total conductance 1/100 − 1/80 < 0)
    roots = right_half_plane_roots(PLAIN_TANK_DEVICE, PLAIN_TANK)
    assert roots.size == 2
    assert right_half_plane_roots(PLAIN_TANK_DEVICE, resistor(Z0)).size == 0
    fine = _check_on(np.concatenate([FINE_GRID_HZ, TAIL_HZ]), PLAIN_TANK_DEVICE, PLAIN_TANK)
    assert fine.encirclements == roots.size
    coarse = _check_on(np.concatenate([COARSE_GRID_HZ, TAIL_HZ]), PLAIN_TANK_DEVICE, PLAIN_TANK)
    assert coarse.verdict != "stable", (coarse.encirclements, [w.code for w in coarse.warnings])
    assert all(c.founded for c in coarse.closures)  # what keeps it open is the hidden tank
    assert any(r.start_hz < 1.005e9 < r.stop_hz for r in coarse.hidden_resonances)


# --- small-signal start-up estimates (Kurokawa, one Newton step) ----------------------------------

STARTUP_GRID_HZ = np.linspace(0.5e9, 1.5e9, 1001)


def _estimates(result, form: str, near_hz: float):
    """The estimate of one form whose X_T = 0 (or B_T = 0) crossing is nearest ``near_hz``."""
    found = [e for e in result.startup_estimates if e.form == form]
    assert found, [e.form for e in result.startup_estimates]
    return min(found, key=lambda e: abs(e.crossing_frequency_hz - near_hz))


def test_series_loop_estimate_matches_the_roots():
    device = resistor(-60.0)
    load = series(resistor(50.0), inductor(10e-9), capacitor(2.533e-12))
    # source: METHODS §7 series loop: roots 5.0e8 ± j6.263e9 1/s; numpy.roots agrees
    roots = right_half_plane_roots(device, load)
    assert roots.size == 2
    root = roots[roots.imag > 0][0]
    assert root.real == pytest.approx(5.0e8, rel=1e-3)
    assert root.imag == pytest.approx(6.263e9, rel=1e-3)
    result = _check_on(STARTUP_GRID_HZ, device, load)
    estimate = _estimates(result, "impedance", 1e9)
    assert estimate.grows and estimate.total_real_part == pytest.approx(-10.0, rel=1e-3)
    # One Newton step from jω0 is an estimate: δs = −R_T/Z′ = 10/(2L) = 5e8 1/s, exact for σ
    # here, and it keeps ω0 = 1/√(LC) (R′ = 0), 0.3 % above the root's 996.8 MHz. Tolerances:
    # 1 % on σ, 0.5 % on the frequency.
    assert estimate.sigma_per_s == pytest.approx(root.real, rel=1e-2)
    assert estimate.estimated_frequency_hz == pytest.approx(root.imag / (2 * np.pi), rel=5e-3)


def test_growth_with_positive_loop_resistance_and_falling_reactance_is_kept():
    # −180 Ω against a Q = 20, 200 Ω tank at 1 GHz: at X_T = 0, R_T = 200 − 180 = +20 Ω and the
    # tank's reactance falls (X′ < 0), yet the loop grows (METHODS §4: R_T·X′ < 0).
    negative_ohm, tank_ohm, quality = 180.0, 200.0, 20.0
    # (the resonance lies between samples; one exactly on a sample is the next test's case)
    device, load = resistor(-negative_ohm), tank(tank_ohm, quality, 1.0003e9)
    roots = right_half_plane_roots(device, load)  # source: numpy.roots
    assert roots.size == 2
    root = roots[roots.imag > 0][0]
    result = _check_on(STARTUP_GRID_HZ, device, load)
    estimate = _estimates(result, "impedance", 1e9)
    # (R_T is interpolated linearly across the peak of Re Z: within 0.1 Ω)
    assert estimate.total_real_part == pytest.approx(tank_ohm - negative_ohm, abs=0.1)
    assert estimate.grows and estimate.sigma_per_s > 0
    # Hand derivation: σ ≈ −R_T/X′ with X′ = −2Q·Rp/ω0 gives (Rp − R)/(2·Rp²·C), while the roots'
    # σ is (Rp − R)/(2·R·Rp·C): the Newton step is low by the factor R/Rp = 0.9. Tolerance 2 %.
    assert estimate.sigma_per_s / root.real == pytest.approx(negative_ohm / tank_ohm, rel=2e-2)
    # The admittance form suits this parallel-type loop: Y_T is linear in s near ω0, so its
    # Newton step gives σ = −G_T/(2C), the roots' own real part (tolerance 1 %).
    dual = _estimates(result, "admittance", 1e9)
    assert dual.grows
    assert dual.sigma_per_s == pytest.approx(root.real, rel=1e-2)
    # The estimates stand beside the count. A bare -180 ohm keeps its gain at every frequency,
    # so no sweep of data closes towards infinity (METHODS §2); as netlists, known everywhere,
    # the count is decided (truth: numpy.roots above).
    whole = oneport.check(circuit(device, "device"), circuit(load, "tank"))
    assert (whole.verdict, whole.encirclements) == ("unstable", roots.size)


def test_a_reactance_zero_exactly_on_a_sample_is_still_estimated():
    # The same loop with the tank at 1 GHz, a sample of the grid: Im Z_T is exactly 0 there.
    device, load = resistor(-180.0), tank(200.0, 20.0, 1e9)
    assert 1e9 in STARTUP_GRID_HZ
    result = _check_on(STARTUP_GRID_HZ, device, load)
    # source: numpy.roots: a growing pair near 1 GHz, which the estimates should show
    assert right_half_plane_roots(device, load).size == 2
    assert {e.form for e in result.startup_estimates} == {"impedance", "admittance"}


def test_a_loop_gain_real_exactly_on_a_sample_still_has_its_gain_margin():
    # −300 Ω (Γd = 1.4) against a 100 Ω tank at 1 GHz (Γ = 1/3): L = 0.4667 there, real.
    result = _check_on(STARTUP_GRID_HZ, resistor(-300.0), tank(100.0, 20.0, 1e9))
    # source: hand calculation, gain margin = −20·log10(1.4/3) = 6.62 dB
    assert result.margins.gain_margin == pytest.approx(3 / 1.4, rel=1e-6)  # linear inside
    assert to_decibels(result.margins.gain_margin) == pytest.approx(
        -20 * np.log10(1.4 / 3), rel=1e-6
    )
    # A bare −300 Ω keeps its gain above the sweep, so the verdict is inconclusive, and the
    # check/3 JSON gives gain and phase margins only under a stable verdict.
    assert result.verdict == "inconclusive"
    assert result.to_dict()["margins"]["gain_margin_db"] is None


def test_return_loss_bound_needs_a_sweep(tmp_path):
    # A bound "over frequency" from one point would claim a guarantee the data cannot give.
    device = tmp_path / "one_point.s1p"
    device.write_text("# GHz S RI R 50\n1 3 0\n")
    code, _, err = run_cli("check", device, "--load-return-loss", "15dB")
    assert code == 2
    assert len(err.strip().splitlines()) == 1
    assert "at least 5" in err


def test_foster_candidates_are_strict_sign_changes_of_im_gamma():
    # The docstring's rule written out interval by interval: Im Z from above +T·Z0 to below
    # −T·Z0 (a pole of Z), or the same on Im Y·Z0 (a zero), both samples reactive. Samples with
    # Im Γ exactly 0 start no interval, and a huge |Γ| raises no floating-point warning.
    from oneport.analysis import diagnostics

    gamma = np.array(
        [
            *(1e200 + 0j, 0.5 - 0.5j, 0.1 + 0.2j, 0.2 + 0j, -0.3 - 0.1j),  # huge, then a real one
            *(0.99 + 0.1j, 0.99 - 0.1j, -0.99 - 0.1j, -0.99 + 0.1j),  # a pole, then a zero of Z
            *(0.0 + 0.9j, 0.0 - 0.9j),
        ]
    )
    threshold, ratio = diagnostics.FOSTER_JUMP_THRESHOLD, diagnostics.FOSTER_REACTIVE_RATIO
    z = (1 + gamma) / (1 - gamma)
    expected = []
    for i in range(gamma.size - 1):
        a, b = gamma[i].imag, gamma[i + 1].imag
        if a > 0 > b:
            x = z[i : i + 2]
        elif a < 0 < b:
            x = 1 / z[i : i + 2]
        else:
            continue
        if np.all(np.abs(x.imag) > threshold) and np.all(np.abs(x.imag) >= ratio * np.abs(x.real)):
            expected.append((i, bool(a > 0)))
    (index,), parallel = diagnostics.foster_jump_indices(gamma)
    assert list(zip(index.tolist(), parallel.tolist(), strict=True)) == expected
    assert (5, True) in expected and (7, False) in expected  # the rule finds both kinds here
