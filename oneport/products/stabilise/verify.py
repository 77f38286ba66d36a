"""Each suggestion checked in full: the single check on the changed pair, its margins, its cost.

The verdict after comes from the check itself (same closure and sampling rules as for the
original pair); the margins are the check's, measured away from the wanted mode with ``keep``;
the cost is recomputed for the recommended values: the gain lost in the band, or whether the
wanted mode still starts (its growth rate from the pole–zero fit of 1 − L on the changed pair,
and the ratio of negative to load resistance at the nearest zero of the loop reactance).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from . import adapter, goal
from .goal import KEEP_WINDOW, Requirement
from .placements import Placement
from .result import GainCost, MarginsAfter, WantedMode

#: Samples of the local pole–zero fit of the wanted mode.
FIT_POINTS = 400


@dataclass(frozen=True)
class Verified:
    """The verifying check and what it shows."""

    check: Any
    goal_met: bool
    margins: MarginsAfter
    margin_met: bool


def verify(
    placement: Placement,
    values: dict[str, float],
    requirement: Requirement,
    load_dc_resistance_ohm: float | None,
    original_latch_up: bool | None = None,
) -> Verified:
    """Run the full check on the pair with ``values`` added at ``placement``.

    ``original_latch_up`` (two-element families without DC facts): a network that adds nothing
    at DC leaves F(0) as it was, so a check whose count has the other parity rests on a
    closure towards DC that the network's action below the sweep has misled; it does not count
    as reaching the goal.
    """
    source = placement.changed_load_source(values)
    dc_after = placement.load_dc_resistance(
        {key: np.array([value]) for key, value in values.items()}, load_dc_resistance_ohm
    )
    result = adapter.check_pair(
        placement.pair,
        source,
        None if dc_after is None else float(dc_after[0]),
        placement.probe({key: np.array([value]) for key, value in values.items()}),
    )
    met = goal_met_by_check(result, requirement)
    if (
        placement.family.corner
        and original_latch_up is not None
        and result.latch_up is not None
        and result.latch_up != original_latch_up
    ):
        met = False
    margins = margins_after(result, requirement)
    margin_met = met and bool(
        goal.margin_met(
            requirement,
            np.array([margins.min_distance]),
            np.array([np.inf if margins.gain_margin is None else margins.gain_margin]),
        )[0]
    )
    return Verified(result, met, margins, margin_met)


def goal_met_by_check(result: Any, requirement: Requirement) -> bool:
    """Does one check show the goal (stable; or with ``keep``, the wanted mode alone)?"""
    if not requirement.keep:
        return bool(result.verdict == "stable")
    assert requirement.keep_hz is not None
    modes = result.oscillation_frequencies_hz
    return bool(
        result.verdict == "unstable"
        and result.encirclements == 2
        and not result.latch_up
        and len(modes) == 1
        and abs(modes[0] - requirement.keep_hz) <= KEEP_WINDOW * requirement.keep_hz
    )


def margins_after(result: Any, requirement: Requirement) -> MarginsAfter:
    """The check's margins; with ``keep``, the distance and gain margin away from the mode."""
    z0 = result.reference_impedance_ohm
    checked = result.margins
    if not requirement.keep:
        return MarginsAfter(
            min_distance=checked.modulus_margin,
            min_distance_frequency_hz=checked.modulus_margin_frequency_hz,
            gain_margin=checked.gain_margin,
            phase_margin_rad=checked.phase_margin_rad,
            outside_wanted_mode=False,
            reference_impedance_ohm=z0,
        )
    modes = result.oscillation_frequencies_hz
    wanted = np.array([modes[0] if len(modes) == 1 else np.nan])
    loop_gain = result.loop_gain[None, :]
    region = goal.wanted_region(result.frequency_hz, loop_gain, wanted)
    distance = np.abs(1.0 - result.loop_gain)
    masked = np.where(region[0], np.inf, distance)
    closest = int(np.argmin(masked))
    gain_margin = goal.gain_margin_outside(result.frequency_hz, result.loop_gain, region[0])
    return MarginsAfter(
        min_distance=float(masked[closest]),
        min_distance_frequency_hz=(
            float(result.frequency_hz[closest]) if np.isfinite(masked[closest]) else None
        ),
        gain_margin=None if not np.isfinite(gain_margin) else gain_margin,
        phase_margin_rad=checked.phase_margin_rad,
        outside_wanted_mode=True,
        reference_impedance_ohm=z0,
    )


