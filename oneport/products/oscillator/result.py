"""The frozen result of ``oneport oscillator`` and its JSON form (schema ``oneport.oscillator/2``).

Results hold SI values (Hz, V, A, W, 1/s, radians, linear ratios) and the arrays the plot
draws (the load locus and the device lines); ``to_dict()`` gives the JSON object documented in
docs/oscillator.md, with units in the key names and arrays only on request. Nothing here
computes an analysis; text, HTML and figures are the renderers' (``.plot()`` and the notebook
display hand over to :mod:`oneport.rendering`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from ...analysis.pole_zero import NaturalFrequency
from ...findings import Finding, complex_json
from ...reading.records import InputRecord
from .wording import watts_to_dbm

if TYPE_CHECKING:
    from matplotlib.figure import Figure

OSCILLATOR_SCHEMA = "oneport.oscillator/2"
#: The verdict words (docs/oscillator.md); the command line maps them to exit codes.
VERDICTS = (
    "settles",
    "hard-excitation",
    "mode-jumping",
    "no-oscillation",
    "latch-up",
    "outside-data",
    "inconclusive",
)
#: The JSON key suffix of each quantity's SI unit.
_SUFFIX = {
    "incident_power": "w",
    "port_peak_voltage": "v",
    "port_peak_current": "a",
    "junction_peak_voltage": "v",
}


def unit_suffix(quantity: str) -> str:
    """The JSON key suffix of a quantity's SI unit: ``"w"``, ``"v"`` or ``"a"``."""
    return _SUFFIX[quantity]


