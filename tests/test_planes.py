"""Tests of oneport.planes: terminations, mixed mode, plane shifts and fixtures.

Independent references: scikit-rf (``skrf.network.connect``, ``Network.renormalize``,
``Network.se2gmm``, ``media.DefinedGammaZ0.line``, ``**`` cascading and ``Network.inv``), and
hand derivations stated beside the checks.
"""

from __future__ import annotations

import numpy as np
import pytest
import skrf

import oneport
from oneport.errors import InputError
from oneport.reading.alignment import renormalise
from oneport.reading.planes import (
    NEAR_LOOP_THRESHOLD,
    deembed_fixture,
    differential_reference_impedance,
    embed_fixture,
    gamma_from_impedance,
    mixed_mode_differential,
    parse_port_pairs,
    refer_termination,
    renormalise_s,
    shift_plane,
    terminate_two_port,
    terminated_one_port,
    termination_findings,
)

from helpers import gamma_of, one_port

FREQUENCY_HZ = np.linspace(1e9, 5e9, 7)


def _random_s(rng: np.random.Generator, ports: int, points: int = FREQUENCY_HZ.size) -> np.ndarray:
    """Random complex S, shape (p, p, n), entries of modulus up to about 0.8 (not passive)."""
    shape = (ports, ports, points)
    return 0.4 * (rng.normal(size=shape) + 1j * rng.normal(size=shape))


def _network(s: np.ndarray, z0, frequency_hz: np.ndarray = FREQUENCY_HZ) -> skrf.Network:
    """A scikit-rf Network from our (p, p, n) layout."""
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    return skrf.Network(frequency=frequency, s=np.moveaxis(s, -1, 0), z0=z0)


def _from_network(network: skrf.Network) -> np.ndarray:
    return np.moveaxis(network.s, 0, -1)


# --- renormalisation -------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("old", "new"),
    [([50.0, 50.0], [30.0, 75.0]), ([25.0, 100.0], [50.0, 50.0]), ([50.0, 60.0, 70.0], [40.0] * 3)],
)
def test_renormalise_s_matches_scikit_rf(old, new):
    rng = np.random.default_rng(len(old) + int(new[0]))
    s = _random_s(rng, len(old))
    reference = _network(s, old)
    reference.renormalize(new)
    # source: scikit-rf Network.renormalize (power waves; equal to pseudo waves for real Z0)
    np.testing.assert_allclose(renormalise_s(s, old, new), _from_network(reference), atol=1e-12)


def test_renormalise_s_of_one_port_is_the_one_port_formula():
    rng = np.random.default_rng(3)
    gamma = _random_s(rng, 1)
    # source: METHODS §1, Γ' = (Γ − r)/(1 − rΓ) (oneport.reading.alignment.renormalise implements
    # it)
    np.testing.assert_allclose(
        renormalise_s(gamma, 50.0, 80.0)[0, 0], renormalise(gamma[0, 0], 50.0, 80.0), atol=1e-14
    )


# --- termination -----------------------------------------------------------------------------


@pytest.mark.parametrize("terminated_port", [1, 2])
@pytest.mark.parametrize(
    ("two_port_ohm", "termination_ohm"), [([50.0, 50.0], 50.0), ([50.0, 75.0], 30.0)]
)
def test_termination_matches_scikit_rf_connect(terminated_port, two_port_ohm, termination_ohm):
    rng = np.random.default_rng(10 * terminated_port + int(termination_ohm))
    for _ in range(5):
        s = _random_s(rng, 2)
        gamma_termination = _random_s(rng, 1)[0, 0]
        termination = refer_termination(
            gamma_termination, termination_ohm, two_port_ohm, terminated_port
        )
        result = terminate_two_port(s, termination, terminated_port)
        # source: scikit-rf skrf.network.connect (it renormalises the mismatch at the joint)
        joined = skrf.network.connect(
            _network(s, two_port_ohm),
            terminated_port - 1,
            _network(gamma_termination[None, None], termination_ohm),
            0,
        )
        np.testing.assert_allclose(result.gamma_in, joined.s[:, 0, 0], rtol=1e-10, atol=1e-12)
        open_port = 2 - terminated_port
        assert np.allclose(joined.z0[:, 0], two_port_ohm[open_port])
        assert result.formed


