"""The oscillator analysis: device description and load to operating points and a verdict.

Data flow: read (``manifest``, :func:`oneport.reading.touchstone.read_one_port`) → align the load to
the device's grid and measurement impedance (:mod:`oneport.reading.alignment`) → smooth lines
(``lines``) → operating points and start-up estimates (``solve``) → verdict, warnings and limits
(here) → frozen :class:`~oneport.products.oscillator.result.OscillatorResult`. It never prints,
plots or exits.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ...cautions import CAUTIONS
from ...errors import InputError
from ...reading.alignment import AlignedPair, align, renormalise
from ...reading.records import InputRecord
from ...reading.touchstone import OnePort, read_one_port
from .lines import DeviceLine, LoadLine, drive_level_line, iv_line
from .manifest import DeviceDescription, DriveLevelDevice, IVDevice, read_device_description
from .result import (
    DeviceTrace,
    OperatingPoint,
    OscillatorResult,
    Pulling,
    StartUpEstimate,
)
from .solve import (
    MARGINAL_SINE,
    GrowthEstimate,
    KurokawaFigures,
    Loop,
    growth_estimates,
    kurokawa_figures,
    operating_points,
)
from .verdict import decide, findings, limits

_UNITS = {"admittance": ("peak_voltage_v",), "impedance": ("peak_current_a",)}


def analyse_oscillator(
    device: str | Path | DeviceDescription,
    load: str | Path | OnePort,
    *,
    form: str | None = None,
    injection_ratio_db: float = -20.0,
) -> OscillatorResult:
    """Where does this device settle into that load, and is the operating point stable?

    Parameters
    ----------
    device : path or DriveLevelDevice or IVDevice
        A device manifest (TOML, docs/oscillator.md) or a description already read.
    load : path or OnePort
        The load's Touchstone one-port; it is renormalised to the device's measurement
        impedance and interpolated onto the device's grid.
    form : {"admittance", "impedance"}, optional
        Kurokawa's form; default: the manifest's ``form``, else chosen to suit the device.
    injection_ratio_db : float
        P_inj/P_osc (dB) at which the injection-locking half-range is stated.

    Returns
    -------
    OscillatorResult
    """
    description = (
        device
        if isinstance(device, DriveLevelDevice | IVDevice)
        else read_device_description(device)
    )
    load_port = load if isinstance(load, OnePort) else read_one_port(load)
    line, pair, device_input = _device_line(description, load_port)
    load_line = LoadLine.from_samples(
        pair.frequency_hz, pair.gamma_load, pair.reference_impedance_ohm
    )
    chosen, reason = choose_form(description, form)
    loop = Loop(line, load_line, chosen)
    solutions = operating_points(loop)
    if (form in (None, "auto")) and description.form == "auto":
        loop, solutions, reason = _suit_form(loop, solutions, reason)
        chosen = loop.form
    points = tuple(_operating_point(loop, figures, injection_ratio_db) for figures in solutions)
    low, high = line.parameter_range
    start_up = tuple(_estimate(e) for e in growth_estimates(loop, low))
    at_top = tuple(_estimate(e) for e in growth_estimates(loop, high))
    starts = any(estimate.grows for estimate in start_up)
    verdict, reasons, next_steps = decide(loop, points, start_up, at_top, description)
    return OscillatorResult(
        verdict=verdict,
        reasons=tuple(reasons),
        next_steps=tuple(next_steps),
        form=chosen,
        form_reason=reason,
        amplitude_quantity=_UNITS[chosen][0],
        drive_quantity=line.parameter_quantity,
        drive_range=(low, high),
        operating_points=points,
        starts_from_noise=starts,
        start_up=start_up,
        growth_at_largest_level=at_top,
        frequency_range_hz=(float(pair.frequency_hz[0]), float(pair.frequency_hz[-1])),
        reference_impedance_ohm=pair.reference_impedance_ohm,
        device_input=device_input,
        load_input=InputRecord.of("load", load_port, pair.reference_impedance_ohm),
        warnings=tuple(findings(loop, points, at_top, description, pair)),
        limits=limits(loop, description),
        cautions=CAUTIONS,
        load_frequency_hz=pair.frequency_hz,
        load_gamma=pair.gamma_load,
        load_immittance=loop.load_immittance(pair.frequency_hz),
        device_traces=_traces(loop, points, start_up),
    )


def choose_form(description: DeviceDescription, requested: str | None) -> tuple[str, str]:
    """Kurokawa's form for this device, and the reason given for it."""
    if requested is not None and requested != "auto":
        if requested not in _UNITS:
            raise InputError(f"form: {requested!r} is not one of 'admittance', 'impedance', 'auto'")
        return requested, "as requested"
    if description.form != "auto":
        return description.form, f"as the manifest states (form = {description.form!r})"
    if isinstance(description, IVDevice):
        return "admittance", (
            "an I-V curve is a voltage-controlled conductance: its describing function depends"
            " on the junction voltage amplitude, so the admittance form (G_T, B_T, port voltage)"
            " suits it"
        )
    if description.quantity == "peak_current_a":
        return "impedance", "the drive levels are port current amplitudes (R_T, X_T, port current)"
    return "admittance", (
        "the default for voltage-controlled (N-type) devices such as tunnel diodes; state"
        " form = 'impedance' in the manifest for a current-controlled (S-type) device"
    )


