"""The oscillator analysis: device description and load to operating points and a verdict.

Data flow: read (``manifest``; the load through :mod:`oneport.reading` or, for a netlist,
:func:`netlist_load`) → align the load to the device's grid and measurement impedance
(:mod:`oneport.reading.alignment`) → smooth lines (``lines``) → operating points and Kurokawa's
figures (``solve``) → the small-signal Nyquist count at the smallest and the largest level, by
the check's own judgement (:func:`oneport.check`) → verdict, warnings and limits (``verdict``) →
frozen :class:`~oneport.products.oscillator.result.OscillatorResult`. It never prints, plots or
exits.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np

from ...cautions import CAUTIONS
from ...errors import InputError
from ...reading.alignment import AlignedPair, align, renormalise
from ...reading.preparation import load_one_port
from ...reading.records import InputRecord
from ...reading.touchstone import OnePort
from .describing import describing_conductance
from .lines import (
    COUNT_GRID_POINTS,
    COUNT_GRID_SPAN,
    NETLIST_GRID_POINTS,
    DeviceLine,
    LoadLine,
    drive_level_line,
    iv_line,
)
from .manifest import DeviceDescription, DriveLevelDevice, IVDevice, read_device_description
from .result import (
    DeviceTrace,
    LevelCount,
    OperatingPoint,
    OscillatorResult,
    Pulling,
    unit_suffix,
)
from .solve import MARGINAL_SINE, KurokawaFigures, Loop, kurokawa_figures, operating_points
from .verdict import decide, findings, limits

#: The form's port amplitude.
_AMPLITUDE = {"admittance": "port_peak_voltage", "impedance": "port_peak_current"}
#: The device's level variable, from the name the lines use (which names its unit).
_LEVEL = {
    "incident_power_dbm": "incident_power",
    "peak_voltage_v": "port_peak_voltage",
    "peak_current_a": "port_peak_current",
    "junction_peak_voltage_v": "junction_peak_voltage",
}
#: How far the injected power may lie below the oscillator's, dB (the locking estimate assumes
#: weak injection: P_inj ≤ P_osc).
INJECTION_BELOW_RANGE_DB = (0.0, 100.0)


def oscillator(
    device: str | Path | DeviceDescription,
    load: Any,
    *,
    form: str | None = None,
    injection_below_db: float | str = 20.0,
) -> OscillatorResult:
    """Where does this device settle into that load, and is the operating point stable?

    Parameters
    ----------
    device : path or DriveLevelDevice or IVDevice
        A device manifest (TOML, docs/oscillator.md) or a description already read.
    load : path, OnePort, scikit-rf Network or Circuit
        The load's Touchstone one-port, renormalised to the device's measurement impedance and
        interpolated onto the device's grid; or a netlist (``.cir`` path or
        :class:`oneport.circuit.Circuit`), evaluated there.
    form : {"auto", "admittance", "impedance"}, optional
        Kurokawa's form; default: the manifest's ``form``, else chosen to suit the device.
    injection_below_db : float or str
        How far the injected power lies below the oscillator's, dB (0 to 100, ``"20dB"``), for
        the stated injection-locking range.

    Returns
    -------
    OscillatorResult
    """
    from ..options import injection_below

    below = injection_below(
        20.0 if injection_below_db is None else injection_below_db, "--injection-below"
    )
    injection_ratio = injection_ratio_below(below, "--injection-below")
    if form not in (None, "auto", "admittance", "impedance"):
        raise InputError(f"--form {form!r}: accepted: auto, admittance, impedance")
    description = (
        device
        if isinstance(device, DriveLevelDevice | IVDevice)
        else read_device_description(device)
    )
    load_port, load_for_count = _load(load, description)
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
    points = tuple(_operating_point(loop, figures, injection_ratio) for figures in solutions)
    low, high = line.parameter_range
    start_up = _count(description, line, low, load_for_count, pair, modes=True)
    at_top = _count(description, line, high, load_for_count, pair, modes=False)
    verdict, reasons, next_steps = decide(loop, points, start_up, at_top, description)
    quantity = _LEVEL[line.parameter_quantity]
    return OscillatorResult(
        verdict=verdict,
        reasons=tuple(reasons),
        next_steps=tuple(next_steps),
        form=chosen,
        form_reason=reason,
        amplitude_quantity=_AMPLITUDE[chosen],
        drive_quantity=quantity,
        drive_range=(_si(line, low), _si(line, high)),
        operating_points=points,
        starts_from_noise=start_up.grows,
        start_up=start_up,
        at_largest_level=at_top,
        frequency_range_hz=(float(pair.frequency_hz[0]), float(pair.frequency_hz[-1])),
        reference_impedance_ohm=pair.reference_impedance_ohm,
        device_input=device_input,
        load_input=InputRecord.of("load", load_port, pair.reference_impedance_ohm),
        warnings=tuple(findings(loop, points, start_up, at_top, description, pair)),
        limits=limits(loop, description, netlist_load=load_for_count is not load_port),
        cautions=CAUTIONS,
        load_frequency_hz=pair.frequency_hz,
        load_gamma=pair.gamma_load,
        load_immittance=loop.load_immittance(pair.frequency_hz),
        device_traces=_traces(loop, points, start_up),
    )


def injection_ratio_below(below_db: float, name: str) -> float:
    """P_inj/P_osc (linear) for an injection ``below_db`` dB below the oscillator's power.

    The one rule for the option and the keyword: a finite number of dB from 0 to 100.

    Raises
    ------
    InputError
        One line naming ``name`` and the bad value.
    """
    low, high = INJECTION_BELOW_RANGE_DB
    if not (math.isfinite(below_db) and low <= below_db <= high):
        raise InputError(
            f"{name}: {below_db:g} dB is not accepted; give how far the injected power lies below"
            f" the oscillator's, {low:g} dB to {high:g} dB (the locking estimate assumes weak"
            " injection)"
        )
    return float(10.0 ** (-below_db / 10.0))


def netlist_load(
    load: str | Path | Any, frequency_hz: np.ndarray, reference_impedance_ohm: float
) -> OnePort:
    """A load netlist evaluated on the device's grid in the device's measurement impedance.

    The one place the oscillator turns a netlist load into data, through the preparation every
    command shares (:func:`oneport.products.pair.prepare_load`).
    """
    from ..pair import prepare_load

    return prepare_load(load, frequency_hz, reference_impedance_ohm).port


def choose_form(description: DeviceDescription, requested: str | None) -> tuple[str, str]:
    """Kurokawa's form for this device, and the reason given for it."""
    if requested is not None and requested != "auto":
        if requested not in _AMPLITUDE:
            raise InputError(f"form: {requested!r} is not one of admittance, impedance, auto")
        return requested, "as requested"
    if description.form != "auto":
        return description.form, f"as the manifest states (form = {description.form})"
    if isinstance(description, IVDevice):
        return "admittance", (
            "an I-V curve is a voltage-controlled conductance: its describing function depends"
            " on the junction voltage amplitude, so the admittance form (total conductance and"
            " susceptance, port voltage) suits it"
        )
    if description.quantity == "peak_current_a":
        return "impedance", (
            "the drive levels are port current amplitudes (total resistance and reactance, port"
            " current)"
        )
    return "admittance", (
        "the default for voltage-controlled (N-type) devices such as tunnel diodes; state"
        ' form = "impedance" in the manifest for a current-controlled (S-type) device'
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
    words = {"admittance": "peak voltage at the port", "impedance": "peak current into the port"}
    return (
        other,
        again,
        (
            f"{reason}; but at an operating point the {words[loop.form]} falls as the"
            f" device's level rises, so the {other.form} form, whose amplitude rises, is used"
        ),
    )


def _load(load: Any, description: DeviceDescription) -> tuple[OnePort, Any]:
    """The load as data on the device's footing, and the load as the small-signal count takes
    it (a netlist stays a netlist there, so that its own natural frequencies are counted)."""
    from ...circuit import Circuit, is_circuit_path

    if not (isinstance(load, Circuit) or (isinstance(load, str | Path) and is_circuit_path(load))):
        port = load_one_port(load, "load")
        return port, port
    grid, z0 = _netlist_footing(description)
    return netlist_load(load, grid, z0), load


def _netlist_footing(description: DeviceDescription) -> tuple[np.ndarray, float]:
    """The grid and reference impedance a netlist load is evaluated on."""
    if isinstance(description, DriveLevelDevice):
        first = description.ports[0]
        return first.frequency_hz, description.measurement_impedance_ohm or (
            first.reference_impedance_ohm
        )
    start, stop = description.frequency_start_hz, description.frequency_stop_hz
    if start is None or stop is None:
        raise InputError(
            f"{description.source}: frequency_start_hz, frequency_stop_hz: a netlist load has no"
            " frequency grid of its own; state the band to search in the manifest (e.g."
            ' frequency_start_hz = "1GHz", frequency_stop_hz = "3GHz")'
        )
    return (
        np.linspace(start, stop, NETLIST_GRID_POINTS),
        description.reference_impedance_ohm or 50.0,
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
    quantity = _LEVEL[description.quantity]
    levels = [_si(line, float(level)) for level in description.levels]
    record: dict[str, object] = {
        "role": "device",
        "kind": "drive-levels",
        "path": description.source,
        "sha256": description.sha256,
        "name": description.name,
        "level_quantity": quantity,
        f"levels_{unit_suffix(quantity)}": levels,
        "files": [{"path": p.source, "sha256": p.sha256} for p in description.ports],
        "points": first.points,
        "frequency_range_hz": [float(first.frequency_hz[0]), float(first.frequency_hz[-1])],
        "reference_impedance_ohm": {
            "as_measured": first.reference_impedance_ohm,
            "as_analysed": z0,
        },
    }
    if quantity == "incident_power":
        record["levels_dbm"] = description.levels.tolist()  # as the manifest gives them
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


def _count(
    description: DeviceDescription,
    line: DeviceLine,
    level: float,
    load: Any,
    pair: AlignedPair,
    *,
    modes: bool,
) -> LevelCount:
    """The check's judgement of the loop with the device held at ``level`` (its lowest or
    highest), and, where the count is positive and ``modes`` is asked, the modes it establishes
    with their growth rates (a rational fit of F, kept only when it agrees with the count)."""
    from ..check import check

    if isinstance(description, DriveLevelDevice):
        index = 0 if level <= float(description.levels[0]) else description.levels.size - 1
        result = check(
            description.ports[index],
            load,
            measurement_impedance_ohm=description.measurement_impedance_ohm,
        )
    else:
        circuit = _linearised(description, level)
        # Against a netlist load the two lumped sides need no grid: the check's preparation
        # evaluates them from DC to beyond every natural frequency.
        result = check(circuit, load, measurement_impedance_ohm=pair.reference_impedance_ohm)
    found: tuple[Any, ...] = ()
    located: bool | None = None
    if modes and result.verdict == "unstable" and result.encirclements:
        from ...analysis.pole_zero import identify_natural_frequencies

        fit = identify_natural_frequencies(
            result.frequency_hz,
            1.0 - result.loop_gain,
            reference_impedance_ohm=result.reference_impedance_ohm,
        )
        trusted = tuple(m for m in fit.natural_frequencies if m.rhp and m.trusted)
        located = sum(m.multiplicity for m in trusted) == result.encirclements
        found = trusted if located else ()
    return LevelCount(
        drive_level=_si(line, level),
        drive_quantity=_LEVEL[line.parameter_quantity],
        verdict=result.verdict,
        encirclements=result.encirclements,
        latch_up=result.latch_up,
        natural_frequencies=found,
        modes_located=located,
        oscillation_frequencies_hz=tuple(float(f) for f in result.oscillation_frequencies_hz),
        reasons=result.reasons,
        # Steps that name another command's options (the check's DC facts) do not apply here.
        next_steps=tuple(step for step in result.next_steps if "--" not in step),
        warnings=result.warnings,
    )


def _linearised(description: IVDevice, amplitude_v: float) -> Any:
    """The I–V description held at one junction amplitude, as a lumped circuit: Rs + sLs in
    series with (1/G1(A) ∥ Cj). Its natural frequencies terminated in Z0 are exact, so the
    check counts any the description itself has in the right half plane (Z = N + P)."""
    from ...circuit import Circuit

    conductance = float(
        describing_conductance(description.current, description.bias_voltage_v, amplitude_v)
    )
    parasitics = description.parasitics
    circuit = Circuit(f"{description.source} held at {amplitude_v:g} V junction peak")
    node = "port"
    if parasitics.series_resistance_ohm:
        circuit.resistor("RS", node, "rs", parasitics.series_resistance_ohm)
        node = "rs"
    if parasitics.series_inductance_h:
        circuit.inductor("LS", node, "ls", parasitics.series_inductance_h)
        node = "ls"
    # Below 1 fS the junction conducts nothing a 50 ohm loop could see: left open.
    conducts = abs(conductance) >= 1e-15
    if conducts:
        circuit.resistor("RJ", node, "0", 1.0 / conductance)
    if parasitics.junction_capacitance_f or not conducts:
        # A junction with neither conductance nor capacitance is open: 1 aF stands for it.
        circuit.capacitor("CJ", node, "0", parasitics.junction_capacitance_f or 1e-18)
    return circuit.port("port")


def _count_grid(band_hz: np.ndarray) -> np.ndarray:
    """Where both sides are netlists: a geometric grid around the band (see COUNT_GRID_SPAN)."""
    low, high = COUNT_GRID_SPAN
    top = float(band_hz[-1])
    return np.geomspace(top * low, top * high, COUNT_GRID_POINTS)


def _si(line: DeviceLine, level: float) -> float:
    """A level of the line in SI: W for an incident power in dBm, else as it is (V or A)."""
    if line.parameter_quantity == "incident_power_dbm":
        return float(1e-3 * 10.0 ** (level / 10.0))
    return float(level)


def _operating_point(loop: Loop, figures: KurokawaFigures, ratio: float) -> OperatingPoint:
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
    amplitude = _AMPLITUDE[loop.form]
    level = _LEVEL[loop.device.parameter_quantity]
    variable = amplitude if figures.stability_variable == "form" else level
    immittance_unit = "S" if loop.form == "admittance" else "ohm"
    variable_unit = {"incident_power": "W", "port_peak_current": "A"}.get(variable, "V")
    index = figures.stability_index
    if variable == "incident_power":
        # S was taken per dBm of the level; per watt it is S·dp/dP = S·10/(ln 10·P), the same
        # sign (SI inside the result).
        index *= 10.0 / (math.log(10.0) * _si(loop.device, figures.parameter))
    return OperatingPoint(
        frequency_hz=figures.frequency_hz,
        amplitude=figures.amplitude,
        amplitude_quantity=amplitude,
        drive_level=_si(loop.device, figures.parameter),
        drive_quantity=level,
        port_peak_voltage_v=voltage,
        port_peak_current_a=voltage * abs(device_admittance),
        load_power_w=0.5 * load_admittance.real * voltage**2,
        device_added_power_w=-0.5 * device_admittance.real * voltage**2,
        kurokawa_stable=figures.stable,
        stability_index=index,
        stability_index_unit=f"{immittance_unit}^2*s/{variable_unit}",
        stability_variable=variable,
        crossing_angle_rad=figures.crossing_angle_rad,
        decay_rate_per_s=figures.decay_rate_per_s,
        marginal=abs(figures.tangency) < MARGINAL_SINE,
        near_data_edge=near_edge,
        amplitude_increasing=figures.amplitude_slope > 0,
        gamma_load=complex(loop.load.gamma(f)),
        gamma_device=complex(loop.device.gamma(p, f)),
        load_impedance_ohm=complex(loop.load.impedance(f)),
        reference_impedance_ohm=loop.device.reference_impedance_ohm,
        dc_current_shift_a=None if shift is None else float(shift(p)),
        pulling=pulling(loop, figures.parameter, figures.frequency_hz, ratio),
    )


def pulling(loop: Loop, parameter: float, frequency_hz: float, injection_ratio: float) -> Pulling:
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
    half_range = None if coefficient is None else coefficient * math.sqrt(injection_ratio)
    return Pulling(q, loop.form, coefficient, injection_ratio, half_range, abs(quality(total)))


def _traces(
    loop: Loop, points: tuple[OperatingPoint, ...], start_up: LevelCount
) -> tuple[DeviceTrace, ...]:
    """The device line at each operating frequency (else each start-up mode, else mid-band)."""
    band = loop.device.frequency_hz
    candidates = sorted(p.frequency_hz for p in points) or sorted(
        f
        for f in (
            *(m.frequency_hz for m in start_up.natural_frequencies if not m.real),
            *start_up.oscillation_frequencies_hz,
        )
        if band[0] <= f <= band[-1]
    )
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
                drive_level=np.array([_si(loop.device, float(level)) for level in levels]),
                amplitude=loop.amplitude(levels, f),
                inverse_gamma_device=inverse,
                negative_device_immittance=-loop.device_immittance(levels, f),
                total_immittance=loop.total(levels, f),
            )
        )
    return tuple(traces)
