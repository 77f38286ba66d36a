"""The closed-form path for one-ports built of series, parallel and terminated two-port sections.

A one-port of R, L, C, TEM lines and one- or two-port Touchstone blocks usually reduces to one
expression tree: parallel elements merge, series chains merge, and a two-port (a line, a
two-port block) whose far side holds nothing but a reduced sub-tree, an open or a short becomes
a one-port of its own (the line's input impedance Zc·(Zt + Zc·tanh γℓ)/(Zc + Zt·tanh γℓ), the
block's S11 + S12·S21·Γt/(1 − S22·Γt)). Working inward from the far end this is the two-port
(ABCD) cascade of a ladder of sections applied to its termination, one section at a time. Its
value is a handful of array sums and reciprocals per section: several times faster than
elimination. :func:`reduce_ladder` finds the tree once (or None: a bridge, a controlled source,
an op-amp, a block with more than two ports, a two-port whose far side is wired elsewhere);
:func:`evaluate_ladder` computes the port's reflection. Both work without recursion, so a
ladder of any length reduces and evaluates. Points where the closed form meets 0/0 or ∞ (an
ideal element at 0 Hz, a lossless resonance hit exactly) come back non-finite, and the engine
solves those by elimination instead, so both paths give one answer.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from .elements import Block, Capacitor, Element, Inductor, Line, Resistor, StampContext
from .topology import Port


@dataclass(frozen=True)
class LadderNode:
    """One node of the reduction tree.

    ``form`` is ``"leaf"`` (an R, L, C or one-port block), ``"series"`` or ``"parallel"`` (of
    its children) or ``"section"``: the two-port ``element`` seen from its side ``side`` (0 or
    1) with the other side ended by its one child, or by ``end`` (``"open"``, ``"short"``).
    ``size`` counts the leaves below; children are kept largest first, so that evaluating a
    long ladder holds few partial sums at a time.
    """

    form: str
    children: tuple[LadderNode, ...] = ()
    element: Element | None = None
    side: int = 0
    end: str = ""
    size: int = 1


def reduce_ladder(elements: Sequence[Element], ports: Sequence[Port]) -> LadderNode | None:
    """The reduction tree between the port's terminals, or None if there is none."""
    if len(ports) != 1 or not all(_reducible(element) for element in elements):
        return None
    reduction = _Reduction(elements, {ports[0].node, ports[0].reference})
    return reduction.run()


def _reducible(element: Element) -> bool:
    if isinstance(element, Resistor | Inductor | Capacitor | Line):
        return True
    return isinstance(element, Block) and element.ports in (1, 2)


def _sides(element: Element) -> tuple[tuple[str, str], tuple[str, str]]:
    """The two node pairs of a two-port (a line's ports; a block's ports and reference)."""
    nodes = element.nodes
    if isinstance(element, Line):
        return (nodes[0], nodes[1]), (nodes[2], nodes[3])
    return (nodes[0], nodes[2]), (nodes[1], nodes[2])


def _combine(form: str, parts: Sequence[LadderNode]) -> LadderNode:
    """Series or parallel of ``parts``, flattened, largest first."""
    children: list[LadderNode] = []
    for part in parts:
        children.extend(part.children if part.form == form else (part,))
    children.sort(key=lambda child: -child.size)
    return LadderNode(form, tuple(children), size=sum(child.size for child in children))


