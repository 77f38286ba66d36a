"""The vectorised variant analysis equals the single check, variant by variant."""

from __future__ import annotations

import numpy as np
import pytest

import oneport
from oneport.analysis import nyquist, variants
from oneport.analysis.variants import VERDICT_CODES, analyse_variants

from helpers import Z0, gamma_of


def _device(s: np.ndarray) -> np.ndarray:
    """A tunnel-diode-like one-port Rs + sLs + (−Rd ∥ Cj), stable in 50 ohm."""
    return 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)


@pytest.fixture(scope="module")
def family() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Series R-L-C loads spanning stable, oscillating and latch-up cases (invented values)."""
    rng = np.random.default_rng(7)
    frequency_hz = np.linspace(1e6, 8e9, 1601)
    s = 2j * np.pi * frequency_hz
    count = 60
    resistance = rng.uniform(0.0, 200.0, count)[:, None]
    inductance = rng.uniform(0.2e-9, 12e-9, count)[:, None]
    # Some loads have a 10 pF DC block in series; the others none (elastance 0).
    elastance = np.where(rng.random(count) < 0.3, 1 / 10e-12, 0.0)[:, None]
    loads = resistance + s * inductance + elastance / s
    return frequency_hz, gamma_of(_device(s)), gamma_of(loads)


def test_every_variant_matches_a_single_check(family):
    frequency_hz, gamma_device, gamma_load = family
    analysis = analyse_variants(frequency_hz, gamma_device, gamma_load, Z0)
    device = oneport.OnePort(frequency_hz, gamma_device, Z0, "device")
    seen = set()
    for index in range(gamma_load.shape[0]):
        load = oneport.OnePort(frequency_hz, gamma_load[index], Z0, f"load {index}")
        single = oneport.check(device, load)
        assert VERDICT_CODES[analysis.verdict_code[index]] == single.verdict
        seen.add(single.verdict)
        if single.encirclements is not None:
            assert analysis.count_known[index]
            assert analysis.encirclements[index] == single.encirclements
            assert analysis.latch_up[index] == single.latch_up
        if single.oscillation_frequencies_hz:
            assert analysis.oscillation_frequency_hz[index] == pytest.approx(
                single.oscillation_frequencies_hz[0], rel=1e-12
            )
            assert analysis.oscillatory_modes[index] == len(single.oscillation_frequencies_hz)
        else:
            assert np.isnan(analysis.oscillation_frequency_hz[index])
        assert analysis.min_distance[index] == pytest.approx(single.margins.modulus_margin)
        assert analysis.min_distance_frequency_hz[index] == (
            single.margins.modulus_margin_frequency_hz
        )
        assert analysis.worst_loop_gain[index] == pytest.approx(np.max(np.abs(single.loop_gain)))
        assert analysis.largest_phase_step_rad[index] == pytest.approx(
            single.largest_phase_step_rad, rel=1e-12
        )
        assert bool(analysis.hidden_resonance[index]) == _load_resonance_at_stake(single)
        low, high = single.closures
        assert nyquist.CLOSURE_BASES[analysis.low_closure_code[index]] == low.basis
        assert nyquist.CLOSURE_BASES[analysis.high_closure_code[index]] == high.basis
    assert {"stable", "unstable"} <= seen  # the family exercises both outcomes


def _load_resonance_at_stake(single) -> bool:
    """The single check's verdict on a resonance hidden in the load where the device has gain."""
    return any(
        w.code == "resonance-between-samples"
        and w.context["count_at_stake"]
        and w.message.startswith("load")
        for w in single.warnings
    )


def test_hidden_load_resonances_match_single_checks(family):
    # Series R-L loads with a parallel tank (5 kΩ, Q = 2000; invented values) between two
    # samples of the 5 MHz grid; where the device has gain the single check calls the count
    # at stake (|Γd| is about 2.6, 1.3 and 0.9 at the three resonances).
    frequency_hz, gamma_device, _ = family
    s = 2j * np.pi * frequency_hz
    loads = []
    for sample in (180, 480, 1260):  # resonances half-way between samples, near 0.9, 2.4, 6.3 GHz
        omega = np.pi * (frequency_hz[sample] + frequency_hz[sample + 1])
        inductance = 5000.0 / (2000.0 * omega)
        tank = 1.0 / (1.0 / 5000.0 + 1.0 / (s * inductance) + s / (omega**2 * inductance))
        loads.append(gamma_of(30.0 + s * 1e-9 + tank))
    gamma_load = np.array(loads)
    analysis = analyse_variants(frequency_hz, gamma_device, gamma_load, Z0)
    device = oneport.OnePort(frequency_hz, gamma_device, Z0, "device")
    flags = []
    for index, gamma in enumerate(gamma_load):
        single = oneport.check(device, oneport.OnePort(frequency_hz, gamma, Z0, f"load {index}"))
        flags.append(_load_resonance_at_stake(single))
        assert VERDICT_CODES[analysis.verdict_code[index]] == single.verdict
    assert analysis.hidden_resonance.tolist() == flags
    assert flags[0] and not flags[-1]  # at stake where the device has gain, not where it has none


def test_leading_axes_broadcast(family):
    frequency_hz, gamma_device, gamma_load = family
    flat = analyse_variants(frequency_hz, gamma_device, gamma_load, Z0)
    grid = analyse_variants(frequency_hz, gamma_device, gamma_load.reshape(6, 10, -1), Z0)
    assert grid.verdict_code.shape == (6, 10)
    np.testing.assert_array_equal(grid.verdict_code.reshape(-1), flat.verdict_code)
    np.testing.assert_array_equal(grid.encirclements.reshape(-1), flat.encirclements)


@pytest.mark.parametrize("load_poles_known", [False, True])
def test_block_size_changes_nothing(family, monkeypatch, load_poles_known):
    """The pass over samples runs in cache-sized blocks of variants; one row per block, a few,
    and all rows at once give identical arrays."""
    frequency_hz, gamma_device, gamma_load = family

    def analysis(block_samples: int) -> variants.VariantAnalysis:
        monkeypatch.setattr(variants, "BLOCK_SAMPLES", block_samples)
        return analyse_variants(
            frequency_hz, gamma_device, gamma_load, Z0, load_poles_known=load_poles_known
        )

    reference = analysis(10**9)
    points = frequency_hz.size
    for block_samples in (1, 7 * points + 3):
        other = analysis(block_samples)
        for name, value in vars(reference).items():
            np.testing.assert_array_equal(getattr(other, name), value, err_msg=name)