def level_json(quantity: str, value: float, name: str = "value") -> dict[str, Any]:
    """A level as JSON: its quantity and its SI value under a unit-named key (and dBm for a
    power).

    Examples
    --------
    >>> level_json("port_peak_voltage", 0.1)
    {'quantity': 'port_peak_voltage', 'value_v': 0.1}
    """
    data: dict[str, Any] = {"quantity": quantity, f"{name}_{_SUFFIX[quantity]}": value}
    if quantity == "incident_power":
        data[f"{name}_dbm"] = watts_to_dbm(value)
    return data


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
        f0/Q_ext, Hz: the one-sided locking range is this times sqrt(P_inj/P_osc); None when
        Q_ext ≤ 0.
    injection_ratio : float
        P_inj/P_osc (a linear power ratio) at which ``locking_half_range_hz`` is stated.
    locking_half_range_hz : float or None
    loaded_q : float
        The same expression with the slope of the whole loop's reactive part (device and
        load) over the load's loss: how selective the loop is; below about 3 the one-frequency
        picture is rough.
    """

    external_q: float
    form: str
    locking_coefficient_hz: float | None
    injection_ratio: float
    locking_half_range_hz: float | None
    loaded_q: float

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "external_q": self.external_q,
            "q_form": self.form,
            "locking_coefficient_hz": self.locking_coefficient_hz,
            "injection_ratio_db": 10.0 * math.log10(self.injection_ratio),
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
        The form's port amplitude, V or A (``amplitude_quantity``: ``port_peak_voltage`` in the
        admittance form, ``port_peak_current`` in the impedance form).
    amplitude_quantity : str
    drive_level : float
        The same point in the device's own level variable (``drive_quantity``), SI: W for an
        incident power, V or A for an amplitude.
    drive_quantity : str
        ``incident_power``, ``port_peak_voltage``, ``port_peak_current`` or
        ``junction_peak_voltage``.
    port_peak_voltage_v, port_peak_current_a : float
    load_power_w, device_added_power_w : float
        ½·Re(YL)·|V|² and −½·Re(Yd)·|V|², W (equal at a converged point).
    kurokawa_stable : bool
        S > 0 (decided in the device's level variable, whose sign agrees with the form
        amplitude's wherever that amplitude rises with the level).
    stability_index : float
        Kurokawa's S in ``stability_variable``, unit ``stability_index_unit``.
    stability_index_unit : str
    stability_variable : str
        The amplitude S and the decay rate are stated in: the form's port amplitude, or the
        device's level variable where the port amplitude does not rise with it.
    crossing_angle_rad : float
        The angle from ∂W/∂A to ∂W/∂ω in the immittance plane, rad: S > 0 exactly when it lies
        between 0 and π; near 0 or π the lines meet tangentially.
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
    reference_impedance_ohm : float
    dc_current_shift_a : float or None
        The rectified DC current change at a stiff bias (I–V descriptions).
    pulling : Pulling
    """

    frequency_hz: float
    amplitude: float
    amplitude_quantity: str
    drive_level: float
    drive_quantity: str
    port_peak_voltage_v: float
    port_peak_current_a: float
    load_power_w: float
    device_added_power_w: float
    kurokawa_stable: bool
    stability_index: float
    stability_index_unit: str
    stability_variable: str
    crossing_angle_rad: float
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
            f"amplitude_{_SUFFIX[self.amplitude_quantity]}": self.amplitude,
            "amplitude_quantity": self.amplitude_quantity,
            "drive_level": level_json(self.drive_quantity, self.drive_level),
            "port_peak_voltage_v": self.port_peak_voltage_v,
            "port_peak_current_a": self.port_peak_current_a,
            "load_power_w": self.load_power_w,
            "device_added_power_w": self.device_added_power_w,
            "kurokawa_stable": self.kurokawa_stable,
            "crossing_angle_deg": math.degrees(self.crossing_angle_rad),
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
class LevelCount:
    """The small-signal Nyquist judgement (``oneport check``'s) of the loop with the device held
    at one drive level.

    At the smallest level it says whether the circuit starts from noise; at the largest,
    whether a mode still grows there (the amplitude would run past the data).

    Attributes
    ----------
    drive_level : float
        The level, SI (W, V or A), in ``drive_quantity``.
    drive_quantity : str
    verdict : str
        The check's word: ``stable``, ``unstable`` or ``inconclusive``.
    encirclements : int or None
        N, the right-half-plane natural frequencies the count finds (None: undecided).
    latch_up : bool or None
        The count is odd: a real right-half-plane root.
    natural_frequencies : tuple of NaturalFrequency
        The modes the count establishes, with frequency and growth rate, from a rational fit of
        F = 1 − Γd·ΓL (trusted right-half-plane roots, listed only when they agree with N).
    modes_located : bool or None
        Whether the fit located every mode the count establishes (None when N is 0 or unknown).
    oscillation_frequencies_hz : tuple of float
        Where the loop gain crosses the real axis beyond +1 carrying the count.
    reasons, next_steps : tuple of str
        The check's reasons, and its next steps that this command can act on.
    warnings : tuple of Finding
        The check's warnings about the data (hidden resonances, noise, passivity, …).
    """

    drive_level: float
    drive_quantity: str
    verdict: str
    encirclements: int | None
    latch_up: bool | None
    natural_frequencies: tuple[NaturalFrequency, ...]
    modes_located: bool | None
    oscillation_frequencies_hz: tuple[float, ...]
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    warnings: tuple[Finding, ...]

    @property
    def grows(self) -> bool | None:
        """Some natural frequency lies in the right half plane (None: the count is undecided)."""
        return {"unstable": True, "stable": False}.get(self.verdict)

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "drive_level": level_json(self.drive_quantity, self.drive_level),
            "verdict": self.verdict,
            "encirclements": self.encirclements,
            "latch_up": self.latch_up,
            "natural_frequencies": [
                {
                    "frequency_hz": mode.frequency_hz,
                    "sigma_per_s": mode.sigma_per_s,
                    "rhp": mode.rhp,
                    "trusted": mode.trusted,
                    "real": mode.real,
                }
                for mode in self.natural_frequencies
            ],
            "modes_located": self.modes_located,
            "oscillation_frequencies_hz": list(self.oscillation_frequencies_hz),
            "reasons": list(self.reasons),
        }


