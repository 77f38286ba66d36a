"""Small-signal start-up estimates beside the Nyquist count (METHODS §4, Kurokawa).

Near a frequency ω0 where the loop reactance X_T = Im(Zd + ZL) crosses zero, one Newton step
from s = jω0 gives the nearby natural frequency: δs = −R_T / Z′ with Z′ = dZ_T/ds = X′ − jR′,
so σ ≈ −R_T·X′ / (R′² + X′²) and δω ≈ −R_T·R′ / (R′² + X′²). It grows when R_T·X′ < 0 — also
with R_T > 0 and X′ < 0, so candidates are not filtered on R_T < 0. The admittance form
(Y_T = Yd + YL at B_T = 0) serves parallel-type loops the same way. These are estimates; the
count decides.

Pure computation on arrays; derivatives come from a local least-squares line over a few
samples, so measurement noise does not dominate them.
"""

from __future__ import annotations

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
