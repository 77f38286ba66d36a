"""Pole–zero identification: natural frequencies from a rational fit of F = 1 − Γd·ΓL."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest

import oneport
from oneport.analysis.pole_zero import (
    NaturalFrequency,
    PoleZeroResult,
    compare_with_count,
    identify_natural_frequencies,
    with_count_check,
)
from oneport.analysis.rational import fit_rational
from oneport.circuit import Circuit
from oneport.errors import InputError

from helpers import Z0, gamma_of, run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
NOISE_45_DB = 10 ** (-45 / 20)  # complex standard deviation of the added noise, -45 dB re 1


def with_noise(values: np.ndarray, seed: int, sigma: float = NOISE_45_DB) -> np.ndarray:
    """Complex Gaussian noise of total standard deviation ``sigma`` (sigma/sqrt 2 per part)."""
    rng = np.random.default_rng(seed)
    noise = rng.standard_normal(values.size) + 1j * rng.standard_normal(values.size)
    return values + sigma / np.sqrt(2.0) * noise


def series_loop(r_device: float, f: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Γd, ΓL of Zd = r_device into ZL = 50 ohm + 10 nH + 2.533 pF (METHODS section 7)."""
    s = 2j * np.pi * f
    z_load = 50.0 + s * 10e-9 + 1.0 / (s * 2.533e-12)
    return gamma_of(np.full(f.size, complex(r_device))), gamma_of(z_load)


def series_loop_roots(r_device: float) -> np.ndarray:
    """numpy.roots of n_d*d_L + n_L*d_d: Zd = r (n_d = r, d_d = 1), ZL = (LCs^2 + 50Cs + 1)/(Cs)."""
    inductance, capacitance = 10e-9, 2.533e-12
    polynomial = np.polyadd(
        r_device * np.array([capacitance, 0.0]),
        np.array([inductance * capacitance, 50.0 * capacitance, 1.0]),
    )
    return np.roots(polynomial)


def rhp_trusted(result: PoleZeroResult) -> list[NaturalFrequency]:
    return [m for m in result.natural_frequencies if m.rhp and m.trusted]


def assert_matches(mode: NaturalFrequency, root: complex) -> None:
    """Within 1 % in frequency and 5 % in growth rate (the issue's tolerance)."""
    assert mode.frequency_hz == pytest.approx(abs(root.imag) / (2 * np.pi), rel=0.01)
    assert mode.sigma_per_s == pytest.approx(root.real, rel=0.05)


F_SERIES = np.linspace(10e6, 3e9, 401)


def test_series_loop_reference_roots():
    # METHODS section 7: Zd = -60 ohm into 50 ohm + 10 nH + 2.533 pF: roots 5.0e8 +- j6.263e9.
    roots = series_loop_roots(-60.0)
    assert np.sort(roots.imag) == pytest.approx([-6.263e9, 6.263e9], rel=1e-3)
    assert roots.real == pytest.approx([5.0e8, 5.0e8], rel=1e-3)


def test_series_loop_modes_found():
    gamma_device, gamma_load = series_loop(-60.0, F_SERIES)
    result = identify_natural_frequencies(
        F_SERIES, 1 - gamma_device * gamma_load, reference_impedance_ohm=Z0
    )
    modes = rhp_trusted(result)
    assert len(modes) == 1 and not modes[0].real  # one conjugate pair, reported once
    root = series_loop_roots(-60.0)  # numpy.roots reference
    assert_matches(modes[0], root[root.imag > 0][0])
    assert result.verdict == "unstable"
    assert result.trusted_rhp_count == 2
    assert all(m.frequency_hz >= 0 for m in result.natural_frequencies)


def test_series_loop_modes_found_in_noise():
    gamma_device, gamma_load = series_loop(-60.0, F_SERIES)
    gamma_device = with_noise(gamma_device, seed=1)
    gamma_load = with_noise(gamma_load, seed=2)
    result = identify_natural_frequencies(F_SERIES, 1 - gamma_device * gamma_load)
    modes = rhp_trusted(result)
    assert len(modes) == 1
    root = series_loop_roots(-60.0)  # numpy.roots reference
    assert_matches(modes[0], root[root.imag > 0][0])
    assert result.fit_adequate
    # The fit should reach the noise floor, not chase it: F's noise is about |Gd| = 11 times the
    # load's (worked by hand).
    assert result.fit_rms_error == pytest.approx(11 * NOISE_45_DB, rel=0.3)


