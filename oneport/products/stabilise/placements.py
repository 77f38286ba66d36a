"""Where a stabilising network goes, and the changed load it makes, in each form it is needed.

A placement is a family at a position: at the device's port (the four families of
:mod:`.families`, on any load) or, for a netlist load, a resistor from a named node to ground or
in series with a named element (``--at-node``). Each gives the changed load's reflection for
many candidate values at once on the analysis grid (for the scan), the changed load as the
check takes it (for the verification: the measured load with the network added on its own grid,
or the netlist with the elements added), the reflection gain of the device with a port network
absorbed (for a reflection amplifier's cost) and the load's DC resistance after the change.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ...errors import InputError
from . import families
from .adapter import PreparedPair
from .families import CAPACITANCE, INDUCTANCE, RESISTANCE, Family

#: Names given to the added elements' values inside a changed netlist.
_PARAMETER_NAMES = {RESISTANCE: "STAB_R", CAPACITANCE: "STAB_C", INDUCTANCE: "STAB_L"}
_ELEMENT_LETTERS = {RESISTANCE: "R", CAPACITANCE: "C", INDUCTANCE: "L"}


@dataclass(frozen=True)
class Position:
    """Where the network sits: ``kind`` is ``device-port``, ``node`` or ``element``."""

    kind: str
    name: str | None = None

    def describe(self) -> str:
        """For people: "at the device's port", "from node v to ground", "in series with Lch"."""
        if self.kind == "device-port":
            return "at the device's port"
        if self.kind == "node":
            return f"from node {self.name} to ground"
        return f"in series with {self.name}"

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {"kind": self.kind, "name": self.name, "description": self.describe()}


@dataclass(frozen=True)
class Placement:
    """A family at a position, bound to the prepared pair it changes."""

    family: Family
    position: Position
    pair: PreparedPair = field(repr=False)
    circuit: Any = field(default=None, repr=False)  # the changed load netlist, values as params

    @property
    def topology(self) -> str:
        """The family's name."""
        return self.family.name

    @property
    def elements(self) -> tuple[str, ...]:
        """The added elements' value keys."""
        return self.family.elements

    @property
    def at_port(self) -> bool:
        """True for a network at the device's port."""
        return self.position.kind == "device-port"

    def changed_loads(
        self, values: dict[str, np.ndarray], parameters: dict[str, np.ndarray] | None = None
    ) -> np.ndarray:
        """ΓL' on the analysis grid for every candidate, shape (V, n).

        ``values`` maps element keys to candidate arrays (V,); ``parameters`` optionally gives
        netlist parameters per candidate (a Monte Carlo over the load's tolerances).
        """
        pair = self.pair
        z0 = pair.reference_impedance_ohm
        if self.at_port:
            base: np.ndarray = pair.gamma_load
            if parameters:
                base = pair.load_circuit.gamma(pair.frequency_hz, z0, **_columns(parameters))
            return families.add_network(base, self.family, pair.frequency_hz, values, z0)
        given = {_PARAMETER_NAMES[key]: value for key, value in values.items()}
        given.update(parameters or {})
        return np.asarray(self.circuit.gamma(pair.frequency_hz, z0, **_columns(given)))

    def probe(
        self, values: dict[str, np.ndarray], parameters: dict[str, np.ndarray] | None = None
    ) -> Any:
        """The changed load of each candidate evaluated at any frequencies, as the judgement asks
        between the analysis grid's samples (``Facts.load_probe``): what the added network does
        between samples is then seen, not mistaken for a hidden feature of the load."""
        pair = self.pair
        from ..pair import NetlistProbe

        z0 = pair.reference_impedance_ohm
        count = max(np.asarray(v).size for v in values.values())
        if not self.at_port:
            given = {_PARAMETER_NAMES[key]: value for key, value in values.items()}
            given.update(parameters or {})
            return NetlistProbe(self.circuit, z0, _per_candidate(given, count))
        base: Any
        if pair.load_circuit is not None:
            base = NetlistProbe(pair.load_circuit, z0, _per_candidate(parameters or {}, count))
        else:
            # A measured load is taken linearly between the analysis samples, as everywhere
            # else; the network added to it is exact. (Its own hidden features were judged on
            # its own grid by the check of the pair as given: with any at stake there is no
            # advice.)
            base = _interpolated(pair.frequency_hz, pair.gamma_load)
        chosen = _per_candidate(values, count)

        def changed(rows: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
            gamma = base(rows, frequency_hz)
            result = np.empty_like(gamma)
            grids, group = np.unique(frequency_hz, axis=0, return_inverse=True)
            for index, grid in enumerate(grids):
                members = np.flatnonzero(group.reshape(-1) == index)
                picked = {key: value[rows[members]] for key, value in chosen.items()}
                result[members] = families.add_network(
                    gamma[members], self.family, grid, picked, z0
                )
            return result

        return changed

    def amplifier_gamma(self, values: dict[str, np.ndarray], columns: np.ndarray) -> Any:
        """Γ of the device with a port network absorbed, at grid ``columns`` (None elsewhere)."""
        if not self.at_port:
            return None
        pair = self.pair
        return families.add_network(
            pair.gamma_device[columns],
            self.family,
            pair.frequency_hz[columns],
            values,
            pair.reference_impedance_ohm,
        )

    def load_dc_resistance(
        self,
        values: dict[str, np.ndarray],
        original_ohm: float | None,
        parameters: dict[str, np.ndarray] | None = None,
    ) -> np.ndarray | None:
        """The changed load's DC resistance per candidate (Ω), when the user gave DC facts.

        At the port it follows from the stated DC resistance; inside a netlist it is the changed
        netlist's own resistance at 0 Hz.
        """
        if original_ohm is None:
            return None
        if self.at_port:
            return families.dc_resistance_after(self.family, values, original_ohm)
        given = {_PARAMETER_NAMES[key]: value for key, value in values.items()}
        given.update(parameters or {})
        z0 = self.pair.reference_impedance_ohm
        gamma = np.asarray(self.circuit.gamma(np.array([0.0]), z0, **_columns(given)))[..., 0]
        with np.errstate(divide="ignore", invalid="ignore"):
            resistance = (z0 * (1.0 + gamma) / (1.0 - gamma)).real
        return np.where(np.abs(1.0 - gamma) < 1e-12, np.inf, resistance)

    def changed_load_source(self, values: dict[str, float]) -> Any:
        """The changed load as the check takes it, for one set of values."""
        from ...reading.preparation import PreparedPort

        pair = self.pair
        if pair.load_circuit is not None:
            circuit = self.circuit if self.circuit is not None else port_circuit(self)
            return _with_values(circuit, values)
        # The network is added on the analysis grid, to the load as the check aligned it
        # (interpolated, in Z0): the verification judges exactly what the scan judged. Foster's
        # test then runs on that grid; on the load's own grid it already ran for the original
        # pair, and whether a hidden resonance is at stake depends on the device alone.
        load = pair.load_source
        z0 = pair.reference_impedance_ohm
        gamma = families.add_network(pair.gamma_load, self.family, pair.frequency_hz, values, z0)
        step = f"{self.describe(values)} added {self.position.describe()}"
        changed = replace(
            pair.load_port,
            frequency_hz=pair.frequency_hz,
            gamma=np.asarray(gamma),
            reference_impedance_ohm=z0,
        )
        steps = (f"on the analysed grid in {z0:g} ohm", step)
        if isinstance(load, PreparedPort):
            return replace(load, one_port=changed, steps=(*load.steps, *steps))
        return PreparedPort(changed, steps)

    def describe(self, values: dict[str, float]) -> str:
        """``series R 12 ohm``, ``shunt R-C 47 ohm, 100 pF``."""
        from .wording import format_element, topology_words

        parts = [format_element(key, values[key]) for key in self.elements]
        return f"{topology_words(self.topology)} {', '.join(parts)}"


def port_placements(pair: PreparedPair, names: tuple[str, ...]) -> list[Placement]:
    """The port families asked for, each bound to the pair (and, for a netlist load, built as a
    changed netlist so the verification counts its natural frequencies)."""
    placements = []
    for name in names:
        placement = Placement(families.family(name), Position("device-port"), pair)
        if pair.load_circuit is not None:
            placement = replace(placement, circuit=port_circuit(placement))
        placements.append(placement)
    return placements


def node_placement(pair: PreparedPair, name: str) -> Placement:
    """``--at-node NAME``: a resistor from node NAME to ground, or in series with element NAME.

    ``node:NAME`` and ``element:NAME`` say which when a node and an element share a name.
    """
    circuit = pair.load_circuit
    if circuit is None:
        raise InputError(
            f"--at-node {name}: the load is not a netlist; a node or element can only be named"
            " in a .cir load"
        )
    kind, _, bare = name.partition(":") if ":" in name else ("", "", name)
    key = bare.lower()
    nodes = {node for element in circuit.elements for node in element.nodes} - {"0"}
    elements = {element.name.lower(): element for element in circuit.elements}
    is_node, is_element = key in nodes, key in elements
    if kind not in ("", "node", "element"):
        raise InputError(f"--at-node {name!r}: write NAME, node:NAME or element:NAME")
    if kind == "" and is_node and is_element:
        raise InputError(
            f"--at-node {name}: {bare} is both a node and an element of {circuit.source}; write"
            f" node:{bare} or element:{bare}"
        )
    if kind == "node" or (kind == "" and is_node):
        if not is_node:
            raise InputError(_unknown(name, circuit.source, "node", nodes))
        family = families.family("shunt-resistor")
        position = Position("node", bare)
        placement = Placement(family, position, pair)
        return replace(placement, circuit=_changed_netlist(placement, circuit, key))
    if not is_element:
        raise InputError(_unknown(name, circuit.source, "node or element", nodes | set(elements)))
    element = elements[key]
    if element.kind not in ("resistor", "inductor", "capacitor"):
        raise InputError(
            f"--at-node {name}: {element.name} is not a two-terminal R, L or C; a resistor can be"
            " put in series with those only"
        )
    position = Position("element", element.name)
    placement = Placement(families.family("series-resistor"), position, pair)
    return replace(placement, circuit=_changed_netlist(placement, circuit, key))


def _unknown(name: str, source: str, what: str, known: set[str]) -> str:
    listed = ", ".join(sorted(known)) or "none"
    return f"--at-node {name}: {source} has no {what} of that name (known: {listed})"


def port_circuit(placement: Placement) -> Any:
    """The load netlist with the port network added; its values are parameters STAB_R, …"""
    original = placement.pair.load_circuit
    (port,) = original.ports
    names = _parameter_names(original)
    circuit = _copy(original, f"{original.source} + {placement.topology} at the port")
    for key in placement.elements:
        circuit.parameter(names[key], 1.0)
    outer = _fresh_node(original, "stab_port")
    inner = _fresh_node(original, "stab_mid")
    value = {key: names[key] for key in placement.elements}
    name = placement.topology
    if name == "series-resistor":
        circuit.resistor("Rstab", outer, port.node, value[RESISTANCE]).port(outer, port.reference)
        return circuit
    if name == "series-rl":
        circuit.resistor("Rstab", outer, port.node, value[RESISTANCE])
        circuit.inductor("Lstab", outer, port.node, value[INDUCTANCE])
        return circuit.port(outer, port.reference)
    if name == "shunt-resistor":
        circuit.resistor("Rstab", port.node, port.reference, value[RESISTANCE])
    else:
        circuit.resistor("Rstab", port.node, inner, value[RESISTANCE])
        circuit.capacitor("Cstab", inner, port.reference, value[CAPACITANCE])
    return circuit.port(port.node, port.reference)


def _changed_netlist(placement: Placement, original: Any, key: str) -> Any:
    """The load netlist with a resistor STAB_R from node ``key`` to ground, or in series with
    the element named ``key`` (its second terminal moved to a new node)."""
    names = _parameter_names(original)
    resistance = names[RESISTANCE]
    where = placement.position.describe()
    circuit = _copy(original, f"{original.source} + resistor {where}", skip=key)
    circuit.parameter(resistance, 1.0)
    if placement.position.kind == "node":
        circuit.resistor("Rstab", key, "0", resistance)
    else:
        element = next(e for e in original.elements if e.name.lower() == key)
        middle = _fresh_node(original, "stab_mid")
        circuit.add(replace(element, nodes=(element.nodes[0], middle)))
        circuit.resistor("Rstab", middle, element.nodes[1], resistance)
    (port,) = original.ports
    return circuit.port(port.node, port.reference)


def _copy(original: Any, source: str, skip: str | None = None) -> Any:
    """A new circuit with the original's parameters and elements (all but ``skip``), no port."""
    from ...circuit import Circuit

    if len(original.ports) != 1:
        raise InputError(f"{original.source}: a load netlist must be a one-port (.oneport)")
    circuit = Circuit(source)
    for name, value in original.parameters.items():
        circuit.parameter(name, value)
    taken = {element.name.lower() for element in original.elements}
    if {"rstab", "cstab", "lstab"} & taken:
        raise InputError(
            f"{original.source}: element names Rstab, Cstab and Lstab are used by the stabilising"
            " network; rename them in the netlist"
        )
    for element in original.elements:
        if element.name.lower() != skip:
            circuit.add(element)
    return circuit


def _parameter_names(original: Any) -> dict[str, str]:
    taken = {name.lower() for name in original.parameters}
    clash = [name for name in _PARAMETER_NAMES.values() if name.lower() in taken]
    if clash:
        raise InputError(
            f"{original.source}: parameter name(s) {', '.join(clash)} are used by the stabilising"
            " network; rename them in the netlist"
        )
    return dict(_PARAMETER_NAMES)


def _fresh_node(original: Any, stem: str) -> str:
    nodes = {node for element in original.elements for node in element.nodes}
    name, index = stem, 1
    while name in nodes:
        index += 1
        name = f"{stem}{index}"
    return name


def _with_values(circuit: Any, values: dict[str, float]) -> Any:
    """A copy of the changed netlist with the added elements' parameters set to ``values``."""
    from ...circuit import Circuit

    copy = Circuit(circuit.source)
    wanted = {_PARAMETER_NAMES[key].lower(): value for key, value in values.items()}
    for name, default in circuit.parameters.items():
        copy.parameter(name, float(wanted.get(name.lower(), default)))
    for element in circuit.elements:
        copy.add(element)
    (port,) = circuit.ports
    return copy.port(port.node, port.reference)


def _columns(values: dict[str, Any]) -> dict[str, Any]:
    """Parameter arrays (V,) as the netlist takes them: they broadcast to the leading shape."""
    return {name: np.asarray(value, dtype=float) for name, value in values.items()}


def _per_candidate(values: dict[str, Any], count: int) -> dict[str, np.ndarray]:
    """Values as one float per candidate (a scalar repeated)."""
    return {
        key: np.broadcast_to(np.asarray(value, dtype=float), (count,))
        for key, value in values.items()
    }


def _interpolated(frequency_hz: np.ndarray, gamma: np.ndarray) -> Any:
    """A load known on the analysis grid, taken linearly between its samples, as a probe."""

    def between(rows: np.ndarray, at_hz: np.ndarray) -> np.ndarray:
        from ...reading.alignment import interpolate

        flat = np.asarray(at_hz, dtype=float).reshape(-1)
        order = np.argsort(flat)
        values = np.empty(flat.size, dtype=complex)
        values[order] = interpolate(frequency_hz, gamma, flat[order])
        return values.reshape(np.shape(at_hz))

    return between
