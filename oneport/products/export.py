"""Exporting a netlist as a Touchstone file: the grid, the evaluation and the written record.

:func:`export` (``oneport.export``) evaluates a netlist on a grid
(:func:`~oneport.products.options.frequency_grid`) and writes ``.s1p`` (one port) or ``.s2p``
(two ports); the frozen :class:`ExportResult` says what was written (JSON schema
``oneport.export/2``, docs/netlist.md). Nothing here prints.
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
from ..display import Displayed
from ..errors import InputError, printable
from ..reading.files import read_user_bytes
from .options import frequency_grid
from .parameters import parameter_units

EXPORT_SCHEMA = "oneport.export/2"

__all__ = ["EXPORT_SCHEMA", "ExportResult", "export", "export_circuit", "frequency_grid"]


@dataclass(frozen=True, repr=False)
class ExportResult(Displayed):
    """What ``oneport export`` wrote.

    Attributes
    ----------
    circuit_path, circuit_sha256 : str
        The netlist read and the SHA-256 of its bytes (None for a Circuit built in Python).
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
    frequency_hz, s_parameters : ndarray
        What was written: the grid, Hz, and S, shape (ports, ports, points), in
        ``reference_impedance_ohm``.
    """

    circuit_path: str
    circuit_sha256: str | None
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
    frequency_hz: np.ndarray | None = field(default=None, repr=False)
    s_parameters: np.ndarray | None = field(default=None, repr=False)

    def plot(self, ax: Any = None) -> Any:
        """|S_ij| of the written file against frequency.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ..rendering.export_plot import plot_export

        return plot_export(self, ax)

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


def export(
    netlist: Any,
    output: str | Path,
    frequency_hz: Any,
    *,
    reference_impedance_ohm: Any = 50.0,
    params: Any = None,
    spacing: str | None = None,
) -> ExportResult:
    """Evaluate a netlist on ``frequency_hz`` and write its Touchstone file (``oneport export``).

    Parameters
    ----------
    netlist : str, Path or Circuit
        The netlist (``.cir`` path, docs/netlist.md) or a :class:`oneport.circuit.Circuit`.
    output : str or Path
        ``.s1p`` for a one-port netlist, ``.s2p`` for a two-port.
    frequency_hz : array_like of float, shape (n,)
        The grid, Hz (:func:`oneport.frequency_grid` builds one from ``"1MHz"``, ``"6GHz"``…).
    reference_impedance_ohm : float or str
        Z0 of the written data, Ω or text (``"50ohm"``).
    params : mapping or sequence of str, optional
        Parameter overrides: ``{"RL": 75}`` or ``["RL=75"]`` (netlist suffixes: ``2.2p``).
    spacing : {"linear", "log"}, optional
        How the grid was made, as recorded in the result; default: read from the grid.

    Returns
    -------
    ExportResult
    """
    from .options import given_grid, output_targets, parameters, positive_resistance

    # The target is checked before any work: a writable place, never the netlist or a file
    # its blocks name, never a special file or a system folder.
    target = output_targets({"--output": output}, [netlist]).get("--output")
    if target is None:
        raise InputError("export: give the output file (.s1p or .s2p)")
    grid = given_grid(frequency_hz)
    if grid is None:
        raise InputError("export: give the grid, frequency_hz (see oneport.frequency_grid)")
    reference = positive_resistance(reference_impedance_ohm, "--reference-impedance")
    return export_circuit(
        netlist,
        target,
        grid,
        reference_impedance_ohm=50.0 if reference is None else reference,
        params=parameters(params),
        spacing=spacing or _spacing(grid),
    )


def _spacing(grid: np.ndarray) -> str:
    """``log`` for a geometric grid of three or more positive points, else ``linear``."""
    if (
        grid.size > 2
        and grid[0] > 0
        and np.allclose(np.diff(np.log(grid)), np.log(grid[1] / grid[0]))
    ):
        return "log"
    return "linear"


def export_circuit(
    circuit_path: Any,
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
    circuit_path : str, Path or Circuit
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
    from ..circuit import Circuit

    if isinstance(circuit_path, Circuit):
        circuit, name, digest = circuit_path, circuit_path.source, None
    elif isinstance(circuit_path, str | Path):
        circuit, name = read_circuit(circuit_path), Path(circuit_path).name
        digest = hashlib.sha256(read_user_bytes(circuit_path, "a netlist")).hexdigest()
    else:
        raise InputError(f"export: {circuit_path!r} is no netlist; give a .cir path or a Circuit")
    ports = len(circuit.ports)
    wanted = f".s{ports}p"
    if Path(output_path).suffix.lower() != wanted:
        # Refused before the evaluation: the port count is known once the netlist is read.
        raise InputError(
            f"output {printable(str(output_path))}: a {ports}-port is written as a {wanted}"
            " file; name it so"
        )
    overrides = dict(params or {})
    s = circuit.s_parameters(frequency_hz, reference_impedance_ohm, **overrides)
    bad = ~np.isfinite(s).all(axis=(0, 1))
    if bad.any():
        raise InputError(
            f"{printable(str(name))}: its S-parameters are not finite at"
            f" {float(frequency_hz[np.argmax(bad)]):g} Hz, so nothing was written; keep the"
            " grid and the values within the netlist's bounds (docs/netlist.md)"
        )
    used = dict(circuit.parameters)
    lowered = {key.lower(): key for key in used}
    for key, value in overrides.items():
        used[lowered[key.lower()]] = float(value)
    comments = [
        f"S-parameters computed by oneport export from {name}",
        "parameters: " + (", ".join(f"{k}={v:.12g}" for k, v in used.items()) or "none"),
    ]
    write_touchstone(output_path, frequency_hz, s, reference_impedance_ohm, comments)
    return ExportResult(
        circuit_path=str(circuit_path) if digest is not None else str(name),
        circuit_sha256=digest,
        output_path=str(output_path),
        ports=int(s.shape[0]),
        points=int(frequency_hz.size),
        start_hz=float(frequency_hz[0]),
        stop_hz=float(frequency_hz[-1]),
        spacing=spacing,
        reference_impedance_ohm=float(reference_impedance_ohm),
        parameters=used,
        parameter_units=parameter_units([circuit]),
        frequency_hz=np.asarray(frequency_hz, dtype=float),
        s_parameters=s,
    )
