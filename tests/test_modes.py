"""The modes a report lists: those the count establishes, located exactly, by Newton's iteration
on F continued off the jω axis, or by a trusted fit — and only under an unstable verdict.

Outside references are named beside each check: METHODS §7's series loop (roots
5.0e8 ± j6.263e9 1/s, about 996.8 MHz) and numpy.roots on the characteristic polynomial.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest

import oneport
from oneport.analysis.startup import continued_root, modes_agreeing_with_count

from lumped import capacitor, circuit, inductor, port, resistor, right_half_plane_roots, series

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = resistor(-60.0)
LOAD = series(resistor(50.0), inductor(10e-9), capacitor(2.533e-12))


def test_continued_root_finds_the_series_loop_root_from_samples():
    roots = right_half_plane_roots(DEVICE, LOAD)  # truth: numpy.roots
    root = roots[roots.imag > 0][0]
    # METHODS §7 series loop: 5.0e8 ± j6.263e9 1/s (four figures)
    assert root == pytest.approx(complex(5.0e8, 6.263e9), rel=1e-3)
    grid = np.linspace(0.5e9, 1.5e9, 1001)
    device, load = port(DEVICE, grid, "device"), port(LOAD, grid, "load")
    characteristic = 1.0 - device.gamma * load.gamma
    resonance_hz = 1.0 / (2 * np.pi * np.sqrt(10e-9 * 2.533e-12))  # where X_T = 0
    found = continued_root(grid, characteristic, resonance_hz)
    assert found is not None
    # The continuation of noise-free samples lands on the root: 0.1 % in s.
    assert abs(found - root) / abs(root) < 1e-3
    # Far from any zero the iteration finds none that every continuation agrees on.
    assert continued_root(grid, np.full(grid.size, 2.0 + 0j), resonance_hz) is None


def test_two_netlists_list_their_exact_roots():
    result = oneport.check(circuit(DEVICE, "device"), circuit(LOAD, "load"))
    roots = right_half_plane_roots(DEVICE, LOAD)  # truth: numpy.roots
    assert result.verdict == "unstable"
    (mode,) = result.modes
    assert mode.source == "exact"
    assert complex(mode.sigma_per_s, 2 * np.pi * mode.frequency_hz) == pytest.approx(
        roots[roots.imag > 0][0], rel=1e-6
    )


def test_only_modes_that_account_for_the_count_are_listed():
    pair = [complex(1e9, 1e10)]
    assert modes_agreeing_with_count(pair, 2, "exact") is not None
    assert modes_agreeing_with_count(pair, 3, "exact") is None  # a real root is missing
    assert modes_agreeing_with_count([*pair, complex(-1e9, 3e10)], 2, "exact") is not None


def test_a_stable_report_lists_no_mode_and_no_one_step_row():
    result = oneport.check(EXAMPLES / "stable/device.s1p", EXAMPLES / "stable/load.s1p")
    assert result.verdict == "stable" and result.modes is None
    data = result.to_dict()
    assert data["modes"] is None and "startup_estimates" not in data
    # The raw one-step figures stay for scripts, named as raw.
    assert any(e["growing"] for e in data["raw_startup_estimates"])
    from oneport.rendering.check_text import render

    text = render(result)
    assert "grows" not in text and "Modes" not in text and "Start-up" not in text


def test_unstable_reports_list_the_counted_modes_and_no_loop_margins():
    from oneport.rendering.check_text import render

    oscillating = oneport.check(
        EXAMPLES / "oscillates/device.s1p", EXAMPLES / "oscillates/load.s1p"
    )
    (mode,) = oscillating.modes
    # The same data's rational fit (oneport poles) finds 1.693 GHz growing at 1.18e9 1/s: the
    # continuation agrees within 1 % in frequency and 5 % in growth rate.
    assert mode.frequency_hz == pytest.approx(1.693e9, rel=1e-2)
    assert mode.sigma_per_s == pytest.approx(1.18e9, rel=5e-2)
    text = render(oscillating)
    assert not re.search(r"(gain|phase) margin\s+[-\d]", text), "no margin figures"
    assert "Distance of L from +1" in text
    margins = oscillating.to_dict()["margins"]
    assert margins["gain_margin_db"] is None and margins["phase_margin_deg"] is None
    assert margins["min_distance_to_critical_point"] > 0
    latch = oneport.check(EXAMPLES / "latch-up/device.s1p", EXAMPLES / "latch-up/load.ts")
    (real,) = latch.modes
    assert real.real and real.sigma_per_s > 0 and real.source == "pole-zero-fit"