def test_termination_in_the_reference_leaves_s11():
    rng = np.random.default_rng(4)
    s = _random_s(rng, 2)
    # source: common practice (a matched termination reflects nothing: Γin = S11)
    np.testing.assert_allclose(terminate_two_port(s, 0.0).gamma_in, s[0, 0])
    np.testing.assert_allclose(terminate_two_port(s, 0.0, terminated_port=1).gamma_in, s[1, 1])


def test_termination_with_leading_axes_equals_a_loop():
    rng = np.random.default_rng(5)
    s = np.stack([_random_s(rng, 2) for _ in range(3)])
    gamma_termination = _random_s(rng, 1)[0]
    whole = terminate_two_port(s, gamma_termination).gamma_in
    assert whole.shape == (3, FREQUENCY_HZ.size)
    for index in range(3):
        single = terminate_two_port(s[index], gamma_termination[0]).gamma_in
        np.testing.assert_allclose(whole[index], single)


def _near_loop_case():
    """S22·ΓT = 0.95·exp(−j2π(f − 1.5 GHz)·1 ns): |1 − S22·ΓT| = 0.05 at 1.5 GHz exactly."""
    frequency_hz = np.linspace(1e9, 2e9, 101)  # 10 MHz steps
    s = np.empty((2, 2, frequency_hz.size), complex)
    s[0, 0], s[0, 1], s[1, 0] = 0.1, 0.3, 0.3
    s[1, 1] = 0.95j * np.exp(-2j * np.pi * (frequency_hz - 1.5e9) * 1e-9)
    return frequency_hz, s, -1j  # ΓT = −j: a reactive termination


def test_near_loop_denominator_is_a_finding_not_a_crash():
    frequency_hz, s, gamma_termination = _near_loop_case()
    result = terminate_two_port(s, gamma_termination)
    # by hand: |1 − 0.95 e^{jx}| < 0.1 for |x| < 0.0889 rad, i.e. within 14.1 MHz of 1.5 GHz
    assert np.flatnonzero(result.near_loop).tolist() == [49, 50, 51]
    assert result.formed and np.isfinite(result.gamma_in).all()
    findings = termination_findings(result, frequency_hz, "fixture.s2p")
    assert [finding.code for finding in findings] == ["termination-near-loop-resonance"]
    context = findings[0].context
    assert context["start_hz"] == pytest.approx(1.49e9)
    assert context["stop_hz"] == pytest.approx(1.51e9)
    assert context["minimum_frequency_hz"] == pytest.approx(1.5e9)
    assert context["minimum_return_difference"] == pytest.approx(0.05)
    assert context["minimum_return_difference"] < NEAR_LOOP_THRESHOLD
    assert "fixture.s2p" in findings[0].message
    one_port = terminated_one_port(result, frequency_hz, 50.0, "fixture.s2p")
    assert one_port.points == frequency_hz.size


def test_exactly_singular_denominator_is_marked_and_refused():
    frequency_hz = np.array([1e9, 2e9, 3e9, 4e9])
    s = np.zeros((2, 2, 4), complex)
    s[0, 0], s[0, 1], s[1, 0] = 0.2, 0.5, 0.5
    s[1, 1] = [0.2, 0.2, 2.0, 0.2]  # with ΓT = 0.5, 1 − S22·ΓT is exactly 0 at 3 GHz
    result = terminate_two_port(s, 0.5)
    assert result.singular.tolist() == [False, False, True, False]
    assert not result.formed
    assert not np.isinf(result.gamma_in).any()
    assert np.isnan(result.gamma_in[2]) and np.isfinite(result.gamma_in[[0, 1, 3]]).all()
    codes = [finding.code for finding in termination_findings(result, frequency_hz, "x.s2p")]
    assert codes == ["termination-near-loop-resonance", "termination-singular"]
    with pytest.raises(InputError, match="3e\\+09 Hz"):
        terminated_one_port(result, frequency_hz, 50.0, "x.s2p")