@pytest.mark.parametrize("noisy", [False, True])
def test_stable_series_loop_has_no_trusted_rhp_mode(noisy):
    # Zd = -40 ohm: total series resistance +10 ohm, both roots in the left half plane.
    assert np.all(series_loop_roots(-40.0).real < 0)  # numpy.roots reference
    gamma_device, gamma_load = series_loop(-40.0, F_SERIES)
    if noisy:
        gamma_device, gamma_load = with_noise(gamma_device, 3), with_noise(gamma_load, 4)
    result = identify_natural_frequencies(F_SERIES, 1 - gamma_device * gamma_load)
    assert rhp_trusted(result) == []
    assert result.verdict == "stable"
    lhp = [m for m in result.natural_frequencies if m.trusted and not m.extrapolated]
    root = series_loop_roots(-40.0)  # numpy.roots reference
    assert_matches(lhp[0], root[root.imag > 0][0])


@pytest.mark.parametrize("noisy", [False, True])
def test_real_root_latch_up(noisy):
    # METHODS section 1: Rs = 5 ohm + (-100 ohm || 1 pF) into 200 ohm has a real RHP root.
    # n_d = 5(Cs - 0.01) + 1, d_d = Cs - 0.01; n_L = 200, d_L = 1 -> numpy.roots reference.
    capacitance = 1e-12
    root = np.roots(np.polyadd([5 * capacitance, 0.95], [200 * capacitance, -2.0]))[0]
    assert root.real > 0 and root.imag == 0
    f = np.linspace(1e6, 20e9, 401)
    s = 2j * np.pi * f
    gamma_device = gamma_of(5.0 + 1.0 / (-0.01 + s * capacitance))
    gamma_load = gamma_of(np.full(f.size, 200.0 + 0j))
    if noisy:
        gamma_device, gamma_load = with_noise(gamma_device, 5), with_noise(gamma_load, 6)
    result = identify_natural_frequencies(f, 1 - gamma_device * gamma_load)
    modes = rhp_trusted(result)
    assert len(modes) == 1 and modes[0].real and modes[0].frequency_hz == 0.0
    assert modes[0].sigma_per_s == pytest.approx(root.real, rel=0.05)
    assert any(m["latch_up"] for m in result.to_dict()["natural_frequencies"])


def test_vector_fitting_of_scikit_rf_flips_the_rhp_pole_and_ours_keeps_it():
    # -40 ohm || 1 pF measured in 50 ohm: gamma pole at s = (Z0 G - 1)/(Z0 C) = +5e9 /s
    # (METHODS section 3), in the right half plane because Z0 > 1/G.
    skrf = pytest.importorskip("skrf")
    from scipy.interpolate import AAA

    f = np.linspace(10e6, 10e9, 201)
    s = 2j * np.pi * f
    conductance, capacitance = 1 / 40, 1e-12
    admittance = -conductance + s * capacitance
    gamma = (1 - Z0 * admittance) / (1 + Z0 * admittance)
    pole = (Z0 * conductance - 1) / (Z0 * capacitance)
    network = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=gamma[:, None, None])
    fitting = skrf.vectorFitting.VectorFitting(network)
    fitting.vector_fit(n_poles_real=1, n_poles_cmplx=0)
    # scikit-rf: its vector fitting mirrors unstable poles into the left half plane.
    assert fitting.poles.real == pytest.approx([-pole], rel=1e-6)
    # scipy's AAA keeps the pole where it is.
    scale = 2 * np.pi * f[-1]
    assert AAA(s / scale, gamma).poles() * scale == pytest.approx([pole], rel=1e-6)
    # So does this package's own fit.
    assert fit_rational(f, gamma, 1).pole_frequencies() == pytest.approx([pole], rel=1e-6)


