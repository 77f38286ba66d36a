"""Alignment: renormalisation against scikit-rf, interpolation inside the overlap only, and the
load (never the device) brought to the device's measurement impedance."""

from __future__ import annotations

import numpy as np
import pytest
import skrf

from oneport import InputError, NoOverlapError
from oneport.reading.alignment import MINIMUM_OVERLAP_POINTS, align, renormalise

from helpers import gamma_of, one_port


def random_gamma(rng, size):
    """Reflections of passive and negative-resistance one-ports (|Γ| up to 5)."""
    magnitude = rng.uniform(0.0, 5.0, size)
    return magnitude * np.exp(1j * rng.uniform(-np.pi, np.pi, size))


# --- renormalise --------------------------------------------------------------------------------


@pytest.mark.parametrize("seed", range(12))
@pytest.mark.parametrize("s_def", ["power", "pseudo", "traveling"])
def test_renormalise_matches_scikit_rf(seed, s_def):
    # scikit-rf's Network.renormalize (scikit-rf); for real references its three wave
    # definitions agree, and so must ours.
    rng = np.random.default_rng(seed)
    size = 40
    from_ohm, to_ohm = rng.uniform(0.5, 500.0, 2)
    gamma = random_gamma(rng, size)
    frequency = skrf.Frequency.from_f(np.linspace(1e6, 6e9, size), unit="Hz")
    network = skrf.Network(frequency=frequency, s=gamma.reshape(-1, 1, 1), z0=from_ohm)
    network.renormalize(to_ohm, s_def=s_def)
    np.testing.assert_allclose(
        renormalise(gamma, from_ohm, to_ohm), network.s[:, 0, 0], rtol=1e-10, atol=1e-12
    )


def test_renormalise_keeps_the_impedance():
    # Z = R(1 + Γ)/(1 − Γ) is the same seen from either reference (common practice).
    rng = np.random.default_rng(7)
    impedance = rng.uniform(-80, 300, 50) + 1j * rng.uniform(-200, 200, 50)
    for from_ohm, to_ohm in [(50.0, 75.0), (75.0, 50.0), (50.0, 1.0), (20.0, 600.0)]:
        renormalised = renormalise(gamma_of(impedance, from_ohm), from_ohm, to_ohm)
        np.testing.assert_allclose(renormalised, gamma_of(impedance, to_ohm), rtol=1e-12)
        back = to_ohm * (1 + renormalised) / (1 - renormalised)
        np.testing.assert_allclose(back, impedance, rtol=1e-10)


def test_renormalise_known_values():
    # By hand: a 50 Ω load seen from 75 Ω is (50 − 75)/(50 + 75) = −0.2; an open and a short
    # stay +1 and −1 in any real reference (common practice).
    assert complex(renormalise(np.array(0.0), 50.0, 75.0)) == pytest.approx(-0.2)
    np.testing.assert_allclose(renormalise(np.array([1.0, -1.0]), 50.0, 75.0), [1.0, -1.0])


def test_renormalise_round_trip_and_identity():
    rng = np.random.default_rng(3)
    gamma = random_gamma(rng, 30)
    np.testing.assert_allclose(renormalise(gamma, 50.0, 50.0), gamma, rtol=1e-15)
    np.testing.assert_allclose(
        renormalise(renormalise(gamma, 50.0, 75.0), 75.0, 50.0), gamma, rtol=1e-10
    )


# --- the grid: the load on the device's grid, inside the overlap only ---------------------------

DEVICE_HZ = np.arange(11) * 1e9  # 0, 1, ..., 10 GHz
LOAD_HZ = np.arange(2.5e9, 7.5e9 + 1, 1e9)  # 2.5, 3.5, ..., 7.5 GHz


def linear_load(frequency_hz):
    """A load linear in frequency, so linear interpolation is exact (common practice)."""
    return 0.3 - 0.1j + (0.02 + 0.05j) * frequency_hz / 1e9


def test_load_is_interpolated_onto_the_device_grid_inside_the_overlap():
    device = one_port(DEVICE_HZ, random_gamma(np.random.default_rng(1), DEVICE_HZ.size))
    load = one_port(LOAD_HZ, linear_load(LOAD_HZ))
    pair = align(device, load)
    # device points inside 2.5-7.5 GHz: 3, 4, 5, 6, 7 GHz
    np.testing.assert_array_equal(pair.frequency_hz, DEVICE_HZ[3:8])
    np.testing.assert_array_equal(pair.gamma_device, device.gamma[3:8])
    np.testing.assert_allclose(pair.gamma_load, linear_load(DEVICE_HZ[3:8]), rtol=1e-12)
    assert pair.device_points_dropped_below == 3
    assert pair.device_points_dropped_above == 3
    assert pair.load_points_in_band == 4  # 3.5, 4.5, 5.5, 6.5 GHz
    assert pair.reference_impedance_ohm == 50.0
    assert pair.load_renormalised_from_ohm is None
    assert pair.device_renormalised_from_ohm is None