def test_termination_refuses_bad_ports_and_shapes():
    s = np.zeros((2, 2, 3), complex)
    with pytest.raises(InputError, match="accepted 1 or 2"):
        terminate_two_port(s, 0.0, terminated_port=3)
    with pytest.raises(InputError, match="shape"):
        terminate_two_port(np.zeros((3, 3, 3)), 0.0)


def test_gamma_from_impedance():
    # source: common practice, Γ = (Z − Z0)/(Z + Z0)
    assert gamma_from_impedance(150.0, 50.0) == pytest.approx(0.5)
    assert gamma_from_impedance(0.0, 50.0) == pytest.approx(-1.0)
    with pytest.raises(InputError, match="minus the reference"):
        gamma_from_impedance(-50.0, 50.0)


# --- mixed mode ------------------------------------------------------------------------------


@pytest.mark.parametrize("z0", [[50.0, 50.0], [40.0, 60.0]])
def test_balanced_two_port_matches_scikit_rf_se2gmm(z0):
    rng = np.random.default_rng(6)
    s = _random_s(rng, 2)
    mixed = _network(s, z0)
    mixed.se2gmm(p=1)  # scikit-rf: single-ended ports (0, 1) become d0 (port 0), c0 (port 1)
    # source: scikit-rf Network.se2gmm (generalised mixed-mode parameters)
    np.testing.assert_allclose(
        mixed_mode_differential(s, [(1, 2)], z0), mixed.s[:, 0, 0], atol=1e-13
    )
    assert differential_reference_impedance(z0, (1, 2)) == pytest.approx(mixed.z0[0, 0].real)


@pytest.mark.parametrize("z0", [[50.0] * 4, [50.0, 50.0, 75.0, 75.0], [40.0, 50.0, 60.0, 70.0]])
def test_four_port_pairs_match_scikit_rf_se2gmm(z0):
    rng = np.random.default_rng(7)
    s = _random_s(rng, 4)
    mixed = _network(s, z0)
    # scikit-rf's se2gmm(p=2) pairs single-ended ports (0, 1) → d0 (port 0) and (2, 3) → d1
    # (port 1), read from its docstring (mixed-mode reference 90 = 40 + 50 for the first pair).
    mixed.se2gmm(p=2)
    # source: scikit-rf Network.se2gmm
    np.testing.assert_allclose(
        mixed_mode_differential(s, [(1, 2), (3, 4)], z0), mixed.s[:, 0, 0], atol=1e-13
    )
    np.testing.assert_allclose(
        mixed_mode_differential(s, [(3, 4), (1, 2)], z0), mixed.s[:, 1, 1], atol=1e-13
    )
    reference = differential_reference_impedance(z0, (3, 4), ports=4)
    assert reference == pytest.approx(mixed.z0[0, 1].real)


def test_four_port_other_grouping_matches_renumbered_scikit_rf():
    rng = np.random.default_rng(8)
    s = _random_s(rng, 4)
    renumbered = _network(s, 50.0)
    # single-ended ports 1,3 and 2,4 (1-based) grouped as pairs: bring them to positions 0,1
    # and 2,3, where scikit-rf's se2gmm pairs them.
    renumbered.renumber([0, 2, 1, 3], [0, 1, 2, 3])
    renumbered.se2gmm(p=2)
    # source: scikit-rf Network.renumber and Network.se2gmm
    np.testing.assert_allclose(
        mixed_mode_differential(s, [(1, 3), (2, 4)]), renumbered.s[:, 0, 0], atol=1e-13
    )
    # swapping positive and negative leaves Sdd11 unchanged (by hand: the formula is symmetric)
    np.testing.assert_allclose(
        mixed_mode_differential(s, [(3, 1), (2, 4)]), mixed_mode_differential(s, [(1, 3)])
    )


