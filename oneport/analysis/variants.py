"""The check for many variants at once: every array here has the variants on leading axes.

A sweep or a Monte Carlo run hands over loop gains of shape (..., n) on one grid; this room
returns per-variant arrays (count, verdict code, margins, oscillation frequency) computed with
the same rules as the single check (``nyquist.close_edges``, the phase steps and count of
``nyquist.count_encirclements``, the unwrapping limit, and Foster's test on the load), so a
variant's row equals what :func:`oneport.check` says of it. No Python loop over variants:
one pass over the samples in cache-sized blocks of variants, then per-variant arithmetic.
"""

from __future__ import annotations

import math
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
    shape = np.broadcast_shapes(gamma_device.shape, gamma_load.shape)
    leading = shape[:-1]
    flat = (math.prod(leading), shape[-1])
    device = np.broadcast_to(gamma_device, shape).reshape(flat)
    load = np.broadcast_to(gamma_load, shape).reshape(flat)
    sample = _sample_pass(device, load, measured_load=not load_poles_known)
    # The closures read L at a few columns near each edge only (nyquist.closure_columns).
    edge_columns = nyquist.closure_columns(frequency_hz)
    edge_frequency_hz = frequency_hz[edge_columns]
    edge_loop_gain = device[:, edge_columns] * load[:, edge_columns]
    low = nyquist.close_edges(edge_frequency_hz, edge_loop_gain, "low")
    high = nyquist.close_edges(edge_frequency_hz, edge_loop_gain, "high")
    low_code, low_sign = low.basis_code, low.sign_at_limit
    if dc_sign is not None:
        low_code = np.full(low_code.shape, -1)  # the DC facts: founded, outside CLOSURE_BASES
        low_sign = np.full(low_sign.shape, dc_sign)
    step = sample.largest_step
    known = (low_code != 0) & high.founded & (step <= nyquist.UNSAFE_PHASE_STEP_RAD)
    count = nyquist.count_from_phase_change(
        sample.in_band_phase,
        edge_loop_gain[:, 0],
        edge_loop_gain[:, -1],
        np.where(low_sign == 0, 1, low_sign),
        np.where(high.sign_at_limit == 0, 1, high.sign_at_limit),
    )
    hidden = _hidden_resonance_at_stake(device, sample.foster_rows, sample.foster_columns)
    verdict = np.where(
        ~known | (count < 0),
        INCONCLUSIVE,
        np.where(count == 0, STABLE, UNSTABLE),
    )
    verdict = np.where(hidden & (verdict != INCONCLUSIVE), INCONCLUSIVE, verdict)
    if not load_poles_known:
        active = sample.largest_load > 1.0 + 3.0 * sample.scatter + 1e-9
        verdict = np.where(active, INCONCLUSIVE, verdict)
    frequency, modes = _carrying_crossings(frequency_hz, device.shape[0], sample.crossings)
    unstable = known & (count > 0)
    columns = {
        "verdict_code": verdict,
        "encirclements": np.where(known, count, 0),
        "count_known": known,
        "latch_up": known & (count % 2 == 1),
        "oscillation_frequency_hz": np.where(unstable, frequency, np.nan),
        "oscillatory_modes": np.where(unstable, modes, 0),
        "min_distance": sample.min_distance,
        "min_distance_frequency_hz": frequency_hz[sample.closest],
        "worst_loop_gain": sample.worst_loop_gain,
        "worst_loop_gain_frequency_hz": frequency_hz[sample.loudest],
        "largest_phase_step_rad": step,
        "low_closure_code": low_code,
        "high_closure_code": high.basis_code,
        "hidden_resonance": hidden,
    }
    return VariantAnalysis(**{name: value.reshape(leading) for name, value in columns.items()})


#: Samples (variants × points) per block of the pass over every sample: its working arrays
#: (about 72 bytes per sample for a netlist load, some 4.7 MB per block) then stay in the
#: processor's caches: 32,768 and 65,536 were fastest of 16,384 to 1,048,576, the largest
#: about 1.5–2× slower (benchmarks/README.md).
BLOCK_SAMPLES = 1 << 16


@dataclass(frozen=True)
class _Crossings:
    """Intervals where Im L changes sign, rows ascending, with L at both ends."""

    rows: np.ndarray
    columns: np.ndarray
    before: np.ndarray
    after: np.ndarray


