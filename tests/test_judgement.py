"""One judgement, never 'stable' beyond the data: truncated sweeps, hidden resonators, netlist
pairs against numpy.roots and the joined circuit's eigenvalues, and the second opinion."""

from __future__ import annotations

import importlib.util
import json
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import oneport
from oneport.analysis.judgement import judge
from oneport.analysis.pole_zero import identify_natural_frequencies
from oneport.products.pair import prepare_pair
from oneport.reading.touchstone import read_one_port

from helpers import run_cli
from lumped import (
    capacitor,
    circuit,
    gamma,
    inductor,
    log_uniform,
    natural_frequencies,
    parallel,
    port,
    resistor,
    right_half_plane_roots,
    series,
    tunnel_diode,
)

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"


def _generator():
    spec = importlib.util.spec_from_file_location("generate", EXAMPLES / "generate.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


GENERATOR = _generator()


def _load_file(name: str) -> Path:
    (found,) = EXAMPLES.joinpath(name).glob("load.*")
    return found


# --- the closure towards infinity: only |L| < 1 founds it -----------------------------------------


def test_the_first_twenty_lines_of_the_oscillating_load_are_not_stable(tmp_path):
    # The reproducer of the report: the oscillating example's load cut after its first 20 data
    # lines (500 kHz to 155 MHz), where |L| is still about 10 dB at the top edge. METHODS §2:
    # that edge is not founded, so the verdict is inconclusive with the extension to make.
    lines = _load_file("oscillates").read_text().splitlines()
    header = [line for line in lines if not line[:1].isdigit()]
    data = [line for line in lines if line[:1].isdigit()][:20]
    truncated = tmp_path / "load.s1p"
    truncated.write_text("\n".join(header + data) + "\n")
    device = EXAMPLES / "oscillates" / "device.s1p"
    code, out, err = run_cli("check", device, "--load", truncated, "--json")
    result = json.loads(out)
    assert (code, err) == (4, "")  # CONVENTIONS.md: inconclusive
    assert result["verdict"] == "inconclusive" and result["encirclements"] is None
    assert result["closure"]["high"]["founded"] is False
    extend = result["closure"]["high"]["extend_to_hz"]
    assert extend is not None and extend > 155e6
    # a plain figure: one of 1, 1.5, 2, 3, 5, 7 times a power of ten
    mantissa = extend / 10 ** np.floor(np.log10(extend))
    assert min(abs(mantissa - m) for m in (1, 1.5, 2, 3, 5, 7, 10)) < 1e-9
    assert any("Extend the sweep up to about" in step for step in result["next_steps"])


@pytest.mark.parametrize("name", ["oscillates", "latch-up"])
def test_truncating_an_unstable_example_at_every_point_never_gives_stable(name):
    # truth: numpy.roots of each example's characteristic polynomial (generate.ground_truth):
    # both examples have right-half-plane natural frequencies.
    roots = GENERATOR.ground_truth()[name]
    assert np.sum(roots.real > 0) > 0
    device = read_one_port(EXAMPLES / name / "device.s1p")
    load = read_one_port(_load_file(name))
    seen = set()
    for points in range(2, load.points + 1):
        cut = replace(load, frequency_hz=load.frequency_hz[:points], gamma=load.gamma[:points])
        try:
            pair = prepare_pair(device, cut)
        except oneport.NoOverlapError:
            continue  # fewer than five shared points: refused, not judged
        # the one judgement every command takes its verdict from
        verdict = str(
            judge(pair.frequency_hz, pair.gamma_device, pair.gamma_load, pair.facts).verdicts()
        )
        assert verdict != "stable", (name, points)
        seen.add(verdict)
        if points % 97 == 0:  # now and then the whole check, words included
            assert oneport.check(device, cut).verdict == verdict
    assert seen == {"inconclusive", "unstable"}


# --- a resonance hidden between the load's samples, where the device has gain ---------------------

LOG_GRID_HZ = np.geomspace(1e6, 10e9, 801)
# A parallel tank (1 kΩ, unloaded Q = 10000, invented) coupled through 20 Ω in series and
# 300 Ω across into the demo diode's 30 Ω + 1 nH load; it resonates half-way (geometrically)
# between two samples of the 801-point log grid, where the diode has |Γd| > 1.
_RESONANCE_HZ = float(np.sqrt(LOG_GRID_HZ[500] * LOG_GRID_HZ[501]))
_TANK_L = 1000.0 / (10000.0 * 2 * np.pi * _RESONANCE_HZ)
_TANK_C = 1.0 / ((2 * np.pi * _RESONANCE_HZ) ** 2 * _TANK_L)
RESONATOR_LOAD = series(
    resistor(30.0),
    inductor(1e-9),
    parallel(
        resistor(300.0),
        series(resistor(20.0), parallel(resistor(1000.0), inductor(_TANK_L), capacitor(_TANK_C))),
    ),
)
DIODE = tunnel_diode(4.0, 0.6e-9, 80.0, 2e-12)


def test_a_hidden_resonator_is_not_called_stable_and_a_finer_grid_counts_it():
    # truth: numpy.roots of the characteristic polynomial: a complex pair near 318 MHz with a
    # loaded Q (|s|/2σ) in the hundreds; without the tank the loop is stable, and the diode is
    # stable into 50 Ω (the premise).
    rhp = right_half_plane_roots(DIODE, RESONATOR_LOAD)
    assert rhp.size == 2
    loaded_q = abs(rhp[0]) / (2 * rhp[0].real)
    assert 100 < loaded_q < 1000
    assert abs(abs(rhp[0].imag) / (2 * np.pi) / _RESONANCE_HZ - 1) < 0.01
    plain = series(resistor(30.0), inductor(1e-9), parallel(resistor(300.0), resistor(20.0)))
    assert right_half_plane_roots(DIODE, plain).size == 0
    assert right_half_plane_roots(DIODE, resistor(50.0)).size == 0

    coarse = oneport.check(
        port(DIODE, LOG_GRID_HZ, "device"), port(RESONATOR_LOAD, LOG_GRID_HZ, "load")
    )
    # Across the resistive coupling the tank leaves no clean reactive sign change and the phase
    # of 1 - L never steps by 45 degrees: only the isolated jump of gamma_load shows it.
    assert np.degrees(coarse.largest_phase_step_rad) < 45.0
    assert coarse.verdict == "inconclusive"
    (feature,) = coarse.hidden_resonances
    assert feature.kind == "jump"
    assert feature.start_hz < _RESONANCE_HZ < feature.stop_hz
    span = f"between {oneport.units.format_frequency(feature.start_hz)}"
    assert any(step.startswith("Measure the load " + span) for step in coarse.next_steps)

    fine_grid = np.geomspace(1e6, 10e9, 800 * 64 + 1)
    fine = oneport.check(port(DIODE, fine_grid, "device"), port(RESONATOR_LOAD, fine_grid, "load"))
    assert fine.hidden_resonances == ()
    # truth: numpy.roots (above)
    assert (fine.verdict, fine.encirclements) == ("unstable", rhp.size)


def test_a_stable_verdict_states_the_resolution_where_the_device_has_gain():
    result = oneport.check(EXAMPLES / "stable" / "device.s1p", _load_file("stable"))
    assert result.verdict == "stable"
    assert result.hidden_resonances == ()  # its measurement noise passes for no feature
    (sentence,) = [r for r in result.reasons if "resolves loaded resonances up to Q =" in r]
    # The load's 801-point linear grid (8.12 MHz steps) at its coarsest point inside the band
    # where the demo diode has gain (up to 4.3 GHz): f/(2Δf) at its lowest interval there.
    load = read_one_port(_load_file("stable"))
    step = load.frequency_hz[1] - load.frequency_hz[0]
    lowest = 0.5 * (load.frequency_hz[0] + load.frequency_hz[1]) / (2 * step)
    assert f"Q = {lowest:.2g}" in sentence


# --- netlist pairs: numpy.roots, the joined circuit's eigenvalues, P ------------------------------


def _netlist_case(device, load):
    natural = natural_frequencies(device, load)  # truth: numpy.roots
    rhp = int(np.sum(natural.real > 0))
    result = oneport.check(circuit(device, "device"), circuit(load, "load"))
    # the sampled count on the grid the check chose equals numpy.roots' count ...
    assert result.encirclements == rhp, result.reasons
    assert result.verdict == ("stable" if rhp == 0 else "unstable"), result.reasons
    # ... and the joined circuit's generalized eigenvalues are numpy.roots' roots
    joined = np.array(result.natural_frequencies)
    assert joined.size == natural.size
    for root in natural:
        nearest = np.min(np.abs(joined - root))
        assert nearest <= 1e-6 * max(abs(root), 1.0), (joined, natural)
    return result


@settings(max_examples=25, deadline=None, derandomize=True)
@given(
    device=st.one_of(
        st.builds(
            tunnel_diode,
            log_uniform(1.0, 10.0),
            log_uniform(0.1e-9, 3e-9),
            log_uniform(30.0, 200.0),
            log_uniform(0.5e-12, 10e-12),
        ),
        # −R ∥ C with R below 50 Ω: unstable terminated in Z0 (P = 1, Z = N + P)
        st.builds(
            lambda r, c: parallel(resistor(-r), capacitor(c)),
            log_uniform(10.0, 300.0),
            log_uniform(0.2e-12, 5e-12),
        ),
    ),
    load=st.one_of(
        st.builds(
            lambda r, inductance: series(resistor(r), inductor(inductance)),
            log_uniform(1.0, 300.0),
            log_uniform(0.2e-9, 20e-9),
        ),
        st.builds(
            lambda rf, block, bias, choke: parallel(
                series(resistor(rf), capacitor(block)), series(resistor(bias), inductor(choke))
            ),
            log_uniform(5.0, 200.0),
            log_uniform(1e-12, 1e-9),
            log_uniform(1.0, 300.0),
            log_uniform(1e-9, 1e-6),
        ),
    ),
)
def test_lumped_netlist_pairs_match_numpy_roots(device, load):
    natural = natural_frequencies(device, load)
    # keep clear of roots on the jω axis or at s = 0 (marginal: no count is right there)
    assume(np.all(np.abs(natural.real) > 1e-6 * np.maximum(np.abs(natural), 1.0)))
    assume(np.all(np.abs(natural_frequencies(device, resistor(50.0)).real) > 0))
    _netlist_case(device, load)


def test_a_device_netlist_unstable_in_z0_counts_its_own_poles():
    # −30 Ω ∥ 1 pF into 50 Ω has a right-half-plane pole of Γd (METHODS §3: Z0·G > 1), so the
    # count is Z = N + P with P = 1; truth: numpy.roots of the closed loop.
    device = parallel(resistor(-30.0), capacitor(1e-12))
    assert right_half_plane_roots(device, resistor(50.0)).size == 1
    result = _netlist_case(device, series(resistor(20.0), inductor(3e-9)))
    assert result.encirclements == 2 and "P = 1" in result.reasons[0]


# --- the second opinion agrees or explains ------------------------------------------------------

# An invented tunnel diode (4 Ω, 0.1 nH, −80 Ω ∥ 0.5 pF) into a bias tee (100 Ω + 1 nF DC block
# on the RF side, 5 Ω + 1 µH on the bias side): two real right-half-plane roots.
TWO_ROOT_DIODE = tunnel_diode(4.0, 0.1e-9, 80.0, 0.5e-12)
TWO_ROOT_TEE = parallel(
    series(resistor(100.0), capacitor(1e-9)), series(resistor(5.0), inductor(1e-6))
)


def test_poles_keeps_an_isolated_real_root_and_agrees_with_the_count():
    natural = natural_frequencies(TWO_ROOT_DIODE, TWO_ROOT_TEE)  # truth: numpy.roots
    rhp = natural[natural.real > 0]
    assert rhp.size == 2 and np.all(np.abs(rhp.imag) < 1e-6 * np.abs(rhp))
    grid = np.geomspace(1e6, 100e9, 1001)
    device, load = port(TWO_ROOT_DIODE, grid, "device"), port(TWO_ROOT_TEE, grid, "load")
    count = oneport.check(device, load)
    assert count.encirclements == 2
    from oneport.products.poles import poles

    result = poles(device, load)
    found = [m for m in result.natural_frequencies if m.rhp]
    # each real root is found, trusted, and not called a near cancellation: the nearest pole of
    # the fit (the load's, at about −3.4e7 1/s) is a whole |s| away from the root at 3e8 1/s
    assert sorted(m.sigma_per_s for m in found) == pytest.approx(sorted(rhp.real), rel=1e-3)
    assert all(m.real and m.trusted and not m.near_cancellation for m in found)
    assert result.verdict == count.verdict == "unstable"
    assert result.fit_verdict == "unstable"
    assert result.reasons[1].startswith("The fit agrees")


def test_where_fit_and_count_disagree_the_text_says_to_believe_the_count():
    f = np.linspace(10e6, 3e9, 401)
    device = port(resistor(-60.0), f, "device")
    load = port(series(resistor(50.0), inductor(10e-9), capacitor(2.533e-12)), f, "load")
    fitted = identify_natural_frequencies(
        f,
        1
        - gamma(resistor(-60.0), f)
        * gamma(series(resistor(50.0), inductor(10e-9), capacitor(2.533e-12)), f),
    )
    from oneport.analysis.pole_zero import with_count_check

    stable_count = replace(oneport.check(device, load), encirclements=0, verdict="stable")
    explained = with_count_check(fitted, stable_count)
    assert explained.verdict == "stable" and explained.fit_verdict == "unstable"
    assert "Believe the count" in explained.reasons[1]
    assert [w.code for w in explained.warnings][-1] == "pole-count-disagrees"


# --- one small-gain rule for check --load-return-loss and amplifier --port-return-loss ------------


def _write(path: Path, frequency_hz: np.ndarray, gamma_values: np.ndarray) -> Path:
    lines = ["# Hz S RI R 50"] + [
        f"{f:.12g} {g.real:.12e} {g.imag:.12e}"
        for f, g in zip(frequency_hz, gamma_values, strict=True)
    ]
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.mark.parametrize(
    ("kind", "return_losses_db"),
    [
        ("constant", [13.0, 13.9, 14.5, 20.0]),
        ("lumped", [8.0, 10.0, 12.0, 16.0]),
        ("measured", [6.0, 8.0, 12.0, 20.0]),
    ],
)
def test_bound_and_amplifier_agree(tmp_path, kind, return_losses_db):
    f = np.linspace(10e6, 6e9, 601)
    if kind == "constant":
        # METHODS §6: a pure −75 Ω in 50 Ω has |Γd| = 125/25 = 5, 13.98 dB of gain
        device = _write(tmp_path / "d.s1p", f, np.full(f.size, 5.0 + 0j))
    elif kind == "lumped":
        device = _write(tmp_path / "d.s1p", f, gamma(DIODE, f))
    else:
        device = EXAMPLES / "stable" / "device.s1p"  # the demo diode with measurement noise
    words = {0: "guaranteed", 3: "not-guaranteed", 4: "inconclusive"}
    for return_loss in return_losses_db:
        check_code, check_out, _ = run_cli(
            "check", device, f"--load-return-loss={return_loss}dB", "--json"
        )
        amp_code, amp_out, _ = run_cli(
            "amplifier", device, f"--port-return-loss={return_loss}dB", "--json"
        )
        bound, amplifier = json.loads(check_out), json.loads(amp_out)
        assert bound["verdict"] == amplifier["verdict"] == words[check_code], return_loss
        assert check_code == amp_code
    if kind == "constant":
        # the report's case: 14.5 dB against 13.98 dB of gain holds by 0.52 dB at every
        # frequency, both edges included (closed form above)
        code, out, _ = run_cli("check", device, "--load-return-loss=14.5dB", "--json")
        data = json.loads(out)
        assert (code, data["verdict"]) == (0, "guaranteed")
        assert data["bound"]["margin_db"] == pytest.approx(14.5 - 20 * np.log10(5), abs=1e-6)


# --- one preparation: the same guards everywhere ------------------------------------------------


def test_dc_resistance_at_minus_z0_is_one_line_in_check_and_sweep(tmp_path):
    netlist = tmp_path / "load.cir"
    netlist.write_text(".set R=20 L=3n\nR1 1 2 R\nL1 2 0 L\n.oneport 1\n")
    device = EXAMPLES / "stable" / "device.s1p"
    facts = ("--device-dc-resistance=-50ohm", "--load-dc-resistance=150ohm")
    check = run_cli("check", device, "--load", netlist, *facts)
    sweep = run_cli("sweep", device, "--load", netlist, "--vary", "R=10:30:3", *facts)
    for code, out, err in (check, sweep):
        assert code == 2 and out == ""
        assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
        assert "--device-dc-resistance -50 ohm" in err
    assert check[2] == sweep[2]


@pytest.mark.parametrize("size", ["-1", "0"])
def test_a_chunk_size_below_one_is_refused(tmp_path, size):
    netlist = tmp_path / "load.cir"
    netlist.write_text(".set R=20 L=3n\nR1 1 2 R\nL1 2 0 L\n.oneport 1\n")
    code, out, err = run_cli(
        "sweep",
        EXAMPLES / "stable" / "device.s1p",
        "--load",
        netlist,
        "--vary",
        "R=10:30:3",
        f"--chunk-size={size}",
    )
    assert (code, out) == (2, "")
    assert "--chunk-size" in err and len(err.strip().splitlines()) == 1


def test_a_netlist_side_supplies_its_half_of_the_dc_facts(tmp_path):
    # The undecidable example's device (sweep from 200 MHz) against the bias tee of
    # touchstone_examples as a netlist: its DC value (150 Ω) joins the stated device slope
    # (−76 Ω) to fix F(0) < 0, as the two stated resistances do (generate.py: latch-up).
    netlist = tmp_path / "tee.cir"
    netlist.write_text("R1 1 2 50\nC1 2 0 10p\nR2 1 3 150\nL2 3 0 100n\n.oneport 1\n")
    device = EXAMPLES / "undecidable" / "device.s1p"
    half = oneport.check(device, str(netlist), device_dc_resistance_ohm=-76.0)
    both = oneport.check(
        device, str(netlist), device_dc_resistance_ohm=-76.0, load_dc_resistance_ohm=150.0
    )
    assert half.closures[0].basis == both.closures[0].basis == "dc-resistances"
    assert half.closures[0].sign_at_limit == both.closures[0].sign_at_limit == -1
    assert (half.verdict, half.encirclements) == (both.verdict, both.encirclements)
    assert "netlist's own DC value" in half.premise
    with pytest.raises(oneport.InputError, match="give both"):
        oneport.check(device, _load_file("undecidable"), device_dc_resistance_ohm=-76.0)


def test_the_jump_test_is_a_plain_median_of_the_neighbours():
    # Reference: numpy.median of the six nearest other steps (one-sided windows at the ends),
    # written out plainly; the fast test (a cheap bound first, the median on candidates only)
    # must flag exactly the same intervals, with and without a noise floor.
    from oneport.analysis.diagnostics import JUMP_NOISE_FACTOR, JUMP_RATIO, jump_indices

    def plain(values, noise):
        steps = np.abs(np.diff(values))
        count = steps.size
        flagged = []
        for i in range(count):
            start = min(max(i - 3, 0), count - 7)
            others = [steps[j] for j in range(start, start + 7) if j != i]
            floor = max(JUMP_NOISE_FACTOR * noise, 1e-6)
            if steps[i] > JUMP_RATIO * np.median(others) and steps[i] > floor:
                flagged.append(i)
        return flagged

    rng = np.random.default_rng(11)
    for _ in range(200):
        n = int(rng.integers(8, 40))
        scale = rng.choice([0.001, 0.01, 0.3], size=n)
        values = np.cumsum(rng.standard_normal(n) * scale) + 1j * np.cumsum(
            rng.standard_normal(n) * scale
        )
        noise = float(rng.choice([0.0, 0.002]))
        assert jump_indices(values, noise)[0].tolist() == plain(values, noise)


def test_the_load_of_an_oscillator_can_be_a_netlist(tmp_path):
    # The oscillator's load, prepared as every command prepares it: a netlist is evaluated on
    # the device's grid in its impedance, with its own right-half-plane natural frequencies
    # counted (here none: a passive R + L).
    from oneport.products.pair import prepare_load

    netlist = tmp_path / "load.cir"
    netlist.write_text(".set R=20 L=3n\nR1 1 2 R\nL1 2 0 L\n.oneport 1\n")
    grid = np.linspace(1e9, 2e9, 11)
    side = prepare_load(str(netlist), grid, 75.0)
    assert side.is_netlist and side.poles == 0 and side.poles_known
    np.testing.assert_array_equal(side.port.frequency_hz, grid)
    z = 20.0 + 2j * np.pi * grid * 3e-9  # common practice: Γ = (Z − Z0)/(Z + Z0)
    np.testing.assert_allclose(side.port.gamma, (z - 75.0) / (z + 75.0), atol=1e-12)
    measured = prepare_load(_load_file("stable"), grid, 75.0)
    assert not measured.is_netlist and measured.port.points == 801


def test_a_loop_creeping_towards_plus_one_at_the_low_edge_is_not_closed_by_its_magnitude():
    # A constant -40 ohm device (stable in 50 ohm: -40 + 50 > 0) into 30 ohm + (20 ohm ∥ 1 uH).
    # Circuit algebra: Zd + ZL = 0 gives -10 (20 + sL) + 20 sL = 0, a real root s = 20/L =
    # 2e7 /s: a latch-up whose loop, sampled from 7 MHz up, still has |L| ≈ 0.76 < 1 at the
    # edge but grows by about 0.36 an octave towards it. One more such octave reaches |L| = 1,
    # so the closure towards DC is not founded by |L| < 1: not "stable".
    from oneport.reading.touchstone import OnePort

    frequency_hz = np.geomspace(7e6, 3e9, 801)
    s = 2j * np.pi * frequency_hz
    z_load = 30.0 + (20.0 * s * 1e-6) / (20.0 + s * 1e-6)
    device = OnePort(
        frequency_hz, np.full(frequency_hz.size, (-40 - 50) / (-40 + 50), complex), 50.0, "device"
    )
    load = OnePort(frequency_hz, (z_load - 50) / (z_load + 50), 50.0, "load")
    result = oneport.check(device, load)
    assert result.verdict == "inconclusive"
    assert result.closures[0].basis != "loop-gain-below-unity"
    # The DC facts decide it (the real root is there): unstable, a latch-up.
    fixed = oneport.check(device, load, device_dc_resistance_ohm=-40.0, load_dc_resistance_ohm=30.0)
    assert fixed.verdict == "unstable" and fixed.latch_up
