"""Stabilising advice checked against the truth of lumped circuits (numpy.roots) and closed forms.

Every range, recommendation and cost here is compared with something outside the project: the
natural frequencies of the changed circuit from ``numpy.roots`` (the Hurwitz boundaries of a
series or shunt resistor found by bisection on the root count), the tunnel-diode bias window
of METHODS §7 (a textbook result, from memory), the closed form |Γ|² of a negative resistance
with the added element (METHODS §6), and the existing check on the changed pair.
"""

from __future__ import annotations

import doctest
from collections.abc import Callable
from pathlib import Path

import numpy as np
import pytest

import oneport
from oneport.products.stabilise import adapter, families, goal, placements, verify

from lumped import (
    Impedance,
    capacitor,
    impedance,
    inductor,
    parallel,
    port,
    resistor,
    right_half_plane_roots,
    series,
    tunnel_diode,
)

ROOT = Path(__file__).resolve().parent.parent
Z0 = 50.0
#: Demo diode D1 of the shipped examples (touchstone_examples/README.md).
DIODE = tunnel_diode(4.0, 0.6e-9, 80.0, 2e-12)
#: A grid from 0 Hz: the check closes the loop on the DC sample itself, so ranges are exact.
GRID = np.linspace(0.0, 10e9, 2001)


def _count(device: Impedance, load: Impedance) -> int:
    return int(right_half_plane_roots(device, load).size)


def _hurwitz_edge(stable: Callable[[float], bool], inside: float, outside: float) -> float:
    """Bisection (geometric) on a root count from numpy.roots: the edge of the stable set."""
    assert stable(inside) and not stable(outside)
    for _ in range(60):
        middle = float(np.sqrt(inside * outside))
        inside, outside = (middle, outside) if stable(middle) else (inside, middle)
    return inside


def _within(value: float | None, truth: float, fraction: float = 0.02) -> bool:
    return value is not None and abs(value - truth) <= fraction * truth


@pytest.fixture(scope="module")
def series_window() -> oneport.products.stabilise.StabiliseResult:
    """Demo diode D1 into 10 ohm + 3 nH (the 'oscillates' circuit) on a grid from 0 Hz."""
    load = series(resistor(10.0), inductor(3e-9))
    return oneport.stabilise(
        port(DIODE, GRID, "diode"),
        port(load, GRID, "10 ohm + 3 nH"),
        families=["series-resistor", "shunt-resistor"],
        band=(1e9, 3e9),
    )


def test_series_resistor_range_is_the_tunnel_diode_bias_window(series_window):
    # METHODS §7 (textbook result, from memory): stable iff L_T/(Rd·Cj) < R_T < Rd, with
    # R_T = Rs + 10 ohm + R and L_T = Ls + 3 nH: 22.5 - 14 < R < 80 - 14 ohm.
    suggestion = next(s for s in series_window.suggestions if s.topology == "series-resistor")
    found = suggestion.stable_range["resistance_ohm"]
    assert _within(found.low, 3.6e-9 / (80.0 * 2e-12) - 14.0)
    assert _within(found.high, 80.0 - 14.0)
    # The same edges from numpy.roots on the characteristic polynomial with R added.
    load = series(resistor(10.0), inductor(3e-9))

    def stable(r: float) -> bool:
        return _count(DIODE, series(load, resistor(r))) == 0

    assert _within(found.low, _hurwitz_edge(stable, 30.0, 1.0))
    assert _within(found.high, _hurwitz_edge(stable, 30.0, 500.0))


def test_shunt_resistor_range_matches_numpy_roots(series_window):
    # numpy.roots: the largest shunt R for which 10 ohm + 3 nH in parallel with R holds D1.
    suggestion = next(s for s in series_window.suggestions if s.topology == "shunt-resistor")
    found = suggestion.stable_range["resistance_ohm"]
    load = series(resistor(10.0), inductor(3e-9))

    def stable(r: float) -> bool:
        return _count(DIODE, parallel(load, resistor(r))) == 0

    assert _within(found.high, _hurwitz_edge(stable, 5.0, 1e4))
    assert found.low is None or found.low < 0.1
    assert stable(suggestion.elements["resistance_ohm"])


