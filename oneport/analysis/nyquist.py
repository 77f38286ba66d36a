"""The Nyquist test on sampled loop gains: count, closure, crossings, bands and margins.

Pure computation on numpy arrays with frequency on the last axis, so a sweep adds leading axes
and every vectorised function here works on one variant or a million alike. Nothing here reads
files, prints, plots or decides a verdict: see ``check.py`` for that.

Conventions (METHODS §1–2): L = Γd·ΓL, F = 1 − L. The count N_cw of clockwise encirclements of
+1 by L over the whole frequency axis equals the number of right-half-plane natural frequencies
when F has no right-half-plane poles (the device stable in its measurement impedance). Real
networks have F(−jω) = conj F(jω), so N_cw = −Δarg F / π over 0 ≤ ω < ∞; F(0) and F(∞) are real
and the sampled band is closed to them by the assumption that L does not cross the positive real
axis beyond +1 outside the sweep. Where that assumption is not founded the count is not given.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

#: Largest phase step of F between neighbouring samples that unwrapping is trusted with (rad).
#: Steps near π make the unwrapped phase, and so the count, ambiguous.
UNSAFE_PHASE_STEP_RAD = np.deg2rad(120.0)
#: Above this step (rad) unwrapping still works but the grid is coarse: a warning.
COARSE_PHASE_STEP_RAD = np.deg2rad(45.0)
#: The low edge closure is founded by settling when L's motion per octave at the edge, and its
#: distance from the real axis, stay below this fraction of |F| there.
SETTLED_FRACTION = 0.5
#: |L| < 1 founds an edge only by more than this many times the data's scatter there ...
NOISE_MARGIN = 3.0
#: ... estimated from the differences of these orders over this many samples at the edge
#: (:func:`estimate_noise`: higher orders keep a smooth, finely sampled trace from passing for
#: noise).
EDGE_NOISE_SAMPLES = 16
EDGE_NOISE_ORDERS = (2, 3, 4, 5)


@dataclass(frozen=True)
class EdgeClosure:
    """How the sampled band is closed towards DC (``side="low"``) or infinity (``"high"``).

    ``basis`` is one of :data:`CLOSURE_BASES`: ``"dc-sample"`` (the data include 0 Hz),
    ``"loop-gain-below-unity"`` (|L| < 1 at the edge by more than ``margin``), ``"settled"``
    (towards DC only: L has stopped moving, far from +1), ``"dc-resistances"`` (DC facts),
    ``"netlist-limit"`` (towards infinity, both sides lumped netlists evaluated beyond every
    natural frequency), or ``"not-founded"``. ``sign_at_limit`` is the sign of the real F(0) or
    F(∞) the closure implies (0 when not founded). ``motion`` is |ΔL| per octave over the
    outermost octave; ``margin`` what |L| had to stay below 1 by (the data's scatter there
    times ``NOISE_MARGIN`` plus the stated |Γ| errors' worst effect).
    """

    side: str
    basis: str
    sign_at_limit: int
    loop_gain_at_edge: complex
    motion: float
    extend_to_hz: float | None
    margin: float = 0.0

    @property
    def founded(self) -> bool:
        """True when the closing assumption has a basis in the data at this edge."""
        return self.basis != "not-founded"


@dataclass(frozen=True)
class Crossing:
    """L crossing the positive real axis beyond +1 (F crossing its negative real axis)."""

    frequency_hz: float
    direction: str  # "clockwise" or "counterclockwise" around +1
    loop_gain: complex
    within_noise: bool

    @property
    def contribution(self) -> int:
        """What this crossing adds to N_cw over the whole axis (its mirror image included)."""
        return 2 if self.direction == "clockwise" else -2


@dataclass(frozen=True)
class Band:
    """A stretch of the sweep where |L| ≥ 1."""

    start_hz: float
    stop_hz: float
    peak_loop_gain: float
    peak_frequency_hz: float
    starts_at_sweep_edge: bool
    stops_at_sweep_edge: bool


@dataclass(frozen=True)
class Margins:
    """Distances from the critical point; each frequency is None where the margin has none.

    ``gain_margin`` is the factor |L| may still grow by where L crosses the real axis in (0, 1)
    (1/L there; the smallest), ``phase_margin_rad`` the smallest |arg L| where |L| passes 1,
    ``modulus_margin`` the smallest |1 − L|. dB and degrees are for reports only.
    """

    gain_margin: float | None
    gain_margin_frequency_hz: float | None
    phase_margin_rad: float | None
    phase_margin_frequency_hz: float | None
    modulus_margin: float
    modulus_margin_frequency_hz: float


def characteristic(loop_gain: np.ndarray) -> np.ndarray:
    """F = 1 − L, elementwise."""
    return 1.0 - np.asarray(loop_gain, dtype=complex)


def phase_steps(
    loop_gain: np.ndarray, characteristic_values: np.ndarray | None = None
) -> np.ndarray:
    """Change of arg F between neighbouring samples, each taken in (−π, π] (last axis), rad.

    These are the steps ``numpy.unwrap`` takes (the same rule, ties at ±π included); their sum
    is the in-band phase change and their largest magnitude the sampling check, so neither
    needs the unwrapped phase itself.
    """
    f = characteristic(loop_gain) if characteristic_values is None else characteristic_values
    return wrap_steps(np.diff(np.angle(f), axis=-1))


def wrap_steps(steps: np.ndarray) -> np.ndarray:
    """Differences of principal angles, in place, taken the short way round (rad).

    They lie in (−2π, 2π); beyond ±π the short way round is the other one. Exactly ±π stays,
    as ``numpy.unwrap`` leaves it. (In place: few samples change.)
    """
    steps[steps > np.pi] -= 2.0 * np.pi
    steps[steps < -np.pi] += 2.0 * np.pi
    return steps


def unwrapped_phase(loop_gain: np.ndarray) -> np.ndarray:
    """Continuous phase of F = 1 − L along the last axis, rad."""
    return np.unwrap(np.angle(characteristic(loop_gain)), axis=-1)


def largest_phase_step(loop_gain: np.ndarray, steps: np.ndarray | None = None) -> np.ndarray:
    """Largest |Δ arg F| between neighbouring samples along the last axis, rad."""
    steps = phase_steps(loop_gain) if steps is None else steps
    return np.max(np.abs(steps), axis=-1)


def count_encirclements(
    loop_gain: np.ndarray,
    sign_low: np.ndarray,
    sign_high: np.ndarray,
    steps: np.ndarray | None = None,
) -> np.ndarray:
    """N_cw over the whole frequency axis, given the signs of F(0) and F(∞).

    Parameters
    ----------
    loop_gain : ndarray of complex, shape (..., n)
        L on the sampled band.
    sign_low, sign_high : ndarray of int, shape (...)
        +1 or −1: the sign of the real F(0) and F(∞) the closure implies.
    steps : ndarray, optional
        :func:`phase_steps` of ``loop_gain``, when already computed.

    Returns
    -------
    ndarray of int, shape (...)
        Clockwise encirclements of +1 by L.

    Examples
    --------
    A loop that never reaches +1 does not encircle it:

    >>> L = 0.5 * np.exp(-1j * np.linspace(0, 3, 50))
    >>> int(count_encirclements(L, np.array(1), np.array(1)))
    0
    """
    loop_gain = np.asarray(loop_gain, dtype=complex)
    steps = phase_steps(loop_gain) if steps is None else steps
    in_band = np.sum(steps, axis=-1)
    return count_from_phase_change(
        in_band, loop_gain[..., 0], loop_gain[..., -1], sign_low, sign_high
    )


def count_from_phase_change(
    in_band: np.ndarray,
    first_loop_gain: np.ndarray,
    last_loop_gain: np.ndarray,
    sign_low: np.ndarray,
    sign_high: np.ndarray,
) -> np.ndarray:
    """N_cw from the in-band change of arg F (the sum of :func:`phase_steps`, rad), L at the
    first and last samples, and the signs of F(0) and F(∞): the edges closed to the real axis."""
    first, last = 1.0 - first_loop_gain, 1.0 - last_loop_gain
    low = np.angle(first) - _reference_angle(sign_low, first.imag)
    high = _reference_angle(sign_high, last.imag) - np.angle(last)
    return np.rint(-(in_band + low + high) / np.pi).astype(int)


def _reference_angle(sign: np.ndarray, imaginary: np.ndarray) -> np.ndarray:
    """Angle of the real F at a limit, on the branch the edge sample leaves it by (0 or ±π)."""
    side = np.where(imaginary < 0, -1.0, 1.0)
    return np.where(np.asarray(sign) < 0, side * np.pi, 0.0)


#: Closure bases by code, as :func:`close_edges` (codes 0–3) and the judgement (4, 5) give them.
CLOSURE_BASES = (
    "not-founded",
    "dc-sample",
    "loop-gain-below-unity",
    "settled",
    "dc-resistances",
    "netlist-limit",
)
NOT_FOUNDED, DC_SAMPLE, BELOW_UNITY, SETTLED, DC_RESISTANCES, NETLIST_LIMIT = range(6)


@dataclass(frozen=True)
class EdgeClosures:
    """Vectorised closure of one edge for many loop gains (arrays of the leading shape)."""

    basis_code: np.ndarray  # index into CLOSURE_BASES
    sign_at_limit: np.ndarray  # +1, −1, or 0 when not founded
    motion: np.ndarray
    margin: np.ndarray
    edge_loop_gain: np.ndarray  # the larger of |L| at the edge sample and its five-point median

    @property
    def founded(self) -> np.ndarray:
        """True where the closing assumption has a basis in the data."""
        return self.basis_code != NOT_FOUNDED


def close_edges(
    frequency_hz: np.ndarray, loop_gain: np.ndarray, side: str, uncertainty: Any = 0.0
) -> EdgeClosures:
    """Decide, for every loop gain at once, whether its band closes towards DC or infinity.

    ``loop_gain`` has shape (..., n); ``uncertainty`` (the worst change of L at the edge that
    stated |Γ| errors allow) broadcasts to the leading shape; the result arrays have shape
    (...). The rules (METHODS §2):

    - ``dc-sample``: the low edge is 0 Hz; F(0) takes the sign of Re F there.
    - ``loop-gain-below-unity``: |L| at the edge sample and in a five-point median there stays
      below 1 by more than ``NOISE_MARGIN`` times the data's scatter over the outermost
      ``EDGE_NOISE_SAMPLES`` samples plus ``uncertainty`` — towards DC also by more than |L|
      grew over the lowest octave, so that one more octave like it below the sweep cannot
      reach |L| = 1. F at the limit is positive.
    - ``settled`` (towards DC only): L has stopped moving far from +1 — its motion per octave
      over the outermost octave of the sweep (or the whole of a narrower one), and F's distance
      from the real axis, are both below ``SETTLED_FRACTION`` of |F| at the edge (medians, so
      measurement noise does not pass for motion). A lumped circuit tends to its DC values, and
      near DC a settled L moves by less over the rest of the way to 0 Hz than over its first
      octave. F at the limit takes the sign of Re F at the edge. Towards infinity nothing
      settles for sure: above a sweep, parasitics and the load's resonances are unknown, and a
      truncated file looks settled at its last points.
    - otherwise ``not-founded``.
    """
    loop_gain = np.asarray(loop_gain, dtype=complex)
    edge = 0 if side == "low" else frequency_hz.size - 1
    edge_value = loop_gain[..., edge]
    smoothed_edge = _smoothed(loop_gain, edge)
    motion = motion_per_octave(frequency_hz, loop_gain, side)
    window = slice(0, EDGE_NOISE_SAMPLES) if side == "low" else slice(-EDGE_NOISE_SAMPLES, None)
    scatter = estimate_noise(loop_gain[..., window], EDGE_NOISE_ORDERS)
    margin = NOISE_MARGIN * scatter + np.asarray(uncertainty)
    f_edge = 1.0 - smoothed_edge
    largest = np.maximum(np.abs(smoothed_edge), np.abs(edge_value))
    below_unity = largest + margin < 1.0
    settled = np.zeros(below_unity.shape, dtype=bool)
    if side == "low":
        # Below the sweep |L| goes on growing as it grew over the lowest octave: |L| < 1 at
        # the edge founds the closure only if one more such octave cannot take it to 1 (a
        # real root just below the sweep shows as L creeping towards +1 at the edge).
        below_unity &= largest + margin + _growth_towards_edge(frequency_hz, loop_gain) < 1.0
        spread = np.maximum(motion, np.abs(f_edge.imag))
        settled = spread < SETTLED_FRACTION * np.abs(f_edge)
    sign_of_real = np.where(f_edge.real > 0, 1, -1)
    code = np.where(below_unity, BELOW_UNITY, np.where(settled, SETTLED, NOT_FOUNDED))
    sign = np.where(below_unity, 1, np.where(settled, sign_of_real, 0))
    if side == "low" and frequency_hz[0] == 0.0:
        code = np.full_like(code, DC_SAMPLE)
        sign = np.where((1.0 - edge_value).real > 0, 1, -1)
        motion = np.zeros_like(motion)
    margin = np.broadcast_to(margin, code.shape)
    return EdgeClosures(code, sign, motion, margin, largest)


def close_edge(
    frequency_hz: np.ndarray, loop_gain: np.ndarray, side: str, uncertainty: float = 0.0
) -> EdgeClosure:
    """The closure of one loop gain's edge (:func:`close_edges` for a single trace)."""
    closures = close_edges(frequency_hz, loop_gain, side, uncertainty)
    return edge_closure(frequency_hz, loop_gain, side, closures, ())


def edge_closure(
    frequency_hz: np.ndarray,
    loop_gain: np.ndarray,
    side: str,
    closures: EdgeClosures,
    index: tuple[int, ...],
    basis_code: int | None = None,
    sign: int | None = None,
) -> EdgeClosure:
    """One variant's :class:`EdgeClosure` (``index`` into the closures' leading shape),
    with the basis and sign the judgement settled on when they differ from the data's."""
    n = frequency_hz.size
    edge = 0 if side == "low" else n - 1
    code = int(closures.basis_code[index]) if basis_code is None else basis_code
    basis = CLOSURE_BASES[code]
    extend = None
    if basis == "not-founded":
        count = min(n, max(4, n // 20))
        outer = slice(0, count) if side == "low" else slice(n - count, n)
        extend = extend_to(frequency_hz[outer], loop_gain[outer], frequency_hz[edge], side)
    return EdgeClosure(
        side,
        basis,
        int(closures.sign_at_limit[index]) if sign is None else sign,
        complex(loop_gain[edge]),
        float(closures.motion[index]),
        extend,
        float(closures.margin[index]),
    )


#: Samples either side of an edge that its medians take (five-point windows).
_HALF_WINDOW = 2


def _smoothed(values: np.ndarray, index: int, half_width: int = _HALF_WINDOW) -> np.ndarray:
    """Median of real and imaginary parts over a few samples around ``index`` (last axis)."""
    window = values[..., max(0, index - half_width) : index + half_width + 1]
    return median(window.real) + 1j * median(window.imag)


def median(values: np.ndarray) -> Any:
    """:func:`numpy.median` along the last axis (NaN where a value is NaN), without the import
    of ``numpy.ma`` that numpy's own makes for its NaN check (a tenth of a quick command).

    Examples
    --------
    >>> median(np.array([[3.0, 1.0, 2.0, 10.0], [1.0, np.nan, 0.0, 2.0]]))
    array([2.5, nan])
    """
    values = np.asarray(values)
    count = values.shape[-1]
    if count == 0:
        return np.full(values.shape[:-1], np.nan)[()]
    half = count // 2
    if count % 2:
        middle = np.partition(values, half, axis=-1)[..., half]
    else:
        part = np.partition(values, (half - 1, half), axis=-1)
        middle = (part[..., half - 1] + part[..., half]) / 2.0
    return np.where(np.isnan(values).any(axis=-1), np.nan, middle)[()]


def motion_per_octave(frequency_hz: np.ndarray, values: np.ndarray, side: str) -> np.ndarray:
    """|Δ| per octave over the outermost octave of the sweep (or the whole of a narrower one).

    ``values`` has shape (..., n); the result has shape (...).
    """
    edge, inner = _octave_ends(frequency_hz, side)
    values = np.asarray(values)
    if frequency_hz[edge] == 0 or frequency_hz[inner] == 0:
        return np.zeros(values.shape[:-1])
    octaves = abs(np.log2(frequency_hz[inner] / frequency_hz[edge]))
    if octaves == 0:
        return np.zeros(values.shape[:-1])
    change = np.abs(_smoothed(values, inner) - _smoothed(values, edge))
    return change / octaves


def _growth_towards_edge(frequency_hz: np.ndarray, values: np.ndarray) -> np.ndarray:
    """How much |L| grows per octave towards the low edge (medians; 0 where it falls).

    ``values`` has shape (..., n); the result has shape (...).
    """
    edge, inner = _octave_ends(frequency_hz, "low")
    if frequency_hz[edge] <= 0 or frequency_hz[inner] <= frequency_hz[edge]:
        return np.zeros(np.shape(values)[:-1])
    octaves = np.log2(frequency_hz[inner] / frequency_hz[edge])
    growth = np.abs(_smoothed(values, edge)) - np.abs(_smoothed(values, inner))
    return np.maximum(growth, 0.0) / octaves


def _octave_ends(frequency_hz: np.ndarray, side: str) -> tuple[int, int]:
    """Sample indices of the edge and of the inner end of the outermost octave at ``side``."""
    last = frequency_hz.size - 1
    if side == "low":
        return 0, min(int(np.searchsorted(frequency_hz, 2.0 * frequency_hz[0])), last)
    inner = max(int(np.searchsorted(frequency_hz, 0.5 * frequency_hz[-1], side="right")) - 1, 0)
    return last, inner


def closure_columns(frequency_hz: np.ndarray) -> np.ndarray:
    """The sample indices :func:`close_edges` reads, at both edges, ascending.

    They are the outermost ``EDGE_NOISE_SAMPLES`` at each edge (for the scatter) and the
    five-sample windows (:func:`_smoothed`) around the inner end of each outermost octave, so
    ``close_edges(frequency_hz[c], loop_gain[..., c], side)`` equals
    ``close_edges(frequency_hz, loop_gain, side)``: a sweep computes L at these few columns for
    the closures instead of keeping every sample.
    """
    count = frequency_hz.size
    columns: set[int] = set(range(min(count, EDGE_NOISE_SAMPLES)))
    columns.update(range(max(0, count - EDGE_NOISE_SAMPLES), count))
    for side in ("low", "high"):
        for centre in _octave_ends(frequency_hz, side):
            columns.update(
                range(max(0, centre - _HALF_WINDOW), min(count, centre + _HALF_WINDOW + 1))
            )
    return np.array(sorted(columns), dtype=np.intp)


def extend_to(f: np.ndarray, values: np.ndarray, edge_frequency: float, side: str) -> float:
    """Where to extend the sweep so the edge would likely close, rounded to a plain figure.

    Down: a decade below the edge. Up: where the loop gain's slope (dB per octave over the
    outermost samples) would bring |L| to −3 dB, at least half an octave and at most about
    100 times beyond the edge; ten times the edge when |L| is not falling.
    """
    if side == "low":
        return round_frequency(edge_frequency / 10.0, down=True)
    decibels = 20.0 * np.log10(np.maximum(np.abs(values), 1e-300))
    octaves = np.log2(f)
    slope_per_octave = np.polyfit(octaves, decibels, 1)[0] if np.ptp(octaves) > 0 else 0.0
    target = edge_frequency * 10.0
    if slope_per_octave < -1e-3:
        needed_octaves = (decibels[-1] + 3.0) / -slope_per_octave
        target = float(edge_frequency * 2.0 ** min(max(needed_octaves, 0.5), 6.6))
    return round_frequency(target)


#: Plain mantissas a suggested frequency is rounded to.
_PLAIN_MANTISSAS = (1.0, 1.5, 2.0, 3.0, 5.0, 7.0, 10.0)


def round_frequency(frequency_hz: float, down: bool = False) -> float:
    """``frequency_hz`` rounded up (or down) to 1, 1.5, 2, 3, 5 or 7 times a power of ten.

    >>> round_frequency(4.37e9), round_frequency(4.37e9, down=True)
    (5000000000.0, 3000000000.0)
    """
    if not frequency_hz > 0:
        return float(frequency_hz)
    decade = 10.0 ** np.floor(np.log10(frequency_hz))
    mantissa = frequency_hz / decade
    if down:
        chosen = max(m for m in _PLAIN_MANTISSAS if m <= mantissa * (1 + 1e-12))
    else:
        chosen = min(m for m in _PLAIN_MANTISSAS if m >= mantissa * (1 - 1e-12))
    return float(chosen * decade)


def find_crossings(
    frequency_hz: np.ndarray, loop_gain: np.ndarray, noise: float = 0.0
) -> list[Crossing]:
    """Every crossing of the positive real axis beyond +1 by L, by linear interpolation.

    ``noise`` is the estimated standard deviation of L; a crossing whose distance from +1 is
    within three of it is marked ``within_noise``.
    """
    imaginary = loop_gain.imag
    upward = (imaginary[:-1] < 0) & (imaginary[1:] >= 0)
    downward = (imaginary[:-1] >= 0) & (imaginary[1:] < 0)
    crossings = []
    for index in np.flatnonzero(upward | downward):
        a, b = imaginary[index], imaginary[index + 1]
        if frequency_hz[index] == 0.0 and a == 0.0:
            continue  # the contour meets its mirror image at 0 Hz: F(0)'s sign closes it
        t = a / (a - b)
        value = complex(loop_gain[index] + t * (loop_gain[index + 1] - loop_gain[index]))
        if value.real <= 1.0:
            continue
        frequency = float(frequency_hz[index] + t * (frequency_hz[index + 1] - frequency_hz[index]))
        crossings.append(
            Crossing(
                frequency_hz=frequency,
                direction="counterclockwise" if upward[index] else "clockwise",
                loop_gain=value,
                within_noise=abs(value - 1.0) < 3.0 * noise,
            )
        )
    return crossings


def net_crossings(crossings: list[Crossing]) -> list[Crossing]:
    """The crossings that carry the net count once neighbouring opposite ones cancel."""
    stack: list[Crossing] = []
    for crossing in crossings:
        if stack and stack[-1].direction != crossing.direction:
            stack.pop()
        else:
            stack.append(crossing)
    return stack


def find_bands(frequency_hz: np.ndarray, loop_gain: np.ndarray, noise: float = 0.0) -> list[Band]:
    """Contiguous stretches where |L| ≥ 1, edges interpolated where |L| passes 1 (in dB).

    Neighbouring stretches whose gap never falls below 1 − 3·``noise`` are one band: the gap
    is measurement scatter around |L| = 1, not a real dip.
    """
    magnitude = np.abs(loop_gain)
    above = magnitude >= 1.0
    edges = np.diff(above.astype(int))
    starts = [int(i) for i in np.flatnonzero(edges == 1) + 1]
    stops = [int(i) for i in np.flatnonzero(edges == -1)]
    if above[0]:
        starts.insert(0, 0)
    if above[-1]:
        stops.append(above.size - 1)
    runs: list[list[int]] = []
    for start, stop in zip(starts, stops, strict=True):
        if runs and magnitude[runs[-1][1] + 1 : start].min() >= 1.0 - 3.0 * noise:
            runs[-1][1] = stop
        else:
            runs.append([start, stop])
    last = above.size - 1
    bands = []
    for start, stop in runs:
        peak = start + int(np.argmax(magnitude[start : stop + 1]))
        bands.append(
            Band(
                start_hz=float(frequency_hz[0])
                if start == 0
                else _unity_crossing(frequency_hz, magnitude, start - 1),
                stop_hz=float(frequency_hz[-1])
                if stop == last
                else _unity_crossing(frequency_hz, magnitude, stop),
                peak_loop_gain=float(magnitude[peak]),
                peak_frequency_hz=float(frequency_hz[peak]),
                starts_at_sweep_edge=start == 0,
                stops_at_sweep_edge=stop == last,
            )
        )
    return bands


def _unity_crossing(frequency_hz: np.ndarray, magnitude: np.ndarray, index: int) -> float:
    """Frequency where |L| passes 1 between samples ``index`` and ``index + 1`` (dB-linear)."""
    t = _unity_fraction(magnitude, index)
    return float(frequency_hz[index] + t * (frequency_hz[index + 1] - frequency_hz[index]))


def _unity_fraction(magnitude: np.ndarray, index: int) -> float:
    """How far from sample ``index`` towards the next |L| passes 1, linear in dB."""
    # |L| = 0 at a sample (a perfectly matched side there) is the far end of the dB scale.
    tiny = np.finfo(float).tiny
    a, b = np.log10(max(magnitude[index], tiny)), np.log10(max(magnitude[index + 1], tiny))
    return float(a / (a - b)) if a != b else 0.5


def find_margins(frequency_hz: np.ndarray, loop_gain: np.ndarray) -> Margins:
    """Gain, phase and modulus margins of L against the critical point +1."""
    f = characteristic(loop_gain)
    modulus = np.abs(f)
    closest = int(np.argmin(modulus))

    imaginary = loop_gain.imag
    gain_margin = gain_frequency = None
    negative = imaginary < 0
    # Half-open classes: a sample exactly on the real axis ends the interval it closes.
    for index in np.flatnonzero(negative[:-1] != negative[1:]):
        a, b = imaginary[index], imaginary[index + 1]
        t = a / (a - b)
        real = float((loop_gain[index] + t * (loop_gain[index + 1] - loop_gain[index])).real)
        if 0.0 < real < 1.0:
            margin = 1.0 / real
            if gain_margin is None or margin < gain_margin:
                gain_margin = float(margin)
                gain_frequency = float(
                    frequency_hz[index] + t * (frequency_hz[index + 1] - frequency_hz[index])
                )

    phase_margin = phase_frequency = None
    magnitude = np.abs(loop_gain)
    for index in np.flatnonzero((magnitude[:-1] >= 1.0) != (magnitude[1:] >= 1.0)):
        t = _unity_fraction(magnitude, int(index))
        value = loop_gain[index] + t * (loop_gain[index + 1] - loop_gain[index])
        margin = float(abs(np.angle(value)))
        if phase_margin is None or margin < phase_margin:
            phase_margin = margin
            phase_frequency = float(
                frequency_hz[index] + t * (frequency_hz[index + 1] - frequency_hz[index])
            )

    return Margins(
        gain_margin=gain_margin,
        gain_margin_frequency_hz=gain_frequency,
        phase_margin_rad=phase_margin,
        phase_margin_frequency_hz=phase_frequency,
        modulus_margin=float(modulus[closest]),
        modulus_margin_frequency_hz=float(frequency_hz[closest]),
    )


def estimate_noise(loop_gain: np.ndarray, orders: tuple[int, ...] = (2,)) -> Any:
    """Standard deviation of the point-to-point scatter of L (robust, from its differences).

    A float for one trace, an array of the leading shape for several.

    For white noise of σ on each sample, the k-th difference has σ·√C(2k, k) (√6 for the
    second); the median absolute value keeps real curvature (a resonance) from inflating the
    estimate. With several ``orders`` the smallest estimate is taken: white noise gives them all
    alike, while a smooth curve's higher differences shrink fast, so a finely sampled smooth
    trace is not mistaken for a noisy one.
    """
    loop_gain = np.asarray(loop_gain)
    estimates = []
    for order in orders:
        if loop_gain.shape[-1] <= order:
            continue
        difference = np.diff(loop_gain, n=order, axis=-1)
        # For complex Gaussian noise |difference| is Rayleigh; its median is σ_c·sqrt(ln 4) where
        # σ_c is the per-component deviation times sqrt(C(2k, k)). Report the complex (total)
        # deviation of L.
        spread = np.sqrt(math.comb(2 * order, order))
        per_component = median(np.abs(difference)) / np.sqrt(np.log(4.0)) / spread
        estimates.append(per_component * np.sqrt(2.0))
    if not estimates:
        return 0.0 if loop_gain.ndim == 1 else np.zeros(loop_gain.shape[:-1])
    total = np.min(estimates, axis=0)
    return float(total) if np.ndim(total) == 0 else total
