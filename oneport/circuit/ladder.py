"""The closed-form path for one-ports made of R, L and C in series and parallel.

A series–parallel one-port reduces, by merging parallel elements and series chains, to one
expression tree whose value is a handful of array sums and reciprocals: several times faster
than elimination. :func:`reduce_ladder` finds the tree once (or None when the circuit is not
series–parallel: a bridge, a controlled source, a line or a block); :func:`evaluate_ladder`
computes the port's reflection. Points where the closed form meets 0/0 or ∞ (an ideal element
at DC, a lossless resonance hit exactly) come back non-finite, and the engine solves those by
elimination instead, so both paths give one answer.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .elements import Capacitor, Element, Inductor, Resistor, StampContext
from .topology import Port


@dataclass(frozen=True)
class LadderNode:
    """``"leaf"`` (one element), ``"series"`` or ``"parallel"`` of its children."""

    form: str
    children: tuple[LadderNode, ...] = ()
    element: Element | None = None


def reduce_ladder(elements: Sequence[Element], ports: Sequence[Port]) -> LadderNode | None:
    """The series–parallel tree between the port's terminals, or None if there is none."""
    if len(ports) != 1 or not all(
        isinstance(element, Resistor | Inductor | Capacitor) for element in elements
    ):
        return None
    terminals = {ports[0].node, ports[0].reference}
    edges: list[tuple[str, str, LadderNode]] = [
        (e.nodes[0], e.nodes[1], LadderNode("leaf", element=e)) for e in elements
    ]
    changed = True
    while changed and len(edges) > 1:
        changed = _merge_parallel(edges) or _merge_series(edges, terminals)
    if len(edges) == 1 and {edges[0][0], edges[0][1]} == terminals:
        return edges[0][2]
    return None


def _merge_parallel(edges: list[tuple[str, str, LadderNode]]) -> bool:
    groups: dict[frozenset[str], list[int]] = {}
    for index, (a, b, _) in enumerate(edges):
        groups.setdefault(frozenset((a, b)), []).append(index)
    merged = False
    for indices in groups.values():
        if len(indices) > 1:
            a, b, _ = edges[indices[0]]
            node = LadderNode("parallel", tuple(edges[i][2] for i in indices))
            for i in sorted(indices[1:], reverse=True):
                del edges[i]
            edges[indices[0]] = (a, b, node)
            merged = True
            break  # indices shift after deletion; regroup
    return merged


def _merge_series(edges: list[tuple[str, str, LadderNode]], terminals: set[str]) -> bool:
    degree: dict[str, list[int]] = {}
    for index, (a, b, _) in enumerate(edges):
        degree.setdefault(a, []).append(index)
        degree.setdefault(b, []).append(index)
    for node, indices in degree.items():
        if node in terminals or len(indices) != 2:
            continue
        first, second = (edges[i] for i in indices)
        outer = [n for n in (first[0], first[1], second[0], second[1]) if n != node]
        if len(outer) != 2:
            continue
        merged = LadderNode("series", (first[2], second[2]))
        for i in sorted(indices, reverse=True):
            del edges[i]
        edges.append((outer[0], outer[1], merged))
        return True
    return False


def evaluate_ladder(
    tree: LadderNode,
    context_of: Callable[[Element], StampContext],
    reference_impedance_ohm: float,
) -> np.ndarray:
    """Reflection at the port, referred to ``reference_impedance_ohm``; may hold non-finite values.

    Parameters
    ----------
    tree : LadderNode
        From :func:`reduce_ladder`.
    context_of : callable
        The stamp context (s, resolved values) of an element for the current chunk.
    reference_impedance_ohm : float
        Real, positive Z0, Ω.
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        form, value = _immittance(tree, context_of)
        if form == "z":
            return np.asarray((value - reference_impedance_ohm) / (value + reference_impedance_ohm))
        scaled = value * reference_impedance_ohm
        return np.asarray((1.0 - scaled) / (1.0 + scaled))


def _immittance(node: LadderNode, context_of: Callable[[Element], StampContext]) -> tuple[str, Any]:
    """``("z", impedance)`` or ``("y", admittance)``, whichever needs no reciprocal."""
    if node.form == "leaf":
        element = node.element
        assert isinstance(element, Resistor | Inductor | Capacitor)
        return element.immittance(context_of(element))
    wanted = "z" if node.form == "series" else "y"
    total: Any = 0.0
    for child in node.children:
        form, value = _immittance(child, context_of)
        total = total + (value if form == wanted else 1.0 / value)
    return wanted, total
