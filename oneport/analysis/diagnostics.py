"""Sampling diagnostics: can the grid have hidden a resonance? (METHODS §2, "Sampling").

A step limit on the phase is necessary but not sufficient: a high-Q resonance can fall wholly
between two samples. Two clues are computed here, each on a file's *own* grid before any
interpolation (a coarse load put on a fine device grid looks smooth and is not):

- Foster's reactance theorem: the reactance of a lossless one-port rises with frequency, so
  Im Z of a passive load jumping from large positive to large negative between two samples
  means a pole of Z (a parallel resonance) lies between them; the same on Im Y means a zero of
  Z (a series resonance). A pole–zero pair between two samples is invisible to both.
- An isolated jump: across a resistive network a resonance shows no clean reactive sign change,
  only one step of Γ far larger than the steps of its neighbours (compared with a robust local
  median of them, and with the data's noise).
- The finest loaded Q a grid resolves is about f / (2 Δf).

Pure computation on arrays; no verdicts, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

#: |Im Z| / Z0 (and |Im Y| · Z0) on both sides of the jump for it to count as a hidden pole:
#: clear of the chart's real axis, so noise on a matched or shorted load cannot trigger it.
FOSTER_JUMP_THRESHOLD = 0.1
#: ... and at both samples the reactance must be this many times the resistance (the samples
#: lie outside the resonance's half-power band, so the resonance is narrower than the step).
FOSTER_REACTIVE_RATIO = 3.0
#: A step of Γ counts as an isolated jump when it exceeds this many times the median of its
#: neighbours' steps: a resonance whose loaded Q is about 1.3 times the finest the grid resolves
#: (f/(2Δf)) already gives 5; one the grid resolves gives under 4 (its neighbours move too).
JUMP_RATIO = 5.0
#: Neighbouring steps on each side that the median takes.
JUMP_NEIGHBOURS = 3
#: ... and when it exceeds this many times the scatter of Γ (noise alone almost never does).
JUMP_NOISE_FACTOR = 6.0
#: ... and this absolute size (|ΔΓ|): rounding wiggles of a flat computed trace are no sign.
JUMP_FLOOR = 1e-6


@dataclass(frozen=True)
class HiddenResonance:
    """A sample interval of a passive one-port where something sharp lies between the samples:
    Foster's theorem says a resonance is there, or Γ jumps far more than around it."""

    source: str
    #: "parallel" (pole of Z, seen on Im Z), "series" (zero of Z, seen on Im Y), or "jump" (an
    #: isolated step of Γ far larger than its neighbours')
    kind: str
    start_hz: float
    stop_hz: float

    @property
    def step_hz(self) -> float:
        """The sample step that hid it."""
        return self.stop_hz - self.start_hz


@dataclass(frozen=True)
class GridResolution:
    """The finest loaded Q a file's grid resolves (f / 2Δf), at its coarsest point."""

    source: str
    finest_resolvable_q: float
    at_frequency_hz: float
    largest_step_hz: float


