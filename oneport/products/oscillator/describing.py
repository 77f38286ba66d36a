"""Describing functions of quasi-static I–V curves, and the curves themselves.

A quasi-static device whose current follows its voltage without delay, i = i(V), driven by
V = V0 + A cos θ about a stiff bias V0, passes a fundamental current I1 = G1(A)·A, with

    G1(A) = (1 / (π A)) ∫₀^{2π} i(V0 + A cos θ) cos θ dθ.

The integral runs over a full period. It is evaluated on ``samples`` equally spaced θ (the
rectangle rule on a periodic integrand, which is what the first bin of an FFT computes):
exact for polynomial I–V curves of degree below ``samples − 1`` and exponentially accurate for
smooth ones. Three kinds of curve are offered: a tabulated curve (cubic-spline interpolated), a
polynomial about the bias point, and an analytic tunnel-diode model. This room computes only;
it reads no files.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from ...errors import InputError

#: Equally spaced samples of θ over one period for the describing-function integral.
THETA_SAMPLES = 256

CurrentFunction = Callable[[np.ndarray], np.ndarray]


def describing_conductance(
    current: CurrentFunction,
    bias_voltage_v: float,
    amplitude_v: np.ndarray | float,
    samples: int = THETA_SAMPLES,
) -> np.ndarray:
    """Fundamental-frequency conductance G1(A) of a quasi-static I–V curve, S.

    Parameters
    ----------
    current : callable
        i(V) in A for an array of voltages in V (vectorised).
    bias_voltage_v : float
        The stiff DC bias V0, V.
    amplitude_v : float or ndarray
        Peak amplitudes A > 0 of the sinusoidal voltage about V0, V (any shape).
    samples : int
        Equally spaced θ samples over one period.

    Returns
    -------
    ndarray
        G1(A) in S, the shape of ``amplitude_v``.

    Raises
    ------
    InputError
        An amplitude that is not above 0 V (the analysis never asks for one: its solver stays
        inside the data).

    Examples
    --------
    A cubic i = −g1·v + g3·v³ gives G1(A) = −g1 + (3/4)·g3·A²:

    >>> cubic = lambda v: -0.02 * v + 0.5 * v**3
    >>> round(float(describing_conductance(cubic, 0.0, 0.2)), 12)
    -0.005
    """
    amplitude = np.asarray(amplitude_v, dtype=float)
    if np.any(~(amplitude > 0)):
        worst = float(np.min(amplitude)) if np.all(np.isfinite(amplitude)) else math.nan
        raise InputError(
            f"amplitude_v: {worst:g} V; the describing function needs peak amplitudes above 0 V"
        )
    cosine = np.cos(2.0 * np.pi * np.arange(samples) / samples)
    voltage = bias_voltage_v + amplitude[..., np.newaxis] * cosine
    fundamental = 2.0 * np.mean(current(voltage) * cosine, axis=-1)
    result: np.ndarray = fundamental / amplitude
    return result


def rectified_current_shift(
    current: CurrentFunction,
    bias_voltage_v: float,
    amplitude_v: np.ndarray | float,
    samples: int = THETA_SAMPLES,
) -> np.ndarray:
    """The change of mean (DC) current the swing causes at a stiff bias, A.

    A stiff bias supply must deliver it without its voltage moving; a soft one moves V0 and so
    G1. It is reported so that the designer can judge the stiff-bias assumption.
    """
    amplitude = np.asarray(amplitude_v, dtype=float)
    cosine = np.cos(2.0 * np.pi * np.arange(samples) / samples)
    voltage = bias_voltage_v + amplitude[..., np.newaxis] * cosine
    bias_current = current(np.asarray(bias_voltage_v, dtype=float))
    result: np.ndarray = np.mean(current(voltage), axis=-1) - bias_current
    return result


def polynomial_current(coefficients: tuple[float, ...], bias_voltage_v: float) -> CurrentFunction:
    """i(V0 + v) = Σ c_k v^k: coefficients in ascending powers of the deviation v = V − V0.

    Examples
    --------
    >>> curve = polynomial_current((1e-3, -0.02, 0.0, 0.5), bias_voltage_v=0.1)
    >>> float(curve(np.array(0.1)))
    0.001
    """
    values = np.asarray(coefficients, dtype=float)

    def current(voltage: np.ndarray) -> np.ndarray:
        result: np.ndarray = np.polynomial.polynomial.polyval(voltage - bias_voltage_v, values)
        return result

    return current


def table_current(voltage_v: np.ndarray, current_a: np.ndarray) -> CurrentFunction:
    """A tabulated I–V curve through a not-a-knot cubic spline (scipy), twice differentiable.

    Voltages must be strictly increasing; evaluate only inside the table.
    """
    from scipy.interpolate import CubicSpline

    spline = CubicSpline(np.asarray(voltage_v, float), np.asarray(current_a, float))

    def current(voltage: np.ndarray) -> np.ndarray:
        result: np.ndarray = spline(voltage)
        return result

    return current


@dataclass(frozen=True)
class TunnelDiodeModel:
    """The empirical three-term tunnel-diode I–V curve of semiconductor-device textbooks.

    i(V) = I_p·(V/V_p)·exp(1 − V/V_p)  +  I_x·exp(K·(V − V_v))  +  I_s·(exp(V/V_e) − 1)

    the band-to-band tunnelling current (peak I_p at V_p), the excess current through gap
    states (I_x at V_v, slope K; optional, zero by default) and the ordinary diode current
    (saturation I_s, emission voltage V_e = n·kT/q). Recalled from memory in the form given in
    S. M. Sze's *Physics of Semiconductor Devices* (tunnel-diode chapter), not copied from it.
    The tunnelling term alone peaks at V_p, has its steepest negative slope −I_p/(e·V_p) at its
    inflection 2·V_p, and falls towards a valley where the diode term takes over.

    Attributes
    ----------
    peak_current_a, peak_voltage_v : float
        I_p (A) and V_p (V) of the tunnelling term.
    saturation_current_a, emission_voltage_v : float
        I_s (A) and V_e (V) of the diode term.
    excess_current_a, excess_exponent_per_v, valley_voltage_v : float
        I_x (A), K (1/V) and V_v (V) of the excess term; I_x = 0 leaves it out.
    """

    peak_current_a: float
    peak_voltage_v: float
    saturation_current_a: float
    emission_voltage_v: float
    excess_current_a: float = 0.0
    excess_exponent_per_v: float = 0.0
    valley_voltage_v: float = 0.0

    def current(self, voltage: np.ndarray) -> np.ndarray:
        """i(V), A.

        Examples
        --------
        >>> model = TunnelDiodeModel(5e-3, 0.06, 1e-9, 0.03)
        >>> round(float(model.current(np.array(0.06))), 6)  # the peak, diode term negligible
        0.005
        """
        voltage = np.asarray(voltage, dtype=float)
        ratio = voltage / self.peak_voltage_v
        tunnelling = self.peak_current_a * ratio * np.exp(1.0 - ratio)
        excess = self.excess_current_a * np.exp(
            self.excess_exponent_per_v * (voltage - self.valley_voltage_v)
        )
        diode = self.saturation_current_a * np.expm1(voltage / self.emission_voltage_v)
        result: np.ndarray = tunnelling + excess + diode
        return result