def test_recommended_values_meet_the_margin_on_the_changed_pair(series_window):
    # The existing check on the changed circuit, sampled afresh from its lumped model, and
    # numpy.roots on it: stable, with |1 - L| at least the margin asked (0.3 by default).
    assert series_window.verdict == "stabilised"
    load = series(resistor(10.0), inductor(3e-9))
    for suggestion in series_window.suggestions:
        r = suggestion.elements["resistance_ohm"]
        changed = (
            series(load, resistor(r))
            if suggestion.topology == "series-resistor"
            else parallel(load, resistor(r))
        )
        assert _count(DIODE, changed) == 0
        check = oneport.check(port(DIODE, GRID, "diode"), port(changed, GRID, "changed"))
        assert check.verdict == "stable"
        assert check.margins.modulus_margin >= goal.DEFAULT_MIN_DISTANCE
        assert suggestion.reaches_margin and suggestion.verdict_after == "stable"
        # A preferred value (E24) is what goes to the bench.
        mantissa = r / 10 ** np.floor(np.log10(r))
        assert min(abs(mantissa - e) for e in (*scan_e24(), 10.0)) < 1e-9


def scan_e24() -> tuple[float, ...]:
    # IEC 60063 E24 series (common practice), written out here independently of the package.
    return (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3,
            4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)  # fmt: skip


def test_gain_cost_is_the_closed_form_of_the_series_resistor(series_window):
    # METHODS §6: a reflection amplifier's gain is |Γ|² of the device (here with the resistor
    # absorbed, Zd + R), Γ = (Z - Z0)/(Z + Z0) from the lumped impedance at each frequency.
    suggestion = next(s for s in series_window.suggestions if s.topology == "series-resistor")
    band = GRID[(GRID >= 1e9) & (GRID <= 3e9)]
    z_device = impedance(DIODE, band)
    before = 20 * np.log10(np.abs((z_device - Z0) / (z_device + Z0)))
    changed = z_device + suggestion.elements["resistance_ohm"]
    after = 20 * np.log10(np.abs((changed - Z0) / (changed + Z0)))
    cost = suggestion.cost
    assert cost.kind == "reflection-gain"
    # Linear inside the result (SI), dB in its JSON.
    assert 20 * np.log10(cost.before) == pytest.approx((before.min(), before.max()), abs=1e-6)
    assert 20 * np.log10(cost.after) == pytest.approx((after.min(), after.max()), abs=1e-6)
    assert 20 * np.log10(cost.largest_loss) == pytest.approx(np.max(before - after), abs=1e-6)
    data = cost.to_dict()
    assert data["largest_loss_db"] == pytest.approx(np.max(before - after), abs=1e-6)
    assert data["before_db"]["min"] == pytest.approx(before.min(), abs=1e-6)


@pytest.mark.parametrize(
    ("topology", "closed_form"),
    [
        ("series-resistor", lambda rn, r: complex(r - rn)),
        ("shunt-resistor", lambda rn, r: 1.0 / (-1.0 / rn + 1.0 / r)),
    ],
)
def test_gain_cost_of_a_pure_negative_resistance(topology, closed_form):
    # METHODS §6: a negative resistance -R has Γ = (R + Z0)/(R - Z0); with the element added
    # its impedance is -Rn + R (series) or 1/(-1/Rn + 1/R) (shunt), and the gain |Γ|² follows.
    rn, r = 80.0, 22.0
    grid = np.linspace(1e6, 4e9, 401)
    device = oneport.OnePort(grid, np.full(grid.size, (-rn - Z0) / (-rn + Z0)), Z0, "-80 ohm")
    load = port(series(resistor(20.0), inductor(2e-9)), grid, "load")
    pair = adapter.prepare_pair(device, load)
    (placement,) = placements.port_placements(pair, (topology,))
    requirement = goal.Requirement(0.3, None, None, (1e9, 3e9), True)
    columns = np.flatnonzero((grid >= 1e9) & (grid <= 3e9))
    cost = verify.gain_cost(placement, {"resistance_ohm": r}, requirement, columns)
    z = closed_form(rn, r)
    expected_before = 20 * np.log10(abs((rn + Z0) / (rn - Z0)))
    expected_after = 20 * np.log10(abs((z - Z0) / (z + Z0)))
    assert cost is not None
    assert 20 * np.log10(cost.before[0]) == pytest.approx(expected_before, abs=1e-9)
    assert 20 * np.log10(cost.after[1]) == pytest.approx(expected_after, abs=1e-9)
    assert 20 * np.log10(cost.largest_loss) == pytest.approx(
        expected_before - expected_after, abs=1e-9
    )


