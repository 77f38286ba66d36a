"""Sampling diagnostics: can the grid have hidden a resonance? (METHODS §2, "Sampling").

A step limit on the phase is necessary but not sufficient: a high-Q resonance can fall wholly
between two samples. Two clues are computed here, each on a file's *own* grid before any
interpolation (a coarse load put on a fine device grid looks smooth and is not):

- Foster's reactance theorem: the reactance of a lossless one-port rises with frequency, so
  Im Z of a passive load jumping from large positive to large negative between two samples
  means a pole of Z (a parallel resonance) lies between them; the same on Im Y means a zero of
  Z (a series resonance). A pole–zero pair between two samples is invisible to both.
- The finest loaded Q a grid resolves is about f / (2 Δf).

Pure computation on arrays; no verdicts, no printing.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: |Im Z| / Z0 (and |Im Y| · Z0) on both sides of the jump for it to count as a hidden pole:
#: clear of the chart's real axis, so noise on a matched or shorted load cannot trigger it.
FOSTER_JUMP_THRESHOLD = 0.1
#: ... and at both samples the reactance must be this many times the resistance (the samples
#: lie outside the resonance's half-power band, so the resonance is narrower than the step).
FOSTER_REACTIVE_RATIO = 3.0


@dataclass(frozen=True)
class HiddenResonance:
    """A sample interval of a passive one-port that Foster's theorem says holds a resonance."""

    source: str
    kind: str  # "parallel" (pole of Z, seen on Im Z) or "series" (zero of Z, seen on Im Y)
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


def foster_jumps(gamma: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sample intervals where Foster's theorem says a resonance lies between the samples.

    Returns two boolean arrays of shape (..., n − 1): ``parallel`` (Im Z/Z0 falls from above
    +``FOSTER_JUMP_THRESHOLD`` to below −threshold: a pole of Z) and ``series`` (the same on
    Im Y·Z0: a zero of Z). Both samples must also look reactive (|X| ≥
    ``FOSTER_REACTIVE_RATIO``·R, or |B| ≥ ratio·G): a lossy resonance resolved by the grid
    lets the reactance fall through zero within a step, which is no sign of a hidden one.
    Real arithmetic only (Z/Z0 = (1 + Γ)/(1 − Γ) written out), so sweeps can test every variant.
    """
    gamma = np.asarray(gamma, dtype=complex)
    magnitude = gamma.real**2 + gamma.imag**2
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        open_distance = (1.0 - gamma.real) ** 2 + gamma.imag**2
        short_distance = (1.0 + gamma.real) ** 2 + gamma.imag**2
        reactance = 2.0 * gamma.imag / open_distance
        resistance = (1.0 - magnitude) / open_distance
        susceptance = -2.0 * gamma.imag / short_distance
        conductance = (1.0 - magnitude) / short_distance
        found = []
        for imaginary, real in ((reactance, resistance), (susceptance, conductance)):
            reactive = np.abs(imaginary) >= FOSTER_REACTIVE_RATIO * np.abs(real)
            found.append(
                (imaginary[..., :-1] > FOSTER_JUMP_THRESHOLD)
                & (imaginary[..., 1:] < -FOSTER_JUMP_THRESHOLD)
                & reactive[..., :-1]
                & reactive[..., 1:]
            )
    return found[0], found[1]


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
    found = []
    for kind, jumps in zip(("parallel", "series"), foster_jumps(gamma), strict=True):
        for index in np.flatnonzero(jumps):
            found.append(
                HiddenResonance(
                    source, kind, float(frequency_hz[index]), float(frequency_hz[index + 1])
                )
            )
    return sorted(found, key=lambda r: r.start_hz)


def grid_resolution(frequency_hz: np.ndarray, source: str) -> GridResolution:
    """The finest loaded Q resolvable anywhere on the grid: min over samples of f / (2Δf)."""
    steps = np.diff(frequency_hz)
    centres = 0.5 * (frequency_hz[:-1] + frequency_hz[1:])
    q = centres / (2.0 * steps)
    index = int(np.argmin(q))
    return GridResolution(source, float(q[index]), float(centres[index]), float(steps[index]))
