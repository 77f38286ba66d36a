"""Every sweep row is the single check of that variant: verdict, count, latch-up, oscillation
frequency and closures, for the shipped examples, device netlists unstable in Z0, netlist loads
on measured devices, and DC facts (stated, or a netlist's own half).

Property test (hypothesis, fixed seed, bounded examples): the truth compared against is
``oneport.check`` itself — the point is that the sweep cannot differ from it — and, where the
circuits are lumped, numpy.roots of the characteristic polynomial as well.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import event, given, settings
from hypothesis import strategies as st

import oneport
from oneport.analysis import nyquist
from oneport.analysis.judgement import VERDICT_CODES, judge
from oneport.products.export import frequency_grid
from oneport.products.sweep import grid_plan, run_sweep
from oneport.products.sweep.sources import DEVICE_INDEX, prepare_sweep

from lumped import (
    capacitor,
    inductor,
    log_uniform,
    natural_frequencies,
    parallel,
    resistor,
    series,
)

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
PROPERTY = settings(max_examples=12, deadline=None, derandomize=True)
# A grid that reaches past the netlists' natural frequencies (up to 2 THz), so their loops can
# close towards infinity by the rational limit.
NETLIST_GRID_HZ = frequency_grid(1e6, 2e12, 1201, "log")


def _load_file(name: str) -> Path:
    (found,) = EXAMPLES.joinpath(name).glob("load.*")
    return found


def _assert_row_is_the_check(setup, values, row, single):
    """The sweep's row (through the runner and through the judgement it calls) equals the check."""
    source = setup.source
    frequency_hz = source.frequency_hz
    chosen = {name: np.asarray([column[row]]) for name, column in values.items()}
    gamma_device, gamma_load = source(chosen)
    judgement = judge(frequency_hz, gamma_device, gamma_load, source.facts(chosen))
    assert np.array_equal(frequency_hz, single.frequency_hz)
    verdict = VERDICT_CODES[int(judgement.verdict_code[0])]
    assert verdict == single.verdict, (single.reasons, int(judgement.doubts[0]))
    low, high = single.closures
    assert nyquist.CLOSURE_BASES[int(judgement.low_code[0])] == low.basis
    assert nyquist.CLOSURE_BASES[int(judgement.high_code[0])] == high.basis
    assert int(judgement.low_sign[0]) == low.sign_at_limit
    assert int(judgement.high_sign[0]) == high.sign_at_limit
    if single.encirclements is not None:
        assert bool(judgement.count_known[0])
        assert int(judgement.encirclements[0]) == single.encirclements
        assert bool(judgement.latch_up[0]) == single.latch_up
    else:
        assert not bool(judgement.count_known[0])
    frequency = float(judgement.oscillation_frequency_hz[0])
    if single.oscillation_frequencies_hz:
        assert frequency == pytest.approx(single.oscillation_frequencies_hz[0], rel=1e-12)
    else:
        assert np.isnan(frequency) or single.verdict != "unstable"


def _run(setup, plan):
    result = run_sweep(
        plan, setup.source, setup.source.frequency_hz, setup.source.reference_impedance_ohm
    )
    return result.table


@pytest.mark.parametrize("name", ["stable", "oscillates", "latch-up", "undecidable"])
@pytest.mark.parametrize("dc_facts", [False, True])
def test_every_shipped_example_as_a_sweep_row(name, dc_facts):
    device, load = EXAMPLES / name / "device.s1p", _load_file(name)
    facts = {"device_dc_resistance_ohm": -76.0, "load_dc_resistance_ohm": 150.0} if dc_facts else {}
    setup = prepare_sweep([device, device], load, **facts)
    plan = grid_plan([(DEVICE_INDEX, 0.0, 1.0, 2)])
    table = _run(setup, plan)
    single = oneport.check(device, load, **facts)
    for row in range(2):
        assert VERDICT_CODES[table["verdict_code"][row]] == single.verdict
        _assert_row_is_the_check(setup, plan.values, row, single)


def _netlist(path: Path, text: str) -> Path:
    path.write_text(text)
    return path


def _device_netlist(folder: Path, rn: float, cd: float) -> Path:
    return _netlist(
        folder / f"device_{rn:.6g}_{cd:.6g}.cir",
        f"* -RN || CD (invented)\n.set RN={rn!r} CD={cd!r}\nR1 1 0 -RN\nC1 1 0 CD\n.oneport 1\n",
    )