def test_network_in_reflection_form_matches_the_impedance_sum():
    # Common practice: Γ = (Z - Z0)/(Z + Z0); a series network adds impedance, a shunt one
    # admittance. The reflection form of families.add_network must agree on every family.
    grid = np.linspace(1e6, 6e9, 301)
    z_load = impedance(series(resistor(12.0), inductor(2e-9), capacitor(5e-12)), grid)
    gamma = (z_load - Z0) / (z_load + Z0)
    s = 2j * np.pi * grid
    r, c, ind = 33.0, 4.7e-12, 6.8e-9
    expected = {
        "series-resistor": z_load + r,
        "shunt-resistor": 1 / (1 / z_load + 1 / r),
        "shunt-rc": 1 / (1 / z_load + 1 / (r + 1 / (s * c))),
        "series-rl": z_load + 1 / (1 / r + 1 / (s * ind)),
    }
    values = {"resistance_ohm": r, "capacitance_f": c, "inductance_h": ind}
    for name, z in expected.items():
        changed = families.add_network(gamma, families.family(name), grid, values, Z0)
        assert np.allclose(changed, (z - Z0) / (z + Z0), atol=1e-12), name


def _two_modes() -> tuple[Impedance, Impedance]:
    """A series-type negative resistance (-15 ohm + 1 nH, stable in 50 ohm) into 10 ohm, a
    parallel tank (5 nH, 1 GHz) and 50 pF in series: numpy.roots puts one growing pair near
    276 MHz and another near 2.50 GHz."""
    device = series(resistor(-15.0), inductor(1e-9))
    tank_c = 1 / ((2 * np.pi * 1e9) ** 2 * 5e-9)
    load = series(resistor(10.0), parallel(inductor(5e-9), capacitor(tank_c)), capacitor(50e-12))
    return device, load


def test_keep_leaves_exactly_the_wanted_mode():
    device, load = _two_modes()
    before = right_half_plane_roots(device, load)
    wanted = [r for r in before if r.imag > 0 and abs(r.imag / (2 * np.pi) - 276e6) < 30e6]
    assert before.size == 4 and len(wanted) == 1  # numpy.roots: two growing pairs
    result = oneport.stabilise(
        port(device, GRID, "device"),
        port(load, GRID, "load"),
        keep="276MHz",
        margin=0.2,
        families=["series-rl"],
    )
    assert result.verdict == "stabilised"
    (suggestion,) = result.suggestions
    r, ind = suggestion.elements["resistance_ohm"], suggestion.elements["inductance_h"]
    after = right_half_plane_roots(device, series(load, parallel(resistor(r), inductor(ind))))
    # numpy.roots on the changed circuit: one growing pair, within 10 % of the wanted mode.
    assert after.size == 2
    frequency = abs(after[0].imag) / (2 * np.pi)
    assert abs(frequency - 276e6) <= 0.1 * 276e6
    mode = suggestion.cost
    assert mode.starts and suggestion.verdict_after == "unstable"
    # The pole-zero fit's growth rate and frequency against numpy.roots (within 5 %).
    assert mode.sigma_per_s == pytest.approx(after[0].real, rel=0.05)
    assert mode.natural_frequency_hz == pytest.approx(frequency, rel=0.05)


def test_tolerance_fraction_matches_the_window():
    # Uniform ±60 % on the series resistor: the fraction inside the bias window of METHODS §7
    # (8.5 ohm < R < 66 ohm, from memory) is the window's share of R·(1 ± 0.6).
    load = series(resistor(10.0), inductor(3e-9))
    result = oneport.stabilise(
        port(DIODE, GRID, "diode"),
        port(load, GRID, "load"),
        families=["series-resistor"],
        tolerance="60%",
        samples=4000,
        seed=3,
    )
    (suggestion,) = result.suggestions
    r = suggestion.elements["resistance_ohm"]
    low, high = r * 0.4, r * 1.6
    expected = (min(high, 66.0) - max(low, 8.5)) / (high - low)
    run = suggestion.tolerance
    assert run is not None and run.samples == 4000 and run.seed == 3
    assert run.fraction_goal_met == pytest.approx(expected, abs=0.03)
    again = oneport.stabilise(
        port(DIODE, GRID, "diode"),
        port(load, GRID, "load"),
        families=["series-resistor"],
        tolerance="60%",
        samples=4000,
        seed=3,
    )
    assert again.suggestions[0].tolerance == run  # seeded: the run repeats