class _Reduction:
    """Merges edges (two-terminal parts) and ends two-ports until one edge is left.

    A queue of nodes to look at keeps the work proportional to the circuit's size: a node is
    looked at again only when an edge or two-port at it changed.
    """

    def __init__(self, elements: Sequence[Element], terminals: set[str]) -> None:
        self.terminals = terminals
        self.edges: dict[int, tuple[str, str, LadderNode]] = {}
        self.edges_at: dict[str, set[int]] = {}
        self.two_ports: dict[int, Element] = {}
        self.two_ports_at: dict[str, set[int]] = {}
        self.next_id = 0
        for element in elements:
            if isinstance(element, Line) or (isinstance(element, Block) and element.ports == 2):
                self.next_id += 1
                self.two_ports[self.next_id] = element
                for node in element.nodes:
                    self.two_ports_at.setdefault(node, set()).add(self.next_id)
            else:
                leaf = LadderNode("leaf", element=element)
                self._add_edge(element.nodes[0], element.nodes[-1], leaf)

    def run(self) -> LadderNode | None:
        queue = deque(sorted(set(self.edges_at) | set(self.two_ports_at)))
        queued = set(queue)
        while queue:
            node = queue.popleft()
            queued.discard(node)
            for changed in self._visit(node):
                if changed not in queued:
                    queued.add(changed)
                    queue.append(changed)
        if self.two_ports or len(self.edges) != 1:
            return None
        a, b, tree = next(iter(self.edges.values()))
        return tree if {a, b} == self.terminals else None

    def _add_edge(self, a: str, b: str, tree: LadderNode) -> None:
        if a == b:
            return  # shorted out: no current reaches the port through it
        self.next_id += 1
        self.edges[self.next_id] = (a, b, tree)
        self.edges_at.setdefault(a, set()).add(self.next_id)
        self.edges_at.setdefault(b, set()).add(self.next_id)

    def _remove_edge(self, edge: int) -> tuple[str, str, LadderNode]:
        a, b, tree = self.edges.pop(edge)
        self.edges_at[a].discard(edge)
        self.edges_at[b].discard(edge)
        return a, b, tree

    def _visit(self, node: str) -> list[str]:
        """Merge what can be merged at ``node``; the nodes whose surroundings changed."""
        changed = self._merge_parallel(node)
        changed += self._merge_series(node)
        for two_port in sorted(self.two_ports_at.get(node, ())):
            changed += self._end_two_port(two_port)
        return changed

    def _merge_parallel(self, node: str) -> list[str]:
        by_other: dict[str, list[int]] = {}
        for edge in self.edges_at.get(node, ()):
            a, b, _ = self.edges[edge]
            by_other.setdefault(b if a == node else a, []).append(edge)
        changed = []
        for other, group in by_other.items():
            if len(group) > 1:
                trees = [self._remove_edge(edge)[2] for edge in sorted(group)]
                self._add_edge(node, other, _combine("parallel", trees))
                changed += [node, other]
        return changed

    def _merge_series(self, node: str) -> list[str]:
        edges = self.edges_at.get(node, set())
        if node in self.terminals or self.two_ports_at.get(node) or len(edges) != 2:
            return []
        first, second = (self._remove_edge(edge) for edge in sorted(edges))
        outer = [n for n in (*first[:2], *second[:2]) if n != node]
        self._add_edge(outer[0], outer[1], _combine("series", [first[2], second[2]]))
        return outer

    def _end_two_port(self, two_port: int) -> list[str]:
        """Replace a two-port whose far side is ended (open, short, one edge) by an edge."""
        element = self.two_ports[two_port]
        sides = _sides(element)
        for far in (1, 0):
            ending = self._ending(two_port, sides[far], sides[1 - far])
            if ending is None:
                continue
            end, termination = ending
            del self.two_ports[two_port]
            for node in element.nodes:
                self.two_ports_at[node].discard(two_port)
            children: tuple[LadderNode, ...] = ()
            if termination is not None:
                children = (self._remove_edge(termination)[2],)
            near = sides[1 - far]
            size = 1 + sum(child.size for child in children)
            tree = LadderNode("section", children, element, side=1 - far, end=end, size=size)
            self._add_edge(near[0], near[1], tree)
            return [*near, *sides[far]]
        return []

    def _ending(
        self, two_port: int, far: tuple[str, str], near: tuple[str, str]
    ) -> tuple[str, int | None] | None:
        """How the far side is ended — ("short", None), ("open", None), ("", edge) — or None
        while something else is wired to it."""
        if far[0] == far[1]:
            return "short", None
        if set(far) == set(near):
            return None
        between: set[int] = set()
        for node in set(far) - set(near):
            if node in self.terminals or self.two_ports_at.get(node, set()) != {two_port}:
                return None
            for edge in self.edges_at.get(node, ()):
                a, b, _ = self.edges[edge]
                if {a, b} != set(far):
                    return None
                between.add(edge)
        if not between:
            return "open", None
        if len(between) == 1:
            return "", next(iter(between))
        return None  # parallel edges not merged yet; the node is visited again


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


class _Frame:
    """A node being evaluated: the sum of its children so far, in the form it sums in."""

    def __init__(self, node: LadderNode, wanted: str) -> None:
        self.node = node
        self.wanted = wanted
        self.own = {"series": "z", "parallel": "y"}.get(node.form, wanted)
        self.next = 0
        self.real: Any = 0.0
        self.imaginary: Any = 0.0
        self.child: Parts | None = None

    def absorb(self, parts: Parts) -> None:
        if self.node.form == "section":
            self.child = parts
            return
        form, real, imaginary = parts
        if form != self.own:
            real, imaginary = _reciprocal(real, imaginary)
        self.real = _add(self.real, real)
        self.imaginary = _add(self.imaginary, imaginary)


