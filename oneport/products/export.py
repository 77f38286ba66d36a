"""Exporting a netlist as a Touchstone file: the grid, the evaluation and the written record.

:func:`frequency_grid` builds the sweep, :func:`export_circuit` evaluates the circuit on it and
writes ``.s1p`` (one port) or ``.s2p`` (two ports); the frozen :class:`ExportResult` says what
was written (JSON schema ``oneport.export/2``, docs/netlist.md). Nothing here prints.
"""

from __future__ import annotations

import hashlib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..circuit.netlist import read_circuit
from ..circuit.writer import write_touchstone
from ..errors import InputError
from ..reading.files import read_user_bytes
from .parameters import parameter_units

EXPORT_SCHEMA = "oneport.export/2"
SPACINGS = ("linear", "log")


@dataclass(frozen=True)
class ExportResult:
    """What ``oneport export`` wrote.

    Attributes
    ----------
    circuit_path, circuit_sha256 : str
        The netlist read and the SHA-256 of its bytes.
    output_path : str
        The Touchstone file written.
    ports, points : int
        Port count (1 or 2) and frequency points.
    start_hz, stop_hz : float
        First and last frequency, Hz.
    spacing : str
        ``"linear"`` or ``"log"``.
    reference_impedance_ohm : float
        Z0 of the written S-parameters, Ω.
    parameters : dict of str to float
        Every parameter's value as used (netlist defaults with the overrides applied).
    parameter_units : dict of str to str
        Each parameter's SI unit symbol, from the elements that use it (``""``: a number).
    """

    circuit_path: str
    circuit_sha256: str
    output_path: str
    ports: int
    points: int
    start_hz: float
    stop_hz: float
    spacing: str
    reference_impedance_ohm: float
    parameters: dict[str, float]
    warnings: tuple[dict[str, str], ...] = ()
    cautions: tuple[str, ...] = field(default=CAUTIONS)
    parameter_units: dict[str, str] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The JSON object (schema ``oneport.export/2``)."""
        from .parameters import value_record

        return {
            "schema": EXPORT_SCHEMA,
            "inputs": [
                {
                    "role": "netlist",
                    "path": self.circuit_path,
                    "sha256": self.circuit_sha256,
                    "parameters": [
                        value_record(name, value, self.parameter_units.get(name, ""))
                        for name, value in self.parameters.items()
                    ],
                }
            ],
            "output": {
                "path": self.output_path,
                "ports": self.ports,
                "points": self.points,
                "start_hz": self.start_hz,
                "stop_hz": self.stop_hz,
                "spacing": self.spacing,
                "reference_impedance_ohm": self.reference_impedance_ohm,
            },
            "warnings": [dict(w) for w in self.warnings],
            "cautions": list(self.cautions),
        }


def frequency_grid(start_hz: float, stop_hz: float, points: int, spacing: str) -> np.ndarray:
    """The sweep, Hz: ``points`` frequencies from ``start_hz`` to ``stop_hz``.

    Examples
    --------
    >>> frequency_grid(1e6, 1e9, 4, "log")
    array([1.e+06, 1.e+07, 1.e+08, 1.e+09])
    """
    if spacing not in SPACINGS:
        raise InputError(f"--spacing {spacing!r}; accepted: {', '.join(SPACINGS)}")
    if points < 1:
        raise InputError(f"--points {points}: give a whole number >= 1")
    if start_hz < 0:
        raise InputError(f"--start {start_hz:g} Hz: frequencies are >= 0")
    if points == 1 and start_hz != stop_hz:
        raise InputError("--points 1 needs --start equal to --stop; give 2 or more points")
    if points > 1 and not stop_hz > start_hz:
        raise InputError(f"--stop {stop_hz:g} Hz must be above --start {start_hz:g} Hz")
    if spacing == "log":
        if start_hz <= 0:
            raise InputError("--spacing log needs --start above 0 Hz; use linear to include DC")
        return np.geomspace(start_hz, stop_hz, points)
    return np.linspace(start_hz, stop_hz, points)


def export_circuit(
    circuit_path: str | Path,
    output_path: str | Path,
    frequency_hz: np.ndarray,
    *,
    reference_impedance_ohm: float = 50.0,
    params: Mapping[str, float] | None = None,
    spacing: str = "linear",
) -> ExportResult:
    """Evaluate a netlist on ``frequency_hz`` and write its Touchstone file.

    Parameters
    ----------
    circuit_path : str or Path
        The netlist.
    output_path : str or Path
        ``.s1p`` for a one-port netlist, ``.s2p`` for a two-port.
    frequency_hz : ndarray of float, shape (n,)
        The grid, Hz (see :func:`frequency_grid`).
    reference_impedance_ohm : float
        Z0 of the written data, Ω.
    params : mapping, optional
        Scalar parameter overrides by name.
    spacing : str
        Recorded in the result (how the grid was made).
    """
    circuit = read_circuit(circuit_path)
    overrides = dict(params or {})
    s = circuit.s_parameters(frequency_hz, reference_impedance_ohm, **overrides)
    used = dict(circuit.parameters)
    lowered = {key.lower(): key for key in used}
    for name, value in overrides.items():
        used[lowered[name.lower()]] = float(value)
    comments = [
        f"S-parameters computed by oneport export from {Path(circuit_path).name}",
        "parameters: " + (", ".join(f"{k}={v:.12g}" for k, v in used.items()) or "none"),
    ]
    write_touchstone(output_path, frequency_hz, s, reference_impedance_ohm, comments)
    return ExportResult(
        circuit_path=str(circuit_path),
        circuit_sha256=hashlib.sha256(read_user_bytes(circuit_path, "a netlist")).hexdigest(),
        output_path=str(output_path),
        ports=int(s.shape[0]),
        points=int(frequency_hz.size),
        start_hz=float(frequency_hz[0]),
        stop_hz=float(frequency_hz[-1]),
        spacing=spacing,
        reference_impedance_ohm=float(reference_impedance_ohm),
        parameters=used,
        parameter_units=parameter_units([circuit]),
    )
