"""The check for many variants at once: every array here has the variants on leading axes.

A sweep or a Monte Carlo run hands over loop gains of shape (..., n) on one grid; this room
returns per-variant arrays (count, verdict code, margins, oscillation frequency) computed with
the same rules as the single check (``nyquist.close_edges``, ``nyquist.count_encirclements``,
the unwrapping limit, and Foster's test on the load), so a variant's row equals what
:func:`oneport.check` says of it. No Python loop over variants.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import nyquist
from .diagnostics import foster_jump_indices

#: Verdict codes in the per-variant arrays.
VERDICT_CODES = ("stable", "unstable", "inconclusive")
STABLE, UNSTABLE, INCONCLUSIVE = 0, 1, 2


@dataclass(frozen=True)
class VariantAnalysis:
    """Per-variant results, each an array of the variants' leading shape.

    ``encirclements`` is only meaningful where ``count_known``; ``oscillation_frequency_hz``
    is the lowest clockwise crossing that carries the count (NaN where there is none), and
    ``oscillatory_modes`` the number of such crossings.
    """

    verdict_code: np.ndarray
    encirclements: np.ndarray
    count_known: np.ndarray
    latch_up: np.ndarray
    oscillation_frequency_hz: np.ndarray
    oscillatory_modes: np.ndarray
    min_distance: np.ndarray
    min_distance_frequency_hz: np.ndarray
    worst_loop_gain: np.ndarray
    worst_loop_gain_frequency_hz: np.ndarray
    largest_phase_step_rad: np.ndarray
    low_closure_code: np.ndarray
    high_closure_code: np.ndarray
    hidden_resonance: np.ndarray

    def verdicts(self) -> np.ndarray:
        """The verdict words, as an array of str."""
        return np.asarray(VERDICT_CODES, dtype=object)[self.verdict_code]


def analyse_variants(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    gamma_load: np.ndarray,
    reference_impedance_ohm: float,
    dc_sign: int | None = None,
    load_poles_known: bool = False,
) -> VariantAnalysis:
    """The single check's analysis for every variant at once.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        The common grid, Hz.
    gamma_device, gamma_load : ndarray of complex, shapes broadcasting to (..., n)
        Both referred to ``reference_impedance_ohm`` (the device's measurement impedance).
    dc_sign : {+1, −1}, optional
        The sign of F(0) from stated DC resistances, overriding the data's low-edge closure.
    load_poles_known : bool
        True for a netlist load: an active one then does not leave its poles unknown. For
        measured loads, a variant whose |ΓL| exceeds 1 beyond the data's scatter is
        inconclusive, as in the single check.
    """
    gamma_device = np.asarray(gamma_device, dtype=complex)
    gamma_load = np.asarray(gamma_load, dtype=complex)
    loop_gain = gamma_device * gamma_load
    low = nyquist.close_edges(frequency_hz, loop_gain, "low")
    high = nyquist.close_edges(frequency_hz, loop_gain, "high")
    low_code, low_sign = low.basis_code, low.sign_at_limit
    if dc_sign is not None:
        low_code = np.full(low_code.shape, -1)  # the DC facts: founded, outside CLOSURE_BASES
        low_sign = np.full(low_sign.shape, dc_sign)
    characteristic = 1.0 - loop_gain
    steps = nyquist.phase_steps(loop_gain, characteristic)
    step = nyquist.largest_phase_step(loop_gain, steps)
    known = (low_code != 0) & high.founded & (step <= nyquist.UNSAFE_PHASE_STEP_RAD)
    count = nyquist.count_encirclements(
        loop_gain,
        np.where(low_sign == 0, 1, low_sign),
        np.where(high.sign_at_limit == 0, 1, high.sign_at_limit),
        steps,
    )
    hidden = _hidden_resonance_at_stake(gamma_device, gamma_load, loop_gain.shape)
    verdict = np.where(
        ~known | (count < 0),
        INCONCLUSIVE,
        np.where(count == 0, STABLE, UNSTABLE),
    )
    verdict = np.where(hidden & (verdict != INCONCLUSIVE), INCONCLUSIVE, verdict)
    if not load_poles_known:
        scatter = nyquist.estimate_noise(loop_gain)
        active = np.max(np.abs(gamma_load), axis=-1) > 1.0 + 3.0 * scatter + 1e-9
        verdict = np.where(np.broadcast_to(active, verdict.shape), INCONCLUSIVE, verdict)
    frequency, modes = _carrying_crossings(frequency_hz, loop_gain)
    unstable = known & (count > 0)
    distance = np.abs(characteristic)
    closest = np.argmin(distance, axis=-1)
    magnitude = np.abs(loop_gain)
    loudest = np.argmax(magnitude, axis=-1)
    return VariantAnalysis(
        verdict_code=verdict,
        encirclements=np.where(known, count, 0),
        count_known=known,
        latch_up=known & (count % 2 == 1),
        oscillation_frequency_hz=np.where(unstable, frequency, np.nan),
        oscillatory_modes=np.where(unstable, modes, 0),
        min_distance=np.take_along_axis(distance, closest[..., None], -1)[..., 0],
        min_distance_frequency_hz=frequency_hz[closest],
        worst_loop_gain=np.take_along_axis(magnitude, loudest[..., None], -1)[..., 0],
        worst_loop_gain_frequency_hz=frequency_hz[loudest],
        largest_phase_step_rad=step,
        low_closure_code=low_code,
        high_closure_code=high.basis_code,
        hidden_resonance=hidden,
    )


def _carrying_crossings(
    frequency_hz: np.ndarray, loop_gain: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """Lowest clockwise crossing beyond +1 that survives cancellation, and how many survive.

    The same as :func:`oneport.nyquist.net_crossings`, vectorised over the (sparse) crossings:
    with S the running sum of a variant's crossing directions (+1 clockwise), a clockwise
    crossing k survives when S before it is ≥ 0 and S never falls below S_k afterwards.
    """
    leading = loop_gain.shape[:-1]
    flat = loop_gain.reshape(-1, loop_gain.shape[-1])
    imaginary = flat.imag
    negative = imaginary < 0
    rows, columns = np.nonzero(negative[:, :-1] != negative[:, 1:])
    a, b = imaginary[rows, columns], imaginary[rows, columns + 1]
    t = a / (a - b)
    real = flat.real
    real_at = real[rows, columns] + t * (real[rows, columns + 1] - real[rows, columns])
    keep = real_at > 1.0
    rows, columns, t = rows[keep], columns[keep], t[keep]
    direction = np.where(negative[rows, columns], -1, 1)  # up across the axis: counterclockwise
    variants = flat.shape[0]
    frequency = np.full(variants, np.nan)
    modes = np.zeros(variants, dtype=int)
    if rows.size:
        running = np.cumsum(direction)
        starts = np.flatnonzero(np.r_[True, rows[1:] != rows[:-1]])
        lengths = np.diff(np.r_[starts, rows.size])
        running = running - np.repeat(running[starts] - direction[starts], lengths)
        before = running - direction
        # A suffix minimum within each variant: offsets keep later variants from leaking in.
        offset = rows * (2 * (rows.size + 1))
        later = np.minimum.accumulate((running + offset)[::-1])[::-1] - offset
        survives = (direction == 1) & (before >= 0) & (later >= running)
        surviving_rows = rows[survives]
        crossing = frequency_hz[columns] + t * (frequency_hz[columns + 1] - frequency_hz[columns])
        unique_rows, first = np.unique(surviving_rows, return_index=True)
        frequency[unique_rows] = crossing[survives][first]
        modes = np.bincount(surviving_rows, minlength=variants)
    return frequency.reshape(leading), modes.reshape(leading)


def _hidden_resonance_at_stake(
    gamma_device: np.ndarray, gamma_load: np.ndarray, shape: tuple[int, ...]
) -> np.ndarray:
    """Foster's test on the load (on the common grid), where the device has |Γd| ≥ 1 nearby.

    The single check looks at |Γd| in the interval and one sample either side.
    """
    flat_shape = (int(np.prod(shape[:-1], dtype=int)), shape[-1])
    load = np.broadcast_to(gamma_load, shape).reshape(flat_shape)
    device = np.broadcast_to(gamma_device, shape).reshape(flat_shape)
    (rows, columns), _ = foster_jump_indices(load)
    at_stake = np.zeros(flat_shape[0], dtype=bool)
    last = flat_shape[1] - 1
    for offset in (-1, 0, 1, 2):
        nearby = np.clip(columns + offset, 0, last)
        at_stake[rows[np.abs(device[rows, nearby]) >= 1.0]] = True
    return at_stake.reshape(shape[:-1])