def test_at_node_resistors_in_a_load_netlist(tmp_path):
    # The series R-L load as a netlist: a resistor in series with L1 is the series resistor of
    # the bias window (METHODS §7, from memory); one from node 2 to ground shunts L1, and its
    # edge comes from numpy.roots on R1 + (L1 ∥ Rx).
    netlist = tmp_path / "load.cir"
    netlist.write_text("* series R-L\nR1 1 2 10\nL1 2 0 3n\n.oneport 1\n", encoding="utf-8")
    result = oneport.stabilise(
        port(DIODE, GRID, "diode"), str(netlist), families=(), at_node=["L1", "2"]
    )
    by_kind = {s.position.kind: s for s in result.suggestions}
    in_series = by_kind["element"].stable_range["resistance_ohm"]
    assert _within(in_series.low, 8.5) and _within(in_series.high, 66.0)

    def stable(rx: float) -> bool:
        load = series(resistor(10.0), parallel(inductor(3e-9), resistor(rx)))
        return _count(DIODE, load) == 0

    to_ground = by_kind["node"].stable_range["resistance_ohm"]
    assert to_ground.low is None and stable(1e-3)  # shorting L1 leaves 10 ohm: stable
    assert _within(to_ground.high, _hurwitz_edge(stable, 50.0, 1e4))
    for suggestion in result.suggestions:
        assert suggestion.verdict_after == "stable"
        assert suggestion.check_after.inputs[1].version == "netlist"


def test_port_networks_on_a_netlist_load_equal_those_on_its_samples(tmp_path):
    # The same load as a netlist (the network built into the netlist, its natural frequencies
    # counted) and as samples of its lumped model (common practice: Z = R + sL): one answer.
    netlist = tmp_path / "load.cir"
    netlist.write_text("R1 1 2 10\nL1 2 0 3n\n.oneport 1\n", encoding="utf-8")
    lumped_load = port(series(resistor(10.0), inductor(3e-9)), GRID, "samples")
    chosen = ["series-resistor", "shunt-rc"]
    device = port(DIODE, GRID, "diode")
    as_netlist = oneport.stabilise(device, str(netlist), families=chosen)
    as_samples = oneport.stabilise(device, lumped_load, families=chosen)
    for one, other in zip(as_netlist.suggestions, as_samples.suggestions, strict=True):
        assert one.topology == other.topology and one.elements == other.elements
        for key, found in one.stable_range.items():
            twin = other.stable_range[key]
            for a, b in ((found.low, twin.low), (found.high, twin.high)):
                assert (a is None and b is None) or a == pytest.approx(b, rel=1e-3)
        assert one.verdict_after == other.verdict_after == "stable"
    assert "netlist" in as_netlist.suggestions[0].check_after.premise


@pytest.fixture(scope="module")
def shipped() -> dict[str, oneport.products.stabilise.StabiliseResult]:
    examples = ROOT / "touchstone_examples"
    return {
        "oscillates": oneport.stabilise(
            examples / "oscillates" / "device.s1p", examples / "oscillates" / "load.s1p"
        ),
        "latch-up": oneport.stabilise(
            examples / "latch-up" / "device.s1p", examples / "latch-up" / "load.ts"
        ),
    }


def test_shipped_oscillating_example_gets_the_bias_window(shipped):
    # touchstone_examples/README.md: stable iff L_T/(Rd·Cj) < R_T < Rd; oscillates/ has
    # R_T = 14 ohm + R and L_T = 3.6 nH, so 8.5 ohm < R < 66 ohm (measured data: within 2 %).
    result = shipped["oscillates"]
    assert result.verdict == "stabilised"
    found = next(s for s in result.suggestions if s.topology == "series-resistor")
    assert _within(found.stable_range["resistance_ohm"].low, 8.5)
    assert _within(found.stable_range["resistance_ohm"].high, 66.0)
    # Outside the window the pair oscillates (below) or latches up (above), by the same
    # closed form; the values right at each edge are inconclusive (the loop passes through
    # +1 there), and the range says what lies beyond them.
    window = found.stable_range["resistance_ohm"]
    assert (window.beyond_low, window.beyond_high) == ("unstable", "unstable")
    for suggestion in result.suggestions:
        assert suggestion.verdict_after == "stable" and suggestion.reaches_margin


