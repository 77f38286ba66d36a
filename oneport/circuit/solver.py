"""Gaussian elimination of many small systems at once, one numpy operation per step or entry.

The equations of every (variant, frequency) point share one sparsity pattern, so elimination
loops over matrix indices in Python (following the symbolic plan of
:mod:`~oneport.circuit.topology`) and each operation runs over all points. A small LAPACK call
per point would be far slower.

:func:`solve_sparse` is the first try: the stored coefficients only (a few per row, in the
order of the plan's minimum-degree ordering), eliminated on the diagonal without row
exchanges, each column in one gather–multiply–scatter. A point whose diagonal pivot is small
next to the coefficients below it (a multiplier above :data:`GROWTH_LIMIT`), or tiny, is
marked instead of trusted; :func:`solve` solves those points again with row exchanges: each
column is pivoted per point, the row of largest magnitude among the plan's candidates chosen
and rows swapped only at the points that need it. Rows are scaled to unit maximum first, so a
pivot below :data:`PIVOT_TOLERANCE` marks the point as singular.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from .topology import EliminationStep, Plan

#: A pivot this small (rows scaled to unit maximum) means the equations are singular there.
PIVOT_TOLERANCE = 1e-13
#: A multiplier (coefficient below the pivot / pivot) larger than this sends the point to
#: elimination with row exchanges: the threshold of threshold pivoting (1/0.1, the common
#: choice of sparse LU codes), which bounds growth, so both solvers agree to rounding.
GROWTH_LIMIT = 10.0


def solve_sparse(values: np.ndarray, plan: Plan) -> tuple[np.ndarray, np.ndarray]:
    """Solve the stored [A | b] of every point for the plan's last ``solved`` unknowns.

    Parameters
    ----------
    values : ndarray of complex, shape (len(plan.entries), M)
        The coefficients at M points, in the plan's storage order; overwritten.
    plan : Plan

    Returns
    -------
    solution : ndarray of complex, shape (solved, K, M)
        The last ``solved`` unknowns for each of the K right-hand sides.
    unsure : ndarray of bool, shape (M,)
        Points to solve again with row exchanges (their solution is not to be used).
    """
    unsure = _scale_stored_rows(values, plan)
    for step in plan.steps:
        pivot = values[step.pivot]
        magnitude = np.abs(pivot)
        unsure |= ~(magnitude > PIVOT_TOLERANCE)
        if not step.below.size:
            continue
        below = values[step.below]
        # A multiplier is below/pivot: bounded by GROWTH_LIMIT where the largest coefficient
        # below (max(|re|, |im|), within √2 of its magnitude) is at most that many pivots.
        unsure |= ~(_largest_part(below).max(axis=0) <= GROWTH_LIMIT * magnitude)
        if step.right.size:
            with np.errstate(divide="ignore", invalid="ignore"):
                multipliers = below * (1.0 / pivot)
            update = multipliers[:, None, :] * values[step.right][None, :, :]
            values[step.updated] -= update.reshape(-1, values.shape[1])
    return _back_substitute_stored(values, plan), unsure


def _largest_part(values: np.ndarray) -> np.ndarray:
    """max(|re|, |im|) of complex ``values``, elementwise (cheaper than the magnitude)."""
    return np.maximum(np.abs(values.real), np.abs(values.imag))


def _scale_stored_rows(values: np.ndarray, plan: Plan) -> np.ndarray:
    """Divide each row by its largest coefficient (largest of |re|, |im|); a zero row is
    marked. Any row scale leaves the solution as it is; this one keeps the pivot checks
    relative."""
    unsure = np.zeros(values.shape[1], dtype=bool)
    starts = plan.row_starts
    for row in range(plan.size):
        coefficients = values[starts[row] : starts[row + 1]]
        largest = _largest_part(coefficients).max(axis=0)
        zero = largest == 0.0
        if zero.any():
            unsure |= zero
            largest[zero] = 1.0
        coefficients *= np.reciprocal(largest)
    return unsure


def _back_substitute_stored(values: np.ndarray, plan: Plan) -> np.ndarray:
    size, ports = plan.size, len(plan.ports)
    first = size - plan.solved
    index = plan.index
    solution = np.empty((plan.solved, ports, values.shape[1]), dtype=values.dtype)
    for unknown in range(size - 1, first - 1, -1):
        total = np.zeros((ports, values.shape[1]), dtype=values.dtype)
        for k in range(ports):
            entry = index.get((unknown, size + k))
            if entry is not None:
                total[k] = values[entry]
        for column in range(unknown + 1, size):
            entry = index.get((unknown, column))
            if entry is not None:
                total -= values[entry] * solution[column - first]
        with np.errstate(divide="ignore", invalid="ignore"):
            solution[unknown - first] = total / values[index[unknown, unknown]]
    return solution


class Stored:
    """Coefficients of [A | b] kept only where they can be nonzero, addressed by
    ``(row, column)``: ``stored[row, column]`` is that coefficient at every point (a view);
    :meth:`get` gives None for an entry that is not stored (a zero)."""

    def __init__(self, values: np.ndarray, index: dict[tuple[int, int], int]) -> None:
        self.values = values
        self.index = index

    def __getitem__(self, entry: tuple[int, int]) -> np.ndarray:
        return self.values[self.index[entry]]

    def __setitem__(self, entry: tuple[int, int], value: np.ndarray) -> None:
        self.values[self.index[entry]] = value

    def get(self, entry: tuple[int, int]) -> np.ndarray | None:
        position = self.index.get(entry)
        return None if position is None else self.values[position]


def solve(
    matrix: Stored, steps: Sequence[EliminationStep], size: int, ports: int, solved: int
) -> tuple[np.ndarray, np.ndarray]:
    """Solve ``A x = b`` at every point for the last ``solved`` unknowns, with row exchanges.

    Parameters
    ----------
    matrix : Stored
        [A | b] (N unknowns, ``ports`` right-hand sides) at M points, holding every entry the
        steps touch; overwritten.
    steps : sequence of EliminationStep
        The symbolic elimination plan for this sparsity pattern.
    size, ports : int
        N and the number of right-hand sides K.
    solved : int
        How many trailing unknowns to return.

    Returns
    -------
    solution : ndarray of complex, shape (solved, K, M)
        The last ``solved`` unknowns for each of the K right-hand sides.
    singular : ndarray of bool, shape (M,)
        Points where the equations are singular (their solution is meaningless).

    Examples
    --------
    >>> from oneport.circuit.topology import EliminationStep
    >>> entries = [(0, 0), (0, 1), (0, 2), (1, 0), (1, 1), (1, 2)]
    >>> values = np.array([[0.0], [1.0], [2.0], [1.0], [1.0], [3.0]], dtype=complex)
    >>> matrix = Stored(values, {entry: i for i, entry in enumerate(entries)})
    >>> steps = [EliminationStep(0, (0, 1), (1, 2)), EliminationStep(1, (1,), (2,))]
    >>> solution, singular = solve(matrix, steps, 2, 1, 2)  # 0·x + y = 2, x + y = 3
    >>> solution[:, 0, 0].real, singular
    (array([1., 2.]), array([False]))
    """
    singular = _scale_rows(matrix, size)
    for step in steps:
        magnitude = _pivot(matrix, step)
        small = magnitude <= PIVOT_TOLERANCE
        if small.any():
            singular |= small
            pivot = matrix[step.column, step.column]
            matrix[step.column, step.column] = np.where(small, 1.0, pivot)
        _eliminate(matrix, step)
    return _back_substitute(matrix, steps, size, ports, solved), singular


def _scale_rows(matrix: Stored, size: int) -> np.ndarray:
    """Divide each row by its largest coefficient; a zero row is singular."""
    points = matrix.values.shape[1]
    singular = np.zeros(points, dtype=bool)
    largest = np.empty(points)
    buffer = np.empty(points)
    columns: list[list[int]] = [[] for _ in range(size)]
    for row, column in matrix.index:
        columns[row].append(column)
    for row in range(size):
        largest[...] = 0.0
        for column in columns[row]:
            if column < size:
                np.abs(matrix[row, column], out=buffer)
                np.maximum(largest, buffer, out=largest)
        zero = largest == 0.0
        if zero.any():
            singular |= zero
            largest[zero] = 1.0
        np.reciprocal(largest, out=largest)
        for column in columns[row]:
            matrix[row, column] *= largest
    return singular


def _pivot(matrix: Stored, step: EliminationStep) -> np.ndarray:
    """Bring the largest candidate of column ``step.column`` to the diagonal, point by point.

    Rows are exchanged with masked copies, entry by entry over the step's pattern, only where
    another row wins. Returns the pivot magnitudes.
    """
    column = step.column
    best_magnitude = np.abs(matrix[column, column])
    if len(step.rows) == 1:
        return best_magnitude
    winners: list[tuple[int, np.ndarray]] = []
    for row in step.rows[1:]:
        magnitude = np.abs(matrix[row, column])
        better = magnitude > best_magnitude
        if better.any():
            np.copyto(best_magnitude, magnitude, where=better)
            for _, earlier in winners:
                earlier &= ~better
            winners.append((row, better))
    entries = (column, *step.columns)
    buffer = np.empty(best_magnitude.shape, dtype=matrix.values.dtype)
    for row, wins in winners:
        if not wins.any():
            continue
        for entry in entries:
            diagonal_row, other_row = matrix[column, entry], matrix[row, entry]
            np.copyto(buffer, diagonal_row)
            np.copyto(diagonal_row, other_row, where=wins)
            np.copyto(other_row, buffer, where=wins)
    return best_magnitude


def _eliminate(matrix: Stored, step: EliminationStep) -> None:
    column = step.column
    reciprocal = 1.0 / matrix[column, column]
    buffer = np.empty_like(reciprocal)
    for row in step.rows[1:]:
        factor = matrix[row, column] * reciprocal
        for entry in step.columns:
            target = matrix[row, entry]
            np.multiply(factor, matrix[column, entry], out=buffer)
            np.subtract(target, buffer, out=target)


def _back_substitute(
    matrix: Stored, steps: Sequence[EliminationStep], size: int, ports: int, solved: int
) -> np.ndarray:
    first = size - solved
    points = matrix.values.shape[1]
    solution = np.empty((solved, ports, points), dtype=matrix.values.dtype)
    for unknown in range(size - 1, first - 1, -1):
        total = np.zeros((ports, points), dtype=matrix.values.dtype)
        for k in range(ports):
            right = matrix.get((unknown, size + k))
            if right is not None:
                total[k] = right
        for entry in steps[unknown].columns:
            if entry < size:
                total -= matrix[unknown, entry] * solution[entry - first]
        solution[unknown - first] = total / matrix[unknown, unknown]
    return solution
