"""The Nyquist count against the natural frequencies of lumped negative-resistance loops.

Truth for every check here: numpy.roots of the characteristic polynomial n_d·d_L + n_L·d_d of
the closed loop, where Zd = n_d/d_d and ZL = n_L/d_L (METHODS §1: the zeros of F = 1 − Γd·ΓL
are the natural frequencies of the circuit). Random circuits come from a handful of families;
only those meeting the premise (the device alone into Z0 has no right-half-plane root, checked
with numpy.roots as well) are used, and only those whose natural frequencies and Γ poles sit far
enough from the jω axis for a finite grid to resolve them.

One allowance: where |L| is not below 1 at the top edge (a device with gain at every
frequency, or L tending to +1), or L tends to +1 at DC (F has a zero there), METHODS §2 calls
the closure not founded and the tool withholds the count from the sampled data; the test checks
that this is the only reason it does, and that the same circuits given as netlists, which the
check evaluates wherever the answer needs, get the numpy.roots count.
"""

from __future__ import annotations

import numpy as np
from hypothesis import assume, event, given, settings
from hypothesis import strategies as st

import oneport
from oneport.analysis import nyquist
from oneport.circuit.natural import joined_natural_frequencies

from lumped import (
    Z0,
    Impedance,
    capacitor,
    characteristic_polynomial,
    circuit,
    inductor,
    log_uniform,
    parallel,
    port,
    resistor,
    roots,
    series,
    series_rl_loads,
    tunnel_diodes,
)

POINTS = 3000
#: A root with |Re s| below this fraction of |s| is too sharp for the grid to be trusted with.
AXIS_FRACTION = 0.02
#: Largest ratio of root magnitudes accepted, so the log grid keeps enough points per decade.
MAX_SPREAD = 1e5


def limit_of_gamma(z: Impedance, side: str, z0: float = Z0) -> complex:
    """Exact Γ at s → 0 (``"low"``) or s → ∞ (``"high"``) from the polynomials."""
    n, d = np.trim_zeros(z[0].coeffs, "f"), np.trim_zeros(z[1].coeffs, "f")
    if side == "high":
        order_n, order_d = n.size, d.size
        a, b = n[0], d[0]
    else:
        order_n = -(n.size - np.flatnonzero(n)[-1])  # minus the order of the lowest term
        order_d = -(d.size - np.flatnonzero(d)[-1])
        a, b = n[np.flatnonzero(n)[-1]], d[np.flatnonzero(d)[-1]]
    if order_n > order_d:
        return 1.0 + 0j
    if order_n < order_d:
        return -1.0 + 0j
    return complex((a - z0 * b) / (a + z0 * b))