def test_mixed_mode_of_a_grounded_resistor_pair():
    # by hand: 100 ohm from each port to ground is 200 ohm differentially; against the
    # differential reference 2·50 ohm, Sdd11 = (200 − 100)/(200 + 100) = 1/3
    single = np.full(3, gamma_from_impedance(100.0, 50.0))
    s = np.zeros((2, 2, 3), complex)
    s[0, 0] = s[1, 1] = single
    np.testing.assert_allclose(mixed_mode_differential(s, [(1, 2)]), 1 / 3)
    assert differential_reference_impedance(50.0, (1, 2)) == 100.0


def test_port_pairs_are_parsed_and_checked():
    assert parse_port_pairs("1,2") == [(1, 2)]
    assert parse_port_pairs("1,3:2,4") == [(1, 3), (2, 4)]
    for text in ("1", "1,2,3", "a,b", "1,2:", "-1,2"):
        with pytest.raises(InputError, match="--differential-ports"):
            parse_port_pairs(text)
    s = np.zeros((2, 2, 3), complex)
    with pytest.raises(InputError, match="between 1 and 2"):
        mixed_mode_differential(s, [(1, 3)])
    with pytest.raises(InputError, match="used once"):
        mixed_mode_differential(np.zeros((4, 4, 3)), [(1, 2), (2, 3)])


# --- plane shift -----------------------------------------------------------------------------


def _line_media(frequency_hz: np.ndarray) -> skrf.media.DefinedGammaZ0:
    """A lossless, non-dispersive 50 ohm line medium (γ = jω/c)."""
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    gamma = 1j * 2 * np.pi * frequency.f / skrf.constants.c
    return skrf.media.DefinedGammaZ0(frequency, z0=50.0, gamma=gamma)


def test_shift_of_ten_picoseconds_at_ten_gigahertz_is_72_degrees():
    # by hand: round-trip phase 2·360°·f·τ = 2·360·10e9·10e-12 = 72°
    shifted = shift_plane(np.array([0.5]), np.array([10e9]), 10e-12)
    assert np.degrees(np.angle(shifted[0])) == pytest.approx(-72.0, abs=1e-12)
    assert abs(shifted[0]) == pytest.approx(0.5)
    frequency_hz = np.linspace(1e9, 10e9, 10)
    rng = np.random.default_rng(9)
    gamma = _random_s(rng, 1, frequency_hz.size)[0, 0]
    media = _line_media(frequency_hz)
    device = _network(gamma[None, None], 50.0, frequency_hz)
    # source: scikit-rf media.line (delay in ps, and electrical length in degrees) and `**`
    by_delay = (media.line(10, "ps") ** device).s[:, 0, 0]
    np.testing.assert_allclose(shift_plane(gamma, frequency_hz, 10e-12), by_delay, atol=1e-12)
    one_way_degrees = 360.0 * 10e9 * 10e-12  # 36° at the top frequency
    by_angle = (_line_media(frequency_hz[-1:]).line(one_way_degrees, "deg") ** device[-1]).s
    assert complex(shift_plane(gamma[-1], 10e9, 10e-12)) == pytest.approx(
        complex(by_angle[0, 0, 0])
    )