def test_shipped_latch_up_example_needs_a_shunt_resistor(shipped):
    # latch-up/README.md: the bias tee's 150 ohm DC path exceeds Rd - Rs = 76 ohm. A shunt R
    # cures it when 150 ∥ R < 76 ohm, i.e. R < 154.05 ohm (closed form); a series resistor
    # only adds to the DC resistance, and networks open or shorted at DC cannot touch it.
    result = shipped["latch-up"]
    assert result.verdict == "stabilised"
    shunt = next(s for s in result.suggestions if s.topology == "shunt-resistor")
    assert _within(shunt.stable_range["resistance_ohm"].high, 150 * 76 / (150 - 76))
    assert shunt.verdict_after == "stable"
    unsolved = {u.topology for u in result.unsolved}
    assert {"series-resistor", "series-rl"} <= unsolved
    assert all(s.reaches_margin is False for s in result.suggestions if s.topology == "shunt-rc")


def test_result_json_is_the_schema(shipped):
    import json

    data = shipped["oscillates"].to_dict()
    text = json.dumps(data, allow_nan=False)  # no NaN or infinity anywhere
    assert json.loads(text)["schema"] == "oneport.stabilise/2"
    for key in ("verdict", "reasons", "warnings", "cautions", "inputs", "suggestions"):
        assert key in data
    units = {"resistance_ohm", "capacitance_f", "inductance_h"}
    for suggestion in data["suggestions"]:
        for key in ("topology", "position", "elements", "stable_range", "verdict_after"):
            assert key in suggestion
        assert set(suggestion["elements"]) <= units
        assert set(suggestion["stable_range"]) == set(suggestion["elements"])
        for edges in suggestion["stable_range"].values():
            assert {"low", "high"} <= set(edges)
        assert suggestion["margins_after"]["reference_impedance_ohm"] == 50.0
        assert suggestion["cost"]["reference_impedance_ohm"] == 50.0


def test_plot_draws_before_and_after(shipped):
    figure = shipped["oscillates"].plot()
    gids = {line.get_gid() for ax in figure.axes for line in ax.get_lines()}
    assert {"loop-gain-before", "loop-gain-after", "nyquist-before", "nyquist-after"} <= gids
    assert "critical-point" in gids


def test_an_undecidable_pair_is_not_advised_on():
    examples = ROOT / "touchstone_examples" / "undecidable"
    result = oneport.stabilise(examples / "device.s1p", examples / "load.s1p")
    assert result.verdict == "inconclusive" and not result.suggestions
    assert result.next_steps  # what would decide it: extend the sweep or give the DC facts


def test_an_already_stable_pair_needs_no_change():
    examples = ROOT / "touchstone_examples" / "stable"
    result = oneport.stabilise(examples / "device.s1p", examples / "load.s1p", margin=0.1)
    assert result.verdict == "no-change-needed" and not result.suggestions


@pytest.mark.parametrize(
    ("options", "message"),
    [
        ({"margin": 2}, "between 0 and 1"),
        ({"margin": "0dB"}, "above 0 dB"),
        ({"keep": "3GHz"}, "no oscillation"),
        ({"band": "3GHz:2GHz"}, "low end"),
        ({"families": ["series-capacitor"]}, "accepted"),
        ({"at_node": ["n1"]}, "not a netlist"),
        ({"tolerance": "L=5%"}, "not a netlist"),
        ({"tolerance": "5"}, "PERCENT%"),
        ({"tolerance": "5%", "samples": 0}, "from 1 to"),
    ],
)
def test_bad_input_is_one_clear_error(options, message):
    examples = ROOT / "touchstone_examples" / "oscillates"
    with pytest.raises(oneport.InputError, match=message):
        oneport.stabilise(examples / "device.s1p", examples / "load.s1p", **options)


def test_docstring_examples_run(monkeypatch):
    import oneport.products.stabilise.advice as advice
    import oneport.products.stabilise.wording as wording

    monkeypatch.chdir(ROOT)
    for module in (wording, advice):
        failed, attempted = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
        assert attempted > 0 and failed == 0, module.__name__