def test_zero_far_outside_the_band_is_an_untrusted_extrapolation():
    # F = (s - z)(s - z*)/((s - p)(s - p*)), an RHP pair at 5 GHz fitted over 0.1-1 GHz.
    f = np.linspace(0.1e9, 1e9, 201)
    s = 2j * np.pi * f
    zero = 2 * np.pi * complex(0.05e9, 5e9)
    pole = 2 * np.pi * complex(-0.2e9, 0.6e9)
    F = (s - zero) * (s - np.conj(zero)) / ((s - pole) * (s - np.conj(pole)))
    result = identify_natural_frequencies(f, F)
    far = [m for m in result.natural_frequencies if m.rhp]
    assert len(far) == 1 and far[0].extrapolated and not far[0].trusted
    assert far[0].frequency_hz == pytest.approx(5e9, rel=0.01)
    assert result.verdict == "stable"
    assert [w.code for w in result.warnings] == ["extrapolated-rhp-zero"]


def test_near_cancellation_is_doubtful_and_inconclusive():
    # An RHP zero almost on top of a pole: F barely feels it, so it cannot be trusted.
    f = np.linspace(0.1e9, 2e9, 301)
    s = 2j * np.pi * f
    zero = 2 * np.pi * complex(0.02e9, 1e9)
    pole = zero * (1 - 0.002) - 2 * np.pi * 0.004e9
    F = (s - zero) * (s - np.conj(zero)) / ((s - pole) * (s - np.conj(pole)))
    result = identify_natural_frequencies(f, F)
    rhp = [m for m in result.natural_frequencies if m.rhp]
    assert rhp and all(m.near_cancellation and not m.trusted for m in rhp)
    assert result.verdict == "inconclusive"


def test_compare_with_count():
    gamma_device, gamma_load = series_loop(-60.0, F_SERIES)
    result = identify_natural_frequencies(F_SERIES, 1 - gamma_device * gamma_load)
    assert compare_with_count(result, 2) == []
    assert compare_with_count(result, None) == []
    (warning,) = compare_with_count(result, 0)
    assert warning.code == "pole-count-disagrees"
    assert warning.context["trusted_rhp_zeros"] == 2
    assert any("unresolved resonance" in reason for reason in warning.context["likely_reasons"])
    checked = with_count_check(result, 0)
    assert checked.nyquist_encirclements == 0
    assert checked.to_dict()["warnings"][-1]["code"] == "pole-count-disagrees"


def test_json_form():
    gamma_device, gamma_load = series_loop(-60.0, F_SERIES)
    result = identify_natural_frequencies(
        F_SERIES, 1 - gamma_device * gamma_load, reference_impedance_ohm=Z0
    )
    data = json.loads(json.dumps(result.to_dict(include_arrays=True), allow_nan=False))
    assert data["schema"] == "oneport.poles/2"
    for key in ("natural_frequencies", "fit_rms_error", "warnings", "cautions", "inputs"):
        assert key in data
    mode = data["natural_frequencies"][0]
    assert {"frequency_hz", "sigma_per_s", "rhp", "trusted", "reasons"} <= set(mode)
    assert data["fit"]["reference_impedance_ohm"] == Z0
    assert data["cautions"] == list(oneport.cautions.CAUTIONS)
    assert len(data["arrays"]["characteristic"]) == F_SERIES.size


def test_bad_input_is_refused():
    with pytest.raises(InputError, match="1-D arrays of one length"):
        identify_natural_frequencies(F_SERIES, np.ones(3))
    with pytest.raises(InputError, match="strictly increasing"):
        identify_natural_frequencies(F_SERIES[::-1], np.ones(F_SERIES.size))


@pytest.mark.parametrize(
    ("example", "load", "code"),
    [("oscillates", "load.s1p", 3), ("undecidable", "load.s1p", 4)],
)
def test_command_exit_codes(example, load, code):
    # Expected verdicts from touchstone_examples/generate.py's ground truth (numpy.roots).
    folder = EXAMPLES / example
    got, out, err = run_cli("poles", str(folder / "device.s1p"), "--load", str(folder / load))
    assert (got, err) == (code, "")
    assert out.splitlines()[0].startswith({3: "UNSTABLE", 4: "INCONCLUSIVE"}[code])
    assert "Cautions" in out


