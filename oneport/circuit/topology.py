"""Check a circuit's connectivity and plan its equations once, before any number is computed.

This room turns elements and ports into a :class:`Plan`: the order of the unknowns (node
voltages and branch currents, the port nodes last so that back-substitution stops early), the
sparsity of the equations, and a symbolic elimination that lists, column by column, which rows
may be chosen as pivot and which entries fill in. It also refuses circuits whose topology cannot
work: floating nodes, dangling two-terminal elements, elements joined to themselves, missing,
doubled or shorted ports, and equations that are singular whatever the values.
"""

from __future__ import annotations

import functools
import heapq
import itertools
from collections.abc import Callable, Iterator, Sequence
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


@dataclass(frozen=True, eq=False)
class SparseStep:
    """One column of the elimination without row exchanges, as indices into the stored
    coefficients: the pivot, the coefficients below it (one per row to update), the pivot
    row's coefficients right of it, and the updated coefficients (row by row)."""

    pivot: int
    below: np.ndarray
    right: np.ndarray
    updated: np.ndarray


@dataclass(frozen=True, eq=False)
class Plan:
    """The equations' layout: unknowns, where each element and port writes, elimination order.

    The unknowns are ordered by minimum degree (few fill-ins), the port nodes last so that
    back-substitution stops early, and each equation sits on the row of the unknown it was
    matched to, so every diagonal coefficient is structurally nonzero. Only coefficients that
    can be nonzero at some stage are stored (``entries``, row by row).

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
        Where each equation goes in the matrix (a matching of equations to unknowns).
    structure : ndarray of bool, shape (N, N + ports)
        The pattern of [A | b] with the equations in place, before elimination.
    entries : tuple of (int, int)
        The stored coefficients: every (row, column) nonzero at some stage, sorted.
    row_starts : ndarray of int
        Where each row's entries start in ``entries`` (N + 1 values).
    steps : tuple of SparseStep
        The elimination in diagonal order, without row exchanges.
    """

    size: int
    unknowns: tuple[str, ...]
    placements: tuple[tuple[Element, tuple[int | None, ...], tuple[int, ...]], ...]
    ports: tuple[tuple[int | None, int | None], ...]
    solved: int
    row_position: tuple[int, ...]
    structure: np.ndarray
    entries: tuple[tuple[int, int], ...]
    row_starts: np.ndarray
    steps: tuple[SparseStep, ...]
    unknown_lines: tuple[int | None, ...] = ()

    @functools.cached_property
    def index(self) -> dict[tuple[int, int], int]:
        """Storage index of each (row, column) entry."""
        return {entry: position for position, entry in enumerate(self.entries)}

    @functools.cached_property
    def pivoted(self) -> tuple[tuple[EliminationStep, ...], dict[tuple[int, int], int]]:
        """The symbolic elimination with row exchanges among candidate rows (for the points
        where the diagonal pivots are too small), and the storage index of every entry it
        touches; planned only when first needed."""
        steps = _eliminate_symbolically(self.structure)
        touched = {(int(r), int(c)) for r, c in zip(*np.nonzero(self.structure), strict=True)}
        for step in steps:
            for row in step.rows:
                touched.update((row, column) for column in (step.column, *step.columns))
        return steps, {entry: position for position, entry in enumerate(sorted(touched))}


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
    """Order the unknowns, match equations to them, and plan the sparse elimination."""
    port_nodes: list[str] = []
    for port in ports:
        for node in (port.node, port.reference):
            if node != GROUND and node not in port_nodes:
                port_nodes.append(node)
    inner_nodes: list[str] = []
    seen = set(port_nodes)
    for element in elements:
        for node in element.nodes:
            if node != GROUND and node not in seen:
                seen.add(node)
                inner_nodes.append(node)
    first_lines: dict[str, int | None] = {}
    for element in elements:
        for node in element.nodes:
            first_lines.setdefault(node, element.line)
    names = [f"the voltage of node {node}" for node in inner_nodes]
    lines = [first_lines[node] for node in inner_nodes]
    for element in elements:
        names += [f"a current of {element.name}"] * element.branches
        lines += [element.line] * element.branches
    inner = len(names)
    names += [f"the voltage of node {node}" for node in port_nodes]
    lines += [first_lines[node] for node in port_nodes]
    identity = list(range(inner))
    structure = _structure(_layout(elements, ports, inner_nodes, port_nodes, identity), len(ports))
    matched = _match_equations(structure, names, lines, fail)
    permuted = np.empty_like(structure)
    permuted[list(matched)] = structure
    order = _minimum_degree_order(permuted, inner)
    layout = _layout(elements, ports, inner_nodes, port_nodes, order)
    full_order = [*order, *range(inner, len(names))]
    unknowns = [""] * len(names)
    unknown_lines: list[int | None] = [None] * len(names)
    for old, new in enumerate(full_order):
        unknowns[new] = names[old]
        unknown_lines[new] = lines[old]
    # Equations are numbered like the unknowns they are written for, so they move with the
    # reordering too; each goes to the row of the unknown it was matched to.
    moved = [0] * len(names)
    for equation, column in enumerate(matched):
        moved[full_order[equation]] = full_order[column]
    row_position = tuple(moved)
    structure = _structure(layout, len(ports))
    placed = np.empty_like(structure)
    placed[list(row_position)] = structure
    entries, row_starts, steps = _plan_sparse_elimination(placed)
    return Plan(
        size=len(unknowns),
        unknowns=tuple(unknowns),
        placements=layout[0],
        ports=layout[1],
        solved=len(port_nodes),
        row_position=row_position,
        structure=placed,
        entries=entries,
        row_starts=row_starts,
        steps=steps,
        unknown_lines=tuple(unknown_lines),
    )


