"""Circuit descriptions: device and load one-ports (and two-ports) from netlists.

A small netlist (one element per line, SI suffixes, node ``0`` is ground; see
``docs/netlist.md``) or the builder API describes R, L, C, transconductances, TEM lines,
op-amps and Touchstone blocks. :meth:`Circuit.gamma` evaluates the reflection by modified nodal
analysis vectorised over (parameter sets × frequencies), or by a closed form for series–parallel
R/L/C one-ports; :func:`one_port_from_circuit` gives a :class:`~oneport.reading.touchstone.OnePort`
for ``oneport check``.

Examples
--------
>>> import numpy as np
>>> from oneport.circuit import Circuit
>>> tank = Circuit("tank").inductor("L1", "1", "0", "10n").capacitor("C1", "1", "0", "1p")
>>> tank = tank.resistor("R1", "1", "0", "R").parameter("R", 200.0).port("1")
>>> tank.gamma(np.linspace(1e9, 2e9, 5), 50.0, R=[100.0, 200.0, 400.0]).shape
(3, 5)
"""

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from .conversion import (
        CIRCUIT_SUFFIXES,
        is_circuit_path,
        multiport_from_circuit,
        one_port_from_circuit,
    )
    from .model import Circuit
    from .netlist import parse_circuit, read_circuit
    from .topology import Port
    from .writer import touchstone_text, write_touchstone

#: Where each public name lives. They are imported on first use, so that asking whether a
#: path is a netlist (``is_circuit_path``) does not load the engine.
_HOMES = {
    "CIRCUIT_SUFFIXES": "conversion",
    "is_circuit_path": "conversion",
    "multiport_from_circuit": "conversion",
    "one_port_from_circuit": "conversion",
    "Circuit": "model",
    "parse_circuit": "netlist",
    "read_circuit": "netlist",
    "Port": "topology",
    "touchstone_text": "writer",
    "write_touchstone": "writer",
}

__all__ = [
    "CIRCUIT_SUFFIXES",
    "Circuit",
    "Port",
    "is_circuit_path",
    "multiport_from_circuit",
    "one_port_from_circuit",
    "parse_circuit",
    "read_circuit",
    "touchstone_text",
    "write_touchstone",
]


def __getattr__(name: str) -> Any:
    if name not in _HOMES:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    import importlib

    value = getattr(importlib.import_module(f".{_HOMES[name]}", __name__), name)
    globals()[name] = value
    return value
