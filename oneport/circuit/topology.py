"""Check a circuit's connectivity and plan its equations once, before any number is computed.

This room turns elements and ports into a :class:`Plan`: the order of the unknowns (node
voltages and branch currents, the port nodes last so that back-substitution stops early), the
sparsity of the equations, and a symbolic elimination that lists, column by column, which rows
may be chosen as pivot and which entries fill in. It also refuses circuits whose topology cannot
work: floating nodes, dangling two-terminal elements, elements joined to themselves, missing,
doubled or shorted ports, and equations that are singular whatever the values.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .elements import Block, Capacitor, Element, Inductor, Resistor, StampContext

GROUND = "0"
_TWO_TERMINAL = (Resistor, Inductor, Capacitor)

#: ``fail(problem, line)`` raises the right error for the circuit's source.
Failure = Callable[[str, int | None], Exception]


@dataclass(frozen=True)
class Port:
    """A port: the voltage between ``node`` and ``reference``, current into ``node``."""

    node: str
    reference: str = GROUND
    line: int | None = None

    def __str__(self) -> str:
        return self.node if self.reference == GROUND else f"{self.node}-{self.reference}"


@dataclass(frozen=True)
class EliminationStep:
    """Column ``column``: pivot rows to choose from, rows to update, entries that change."""

    column: int
    rows: tuple[int, ...]
    columns: tuple[int, ...]


@dataclass(frozen=True)
class Plan:
    """The equations' layout: unknowns, where each element and port writes, elimination order.

    Attributes
    ----------
    size : int
        Number of unknowns N (node voltages and branch currents).
    unknowns : tuple of str
        What each unknown is, for messages (``"the voltage of node 3"``).
    placements : tuple of (Element, node indices, branch indices)
        Matrix indices of each element's terminals (None for ground) and branch currents.
    ports : tuple of (int or None, int or None)
        Indices of each port's node and reference.
    solved : int
        How many trailing unknowns back-substitution must find (the port nodes).
    row_position : tuple of int
        Where each equation goes in the matrix, so every diagonal entry is structurally
        nonzero (a matching of equations to unknowns).
    entries : tuple of (int, int)
        Every matrix position that can be nonzero at any stage (stamps and fill-in); the rest
        are never read.
    steps : tuple of EliminationStep
        The symbolic elimination, one step per column.
    """

    size: int
    unknowns: tuple[str, ...]
    placements: tuple[tuple[Element, tuple[int | None, ...], tuple[int, ...]], ...]
    ports: tuple[tuple[int | None, int | None], ...]
    solved: int
    steps: tuple[EliminationStep, ...]
    row_position: tuple[int, ...]
    entries: tuple[tuple[int, int], ...]


def validate(elements: Sequence[Element], ports: Sequence[Port], fail: Failure) -> None:
    """Refuse circuits that cannot be solved for topological reasons (raises via ``fail``)."""
    _check_ports(elements, ports, fail)
    for element in elements:
        if isinstance(element, _TWO_TERMINAL) and element.nodes[0] == element.nodes[1]:
            raise fail(
                f"{element.name} joins node {element.nodes[0]} to itself; give two different nodes",
                element.line,
            )
    _check_floating(elements, fail)
    _check_dangling(elements, ports, fail)


def _check_ports(elements: Sequence[Element], ports: Sequence[Port], fail: Failure) -> None:
    if not ports:
        raise fail(
            "no port: add a line '.oneport NODE' naming the node the other side of the loop"
            " connects to (or '.twoport NODE NODE' for a two-port)",
            None,
        )
    used = {node for element in elements for node in element.nodes}
    for port in ports:
        if port.node == port.reference:
            raise fail(
                f"shorted port: the port's node and reference are both {port.node}; a port needs"
                " two different nodes (the reference defaults to ground 0)",
                port.line,
            )
        for node in (port.node, port.reference):
            if node != GROUND and node not in used:
                raise fail(f"port node {node} is not connected to any element", port.line)
    if len(ports) == 2 and {ports[0].node, ports[0].reference} == {
        ports[1].node,
        ports[1].reference,
    }:
        raise fail(
            f"shorted ports: both ports are across the same nodes {ports[0]}; give each port"
            " its own node",
            ports[1].line,
        )


def _check_floating(elements: Sequence[Element], fail: Failure) -> None:
    """Every node needs a current path to ground through elements."""
    parent: dict[str, str] = {}

    def root(node: str) -> str:
        parent.setdefault(node, node)
        while parent[node] != node:
            parent[node] = parent[parent[node]]
            node = parent[node]
        return node

    for element in elements:
        for node in element.nodes:
            root(node)
        for a, b in element.connections():
            parent[root(a)] = root(b)
    grounded = root(GROUND)
    for element in elements:
        for node in element.nodes:
            if root(node) != grounded:
                raise fail(
                    f"floating node {node} (at {element.name}): no element gives it a current"
                    " path to ground 0 (control inputs of G and op-amps draw no current);"
                    " connect it, e.g. by a large resistor to 0",
                    element.line,
                )


def _check_dangling(elements: Sequence[Element], ports: Sequence[Port], fail: Failure) -> None:
    """A node touched by one terminal of one R, L or C only is almost always a typing slip."""
    touches: dict[str, list[Element]] = {}
    for element in elements:
        for node in element.nodes:
            touches.setdefault(node, []).append(element)
    port_nodes = {node for port in ports for node in (port.node, port.reference)}
    for node, touching in touches.items():
        if node == GROUND or node in port_nodes or len(touching) != 1:
            continue
        element = touching[0]
        if isinstance(element, _TWO_TERMINAL):
            raise fail(
                f"dangling node {node}: only {element.name} touches it, so no current flows;"
                " connect the node or remove the element (open ends are for lines, T)",
                element.line,
            )


def plan(elements: Sequence[Element], ports: Sequence[Port], fail: Failure) -> Plan:
    """Order the unknowns, record the sparsity and the symbolic elimination."""
    port_nodes: list[str] = []
    for port in ports:
        for node in (port.node, port.reference):
            if node != GROUND and node not in port_nodes:
                port_nodes.append(node)
    inner_nodes: list[str] = []
    for element in elements:
        for node in element.nodes:
            if node != GROUND and node not in port_nodes and node not in inner_nodes:
                inner_nodes.append(node)
    names = [f"the voltage of node {node}" for node in inner_nodes]
    lines = [_first_line(elements, node) for node in inner_nodes]
    for element in elements:
        names += [f"a current of {element.name}"] * element.branches
        lines += [element.line] * element.branches
    inner = len(names)
    identity = list(range(inner))
    first = _layout(elements, ports, inner_nodes, port_nodes, identity)
    structure = _structure(first, len(ports))
    # Fewer fill-ins when sparse unknowns go first; the port nodes stay last.
    degree = structure[:inner, :inner].sum(axis=0) + structure[:inner, :inner].sum(axis=1)
    order = [0] * inner
    for new, old in enumerate(np.argsort(degree, kind="stable")):
        order[int(old)] = new
    layout = _layout(elements, ports, inner_nodes, port_nodes, order)
    unknowns = [""] * inner
    unknown_lines: list[int | None] = [None] * inner
    for old, new in enumerate(order):
        unknowns[new] = names[old]
        unknown_lines[new] = lines[old]
    unknowns += [f"the voltage of node {node}" for node in port_nodes]
    unknown_lines += [_first_line(elements, node) for node in port_nodes]
    structure = _structure(layout, len(ports))
    row_position = _match_equations(structure, unknowns, unknown_lines, fail)
    permuted = np.empty_like(structure)
    permuted[list(row_position)] = structure
    steps = _eliminate_symbolically(permuted, unknowns, unknown_lines, fail)
    touched = permuted.copy()
    for step in steps:
        for row in step.rows:
            touched[row, [step.column, *step.columns]] = True
    return Plan(
        size=len(unknowns),
        unknowns=tuple(unknowns),
        placements=layout[0],
        ports=layout[1],
        solved=len(port_nodes),
        steps=steps,
        row_position=row_position,
        entries=tuple((int(r), int(c)) for r, c in zip(*np.nonzero(touched), strict=True)),
    )


def _match_equations(
    structure: np.ndarray, unknowns: list[str], lines: list[int | None], fail: Failure
) -> tuple[int, ...]:
    """Pair each unknown with an equation that contains it (augmenting paths).

    An unknown left without an equation means the equations are singular whatever the values.
    """
    size = structure.shape[0]
    # Each equation is written for its own unknown (a node's current sum for its voltage), so
    # try the diagonal first: it is usually the largest entry, and pivoting then rarely swaps.
    rows_of = []
    for column in range(size):
        rows = np.flatnonzero(structure[:size, column]).tolist()
        rows_of.append(sorted(rows, key=(column).__ne__))
    column_of_row = [-1] * size

    def augment(column: int, visited: set[int]) -> bool:
        for row in rows_of[column]:
            if row in visited:
                continue
            visited.add(row)
            if column_of_row[row] < 0 or augment(column_of_row[row], visited):
                column_of_row[row] = column
                return True
        return False

    for column in range(size):
        if not augment(column, set()):
            raise fail(
                f"singular circuit: {unknowns[column]} is not determined by the equations"
                " whatever the values (look for op-amp outputs tied together, a node driven"
                " only by current sources, or a loop of zero-impedance elements)",
                lines[column],
            )
    return tuple(column_of_row)


_Placement = tuple[Element, tuple[int | None, ...], tuple[int, ...]]
_Layout = tuple[tuple[_Placement, ...], tuple[tuple[int | None, int | None], ...], int]


def _layout(
    elements: Sequence[Element],
    ports: Sequence[Port],
    inner_nodes: list[str],
    port_nodes: list[str],
    order: list[int],
) -> _Layout:
    """Matrix indices: inner unknowns (nodes, then branches) moved by ``order``, ports last.

    ``order[k]`` is the new position of inner unknown k (inner nodes first, then the branch
    currents in element order).
    """
    inner = len(order)
    position: dict[str, int] = {node: order[i] for i, node in enumerate(inner_nodes)}
    position.update({node: inner + j for j, node in enumerate(port_nodes)})
    next_branch = len(inner_nodes)
    placements = []
    for element in elements:
        node_indices = tuple(position.get(node) for node in element.nodes)
        branch_indices = tuple(order[next_branch + i] for i in range(element.branches))
        next_branch += element.branches
        placements.append((element, node_indices, branch_indices))
    port_indices = tuple((position.get(p.node), position.get(p.reference)) for p in ports)
    return tuple(placements), port_indices, inner + len(port_nodes)


def _structure(layout: _Layout, port_count: int) -> np.ndarray:
    """Boolean sparsity of [A | b], found by stamping placeholder values."""
    placements, port_indices, size = layout
    structure = np.zeros((size, size + port_count), dtype=bool)

    def mark(row: int | None, column: int | None, value: Any) -> None:
        if row is not None and column is not None and not _is_literal_zero(value):
            structure[row, column] = True

    for element, nodes, branches in placements:
        context = _placeholder_context(element)
        element.stamp(mark, nodes, branches, context)
    for index, (node, reference) in enumerate(port_indices):
        for row in (node, reference):
            for column in (node, reference):
                mark(row, column, 1.0)
            mark(row, size + index, 1.0)
    return structure


def _is_literal_zero(value: Any) -> bool:
    return isinstance(value, float | int) and value == 0


def _placeholder_context(element: Element) -> StampContext:
    values = {key: np.float64(1.0) for key in element.values}
    prepared = None
    if isinstance(element, Block):
        prepared = np.full((element.ports, element.ports, 1, 1), 0.5 + 0.5j)
    return StampContext(
        s=np.array(1j), frequency_hz=np.array(1.0), values=values, prepared=prepared
    )


def _first_line(elements: Sequence[Element], node: str) -> int | None:
    return next((element.line for element in elements if node in element.nodes), None)


def _eliminate_symbolically(
    structure: np.ndarray, unknowns: list[str], lines: list[int | None], fail: Failure
) -> tuple[EliminationStep, ...]:
    """Column by column: candidate pivot rows, then the union of their patterns (fill-in)."""
    size = structure.shape[0]
    structure = structure.copy()
    steps = []
    for column in range(size):
        candidates = [column] + [row for row in range(column + 1, size) if structure[row, column]]
        if not structure[column:, column].any():
            raise fail(
                f"singular circuit: {unknowns[column]} is not determined by any equation"
                " (look for op-amp outputs tied together, a node driven only by current"
                " sources, or a loop of zero-impedance elements)",
                lines[column],
            )
        pattern = structure[candidates].any(axis=0)
        structure[candidates] = pattern
        structure[candidates[1:], column] = False
        changed = tuple(int(c) for c in np.flatnonzero(pattern) if c > column)
        steps.append(EliminationStep(column=column, rows=tuple(candidates), columns=changed))
    return tuple(steps)