def _match_equations(
    structure: np.ndarray, unknowns: list[str], lines: list[int | None], fail: Failure
) -> tuple[int, ...]:
    """Pair each equation with an unknown it contains (augmenting paths, without recursion);
    returns the unknown of each equation.

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
    for column in range(size):
        if not _augment(column, rows_of, column_of_row):
            raise fail(
                f"singular circuit: {unknowns[column]} is not determined by the equations"
                " whatever the values (look for op-amp outputs tied together, a node driven"
                " only by current sources, or a loop of zero-impedance elements)",
                lines[column],
            )
    return tuple(column_of_row)


def _augment(start: int, rows_of: list[list[int]], column_of_row: list[int]) -> bool:
    """Find an equation for unknown ``start``, moving earlier pairs along a path if needed."""
    visited: set[int] = set()
    # Each frame: an unknown, the rows still to try for it, the row that led to it.
    stack: list[tuple[int, Iterator[int], int | None]] = [(start, iter(rows_of[start]), None)]
    while stack:
        column, candidates, _ = stack[-1]
        for row in candidates:
            if row in visited:
                continue
            visited.add(row)
            if column_of_row[row] < 0:
                column_of_row[row] = column
                for (parent, _, _), (_, _, via) in itertools.pairwise(stack):
                    assert via is not None
                    column_of_row[via] = parent
                return True
            holder = column_of_row[row]
            stack.append((holder, iter(rows_of[holder]), row))
            break
        else:
            stack.pop()
    return False


def _minimum_degree_order(structure: np.ndarray, inner: int) -> list[int]:
    """New position of each inner unknown: greedy minimum degree on the symmetric pattern.

    Eliminating an unknown joins all its neighbours (the fill-in); taking the one with the
    fewest neighbours each time keeps fill small (a ladder stays a chain, a mesh grows as
    n·log n instead of n²). Ties go to the lower index, so the order is repeatable.
    """
    square = structure[:inner, :inner]
    symmetric = square | square.T
    neighbours = [set(np.flatnonzero(symmetric[row]).tolist()) - {row} for row in range(inner)]
    heap = [(len(around), unknown) for unknown, around in enumerate(neighbours)]
    heapq.heapify(heap)
    done = [False] * inner
    sequence: list[int] = []
    while heap:
        degree, unknown = heapq.heappop(heap)
        if done[unknown] or degree != len(neighbours[unknown]):
            continue
        done[unknown] = True
        sequence.append(unknown)
        around = neighbours[unknown]
        for other in around:
            joined = neighbours[other]
            joined |= around
            joined.discard(other)
            joined.discard(unknown)
            heapq.heappush(heap, (len(joined), other))
    order = [0] * inner
    for position, unknown in enumerate(sequence):
        order[unknown] = position
    return order


def _plan_sparse_elimination(
    structure: np.ndarray,
) -> tuple[tuple[tuple[int, int], ...], np.ndarray, tuple[SparseStep, ...]]:
    """Symbolic elimination on the diagonal: the fill-in, then storage indices per step."""
    size = structure.shape[0]
    rows = [set(np.flatnonzero(structure[row]).tolist()) for row in range(size)]
    columns: list[set[int]] = [set() for _ in range(size)]
    for row, pattern in enumerate(rows):
        for column in pattern:
            if column < size:
                columns[column].add(row)
    shapes = []
    for column in range(size):
        below = sorted(row for row in columns[column] if row > column)
        right = sorted(entry for entry in rows[column] if entry > column)
        for row in below:
            added = set(right) - rows[row]
            rows[row] |= added
            for entry in added:
                if entry < size:
                    columns[entry].add(row)
        shapes.append((column, below, right))
    entries = tuple((row, column) for row in range(size) for column in sorted(rows[row]))
    index = {entry: position for position, entry in enumerate(entries)}
    row_starts = np.searchsorted([row for row, _ in entries], np.arange(size + 1))
    steps = tuple(
        SparseStep(
            pivot=index[column, column],
            below=np.array([index[row, column] for row in below], dtype=np.intp),
            right=np.array([index[column, entry] for entry in right], dtype=np.intp),
            updated=np.array(
                [index[row, entry] for row in below for entry in right], dtype=np.intp
            ),
        )
        for column, below, right in shapes
    )
    return entries, row_starts, steps


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


def _eliminate_symbolically(structure: np.ndarray) -> tuple[EliminationStep, ...]:
    """Column by column: candidate pivot rows, then the union of their patterns (fill-in).

    The matching guarantees a structurally nonzero diagonal, so every column has a candidate.
    """
    size = structure.shape[0]
    structure = structure.copy()
    steps = []
    for column in range(size):
        candidates = [column] + [row for row in range(column + 1, size) if structure[row, column]]
        pattern = structure[candidates].any(axis=0)
        structure[candidates] = pattern
        structure[candidates[1:], column] = False
        changed = tuple(int(c) for c in np.flatnonzero(pattern) if c > column)
        steps.append(EliminationStep(column=column, rows=tuple(candidates), columns=changed))
    return tuple(steps)