def check_against_roots(device: Impedance, load: Impedance, require=assume) -> str:
    """The shared body of every property: premise, resolvability, then the assertions.

    ``require`` filters (``hypothesis.assume``) or insists (an assertion, for explicit cases).
    Returns a short label of the outcome, for ``hypothesis.event`` statistics.
    """
    natural = roots(characteristic_polynomial(device, load))
    # Premise (METHODS §1–2): the device alone into Z0 has no RHP root — truth: numpy.roots.
    device_in_z0 = roots(characteristic_polynomial(device, resistor(Z0)))
    load_in_z0 = roots(characteristic_polynomial(load, resistor(Z0)))
    require(bool(np.all(device_in_z0.real < 0)))
    # The poles of F (each side into Z0) and its zeros (the natural frequencies) must be
    # resolvable on a finite grid: none on or too near the jω axis.
    critical = np.concatenate([natural, device_in_z0, load_in_z0])
    require(bool(np.all(np.abs(critical) > 0)))
    require(bool(np.all(np.abs(critical.real) >= AXIS_FRACTION * np.abs(critical))))
    # The grid spans every pole and zero of Γd and ΓL as well, so L has settled at both edges.
    scales = np.abs(
        np.concatenate([critical, roots(device[0] - Z0 * device[1]), roots(load[0] - Z0 * load[1])])
    )
    scales = scales[scales > 0]
    require(bool(scales.max() / scales.min() < MAX_SPREAD))
    frequency_hz = np.geomspace(1e-3 * scales.min(), 1e3 * scales.max(), POINTS) / (2 * np.pi)

    result = oneport.check(port(device, frequency_hz, "device"), port(load, frequency_hz, "load"))
    rhp = int(np.sum(natural.real > 0))
    context = (natural, result.reasons, [w.code for w in result.warnings])
    if result.encirclements is None:
        # Allowed only where METHODS §2 says the closure is not founded: towards infinity |L| is
        # not below 1 by more than the data's scatter (a device with gain at every frequency, or
        # L tending to +1); towards DC |L| ≥ 1 and L still moving, which on this grid happens
        # only when L tends to +1 itself (F has a zero at DC), so its sign is undefined.
        assert result.largest_phase_step_rad <= nyquist.UNSAFE_PHASE_STEP_RAD, context
        unfounded = [c for c in result.closures if not c.founded]
        assert unfounded, context
        for closure in unfounded:
            if closure.side == "high":
                assert abs(closure.loop_gain_at_edge) + closure.margin >= 1.0, (closure, *context)
                continue
            limit = limit_of_gamma(device, closure.side) * limit_of_gamma(load, closure.side)
            assert abs(limit - 1.0) < 1e-9, (closure, *context)
            assert abs(closure.loop_gain_at_edge) >= 1.0, (closure, *context)
        assert result.verdict == "inconclusive", context
        # The same circuits as netlists are known at every frequency: the check evaluates them
        # from DC to beyond their natural frequencies and must decide (truth: numpy.roots).
        netlists = oneport.check(circuit(device, "device"), circuit(load, "load"))
        assert netlists.encirclements == rhp, (netlists.reasons, *context)
        assert netlists.verdict == ("stable" if rhp == 0 else "unstable"), netlists.reasons
        return "data: top edge open; netlists decide"
    # truth: numpy.roots of the characteristic polynomial, METHODS §1
    assert result.encirclements == rhp, context
    # truth: numpy.roots — an odd RHP count means a real RHP root (METHODS §2)
    assert result.latch_up == bool(rhp % 2), context
    # truth: numpy.roots of the characteristic polynomial, METHODS §1
    assert result.verdict == ("stable" if rhp == 0 else "unstable"), context
    return f"count {rhp}"


def insist(condition: bool) -> None:
    assert condition


# --- families ----------------------------------------------------------------------------------

FAMILY = settings(max_examples=150, deadline=None, derandomize=True)


@FAMILY
@given(
    r=log_uniform(1.0, 100.0),
    inductance=log_uniform(0.1e-9, 10e-9),
    capacitance=log_uniform(0.2e-12, 20e-12),
    load=st.one_of(
        series_rl_loads(),
        st.builds(
            lambda r, c: parallel(resistor(r), capacitor(c)),
            log_uniform(1.0, 500.0),
            log_uniform(0.1e-12, 20e-12),
        ),
        st.builds(resistor, log_uniform(1.0, 500.0)),
    ),
)
def test_series_negative_rlc_device(
    r: float, inductance: float, capacitance: float, load: Impedance
) -> None:
    """Series −R + L + C device (stable into 50 Ω only when R < 50 Ω) into R+L, R∥C or R loads."""
    device = series(resistor(-r), inductor(inductance), capacitor(capacitance))
    event(check_against_roots(device, load))


@FAMILY
@given(device=tunnel_diodes(), load=series_rl_loads())
def test_tunnel_diode_into_series_rl(device: Impedance, load: Impedance) -> None:
    """Counts 0, 1 (R_T > Rd: latch-up) and 2 (R_T too small for L_T: oscillation)."""
    event(check_against_roots(device, load))