def _suit_form(
    loop: Loop, solutions: list[KurokawaFigures], reason: str
) -> tuple[Loop, list[KurokawaFigures], str]:
    """Switch forms when the chosen form's amplitude falls with the level and the other's rises.

    Kurokawa's rate assumes the device immittance follows the form's amplitude; a port
    amplitude that falls while the device's own level rises shows the other form suits better.
    """
    if all(figures.amplitude_slope > 0 for figures in solutions):
        return loop, solutions, reason
    other = Loop(loop.device, loop.load, "impedance" if loop.form == "admittance" else "admittance")
    again = [kurokawa_figures(other, s.parameter, s.frequency_hz) for s in solutions]
    if not all(figures.amplitude_slope > 0 for figures in again):
        return loop, solutions, reason
    quantity = _UNITS[loop.form][0]
    return (
        other,
        again,
        (
            f"{reason}; but at an operating point the {quantity.replace('_', ' ')} falls as the"
            f" device's level rises, so the {other.form} form, whose amplitude rises, is used"
        ),
    )


def _device_line(
    description: DeviceDescription, load: OnePort
) -> tuple[DeviceLine, AlignedPair, dict[str, object]]:
    if isinstance(description, DriveLevelDevice):
        return _drive_levels(description, load)
    return _iv(description, load)


def _drive_levels(
    description: DriveLevelDevice, load: OnePort
) -> tuple[DeviceLine, AlignedPair, dict[str, object]]:
    first = description.ports[0]
    pair = align(first, load, description.measurement_impedance_ohm)
    z0 = pair.reference_impedance_ohm
    start = pair.device_points_dropped_below
    stop = first.points - pair.device_points_dropped_above
    gamma = np.array([port.gamma[start:stop] for port in description.ports])
    if z0 != first.reference_impedance_ohm:
        gamma = renormalise(gamma, first.reference_impedance_ohm, z0)
    line = drive_level_line(description.quantity, description.levels, pair.frequency_hz, gamma, z0)
    record: dict[str, object] = {
        "role": "device",
        "kind": "drive-levels",
        "path": description.source,
        "sha256": description.sha256,
        "name": description.name,
        "level_quantity": description.quantity,
        "levels": description.levels.tolist(),
        "files": [{"path": p.source, "sha256": p.sha256} for p in description.ports],
        "points": first.points,
        "frequency_range_hz": [float(first.frequency_hz[0]), float(first.frequency_hz[-1])],
        "reference_impedance_ohm": {
            "as_measured": first.reference_impedance_ohm,
            "as_analysed": z0,
        },
    }
    return line, pair, record


def _iv(description: IVDevice, load: OnePort) -> tuple[DeviceLine, AlignedPair, dict[str, object]]:
    z0 = description.reference_impedance_ohm or load.reference_impedance_ohm
    start, stop = description.frequency_start_hz, description.frequency_stop_hz
    low = load.frequency_hz[0] if start is None else start
    high = load.frequency_hz[-1] if stop is None else stop
    grid = load.frequency_hz[(load.frequency_hz >= low) & (load.frequency_hz <= high)]
    if grid.size < 5:
        raise InputError(
            f"{description.source}: frequency_start_hz/frequency_stop_hz: the band {low:g} to"
            f" {high:g} Hz holds {grid.size} of the load's frequency points; at least 5 are needed"
        )
    line = iv_line(description, grid, z0)
    small_signal = OnePort(
        frequency_hz=grid,
        gamma=line.gamma(np.array(description.amplitude_min_v), grid),
        reference_impedance_ohm=z0,
        source=description.source,
    )
    pair = align(small_signal, load)
    parasitics = description.parasitics
    record: dict[str, object] = {
        "role": "device",
        "kind": "iv-curve",
        "path": description.source,
        "sha256": description.sha256,
        "name": description.name,
        "curve": description.curve_kind,
        "curve_summary": description.curve_summary,
        "table": None
        if description.table_source is None
        else {"path": description.table_source, "sha256": description.table_sha256},
        "bias_voltage_v": description.bias_voltage_v,
        "junction_amplitude_range_v": [description.amplitude_min_v, description.amplitude_max_v],
        "parasitics": {
            "series_resistance_ohm": parasitics.series_resistance_ohm,
            "series_inductance_h": parasitics.series_inductance_h,
            "junction_capacitance_f": parasitics.junction_capacitance_f,
        },
        "describing_function": "rectangle rule on 256 equally spaced angles over a full period",
        "reference_impedance_ohm": {"as_measured": None, "as_analysed": z0},
    }
    return line, pair, record


