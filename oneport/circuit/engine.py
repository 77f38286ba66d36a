"""Evaluate a planned circuit over (variants × frequencies), chunk by chunk.

Each chunk builds the modified-nodal equations of every point at once, with the ports
terminated in their reference impedances and driven by unit currents, solves them
(:mod:`~oneport.circuit.solver`) and turns port voltages into S-parameters:
S_ij = 2·V_i/√(Z0_i·Z0_j) − δ_ij for a unit current into port j. One-ports that reduce to
series, parallel and terminated two-port sections take the closed form of
:mod:`~oneport.circuit.ladder` instead. Chunks are sized so the stored coefficients of one
chunk stay within :data:`MATRIX_BUDGET_BYTES`, whatever the variant count; a chunk holds as
many variants as fit. No result leaves this room non-finite: a point neither path can
compute is refused, naming the element whose values do not give finite numbers there.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import InputError
from ..units import format_frequency
from .elements import Element, StampContext
from .ladder import LadderNode, evaluate_ladder
from .solver import Stored, solve, solve_sparse
from .topology import Plan

#: Memory for the stored coefficients of one elimination chunk (a copy and the step
#: temporaries add about as much again). Fastest of 1 to 64 MiB on a 12-node bridged netlist
#: here (benchmarks/README.md): large enough that each numpy call runs over many thousands
#: of points, small enough that a chunk's coefficients stay in the processor's caches.
MATRIX_BUDGET_BYTES = 16 * 2**20
#: Points per elimination chunk at least, whatever the budget: below this, a large netlist's
#: thousands of small steps cost more in numpy calls than in arithmetic (a 2,000-resistor
#: mesh: 16 MiB alone gives 44 points a chunk and twice the time; benchmarks/README.md).
LEAST_POINTS = 256
#: Points per chunk at most on the closed-form path: 512 KiB per real temporary, large
#: enough that per-chunk overhead vanishes and small enough to stay in cache (measured fastest
#: of 4,096 to 2,097,152 here; benchmarks/README.md).
CHUNK_POINTS = 32768

ElementValues = Mapping[str, Mapping[str, Any]]


@dataclass(frozen=True)
class Problem:
    """Everything the engine needs besides the grid.

    Attributes
    ----------
    plan : Plan
        Unknowns, placements and elimination order.
    compact_plan : Plan or None
        The same with inductors as admittances (fewer unknowns), for grids above 0 Hz.
    ladder : LadderNode or None
        The series–parallel tree of a one-port, when it has one.
    values : mapping
        Per element name, its resolved values: floats or arrays of shape (variants, 1).
    variants : int
        Number of parameter sets.
    prepared : mapping
        Per element name, grid-wide prepared data (a block's S on the grid, (p, p, 1, n)).
    describe : callable
        ``describe(variant)`` gives the parameter set for messages (empty for one set).
    source : str
        The circuit's file or description, for messages.
    """

    plan: Plan
    compact_plan: Plan | None
    ladder: LadderNode | None
    values: ElementValues
    variants: int
    prepared: Mapping[str, np.ndarray]
    describe: Callable[[int], str]
    source: str
    force_elimination: bool = False


def scattering(
    problem: Problem, frequency_hz: np.ndarray, reference_impedance_ohm: np.ndarray
) -> np.ndarray:
    """S-parameters at every (variant, frequency), shape (variants, p, p, n).

    Parameters
    ----------
    problem : Problem
    frequency_hz : ndarray of float, shape (n,)
        Non-negative frequencies, Hz.
    reference_impedance_ohm : ndarray of float, shape (p,)
        Real, positive reference impedance of each port, Ω.

    Raises
    ------
    InputError
        Where the equations are singular, or a point has no finite answer.
    """
    plan = problem.plan
    ports = len(plan.ports)
    compact = problem.compact_plan if frequency_hz.min() > 0 else None
    if problem.ladder is not None and not problem.force_elimination:
        points = CHUNK_POINTS
    else:
        stored = len((compact or plan).entries)
        points = max(LEAST_POINTS, MATRIX_BUDGET_BYTES // (16 * stored))
    frequencies = frequency_hz.size
    frequency_chunk = min(frequencies, points)
    variant_chunk = max(1, min(problem.variants, points // frequency_chunk))
    result = np.empty((problem.variants, ports, ports, frequencies), dtype=complex)
    workspace = _Workspace()
    for start in range(0, frequencies, frequency_chunk):
        window = np.arange(start, min(start + frequency_chunk, frequencies))
        axis = _Axis.of(frequency_hz[window])
        for first in range(0, problem.variants, variant_chunk):
            variants = slice(first, min(first + variant_chunk, problem.variants))
            chunk = _Chunk(problem, axis, window, variants, workspace, compact)
            out = result[variants, :, :, window[0] : window[-1] + 1]
            chunk.scattering(reference_impedance_ohm, out)
    if not np.isfinite(result).all():
        _refuse_non_finite(problem, frequency_hz, result)
    return result


class _Workspace:
    """One buffer reused by every chunk (grown when a chunk needs more)."""

    def __init__(self) -> None:
        self.buffer = np.empty(0, dtype=complex)

    def take(self, shape: tuple[int, ...]) -> np.ndarray:
        size = math.prod(shape)
        if self.buffer.size < size:
            self.buffer = np.empty(size, dtype=complex)
        return self.buffer[:size].reshape(shape)


@dataclass(frozen=True)
class _Axis:
    """A frequency window as a row (1, n): f, s = jω, ω and 1/ω.

    1/ω is NaN at 0 Hz, not infinite: a lossless reactance there is an open or a short whose
    0·∞ the closed form cannot settle, so those points come back non-finite and are solved by
    elimination (which answers, or refuses a circuit that is singular at DC).
    """

    frequency_hz: np.ndarray
    s: np.ndarray
    omega: np.ndarray
    inverse_omega: np.ndarray

    @classmethod
    def of(cls, frequency_hz: np.ndarray) -> _Axis:
        row = frequency_hz[None, :]
        omega = 2.0 * math.pi * row
        # 1/ω of a subnormal frequency overflows to infinity (the reactances of DC); every
        # evaluation's answer is checked for finite values before it is returned.
        with np.errstate(divide="ignore", over="ignore"):
            inverse = np.where(omega == 0.0, np.nan, 1.0 / omega)
        return cls(row, 1j * omega, omega, inverse)


class _Chunk:
    """One block of variants and frequencies."""

    def __init__(
        self,
        problem: Problem,
        axis: _Axis,
        window: np.ndarray,
        variants: slice,
        workspace: _Workspace,
        compact: Plan | None,
    ) -> None:
        self.problem = problem
        self.workspace = workspace
        self.compact = compact
        self.axis = axis
        self.frequency_hz = axis.frequency_hz
        self.window = window
        self.variants = variants
        self.count = variants.stop - variants.start
        self._contexts: dict[str, StampContext] = {}

    def context(self, element: Element) -> StampContext:
        """The element's stamp context for this chunk (values sliced to these variants)."""
        if element.name not in self._contexts:
            values = {
                key: value[self.variants] if isinstance(value, np.ndarray) else value
                for key, value in self.problem.values[element.name].items()
            }
            prepared = self.problem.prepared.get(element.name)
            if prepared is not None:
                prepared = prepared[..., self.window]
            self._contexts[element.name] = StampContext(
                s=self.axis.s,
                frequency_hz=self.frequency_hz,
                values=values,
                prepared=prepared,
                omega=self.axis.omega,
                inverse_omega=self.axis.inverse_omega,
            )
        return self._contexts[element.name]

    def scattering(self, reference_impedance_ohm: np.ndarray, out: np.ndarray) -> None:
        """S of this chunk into ``out``, shape (variants, p, p, frequencies)."""
        ladder = self.problem.ladder
        if ladder is None or self.problem.force_elimination:
            out[...] = self._eliminate(reference_impedance_ohm)
            return
        gamma = evaluate_ladder(
            ladder, self.context, float(reference_impedance_ohm[0]), out[:, 0, 0, :]
        )
        # One sum finds any non-finite point (a finite sum overflowing only costs a detour).
        if np.isfinite(np.sum(gamma)):
            return
        # Elimination settles the frequencies where the closed form met 0/0 or ∞.
        columns = np.flatnonzero(~np.isfinite(gamma).all(axis=0))
        frequency_hz = self.frequency_hz[0, columns]
        compact = self.problem.compact_plan if frequency_hz.min() > 0 else None
        retry = _Chunk(
            self.problem,
            _Axis.of(frequency_hz),
            self.window[columns],
            self.variants,
            self.workspace,
            compact,
        )
        solved = retry._eliminate(reference_impedance_ohm)[:, 0, 0, :]
        settled = gamma[:, columns]
        np.copyto(settled, solved, where=~np.isfinite(settled))
        gamma[:, columns] = settled

    def _eliminate(self, reference_impedance_ohm: np.ndarray) -> np.ndarray:
        if self.compact is not None:
            with np.errstate(all="ignore"):
                result = self._solve(self.compact, reference_impedance_ohm, refuse=False)
            if result is not None and np.all(np.isfinite(result)):
                return result
        with np.errstate(over="ignore", invalid="ignore"):
            result = self._solve(self.problem.plan, reference_impedance_ohm, refuse=True)
        assert result is not None
        return result

    def _solve(
        self, plan: Plan, reference_impedance_ohm: np.ndarray, refuse: bool
    ) -> np.ndarray | None:
        """Assemble and solve with ``plan``; None (or an error, if ``refuse``) when singular."""
        frequencies = self.frequency_hz.shape[1]
        points = self.count * frequencies
        values = self.workspace.take((len(plan.entries), points))
        values[...] = 0.0
        stored = values.reshape(len(plan.entries), self.count, frequencies)
        index, position = plan.index, plan.row_position

        def add(row: int | None, column: int | None, value: Any) -> None:
            # The plan stores every coefficient a stamp writes, except literal zeros.
            if row is not None and column is not None:
                entry = index.get((position[row], column))
                if entry is not None:
                    stored[entry] += value

        for element, nodes, branches in plan.placements:
            element.stamp(add, nodes, branches, self.context(element))
        size = plan.size
        for number, (node, reference) in enumerate(plan.ports):
            conductance = 1.0 / float(reference_impedance_ohm[number])
            for row, sign in ((node, 1.0), (reference, -1.0)):
                add(row, node, sign * conductance)
                add(row, reference, -sign * conductance)
                add(row, size + number, sign)
        original = values.copy()
        solution, unsure = solve_sparse(values, plan)
        if unsure.any():
            redo = np.flatnonzero(unsure)
            again, singular = _solve_with_exchanges(plan, original[:, redo])
            solution[:, :, redo] = again
            if singular.any():
                if not refuse:
                    return None
                self._refuse_singular(int(redo[np.flatnonzero(singular)[0]]), frequencies)
        return self._waves(plan, solution, reference_impedance_ohm, frequencies)

    def _waves(
        self,
        plan: Plan,
        solution: np.ndarray,
        reference_impedance_ohm: np.ndarray,
        frequencies: int,
    ) -> np.ndarray:
        offset = plan.size - plan.solved
        ports = len(plan.ports)

        def voltage(index: int | None) -> Any:
            return 0.0 if index is None else solution[index - offset]  # (K, points)

        result = np.empty((self.count, ports, ports, frequencies), dtype=complex)
        for i, (node, reference) in enumerate(plan.ports):
            port_voltage = voltage(node) - voltage(reference)
            for j in range(ports):
                scale = 2.0 / math.sqrt(reference_impedance_ohm[i] * reference_impedance_ohm[j])
                value = scale * port_voltage[j] - (1.0 if i == j else 0.0)
                result[:, i, j, :] = value.reshape(self.count, frequencies)
        return result

    def _refuse_singular(self, point: int, frequencies: int) -> None:
        variant = self.variants.start + point // frequencies
        frequency = float(self.frequency_hz[0, point % frequencies])
        raise InputError(
            f"{self.problem.source}: the circuit equations are singular at"
            f" {format_frequency(frequency)}{self.problem.describe(variant)}: no unique"
            " solution there; look for a node reached only through capacitors at 0 Hz, a"
            " loop of inductors or lines at 0 Hz, op-amp outputs tied together, a series"
            " loop whose resistances cancel, or a lossless resonator decoupled from the ports"
        )


def _solve_with_exchanges(plan: Plan, stored: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Solve the points of ``stored`` (the plan's coefficients, (entries, K)) by elimination
    with row exchanges, in batches within the budget."""
    steps, index = plan.pivoted
    ports = len(plan.ports)
    # The assembled coefficients (fill-in positions of the other plan hold zeros, skipped).
    moved = [
        (position, index[entry]) for position, entry in enumerate(plan.entries) if entry in index
    ]
    source = np.array([a for a, _ in moved], dtype=np.intp)
    target = np.array([b for _, b in moved], dtype=np.intp)
    count = stored.shape[1]
    batch = max(LEAST_POINTS, MATRIX_BUDGET_BYTES // (16 * len(index)))
    solution = np.empty((plan.solved, ports, count), dtype=complex)
    singular = np.zeros(count, dtype=bool)
    for first in range(0, count, batch):
        part = slice(first, min(first + batch, count))
        values = np.zeros((len(index), part.stop - part.start), dtype=complex)
        values[target] = stored[source, part]
        matrix = Stored(values, index)
        solution[:, :, part], singular[part] = solve(matrix, steps, plan.size, ports, plan.solved)
    return solution, singular


def _refuse_non_finite(problem: Problem, frequency_hz: np.ndarray, result: np.ndarray) -> None:
    """Name the first point without a finite answer and the element that gives no finite
    value there (its values too large or too small for that frequency)."""
    variant, _, _, column = (int(i[0]) for i in np.nonzero(~np.isfinite(result)))
    frequency = float(frequency_hz[column])
    where = f"at {format_frequency(frequency)}{problem.describe(variant)}"
    axis = _Axis.of(frequency_hz[column : column + 1])
    for element, nodes, branches in problem.plan.placements:
        values = {
            key: value[variant : variant + 1] if isinstance(value, np.ndarray) else value
            for key, value in problem.values[element.name].items()
        }
        prepared = problem.prepared.get(element.name)
        context = StampContext(
            s=axis.s,
            frequency_hz=axis.frequency_hz,
            values=values,
            prepared=None if prepared is None else prepared[..., column : column + 1],
            omega=axis.omega,
            inverse_omega=axis.inverse_omega,
        )
        finite = True

        def check(row: int | None, column: int | None, value: Any) -> None:
            nonlocal finite
            finite = finite and bool(np.all(np.isfinite(value)))

        with np.errstate(all="ignore"):
            element.stamp(check, nodes, branches, context)
        if not finite:
            raise InputError(
                f"{problem.source}: {element.where()} has no finite value {where}: its values"
                " are too large or too small for this frequency (value bounds: docs/netlist.md);"
                " keep the grid and the values within them"
            )
    raise InputError(
        f"{problem.source}: the circuit equations overflow {where}: no finite answer; look"
        " for values many orders of magnitude apart"
    )
