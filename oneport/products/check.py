"""The check product: device and load, as the user names them, to a stability verdict.

Data flow: read (``reading.touchstone``, or a netlist through ``circuit``) → align
(``reading.alignment``) → the judgement (``analysis.judgement``) → frozen
:class:`~oneport.analysis.result.CheckResult`. It never prints, plots or exits.
"""

from __future__ import annotations

import sys
from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np

from ..analysis.judgement import CheckOptions, analyse_pair
from ..analysis.result import CheckResult
from ..errors import InputError
from ..reading.alignment import align
from ..reading.preparation import PreparedPort, load_one_port
from ..reading.touchstone import OnePort

OneportSource = str | Path | OnePort | PreparedPort | Any


def check(
    device: OneportSource,
    load: OneportSource,
    *,
    measurement_impedance_ohm: float | None = None,
    device_dc_resistance_ohm: float | None = None,
    load_dc_resistance_ohm: float | None = None,
    gamma_uncertainty: float | tuple[float, float] | None = None,
    frequency_hz: np.ndarray | None = None,
) -> CheckResult:
    """Will ``device`` oscillate (or latch up) when connected to ``load``? Small-signal check.

    Parameters
    ----------
    device, load : path, OnePort, PreparedPort, Circuit or skrf.Network
        The negative-resistance device and the network it faces, as one-ports. A netlist
        (``.cir`` path or :class:`oneport.circuit.Circuit`) is evaluated on the other side's
        grid in the analysis impedance, and its own natural frequencies terminated there are
        checked (the premise) and counted if any lie in the right half plane.
    measurement_impedance_ohm : float, optional
        The impedance the device was really measured in (VNA port impedance), Ω, if its file
        was renormalised afterwards; default: the device file's reference. The load is brought
        to this impedance, never the device to the load's.
    device_dc_resistance_ohm, load_dc_resistance_ohm : float, optional
        DC facts that close the contour towards DC: the device's I–V slope at the bias point
        and the bias network's DC resistance, Ω (give both).
    gamma_uncertainty : float or (float, float), optional
        Worst-case absolute error of |Γ|, for both sides or (device, load).
    frequency_hz : ndarray, optional
        The grid, Hz, when both sides are netlists.

    Returns
    -------
    CheckResult
        Verdict, Nyquist count, crossings, bands, margins, warnings and cautions, with arrays.

    Examples
    --------
    >>> import skrf
    >>> frequency = skrf.Frequency(0.1, 5, 201, unit="GHz")
    >>> media = skrf.media.DefinedGammaZ0(frequency, z0=50)
    >>> device = media.resistor(-30) ** media.short()  # a bare -30 ohm: no dynamics
    >>> result = check(device, media.resistor(100) ** media.short())
    >>> result.verdict, result.encirclements
    ('stable', 0)
    """
    if isinstance(gamma_uncertainty, tuple):
        device_uncertainty, load_uncertainty = gamma_uncertainty
    else:
        device_uncertainty = load_uncertainty = gamma_uncertainty or 0.0
    device_port, load_port, known_poles, notes = _resolve_sides(
        device, load, measurement_impedance_ohm, frequency_hz
    )
    options = CheckOptions(
        measurement_impedance_ohm=measurement_impedance_ohm,
        device_dc_resistance_ohm=device_dc_resistance_ohm,
        load_dc_resistance_ohm=load_dc_resistance_ohm,
        device_uncertainty=float(device_uncertainty),
        load_uncertainty=float(load_uncertainty),
        known_poles=known_poles,
        premise_notes=notes,
        load_poles_known=_as_circuit(load) is not None,
    )
    pair = align(device_port, load_port, options.measurement_impedance_ohm)
    result = analyse_pair(pair, device_port, load_port, options)
    prepared = [(i, s) for i, s in enumerate((device, load)) if isinstance(s, PreparedPort)]
    if not prepared:
        return result
    inputs = list(result.inputs)
    findings = list(result.warnings)
    for index, source in prepared:
        inputs[index] = replace(inputs[index], preparation=source.steps)
        findings += source.findings
    return replace(result, inputs=(inputs[0], inputs[1]), warnings=tuple(findings))