@dataclass(frozen=True)
class DeviceTrace:
    """The device line at one frequency, for the plot, sampled along the level.

    Attributes
    ----------
    frequency_hz : float
    drive_level : ndarray
        The device's level values, SI (W, V or A).
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
    drive_level: np.ndarray = field(repr=False)
    amplitude: np.ndarray = field(repr=False)
    inverse_gamma_device: np.ndarray = field(repr=False)
    negative_device_immittance: np.ndarray = field(repr=False)
    total_immittance: np.ndarray = field(repr=False)


@dataclass(frozen=True, repr=False)
class OscillatorResult:
    """Everything ``oneport oscillator`` found, frozen.

    Attributes
    ----------
    verdict : str
        One of :data:`VERDICTS` (docs/oscillator.md).
    reasons, next_steps : tuple of str
    form, form_reason : str
        ``admittance`` or ``impedance``, and why.
    amplitude_quantity : str
        The form's port amplitude: ``port_peak_voltage`` or ``port_peak_current``.
    drive_quantity : str
        The device's level variable (``incident_power``, ``port_peak_voltage``,
        ``port_peak_current``, ``junction_peak_voltage``).
    drive_range : (float, float)
        The lowest and highest level in the data, SI.
    operating_points : tuple of OperatingPoint
        All solutions inside the data, by amplitude.
    starts_from_noise : bool or None
        The small-signal count at the smallest level is positive (None: undecided).
    start_up, at_largest_level : LevelCount
        The count with the device at its smallest and at its largest level.
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
    starts_from_noise: bool | None
    start_up: LevelCount
    at_largest_level: LevelCount
    frequency_range_hz: tuple[float, float]
    reference_impedance_ohm: float
    device_input: dict[str, Any]
    load_input: InputRecord
    warnings: tuple[Finding, ...]
    limits: tuple[str, ...]
    cautions: tuple[str, ...]
    load_frequency_hz: np.ndarray
    load_gamma: np.ndarray
    load_immittance: np.ndarray
    device_traces: tuple[DeviceTrace, ...]

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.oscillator/2`` JSON object (plain Python types only)."""
        low, high = self.drive_range
        drive_range = {
            **level_json(self.drive_quantity, low, "low"),
            **level_json(self.drive_quantity, high, "high"),
        }
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
            "start_up": self.start_up.to_dict(),
            "at_largest_level": self.at_largest_level.to_dict(),
            "drive_range": drive_range,
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

    def plot(self, ax: Any = None) -> Figure:
        """The device lines against the load locus, operating points marked.

        ``ax=None`` draws the three panels on a new headless figure; one matplotlib ``Axes``
        gets the loop's real part along the amplitude; three ``Axes`` get all panels. Returns
        the figure (Jupyter shows it when it is the cell's value).
        """
        from ...rendering.oscillator_plot import plot_oscillator

        return plot_oscillator(self, ax)

    def __repr__(self) -> str:
        from ...rendering.oscillator_text import summary_line

        return f"<OscillatorResult {summary_line(self)}>"

    def _repr_html_(self) -> str:
        from ...rendering.notebook import html_summary

        return html_summary(self)

    def _arrays(self) -> dict[str, Any]:
        def pairs(values: np.ndarray) -> list[dict[str, float]]:
            return [complex_json(value) for value in values.tolist()]

        immittance = "admittance_s" if self.form == "admittance" else "impedance_ohm"
        level = _SUFFIX[self.drive_quantity]
        amplitude = _SUFFIX[self.amplitude_quantity]
        return {
            "reference_impedance_ohm": self.reference_impedance_ohm,
            "form": self.form,
            "load": {
                "frequency_hz": self.load_frequency_hz.tolist(),
                "gamma": pairs(self.load_gamma),
                immittance: pairs(self.load_immittance),
            },
            "device_lines": [
                {
                    "frequency_hz": trace.frequency_hz,
                    "drive_quantity": self.drive_quantity,
                    f"drive_levels_{level}": trace.drive_level.tolist(),
                    f"amplitude_{amplitude}": trace.amplitude.tolist(),
                    f"total_{immittance}": pairs(trace.total_immittance),
                    "inverse_gamma_device": pairs(trace.inverse_gamma_device),
                    f"negative_device_{immittance}": pairs(trace.negative_device_immittance),
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
    if isinstance(value, np.generic):
        return _finite(value.item())
    return value