def impedance(gamma: np.ndarray, reference_impedance_ohm: float) -> np.ndarray:
    """Z = Z0 (1 + Γ) / (1 − Γ), Ω (infinite where Γ = 1)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return reference_impedance_ohm * (1.0 + gamma) / (1.0 - gamma)


def foster_jump_indices(gamma: np.ndarray) -> tuple[tuple[np.ndarray, ...], np.ndarray]:
    """Where Foster's theorem says a resonance lies between two samples, as sparse indices.

    ``gamma`` has shape (..., n). Returns the index arrays of the intervals (as from
    ``numpy.nonzero`` on shape (..., n − 1)) and, for each, True for a parallel resonance (Im Z
    falls from above +``FOSTER_JUMP_THRESHOLD``·Z0 to below −threshold: a pole of Z) or False
    for a series one (the same on Im Y·Z0: a zero of Z). Both samples must also look reactive
    (|X| ≥ ``FOSTER_REACTIVE_RATIO``·R, or |B| ≥ ratio·G): a lossy resonance resolved by the
    grid lets the reactance fall through zero within a step, which is no sign of a hidden one.

    Im Z and Im Y change sign only where Im Γ does, so the candidates come from the sign of
    Im Γ alone and the immittances are computed at those few intervals only (real arithmetic,
    Z/Z0 = (1 + Γ)/(1 − Γ) written out): cheap enough for every variant of a sweep.
    """
    gamma = np.asarray(gamma, dtype=complex)
    negative = gamma.imag < 0
    # Candidates: Im Γ < 0 starts or stops (one pass over the samples). flatnonzero and
    # unravel_index give the indices of nonzero, several times faster.
    change = negative[..., :-1] != negative[..., 1:]
    index = np.unravel_index(np.flatnonzero(change), change.shape)
    before = gamma[index]
    after = gamma[(*index[:-1], index[-1] + 1)]
    # Im Z has the sign of Im Γ, Im Y the opposite sign: strictly + to − is a pole of Z,
    # − to + a zero (a change to or from an exact 0 is neither).
    parallel = (before.imag > 0) & (after.imag < 0)
    strict = parallel | ((before.imag < 0) & (after.imag > 0))
    index = tuple(i[strict] for i in index)
    before, after, parallel = before[strict], after[strict], parallel[strict]
    keep = _reactive_jump(before, parallel) & _reactive_jump(after, parallel)
    return tuple(i[keep] for i in index), parallel[keep]


def _reactive_jump(gamma: np.ndarray, parallel: np.ndarray) -> np.ndarray:
    """At a candidate sample: |Im| beyond the threshold and reactive enough (see above)."""
    magnitude = gamma.real**2 + gamma.imag**2
    distance = np.where(parallel, (1.0 - gamma.real) ** 2, (1.0 + gamma.real) ** 2) + gamma.imag**2
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        imaginary = np.abs(2.0 * gamma.imag / distance)
        real = np.abs((1.0 - magnitude) / distance)
    return (imaginary > FOSTER_JUMP_THRESHOLD) & (imaginary >= FOSTER_REACTIVE_RATIO * real)


def jump_indices(gamma: np.ndarray, noise: Any = 0.0) -> tuple[np.ndarray, ...]:
    """Sample intervals where Γ jumps far more than its neighbours do, as sparse indices.

    ``gamma`` has shape (..., n); ``noise`` (the scatter of Γ, as
    :func:`oneport.analysis.nyquist.estimate_noise` gives it) broadcasts to the leading shape.
    Returns index arrays of the intervals, as ``numpy.nonzero`` on shape (..., n − 1).

    An interval's step |Γ[i+1] − Γ[i]| is a jump when it exceeds ``JUMP_RATIO`` times the
    median of the ``2·JUMP_NEIGHBOURS`` nearest other steps (one-sided at the grid's ends),
    ``JUMP_NOISE_FACTOR`` times the noise and ``JUMP_FLOOR``. The median of the others is read
    from the sorted window of seven steps with the interval's own: a step more than twice that
    median sits in the window's upper half, so the others' median is the mean of the window's
    third and fourth smallest. Grids of fewer than eight points give none.
    """
    gamma = np.asarray(gamma, dtype=complex)
    count = gamma.shape[-1] - 1
    width = 2 * JUMP_NEIGHBOURS + 1
    if count < width:
        return tuple(np.zeros(0, dtype=np.intp) for _ in range(gamma.ndim))
    steps = np.abs(np.diff(gamma, axis=-1))
    floor = np.maximum(JUMP_NOISE_FACTOR * np.asarray(noise, dtype=float), JUMP_FLOOR)
    # A cheap necessary condition first: three of the six others lie below twice their median,
    # so a jump exceeds JUMP_RATIO/2 times the smallest of its neighbours within three steps
    # (the intervals at the grid's ends, whose windows are one-sided, are always examined).
    nearest = np.full(steps.shape, np.inf)
    for shift in range(1, JUMP_NEIGHBOURS + 1):
        np.minimum(nearest[..., shift:], steps[..., :-shift], out=nearest[..., shift:])
        np.minimum(nearest[..., :-shift], steps[..., shift:], out=nearest[..., :-shift])
    candidate = (steps > 0.5 * JUMP_RATIO * nearest) & (steps > np.expand_dims(floor, -1))
    candidate[..., :JUMP_NEIGHBOURS] = True
    candidate[..., -JUMP_NEIGHBOURS:] = True
    index = np.nonzero(candidate)
    position = index[-1]
    starts = np.clip(position - JUMP_NEIGHBOURS, 0, count - width)
    windows = steps[(*(i[:, None] for i in index[:-1]), starts[:, None] + np.arange(width))]
    lowest = np.partition(windows, JUMP_NEIGHBOURS, axis=-1)
    median = 0.5 * (np.max(lowest[..., :JUMP_NEIGHBOURS], axis=-1) + lowest[..., JUMP_NEIGHBOURS])
    step = steps[index]
    limit = np.broadcast_to(floor, steps.shape[:-1])[index[:-1]] if steps.ndim > 1 else floor
    jump = (step > JUMP_RATIO * median) & (step > limit)
    return tuple(i[jump] for i in index)


def hidden_features(
    frequency_hz: np.ndarray,
    gamma: np.ndarray,
    reference_impedance_ohm: float,
    source: str,
    noise: float = 0.0,
) -> list[HiddenResonance]:
    """Every sample interval of a passive one-port where something sharp may hide: Foster
    violations (:func:`foster_violations`) and isolated jumps (:func:`jump_indices`), in
    frequency order (an interval both tests flag is listed once, as Foster's)."""
    found = {
        (r.start_hz, r.stop_hz): r
        for r in foster_violations(frequency_hz, gamma, reference_impedance_ohm, source)
    }
    (index,) = jump_indices(gamma, noise)
    for i in index.tolist():
        interval = (float(frequency_hz[i]), float(frequency_hz[i + 1]))
        found.setdefault(interval, HiddenResonance(source, "jump", *interval))
    return [found[key] for key in sorted(found)]


def foster_violations(
    frequency_hz: np.ndarray, gamma: np.ndarray, reference_impedance_ohm: float, source: str
) -> list[HiddenResonance]:
    """Sample intervals where a passive one-port's reactance or susceptance falls through ∞.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        The file's own grid, Hz.
    gamma : ndarray of complex, shape (n,)
        Its reflection, referred to ``reference_impedance_ohm``.

    Examples
    --------
    A parallel LC tank (1 nH, 1 pF: 5.03 GHz) sampled every 1 GHz hides its pole between
    5 and 6 GHz:

    >>> f = np.arange(1, 10) * 1e9
    >>> w = 2 * np.pi * f
    >>> z = 1 / (1j * w * 1e-12 + 1 / (1j * w * 1e-9))
    >>> gamma = (z - 50) / (z + 50)
    >>> [(r.kind, r.start_hz, r.stop_hz) for r in foster_violations(f, gamma, 50.0, "tank")]
    [('parallel', 5000000000.0, 6000000000.0)]
    """
    (index,), parallel = foster_jump_indices(gamma)
    return [
        HiddenResonance(
            source,
            "parallel" if is_parallel else "series",
            float(frequency_hz[i]),
            float(frequency_hz[i + 1]),
        )
        for i, is_parallel in zip(index.tolist(), parallel.tolist(), strict=True)
    ]


def grid_resolution(
    frequency_hz: np.ndarray, source: str, where: np.ndarray | None = None
) -> GridResolution | None:
    """The finest loaded Q the grid resolves, f / (2Δf), at its coarsest sample interval.

    ``where`` (frequency pairs [low, high] as an array of shape (k, 2)) limits the search to the
    sample intervals that overlap those stretches — for the check, where the device has
    |Γd| ≥ 1, since a hidden resonance elsewhere cannot reach +1 with a passive load. None when
    no interval overlaps them (or the grid has fewer than two points).
    """
    if frequency_hz.size < 2:
        return None
    steps = np.diff(frequency_hz)
    centres = 0.5 * (frequency_hz[:-1] + frequency_hz[1:])
    q = centres / (2.0 * steps)
    if where is not None:
        inside = np.zeros(centres.shape, dtype=bool)
        for low, high in np.reshape(where, (-1, 2)):
            inside |= (frequency_hz[:-1] <= high) & (frequency_hz[1:] >= low)
        if not inside.any():
            return None
        q = np.where(inside, q, np.inf)
    index = int(np.argmin(q))
    return GridResolution(source, float(q[index]), float(centres[index]), float(steps[index]))