@FAMILY
@given(
    device=tunnel_diodes(),
    rf_resistance=log_uniform(5.0, 200.0),
    block=log_uniform(1e-12, 1e-9),
    bias_resistance=st.floats(0.0, 300.0),
    choke=log_uniform(1e-9, 1e-6),
)
def test_tunnel_diode_into_bias_tee(
    device: Impedance, rf_resistance: float, block: float, bias_resistance: float, choke: float
) -> None:
    """RF path through a DC block, in parallel with a bias path through a choke."""
    load = parallel(
        series(resistor(rf_resistance), capacitor(block)),
        series(resistor(bias_resistance), inductor(choke)),
    )
    event(check_against_roots(device, load))


@FAMILY
@given(
    device=tunnel_diodes(),
    r=log_uniform(1.0, 300.0),
    inductance=log_uniform(0.1e-9, 20e-9),
    block=log_uniform(1e-12, 1e-9),
)
def test_tunnel_diode_into_dc_blocked_load(
    device: Impedance, r: float, inductance: float, block: float
) -> None:
    """A series R + L load behind a DC block: no DC path, so F(0) is set by the block."""
    load = series(resistor(r), inductor(inductance), capacitor(block))
    event(check_against_roots(device, load))


@FAMILY
@given(
    r=log_uniform(5.0, 300.0),
    load=st.one_of(
        st.builds(
            lambda r, inductance, c: series(resistor(r), inductor(inductance), capacitor(c)),
            log_uniform(1.0, 300.0),
            log_uniform(0.5e-9, 50e-9),
            log_uniform(0.5e-12, 50e-12),
        ),
        st.builds(
            lambda r, c: parallel(resistor(r), capacitor(c)),
            log_uniform(1.0, 1000.0),
            log_uniform(0.1e-12, 20e-12),
        ),
        st.builds(
            lambda r, inductance, c: parallel(
                parallel(resistor(r), inductor(inductance)), capacitor(c)
            ),
            log_uniform(1.0, 1000.0),
            log_uniform(0.5e-9, 50e-9),
            log_uniform(0.5e-12, 50e-12),
        ),
    ),
)
def test_bare_negative_resistance(r: float, load: Impedance) -> None:
    """A bare −R (no dynamics, so trivially stable in Z0) into series RLC, R∥C or R∥L∥C.

    With R > Z0 into a series RLC both F(0) and F(∞) are negative (Γd > 1, ΓL → 1 at both ends):
    a complex pair with an even count and no crossing, the class of METHODS §7's series loop.
    Into R∥C the root is real (count 1, latch-up) when the load resistance exceeds R.
    """
    assume(abs(r - Z0) > 1.0)  # Γd = (R + Z0)/(R − Z0) is finite and not extreme
    event(check_against_roots(resistor(-r), load))


def test_families_cover_odd_and_both_negative_ends() -> None:
    """The families above do reach the cases the brief names, checked on explicit members.

    truth: numpy.roots of the characteristic polynomial, METHODS §1 (and METHODS §7 for the
    series loop, whose F(0) and F(∞) are both negative).
    """
    diode = series(resistor(4.0), inductor(0.6e-9), parallel(resistor(-80.0), capacitor(2e-12)))
    latch = series(resistor(150.0), inductor(1e-9))  # R_T = 154 Ω > Rd = 80 Ω: one real root
    assert int(np.sum(roots(characteristic_polynomial(diode, latch)).real > 0)) == 1
    check_against_roots(diode, latch, require=insist)
    loop = series(resistor(50.0), inductor(10e-9), capacitor(2.533e-12))
    natural = roots(characteristic_polynomial(resistor(-60.0), loop))
    assert int(np.sum(natural.real > 0)) == 2
    assert np.all(np.abs(natural.imag) > 0)
    check_against_roots(resistor(-60.0), loop, require=insist)