def _load_netlist(folder: Path, r: float, inductance: float) -> Path:
    return _netlist(
        folder / f"load_{r:.6g}_{inductance:.6g}.cir",
        f"* R + L (invented)\n.set R={r!r} L={inductance!r}\nR1 1 2 R\nL1 2 0 L\n.oneport 1\n",
    )


@PROPERTY
@given(
    rn=log_uniform(10.0, 300.0),
    cd=log_uniform(0.3e-12, 5e-12),
    r=log_uniform(2.0, 300.0),
    inductance=log_uniform(0.3e-9, 20e-9),
)
def test_device_netlist_rows_equal_checks(tmp_path_factory, rn, cd, r, inductance):
    # −RN ∥ CD is unstable terminated in 50 Ω when RN < 50 Ω (P = 1): the rows must add P as
    # the check does (Z = N + P).
    folder = tmp_path_factory.mktemp("netlists")
    device = _device_netlist(folder, 100.0, 1e-12)  # the sweep's nominal values
    load = _load_netlist(folder, 20.0, 3e-9)
    setup = prepare_sweep([device], load, frequency_hz=NETLIST_GRID_HZ)
    plan = grid_plan([("RN", rn, rn * 1.5, 2), ("R", r, r, 1)])
    values = dict(plan.values)
    values["CD"] = np.full(plan.variants, cd)
    values["L"] = np.full(plan.variants, inductance)
    table = _run(setup, plan)
    single = oneport.check(
        _device_netlist(folder, rn, cd),
        _load_netlist(folder, r, inductance),
        frequency_hz=NETLIST_GRID_HZ,
    )
    _assert_row_is_the_check(setup, values, 0, single)
    event(f"{single.verdict}, P = {int(rn < 50)}")
    # the runner's table gives the same row (CD and L held at the sweep's own values there)
    if cd == 1e-12 and inductance == 3e-9:
        assert VERDICT_CODES[table["verdict_code"][0]] == single.verdict
    # truth for the lumped pair: numpy.roots of the characteristic polynomial
    device_z = parallel(resistor(-rn), capacitor(cd))
    load_z = series(resistor(r), inductor(inductance))
    if single.encirclements is not None:
        natural = natural_frequencies(device_z, load_z)
        assert single.encirclements == int(np.sum(natural.real > 0))


@PROPERTY
@given(
    r=st.floats(1.0, 300.0),
    inductance=log_uniform(0.3e-9, 20e-9),
    facts=st.sampled_from(["none", "both", "device only"]),
)
def test_netlist_load_rows_equal_checks(tmp_path_factory, r, inductance, facts):
    # A measured device (the demo diode, from 1 MHz) into an R + L netlist; the DC facts are
    # absent, stated for both sides, or stated for the device with the netlist's own DC value.
    folder = tmp_path_factory.mktemp("loads")
    device = EXAMPLES / "stable" / "device.s1p"
    stated = {
        "none": {},
        "both": {"device_dc_resistance_ohm": -76.0, "load_dc_resistance_ohm": r},
        "device only": {"device_dc_resistance_ohm": -76.0},
    }[facts]
    setup = prepare_sweep([device], _load_netlist(folder, 20.0, 3e-9), **stated)
    plan = grid_plan([("R", r, r + 5.0, 2), ("L", inductance, inductance, 1)])
    table = _run(setup, plan)
    single = oneport.check(device, _load_netlist(folder, r, inductance), **stated)
    event(f"{single.verdict}, DC facts {facts}")
    assert VERDICT_CODES[table["verdict_code"][0]] == single.verdict
    _assert_row_is_the_check(setup, plan.values, 0, single)


@PROPERTY
@given(rn=log_uniform(10.0, 300.0), cd=log_uniform(0.3e-12, 5e-12))
def test_device_netlist_into_a_measured_load_rows_equal_checks(tmp_path_factory, rn, cd):
    folder = tmp_path_factory.mktemp("devices")
    load = _load_file("oscillates")
    setup = prepare_sweep([_device_netlist(folder, 100.0, 1e-12)], load)
    plan = grid_plan([("RN", rn, rn, 1), ("CD", cd, cd, 1)])
    table = _run(setup, plan)
    single = oneport.check(_device_netlist(folder, rn, cd), load)
    event(single.verdict)
    assert VERDICT_CODES[table["verdict_code"][0]] == single.verdict
    _assert_row_is_the_check(setup, plan.values, 0, single)
