"""Reflection-amplifier screening: gain, bandwidth, ripple bounds, the port match needed."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

from oneport.analysis.amplifier import analyse_amplifier
from oneport.errors import InputError
from oneport.products.amplifier import amplifier
from oneport.rendering.amplifier_plot import plot_amplifier

from helpers import Z0, one_port, run_cli


def parallel_device(f: np.ndarray, resistance: float = 75.0, capacitance: float = 1e-12):
    """Gamma of -R || C in Z0."""
    admittance = -1 / resistance + 2j * np.pi * f * capacitance
    return (1 - Z0 * admittance) / (1 + Z0 * admittance)


def frequency_for_gain(gain: float, resistance: float = 75.0, capacitance: float = 1e-12):
    """Where |gamma|^2 of -R || C equals ``gain`` (worked by hand from the closed form).

    gamma = (a - jx)/(b + jx) with a = 1 + Z0/R, b = 1 - Z0/R, x = w Z0 C, so
    |gamma|^2 = (a^2 + x^2)/(b^2 + x^2) and x^2 = (a^2 - gain b^2)/(gain - 1).
    """
    a, b = 1 + Z0 / resistance, 1 - Z0 / resistance
    x = np.sqrt((a**2 - gain * b**2) / (gain - 1))
    return x / (Z0 * capacitance) / (2 * np.pi)


def circulator_port(f: np.ndarray) -> np.ndarray:
    """A well-matched port: 55 ohm + 0.2 nH (about 20 dB return loss up to 5 GHz)."""
    impedance = 55.0 + 2j * np.pi * f * 0.2e-9
    return (impedance - Z0) / (impedance + Z0)


@pytest.mark.parametrize("resistance", [75.0, 100.0, 150.0])
def test_pure_negative_resistance_gain(resistance):
    f = np.linspace(0.0, 1e9, 11)
    gamma = np.full(f.size, (-resistance - Z0) / (-resistance + Z0), dtype=complex)
    result = analyse_amplifier(f, gamma, Z0)
    # METHODS section 6: gain ((R + Z0)/(R - Z0))^2 for a pure -R.
    expected = 10 * np.log10(((resistance + Z0) / (resistance - Z0)) ** 2)
    # Linear inside the result (SI); dB in its JSON.
    assert 10 * np.log10(result.gain) == pytest.approx(np.full(f.size, expected))
    assert -20 * np.log10(result.smallest_allowed_reflection) == pytest.approx(expected)
    assert result.to_dict()["stability_requirement"]["worst_required_return_loss_db"] == (
        pytest.approx(expected)
    )


F_FINE = np.linspace(0.0, 5e9, 2001)


def test_parallel_device_gain_and_bandwidth():
    result = analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0, gain_threshold_db=10.0)
    # -75 ohm || 1 pF in 50 ohm: low-frequency gain ((75 + 50)/(75 - 50))^2 = 25, 13.98 dB.
    assert result.peak_gain == pytest.approx(25.0, rel=1e-9)
    assert result.to_dict()["gain"]["peak_gain_db"] == pytest.approx(13.979, abs=1e-3)
    assert result.peak_frequency_hz == 0.0
    upper = frequency_for_gain(25 * 10 ** (-0.3))  # exactly 3 dB below the peak
    assert result.bandwidth.start_hz == 0.0 and result.bandwidth.starts_at_sweep_edge
    assert result.bandwidth.stop_hz == pytest.approx(upper, rel=1e-3)
    (band,) = result.bands
    assert band.stop_hz == pytest.approx(frequency_for_gain(10.0), rel=1e-3)


def test_ripple_bounds_for_a_stated_return_loss():
    result = analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0, port_return_loss_db=20.0)
    magnitude = np.abs(parallel_device(F_FINE))
    port = 10 ** (-20 / 20)
    # METHODS section 6: voltage gain between |Gd|/(1 +- |Gd GL|), power gain their squares.
    lower, upper = result.gain_bounds
    assert lower == pytest.approx((magnitude / (1 + magnitude * port)) ** 2)
    assert upper == pytest.approx((magnitude / (1 - magnitude * port)) ** 2)
    assert result.ripple_at_peak == pytest.approx(((5 / 1.5) ** 2, 100.0))
    assert 20 * np.log10(result.port_margin) == pytest.approx(20 - 13.979, abs=1e-3)
    ripple = result.to_dict()["port"]["ripple_at_peak"]
    assert (ripple["gain_lower_db"], ripple["gain_upper_db"]) == pytest.approx(
        (20 * np.log10(5 / 1.5), 20.0)
    )
    assert result.verdict == "guaranteed" and result.guaranteed


def test_required_return_loss_is_the_gain_where_there_is_gain():
    result = analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0)
    # Small-gain bound |GL| < 1/|Gd| (METHODS section 6): 20 log10 |Gd| dB wherever |Gd| > 1.
    expected = np.maximum(20 * np.log10(np.abs(parallel_device(F_FINE))), 0.0)
    assert -20 * np.log10(result.allowed_reflection) == pytest.approx(expected)
    arrays = result.to_dict(include_arrays=True)["arrays"]
    assert arrays["required_return_loss_db"] == pytest.approx(expected)
    assert result.worst_frequency_hz == 0.0
    assert result.verdict == "inconclusive" and result.basis == "none"


@pytest.mark.parametrize(
    ("return_loss", "verdict"), [(20.0, "guaranteed"), (10.0, "not-guaranteed")]
)
def test_verdict_for_a_stated_match(return_loss, verdict):
    result = analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0, port_return_loss_db=return_loss)
    assert result.verdict == verdict and result.basis == "small-gain"


def test_the_bound_beyond_an_edge_rests_on_its_margin_there():
    # The sweep misses the low-frequency gain peak (13.98 dB at DC): at 1 GHz the gain has
    # fallen, so 14.5 dB of return loss keeps |Gd|*rho below 1 at both edges by a clear margin,
    # and the bound is carried below the sweep on that basis (METHODS section 2: an edge is
    # founded by |L| < 1 there, here the class's worst loop gain |Gd|*rho); the true device
    # indeed needs only 13.98 dB at DC (worked by hand above).
    f = np.linspace(1e9, 5e9, 401)
    result = analyse_amplifier(f, parallel_device(f), Z0, port_return_loss_db=14.5)
    assert result.port_margin > 1.0
    assert result.verdict == "guaranteed"
    assert all(edge.founded for edge in result.edges)
    assert "below the sweep" in result.edges[0].note
    # A bound that holds on the samples by less than their scatter is left open: a constant
    # -75 ohm (|Gd| = 5) measured with a scatter of 0.02 per part, against a return loss that
    # puts the largest sample's |Gd|*rho at 0.995.
    rng = np.random.default_rng(3)
    scatter = 0.02 * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))
    noisy = np.full(f.size, 5.0 + 0j) + scatter
    return_loss = -20 * np.log10(0.995 / np.max(np.abs(noisy)))
    result = analyse_amplifier(f, noisy, Z0, port_return_loss_db=return_loss)
    assert result.verdict == "inconclusive" and not result.guaranteed


def test_passive_device_is_stable_with_any_passive_port():
    f = np.linspace(1e6, 1e9, 51)
    result = analyse_amplifier(f, np.full(f.size, 0.5 + 0j), Z0)
    assert result.verdict == "guaranteed" and result.port_source == "any-passive-port"


def test_nyquist_with_the_load_decides():
    device = one_port(F_FINE, parallel_device(F_FINE), "device")
    port = circulator_port(F_FINE)
    result = amplifier(device, load=one_port(F_FINE, port, "circulator"))
    assert result.verdict == "stable" and result.basis == "nyquist"
    assert result.nyquist is not None and result.nyquist.encirclements == 0
    # Multiple reflections between device and port: Gd/(1 - Gd GL) (common practice).
    gamma_device = parallel_device(F_FINE)
    expected = np.abs(gamma_device / (1 - gamma_device * port)) ** 2
    assert result.gain_with_load == pytest.approx(expected)
    # 100 ohm: Yd + YL = -1/75 + 1/100 + sC = 0 at s > 0 (by hand): a latch-up.
    resistive = one_port(F_FINE, np.full(F_FINE.size, (100 - Z0) / (100 + Z0) + 0j), "100 ohm")
    result = amplifier(device, load=resistive)
    assert result.verdict == "unstable" and result.nyquist.encirclements == 1


def test_json_form():
    result = analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0, port_return_loss_db=10.0)
    data = json.loads(json.dumps(result.to_dict(include_arrays=True), allow_nan=False))
    assert data["schema"] == "oneport.amplifier/3"
    assert data["verdict"] == "not-guaranteed"
    assert data["gain"]["reference_impedance_ohm"] == Z0
    assert data["gain"]["bandwidth_3db"]["bandwidth_hz"] == pytest.approx(
        frequency_for_gain(25 * 10 ** (-0.3)), rel=1e-3
    )
    assert data["port"]["ripple_at_peak"]["gain_upper_db"] is None  # |Gd GL| > 1 there
    assert None in data["arrays"]["gain_upper_db"]


def test_bad_input():
    device = one_port(F_FINE, parallel_device(F_FINE), "device")
    with pytest.raises(InputError, match="not both"):
        amplifier(device, load=device, port_return_loss_db=20.0)
    with pytest.raises(InputError, match="0 or more"):
        analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0, port_return_loss_db=-3.0)


def test_plot_draws_gain_and_requirement():
    from matplotlib.figure import Figure

    result = analyse_amplifier(F_FINE, parallel_device(F_FINE), Z0, port_return_loss_db=20.0)
    axes = Figure().subplots()
    assert plot_amplifier(result, axes) is axes.figure
    labels = [line.get_label() for line in axes.get_lines()]
    assert "gain |Γd|²" in labels and "return loss needed (small gain)" in labels
    gain_line = axes.get_lines()[0]
    assert gain_line.get_ydata() == pytest.approx(10 * np.log10(result.gain))


def write_s1p(path: Path, f: np.ndarray, gamma: np.ndarray) -> Path:
    """Touchstone 1.x, Hz, S, RI, R 50 (Touchstone specification layout)."""
    lines = ["# Hz S RI R 50"]
    lines += [f"{x:.10g} {g.real:.12e} {g.imag:.12e}" for x, g in zip(f, gamma, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="ascii")
    return path


def test_command(tmp_path):
    f = np.linspace(0.0, 5e9, 401)
    device = str(write_s1p(tmp_path / "device.s1p", f, parallel_device(f)))
    circulator = write_s1p(tmp_path / "circulator.s1p", f, circulator_port(f))
    resistor = write_s1p(tmp_path / "r100.s1p", f, np.full(f.size, 1 / 3 + 0j))
    plot = tmp_path / "gain.png"
    code, out, err = run_cli("amplifier", device, "--port-return-loss", "20dB", "--plot", str(plot))
    assert (code, err) == (0, "") and out.startswith("GUARANTEED")
    assert plot.stat().st_size > 0
    assert run_cli("amplifier", device, "--port-return-loss", "10dB", "--quiet")[0] == 3
    assert run_cli("amplifier", device, "--quiet")[0] == 4
    code, out, _ = run_cli("amplifier", device, "--load", str(circulator), "--json")
    assert code == 0 and json.loads(out)["nyquist"]["encirclements"] == 0
    assert run_cli("amplifier", device, "--load", str(resistor), "--quiet")[0] == 3
    code, _, err = run_cli("amplifier", device, "--port-return-loss=-3dB")
    assert code == 2 and "from 0 dB to 100 dB" in err
