"""Properties of the check that hold whatever the circuit (hypothesis).

- A passive pair (|Γd| ≤ 1 and |ΓL| ≤ 1) is never "unstable": |L| ≤ 1 keeps F = 1 − L in the
  closed right half plane, so F cannot encircle the origin (small-gain argument, METHODS §6).
- A finer grid over the same lumped circuit does not change a resolved count.
- The same data in Hz or GHz, or with the load referred to another Z0, give the same answer.
- ``count_encirclements`` on stacked variants equals row-by-row calls.
- ``close_edges`` reads only ``closure_columns``: on those columns it gives the same answer.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
from hypothesis import assume, example, given, settings
from hypothesis import strategies as st

import oneport
from oneport import OnePort
from oneport.analysis import nyquist
from oneport.reading.alignment import renormalise

from helpers import write_touchstone
from lumped import (
    Z0,
    Impedance,
    capacitor,
    gamma,
    inductor,
    log_uniform,
    natural_frequencies,
    parallel,
    port,
    resistor,
    roots,
    series,
    series_rl_loads,
    tunnel_diodes,
    wide_grid,
)

# --- strategies --------------------------------------------------------------------------------


def passive_impedance(max_leaves: int = 6) -> st.SearchStrategy[Impedance]:
    """Random series/parallel trees of positive R, L and C: passive, so |Γ| ≤ 1 in any Z0 > 0."""
    leaf = st.one_of(
        st.builds(resistor, log_uniform(0.1, 1e4)),
        st.builds(inductor, log_uniform(0.1e-9, 100e-9)),
        st.builds(capacitor, log_uniform(0.1e-12, 100e-12)),
    )
    return st.recursive(
        leaf,
        lambda children: st.one_of(
            st.builds(series, children, children), st.builds(parallel, children, children)
        ),
        max_leaves=max_leaves,
    )


def trace_knots() -> st.SearchStrategy[tuple[list[float], list[float]]]:
    """Knots of a smooth reflection: magnitudes in [0, 1] and phases (rad), 2 to 12 of each."""
    return st.integers(2, 12).flatmap(
        lambda k: st.tuples(
            st.lists(st.floats(0.0, 1.0), min_size=k, max_size=k),
            st.lists(st.floats(-30.0, 30.0), min_size=k, max_size=k),
        )
    )


def smooth_passive_trace(knots: tuple[list[float], list[float]], points: int) -> np.ndarray:
    """|Γ| ≤ 1 everywhere: magnitude and phase interpolated linearly between the knots."""
    magnitude, phase = knots
    x = np.linspace(0.0, 1.0, points)
    knot_x = np.linspace(0.0, 1.0, len(magnitude))
    return np.interp(x, knot_x, magnitude) * np.exp(1j * np.interp(x, knot_x, phase))


def lumped_load() -> st.SearchStrategy[Impedance]:
    return st.one_of(
        series_rl_loads(),
        st.builds(
            lambda r1, c1, r2, l2: parallel(
                series(resistor(r1), capacitor(c1)), series(resistor(r2), inductor(l2))
            ),
            log_uniform(5.0, 200.0),
            log_uniform(1e-12, 1e-9),
            st.floats(0.0, 300.0),
            log_uniform(1e-9, 1e-6),
        ),
    )


def lumped_grid(device: Impedance, load: Impedance, points: int) -> np.ndarray:
    """Log grid from 1e-3 of the slowest to 1e3 times the fastest pole or zero of Γd, ΓL, F."""
    (n_d, d_d), (n_l, d_l) = device, load
    return wide_grid(
        natural_frequencies(device, load),
        roots(n_d + Z0 * d_d),
        roots(n_d - Z0 * d_d),
        roots(n_l + Z0 * d_l),
        roots(n_l - Z0 * d_l),
        points=points,
    )


# --- passive pairs -----------------------------------------------------------------------------

FREQUENCY_HZ = np.geomspace(1e6, 1e11, 800)


@settings(max_examples=150, deadline=None)
@given(device=passive_impedance(), load=passive_impedance(), z0=log_uniform(1.0, 1000.0))
def test_passive_rational_pair_is_never_unstable(
    device: Impedance, load: Impedance, z0: float
) -> None:
    gamma_device = gamma(device, FREQUENCY_HZ, z0)
    gamma_load = gamma(load, FREQUENCY_HZ, z0)
    assume(np.all(np.isfinite(gamma_device)) and np.all(np.isfinite(gamma_load)))
    result = oneport.check(
        OnePort(FREQUENCY_HZ, gamma_device, z0, "passive device"),
        OnePort(FREQUENCY_HZ, gamma_load, z0, "passive load"),
    )
    # Small-gain argument (common practice; METHODS §6): |L| ≤ 1 cannot encircle +1
    assert result.verdict != "unstable", result.reasons
    assert result.encirclements in (None, 0), result.reasons


@settings(max_examples=150, deadline=None)
@given(device_knots=trace_knots(), load_knots=trace_knots())
# An open circuit whose phase is a subnormal float: 1 − Γ underflows to ±5e-324j
@example(device_knots=([0.0, 0.0], [0.0, 0.0]), load_knots=([1.0, 0.0], [5e-324, 0.0]))
def test_passive_smooth_traces_are_never_unstable(
    device_knots: tuple[list[float], list[float]], load_knots: tuple[list[float], list[float]]
) -> None:
    gamma_device = smooth_passive_trace(device_knots, FREQUENCY_HZ.size)
    gamma_load = smooth_passive_trace(load_knots, FREQUENCY_HZ.size)
    result = oneport.check(
        OnePort(FREQUENCY_HZ, gamma_device, Z0, "passive trace"),
        OnePort(FREQUENCY_HZ, gamma_load, Z0, "passive trace"),
    )
    # Small-gain argument (common practice; METHODS §6): |L| ≤ 1 cannot encircle +1
    assert result.verdict != "unstable", result.reasons
    assert result.encirclements in (None, 0), result.reasons


# --- grid refinement ---------------------------------------------------------------------------


@settings(max_examples=60, deadline=None)
@given(device=tunnel_diodes(), load=lumped_load())
def test_finer_sampling_keeps_a_resolved_count(device: Impedance, load: Impedance) -> None:
    (n_d, d_d), (n_l, d_l) = device, load
    assume(np.all(roots(n_d + Z0 * d_d).real < 0))  # premise (numpy.roots)
    # Poles and zeros of F resolvable at all (none within 2 % of |s| of the jω axis): a sharper
    # one can hide between samples of any of these grids (METHODS §2, "Sampling").
    critical = np.concatenate([roots(n_d * d_l + n_l * d_d), roots(n_d + Z0 * d_d)])
    critical = np.concatenate([critical, roots(n_l + Z0 * d_l)])
    assume(np.all(np.abs(critical.real) >= 0.02 * np.abs(critical)))
    counts = []
    for points in (1000, 2000, 4000):
        frequency_hz = lumped_grid(device, load, points)
        result = oneport.check(
            port(device, frequency_hz, "device"), port(load, frequency_hz, "load")
        )
        counts.append(result.encirclements)
    resolved = [c for c in counts if c is not None]
    # A count, once resolved, stays put as the grid gets finer (and a finer grid resolves it too)
    assert len(set(resolved)) <= 1, counts
    if counts[0] is not None:
        assert counts[1] == counts[2] == counts[0], counts


# --- units and reference impedance -------------------------------------------------------------


@settings(max_examples=25, deadline=None)
@given(device=tunnel_diodes(), load=lumped_load())
def test_hz_and_ghz_files_give_the_same_answer(device: Impedance, load: Impedance) -> None:
    frequency_hz = lumped_grid(device, load, 600)
    gamma_device, gamma_load = gamma(device, frequency_hz), gamma(load, frequency_hz)
    results = {}
    with tempfile.TemporaryDirectory() as folder:
        for unit in ("Hz", "GHz"):
            results[unit] = oneport.check(
                write_touchstone(
                    Path(folder) / f"device_{unit}.s1p", frequency_hz, gamma_device, unit=unit
                ),
                write_touchstone(
                    Path(folder) / f"load_{unit}.s1p", frequency_hz, gamma_load, unit=unit
                ),
            )
    hz, ghz = results["Hz"], results["GHz"]
    assert hz.verdict == ghz.verdict
    assert hz.encirclements == ghz.encirclements
    assert hz.latch_up == ghz.latch_up
    assert np.allclose(hz.frequency_hz, ghz.frequency_hz, rtol=1e-12, atol=0)
    assert len(hz.crossings) == len(ghz.crossings)
    for a, b in zip(hz.crossings, ghz.crossings, strict=True):
        assert np.isclose(a.frequency_hz, b.frequency_hz, rtol=1e-9)


@settings(max_examples=60, deadline=None)
@given(device=tunnel_diodes(), load=lumped_load(), z0=log_uniform(5.0, 500.0))
def test_load_referred_to_another_z0_gives_the_same_answer(
    device: Impedance, load: Impedance, z0: float
) -> None:
    frequency_hz = lumped_grid(device, load, 1500)
    device_port = OnePort(frequency_hz, gamma(device, frequency_hz), Z0, "device")
    gamma_load = gamma(load, frequency_hz)
    direct = oneport.check(device_port, OnePort(frequency_hz, gamma_load, Z0, "load"))
    moved = oneport.check(
        device_port,
        OnePort(frequency_hz, renormalise(gamma_load, Z0, z0), z0, f"load at {z0:g} ohm"),
    )
    assert moved.reference_impedance_ohm == Z0
    assert np.allclose(moved.loop_gain, direct.loop_gain, rtol=1e-9, atol=1e-12)
    codes = ([w.code for w in direct.warnings], [w.code for w in moved.warnings])
    assert moved.encirclements == direct.encirclements, codes
    assert moved.verdict == direct.verdict, codes
    assert moved.latch_up == direct.latch_up


# --- vectorised engine -------------------------------------------------------------------------


@settings(max_examples=100, deadline=None)
@given(
    seed=st.integers(0, 2**32 - 1),
    rows=st.integers(1, 6),
    points=st.integers(2, 200),
    scale=log_uniform(0.1, 10.0),
)
def test_stacked_count_equals_row_by_row(seed: int, rows: int, points: int, scale: float) -> None:
    rng = np.random.default_rng(seed)
    # Random walks around the plane (some wander round +1, some jump): any data will do, the
    # property is only that stacking variants changes nothing.
    steps = rng.normal(size=(rows, points)) + 1j * rng.normal(size=(rows, points))
    loop_gain = 1.0 + scale * np.cumsum(steps, axis=-1) / np.sqrt(points)
    sign_low = rng.choice([-1, 1], size=rows)
    sign_high = rng.choice([-1, 1], size=rows)
    stacked = nyquist.count_encirclements(loop_gain, sign_low, sign_high)
    assert stacked.shape == (rows,)
    for row in range(rows):
        single = nyquist.count_encirclements(
            loop_gain[row], np.array(sign_low[row]), np.array(sign_high[row])
        )
        assert int(single) == int(stacked[row])
    # a further leading axis changes nothing either
    deeper = nyquist.count_encirclements(
        np.stack([loop_gain, loop_gain[::-1]]),
        np.stack([sign_low, sign_low[::-1]]),
        np.stack([sign_high, sign_high[::-1]]),
    )
    assert np.array_equal(deeper[0], stacked)
    assert np.array_equal(
        deeper[1], nyquist.count_encirclements(loop_gain[::-1], sign_low[::-1], sign_high[::-1])
    )


@settings(max_examples=150, deadline=None)
@given(
    seed=st.integers(0, 2**32 - 1),
    points=st.integers(2, 400),
    start_hz=st.sampled_from([0.0, 1e3, 1e6, 0.3e9]),
    span=log_uniform(1.01, 1e4),
    logarithmic=st.booleans(),
)
def test_edge_closures_need_only_their_columns(
    seed: int, points: int, start_hz: float, span: float, logarithmic: bool
) -> None:
    rng = np.random.default_rng(seed)
    low = start_hz if start_hz > 0 else 1e6
    if logarithmic:
        frequency_hz = np.geomspace(low, low * span, points)
    else:
        frequency_hz = np.linspace(start_hz, low * span, points)
    frequency_hz = np.unique(frequency_hz)
    loop_gain = 2.0 * (rng.normal(size=(3, frequency_hz.size)) + 1j * rng.normal(size=(3, 1)))
    columns = nyquist.closure_columns(frequency_hz)
    for side in ("low", "high"):
        whole = nyquist.close_edges(frequency_hz, loop_gain, side)
        few = nyquist.close_edges(frequency_hz[columns], loop_gain[:, columns], side)
        np.testing.assert_array_equal(few.basis_code, whole.basis_code)
        np.testing.assert_array_equal(few.sign_at_limit, whole.sign_at_limit)
        np.testing.assert_array_equal(few.motion, whole.motion)