def test_load_samples_on_the_device_grid_are_kept_exactly():
    frequency = np.linspace(1e9, 2e9, 9)
    rng = np.random.default_rng(2)
    load = one_port(frequency, random_gamma(rng, frequency.size))
    device = one_port(frequency, random_gamma(rng, frequency.size))
    pair = align(device, load)
    np.testing.assert_array_equal(pair.gamma_load, load.gamma)
    assert pair.device_points_dropped_below == pair.device_points_dropped_above == 0


def test_load_is_never_extrapolated():
    # A device swept far beyond the load on both sides: only points inside the load's band are
    # analysed, the rest dropped and counted.
    device_hz = np.linspace(0.0, 20e9, 201)  # 100 MHz steps
    load_hz = np.linspace(4.05e9, 9.95e9, 60)
    device = one_port(device_hz, 0.5)
    load = one_port(load_hz, linear_load(load_hz))
    pair = align(device, load)
    assert pair.frequency_hz[0] >= load_hz[0]
    assert pair.frequency_hz[-1] <= load_hz[-1]
    inside = (device_hz >= load_hz[0]) & (device_hz <= load_hz[-1])
    assert pair.frequency_hz.size == inside.sum() == 59  # 4.1 ... 9.9 GHz
    assert pair.device_points_dropped_below == 41  # 0 ... 4.0 GHz
    assert pair.device_points_dropped_above == 101  # 10.0 ... 20.0 GHz
    assert (
        pair.frequency_hz.size + pair.device_points_dropped_below + pair.device_points_dropped_above
        == device.points
    )
    np.testing.assert_allclose(pair.gamma_load, linear_load(pair.frequency_hz), rtol=1e-12)


def test_device_points_on_the_load_band_edges_are_kept():
    device = one_port(np.arange(1, 10) * 1e9, 0.5)
    load = one_port(np.array([2e9, 8e9]), [0.1, 0.7])
    pair = align(device, load)
    np.testing.assert_array_equal(pair.frequency_hz, np.arange(2, 9) * 1e9)
    np.testing.assert_allclose(pair.gamma_load, 0.1 + 0.1 * np.arange(7), rtol=1e-12)


@pytest.mark.parametrize(
    ("device_hz", "load_hz"),
    [
        (np.linspace(1e9, 2e9, 11), np.linspace(3e9, 4e9, 11)),  # load above
        (np.linspace(3e9, 4e9, 11), np.linspace(1e9, 2e9, 11)),  # load below
        (np.linspace(1e9, 2e9, 11), np.linspace(2e9, 3e9, 11)),  # touching: one common point
        (np.linspace(1e9, 10e9, 10), np.linspace(4.5e9, 5.5e9, 50)),  # inside one device step
    ],
)
def test_no_overlap_raises(device_hz, load_hz):
    device = one_port(device_hz, 0.5, source="device.s1p")
    load = one_port(load_hz, 0.2, source="load.s1p")
    with pytest.raises(NoOverlapError) as caught:
        align(device, load)
    message = str(caught.value)
    assert "\n" not in message
    assert "device.s1p" in message and "load.s1p" in message
    assert isinstance(caught.value, InputError)
    assert isinstance(caught.value, ValueError)


def test_the_smallest_accepted_overlap():
    device_hz = np.arange(20) * 1e9
    just_enough = one_port(device_hz[5 : 5 + MINIMUM_OVERLAP_POINTS], 0.2)
    pair = align(one_port(device_hz, 0.5), just_enough)
    assert pair.frequency_hz.size == MINIMUM_OVERLAP_POINTS
    too_few = one_port(device_hz[5 : 4 + MINIMUM_OVERLAP_POINTS], 0.2)
    with pytest.raises(NoOverlapError):
        align(one_port(device_hz, 0.5), too_few)


# --- impedance: the load is brought to the device, never the reverse ----------------------------

FREQUENCY_HZ = np.linspace(1e8, 3e9, 30)
DEVICE_Z = -40.0 + 1j * 2 * np.pi * FREQUENCY_HZ * 0.5e-9  # a negative resistance + 0.5 nH
LOAD_Z = 30.0 + 1j * 2 * np.pi * FREQUENCY_HZ * 2e-9  # 30 Ω + 2 nH


