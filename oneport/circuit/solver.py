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


def solve(
    matrix: np.ndarray, steps: Sequence[EliminationStep], solved: int
) -> tuple[np.ndarray, np.ndarray]:
    """Solve ``A x = b`` at every point for the last ``solved`` unknowns.

    Parameters
    ----------
    matrix : ndarray of complex, shape (N, N + K, M)
        [A | b] at M points; overwritten.
    steps : sequence of EliminationStep
        The symbolic elimination plan for this sparsity pattern.
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
    >>> matrix = np.array([[[0.0], [1.0], [2.0]], [[1.0], [1.0], [3.0]]], dtype=complex)
    >>> steps = [EliminationStep(0, (0, 1), (1, 2)), EliminationStep(1, (1,), (2,))]
    >>> solution, singular = solve(matrix, steps, 2)  # 0·x + y = 2, x + y = 3
    >>> solution[:, 0, 0].real, singular
    (array([1., 2.]), array([False]))
    """
    size = matrix.shape[0]
    singular = _scale_rows(matrix, size, steps)
    for step in steps:
        magnitude = _pivot(matrix, step)
        small = magnitude <= PIVOT_TOLERANCE
        if small.any():
            singular |= small
            pivot = matrix[step.column, step.column]
            matrix[step.column, step.column] = np.where(small, 1.0, pivot)
        _eliminate(matrix, step)
    return _back_substitute(matrix, steps, solved), singular


def _scale_rows(matrix: np.ndarray, size: int, steps: Sequence[EliminationStep]) -> np.ndarray:
    """Divide each row by its largest coefficient; a zero row is singular.

    Only the entries each step lists can be nonzero in its row before elimination starts
    (the row's own pattern is contained in its step's columns and the step's column).
    """
    points = matrix.shape[2]
    singular = np.zeros(points, dtype=bool)
    largest = np.empty(points)
    buffer = np.empty(points)
    columns = [_row_columns(steps, row, size) for row in range(size)]
    for row in range(size):
        coefficients = matrix[row]
        first, *others = columns[row]
        np.abs(coefficients[first], out=largest)
        for column in others:
            np.abs(coefficients[column], out=buffer)
            np.maximum(largest, buffer, out=largest)
        zero = largest == 0.0
        if zero.any():
            singular |= zero
            largest[zero] = 1.0
        np.reciprocal(largest, out=largest)
        for column in columns[row]:
            coefficients[column] *= largest
        coefficients[size:] *= largest
    return singular


def _row_columns(steps: Sequence[EliminationStep], row: int, size: int) -> list[int]:
    """Columns that may hold a coefficient of ``row`` before elimination (a superset)."""
    found = {
        column for step in steps if row in step.rows for column in (step.column, *step.columns)
    }
    return sorted(column for column in found if column < size) or list(range(size))


def _pivot(matrix: np.ndarray, step: EliminationStep) -> np.ndarray:
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
    buffer = np.empty(best_magnitude.shape, dtype=matrix.dtype)
    for row, wins in winners:
        if not wins.any():
            continue
        for entry in entries:
            diagonal_row, other_row = matrix[column, entry], matrix[row, entry]
            np.copyto(buffer, diagonal_row)
            np.copyto(diagonal_row, other_row, where=wins)
            np.copyto(other_row, buffer, where=wins)
    return best_magnitude


def _eliminate(matrix: np.ndarray, step: EliminationStep) -> None:
    column = step.column
    pivot_row = matrix[column]
    reciprocal = 1.0 / pivot_row[column]
    buffer = np.empty_like(reciprocal)
    for row in step.rows[1:]:
        factor = matrix[row, column] * reciprocal
        target = matrix[row]
        for entry in step.columns:
            np.multiply(factor, pivot_row[entry], out=buffer)
            np.subtract(target[entry], buffer, out=target[entry])


def _back_substitute(
    matrix: np.ndarray, steps: Sequence[EliminationStep], solved: int
) -> np.ndarray:
    size = matrix.shape[0]
    right_hand_sides = matrix.shape[1] - size
    first = size - solved
    solution = np.empty((solved, right_hand_sides, matrix.shape[2]), dtype=matrix.dtype)
    for unknown in range(size - 1, first - 1, -1):
        row = matrix[unknown]
        total = row[size:].copy()
        for entry in steps[unknown].columns:
            if entry < size:
                total -= row[entry] * solution[entry - first]
        solution[unknown - first] = total / row[unknown]
    return solution
