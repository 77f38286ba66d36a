"""The :class:`Circuit`: elements, named parameters and ports, evaluated over frequency.

A circuit is built element by element (the builder methods return the circuit, so calls chain)
or read from a netlist (:func:`oneport.circuit.read_circuit`). Evaluation resolves parameter
values (arrays broadcast to leading axes), plans the equations once per circuit
(:mod:`~oneport.circuit.topology`) and hands them to :mod:`~oneport.circuit.engine`. This room
checks values and shapes; it never prints.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import FileFormatError, InputError
from . import engine
from .blocks import interpolate_block, read_block_file
from .elements import (
    Block,
    Capacitor,
    Element,
    Inductor,
    Line,
    OpAmp,
    Resistor,
    Rule,
    Transconductance,
    compact,
)
from .ladder import LadderNode, reduce_ladder
from .topology import GROUND, Plan, Port, plan, validate
from .values import ParameterReference, ValueSpec, ValueTokenError, is_name, parse_value

Value = float | str


@dataclass(frozen=True)
class ResolvedValues:
    """Element values with parameters substituted, for every parameter set.

    Attributes
    ----------
    values : dict of str to dict
        Per element name, its values: floats, or arrays of shape (variants, 1) for parameters
        given as arrays.
    variants : int
        Number of parameter sets (1 when every parameter is a single value).
    lead : tuple of int
        The parameters' broadcast shape (``()`` for single values).
    describe : callable
        ``describe(variant)`` names a parameter set for messages (empty for one set).
    """

    values: dict[str, dict[str, Any]]
    variants: int
    lead: tuple[int, ...]
    describe: Callable[[int], str]


class Circuit:
    """A linear circuit with one or two ports, evaluated over frequency.

    Parameters
    ----------
    source : str
        Where the circuit came from (a file path or a description), used in messages.

    Examples
    --------
    A series RLC load and its reflection at resonance (Z = R):

    >>> circuit = (
    ...     Circuit("series RLC")
    ...     .resistor("R1", "1", "2", 25.0)
    ...     .inductor("L1", "2", "3", "10n")
    ...     .capacitor("C1", "3", "0", "C")
    ...     .parameter("C", 2.533e-12)
    ...     .port("1")
    ... )
    >>> resonance = 1 / (2 * np.pi * np.sqrt(10e-9 * 2.533e-12))
    >>> gamma = circuit.gamma(np.array([resonance]), 50.0)
    >>> bool(np.isclose(gamma[0], -1 / 3))
    True
    >>> circuit.gamma(np.array([resonance]), 50.0, C=[1e-12, 2.533e-12]).shape
    (2, 1)
    """

    def __init__(self, source: str = "circuit") -> None:
        self.source = source
        self._elements: dict[str, Element] = {}
        self._parameters: dict[str, tuple[str, float, int | None]] = {}
        self._ports: list[Port] = []
        self._plan: Plan | None = None
        self._compact_plan: Plan | None = None
        self._ladder: LadderNode | None = None

    # -- building -----------------------------------------------------------------------------

    def resistor(self, name: str, node_a: str, node_b: str, resistance: Value) -> Circuit:
        """Add a resistor (Ω; negative allowed, zero refused)."""
        return self.add(
            Resistor(name=name, nodes=_nodes(node_a, node_b), values=_v(resistance=resistance))
        )

    def inductor(
        self,
        name: str,
        node_a: str,
        node_b: str,
        inductance: Value,
        *,
        series_resistance: Value | None = None,
        quality_factor: Value | None = None,
    ) -> Circuit:
        """Add an inductor (H) with an optional series resistance (Ω) or constant Q."""
        values = _v(inductance=inductance, esr=series_resistance, q=quality_factor)
        return self.add(Inductor(name=name, nodes=_nodes(node_a, node_b), values=values))

    def capacitor(
        self,
        name: str,
        node_a: str,
        node_b: str,
        capacitance: Value,
        *,
        series_resistance: Value | None = None,
        quality_factor: Value | None = None,
    ) -> Circuit:
        """Add a capacitor (F) with an optional series resistance (Ω) or constant Q."""
        values = _v(capacitance=capacitance, esr=series_resistance, q=quality_factor)
        return self.add(Capacitor(name=name, nodes=_nodes(node_a, node_b), values=values))

    def transconductance(
        self,
        name: str,
        output_positive: str,
        output_negative: str,
        control_positive: str,
        control_negative: str,
        gm: Value,
    ) -> Circuit:
        """Add a current gm·(V(c+) − V(c−)) (S) from ``output_positive`` to ``output_negative``."""
        nodes = _nodes(output_positive, output_negative, control_positive, control_negative)
        return self.add(Transconductance(name=name, nodes=nodes, values=_v(gm=gm)))

    def line(
        self,
        name: str,
        port1_positive: str,
        port1_negative: str,
        port2_positive: str,
        port2_negative: str,
        *,
        characteristic_impedance: Value,
        length_m: Value | None = None,
        effective_permittivity: Value | None = None,
        delay_s: Value | None = None,
        loss_db: Value | None = None,
        loss_frequency_hz: Value | None = None,
    ) -> Circuit:
        """Add a TEM line by Z0 (Ω) and ``length_m``/``effective_permittivity`` or ``delay_s``.

        ``loss_db`` is the whole line's loss at ``loss_frequency_hz``, scaling as √f.
        """
        values = _v(
            z0=characteristic_impedance,
            len=length_m,
            eeff=effective_permittivity,
            delay=delay_s,
            loss=loss_db,
            at=loss_frequency_hz,
        )
        nodes = _nodes(port1_positive, port1_negative, port2_positive, port2_negative)
        return self.add(Line(name=name, nodes=nodes, values=values))

    def opamp(
        self,
        name: str,
        output: str,
        positive: str,
        negative: str,
        *,
        dc_gain: Value | None = None,
        gain_bandwidth_hz: Value | None = None,
    ) -> Circuit:
        """Add an op-amp, gain 1/(1/a0 + s/(2π·gbw)); ideal without either."""
        values = _v(a0=dc_gain, gbw=gain_bandwidth_hz)
        return self.add(OpAmp(name=name, nodes=_nodes(output, positive, negative), values=values))

    def block(
        self, name: str, nodes: Sequence[str], path: str | Path, *, reference: str = GROUND
    ) -> Circuit:
        """Add an N-port from a Touchstone file; port i between ``nodes[i]`` and ``reference``."""
        data = read_block_file(path, f"{self.source}: {name}")
        if len(nodes) != data.ports:
            raise InputError(
                f"{self.source}: {name}: {path} has {data.ports} ports but {len(nodes)} nodes"
                " were given"
            )
        all_nodes = _nodes(*nodes, reference)
        return self.add(Block(name=name, nodes=all_nodes, path=str(path), data=data))

    def parameter(self, name: str, default: float, *, line: int | None = None) -> Circuit:
        """Declare a named value that element values may refer to."""
        if not is_name(name):
            raise self.error(
                f"parameter name {name!r}: use a letter, then letters, digits, _", line
            )
        key = name.lower()
        if key in self._parameters:
            first = self._parameters[key][2]
            raise self.error(f"parameter {name} is set twice" + _first(first), line)
        if not math.isfinite(float(default)):
            raise self.error(f"parameter {name} = {default!r}: give a finite number", line)
        self._parameters[key] = (name, float(default), line)
        return self

    def port(self, node: str, reference: str = GROUND, *, line: int | None = None) -> Circuit:
        """Declare a port (the first is port 1; a second makes a two-port)."""
        if len(self._ports) == 2:
            raise self.error("a circuit has at most two ports", line)
        self._ports.append(
            Port(node=str(node).lower(), reference=str(reference).lower(), line=line)
        )
        self._plan = None
        return self

    def add(self, element: Element) -> Circuit:
        """Add an element built elsewhere (the parser uses this)."""
        key = element.name.lower()
        # Numbers are checked now (with their line); parameters when they are resolved.
        literal = {
            name: value for name, value in element.values.items() if isinstance(value, float)
        }
        _check_rules(self, element, literal, {}, (), together=len(literal) == len(element.values))
        if key in self._elements:
            raise self.error(
                f"{element.name} is defined twice" + _first(self._elements[key].line),
                element.line,
            )
        self._elements[key] = element
        self._plan = None
        return self

    # -- queries ------------------------------------------------------------------------------

    @property
    def parameters(self) -> dict[str, float]:
        """Parameter names (as declared) and their default values."""
        return {name: value for name, value, _ in self._parameters.values()}

    @property
    def elements(self) -> tuple[Element, ...]:
        """The elements, in the order added."""
        return tuple(self._elements.values())

    @property
    def ports(self) -> tuple[Port, ...]:
        """The ports, in order."""
        return tuple(self._ports)

    @property
    def plan(self) -> Plan:
        """The planned equations (unknowns, placements, elimination order); validates first."""
        self.validate()
        assert self._plan is not None
        return self._plan

    @property
    def is_series_parallel(self) -> bool:
        """Whether the closed-form ladder path applies (an R/L/C series–parallel one-port)."""
        self.validate()
        return self._ladder is not None

    def error(self, problem: str, line: int | None = None) -> InputError:
        """The error to raise for ``problem``: names the file and line when known."""
        if line is not None:
            return FileFormatError(self.source, problem, line)
        return InputError(f"{self.source}: {problem}")

    def validate(self) -> None:
        """Check parameters, topology and solvability; plan the equations (done once)."""
        if self._plan is not None:
            return
        elements = self.elements
        for element in elements:
            for key, spec in element.values.items():
                if (
                    isinstance(spec, ParameterReference)
                    and spec.name.lower() not in self._parameters
                ):
                    known = ", ".join(self.parameters) or "none"
                    raise self.error(
                        f"{element.name}: unknown parameter {spec.name!r} in {key}=; declare it"
                        f" with '.set {spec.name}=VALUE' (known: {known})",
                        element.line,
                    )
        validate(elements, self._ports, self.error)
        self._plan = plan(elements, self._ports, self.error)
        self._compact_plan = _compact_plan(elements, self._ports, self._plan)
        self._ladder = reduce_ladder(elements, self._ports)

    # -- evaluation ---------------------------------------------------------------------------

    def gamma(
        self, frequency_hz: Any, reference_impedance_ohm: float = 50.0, **params: Any
    ) -> np.ndarray:
        """Reflection coefficient of a one-port circuit.

        Parameters
        ----------
        frequency_hz : array_like of float, shape (n,)
            Non-negative frequencies, Hz.
        reference_impedance_ohm : float
            Real, positive Z0, Ω.
        **params : float or array_like
            Parameter values by name (case ignored); arrays broadcast together to a leading
            shape.

        Returns
        -------
        ndarray of complex, shape (..., n)
            Γ referred to ``reference_impedance_ohm``; the leading shape is the broadcast
            shape of the array parameters (none for scalars).
        """
        self.validate()
        if len(self._ports) != 1:
            raise self.error("has two ports; use s_parameters() (gamma is for one-ports)")
        return self.s_parameters(frequency_hz, reference_impedance_ohm, **params)[..., 0, 0, :]

    def s_parameters(
        self,
        frequency_hz: Any,
        reference_impedance_ohm: float | Sequence[float] = 50.0,
        **params: Any,
    ) -> np.ndarray:
        """S-parameters, shape (..., p, p, n), referred to a real Z0 per port.

        Parameters are as for :meth:`gamma`; ``reference_impedance_ohm`` may give one value
        per port.
        """
        return self.evaluate(frequency_hz, reference_impedance_ohm, params)

    def evaluate(
        self,
        frequency_hz: Any,
        reference_impedance_ohm: float | Sequence[float],
        params: Mapping[str, Any],
        *,
        method: str = "auto",
    ) -> np.ndarray:
        """S-parameters as :meth:`s_parameters`, choosing the solution method.

        ``method`` is ``"auto"`` (the closed form for series–parallel R/L/C one-ports,
        elimination otherwise) or ``"elimination"`` (always; for checks and timing).
        """
        if method not in ("auto", "elimination"):
            raise InputError(f"method {method!r}: accepted: auto, elimination")
        self.validate()
        assert self._plan is not None
        frequency = _frequency_grid(frequency_hz, self.source)
        references = self._references(reference_impedance_ohm)
        resolved = self.resolve(params)
        prepared = {
            element.name: interpolate_block(
                element.data, frequency, f"{self.source}: {element.where()}"
            )
            for element in self.elements
            if isinstance(element, Block)
        }
        problem = engine.Problem(
            plan=self._plan,
            compact_plan=self._compact_plan,
            ladder=self._ladder,
            values=resolved.values,
            variants=resolved.variants,
            prepared=prepared,
            describe=resolved.describe,
            source=self.source,
            force_elimination=method == "elimination",
        )
        result = engine.scattering(problem, frequency, references)
        ports = len(self._ports)
        return result.reshape(*resolved.lead, ports, ports, frequency.size)

    def natural_frequencies(self, termination_ohm: float = math.inf, **params: float) -> np.ndarray:
        """Natural frequencies s (1/s) with every port terminated in ``termination_ohm``.

        See :func:`oneport.circuit.natural.natural_frequencies`.
        """
        from .natural import natural_frequencies

        return natural_frequencies(self, termination_ohm, **params)

    # -- helpers ------------------------------------------------------------------------------

    def _references(self, reference_impedance_ohm: float | Sequence[float]) -> np.ndarray:
        references = np.atleast_1d(np.asarray(reference_impedance_ohm, dtype=float))
        if references.size == 1:
            references = np.repeat(references, len(self._ports))
        if references.shape != (len(self._ports),) or not np.all(
            np.isfinite(references) & (references > 0)
        ):
            raise InputError(
                f"{self.source}: reference impedance {reference_impedance_ohm!r}: give one real,"
                f" positive value in ohms (or one per port, {len(self._ports)})"
            )
        return references

    def resolve(self, params: Mapping[str, Any]) -> ResolvedValues:
        """Element values for every parameter set, checked against each element's rules."""
        given = _given_parameters(self, params)
        lead = np.broadcast_shapes(*(value.shape for value in given.values())) if given else ()
        variants = math.prod(lead)
        flat: dict[str, Any] = {}
        for key, (_, default, _) in self._parameters.items():
            if key in given and lead:
                flat[key] = np.broadcast_to(given[key], lead).reshape(-1, 1)
            elif key in given:
                flat[key] = float(given[key])
            else:
                flat[key] = default
        values: dict[str, dict[str, Any]] = {}
        for element in self.elements:
            resolved = {key: _substitute(spec, flat) for key, spec in element.values.items()}
            _check_rules(self, element, resolved, flat, lead)
            values[element.name] = resolved
        return ResolvedValues(values, variants, lead, _describer(self, flat, lead))


