"""The device line and the load locus as smooth functions for the large-signal analysis.

The device is a function of a *level parameter* p (its native amplitude variable: incident
power in dBm, a port peak voltage or current, or the junction peak voltage of an I–V curve) and
of frequency; the load is a function of frequency. Both are referred to one real reference
impedance Z0 (the device's measurement impedance) and sampled on one grid, the device's, as
:mod:`oneport.reading.alignment` delivers it; between samples they are cubic splines, so that the
derivatives Kurokawa's conditions need are continuous. Besides the admittance, the device line
gives the port peak voltage at each (p, f), so that amplitudes can be converted to the port
voltage or current in which decay rates are stated. This room computes only.
"""

from __future__ import annotations

import itertools
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from .describing import describing_conductance, rectified_current_shift
from .manifest import IVDevice

#: Rows of the (level, frequency) scan for an I–V description.
IV_SCAN_ROWS = 161
#: At least this many scan rows for drive-level data (levels subdivided evenly).
DRIVE_SCAN_ROWS = 64
#: Frequency points of the grid an I–V description is searched on when the load is a netlist.
NETLIST_GRID_POINTS = 1001
#: The small-signal count of an I–V description against a netlist load runs on a geometric
#: grid from this fraction of the band's top to this multiple of it (both sides are defined at
#: every frequency, so the contour can close where the loop has settled), with this many points.
COUNT_GRID_SPAN = (1e-4, 100.0)
COUNT_GRID_POINTS = 2001

Surface = Callable[[np.ndarray, np.ndarray], np.ndarray]