def _parts(root: LadderNode, context_of: Callable[[Element], StampContext], wanted: str) -> Parts:
    """``(form, real, imaginary)`` of the tree as an impedance (R, X) or an admittance
    (G, −B): each node in the form its parent sums (``wanted``) when that is cheap, else in
    its natural one. A part that is the float 0.0 is known to be zero and costs nothing.

    Depth-first with an explicit stack (a ladder of thousands of sections is as deep)."""
    stack = [_Frame(root, wanted)]
    finished: Parts | None = None
    while stack:
        frame = stack[-1]
        if finished is not None:
            frame.absorb(finished)
            finished = None
        if frame.next < len(frame.node.children):
            child = frame.node.children[frame.next]
            frame.next += 1
            stack.append(_Frame(child, frame.own))
            continue
        stack.pop()
        finished = _finish(frame, context_of)
    assert finished is not None
    return finished


def _finish(frame: _Frame, context_of: Callable[[Element], StampContext]) -> Parts:
    node = frame.node
    if node.form == "leaf":
        element = node.element
        if isinstance(element, Block):
            return _block_leaf(element, context_of(element))
        assert isinstance(element, Resistor | Inductor | Capacitor)
        return element.parts(context_of(element), frame.wanted)
    if node.form == "section":
        assert node.element is not None
        context = context_of(node.element)
        if isinstance(node.element, Line):
            return _line_section(node.element, context, node.end, frame.child)
        assert isinstance(node.element, Block)
        return _block_section(node.element, context, node.side, node.end, frame.child)
    return frame.own, frame.real, frame.imaginary


def _line_section(line: Line, context: StampContext, end: str, termination: Parts | None) -> Parts:
    """A line ended by an open, a short or ``termination``, as seen from its other side.

    With t = tanh γℓ: an open gives Y = t/Zc, a short Z = Zc·t, and a termination
    Zc·(Zt + Zc·t)/(Zc + Zt·t) — the same form for admittances (Zc → 1/Zc), which for the
    conjugated (G, −B) carried here takes conj(t).
    """
    t = np.tanh(line.propagation(context))
    characteristic = context.values["z0"]
    if end == "short":
        return "z", characteristic * t.real, characteristic * t.imag
    if end == "open":
        return "y", t.real / characteristic, -t.imag / characteristic
    assert termination is not None
    form, a, b = termination
    c = characteristic if form == "z" else 1.0 / characteristic
    tr, ti = (t.real, t.imag) if form == "z" else (t.real, -t.imag)
    # N = T + c·t and D = c + T·t with T = a + jb; the result c·N/D = c·N·conj(D)/|D|².
    n_real, n_imaginary = a + c * tr, b + c * ti
    d_real, d_imaginary = c + (a * tr - b * ti), a * ti + b * tr
    scale = c / (d_real * d_real + d_imaginary * d_imaginary)
    real = (n_real * d_real + n_imaginary * d_imaginary) * scale
    imaginary = (n_imaginary * d_real - n_real * d_imaginary) * scale
    return form, real, imaginary


def _block_leaf(block: Block, context: StampContext) -> Parts:
    """A one-port block: Z = Z0·(1 + S)/(1 − S)."""
    s = context.prepared[0, 0]
    impedance = block.data.reference_impedance_ohm[0] * (1.0 + s) / (1.0 - s)
    return "z", impedance.real, impedance.imag


def _block_section(
    block: Block, context: StampContext, side: int, end: str, termination: Parts | None
) -> Parts:
    """A two-port block seen from port ``side`` with the other port ended:
    Γ = S_nn + S_nf·S_fn·Γt/(1 − S_ff·Γt), each Γ in its own port's reference impedance."""
    s = context.prepared
    near, far = side, 1 - side
    z0 = block.data.reference_impedance_ohm
    if end:
        ending: Any = 1.0 if end == "open" else -1.0
    else:
        assert termination is not None
        form, a, b = termination
        if form == "z":
            impedance = a + 1j * np.asarray(b)
            ending = (impedance - z0[far]) / (impedance + z0[far])
        else:
            admittance = a - 1j * np.asarray(b)
            ending = (1.0 - admittance * z0[far]) / (1.0 + admittance * z0[far])
    gamma = s[near, near] + s[near, far] * s[far, near] * ending / (1.0 - s[far, far] * ending)
    impedance = z0[near] * (1.0 + gamma) / (1.0 - gamma)
    return "z", impedance.real, impedance.imag


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