def _resolve_sides(
    device: OneportSource,
    load: OneportSource,
    measurement_impedance_ohm: float | None,
    frequency_hz: np.ndarray | None,
) -> tuple[OnePort, OnePort, int, tuple[str, ...]]:
    """Both sides as one-ports on a common footing; netlist sides evaluated and their premise
    checked. Returns the ports, the known right-half-plane poles of F and premise notes."""
    device_circuit, load_circuit = _as_circuit(device), _as_circuit(load)
    if device_circuit is None and load_circuit is None:
        return load_one_port(device, "device"), load_one_port(load, "load"), 0, ()
    from ..circuit import one_port_from_circuit

    # Evaluate from the path where there is one, so the record carries the netlist's checksum.
    device_netlist = device if isinstance(device, str | Path) else device_circuit
    load_netlist = load if isinstance(load, str | Path) else load_circuit
    if device_circuit is not None and load_circuit is not None:
        if frequency_hz is None:
            raise InputError(
                "both sides are netlists: give the frequency grid (--start, --stop, --points)"
            )
        grid = np.asarray(frequency_hz, dtype=float)
        z0 = measurement_impedance_ohm or 50.0
        device_port = one_port_from_circuit(device_netlist, grid, z0)
        load_port = one_port_from_circuit(load_netlist, grid, z0)
    elif device_circuit is not None:
        load_port = load_one_port(load, "load")
        z0 = measurement_impedance_ohm or 50.0
        device_port = one_port_from_circuit(device_netlist, load_port.frequency_hz, z0)
    else:
        device_port = load_one_port(device, "device")
        z0 = measurement_impedance_ohm or device_port.reference_impedance_ohm
        load_port = one_port_from_circuit(load_netlist, device_port.frequency_hz, z0)
    poles, notes = 0, []
    for role, circuit in (("device", device_circuit), ("load", load_circuit)):
        if circuit is None:
            continue
        found, note = _netlist_poles(circuit, role, z0)
        poles += found
        notes.append(note)
    return device_port, load_port, poles, tuple(notes)


def _as_circuit(source: OneportSource) -> Any:
    """The :class:`~oneport.circuit.Circuit` a source describes, or None for data."""
    if isinstance(source, str | Path):
        from ..circuit.conversion import is_circuit_path

        if not is_circuit_path(source):
            return None  # a data file: the circuit engine is not loaded
        from ..circuit import read_circuit

        return read_circuit(source)
    # No Circuit can exist unless its module is loaded: records alone never load the engine.
    model = sys.modules.get("oneport.circuit.model")
    return source if model is not None and isinstance(source, model.Circuit) else None


def _netlist_poles(circuit: Any, role: str, z0: float) -> tuple[int, str]:
    """Right-half-plane natural frequencies of a netlist side terminated in ``z0``."""
    try:
        roots = np.asarray(circuit.natural_frequencies(termination_ohm=z0))
    except InputError:
        return 0, (
            f"The {role} netlist ({circuit.source}) has elements without a polynomial (lines,"
            f" blocks, constant Q): its stability terminated in {z0:g} ohm was not checked and"
            " is assumed."
        )
    unstable = int(np.sum(roots.real > 0))
    if unstable:
        return unstable, (
            f"The {role} netlist ({circuit.source}) terminated in {z0:g} ohm has {unstable}"
            " natural frequencies in the right half plane (P); they are poles of F and are"
            " added to the count (Z = N + P)."
        )
    return 0, (
        f"The {role} netlist ({circuit.source}) was checked: terminated in {z0:g} ohm all its"
        " natural frequencies lie in the left half plane (P = 0)."
    )