def test_command_json_with_character():
    folder = EXAMPLES / "latch-up"
    code, out, _ = run_cli(
        "poles", str(folder / "device.s1p"), "--load", str(folder / "load.ts"), "--json",
        "--character",
    )  # fmt: skip
    data = json.loads(out)
    assert code == 3 and data["verdict"] == "unstable"
    assert data["nyquist_encirclements"] == 1  # generate.py ground truth: one real RHP root
    (mode,) = [m for m in data["natural_frequencies"] if m["rhp"] and m["trusted"]]
    assert mode["latch_up"] and mode["sigma_per_s"] == pytest.approx(1.0745e9, rel=0.05)
    assert data["device_character"]["schema"] == "oneport.character/1"
    assert data["device_character"]["kind"] == "short-circuit-stable"


def test_command_stable_example_exits_zero():
    folder = EXAMPLES / "stable"
    code, out, _ = run_cli(
        "poles", str(folder / "device.s1p"), "--load", str(folder / "load.s1p"), "--quiet"
    )
    assert code == 0 and out.startswith("STABLE")


def test_agrees_with_the_nyquist_count_of_check():
    # The wiring of `oneport check --poles`: the count and the fit on the same arrays. A bare
    # -60 ohm keeps |L| at 11 at DC and at infinity, so only netlists (known everywhere) let the
    # count close: the check evaluates them from DC to beyond their natural frequencies.
    device = Circuit("device").resistor("R1", "1", "0", -60.0).port("1")
    load = (
        Circuit("load")
        .resistor("R1", "1", "2", 50.0)
        .inductor("L1", "2", "3", 10e-9)
        .capacitor("C1", "3", "0", 2.533e-12)
        .port("1")
    )
    checked = oneport.check(device, load)
    assert checked.encirclements == 2  # METHODS section 7: two RHP zeros
    result = identify_natural_frequencies(
        checked.frequency_hz,
        1 - checked.loop_gain,
        reference_impedance_ohm=checked.reference_impedance_ohm,
        inputs=checked.inputs,
    )
    assert compare_with_count(result, checked.encirclements) == []
    assert [record["role"] for record in result.to_dict()["inputs"]] == ["device", "load"]


@pytest.mark.parametrize("slope", [0.0, 0.3 - 0.1j])
def test_zeros_of_a_model_match_the_generalized_eigenvalues(slope):
    # The zeros are found with numpy's eigvals (no scipy import on the fit's path); source:
    # scipy.linalg.eigvals on the pencil (M, E) of the model's docstring, the QZ reference.
    from scipy.linalg import eigvals

    from oneport.analysis.rational import RationalModel

    rng = np.random.default_rng(11)
    for _ in range(20):
        n = int(rng.integers(1, 9))
        poles = rng.normal(size=n) * 0.3 - 0.05 + 1j * rng.normal(size=n)
        residues = rng.normal(size=n) + 1j * rng.normal(size=n)
        constant = complex(rng.normal(), rng.normal())
        model = RationalModel(poles, residues, constant, slope, 2e9 * np.pi)
        matrix = np.zeros((n + 1, n + 1), dtype=complex)
        matrix[0, 0], matrix[0, 1:], matrix[1:, 0] = constant, residues, 1.0
        matrix[1:, 1:] = np.diag(poles)
        weight = np.eye(n + 1, dtype=complex)
        weight[0, 0] = -slope
        reference = eigvals(matrix, weight)
        reference = reference[np.isfinite(reference)]
        reference = reference[np.abs(reference) < 1e8] * model.angular_scale
        found = model.zeros()
        assert found.size == reference.size
        assert np.sort_complex(found) == pytest.approx(np.sort_complex(reference), rel=1e-8)
        assert np.abs(model.evaluate(found)).max() < 1e-6
