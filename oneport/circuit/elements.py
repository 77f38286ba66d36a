"""Circuit elements and their modified-nodal-analysis stamps.

Each element knows its terminals, its values (numbers or parameter references, resolved by
the engine before stamping), which nodes it joins galvanically (for the floating-node check),
how many branch currents it adds as unknowns, and how it writes itself into the equations
``A x = b``. Stamps receive arrays that broadcast over (variants, frequencies); they never loop
over points. Nothing here reads files, prints or decides which solver to use.

Sign conventions: node rows are Kirchhoff current sums, positive for current leaving the node
through the element; a branch current flows from an element's first terminal through it to the
second; ``s = j·2πf``.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any, ClassVar

import numpy as np

from .values import ValueSpec

if TYPE_CHECKING:
    from ..reading.touchstone import Multiport

#: ``add(row, column, value)``; a row or column of None (ground) is skipped.
Adder = Callable[[int | None, int | None, Any], None]

SPEED_OF_LIGHT_M_PER_S = 299_792_458.0
_NEPER_PER_DB = math.log(10.0) / 20.0


@dataclass(frozen=True)
class StampContext:
    """What a stamp may read: complex frequency, frequency, resolved values, prepared data.

    Attributes
    ----------
    s : ndarray of complex
        ``j·2πf``, shape broadcastable to (variants, frequencies).
    frequency_hz : ndarray of float
        The same frequencies in Hz.
    values : dict of str to ndarray
        The element's values, resolved for these variants (scalars or shape (variants, 1)).
    prepared : object
        Element data prepared for this frequency chunk (a block's interpolated S-parameters).
    omega : ndarray of float or None
        2πf when s is on the imaginary axis (the engine's case); None for a real s.
    inverse_omega : ndarray of float or None
        1/ω, when the engine has it (NaN at 0 Hz).
    """

    s: np.ndarray
    frequency_hz: np.ndarray
    values: dict[str, Any]
    prepared: Any = None
    omega: np.ndarray | None = None
    inverse_omega: np.ndarray | None = None

    def over_omega(self, value: Any) -> Any:
        """1/(ω·value), real; NaN at 0 Hz (the closed form then defers to elimination).

        Written (1/ω)·(1/value): both reciprocals are of the small factors ((1, n) and
        (variants, 1)), so the full-size work is one product. Needs the engine's 1/ω.
        """
        assert self.inverse_omega is not None
        return self.inverse_omega * (1.0 / np.asarray(value))

    def times_s(self, value: Any) -> Any:
        """s·value. On the jω axis the product is built from real arrays: numpy's complex
        outer-broadcast products ((1, n) by (v, 1)) are several times slower."""
        if self.omega is None:
            return self.s * value
        shape = np.broadcast_shapes(np.shape(self.omega), np.shape(value))
        product = np.zeros(shape, dtype=complex)
        np.multiply(self.omega, value, out=product.imag)
        return product


@dataclass(frozen=True)
class Rule:
    """What one value may be: its sign and the range of its magnitude (SI units).

    The ranges reach far beyond any part of an RF circuit and keep every product with a
    frequency finite and meaningful in double precision; docs/netlist.md lists them.
    """

    sign: str = "any"  # "any", "nonzero", "positive" or "nonnegative"
    largest: float = math.inf
    #: The smallest nonzero magnitude (zero itself is governed by ``sign``).
    smallest: float = 0.0
    unit: str = ""

    def broken(self, value: Any) -> np.ndarray:
        """Where ``value`` (a number or an array) breaks the rule (NaN and ±inf always do)."""
        array = np.asarray(value, dtype=float)
        magnitude = np.abs(array)
        broken = ~np.isfinite(array) | (magnitude > self.largest)
        broken |= (magnitude < self.smallest) & (array != 0)
        if self.sign == "nonzero":
            broken |= array == 0
        elif self.sign == "positive":
            broken |= array <= 0
        elif self.sign == "nonnegative":
            broken |= array < 0
        return broken

    def accepted(self) -> str:
        """``"positive, from 0.001 to 1e+09"``: the words for a message."""
        unit = f" {self.unit}" if self.unit else ""
        low = f"{self.smallest:g}" if self.smallest > 0 else "0"
        span = f"from {low} to {self.largest:g}{unit}"
        if self.sign == "positive":
            return f"positive, {span}"
        if self.sign == "nonnegative":
            return f"0 or {span}" if self.smallest > 0 else span
        magnitude = f"{span} in magnitude"
        if self.sign == "nonzero":
            return f"nonzero, {magnitude}"
        return f"0 or {magnitude}" if self.smallest > 0 else magnitude


#: Bounds shared by several elements (docs/netlist.md, "Value bounds").
RESISTANCE = Rule("nonzero", largest=1e15, smallest=1e-12, unit="ohm")
SERIES_RESISTANCE = Rule("any", largest=1e15, unit="ohm")
QUALITY_FACTOR = Rule("positive", largest=1e9, smallest=1e-3)
#: The longest line: its delay (given, or len·√eeff/c) at most 1 ms, 300 km of air line.
LONGEST_DELAY_S = 1e-3


@dataclass(frozen=True, kw_only=True)
class Element:
    """Base of every element: a name, terminal nodes, values and the line it came from.

    Subclasses that add no fields are plain subclasses: they inherit the dataclass methods
    (and cost nothing to define at import time).
    """

    name: str
    nodes: tuple[str, ...]
    values: dict[str, ValueSpec] = field(default_factory=dict)
    line: int | None = None

    letter: ClassVar[str] = ""
    kind: ClassVar[str] = ""
    #: Value keys and their rules (a key without one takes any finite value).
    rules: ClassVar[dict[str, Rule]] = {}

    @property
    def branches(self) -> int:
        """Branch currents this element adds as unknowns."""
        return 0

    @property
    def rational(self) -> bool:
        """Whether the stamp is A0 + s·A1 (needed for natural frequencies)."""
        return True

    def connections(self) -> list[tuple[str, str]]:
        """Node pairs this element joins by a current path (for the floating-node check)."""
        return [(self.nodes[0], self.nodes[1])]

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        """Write the element into the equations (``nodes``, ``branches``: matrix indices)."""
        raise NotImplementedError

    def where(self) -> str:
        """``R1 (line 4)`` or ``R1``, for messages."""
        return f"{self.name} (line {self.line})" if self.line is not None else self.name

    def combination_problem(self, values: dict[str, Any]) -> tuple[np.ndarray, str] | None:
        """Values that break a rule together (each within its own range): where, and why."""
        return None


def _stamp_admittance(add: Adder, a: int | None, b: int | None, admittance: Any) -> None:
    add(a, a, admittance)
    add(b, b, admittance)
    add(a, b, -admittance)
    add(b, a, -admittance)


def _stamp_branch_incidence(add: Adder, a: int | None, b: int | None, branch: int) -> None:
    """Current ``branch`` leaves node ``a`` and enters node ``b``; row: V(a) − V(b) …"""
    add(a, branch, 1.0)
    add(b, branch, -1.0)
    add(branch, a, 1.0)
    add(branch, b, -1.0)


class Resistor(Element):
    """``R`` between two nodes; negative values allowed, zero refused."""

    letter: ClassVar[str] = "R"
    kind: ClassVar[str] = "resistor"
    rules: ClassVar[dict[str, Rule]] = {"resistance": RESISTANCE}

    def parts(self, context: StampContext, wanted: str) -> tuple[str, Any, Any]:
        """``("z", R, 0)`` or ``("y", 1/R, 0)``: parts as in :mod:`oneport.circuit.ladder`."""
        resistance = context.values["resistance"]
        return ("z", resistance, 0.0) if wanted == "z" else ("y", 1.0 / resistance, 0.0)

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        _stamp_admittance(add, nodes[0], nodes[1], 1.0 / context.values["resistance"])


class Inductor(Element):
    """``L`` with an optional series resistance ``esr`` or constant quality factor ``q``."""

    letter: ClassVar[str] = "L"
    kind: ClassVar[str] = "inductor"
    rules: ClassVar[dict[str, Rule]] = {
        "inductance": Rule("any", largest=1e3, smallest=1e-18, unit="H"),
        "esr": SERIES_RESISTANCE,
        "q": QUALITY_FACTOR,
    }

    def combination_problem(self, values: dict[str, Any]) -> tuple[np.ndarray, str] | None:
        if "q" not in values:
            return None
        zero = np.asarray(values["inductance"]) == 0
        return zero, "q= needs a nonzero inductance (a quality factor of no reactance is no loss)"

    @property
    def rational(self) -> bool:
        return "q" not in self.values

    @property
    def branches(self) -> int:
        return 1

    def impedance(self, context: StampContext) -> Any:
        """s·L + esr, or s·L·(1 − j/Q) (a series resistance ωL/Q)."""
        values = context.values
        impedance = context.times_s(values["inductance"])
        if "q" in values:
            return impedance * (1.0 - 1j / values["q"])
        if "esr" in values:
            return impedance + values["esr"]
        return impedance

    def parts(self, context: StampContext, wanted: str) -> tuple[str, Any, Any]:
        """On the jω axis ``("z", esr or ωL/Q, ωL)``; lossless and wanted as an admittance,
        ``("y", 0, 1/(ωL))`` (the susceptance −1/(ωL), carried negated)."""
        values = context.values
        assert context.omega is not None
        lossless = "q" not in values and "esr" not in values
        if lossless and wanted == "y":
            return "y", 0.0, context.over_omega(values["inductance"])
        reactance = context.omega * values["inductance"]
        if "q" in values:
            return "z", reactance / values["q"], reactance
        return "z", values.get("esr", 0.0), reactance

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        _stamp_branch_incidence(add, nodes[0], nodes[1], branches[0])
        add(branches[0], branches[0], -self.impedance(context))


class Capacitor(Element):
    """``C`` with an optional series resistance ``esr`` or constant quality factor ``q``."""

    letter: ClassVar[str] = "C"
    kind: ClassVar[str] = "capacitor"
    rules: ClassVar[dict[str, Rule]] = {
        "capacitance": Rule("any", largest=1e3, smallest=1e-21, unit="F"),
        "esr": SERIES_RESISTANCE,
        "q": QUALITY_FACTOR,
    }

    def combination_problem(self, values: dict[str, Any]) -> tuple[np.ndarray, str] | None:
        if "q" not in values:
            return None
        zero = np.asarray(values["capacitance"]) == 0
        return zero, "q= needs a nonzero capacitance (a zero capacitance is an open)"

    @property
    def rational(self) -> bool:
        return "q" not in self.values

    @property
    def branches(self) -> int:
        # With a series resistance the branch form keeps the stamp linear in s.
        return 1 if "esr" in self.values else 0

    def admittance(self, context: StampContext) -> Any:
        """s·C, s·C / (1 + s·C·esr), or s·C / (1 + j/Q) (a series resistance 1/(ωCQ))."""
        values = context.values
        admittance = context.times_s(values["capacitance"])
        if "q" in values:
            return admittance / (1.0 + 1j / values["q"])
        if "esr" in values:
            return admittance / (1.0 + admittance * values["esr"])
        return admittance

    def parts(self, context: StampContext, wanted: str) -> tuple[str, Any, Any]:
        """On the jω axis, lossless: ``("y", 0, −ωC)`` (the susceptance carried negated) or
        ``("z", 0, −1/(ωC))``; with a loss, ``("z", esr or 1/(ωCQ), −1/(ωC))``."""
        values = context.values
        assert context.omega is not None
        capacitance = values["capacitance"]
        lossless = "q" not in values and "esr" not in values
        if lossless and wanted == "y":
            return "y", 0.0, context.omega * -np.asarray(capacitance)
        reactance = context.over_omega(-np.asarray(capacitance))
        if "q" in values:
            return "z", context.over_omega(np.asarray(capacitance) * values["q"]), reactance
        return "z", values.get("esr", 0.0), reactance

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        if "esr" not in context.values:
            _stamp_admittance(add, nodes[0], nodes[1], self.admittance(context))
            return
        # s·C·(Va − Vb) − (1 + s·C·esr)·I = 0
        branch = branches[0]
        sc = context.times_s(context.values["capacitance"])
        add(nodes[0], branch, 1.0)
        add(nodes[1], branch, -1.0)
        add(branch, nodes[0], sc)
        add(branch, nodes[1], -sc)
        add(branch, branch, -(1.0 + sc * context.values["esr"]))


class Transconductance(Element):
    """``G``: current gm·(V(c+) − V(c−)) from node out+ through the source to node out−."""

    letter: ClassVar[str] = "G"
    kind: ClassVar[str] = "transconductance"
    rules: ClassVar[dict[str, Rule]] = {"gm": Rule("any", largest=1e6, unit="S")}

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        out_positive, out_negative, control_positive, control_negative = nodes
        gm = context.values["gm"]
        add(out_positive, control_positive, gm)
        add(out_positive, control_negative, -gm)
        add(out_negative, control_positive, -gm)
        add(out_negative, control_negative, gm)


class Line(Element):
    """``T``: a TEM line between two node pairs, by ``z0`` and ``len``/``eeff`` or ``delay``.

    Optional loss ``loss`` (dB over the whole line) at frequency ``at``, scaling with the
    square root of frequency (skin effect); the characteristic impedance stays real.
    """

    letter: ClassVar[str] = "T"
    kind: ClassVar[str] = "transmission line"
    rules: ClassVar[dict[str, Rule]] = {
        "z0": Rule("positive", largest=1e6, smallest=1e-3, unit="ohm"),
        "len": Rule("nonnegative", largest=LONGEST_DELAY_S * SPEED_OF_LIGHT_M_PER_S, unit="m"),
        "eeff": Rule("positive", largest=1e4, smallest=1.0),
        "delay": Rule("nonnegative", largest=LONGEST_DELAY_S, unit="s"),
        "loss": Rule("nonnegative", largest=1e3, unit="dB"),
        "at": Rule("positive", largest=1e15, smallest=1.0, unit="Hz"),
    }

    def combination_problem(self, values: dict[str, Any]) -> tuple[np.ndarray, str] | None:
        if "len" not in values:
            return None
        delay = self.delay(values)
        return (
            np.asarray(delay > LONGEST_DELAY_S),
            f"the line's delay len·√eeff/c must be at most {LONGEST_DELAY_S:g} s"
            " (300 km of air line)",
        )

    @staticmethod
    def delay(values: dict[str, Any]) -> Any:
        """The line's delay, s: given, or len·√eeff/c."""
        if "delay" in values:
            return values["delay"]
        return values["len"] * np.sqrt(values.get("eeff", 1.0)) / SPEED_OF_LIGHT_M_PER_S

    @property
    def rational(self) -> bool:
        return False

    @property
    def branches(self) -> int:
        return 2

    def connections(self) -> list[tuple[str, str]]:
        return [(self.nodes[0], self.nodes[1]), (self.nodes[2], self.nodes[3])]

    def propagation(self, context: StampContext) -> Any:
        """γ·ℓ = α·ℓ + s·τ, the whole line's propagation."""
        values = context.values
        propagation = context.times_s(self.delay(values))
        if "loss" in values:
            scale = np.sqrt(np.abs(context.frequency_hz) / values["at"])
            propagation = propagation + values["loss"] * _NEPER_PER_DB * scale
        return propagation

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        p1, n1, p2, n2 = nodes
        first, second = branches
        # V1 = cosh·V2 − Z0·sinh·I2 and I1 = sinh/Z0·V2 − cosh·I2 (I2 into port 2), both rows
        # multiplied by 2·e^(−γℓ): cosh and sinh become 1 ± e^(−2γℓ), which never overflow
        # however long or lossy the line (|e^(−γℓ)| <= 1).
        decay = np.exp(-self.propagation(context))
        weight = 2.0 * decay
        squared = decay * decay
        cosh, sinh = 1.0 + squared, 1.0 - squared
        z0 = context.values["z0"]
        add(p1, first, 1.0)
        add(n1, first, -1.0)
        add(p2, second, 1.0)
        add(n2, second, -1.0)
        add(first, p1, weight)
        add(first, n1, -weight)
        add(first, p2, -cosh)
        add(first, n2, cosh)
        add(first, second, z0 * sinh)
        add(second, first, weight)
        add(second, p2, -sinh / z0)
        add(second, n2, sinh / z0)
        add(second, second, cosh)


class OpAmp(Element):
    """An op-amp with output referred to ground and open-loop gain 1/(1/a0 + s/(2π·gbw)).

    Without ``a0`` the DC gain is infinite; without ``gbw`` there is no pole; with neither the
    op-amp is ideal (the inputs are held equal).
    """

    letter: ClassVar[str] = "O"
    kind: ClassVar[str] = "op-amp"
    rules: ClassVar[dict[str, Rule]] = {
        "a0": Rule("positive", largest=1e15, smallest=1e-6),
        "gbw": Rule("positive", largest=1e15, smallest=1e-3, unit="Hz"),
    }

    @property
    def branches(self) -> int:
        return 1

    def connections(self) -> list[tuple[str, str]]:
        return [(self.nodes[0], "0")]

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        output, positive, negative = nodes
        branch = branches[0]
        values = context.values
        inverse_gain: Any = 0.0
        if "a0" in values:
            inverse_gain = 1.0 / values["a0"]
        if "gbw" in values:
            inverse_gain = inverse_gain + context.times_s(1.0 / (2.0 * math.pi * values["gbw"]))
        add(output, branch, -1.0)  # the op-amp drives current into its output node
        add(branch, output, inverse_gain)
        add(branch, positive, -1.0)
        add(branch, negative, 1.0)


@dataclass(frozen=True, kw_only=True)
class Block(Element):
    """An N-port from a Touchstone file; its ports share a reference node (the last node).

    Each port i lies between ``nodes[i]`` and the reference ``nodes[-1]``, which may be any
    netlist node (the indefinite-admittance idea: a transistor's common lead need not be
    ground). The stamp uses wave variables, so any S-matrix (a thru, an ideal short) is valid.
    """

    letter: ClassVar[str] = "N"
    kind: ClassVar[str] = "Touchstone block"

    @property
    def rational(self) -> bool:
        return False

    path: str
    data: Multiport

    @property
    def ports(self) -> int:
        """The block's port count."""
        return self.data.ports

    @property
    def branches(self) -> int:
        return self.ports

    def connections(self) -> list[tuple[str, str]]:
        return [(node, self.nodes[-1]) for node in self.nodes[:-1]]

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        s = context.prepared  # shape (p, p, 1, frequencies)
        reference_node = nodes[-1]
        z0 = self.data.reference_impedance_ohm
        for i, row in enumerate(branches):
            add(nodes[i], row, 1.0)
            add(reference_node, row, -1.0)
            for j in range(self.ports):
                ratio = math.sqrt(z0[i] / z0[j])
                coupling = (1.0 if i == j else 0.0) - s[i, j] * ratio
                add(row, nodes[j], coupling)
                add(row, reference_node, -coupling)
                add(row, branches[j], -(z0[i] if i == j else 0.0) - s[i, j] * ratio * z0[j])


class CompactInductor(Inductor):
    """An inductor stamped as its admittance 1/Z, without a branch current.

    Fewer unknowns make elimination faster; valid only where Z ≠ 0 (not at 0 Hz without
    loss), so the engine uses it only on grids above 0 Hz and falls back where it fails.
    """

    @property
    def branches(self) -> int:
        return 0

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        _stamp_admittance(add, nodes[0], nodes[1], 1.0 / self.impedance(context))


class CompactCapacitor(Capacitor):
    """A capacitor with series resistance stamped as its admittance, without a branch current."""

    @property
    def branches(self) -> int:
        return 0

    def stamp(
        self, add: Adder, nodes: tuple[int | None, ...], branches: tuple[int, ...], context: Any
    ) -> None:
        _stamp_admittance(add, nodes[0], nodes[1], self.admittance(context))


def compact(element: Element) -> Element:
    """The element with its branch current folded into an admittance, where it has one."""
    kind: type[Element] | None = None
    if isinstance(element, Inductor) and not isinstance(element, CompactInductor):
        kind = CompactInductor
    elif isinstance(element, Capacitor) and element.branches:
        kind = CompactCapacitor
    if kind is None:
        return element
    return kind(name=element.name, nodes=element.nodes, values=element.values, line=element.line)


#: Element classes by their letter.
ELEMENT_TYPES: dict[str, type[Element]] = {
    cls.letter: cls for cls in (Resistor, Inductor, Capacitor, Transconductance, Line, OpAmp, Block)
}