class _NoCompactPlan(Exception):
    pass


def _compact_plan(elements: Sequence[Element], ports: Sequence[Port], full: Plan) -> Plan | None:
    """The plan with inductors (and lossy capacitors) as admittances, if it is smaller."""
    compacted = [compact(element) for element in elements]
    if sum(element.branches for element in compacted) == sum(e.branches for e in elements):
        return None

    def refuse(problem: str, line: int | None) -> Exception:
        return _NoCompactPlan(problem)

    try:
        return plan(compacted, ports, refuse)
    except _NoCompactPlan:
        return None


def _v(**values: Value | None) -> dict[str, ValueSpec]:
    """Builder values: numbers stay, strings are parsed as netlist values (``"3.3n"``, ``"RD"``)."""
    specs: dict[str, ValueSpec] = {}
    for key, value in values.items():
        if value is None:
            continue
        if isinstance(value, str):
            try:
                specs[key] = parse_value(value)
            except ValueTokenError as error:
                raise InputError(f"{key}: {error}") from None
        else:
            specs[key] = float(value)
    return specs


def _nodes(*nodes: str) -> tuple[str, ...]:
    return tuple(str(node).lower() for node in nodes)


def _first(line: int | None) -> str:
    return f" (first on line {line})" if line is not None else ""


