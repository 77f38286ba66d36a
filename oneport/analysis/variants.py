"""The pass over every sample that the judgement reduces per variant, and the sweep's view of it.

A sweep or a Monte Carlo run hands over loop gains of shape (..., n) on one grid. The rules that
turn them into verdicts live in one place, :func:`oneport.analysis.judgement.judge`; this room
holds the one pass over the samples it needs (in cache-sized blocks of variants, into reused
buffers: the phase steps of F, their sum and largest size, where a large step falls inside
|L| ≥ 1, min |F| and max |L|, the crossings of the real axis, the hidden features of a netlist
load, the slack the stated |Γ| errors leave) and :func:`analyse_variants`, the per-variant arrays
a sweep table takes, kept for callers that hand over arrays only. No Python loop over variants.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from . import nyquist
from .diagnostics import foster_jump_indices, jump_indices

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
    dc_sign: int | np.ndarray | None = None,
    load_poles_known: bool = False,
    facts: object = None,
) -> VariantAnalysis:
    """The judgement's per-variant arrays for reflections given as arrays.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        The common grid, Hz.
    gamma_device, gamma_load : ndarray of complex, shapes broadcasting to (..., n)
        Both referred to ``reference_impedance_ohm`` (the device's measurement impedance).
    dc_sign : {+1, −1} or array of them, optional
        The sign of F(0) from DC facts, overriding the data's low-edge closure.
    load_poles_known : bool
        True for a netlist load: an active one then does not leave its poles unknown, and its
        hidden features are looked for on this grid. A measured load given this way is taken
        to be on its own grid; a variant whose |ΓL| exceeds 1 beyond the data's scatter is
        inconclusive, as in the single check.
    facts : oneport.analysis.judgement.Facts, optional
        Everything else the judgement takes (P, stated |Γ| errors, the load's own grid, …);
        when given, ``dc_sign`` and ``load_poles_known`` must be left at their defaults.
    """
    from .judgement import Facts, judge

    if facts is None:
        facts = Facts(dc_sign=dc_sign, load_is_netlist=load_poles_known)
    elif dc_sign is not None or load_poles_known:
        raise TypeError("give dc_sign and load_poles_known inside facts, not beside them")
    assert isinstance(facts, Facts)
    judgement = judge(frequency_hz, gamma_device, gamma_load, facts)
    return judgement.variant_analysis()


#: Samples (variants × points) per block of the pass over every sample: its working arrays
#: (about 72 bytes per sample for a netlist load, some 4.7 MB per block) then stay in the
#: processor's caches: 32,768 and 65,536 were fastest of 16,384 to 1,048,576, the largest
#: about 1.5–2× slower (benchmarks/README.md).
BLOCK_SAMPLES = 1 << 16


@dataclass(frozen=True)
class Crossings:
    """Intervals where Im L changes sign, rows ascending, with L at both ends."""

    rows: np.ndarray
    columns: np.ndarray
    before: np.ndarray
    after: np.ndarray


@dataclass(frozen=True)
class SamplePass:
    """What the judgement needs from every sample, reduced per variant (rows of (V, n)).

    ``large_step`` is the largest phase step of F between samples where |L| ≥ 1 at either end
    (``large_step_column`` its interval; −1 where there is none). The crossing candidates and
    the hidden features of a netlist load (``feature_rows``, ``feature_columns``,
    ``feature_kinds``: 0 parallel, 1 series, 2 jump) are sparse. ``scatter`` (the noise of L,
    :func:`nyquist.estimate_noise`) and ``largest_load`` (max |ΓL|) are computed for measured
    loads only, ``slack`` (min of |1 − L| less the worst change stated |Γ| errors allow) only
    when errors are stated (zeros otherwise).
    """

    in_band_phase: np.ndarray
    largest_step: np.ndarray
    large_step: np.ndarray
    large_step_column: np.ndarray
    closest: np.ndarray
    min_distance: np.ndarray
    loudest: np.ndarray
    worst_loop_gain: np.ndarray
    crossings: Crossings
    feature_rows: np.ndarray
    feature_columns: np.ndarray
    feature_kinds: np.ndarray
    scatter: np.ndarray
    largest_load: np.ndarray
    slack: np.ndarray
    slack_column: np.ndarray


FEATURE_KINDS = ("parallel", "series", "jump")


def sample_pass(
    device: np.ndarray,
    load: np.ndarray,
    measured_load: bool,
    features_here: bool,
    uncertainty: tuple[float, float] = (0.0, 0.0),
) -> SamplePass:
    """One pass over (V, n) samples in cache-sized blocks of variants (see BLOCK_SAMPLES).

    Per block: L = Γd·ΓL, F = 1 − L, the phase steps of F (:func:`nyquist.phase_steps`'s rule),
    their sum and largest magnitude, the largest inside |L| ≥ 1, min |F| and max |L| with where
    they occur, the sign changes of Im L (crossing candidates), the load's hidden features on this
    grid when it is its own (``features_here``: a netlist evaluated here, or a measured load
    given only here; Foster's test and isolated jumps), and for a measured load the scatter of L
    and max |ΓL|.
    """
    variants, points = load.shape
    rows_per_block = max(1, min(variants, BLOCK_SAMPLES // max(points, 1)))
    l_buffer = np.empty((rows_per_block, points), dtype=complex)
    f_buffer = np.empty((rows_per_block, points), dtype=complex)
    angle_buffer = np.empty((rows_per_block, points))
    part_buffers = np.empty((2, rows_per_block, points))
    step_buffer = np.empty((rows_per_block, max(points - 1, 0)))
    in_band = np.empty(variants)
    largest = np.empty(variants)
    large_step = np.zeros(variants)
    large_step_column = np.full(variants, -1, dtype=np.intp)
    closest = np.empty(variants, dtype=np.intp)
    min_distance = np.empty(variants)
    loudest = np.empty(variants, dtype=np.intp)
    worst = np.empty(variants)
    scatter = np.zeros(variants)
    largest_load = np.zeros(variants)
    slack = np.zeros(variants)
    slack_column = np.zeros(variants, dtype=np.intp)
    device_error, load_error = uncertainty
    crossings: list[tuple[np.ndarray, ...]] = []
    features: list[tuple[np.ndarray, ...]] = []
    for start in range(0, variants, rows_per_block):
        stop = min(start + rows_per_block, variants)
        block = slice(start, stop)
        size = stop - start
        within = np.arange(size)
        if features_here:  # while the block is in cache
            features.append(_features(load[block], start, measured_load))
        l_block = np.multiply(device[block], load[block], out=l_buffer[:size])
        f_block = np.subtract(1.0, l_block, out=f_buffer[:size])
        # np.angle(F): arctan2 runs faster on contiguous copies of the parts than on the views.
        real = part_buffers[0, :size]
        imaginary = part_buffers[1, :size]
        np.copyto(real, f_block.real)
        np.copyto(imaginary, f_block.imag)
        angle = np.arctan2(imaginary, real, out=angle_buffer[:size])
        steps = np.subtract(angle[:, 1:], angle[:, :-1], out=step_buffer[:size])
        nyquist.wrap_steps(steps)
        np.sum(steps, axis=-1, out=in_band[block])
        np.abs(steps, out=steps)
        np.max(steps, axis=-1, out=largest[block])
        loop_magnitude = np.abs(l_block, out=angle)
        loudest[block] = np.argmax(loop_magnitude, axis=-1)
        worst[block] = loop_magnitude[within, loudest[block]]
        if points > 1:
            # A phase step inside |L| >= 1 (at either end of the interval).
            inside = (loop_magnitude[:, 1:] >= 1.0) | (loop_magnitude[:, :-1] >= 1.0)
            masked = np.where(inside, steps, 0.0)
            column = np.argmax(masked, axis=-1)
            large_step[block] = masked[within, column]
            large_step_column[block] = np.where(large_step[block] > 0, column, -1)
        if device_error or load_error:
            change = (
                np.abs(device[block]) * load_error
                + np.abs(load[block]) * device_error
                + device_error * load_error
            )
            margin = np.abs(f_block) - np.broadcast_to(change, f_block.shape)
            slack_column[block] = np.argmin(margin, axis=-1)
            slack[block] = margin[within, slack_column[block]]
        magnitude = np.abs(f_block, out=angle)
        closest[block] = np.argmin(magnitude, axis=-1)
        min_distance[block] = magnitude[within, closest[block]]
        negative = l_block.imag < 0
        change_sign = negative[:, :-1] != negative[:, 1:]
        # flatnonzero and divmod: the indices of nonzero, several times faster.
        rows, columns = np.divmod(np.flatnonzero(change_sign), max(change_sign.shape[1], 1))
        crossings.append(
            (rows + start, columns, l_block[rows, columns], l_block[rows, columns + 1])
        )
        if measured_load:
            scatter[block] = nyquist.estimate_noise(l_block)
            largest_load[block] = np.max(np.abs(load[block]), axis=-1)
    feature_rows, feature_columns, feature_kinds = _joined(
        features, (_NO_INDEX, _NO_INDEX, _NO_INDEX)
    )
    return SamplePass(
        in_band_phase=in_band,
        largest_step=largest,
        large_step=large_step,
        large_step_column=large_step_column,
        closest=closest,
        min_distance=min_distance,
        loudest=loudest,
        worst_loop_gain=worst,
        crossings=Crossings(*_joined(crossings, (_NO_INDEX, _NO_INDEX, _NO_VALUE, _NO_VALUE))),
        feature_rows=feature_rows,
        feature_columns=feature_columns,
        feature_kinds=feature_kinds,
        scatter=scatter,
        largest_load=largest_load,
        slack=slack,
        slack_column=slack_column,
    )


def _features(load: np.ndarray, first_row: int, measured: bool) -> tuple[np.ndarray, ...]:
    """Hidden features of a load on the analysis grid (rows, columns, kinds), rows ascending,
    each interval once (Foster's kind where both tests flag it); a measured load's jumps must
    stand out of its own scatter too."""
    (rows, columns), parallel = foster_jump_indices(load)
    noise = nyquist.estimate_noise(load) if measured else 0.0
    jump_rows, jump_columns = jump_indices(load, noise)
    width = max(load.shape[1], 1)
    keys = np.concatenate([rows * width + columns, jump_rows * width + jump_columns])
    kinds = np.concatenate(
        [np.where(parallel, 0, 1), np.full(jump_rows.size, 2, dtype=np.intp)]
    ).astype(np.intp)
    keys, first = np.unique(keys, return_index=True)
    rows, columns = np.divmod(keys, width)
    return rows + first_row, columns, kinds[first]


_NO_INDEX = np.zeros(0, dtype=np.intp)
_NO_VALUE = np.zeros(0, dtype=complex)


def _joined(
    parts: list[tuple[np.ndarray, ...]], empty: tuple[np.ndarray, ...]
) -> tuple[np.ndarray, ...]:
    """The blocks' sparse arrays joined field by field, in block order (rows ascending)."""
    if not parts:
        return empty
    return tuple(np.concatenate([part[i] for part in parts]) for i in range(len(empty)))


def carrying_crossings(
    frequency_hz: np.ndarray, variants: int, crossings: Crossings
) -> tuple[np.ndarray, np.ndarray]:
    """Lowest clockwise crossing beyond +1 that survives cancellation, and how many survive.

    The same as :func:`oneport.analysis.nyquist.net_crossings`, vectorised over the (sparse)
    crossings: with S the running sum of a variant's crossing directions (+1 clockwise), a clockwise
    crossing k survives when S before it is ≥ 0 and S never falls below S_k afterwards.
    """
    rows, columns = crossings.rows, crossings.columns
    a, b = crossings.before.imag, crossings.after.imag
    t = a / (a - b)
    real_at = crossings.before.real + t * (crossings.after.real - crossings.before.real)
    # A 0 Hz sample on the real axis is where the contour meets its mirror image, closed by F(0)'s
    # sign, not a crossing (nyquist.find_crossings skips it too).
    keep = (real_at > 1.0) & ~((frequency_hz[columns] == 0.0) & (a == 0.0))
    rows, columns, t, a = rows[keep], columns[keep], t[keep], a[keep]
    direction = np.where(a < 0, -1, 1)  # up across the axis: counterclockwise
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
    return frequency, modes


def flatten_variants(
    gamma_device: np.ndarray, gamma_load: np.ndarray
) -> tuple[np.ndarray, np.ndarray, tuple[int, ...]]:
    """Both reflections broadcast to one shape and flattened to (V, n), with the leading shape."""
    gamma_device = np.asarray(gamma_device, dtype=complex)
    gamma_load = np.asarray(gamma_load, dtype=complex)
    shape = np.broadcast_shapes(gamma_device.shape, gamma_load.shape)
    leading = shape[:-1]
    flat = (math.prod(leading), shape[-1])
    device = np.broadcast_to(gamma_device, shape).reshape(flat)
    load = np.broadcast_to(gamma_load, shape).reshape(flat)
    return device, load, leading
