"""The frozen result of ``oneport oscillator`` and its JSON form (schema ``oneport.oscillator/1``).

Results carry the arrays the plot draws (the load locus and the device lines); ``to_dict()``
gives the JSON object documented in docs/oscillator.md, arrays only on request. Nothing here
computes an analysis or renders text.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ...findings import Finding, complex_json
from ...reading.records import InputRecord

OSCILLATOR_SCHEMA = "oneport.oscillator/1"
#: The verdict words (docs/oscillator.md); the command line maps them to exit codes.
VERDICTS = (
    "settles",
    "hard-excitation",
    "mode-jumping",
    "no-oscillation",
    "outside-data",
    "inconclusive",
)


@dataclass(frozen=True)
class Pulling:
    """The load's external Q at an operating point and the injection-locking figure it implies.

    Attributes
    ----------
    external_q : float
        Q_ext = (ω0/(2·R_L))·dX_L/dω (impedance form) or (ω0/(2·G_L))·dB_L/dω (admittance form).
    form : str
        Which of the two.
    locking_coefficient_hz : float or None
        f0/Q_ext: the one-sided locking range is this times sqrt(P_inj/P_osc); None when
        Q_ext ≤ 0.
    injection_ratio_db : float
        P_inj/P_osc, dB, at which ``locking_half_range_hz`` is stated.
    locking_half_range_hz : float or None
    loaded_q : float
        The same expression with the slope of the whole loop's reactive part (device and
        load) over the load's loss: how selective the loop is; below about 3 the one-frequency
        picture is rough.
    """

    external_q: float
    form: str
    locking_coefficient_hz: float | None
    injection_ratio_db: float
    locking_half_range_hz: float | None
    loaded_q: float

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "external_q": self.external_q,
            "q_form": self.form,
            "locking_coefficient_hz": self.locking_coefficient_hz,
            "injection_ratio_db": self.injection_ratio_db,
            "locking_half_range_hz": self.locking_half_range_hz,
            "loaded_q": self.loaded_q,
        }


@dataclass(frozen=True)
class OperatingPoint:
    """One solution of Γd·ΓL = 1 (W = 0) inside the data.

    Attributes
    ----------
    frequency_hz : float
    amplitude : float
        In the form's port amplitude, ``amplitude_quantity`` (``peak_voltage_v`` or
        ``peak_current_a``).
    drive_parameter : float
        The same point in the device's own level variable (``drive_quantity``).
    port_peak_voltage_v, port_peak_current_a : float
    load_power_w, device_added_power_w : float
        ½·Re(YL)·|V|² and −½·Re(Yd)·|V|², W (equal at a converged point).
    kurokawa_stable : bool
        S > 0 (decided in the device's level variable, whose sign agrees with the form
        amplitude's wherever that amplitude rises with the level).
    stability_index : float
        S in ``stability_variable`` (normally ``amplitude_quantity``); unit in
        ``stability_index_unit``.
    stability_variable : str
        The amplitude S and the decay rate are stated in: the form's port amplitude, or the
        device's level variable where the port amplitude does not rise with it.
    decay_rate_per_s : float or None
        A0·S/|∂W/∂ω|² in ``stability_variable``, 1/s; None when that variable is a power.
    marginal : bool
        The lines cross almost tangentially: the sign of S is not trustworthy.
    near_data_edge : bool
        Within one scan step of the amplitude or frequency edge of the data.
    amplitude_increasing : bool
        The port amplitude rises with the drive level there (the change of variable holds).
    gamma_load, gamma_device : complex
        ΓL and Γd there, referred to ``reference_impedance_ohm``.
    load_impedance_ohm : complex
    dc_current_shift_a : float or None
        The rectified DC current change at a stiff bias (I–V descriptions).
    pulling : Pulling
    """

    frequency_hz: float
    amplitude: float
    amplitude_quantity: str
    drive_parameter: float
    drive_quantity: str
    port_peak_voltage_v: float
    port_peak_current_a: float
    load_power_w: float
    device_added_power_w: float
    kurokawa_stable: bool
    stability_index: float
    stability_index_unit: str
    stability_variable: str
    decay_rate_per_s: float | None
    marginal: bool
    near_data_edge: bool
    amplitude_increasing: bool
    gamma_load: complex
    gamma_device: complex
    load_impedance_ohm: complex
    reference_impedance_ohm: float
    dc_current_shift_a: float | None
    pulling: Pulling

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "frequency_hz": self.frequency_hz,
            "amplitude": self.amplitude,
            "amplitude_quantity": self.amplitude_quantity,
            "drive_level": {"quantity": self.drive_quantity, "value": self.drive_parameter},
            "port_peak_voltage_v": self.port_peak_voltage_v,
            "port_peak_current_a": self.port_peak_current_a,
            "load_power_w": self.load_power_w,
            "device_added_power_w": self.device_added_power_w,
            "kurokawa_stable": self.kurokawa_stable,
            "stability_index": self.stability_index,
            "stability_index_unit": self.stability_index_unit,
            "stability_variable": self.stability_variable,
            "decay_rate_per_s": self.decay_rate_per_s,
            "marginal": self.marginal,
            "near_data_edge": self.near_data_edge,
            "amplitude_increasing": self.amplitude_increasing,
            "reflection": {
                "reference_impedance_ohm": self.reference_impedance_ohm,
                "gamma_load": complex_json(self.gamma_load),
                "gamma_device": complex_json(self.gamma_device),
            },
            "load_impedance_ohm": complex_json(self.load_impedance_ohm),
            "dc_current_shift_a": self.dc_current_shift_a,
            "pulling": self.pulling.to_dict(),
        }


@dataclass(frozen=True)
class StartUpEstimate:
    """A Newton estimate of a mode's growth rate at one level (crossing of Im W = 0)."""

    frequency_hz: float
    growth_rate_per_s: float
    drive_parameter: float

    @property
    def grows(self) -> bool:
        """σ > 0."""
        return self.growth_rate_per_s > 0

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "frequency_hz": self.frequency_hz,
            "growth_rate_per_s": self.growth_rate_per_s,
            "grows": self.grows,
            "drive_level_value": self.drive_parameter,
        }