def _frequency_grid(frequency_hz: Any, source: str) -> np.ndarray:
    frequency = np.asarray(frequency_hz, dtype=float)
    if frequency.ndim != 1 or frequency.size == 0:
        raise InputError(f"{source}: frequency_hz must be a 1-D array of frequencies in Hz")
    if not np.all(np.isfinite(frequency)) or np.any(frequency < 0):
        raise InputError(f"{source}: frequencies must be finite and >= 0 Hz")
    return frequency


def _given_parameters(circuit: Circuit, params: Mapping[str, Any]) -> dict[str, np.ndarray]:
    given: dict[str, np.ndarray] = {}
    declared = circuit._parameters
    for name, value in params.items():
        key = name.lower()
        if key not in declared:
            known = ", ".join(circuit.parameters) or "none"
            raise InputError(f"{circuit.source}: unknown parameter {name!r}; known: {known}")
        array = np.asarray(value)
        if array.dtype.kind not in "iuf" or not np.all(np.isfinite(array)):
            raise InputError(
                f"{circuit.source}: parameter {name} = {value!r}: give real, finite numbers"
            )
        given[key] = array.astype(float)
    return given


def _substitute(spec: ValueSpec, flat: Mapping[str, Any]) -> Any:
    if isinstance(spec, ParameterReference):
        value = flat[spec.name.lower()]
        return -value if spec.negate else value
    return spec


