"""The terminations product: a two-port, as the user names it, to the terminations of one port
that make the other port's resistance negative.

Data flow: read the two-port (a Touchstone file, a scikit-rf ``Network``, a
:class:`~oneport.reading.touchstone.Multiport`, or a netlist evaluated on the grid given) → the
stability circle and the best termination (:mod:`oneport.analysis.terminations`) → a frozen
:class:`~oneport.analysis.terminations.TerminationsResult`. It never prints, plots or exits.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from ..analysis.terminations import TerminationsResult, analyse_terminations
from ..errors import InputError
from ..reading.touchstone import Multiport
from .options import frequency, given_grid, parameters, positive_resistance


def terminations(
    device: Any,
    at_hz: float | str,
    *,
    terminated_port: int = 2,
    frequency_hz: Any = None,
    params: Any = None,
    reference_impedance_ohm: float | str | None = None,
) -> TerminationsResult:
    """Which passive terminations of port ``terminated_port`` make the other port negative?

    Parameters
    ----------
    device : path, Multiport, skrf.Network or Circuit
        The two-port: a Touchstone file (``.s2p``, 2.x ``.ts``), a network in memory, or a
        netlist (``.cir`` path or :class:`oneport.circuit.Circuit`) evaluated on
        ``frequency_hz``.
    at_hz : float or str
        The frequency of the stability circle and the best termination (Hz, ``"8GHz"``).
    terminated_port : int
        1 or 2 (default 2): the port whose termination varies; the other is observed.
    frequency_hz : array_like, optional
        A netlist's grid, Hz (:func:`oneport.frequency_grid`); data bring their own.
    params : mapping or sequence of str, optional
        A netlist's parameter overrides (``{"gm": 0.05}`` or ``["gm=50m"]``).
    reference_impedance_ohm : float or str, optional
        The reference of a netlist's S-parameters (default 50 Ω); a Touchstone file's data
        keep their own.

    Returns
    -------
    TerminationsResult

    Examples
    --------
    >>> import oneport
    >>> result = oneport.terminations("touchstone_examples/circuits/transistor.s2p", "10GHz")
    >>> result.observed_port, result.negative_fraction > 0
    (1, True)
    """
    at = frequency(at_hz, "--at")
    if isinstance(terminated_port, bool) or terminated_port not in (1, 2):
        raise InputError(f"--terminated-port {terminated_port!r}: give 1 or 2")
    return analyse_terminations(
        _two_port(device, frequency_hz, params, reference_impedance_ohm),
        at,
        terminated_port=terminated_port,
    )


def _two_port(device: Any, frequency_hz: Any, params: Any, reference: Any) -> Multiport:
    """The two-port as a :class:`Multiport`, whichever way it was given."""
    from .pair import as_circuit

    ohms = positive_resistance(reference, "--reference-impedance")
    circuit = None if isinstance(device, Multiport) else as_circuit(device)
    if circuit is None:
        if frequency_hz is not None or params or ohms is not None:
            raise InputError(
                "--start, --stop, --param and --reference-impedance apply to netlists (.cir)"
                " only; a Touchstone file's data keep their own reference"
            )
        if isinstance(device, Multiport):
            return device
        if isinstance(device, str | Path):
            from ..reading.touchstone import read_touchstone

            return read_touchstone(device)
        if hasattr(device, "s") and hasattr(device, "z0"):
            from ..reading.touchstone import multiport_from_network

            return multiport_from_network(device)
        raise InputError(
            f"terminations: {device!r} is no two-port; give a Touchstone path, a scikit-rf"
            " Network, a Multiport or a netlist"
        )
    grid = given_grid(frequency_hz)
    if grid is None:
        raise InputError(f"{circuit.source}: a netlist needs --start and --stop for its grid")
    from ..circuit import multiport_from_circuit

    return multiport_from_circuit(device, grid, 50.0 if ohms is None else ohms, parameters(params))