@dataclass(frozen=True)
class _SamplePass:
    """What the analysis needs from every sample, reduced per variant (rows of (V, n)).

    The crossing candidates and Foster's candidates on the load are sparse; ``scatter`` (the
    noise of L, :func:`nyquist.estimate_noise`) and ``largest_load`` (max |ΓL|) are computed
    for measured loads only (zeros otherwise).
    """

    in_band_phase: np.ndarray
    largest_step: np.ndarray
    closest: np.ndarray
    min_distance: np.ndarray
    loudest: np.ndarray
    worst_loop_gain: np.ndarray
    crossings: _Crossings
    foster_rows: np.ndarray
    foster_columns: np.ndarray
    scatter: np.ndarray
    largest_load: np.ndarray


def _sample_pass(device: np.ndarray, load: np.ndarray, measured_load: bool) -> _SamplePass:
    """One pass over (V, n) samples in cache-sized blocks of variants (see BLOCK_SAMPLES).

    Per block: L = Γd·ΓL, F = 1 − L, the phase steps of F (:func:`nyquist.phase_steps`'s rule),
    their sum and largest magnitude, min |F| and max |L| with where they occur, the sign changes
    of Im L (crossing candidates) and Foster's candidates on the load.
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
    closest = np.empty(variants, dtype=np.intp)
    min_distance = np.empty(variants)
    loudest = np.empty(variants, dtype=np.intp)
    worst = np.empty(variants)
    scatter = np.zeros(variants)
    largest_load = np.zeros(variants)
    crossings: list[tuple[np.ndarray, ...]] = []
    fosters: list[tuple[np.ndarray, ...]] = []
    for start in range(0, variants, rows_per_block):
        stop = min(start + rows_per_block, variants)
        block = slice(start, stop)
        size = stop - start
        within = np.arange(size)
        (rows, columns), _ = foster_jump_indices(load[block])  # while the block is in cache
        fosters.append((rows + start, columns))
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
        np.max(np.abs(steps, out=steps), axis=-1, out=largest[block])
        magnitude = np.abs(f_block, out=angle)
        closest[block] = np.argmin(magnitude, axis=-1)
        min_distance[block] = magnitude[within, closest[block]]
        magnitude = np.abs(l_block, out=angle)
        loudest[block] = np.argmax(magnitude, axis=-1)
        worst[block] = magnitude[within, loudest[block]]
        negative = l_block.imag < 0
        change = negative[:, :-1] != negative[:, 1:]
        # flatnonzero and divmod: the indices of nonzero, several times faster.
        rows, columns = np.divmod(np.flatnonzero(change), max(change.shape[1], 1))
        crossings.append(
            (rows + start, columns, l_block[rows, columns], l_block[rows, columns + 1])
        )
        if measured_load:
            scatter[block] = nyquist.estimate_noise(l_block)
            largest_load[block] = np.max(np.abs(load[block]), axis=-1)
    foster_rows, foster_columns = _joined(fosters, (_NO_INDEX, _NO_INDEX))
    return _SamplePass(
        in_band_phase=in_band,
        largest_step=largest,
        closest=closest,
        min_distance=min_distance,
        loudest=loudest,
        worst_loop_gain=worst,
        crossings=_Crossings(*_joined(crossings, (_NO_INDEX, _NO_INDEX, _NO_VALUE, _NO_VALUE))),
        foster_rows=foster_rows,
        foster_columns=foster_columns,
        scatter=scatter,
        largest_load=largest_load,
    )


_NO_INDEX = np.zeros(0, dtype=np.intp)
_NO_VALUE = np.zeros(0, dtype=complex)


def _joined(
    parts: list[tuple[np.ndarray, ...]], empty: tuple[np.ndarray, ...]
) -> tuple[np.ndarray, ...]:
    """The blocks' sparse arrays joined field by field, in block order (rows ascending)."""
    if not parts:
        return empty
    return tuple(np.concatenate([part[i] for part in parts]) for i in range(len(empty)))


def _carrying_crossings(
    frequency_hz: np.ndarray, variants: int, crossings: _Crossings
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
    keep = real_at > 1.0
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


def _hidden_resonance_at_stake(
    device: np.ndarray, rows: np.ndarray, columns: np.ndarray
) -> np.ndarray:
    """Foster's candidates on the load (rows, columns of (V, n)), where the device has |Γd| ≥ 1
    nearby: the single check looks at |Γd| in the interval and one sample either side."""
    at_stake = np.zeros(device.shape[0], dtype=bool)
    last = device.shape[1] - 1
    for offset in (-1, 0, 1, 2):
        nearby = np.clip(columns + offset, 0, last)
        at_stake[rows[np.abs(device[rows, nearby]) >= 1.0]] = True
    return at_stake
