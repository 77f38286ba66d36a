"""Evaluate a planned circuit over (variants × frequencies), chunk by chunk.

Each chunk builds the modified-nodal equations of every point at once, with the ports
terminated in their reference impedances and driven by unit currents, solves them
(:mod:`~oneport.circuit.solver`) and turns port voltages into S-parameters:
S_ij = 2·V_i/√(Z0_i·Z0_j) − δ_ij for a unit current into port j. Series–parallel R/L/C
one-ports take the closed form of :mod:`~oneport.circuit.ladder` instead. Chunks are sized so
the equations of one chunk stay within :data:`MATRIX_BUDGET_BYTES`, whatever the variant count.
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
from .solver import solve
from .topology import Plan

#: Memory for the equations of one chunk; temporaries add about as much again.
MATRIX_BUDGET_BYTES = 2 * 2**20
#: Points per chunk at most on the closed-form path: 512 KiB per complex temporary, large
#: enough that per-chunk overhead vanishes and small enough to stay in cache (measured fastest
#: of 4,096 to 2,097,152 here; benchmarks/README.md). Elimination reuses its buffers.
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
    """
    plan = problem.plan
    ports = len(plan.ports)
    size = plan.size
    compact = problem.compact_plan if frequency_hz.min() > 0 else None
    points = max(1, MATRIX_BUDGET_BYTES // (16 * size * (size + ports)))
    if compact is not None:
        points = max(1, MATRIX_BUDGET_BYTES // (16 * compact.size * (compact.size + ports)))
    if problem.ladder is not None and not problem.force_elimination:
        points = min(points, CHUNK_POINTS)
    frequencies = frequency_hz.size
    frequency_chunk = min(frequencies, points)
    variant_chunk = max(1, min(problem.variants, points // frequency_chunk))
    result = np.empty((problem.variants, ports, ports, frequencies), dtype=complex)
    buffer = np.empty(size * (size + ports) * variant_chunk * frequency_chunk, dtype=complex)
    for start in range(0, frequencies, frequency_chunk):
        window = slice(start, start + frequency_chunk)
        axis = _Axis.of(frequency_hz[window])
        for first in range(0, problem.variants, variant_chunk):
            variants = slice(first, min(first + variant_chunk, problem.variants))
            chunk = _Chunk(problem, axis, window, variants, buffer, compact)
            chunk.scattering(reference_impedance_ohm, result[variants, :, :, window])
    return result


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
        with np.errstate(divide="ignore"):
            inverse = np.where(omega == 0.0, np.nan, 1.0 / omega)
        return cls(row, 1j * omega, omega, inverse)


class _Chunk:
    """One block of variants and frequencies."""

    def __init__(
        self,
        problem: Problem,
        axis: _Axis,
        window: slice,
        variants: slice,
        buffer: np.ndarray,
        compact: Plan | None,
    ) -> None:
        self.problem = problem
        self.buffer = buffer
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
        if ladder is not None and not self.problem.force_elimination:
            gamma = evaluate_ladder(
                ladder, self.context, float(reference_impedance_ohm[0]), out[:, 0, 0, :]
            )
            # One sum finds any non-finite point (a finite sum overflowing only costs a detour).
            if np.isfinite(np.sum(gamma)):
                return
            good = np.isfinite(gamma)
            solved = self._eliminate(reference_impedance_ohm)
            gamma[~good] = solved[:, 0, 0, :][~good]
            return
        out[...] = self._eliminate(reference_impedance_ohm)

    def _eliminate(self, reference_impedance_ohm: np.ndarray) -> np.ndarray:
        if self.compact is not None:
            with np.errstate(all="ignore"):
                result = self._solve(self.compact, reference_impedance_ohm, refuse=False)
            if result is not None and np.all(np.isfinite(result)):
                return result
        result = self._solve(self.problem.plan, reference_impedance_ohm, refuse=True)
        assert result is not None
        return result

    def _solve(
        self, plan: Plan, reference_impedance_ohm: np.ndarray, refuse: bool
    ) -> np.ndarray | None:
        """Assemble and solve with ``plan``; None (or an error, if ``refuse``) when singular."""
        size, ports = plan.size, len(plan.ports)
        frequencies = self.frequency_hz.shape[1]
        shape = (size, size + ports, self.count, frequencies)
        matrix = self.buffer[: math.prod(shape)].reshape(shape)
        matrix[:, size:] = 0.0
        for entry_row, entry_column in plan.entries:  # the other coefficients are never read
            matrix[entry_row, entry_column] = 0.0
        position = plan.row_position

        def add(row: int | None, column: int | None, value: Any) -> None:
            if row is not None and column is not None:
                matrix[position[row], column] += value

        for element, nodes, branches in plan.placements:
            element.stamp(add, nodes, branches, self.context(element))
        for index, (node, reference) in enumerate(plan.ports):
            conductance = 1.0 / float(reference_impedance_ohm[index])
            for row, sign in ((node, 1.0), (reference, -1.0)):
                add(row, node, sign * conductance)
                add(row, reference, -sign * conductance)
                add(row, size + index, sign)
        flat = matrix.reshape(size, size + ports, self.count * frequencies)
        solution, singular = solve(flat, plan.steps, plan.solved)
        if singular.any():
            if not refuse:
                return None
            self._refuse_singular(int(np.flatnonzero(singular)[0]), frequencies)
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
