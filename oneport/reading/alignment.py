"""Bring device and load onto one frequency grid and one reference impedance.

The analysis runs in the impedance the device was measured in (its VNA port impedance): only
there does the premise "the device is stable in its reference" hold, so the *load* is
renormalised to it, never the device to the load's (a device referred to another impedance can
have right-half-plane poles and the count would silently break). The load is interpolated onto
the device's grid inside the overlap only; device points outside the load's band are dropped and
reported, never extrapolated.

Inputs are :class:`~oneport.reading.touchstone.OnePort` records; outputs are plain arrays.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError, NoOverlapError
from .touchstone import OnePort

MINIMUM_OVERLAP_POINTS = 5


@dataclass(frozen=True)
class AlignedPair:
    """Device and load reflections on the device's grid, both referred to one impedance.

    Attributes
    ----------
    frequency_hz : ndarray, shape (n,)
        The analysed grid (device points inside the load's band), Hz.
    gamma_device, gamma_load : ndarray of complex, shape (n,)
        Reflections referred to ``reference_impedance_ohm``.
    reference_impedance_ohm : float
        The device's measurement impedance, Ω.
    device_points_dropped_below, device_points_dropped_above : int
        Device points outside the load's band, left out.
    load_points_in_band : int
        How many of the load's own samples fall inside the analysed band.
    load_renormalised_from_ohm : float or None
        The load's own reference when it differed from the analysis reference.
    device_renormalised_from_ohm : float or None
        The device file's reference when the user stated another measurement impedance.
    """

    frequency_hz: np.ndarray
    gamma_device: np.ndarray
    gamma_load: np.ndarray
    reference_impedance_ohm: float
    device_points_dropped_below: int
    device_points_dropped_above: int
    load_points_in_band: int
    load_renormalised_from_ohm: float | None
    device_renormalised_from_ohm: float | None


def renormalise(gamma: np.ndarray, from_ohm: float, to_ohm: float) -> np.ndarray:
    """Refer a reflection coefficient to another real reference impedance.

    Γ' = (Γ − r) / (1 − rΓ) with r = (Z0' − Z0) / (Z0' + Z0).

    Parameters
    ----------
    gamma : array_like of complex
        Reflection referred to ``from_ohm``.
    from_ohm, to_ohm : float
        Old and new reference impedances, Ω, real and positive.

    Examples
    --------
    >>> complex(renormalise(np.array(0.0), 50.0, 75.0))  # 50 Ω seen from 75 Ω
    (-0.2+0j)
    """
    r = (to_ohm - from_ohm) / (to_ohm + from_ohm)
    gamma = np.asarray(gamma, dtype=complex)
    return (gamma - r) / (1.0 - r * gamma)


def align(
    device: OnePort, load: OnePort, measurement_impedance_ohm: float | None = None
) -> AlignedPair:
    """Put ``load`` on ``device``'s grid and in the device's measurement impedance.

    Parameters
    ----------
    device, load : OnePort
        As read from their files.
    measurement_impedance_ohm : float, optional
        The impedance the device was really measured in, when its file was renormalised after
        measurement; default: the device file's own reference.

    Raises
    ------
    NoOverlapError
        When fewer than ``MINIMUM_OVERLAP_POINTS`` device points lie inside the load's band.
    """
    reference = device.reference_impedance_ohm
    gamma_device = device.gamma
    device_renormalised_from = None
    if measurement_impedance_ohm is not None:
        if not measurement_impedance_ohm > 0:
            raise InputError(
                f"measurement impedance {measurement_impedance_ohm!r} ohm: a positive"
                " number of ohms is needed"
            )
        if measurement_impedance_ohm != reference:
            gamma_device = renormalise(gamma_device, reference, measurement_impedance_ohm)
            device_renormalised_from = reference
            reference = measurement_impedance_ohm

    low, high = load.frequency_hz[0], load.frequency_hz[-1]
    inside = (device.frequency_hz >= low) & (device.frequency_hz <= high)
    count = int(inside.sum())
    if count < MINIMUM_OVERLAP_POINTS:
        raise NoOverlapError(
            f"{device.source} ({_band(device.frequency_hz)}) and {load.source}"
            f" ({_band(load.frequency_hz)}) share {count} device frequency points; at least"
            f" {MINIMUM_OVERLAP_POINTS} are needed: measure both over a common band"
        )
    frequency_hz = device.frequency_hz[inside]
    gamma_load = interpolate(load.frequency_hz, load.gamma, frequency_hz)
    load_renormalised_from = None
    if load.reference_impedance_ohm != reference:
        gamma_load = renormalise(gamma_load, load.reference_impedance_ohm, reference)
        load_renormalised_from = load.reference_impedance_ohm
    first = int(np.argmax(inside))
    load_inside = (load.frequency_hz >= frequency_hz[0]) & (load.frequency_hz <= frequency_hz[-1])
    return AlignedPair(
        frequency_hz=frequency_hz,
        gamma_device=gamma_device[inside],
        gamma_load=gamma_load,
        reference_impedance_ohm=float(reference),
        device_points_dropped_below=first,
        device_points_dropped_above=device.points - first - count,
        load_points_in_band=int(load_inside.sum()),
        load_renormalised_from_ohm=load_renormalised_from,
        device_renormalised_from_ohm=device_renormalised_from,
    )


def interpolate(x: np.ndarray, values: np.ndarray, at: np.ndarray) -> np.ndarray:
    """Linear interpolation of a complex trace, real and imaginary parts apart; no extrapolation."""
    if x.size == at.size and np.array_equal(x, at):
        return values.copy()
    return np.interp(at, x, values.real) + 1j * np.interp(at, x, values.imag)


def _band(frequency_hz: np.ndarray) -> str:
    from ..units import format_frequency

    return f"{format_frequency(frequency_hz[0])} to {format_frequency(frequency_hz[-1])}"