def gain_cost(
    placement: Placement, values: dict[str, float], requirement: Requirement, band_columns: Any
) -> GainCost | None:
    """The gain lost in the band for the recommended values (None without a band in the data)."""
    pair = placement.pair
    columns = np.asarray(band_columns)
    if columns.size == 0 or requirement.band_hz is None:
        return None
    arrays = {key: np.array([value]) for key, value in values.items()}
    amplifier = placement.amplifier_gamma(arrays, columns)
    if amplifier is not None:
        kind = "reflection-gain"
        before = np.abs(pair.gamma_device[columns])
        after = np.abs(np.asarray(amplifier)[0])
    else:
        kind = "loop-gain"
        before = np.abs(pair.gamma_device[columns] * pair.gamma_load[columns])
        after = np.abs(pair.gamma_device[columns] * placement.changed_loads(arrays)[0][columns])
    with np.errstate(divide="ignore", invalid="ignore"):
        loss = before / after
    worst = int(np.nanargmax(loss))
    return GainCost(
        kind=kind,
        band_hz=requirement.band_hz,
        band_stated=requirement.band_stated,
        before=(float(np.min(before)), float(np.max(before))),
        after=(float(np.min(after)), float(np.max(after))),
        largest_loss=float(loss[worst]),
        largest_loss_frequency_hz=float(pair.frequency_hz[columns][worst]),
        reference_impedance_ohm=pair.reference_impedance_ohm,
    )


def wanted_mode(result: Any, requirement: Requirement, starts: bool) -> WantedMode:
    """Whether and how strongly the wanted mode starts on the changed pair (``keep``)."""
    from ...analysis.pole_zero import identify_natural_frequencies

    assert requirement.keep_hz is not None
    keep = requirement.keep_hz
    z0 = result.reference_impedance_ohm
    modes = result.oscillation_frequencies_hz
    crossing = float(modes[0]) if starts else None
    at_crossing = None
    if crossing is not None:
        at_crossing = float(np.interp(crossing, result.frequency_hz, np.abs(result.loop_gain)))
    natural = growth = None
    if starts:
        # A local fit (a factor of three either side, at most FIT_POINTS samples) is enough
        # for the one mode, and many times faster than a fit of the whole band.
        frequency = result.frequency_hz
        inside = np.flatnonzero((frequency >= keep / 3.0) & (frequency <= keep * 3.0))
        inside = inside[:: max(1, inside.size // FIT_POINTS)]
        fitted = identify_natural_frequencies(
            frequency[inside], 1.0 - result.loop_gain[inside], reference_impedance_ohm=z0
        )
        near = [
            m
            for m in fitted.natural_frequencies
            if m.rhp and m.trusted and abs(m.frequency_hz - keep) <= KEEP_WINDOW * keep
        ]
        if near:
            best = min(near, key=lambda m: abs(m.frequency_hz - keep))
            natural, growth = float(best.frequency_hz), float(best.sigma_per_s)
    ratio = form = None
    estimates = [e for e in result.startup_estimates if e.resistance_ratio is not None and e.grows]
    if estimates:
        nearest = min(estimates, key=lambda e: abs(e.crossing_frequency_hz - keep))
        if abs(nearest.crossing_frequency_hz - keep) <= 2 * KEEP_WINDOW * keep:
            ratio, form = float(nearest.resistance_ratio), nearest.form
    return WantedMode(
        keep_hz=keep,
        starts=starts,
        crossing_frequency_hz=crossing,
        loop_gain_at_crossing=at_crossing,
        natural_frequency_hz=natural,
        sigma_per_s=growth,
        resistance_ratio=ratio,
        resistance_ratio_form=form,
        reference_impedance_ohm=z0,
    )
