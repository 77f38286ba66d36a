"""Circuits as the rest of the package sees them: :class:`~oneport.reading.touchstone.OnePort`
records.

``oneport check`` takes a Touchstone file or a netlist on either side; for a netlist it calls
:func:`one_port_from_circuit` with the grid and reference impedance the analysis runs in, so the
rest of the check cannot tell a computed one-port from a measured one (except by its record).
"""

from __future__ import annotations

import hashlib
from collections.abc import Mapping
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from ..reading.files import NETLIST_SUFFIXES, is_netlist_path, read_user_bytes
from ..reading.touchstone import Multiport, OnePort

if TYPE_CHECKING:
    from .model import Circuit

#: File suffixes read as netlists.
#: File suffixes read as netlists (one list, in :mod:`oneport.reading.files`).
CIRCUIT_SUFFIXES = NETLIST_SUFFIXES


def is_circuit_path(path: str | Path) -> bool:
    """Whether ``path`` names a netlist (by its suffix, ``.cir``)."""
    return is_netlist_path(path)


def one_port_from_circuit(
    circuit: str | Path | Circuit,
    frequency_hz: Any,
    reference_impedance_ohm: float = 50.0,
    params: Mapping[str, float] | None = None,
) -> OnePort:
    """Evaluate a one-port netlist on a grid, as a :class:`OnePort`.

    Parameters
    ----------
    circuit : path or Circuit
        A netlist file (``.cir``) or a built circuit with one port.
    frequency_hz : array_like of float, shape (n,)
        The grid, Hz (for a load: the device's grid; for a device: the load's).
    reference_impedance_ohm : float
        Z0 of the returned Γ, Ω (for a load: the device's measurement impedance).
    params : mapping of str to float, optional
        Scalar parameter values overriding the netlist's ``.set`` defaults.

    Returns
    -------
    OnePort
        ``source`` is the netlist path, ``sha256`` the netlist's bytes' hash, ``version``
        ``"netlist"``, ``parameter`` ``"S"``, ``number_format`` ``"RI"``.

    Examples
    --------
    >>> from oneport.circuit import Circuit
    >>> load = Circuit("50 ohm").resistor("R1", "1", "0", 50).port("1")
    >>> port = one_port_from_circuit(load, [1e9, 2e9])
    >>> port.points, bool(abs(port.gamma).max() < 1e-15)
    (2, True)
    """
    built, digest = _circuit(circuit)
    values = dict(params or {})
    for name, value in values.items():
        if np.ndim(value) != 0:
            raise InputError(f"{built.source}: parameter {name}: give one value, not an array")
    frequency = np.asarray(frequency_hz, dtype=float)
    if frequency.ndim != 1 or frequency.size < 1 or np.any(np.diff(frequency) <= 0):
        raise InputError(f"{built.source}: the grid must be increasing frequencies in Hz")
    gamma = built.gamma(frequency, reference_impedance_ohm, **values)
    return OnePort(
        frequency_hz=frequency,
        gamma=gamma,
        reference_impedance_ohm=float(reference_impedance_ohm),
        source=built.source,
        sha256=digest,
        parameter="S",
        number_format="RI",
        version="netlist",
        comments=tuple(f"{k}={v:g}" for k, v in {**built.parameters, **values}.items()),
    )


def multiport_from_circuit(
    circuit: str | Path | Circuit,
    frequency_hz: Any,
    reference_impedance_ohm: float = 50.0,
    params: Mapping[str, float] | None = None,
) -> Multiport:
    """Evaluate a one- or two-port netlist on a grid, as a :class:`Multiport` (S (p, p, n))."""
    built, digest = _circuit(circuit)
    frequency = np.asarray(frequency_hz, dtype=float)
    s = built.s_parameters(frequency, reference_impedance_ohm, **dict(params or {}))
    if s.ndim != 3:
        raise InputError(f"{built.source}: parameters must be single values here")
    ports = s.shape[0]
    return Multiport(
        frequency_hz=frequency,
        s=s,
        reference_impedance_ohm=np.full(ports, float(reference_impedance_ohm)),
        source=built.source,
        sha256=digest,
        version="netlist",
    )


def _circuit(circuit: str | Path | Circuit) -> tuple[Circuit, str | None]:
    from .model import Circuit
    from .netlist import read_circuit

    if isinstance(circuit, Circuit):
        return circuit, None
    built = read_circuit(circuit)
    return built, hashlib.sha256(read_user_bytes(circuit, "a netlist")).hexdigest()