@dataclass(frozen=True)
class DeviceLine:
    """The device's admittance Yd(p, f) and port peak voltage V(p, f), vectorised.

    Attributes
    ----------
    parameter_quantity : str
        What p is, naming its unit: ``incident_power_dbm``, ``peak_voltage_v``,
        ``peak_current_a`` or ``junction_peak_voltage_v``.
    parameter_grid : ndarray, shape (m,)
        Increasing p values of the scan; the data's range is its first to last value.
    frequency_hz : ndarray, shape (n,)
        The analysed grid, Hz.
    reference_impedance_ohm : float
        Z0 of the reflection figures, Ω.
    admittance : callable
        Yd(p, f) in S for broadcastable arrays p, f (Hz).
    port_voltage : callable
        Peak port voltage amplitude V(p, f), V.
    dc_current_shift : callable or None
        Rectified DC current change at a stiff bias for p, A (I–V descriptions only).
    """

    parameter_quantity: str
    parameter_grid: np.ndarray
    frequency_hz: np.ndarray
    reference_impedance_ohm: float
    admittance: Surface = field(repr=False, compare=False)
    port_voltage: Surface = field(repr=False, compare=False)
    dc_current_shift: Callable[[np.ndarray], np.ndarray] | None = field(
        default=None, repr=False, compare=False
    )

    @property
    def parameter_range(self) -> tuple[float, float]:
        """Lowest and highest level in the data."""
        return float(self.parameter_grid[0]), float(self.parameter_grid[-1])

    def gamma(self, parameter: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
        """Γd(p, f) referred to ``reference_impedance_ohm``."""
        scaled = self.admittance(parameter, frequency_hz) * self.reference_impedance_ohm
        # Y = −1/Z0 exactly is Z = −Z0: a pole of Γ (infinite), which callers expect.
        with np.errstate(divide="ignore", invalid="ignore"):
            result: np.ndarray = (1.0 - scaled) / (1.0 + scaled)
        return result


@dataclass(frozen=True)
class LoadLine:
    """The load's reflection ΓL(f) on the analysed grid and as a cubic spline between samples."""

    frequency_hz: np.ndarray
    gamma_samples: np.ndarray
    reference_impedance_ohm: float
    _spline: Callable[[np.ndarray], np.ndarray] = field(repr=False, compare=False)

    @classmethod
    def from_samples(
        cls, frequency_hz: np.ndarray, gamma: np.ndarray, reference_impedance_ohm: float
    ) -> LoadLine:
        """Spline the aligned samples (not-a-knot cubic, scipy)."""
        from scipy.interpolate import CubicSpline

        spline = CubicSpline(frequency_hz, gamma)
        return cls(frequency_hz, gamma, reference_impedance_ohm, spline)

    def gamma(self, frequency_hz: np.ndarray) -> np.ndarray:
        """ΓL(f)."""
        return np.asarray(self._spline(np.asarray(frequency_hz, dtype=float)), dtype=complex)

    def admittance(self, frequency_hz: np.ndarray) -> np.ndarray:
        """YL(f), S."""
        gamma = self.gamma(frequency_hz)
        result: np.ndarray = (1.0 - gamma) / (self.reference_impedance_ohm * (1.0 + gamma))
        return result

    def impedance(self, frequency_hz: np.ndarray) -> np.ndarray:
        """ZL(f), Ω."""
        gamma = self.gamma(frequency_hz)
        result: np.ndarray = self.reference_impedance_ohm * (1.0 + gamma) / (1.0 - gamma)
        return result


def drive_level_line(
    quantity: str,
    levels: np.ndarray,
    frequency_hz: np.ndarray,
    gamma: np.ndarray,
    reference_impedance_ohm: float,
) -> DeviceLine:
    """The device line of drive-level data: an interpolating spline of Γd over (level, f).

    Parameters
    ----------
    quantity : str
        ``incident_power_dbm``, ``peak_voltage_v`` or ``peak_current_a``.
    levels : ndarray, shape (m,)
        Strictly increasing drive levels (m ≥ 2); cubic in the level from four levels on.
    frequency_hz : ndarray, shape (n,)
    gamma : ndarray of complex, shape (m, n)
        Γd at each level and frequency, referred to ``reference_impedance_ohm``.

    Notes
    -----
    Incident power P (dBm) is that of the wave arriving at the device port in Z0, so the
    incident peak voltage is sqrt(2·Z0·P) and the port peak voltage sqrt(2·Z0·P)·|1 + Γd|.
    """
    from scipy.interpolate import RectBivariateSpline

    z0 = reference_impedance_ohm
    scale = float(frequency_hz[-1])
    order_level = min(3, levels.size - 1)
    order_frequency = min(3, frequency_hz.size - 1)
    splines = [
        RectBivariateSpline(
            levels, frequency_hz / scale, part, kx=order_level, ky=order_frequency, s=0
        )
        for part in (gamma.real, gamma.imag)
    ]

    def reflection(parameter: np.ndarray, frequency: np.ndarray) -> np.ndarray:
        p, f = np.broadcast_arrays(np.asarray(parameter, float), np.asarray(frequency, float))
        x, y = p.ravel(), f.ravel() / scale
        values = splines[0].ev(x, y) + 1j * splines[1].ev(x, y)
        return np.asarray(values.reshape(p.shape))

    def admittance(parameter: np.ndarray, frequency: np.ndarray) -> np.ndarray:
        g = reflection(parameter, frequency)
        result: np.ndarray = (1.0 - g) / (z0 * (1.0 + g))
        return result

    def port_voltage(parameter: np.ndarray, frequency: np.ndarray) -> np.ndarray:
        p = np.asarray(parameter, dtype=float)
        if quantity == "peak_voltage_v":
            return np.broadcast_to(p, np.broadcast_shapes(p.shape, np.shape(frequency))).copy()
        if quantity == "peak_current_a":
            result: np.ndarray = p / np.abs(admittance(p, frequency))
            return result
        incident = np.sqrt(2.0 * z0 * 1e-3 * 10.0 ** (p / 10.0))
        result = incident * np.abs(1.0 + reflection(p, frequency))
        return result

    return DeviceLine(
        parameter_quantity=quantity,
        parameter_grid=_subdivide(levels, DRIVE_SCAN_ROWS),
        frequency_hz=frequency_hz,
        reference_impedance_ohm=z0,
        admittance=admittance,
        port_voltage=port_voltage,
    )


def iv_line(
    device: IVDevice, frequency_hz: np.ndarray, reference_impedance_ohm: float
) -> DeviceLine:
    """The device line of an I–V description with its parasitics.

    Yj(A, ω) = G1(A) + jωCj at the junction, and at the port
    Yd = Yj / (1 + (Rs + jωLs)·Yj); the level parameter is the junction peak voltage A, the
    port peak voltage is A·|1 + (Rs + jωLs)·Yj|.
    """
    parasitics = device.parasitics

    def junction(parameter: np.ndarray, frequency: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        p = np.asarray(parameter, dtype=float)
        omega = 2.0 * np.pi * np.asarray(frequency, dtype=float)
        conductance = describing_conductance(device.current, device.bias_voltage_v, p)
        admittance = conductance + 1j * omega * parasitics.junction_capacitance_f
        series = parasitics.series_resistance_ohm + 1j * omega * parasitics.series_inductance_h
        return admittance, series

    def admittance(parameter: np.ndarray, frequency: np.ndarray) -> np.ndarray:
        junction_admittance, series = junction(parameter, frequency)
        result: np.ndarray = junction_admittance / (1.0 + series * junction_admittance)
        return result

    def port_voltage(parameter: np.ndarray, frequency: np.ndarray) -> np.ndarray:
        junction_admittance, series = junction(parameter, frequency)
        result: np.ndarray = np.asarray(parameter, float) * np.abs(
            1.0 + series * junction_admittance
        )
        return result

    def shift(parameter: np.ndarray) -> np.ndarray:
        return rectified_current_shift(device.current, device.bias_voltage_v, parameter)

    return DeviceLine(
        parameter_quantity="junction_peak_voltage_v",
        parameter_grid=np.linspace(device.amplitude_min_v, device.amplitude_max_v, IV_SCAN_ROWS),
        frequency_hz=frequency_hz,
        reference_impedance_ohm=reference_impedance_ohm,
        admittance=admittance,
        port_voltage=port_voltage,
        dc_current_shift=shift,
    )


def _subdivide(levels: np.ndarray, rows: int) -> np.ndarray:
    """The levels with evenly spaced points between neighbours, at least ``rows`` in all."""
    steps = max(4, int(np.ceil((rows - 1) / (levels.size - 1))))
    pieces = [np.linspace(a, b, steps, endpoint=False) for a, b in itertools.pairwise(levels)]
    return np.concatenate([*pieces, levels[-1:]])