def _check_rules(
    circuit: Circuit,
    element: Element,
    resolved: Mapping[str, Any],
    flat: Mapping[str, Any],
    lead: tuple[int, ...],
    together: bool = True,
) -> None:
    """Refuse the first value (of any parameter set) outside its element's rules; with
    ``together``, ``resolved`` holds all the element's values, checked in combination too."""
    describe = _describer(circuit, flat, lead)
    for key, value in resolved.items():
        rule = element.rules.get(key, Rule())
        broken = np.ravel(rule.broken(value))
        if broken.any():
            index = int(np.flatnonzero(broken)[0])
            shown = float(np.ravel(np.asarray(value, dtype=float))[index])
            # Short, unless rounding would hide what broke the rule (1000.0000000005 H > 1000 H).
            text = f"{shown:g}" if float(f"{shown:g}") == shown else repr(shown)
            unit = f" {rule.unit}" if rule.unit else ""
            where = describe(index) if broken.size > 1 else ""
            raise circuit.error(
                f"{element.name}: {key} = {text}{unit}{where}; it must be {rule.accepted()}",
                element.line,
            )
    combination = element.combination_problem(dict(resolved)) if together else None
    if combination is not None and np.any(combination[0]):
        broken = np.ravel(combination[0])
        where = describe(int(np.flatnonzero(broken)[0])) if broken.size > 1 else ""
        raise circuit.error(f"{element.name}: {combination[1]}{where}", element.line)


def _describer(
    circuit: Circuit, flat: Mapping[str, Any], lead: tuple[int, ...]
) -> Callable[[int], str]:
    varied = [key for key, value in flat.items() if isinstance(value, np.ndarray)]

    def describe(variant: int) -> str:
        if not varied:
            return ""
        position = np.unravel_index(variant, lead) if lead else ()
        names = ", ".join(
            f"{circuit._parameters[key][0]}={float(flat[key][variant, 0]):g}" for key in varied
        )
        return f" (parameter set {tuple(int(i) for i in position)}: {names})"

    return describe