@dataclass(frozen=True)
class DeviceTrace:
    """The device line at one frequency, for the plot, sampled along the level.

    Attributes
    ----------
    frequency_hz : float
    drive_parameter : ndarray
        The device's level values.
    amplitude : ndarray
        The form's port amplitude at each level (V or A).
    inverse_gamma_device : ndarray of complex
        1/Γd: meets ΓL where Γd·ΓL = 1.
    negative_device_immittance : ndarray of complex
        −Yd (S) or −Zd (Ω): meets YL or ZL at an operating point.
    total_immittance : ndarray of complex
        W = Y_T or Z_T: its real part crosses zero at each operating amplitude.
    """

    frequency_hz: float
    drive_parameter: np.ndarray = field(repr=False)
    amplitude: np.ndarray = field(repr=False)
    inverse_gamma_device: np.ndarray = field(repr=False)
    negative_device_immittance: np.ndarray = field(repr=False)
    total_immittance: np.ndarray = field(repr=False)


@dataclass(frozen=True)
class OscillatorResult:
    """Everything ``oneport oscillator`` found, frozen.

    Attributes
    ----------
    verdict : str
        One of :data:`VERDICTS` (docs/oscillator.md).
    operating_points : tuple of OperatingPoint
        All solutions inside the data, by amplitude.
    starts_from_noise : bool
        Some mode grows at the smallest level (Newton estimate).
    start_up, growth_at_largest_level : tuple of StartUpEstimate
        The estimates at the smallest and the largest level.
    form, form_reason : str
        ``admittance`` or ``impedance``, and why.
    limits : tuple of str
        What the method cannot see, always stated.
    """

    verdict: str
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    form: str
    form_reason: str
    amplitude_quantity: str
    drive_quantity: str
    drive_range: tuple[float, float]
    operating_points: tuple[OperatingPoint, ...]
    starts_from_noise: bool
    start_up: tuple[StartUpEstimate, ...]
    growth_at_largest_level: tuple[StartUpEstimate, ...]
    frequency_range_hz: tuple[float, float]
    reference_impedance_ohm: float
    device_input: dict[str, Any]
    load_input: InputRecord
    warnings: tuple[Finding, ...]
    limits: tuple[str, ...]
    cautions: tuple[str, ...]
    load_frequency_hz: np.ndarray = field(repr=False)
    load_gamma: np.ndarray = field(repr=False)
    load_immittance: np.ndarray = field(repr=False)
    device_traces: tuple[DeviceTrace, ...] = field(repr=False)

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.oscillator/1`` JSON object (plain Python types only)."""
        data: dict[str, Any] = {
            "schema": OSCILLATOR_SCHEMA,
            "verdict": self.verdict,
            "reasons": list(self.reasons),
            "next_steps": list(self.next_steps),
            "form": self.form,
            "form_reason": self.form_reason,
            "amplitude_quantity": self.amplitude_quantity,
            "operating_points": [point.to_dict() for point in self.operating_points],
            "starts_from_noise": self.starts_from_noise,
            "start_up": [estimate.to_dict() for estimate in self.start_up],
            "growth_at_largest_level": [e.to_dict() for e in self.growth_at_largest_level],
            "drive_range": {
                "quantity": self.drive_quantity,
                "low": self.drive_range[0],
                "high": self.drive_range[1],
            },
            "frequency_range_hz": list(self.frequency_range_hz),
            "reference_impedance_ohm": self.reference_impedance_ohm,
            "warnings": [warning.to_dict() for warning in self.warnings],
            "limits": list(self.limits),
            "cautions": list(self.cautions),
            "inputs": [self.device_input, self.load_input.to_dict()],
        }
        if include_arrays:
            data["arrays"] = self._arrays()
        result: dict[str, Any] = _finite(data)
        return result

    def _arrays(self) -> dict[str, Any]:
        def pairs(values: np.ndarray) -> list[dict[str, float]]:
            return [complex_json(value) for value in values.tolist()]

        return {
            "reference_impedance_ohm": self.reference_impedance_ohm,
            "form": self.form,
            "immittance_unit": "S" if self.form == "admittance" else "ohm",
            "amplitude_quantity": self.amplitude_quantity,
            "load": {
                "frequency_hz": self.load_frequency_hz.tolist(),
                "gamma": pairs(self.load_gamma),
                "immittance": pairs(self.load_immittance),
            },
            "device_lines": [
                {
                    "frequency_hz": trace.frequency_hz,
                    "drive_level_values": trace.drive_parameter.tolist(),
                    "amplitude": trace.amplitude.tolist(),
                    "total_immittance": pairs(trace.total_immittance),
                    "inverse_gamma_device": pairs(trace.inverse_gamma_device),
                    "negative_device_immittance": pairs(trace.negative_device_immittance),
                }
                for trace in self.device_traces
            ],
        }


def _finite(value: Any) -> Any:
    """JSON-safe numbers: infinite or undefined figures (a pole, a zero slope) become null."""
    if isinstance(value, dict):
        return {key: _finite(item) for key, item in value.items()}
    if isinstance(value, list):
        return [_finite(item) for item in value]
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value