def test_removing_a_known_line_restores_the_bare_devices_verdict():
    frequency_hz = np.linspace(10e6, 20e9, 2000)
    s = 2j * np.pi * frequency_hz
    # tunnel-diode-like device Rs + s·Ls + (−Rd ∥ Cj), Rs = 4, Ls = 0.6 nH, Rd = 80, Cj = 2 pF,
    # into 10 ohm + 3 nH: R_T = 14 ohm < L_T/(Rd·Cj) = 22.5 ohm, so it oscillates (METHODS §7,
    # textbook stability condition, from memory)
    device_ohm = 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)
    load_ohm = 10.0 + s * 3e-9
    bare = one_port(frequency_hz, gamma_of(device_ohm), "bare device")
    load = one_port(frequency_hz, gamma_of(load_ohm), "load")
    behind_line = _line_media(frequency_hz).line(20, "ps") ** _network(
        bare.gamma[None, None], 50.0, frequency_hz
    )  # source: scikit-rf media.line and `**`
    measured = behind_line.s[:, 0, 0]
    restored = one_port(frequency_hz, shift_plane(measured, frequency_hz, -20e-12), "restored")

    expected = oneport.check(bare, load)
    got = oneport.check(restored, load)
    assert expected.verdict == "unstable" and expected.encirclements == 2
    assert (got.verdict, got.encirclements) == (expected.verdict, expected.encirclements)
    np.testing.assert_allclose(
        [c.frequency_hz for c in got.crossings],
        [c.frequency_hz for c in expected.crossings],
        rtol=1e-9,
    )
    np.testing.assert_allclose(
        got.oscillation_frequencies_hz, expected.oscillation_frequencies_hz, rtol=1e-9
    )
    # and the line matters: left in, it moves the crossing by far more than the tolerance
    unshifted = oneport.check(one_port(frequency_hz, measured, "measured"), load)
    moved = abs(unshifted.crossings[0].frequency_hz / expected.crossings[0].frequency_hz - 1)
    assert moved > 0.1


# --- fixtures --------------------------------------------------------------------------------


@pytest.mark.parametrize("device_side_port", [1, 2])
def test_embed_then_deembed_returns_the_device(device_side_port):
    rng = np.random.default_rng(11)
    fixture = _random_s(rng, 2)
    gamma = _random_s(rng, 1)[0, 0]
    measured = embed_fixture(gamma, fixture, device_side_port)
    # by hand: de-embedding solves the embedding equation exactly
    np.testing.assert_allclose(deembed_fixture(measured, fixture, device_side_port), gamma)


@pytest.mark.parametrize("z0", [[50.0, 50.0], [50.0, 75.0]])
def test_fixture_formulas_match_scikit_rf_cascade_and_inverse(z0):
    rng = np.random.default_rng(12)
    fixture_s = _random_s(rng, 2)
    gamma = _random_s(rng, 1)[0, 0]
    fixture = _network(fixture_s, z0)
    device = _network(gamma[None, None], z0[1])  # at the device-side port's reference
    measured = fixture**device
    # source: scikit-rf `**` (cascade); Γm is referred to the instrument port's reference
    np.testing.assert_allclose(embed_fixture(gamma, fixture_s), measured.s[:, 0, 0], rtol=1e-10)
    assert np.allclose(measured.z0[:, 0], z0[0])
    # source: scikit-rf Network.inv (inverse T-matrix) cascaded with the measurement
    recovered = (fixture.inv**measured).s[:, 0, 0]
    np.testing.assert_allclose(deembed_fixture(measured.s[:, 0, 0], fixture_s), recovered)
    np.testing.assert_allclose(recovered, gamma, rtol=1e-9)


def test_device_on_port_one_matches_the_flipped_fixture():
    rng = np.random.default_rng(13)
    fixture_s = _random_s(rng, 2)
    gamma = _random_s(rng, 1)[0, 0]
    flipped = _network(fixture_s, 50.0).flipped()
    measured = (flipped ** _network(gamma[None, None], 50.0)).s[:, 0, 0]
    # source: scikit-rf Network.flipped and `**`
    np.testing.assert_allclose(embed_fixture(gamma, fixture_s, device_side_port=1), measured)
    np.testing.assert_allclose(deembed_fixture(measured, fixture_s, device_side_port=1), gamma)


def test_deembedding_a_fixture_that_does_not_transmit_is_refused():
    fixture = np.zeros((2, 2, 3), complex)
    fixture[0, 0] = 0.3
    with pytest.raises(InputError, match=r"2e\+09 Hz"):
        deembed_fixture(np.full(3, 0.3), fixture, frequency_hz=np.array([1e9, 2e9, 3e9]))
    with pytest.raises(InputError, match="sample"):
        deembed_fixture(np.full(3, 0.3), fixture)