def test_a_75_ohm_load_is_analysed_in_the_devices_50_ohm():
    device = one_port(FREQUENCY_HZ, gamma_of(DEVICE_Z, 50.0), reference_ohm=50.0)
    load = one_port(FREQUENCY_HZ, gamma_of(LOAD_Z, 75.0), reference_ohm=75.0)
    pair = align(device, load)
    assert pair.reference_impedance_ohm == 50.0
    np.testing.assert_array_equal(pair.gamma_device, device.gamma)  # untouched
    np.testing.assert_allclose(pair.gamma_load, gamma_of(LOAD_Z, 50.0), rtol=1e-12)
    assert pair.load_renormalised_from_ohm == 75.0
    assert pair.device_renormalised_from_ohm is None


def test_a_device_measured_in_75_ohm_is_analysed_in_75_ohm():
    device = one_port(FREQUENCY_HZ, gamma_of(DEVICE_Z, 75.0), reference_ohm=75.0)
    load = one_port(FREQUENCY_HZ, gamma_of(LOAD_Z, 50.0), reference_ohm=50.0)
    pair = align(device, load)
    assert pair.reference_impedance_ohm == 75.0
    np.testing.assert_array_equal(pair.gamma_device, device.gamma)
    np.testing.assert_allclose(pair.gamma_load, gamma_of(LOAD_Z, 75.0), rtol=1e-12)
    assert pair.load_renormalised_from_ohm == 50.0


def test_the_loop_gain_is_not_invariant_under_renormalisation():
    # Why the direction matters: Γd·ΓL changes with the common reference (common practice), so
    # analysing in the load's impedance would be a different loop.
    in_50 = gamma_of(DEVICE_Z, 50.0) * gamma_of(LOAD_Z, 50.0)
    in_75 = gamma_of(DEVICE_Z, 75.0) * gamma_of(LOAD_Z, 75.0)
    assert np.max(np.abs(in_50 - in_75)) > 0.1
    device = one_port(FREQUENCY_HZ, gamma_of(DEVICE_Z, 50.0), reference_ohm=50.0)
    load = one_port(FREQUENCY_HZ, gamma_of(LOAD_Z, 75.0), reference_ohm=75.0)
    pair = align(device, load)
    np.testing.assert_allclose(pair.gamma_device * pair.gamma_load, in_50, rtol=1e-12)


def test_measurement_impedance_renormalises_the_device_to_it():
    # A device file renormalised to 50 Ω after a measurement in 75 Ω: analysed in 75 Ω, the
    # load brought there too.
    device = one_port(FREQUENCY_HZ, gamma_of(DEVICE_Z, 50.0), reference_ohm=50.0)
    load = one_port(FREQUENCY_HZ, gamma_of(LOAD_Z, 50.0), reference_ohm=50.0)
    pair = align(device, load, measurement_impedance_ohm=75.0)
    assert pair.reference_impedance_ohm == 75.0
    np.testing.assert_allclose(pair.gamma_device, gamma_of(DEVICE_Z, 75.0), rtol=1e-12)
    np.testing.assert_allclose(pair.gamma_load, gamma_of(LOAD_Z, 75.0), rtol=1e-12)
    assert pair.device_renormalised_from_ohm == 50.0
    assert pair.load_renormalised_from_ohm == 50.0


def test_measurement_impedance_equal_to_the_files_changes_nothing():
    device = one_port(FREQUENCY_HZ, gamma_of(DEVICE_Z, 50.0), reference_ohm=50.0)
    load = one_port(FREQUENCY_HZ, gamma_of(LOAD_Z, 75.0), reference_ohm=75.0)
    pair = align(device, load, measurement_impedance_ohm=50.0)
    assert pair.reference_impedance_ohm == 50.0
    np.testing.assert_array_equal(pair.gamma_device, device.gamma)
    assert pair.device_renormalised_from_ohm is None
    np.testing.assert_allclose(pair.gamma_load, gamma_of(LOAD_Z, 50.0), rtol=1e-12)


@pytest.mark.parametrize("impedance", [0.0, -50.0, float("nan")])
def test_measurement_impedance_must_be_positive(impedance):
    device = one_port(FREQUENCY_HZ, 0.5)
    load = one_port(FREQUENCY_HZ, 0.2)
    with pytest.raises(InputError) as caught:
        align(device, load, measurement_impedance_ohm=impedance)
    assert "\n" not in str(caught.value)
