"""Small-signal start-up estimates beside the Nyquist count (METHODS §4, Kurokawa).

Near a frequency ω0 where the loop reactance X_T = Im(Zd + ZL) crosses zero, one Newton step
from s = jω0 gives the nearby natural frequency: δs = −R_T / Z′ with Z′ = dZ_T/ds = X′ − jR′,
so σ ≈ −R_T·X′ / (R′² + X′²) and δω ≈ −R_T·R′ / (R′² + X′²). It grows when R_T·X′ < 0 — also
with R_T > 0 and X′ < 0, so candidates are not filtered on R_T < 0. The admittance form
(Y_T = Yd + YL at B_T = 0) serves parallel-type loops the same way. These are estimates; the
count decides: they are kept as raw figures for scripts (``raw_startup_estimates`` in the
check's JSON) and a report never lists them as modes. What a report lists are the modes the
count establishes (:func:`modes_agreeing_with_count`): roots with frequency and growth rate from
the joined circuit's exact natural frequencies, Newton's iteration on F continued off the jω
axis near the crossings that carry the count (:func:`continued_root`), or a trusted pole–zero
fit, and only when they account for the count exactly (METHODS §4).

Pure computation on arrays; derivatives come from a local least-squares line over a few
samples, so measurement noise does not dominate them.
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from .nyquist import median

#: Samples each side of a crossing used for the local slopes.
SLOPE_HALF_WIDTH = 3
#: Crossings of one form closer than this many samples are scatter around zero, not modes.
CHATTER_SAMPLES = 12
#: Common practice for reliable start-up: |negative resistance| about 3 × the load's.
STARTUP_RATIO_PRACTICE = 3.0


@dataclass(frozen=True)
class StartupEstimate:
    """One Newton estimate of a natural frequency near a zero of the loop reactance/susceptance.

    ``form`` is ``"impedance"`` (X_T = 0; series-type loop) or ``"admittance"`` (B_T = 0).
    ``resistance_ratio`` is −Re(device)/Re(load) at ω0 (R or G), compared with the common 3:1
    start-up practice. ``external_q`` is the load's Q_ext = (ω0 / 2R_L) dX_L/dω (or its dual).
    """

    form: str
    crossing_frequency_hz: float
    estimated_frequency_hz: float
    sigma_per_s: float
    grows: bool
    total_real_part: float
    resistance_ratio: float | None
    external_q: float | None


@dataclass(frozen=True)
class Mode:
    """A right-half-plane natural frequency the count establishes (a complex pair listed once).

    Attributes
    ----------
    frequency_hz : float
        ω/2π, Hz; 0 for a real root (latch-up).
    sigma_per_s : float
        Growth rate σ > 0, 1/s: the amplitude grows as exp(σt).
    real : bool
        A real root (counted once); otherwise a conjugate pair (counted twice).
    source : str
        ``"exact"`` (the joined circuit's natural frequencies, both sides lumped netlists) or
        ``"continuation"`` (Newton's iteration on F continued off the jω axis near a crossing,
        :func:`continued_root`) or ``"pole-zero-fit"`` (a trusted root of a rational fit of F).
    """

    frequency_hz: float
    sigma_per_s: float
    real: bool
    source: str


def modes_agreeing_with_count(
    roots: Iterable[complex], count: int, source: str, relative_real: float = 1e-9
) -> tuple[Mode, ...] | None:
    """The right-half-plane roots as modes, if they account for ``count`` exactly.

    ``roots`` are s = σ + jω (1/s); a conjugate pair may be given once (ω ≥ 0) or twice. A root
    with |ω| ≤ ``relative_real``·|s| is real. Returns None when the roots in the right half plane
    (a pair counting twice) do not number ``count``: then no source locates the count's modes.

    Examples
    --------
    >>> modes = modes_agreeing_with_count([complex(1e9, 1e10), complex(-1e9, 2e10)], 2, "exact")
    >>> [(round(m.frequency_hz / 1e9, 3), m.sigma_per_s, m.real) for m in modes]
    [(1.592, 1000000000.0, False)]
    >>> modes_agreeing_with_count([complex(1e9, 1e10)], 1, "exact") is None
    True
    """
    modes = []
    total = 0
    for root in roots:
        root = complex(root)
        if not root.real > 0:
            continue
        real = abs(root.imag) <= relative_real * abs(root)
        if not real and root.imag < 0:
            continue
        total += 1 if real else 2
        frequency = 0.0 if real else root.imag / (2.0 * np.pi)
        modes.append(Mode(float(frequency), float(root.real), real, source))
    if total != count:
        return None
    return tuple(sorted(modes, key=lambda m: (m.frequency_hz, m.sigma_per_s)))


#: Local continuations of F tried around a crossing: (half-width as a fraction of ω0, degree).
#: A root counts only when every one of them converges to it.
CONTINUATIONS = ((0.2, 3), (0.3, 3), (0.3, 4))
#: Roots of the continuations agree when closer than this times |s|.
CONTINUATION_AGREEMENT = 0.03


def continued_root(
    frequency_hz: np.ndarray, characteristic: np.ndarray, start_hz: float
) -> complex | None:
    """A zero of F near ``start_hz`` by Newton's iteration on F continued off the jω axis.

    F is analytic, so a polynomial in s fitted to its samples near s0 = jω0 (least squares,
    the samples within a window of ±w·ω0) continues it into the plane nearby; Newton's
    iteration from s0 on that polynomial converges to its zero. The zero is taken only when it
    lies inside the window and every continuation of :data:`CONTINUATIONS` (other windows and
    degrees) converges to the same point within :data:`CONTINUATION_AGREEMENT`: a zero that
    moves with the window or the degree is the fit's, not the circuit's. Returns s (1/s) with
    ω ≥ 0, or None.

    Examples
    --------
    F = (s − s1)(s − s̄1)/((s + 1e10)² ) with s1 = 1e9 + j1e10, sampled on the jω axis:

    >>> f = np.linspace(0.5e9, 3e9, 801)
    >>> s = 2j * np.pi * f
    >>> root = complex(1e9, 1e10)
    >>> F = (s - root) * (s - root.conjugate()) / (s + 1e10) ** 2
    >>> found = continued_root(f, F, 1e10 / (2 * np.pi))
    >>> abs(found - root) / abs(root) < 1e-3
    True
    """
    found = []
    for half_width, degree in CONTINUATIONS:
        root = _newton_on_continuation(frequency_hz, characteristic, start_hz, half_width, degree)
        if root is None:
            return None
        found.append(root)
    scale = abs(found[0])
    if any(abs(root - found[0]) > CONTINUATION_AGREEMENT * scale for root in found[1:]):
        return None
    root = found[0]
    return complex(root.real, abs(root.imag))


def _newton_on_continuation(
    frequency_hz: np.ndarray,
    characteristic: np.ndarray,
    start_hz: float,
    half_width: float,
    degree: int,
    iterations: int = 60,
) -> complex | None:
    omega0 = 2.0 * np.pi * start_hz
    omega = 2.0 * np.pi * frequency_hz
    inside = np.abs(omega - omega0) <= half_width * omega0
    if omega0 <= 0 or int(inside.sum()) < 2 * (degree + 1):
        return None
    # s in units of ω0, measured from s0 = jω0: well-conditioned Vandermonde columns.
    x = 1j * (omega[inside] - omega0) / omega0
    values = characteristic[inside]
    if not np.all(np.isfinite(values)):
        return None
    coefficients = np.linalg.lstsq(np.vander(x, degree + 1), values, rcond=None)[0]
    slope = np.polyder(coefficients)
    z = 0j
    for _ in range(iterations):
        derivative = complex(np.polyval(slope, z))
        if derivative == 0:
            return None
        step = complex(np.polyval(coefficients, z)) / derivative
        z -= step
        if abs(step) < 1e-10:
            break
    else:
        return None
    if not abs(z) <= half_width:
        return None
    return complex(1j * omega0 + z * omega0)


def startup_estimates(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    gamma_load: np.ndarray,
    reference_impedance_ohm: float,
) -> list[StartupEstimate]:
    """Newton estimates at every X_T = 0 (impedance form) and B_T = 0 (admittance form)."""
    z0 = reference_impedance_ohm
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        z_device = z0 * (1 + gamma_device) / (1 - gamma_device)
        z_load = z0 * (1 + gamma_load) / (1 - gamma_load)
        forms = (
            ("impedance", z_device, z_load),
            ("admittance", 1.0 / z_device, 1.0 / z_load),
        )
    omega = 2 * np.pi * frequency_hz
    estimates = []
    # Near Γ = ±1 an immittance is huge and its slopes overflow: such estimates are dropped.
    with np.errstate(all="ignore"):
        for form, device, load in forms:
            total = device + load
            if not np.all(np.isfinite(total)):
                continue
            estimates += _estimates_for_form(form, omega, device, load, total)
    low, high = frequency_hz[0], frequency_hz[-1]
    kept = [
        e
        for e in estimates
        if np.isfinite([e.sigma_per_s, e.estimated_frequency_hz]).all()
        # One Newton step that lands outside the band extrapolates: no estimate there.
        and low <= e.estimated_frequency_hz <= high
    ]
    return _without_chatter(sorted(kept, key=lambda e: e.crossing_frequency_hz), frequency_hz)


def _without_chatter(
    estimates: list[StartupEstimate], frequency_hz: np.ndarray
) -> list[StartupEstimate]:
    """Drop crossings of one form that follow another within ``CHATTER_SAMPLES`` samples:
    measurement scatter dithering X_T (or B_T) about zero, not separate resonances."""
    window = CHATTER_SAMPLES * float(median(np.diff(frequency_hz)))
    kept: list[StartupEstimate] = []
    last: dict[str, float] = {}
    for estimate in estimates:
        previous = last.get(estimate.form)
        last[estimate.form] = estimate.crossing_frequency_hz
        if previous is not None and estimate.crossing_frequency_hz - previous <= window:
            continue
        kept.append(estimate)
    return kept


def _estimates_for_form(
    form: str, omega: np.ndarray, device: np.ndarray, load: np.ndarray, total: np.ndarray
) -> list[StartupEstimate]:
    imaginary = total.imag
    found = []
    negative = imaginary < 0
    # A zero exactly on a sample belongs to the interval that ends on it (counted once).
    for index in np.flatnonzero(negative[:-1] != negative[1:]):
        t = imaginary[index] / (imaginary[index] - imaginary[index + 1])
        omega0 = omega[index] + t * (omega[index + 1] - omega[index])
        window = slice(max(0, index - SLOPE_HALF_WIDTH + 1), index + SLOPE_HALF_WIDTH + 1)
        real_slope = _slope(omega[window], total.real[window])
        imaginary_slope = _slope(omega[window], imaginary[window])
        real_total = float(np.interp(omega0, omega[window], total.real[window]))
        with np.errstate(over="ignore", invalid="ignore"):
            denominator = np.float64(real_slope) ** 2 + np.float64(imaginary_slope) ** 2
        if not (np.isfinite(denominator) and denominator > 0):
            continue
        sigma = -real_total * imaginary_slope / denominator
        delta_omega = -real_total * real_slope / denominator
        load_real = float(np.interp(omega0, omega[window], load.real[window]))
        device_real = float(np.interp(omega0, omega[window], device.real[window]))
        load_slope = _slope(omega[window], load.imag[window])
        found.append(
            StartupEstimate(
                form=form,
                crossing_frequency_hz=float(omega0 / (2 * np.pi)),
                estimated_frequency_hz=float((omega0 + delta_omega) / (2 * np.pi)),
                sigma_per_s=float(sigma),
                grows=bool(sigma > 0),
                total_real_part=real_total,
                resistance_ratio=-device_real / load_real if load_real > 0 else None,
                external_q=omega0 * load_slope / (2 * load_real) if load_real > 0 else None,
            )
        )
    return found


def _slope(x: np.ndarray, y: np.ndarray) -> float:
    """Least-squares slope of y against x."""
    centred = x - x.mean()
    spread = float(np.sum(centred**2))
    return float(np.sum(centred * (y - y.mean())) / spread) if spread > 0 else 0.0