def test_a_near_short_beside_an_inductor_cut_set_adds_no_natural_frequency():
    # Device −1 Ω + 1 nH + 10 pF into 10 µΩ + 1 nH: the two inductors in series are one state,
    # so the characteristic polynomial has degree 2 (truth: numpy.roots), while the joined
    # pencil, with conductances from 1e-5 to 1e5 S, once gave a third, rounding-made
    # eigenvalue near 3e20 /s that left the verdict inconclusive.
    device = series(resistor(-1.0), inductor(1e-9), capacitor(1e-11))
    load = series(resistor(1e-5), inductor(1e-9))
    assert check_against_roots(device, load, require=insist).startswith("data")
    joined = joined_natural_frequencies(circuit(device, "device"), circuit(load, "load"))
    expected = roots(characteristic_polynomial(device, load))
    assert joined.size == expected.size == 2
    np.testing.assert_allclose(np.sort_complex(joined), np.sort_complex(expected), rtol=1e-6)


def test_only_right_half_plane_roots_pay_for_the_isolation_test(monkeypatch):
    """The isolation test (three SVDs of the pencil per root) runs only where a root would
    change a count: on a 40-section RLC ladder (passive: every natural frequency in the left
    half plane, common practice) it runs on none of the ~80 roots, and the near-short case
    above still loses its rounding-made root."""
    from oneport.circuit import Circuit, natural

    tested: list[complex] = []
    original = natural._isolated

    def recording(constant, slope, root, scale):
        tested.append(root)
        return original(constant, slope, root, scale)

    monkeypatch.setattr(natural, "_isolated", recording)
    monkeypatch.setattr(natural, "_SOLVED", type(natural._SOLVED)())  # solve afresh
    ladder = Circuit("ladder").resistor("RS", "0", "n0", 50.0)
    for k in range(40):
        ladder = ladder.inductor(f"L{k}", f"n{k}", f"n{k + 1}", 1e-9)
        ladder = ladder.capacitor(f"C{k}", f"n{k + 1}", "0", 1e-12).resistor(
            f"R{k}", f"n{k + 1}", "0", 1e3
        )
    roots = natural.natural_frequencies(ladder.port("n40"), 50.0)
    assert roots.size >= 40 and np.all(roots.real < 0)
    assert tested == [], "no left-half-plane root is tested"
    test_a_near_short_beside_an_inductor_cut_set_adds_no_natural_frequency()
    assert tested and all(root.real > 0 for root in tested)


def test_a_pencil_asked_twice_is_solved_once(monkeypatch):
    """The check asks for the same pencils for its grid and for its facts: the second answer
    comes from the first, equal and a copy of it (changing it changes nothing kept)."""
    from oneport.circuit import Circuit, natural

    monkeypatch.setattr(natural, "_SOLVED", type(natural._SOLVED)())
    solved: list[int] = []
    original = natural._finite_eigenvalues

    def counting(constant, slope, source):
        solved.append(constant.shape[0])
        return original(constant, slope, source)

    monkeypatch.setattr(natural, "_finite_eigenvalues", counting)
    device = Circuit("d").resistor("R1", "1", "0", -60.0).port("1")
    load = Circuit("l").resistor("R1", "1", "2", 50.0).inductor("L1", "2", "3", 10e-9)
    load = load.capacitor("C1", "3", "0", 2.533e-12).port("1")
    first = joined_natural_frequencies(device, load)
    first[:] = 0
    second = joined_natural_frequencies(device, load)
    assert len(solved) == 1
    np.testing.assert_allclose(np.abs(second.real), 5.0e8, rtol=1e-3)  # METHODS §7's example
    other = Circuit("l").resistor("R1", "1", "2", 40.0).inductor("L1", "2", "3", 10e-9)
    joined_natural_frequencies(device, other.capacitor("C1", "3", "0", 2.533e-12).port("1"))
    assert len(solved) == 2, "another circuit is solved anew"
