"""Large-signal operating points (``oneport.oscillator``) against closed-form results.

Each check names its source: the describing-function results of METHODS §4, Kurokawa's
criterion worked by hand, and Taylor coefficients derived in the comments.
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from oneport.commands.outcome import exit_code
from oneport.products.oscillator import (
    IVDevice,
    Parasitics,
    TunnelDiodeModel,
    describing_conductance,
    oscillator,
    polynomial_current,
)
from oneport.reading.touchstone import OnePort

F0 = 1e9  # tank resonance, Hz
TANK_C = 10e-12  # junction capacitance, F: with the load's inductor, a tank at F0
TANK_L = 1.0 / ((2 * np.pi * F0) ** 2 * TANK_C)
Z0 = 50.0
#: The analysis impedance of the I–V devices: a device -G ∥ C with Z0·G = 1 would sit exactly
#: on the stability boundary in its own reference (a Γ pole at s = 0, METHODS §3), so the
#: premise of the small-signal count is stated in 25 ohm, where these devices are stable.
DEVICE_Z0 = 25.0
TANK_PARASITICS = Parasitics(junction_capacitance_f=TANK_C)  # the junction capacitance alone
BAND = (0.8e9, 1.2e9)


def wide_grid(low: float = BAND[0], high: float = BAND[1], points: int = 401) -> np.ndarray:
    """The band sampled evenly, with geometric wings from 1 MHz to 100 GHz.

    The operating points are sought in the band; the small-signal count that decides start-up
    needs the loop down towards DC and up to where it has no gain, as a measured load would
    need to be swept.
    """
    inner = np.linspace(low, high, points)
    below = np.geomspace(1e6, low, 120, endpoint=False)
    above = np.geomspace(high, 100e9, 121)[1:]
    return np.concatenate([below, inner, above])


def one_port(admittance: np.ndarray, frequency_hz: np.ndarray, name: str) -> OnePort:
    """A load given by its admittance, as a one-port in 50 ohm."""
    return OnePort(frequency_hz, (1 - Z0 * admittance) / (1 + Z0 * admittance), Z0, name)


def shunt_load(conductance_s: float) -> OnePort:
    """A load conductance in parallel with the tank inductor."""
    f = wide_grid()
    return one_port(conductance_s + 1.0 / (2j * np.pi * f * TANK_L), f, "shunt load")


def polynomial_device(
    coefficients: tuple[float, ...],
    amplitude_max_v: float,
    parasitics: Parasitics = TANK_PARASITICS,
) -> IVDevice:
    """i(v) = sum c_k v^k about a bias of 0 V, with ``parasitics`` (by default TANK_C across it).

    Parameters
    ----------
    coefficients : tuple of float
        c_0, c_1, … of the I–V polynomial, A/V^k.
    amplitude_max_v : float
        Largest junction amplitude searched, V (the smallest is 1 mV).
    parasitics : Parasitics
        The linear parasitics around the junction.

    Returns
    -------
    IVDevice
        Searched in BAND, analysed in DEVICE_Z0.
    """
    return IVDevice(
        current=polynomial_current(coefficients, 0.0),
        curve_kind="polynomial",
        bias_voltage_v=0.0,
        amplitude_min_v=1e-3,
        amplitude_max_v=amplitude_max_v,
        parasitics=parasitics,
        reference_impedance_ohm=DEVICE_Z0,
        frequency_start_hz=BAND[0],
        frequency_stop_hz=BAND[1],
    )


# --- the cubic device (METHODS §4) -----------------------------------------------------------

G1_CUBIC, G3_CUBIC = 20e-3, 0.5  # i = -g1 v + g3 v^3, S and A/V^3


@pytest.mark.parametrize("load_conductance", [6e-3, 10e-3])
def test_cubic_amplitude_power_and_rates(load_conductance: float) -> None:
    # Source: METHODS §4 (describing function of i = -g1 v + g3 v^3): G(A) = -g1 + (3/4) g3 A^2,
    # so with G_L in parallel: A = sqrt(4 (g1 - G_L) / (3 g3)), P = G_L A^2 / 2, at the tank
    # resonance 1/(2 pi sqrt(L C)).
    result = oscillator(
        polynomial_device((0.0, -G1_CUBIC, 0.0, G3_CUBIC), 0.5), shunt_load(load_conductance)
    )
    amplitude = math.sqrt(4 * (G1_CUBIC - load_conductance) / (3 * G3_CUBIC))
    assert result.verdict == "settles" and exit_code(result.verdict) == 0
    assert result.form == "admittance" and result.starts_from_noise
    (point,) = result.operating_points
    assert point.amplitude_quantity == "port_peak_voltage"
    assert point.frequency_hz == pytest.approx(F0, rel=1e-7)
    assert point.amplitude == pytest.approx(amplitude, rel=1e-6)
    assert point.load_power_w == pytest.approx(0.5 * load_conductance * amplitude**2, rel=1e-6)
    assert point.device_added_power_w == pytest.approx(point.load_power_w, rel=1e-6)
    assert point.kurokawa_stable
    # By hand (Kurokawa, admittance form): dG_T/dA = (3/2) g3 A, dB_T/dw = 2C, dB_T/dA =
    # dG_T/dw = 0, so S = 3 g3 A C and the rate A S / |dY/dw|^2 = 3 g3 A^2 / (4 C)
    # = (g1 - G_L) / C, the van der Pol amplitude equation's linearised decay (common practice).
    assert point.decay_rate_per_s == pytest.approx((G1_CUBIC - load_conductance) / TANK_C, rel=1e-4)
    assert point.stability_index == pytest.approx(3 * G3_CUBIC * amplitude * TANK_C, rel=1e-4)
    # Start-up: the small-signal count at the smallest amplitude a = 1 mV is N = 2, and the
    # pair it establishes is the parallel G_T, C, L circuit's: s^2 + (G_T/C) s + 1/(LC) = 0
    # (textbook), sigma = -G_T/(2C) = (g1 - G_L - (3/4) g3 a^2)/(2C),
    # w = sqrt(1/(LC) - sigma^2).
    assert result.start_up.encirclements == 2 and result.start_up.modes_located
    (mode,) = result.start_up.natural_frequencies
    small = 1e-3
    sigma = (G1_CUBIC - load_conductance - 0.75 * G3_CUBIC * small**2) / (2 * TANK_C)
    omega = math.sqrt(1 / (TANK_L * TANK_C) - sigma**2)
    assert mode.sigma_per_s == pytest.approx(sigma, rel=1e-3)
    assert mode.frequency_hz == pytest.approx(omega / (2 * np.pi), rel=1e-4)
    assert result.at_largest_level.encirclements == 0
    # External Q of the load alone (METHODS §4, admittance dual): (w0 / (2 G_L)) dB_L/dw with
    # B_L = -1/(w L), dB_L/dw = 1/(w0^2 L) = C; the locking coefficient is f0 / Q_ext.
    q = 2 * np.pi * F0 * TANK_C / (2 * load_conductance)
    assert point.pulling.external_q == pytest.approx(q, rel=1e-4)
    assert point.pulling.locking_coefficient_hz == pytest.approx(F0 / q, rel=1e-4)
    # Kurokawa 1973 (from memory): one-sided range (f0/Q) sqrt(P_inj/P_osc), here at -20 dB.
    assert point.pulling.locking_half_range_hz == pytest.approx(0.1 * F0 / q, rel=1e-4)


def test_cubic_power_peaks_at_half_the_device_conductance() -> None:
    # Source: METHODS §4: P(G_L) = (2/(3 g3)) G_L (g1 - G_L) peaks at G_L = g1/2 (2:1 ratio).
    conductances = G1_CUBIC * np.array([0.3, 0.4, 0.5, 0.6, 0.7])
    powers = []
    for conductance in conductances:
        result = oscillator(
            polynomial_device((0.0, -G1_CUBIC, 0.0, G3_CUBIC), 0.5), shunt_load(conductance)
        )
        powers.append(result.operating_points[0].load_power_w)
    expected = 2 / (3 * G3_CUBIC) * conductances * (G1_CUBIC - conductances)
    np.testing.assert_allclose(powers, expected, rtol=1e-6)
    assert conductances[int(np.argmax(powers))] == pytest.approx(G1_CUBIC / 2)


def test_no_oscillation_when_the_load_takes_more_than_the_device_gives() -> None:
    # Source: METHODS §4: G(A) = -g1 + (3/4) g3 A^2 > -G_L for all A when G_L > g1.
    result = oscillator(
        polynomial_device((0.0, -G1_CUBIC, 0.0, G3_CUBIC), 0.5), shunt_load(1.5 * G1_CUBIC)
    )
    assert result.verdict == "no-oscillation" and exit_code(result.verdict) == 3
    assert not result.starts_from_noise and result.operating_points == ()


def test_stable_point_beyond_the_largest_amplitude_is_reported_outside_the_data() -> None:
    # Source: METHODS §4: the cubic settles at A = 0.2 V for G_L = 5 mS; data up to 0.15 V.
    result = oscillator(polynomial_device((0.0, -G1_CUBIC, 0.0, G3_CUBIC), 0.15), shunt_load(5e-3))
    assert math.sqrt(4 * (G1_CUBIC - 5e-3) / (3 * G3_CUBIC)) == pytest.approx(0.2)
    assert result.verdict == "outside-data" and exit_code(result.verdict) == 4
    # At 0.15 V, G(A) + G_L = -11.6 mS + 5 mS < 0: the pair still grows (count 2).
    assert result.at_largest_level.encirclements == 2
    assert "amplitude_max_v" in " ".join(result.next_steps)


# --- the quintic device with hard excitation --------------------------------------------------

G1_HARD, G3_HARD, G5_HARD, G_LOAD_HARD = 2e-3, 1.0, 8.0, 5e-3


def hard_excitation_amplitudes() -> tuple[float, float]:
    """Roots of G_T(A) = 0 for i = g1 v - g3 v^3 + g5 v^5 with G_L in parallel.

    Describing function, derived: with v = A cos(theta), (1/(pi A)) integral of v^n cos(theta)
    over a period is A^(n-1) times (1/pi) integral cos^(n+1) = 3/4 (n = 3) and 5/8 (n = 5), so
    G1(A) = g1 - (3/4) g3 A^2 + (5/8) g5 A^4. G_T = G1 + G_L = 0 is a quadratic in x = A^2:
    (5/8) g5 x^2 - (3/4) g3 x + (g1 + G_L) = 0, here 5 x^2 - 0.75 x + 0.007 = 0, so x = 0.01 or
    x = 0.14 (discriminant 0.4225 = 0.65^2).
    """
    a, b, c = 5 / 8 * G5_HARD, -3 / 4 * G3_HARD, G1_HARD + G_LOAD_HARD
    root = math.sqrt(b * b - 4 * a * c)
    return math.sqrt((-b - root) / (2 * a)), math.sqrt((-b + root) / (2 * a))


def test_quintic_hard_excitation_two_points_smaller_unstable() -> None:
    device = polynomial_device((0.0, G1_HARD, 0.0, -G3_HARD, 0.0, G5_HARD), 0.5)
    result = oscillator(device, shunt_load(G_LOAD_HARD))
    small, large = hard_excitation_amplitudes()
    assert (small, large) == pytest.approx((0.1, math.sqrt(0.14)))
    assert result.verdict == "hard-excitation" and exit_code(result.verdict) == 3
    # Small-signal conductance g1 + G_L > 0: no growth from noise (METHODS §4 start-up).
    assert not result.starts_from_noise
    lower, upper = result.operating_points
    assert lower.amplitude == pytest.approx(small, rel=1e-6)
    assert upper.amplitude == pytest.approx(large, rel=1e-6)
    # Kurokawa by hand: B_T does not depend on A and dB_T/dw = 2C > 0, so sign S = sign dG_T/dA
    # = sign(A (-(3/2) g3 + (5/2) g5 A^2)): -1.3 A at A^2 = 0.01 (unstable), +1.3 A at 0.14.
    assert not lower.kurokawa_stable and upper.kurokawa_stable
    for point, slope in ((lower, -1.3 * small), (upper, 1.3 * large)):
        assert point.stability_index == pytest.approx(slope * 2 * TANK_C, rel=1e-4)
        # rate A S / |dY/dw|^2 = A slope 2C / (2C)^2
        assert point.decay_rate_per_s == pytest.approx(
            point.amplitude * slope / (2 * TANK_C), rel=1e-4
        )
    assert "above 100 mV" in " ".join(result.reasons)


# --- drive-level files generated from the describing function ---------------------------------

G1_DRIVE, G3_DRIVE, G_LOAD_DRIVE = 10e-3, 0.5, 4e-3  # Z0 g1 = 0.5: stable on a 50 ohm VNA


def cubic_admittance(amplitude_v: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
    # METHODS §4: G(A) = -g1 + (3/4) g3 A^2, in parallel with the junction capacitance.
    return -G1_DRIVE + 0.75 * G3_DRIVE * amplitude_v**2 + 2j * np.pi * frequency_hz * TANK_C


def write_s1p(path: Path, frequency_hz: np.ndarray, gamma: np.ndarray, comment: str) -> None:
    rows = [f"! {comment}", "# GHz S RI R 50"]
    rows += [
        f"{f / 1e9:.12f} {g.real:.12e} {g.imag:.12e}"
        for f, g in zip(frequency_hz, gamma, strict=True)
    ]
    path.write_text("\n".join(rows) + "\n")


def write_load(path: Path) -> None:
    """The shunt load as Z parameters in 75 ohm (Touchstone 1.x stores z = Z/R), own grid."""
    f = wide_grid(0.75e9, 1.25e9, 301)
    admittance = G_LOAD_DRIVE + 1.0 / (2j * np.pi * f * TANK_L)
    z = 1.0 / (admittance * 75.0)
    rows = ["! test load", "# GHz Z RI R 75"]
    rows += [f"{x / 1e9:.12f} {v.real:.12e} {v.imag:.12e}" for x, v in zip(f, z, strict=True)]
    path.write_text("\n".join(rows) + "\n")


def amplitude_at_incident_power(power_w: float, frequency_hz: np.ndarray) -> np.ndarray:
    """Junction amplitude for an incident wave: A |1 + Z0 Yd(A)| = 2 sqrt(2 Z0 P), bisection.

    The port voltage is V+ (1 + gamma) = 2 V+ / (1 + Z0 Yd) with V+ = sqrt(2 Z0 P) (peak); the
    left side rises with A here since 1 + Z0 G(A) >= 1 - Z0 g1 = 0.5 and grows with A.
    """
    target = 2 * math.sqrt(2 * Z0 * power_w)
    low, high = np.zeros_like(frequency_hz), np.full_like(frequency_hz, 2.0)
    for _ in range(100):
        middle = 0.5 * (low + high)
        above = middle * np.abs(1 + Z0 * cubic_admittance(middle, frequency_hz)) > target
        low, high = np.where(above, low, middle), np.where(above, middle, high)
    return 0.5 * (low + high)


def write_drive_levels(folder: Path, quantity: str) -> Path:
    f = wide_grid(points=201)
    if quantity == "peak_voltage_v":
        levels = np.linspace(0.02, 0.3, 15)
        amplitudes = [np.full_like(f, level) for level in levels]
    else:
        levels = np.arange(-26.0, 2.0, 2.0)  # dBm: about 9 mV to 0.2 V at the junction
        amplitudes = [amplitude_at_incident_power(1e-3 * 10 ** (p / 10), f) for p in levels]
    lines = ['kind = "drive-levels"']
    for index, (level, amplitude) in enumerate(zip(levels, amplitudes, strict=True)):
        admittance = cubic_admittance(amplitude, f)
        write_s1p(
            folder / f"level{index}.s1p", f, (1 - Z0 * admittance) / (1 + Z0 * admittance), "test"
        )
        lines += ["[[level]]", f"{quantity} = {float(level)!r}", f'file = "level{index}.s1p"']
    manifest = folder / f"{quantity}.toml"
    manifest.write_text("\n".join(lines) + "\n")
    return manifest


@pytest.mark.parametrize("quantity", ["peak_voltage_v", "incident_power_dbm"])
def test_drive_level_files_give_the_iv_operating_point(tmp_path: Path, quantity: str) -> None:
    # Source: the same describing function (METHODS §4) evaluated directly and sampled into
    # Touchstone files at drive levels; the operating point must agree.
    write_load(tmp_path / "load.s1p")
    manifest = write_drive_levels(tmp_path, quantity)
    iv_toml = tmp_path / "cubic.toml"
    iv_toml.write_text(
        'kind = "iv-curve"\nbias_voltage_v = 0.0\namplitude_max_v = 0.4\n'
        'frequency_start_hz = "0.8GHz"\nfrequency_stop_hz = "1.2GHz"\n'
        f"[iv]\npolynomial_coefficients = [0.0, {-G1_DRIVE!r}, 0.0, {G3_DRIVE!r}]\n"
        f"[parasitics]\njunction_capacitance_f = {TANK_C!r}\n"
    )
    direct = oscillator(iv_toml, tmp_path / "load.s1p")
    sampled = oscillator(manifest, tmp_path / "load.s1p")
    expected = math.sqrt(4 * (G1_DRIVE - G_LOAD_DRIVE) / (3 * G3_DRIVE))  # METHODS §4
    assert direct.verdict == sampled.verdict == "settles"
    (one,), (other,) = direct.operating_points, sampled.operating_points
    assert one.amplitude == pytest.approx(expected, rel=1e-6)
    names = {"peak_voltage_v": "port_peak_voltage", "incident_power_dbm": "incident_power"}
    assert other.drive_quantity == names[quantity]
    assert other.frequency_hz == pytest.approx(one.frequency_hz, rel=1e-5)
    assert other.amplitude == pytest.approx(one.amplitude, rel=2e-3)
    assert other.load_power_w == pytest.approx(one.load_power_w, rel=4e-3)
    assert other.kurokawa_stable and one.kurokawa_stable
    # Both rates are in port peak voltage (incident power converted first, METHODS §4).
    assert other.decay_rate_per_s == pytest.approx(one.decay_rate_per_s, rel=2e-2)
    assert sampled.load_input.file_reference_impedance_ohm == 75.0


# --- the tunnel-diode model against its cubic approximation -----------------------------------

TUNNEL = TunnelDiodeModel(
    peak_current_a=5e-3, peak_voltage_v=0.06, saturation_current_a=1e-12, emission_voltage_v=0.026
)


def tunnel_taylor(voltage: float) -> list[float]:
    """i^(k)(V)/k! for k = 0..7 of the tunnelling and diode terms, derived by hand.

    With x = V/Vp, d^k/dx^k [x e^(1-x)] = (-1)^k (x - k) e^(1-x) (induction: differentiate
    once more), so d^k i_t/dV^k = Ip (-1)^k (x - k) e^(1-x) / Vp^k; the diode term gives
    Is e^(V/Ve) / Ve^k for k >= 1.
    """
    x = voltage / TUNNEL.peak_voltage_v
    coefficients = []
    for k in range(8):
        tunnelling = (
            TUNNEL.peak_current_a * (-1) ** k * (x - k) * math.exp(1 - x) / TUNNEL.peak_voltage_v**k
        )
        diode = TUNNEL.saturation_current_a * math.exp(voltage / TUNNEL.emission_voltage_v)
        diode = diode / TUNNEL.emission_voltage_v**k if k else diode - TUNNEL.saturation_current_a
        coefficients.append((tunnelling + diode) / math.factorial(k))
    return coefficients


def test_tunnel_diode_describing_function_matches_its_cubic_near_the_inflection() -> None:
    # At the tunnelling term's inflection V0 = 2 Vp: i1 = -Ip/(e Vp) = -30.657 mS (the steepest
    # negative conductance, -32.6 ohm) and i3 = Ip/(6 e Vp^3) = 1.4193 A/V^3 (hand arithmetic,
    # the diode term adds 3.8e-9 S and 8e-6 A/V^3 at 0.12 V).
    bias = 2 * TUNNEL.peak_voltage_v
    taylor = tunnel_taylor(bias)
    assert taylor[1] == pytest.approx(-0.030657, rel=1e-4)
    assert taylor[3] == pytest.approx(1.4193, rel=1e-4)
    assert taylor[0] == pytest.approx(float(TUNNEL.current(np.array(bias))), rel=1e-12)
    for amplitude in (0.002, 0.005, 0.01):
        measured = float(describing_conductance(TUNNEL.current, bias, amplitude))
        cubic = taylor[1] + 0.75 * taylor[3] * amplitude**2
        # Next odd terms of G1 (even ones do not reach the fundamental): (5/8) i5 A^4 and
        # (35/64) i7 A^6 ((1/pi) integral of cos^6 and cos^8 over a period).
        quintic = 5 / 8 * taylor[5] * amplitude**4
        assert abs(measured - cubic) <= 1.01 * abs(quintic) + 1e-15
        remainder = measured - cubic - quintic
        assert abs(remainder) <= 2 * abs(35 / 64 * taylor[7] * amplitude**6) + 1e-15


def test_tunnel_diode_small_signal_limit_is_the_slope() -> None:
    # Source: G1(A) -> di/dV at V0 as A -> 0 (the describing function's small-signal limit).
    for bias in (0.03, 0.1, 0.2):
        slope = tunnel_taylor(bias)[1]
        assert float(describing_conductance(TUNNEL.current, bias, 1e-6)) == pytest.approx(
            slope, rel=1e-6
        )


# --- sign conventions: impedance and admittance descriptions -----------------------------------


def test_impedance_and_admittance_forms_agree_on_every_verdict() -> None:
    # Source: Kurokawa's criterion in either form; at a root Z_T = Y_T / (Yd YL), so
    # S_Z = S_Y / |Yd YL|^2 in one amplitude variable and the sign cannot differ.
    device = polynomial_device((0.0, G1_HARD, 0.0, -G3_HARD, 0.0, G5_HARD), 0.5)
    load = shunt_load(G_LOAD_HARD)
    by_admittance = oscillator(device, load, form="admittance")
    by_impedance = oscillator(device, load, form="impedance")
    assert by_admittance.verdict == by_impedance.verdict == "hard-excitation"
    assert by_impedance.amplitude_quantity == "port_peak_current"
    assert by_admittance.starts_from_noise == by_impedance.starts_from_noise
    for y_point, z_point in zip(
        by_admittance.operating_points, by_impedance.operating_points, strict=True
    ):
        assert y_point.kurokawa_stable == z_point.kurokawa_stable
        assert y_point.frequency_hz == pytest.approx(z_point.frequency_hz, rel=1e-9)
        assert y_point.port_peak_voltage_v == pytest.approx(z_point.port_peak_voltage_v, rel=1e-6)
        assert np.sign(y_point.stability_index) == np.sign(z_point.stability_index)
        # The current amplitude is the voltage times |Yd|.
        assert z_point.amplitude == pytest.approx(z_point.port_peak_current_a, rel=1e-12)


def test_load_given_as_z_or_y_parameters_gives_the_same_result(tmp_path: Path) -> None:
    # Source: Touchstone 1.x stores z = Z/R and y = Y R (Touchstone specification); one load.
    f = wide_grid()
    admittance = G_LOAD_HARD + 1.0 / (2j * np.pi * f * TANK_L)
    for parameter, values in (("Z", 1 / (admittance * Z0)), ("Y", admittance * Z0)):
        rows = [f"# GHz {parameter} RI R 50"]
        rows += [
            f"{x / 1e9:.12f} {v.real:.12e} {v.imag:.12e}" for x, v in zip(f, values, strict=True)
        ]
        (tmp_path / f"load_{parameter}.s1p").write_text("\n".join(rows) + "\n")
    device = polynomial_device((0.0, G1_HARD, 0.0, -G3_HARD, 0.0, G5_HARD), 0.5)
    results = [oscillator(device, tmp_path / f"load_{p}.s1p") for p in "ZY"]
    assert results[0].verdict == results[1].verdict == "hard-excitation"
    for a, b in zip(results[0].operating_points, results[1].operating_points, strict=True):
        assert a.kurokawa_stable == b.kurokawa_stable
        assert a.amplitude == pytest.approx(b.amplitude, rel=1e-8)


def test_a_form_that_does_not_suit_the_device_keeps_the_right_stability() -> None:
    # In a broad loop (Q ~ 0.8) the port current of a parallel cubic device falls as its voltage
    # rises: I = A |G(A) + jwC| with |G| shrinking faster than A grows (by hand: dI/dA < 0 at
    # A = 0.179 V). Stability is then judged in the device's own level variable (METHODS §4:
    # the sign of S survives a monotone change of variable, the current is not one here).
    device = polynomial_device(
        (0.0, -G1_CUBIC, 0.0, G3_CUBIC), 0.5, Parasitics(junction_capacitance_f=1e-12)
    )
    f = wide_grid(0.5e9, 1.5e9, 801)
    load = one_port(8e-3 + 1.0 / (2j * np.pi * f * 25.33e-9), f, "broad load")
    device = replace(device, frequency_start_hz=0.5e9, frequency_stop_hz=1.5e9)
    forced = oscillator(device, load, form="impedance")
    (point,) = forced.operating_points
    assert point.kurokawa_stable and point.stability_variable == "junction_peak_voltage"
    assert not point.amplitude_increasing
    assert {"amplitude-not-increasing", "low-loaded-q"} <= {w.code for w in forced.warnings}
    automatic = oscillator(device, load)
    assert automatic.form == "admittance" and automatic.verdict == "settles"


def test_a_series_tuned_loop_switches_to_the_impedance_form() -> None:
    # Closed form (METHODS §4 cubic describing function and circuit algebra): the junction
    # (G ∥ C) behind Ls into R_L oscillates where 1/(G + jwC) = -(R_L + jwLs), i.e.
    # w^2 = (Ls/C - R_L^2)/Ls^2 and G = -R_L C / Ls, so A_j^2 = 4 (g1 - R_L C/Ls) / (3 g3). Tuned
    # near Ls-C series resonance the port voltage, about A_j w Ls |G(A_j)|, falls as A_j rises
    # (d/dA [A (g1 - (3/4) g3 A^2)] = g1 - (9/4) g3 A^2 < 0 here) while the current A_j w C rises.
    inductance, resistance = TANK_L, 2.0
    device = polynomial_device(
        (0.0, -G1_CUBIC, 0.0, G3_CUBIC),
        0.5,
        Parasitics(series_inductance_h=inductance, junction_capacitance_f=TANK_C),
    )
    f = wide_grid()
    gamma = np.full(f.shape, (resistance - Z0) / (resistance + Z0), dtype=complex)
    load = OnePort(f, gamma, Z0, "2 ohm")
    automatic = oscillator(device, load)
    omega = math.sqrt((inductance / TANK_C - resistance**2) / inductance**2)
    junction = math.sqrt(4 * (G1_CUBIC - resistance * TANK_C / inductance) / (3 * G3_CUBIC))
    assert automatic.form == "impedance" and "falls" in automatic.form_reason
    assert automatic.verdict == "settles"
    (point,) = automatic.operating_points
    assert point.frequency_hz == pytest.approx(omega / (2 * np.pi), rel=1e-7)
    assert point.drive_level == pytest.approx(junction, rel=1e-6)
    assert point.kurokawa_stable and point.amplitude_increasing
    # P = R_L I^2 / 2 with I = A_j |G + jwC| at the point.
    current = junction * abs(-resistance * TANK_C / inductance + 1j * omega * TANK_C)
    assert point.load_power_w == pytest.approx(0.5 * resistance * current**2, rel=1e-5)
    forced = oscillator(device, load, form="admittance")
    assert forced.operating_points[0].kurokawa_stable
    assert "amplitude-not-increasing" in {w.code for w in forced.warnings}


# --- several modes ----------------------------------------------------------------------------


def test_two_resonances_give_two_stable_points_and_mode_jumping() -> None:
    # Two parallel tanks and a 30 ohm resistor in series, shunted by G_L: at both tank
    # resonances the branch is open, so the load admittance is G_L there and its susceptance
    # rises through zero (Foster), and the cubic device (no capacitance) finds G(A) = -G_L
    # twice, each with dG/dA > 0 and dB/dw > 0: both Kurokawa-stable (by hand). The resistor
    # makes the load resistive towards DC and infinity, where the small-signal count closes.
    f = wide_grid(points=800)  # no sample on a resonance (the tanks are lossless)
    omega = 2 * np.pi * f
    tanks = [(0.9e9, 10e-12), (1.1e9, 10e-12)]
    impedance = 30.0 + sum(
        1.0 / (1j * omega * c + 1.0 / (1j * omega / ((2 * np.pi * f0) ** 2 * c))) for f0, c in tanks
    )
    load = one_port(8e-3 + 1.0 / impedance, f, "two tanks")
    device = polynomial_device((0.0, -G1_CUBIC, 0.0, G3_CUBIC), 0.5, Parasitics())
    result = oscillator(device, load)
    assert result.verdict == "mode-jumping" and exit_code(result.verdict) == 3
    frequencies = sorted(p.frequency_hz for p in result.operating_points)
    assert frequencies == pytest.approx([0.9e9, 1.1e9], rel=1e-6)
    amplitude = math.sqrt(4 * (G1_CUBIC - 8e-3) / (3 * G3_CUBIC))  # METHODS §4
    assert all(p.kurokawa_stable for p in result.operating_points)
    assert [p.amplitude for p in result.operating_points] == pytest.approx(
        [amplitude] * 2, rel=1e-6
    )


# --- the solver stays inside the data ---------------------------------------------------------


def test_refinement_never_leaves_the_data() -> None:
    # Regression: an unconstrained Newton-type solver started in brackets far from any root
    # stepped to negative junction amplitudes, where a describing function has no meaning
    # ("amplitude_v must be positive", 11 of 12 shipped pairs). Every evaluation of the device
    # line must now lie inside the data's levels and frequencies.
    from oneport.products.oscillator.analysis import _device_line
    from oneport.products.oscillator.lines import DeviceLine, LoadLine
    from oneport.products.oscillator.manifest import read_device_description
    from oneport.products.oscillator.solve import Loop, operating_points
    from oneport.reading.touchstone import read_one_port

    examples = Path(__file__).resolve().parent.parent / "touchstone_examples"
    description = read_device_description(examples / "oscillator" / "tunnel_diode.toml")
    line, pair, _ = _device_line(description, read_one_port(examples / "stable" / "load.s1p"))
    seen: list[tuple[np.ndarray, np.ndarray]] = []

    def admittance(parameter: np.ndarray, frequency: np.ndarray) -> np.ndarray:
        seen.append((np.asarray(parameter), np.asarray(frequency)))
        return line.admittance(parameter, frequency)

    watched = DeviceLine(
        line.parameter_quantity,
        line.parameter_grid,
        line.frequency_hz,
        line.reference_impedance_ohm,
        admittance,
        line.port_voltage,
    )
    load = LoadLine.from_samples(pair.frequency_hz, pair.gamma_load, pair.reference_impedance_ohm)
    operating_points(Loop(watched, load, "admittance"))
    low, high = line.parameter_range
    assert len(seen) > 100
    assert min(float(np.min(p)) for p, _ in seen) >= low
    assert max(float(np.max(p)) for p, _ in seen) <= high
    assert min(float(np.min(f)) for _, f in seen) >= line.frequency_hz[0]
    assert max(float(np.max(f)) for _, f in seen) <= line.frequency_hz[-1]