def _operating_point(loop: Loop, figures: KurokawaFigures, ratio_db: float) -> OperatingPoint:
    p, f = np.array(figures.parameter), np.array(figures.frequency_hz)
    voltage = float(loop.device.port_voltage(p, f))
    device_admittance = complex(loop.device.admittance(p, f))
    load_admittance = complex(loop.load.admittance(f))
    grid, frequencies = loop.device.parameter_grid, loop.device.frequency_hz
    near_edge = bool(
        figures.parameter - grid[0] < grid[1] - grid[0]
        or grid[-1] - figures.parameter < grid[-1] - grid[-2]
        or figures.frequency_hz - frequencies[0] < frequencies[1] - frequencies[0]
        or frequencies[-1] - figures.frequency_hz < frequencies[-1] - frequencies[-2]
    )
    shift = loop.device.dc_current_shift
    quantity = _UNITS[loop.form][0]
    variable = quantity if figures.stability_variable == "form" else loop.device.parameter_quantity
    immittance_unit = "S" if loop.form == "admittance" else "ohm"
    variable_unit = {"v": "V", "a": "A", "dbm": "dBm"}[variable.rsplit("_", 1)[1]]
    return OperatingPoint(
        frequency_hz=figures.frequency_hz,
        amplitude=figures.amplitude,
        amplitude_quantity=quantity,
        drive_parameter=figures.parameter,
        drive_quantity=loop.device.parameter_quantity,
        port_peak_voltage_v=voltage,
        port_peak_current_a=voltage * abs(device_admittance),
        load_power_w=0.5 * load_admittance.real * voltage**2,
        device_added_power_w=-0.5 * device_admittance.real * voltage**2,
        kurokawa_stable=figures.stable,
        stability_index=figures.stability_index,
        stability_index_unit=f"{immittance_unit}^2*s/{variable_unit}",
        stability_variable=variable,
        decay_rate_per_s=figures.decay_rate_per_s,
        marginal=abs(figures.tangency) < MARGINAL_SINE,
        near_data_edge=near_edge,
        amplitude_increasing=figures.amplitude_slope > 0,
        gamma_load=complex(loop.load.gamma(f)),
        gamma_device=complex(loop.device.gamma(p, f)),
        load_impedance_ohm=complex(loop.load.impedance(f)),
        reference_impedance_ohm=loop.device.reference_impedance_ohm,
        dc_current_shift_a=None if shift is None else float(shift(p)),
        pulling=pulling(loop, figures.parameter, figures.frequency_hz, ratio_db),
    )


def pulling(loop: Loop, parameter: float, frequency_hz: float, ratio_db: float) -> Pulling:
    """External Q of the load at f0 in the loop's form, and the locking half-range it implies.

    Q_ext = (ω0/(2·R_L))·dX_L/dω (impedance form; (ω0/(2·G_L))·dB_L/dω in the admittance
    form); Δω = (ω0/Q_ext)·sqrt(P_inj/P_osc), one side (Kurokawa 1973, recalled from memory).
    The loaded Q uses the slope of the whole loop's reactive part over the same load loss.
    """
    frequencies = loop.device.frequency_hz
    step = 1e-3 * float(np.median(np.diff(frequencies)))
    around = np.array([frequency_hz - step, frequency_hz, frequency_hz + step])
    load = loop.load_immittance(around)
    total = loop.total(np.array(parameter), around)
    omega = 2 * np.pi * frequency_hz
    real = load[1].real

    def quality(values: np.ndarray) -> float:
        slope = (values[2].imag - values[0].imag) / (2 * step * 2 * np.pi)
        return float(omega / (2 * real) * slope) if real != 0 else float("inf")

    q = quality(load)
    coefficient = frequency_hz / q if 0 < q < float("inf") else None
    half_range = None if coefficient is None else coefficient * 10 ** (ratio_db / 20)
    return Pulling(q, loop.form, coefficient, ratio_db, half_range, abs(quality(total)))


def _estimate(estimate: GrowthEstimate) -> StartUpEstimate:
    return StartUpEstimate(estimate.frequency_hz, estimate.growth_rate_per_s, estimate.parameter)


def _traces(
    loop: Loop, points: tuple[OperatingPoint, ...], start_up: tuple[StartUpEstimate, ...]
) -> tuple[DeviceTrace, ...]:
    """The device line at each operating frequency (else each start-up crossing, else mid-band)."""
    band = loop.device.frequency_hz
    candidates = sorted(p.frequency_hz for p in points) or sorted(e.frequency_hz for e in start_up)
    frequencies: list[float] = []
    for frequency in candidates or [float(band[band.size // 2])]:
        if not frequencies or frequency - frequencies[-1] > 1e-3 * (band[-1] - band[0]):
            frequencies.append(frequency)
    levels = loop.device.parameter_grid
    traces = []
    for frequency in frequencies[:6]:
        f = np.array(frequency)
        gamma = loop.device.gamma(levels, f)
        with np.errstate(divide="ignore", invalid="ignore"):
            inverse = 1.0 / gamma
        traces.append(
            DeviceTrace(
                frequency_hz=frequency,
                drive_parameter=levels,
                amplitude=loop.amplitude(levels, f),
                inverse_gamma_device=inverse,
                negative_device_immittance=-loop.device_immittance(levels, f),
                total_immittance=loop.total(levels, f),
            )
        )
    return tuple(traces)
