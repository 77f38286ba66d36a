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
    out: np.ndarray,
) -> np.ndarray:
    """Reflection at the port, referred to ``reference_impedance_ohm``, written into ``out``
    (complex, of the chunk's shape (variants, frequencies)); may hold non-finite values.

    The sums and reciprocals run on real and imaginary parts held apart, as real arrays: a
    resistance stays a column of shape (variants, 1), a reactance costs one real product, and
    a reciprocal a few real operations instead of numpy's complex division (several times
    slower on this kind of broadcast). An impedance is carried as (R, X); an admittance
    G + jB as (G, −B), its conjugate, so that a reciprocal either way is (a, b)/(a² + b²)
    with no change of sign. Only Γ is assembled as complex.

    Parameters
    ----------
    tree : LadderNode
        From :func:`reduce_ladder`.
    context_of : callable
        The stamp context (jω, resolved values) of an element for the current chunk.
    reference_impedance_ohm : float
        Real, positive Z0, Ω.
    out : ndarray of complex
        Where Γ goes (the engine's result for this chunk); returned.
    """
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        form, real, imaginary = _parts(tree, context_of, "z")
        # With c = Z0 for an impedance, 1/Z0 for an admittance, r = real + c and
        # k = 2c/(r² + imaginary²): Γ = (Z − Z0)/(Z + Z0) = 1 − r·k + j·X·k, and
        # Γ = (1 − Y·Z0)/(1 + Y·Z0) = r·k − 1 − j·B·k = r·k − 1 + j·(−B)·k.
        # numpy scalars: a zero denominator (a resistance cancelling Z0) gives inf or NaN under
        # errstate, for elimination to settle, where Python floats would raise.
        c = np.float64(reference_impedance_ohm if form == "z" else 1.0 / reference_impedance_ohm)
        r = real + c
        k = (2.0 * c) / (r * r + imaginary * imaginary)
        rk = r * k
        if form == "z":
            np.subtract(1.0, rk, out=out.real)
        else:
            np.subtract(rk, 1.0, out=out.real)
        np.multiply(imaginary, k, out=out.imag)
        return out


Parts = tuple[str, Any, Any]


def _parts(node: LadderNode, context_of: Callable[[Element], StampContext], wanted: str) -> Parts:
    """``(form, real, imaginary)`` of the node as an impedance (R, X) or an admittance
    (G, −B): the form its parent sums, ``wanted``, when that is cheap, else its natural one.
    A part that is the float 0.0 is known to be zero and costs nothing."""
    if node.form == "leaf":
        element = node.element
        assert isinstance(element, Resistor | Inductor | Capacitor)
        return element.parts(context_of(element), wanted)
    own = "z" if node.form == "series" else "y"
    total_real: Any = 0.0
    total_imaginary: Any = 0.0
    for child in node.children:
        form, real, imaginary = _parts(child, context_of, own)
        if form != own:
            real, imaginary = _reciprocal(real, imaginary)
        total_real = _add(total_real, real)
        total_imaginary = _add(total_imaginary, imaginary)
    return own, total_real, total_imaginary


def _reciprocal(real: Any, imaginary: Any) -> tuple[Any, Any]:
    """Between (R, X) and (G, −B): 1/(a + jb) = (a − jb)/(a² + b²), carried as (a, b)/(a² + b²).

    The cases of a or b known to be zero cost one division (of the other part) or none.
    """
    if _is_zero(imaginary):
        return _ONE / real, 0.0
    if _is_zero(real):
        return 0.0, _ONE / imaginary
    magnitude = real * real + imaginary * imaginary
    return real / magnitude, imaginary / magnitude


#: A numpy 1: dividing it by a Python 0.0 gives inf under errstate instead of raising.
_ONE = np.float64(1.0)


def _add(total: Any, value: Any) -> Any:
    if _is_zero(total):
        return value
    if _is_zero(value):
        return total
    return total + value


def _is_zero(value: Any) -> bool:
    """True for the exact float 0.0 placeholder (never for arrays, whatever they hold)."""
    return isinstance(value, float) and value == 0.0
