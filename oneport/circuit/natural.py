"""Natural frequencies of a lumped circuit: the roots of its characteristic polynomial.

For circuits of R, L, C (with series resistance), transconductances and single-pole op-amps,
the modified-nodal equations are A0 + s·A1 exactly, so the natural frequencies are the finite
generalised eigenvalues of the pencil (A0, −A1), found with scipy's QZ algorithm. With the
ports terminated in Z0 they are the poles of the S-parameters (the right-half-plane count is
the premise of the Nyquist check); with the ports open they are the natural frequencies of the
circuit as drawn, e.g. of a closed device–load loop. Lines, Touchstone blocks and constant-Q
elements have no finite polynomial and are refused.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from .elements import StampContext

if TYPE_CHECKING:
    from .model import Circuit

#: Generalised eigenvalues with |β| below this (relative to |α|) are infinite.
INFINITE_EIGENVALUE_TOLERANCE = 1e-9


def natural_frequencies(
    circuit: Circuit, termination_ohm: float = math.inf, **params: float
) -> np.ndarray:
    """Natural frequencies (complex s, 1/s) with every port terminated in ``termination_ohm``.

    Parameters
    ----------
    circuit : Circuit
        A lumped circuit (no lines, blocks or constant-Q elements).
    termination_ohm : float
        Resistance across each port, Ω: ``math.inf`` leaves the ports open, 0 shorts them.
    **params : float
        Scalar parameter values by name.

    Returns
    -------
    ndarray of complex
        The natural frequencies, sorted by imaginary then real part; σ > 0 is growth.

    Examples
    --------
    >>> from oneport.circuit import Circuit
    >>> loop = Circuit().resistor("R1", "1", "0", 1.0).capacitor("C1", "1", "0", 1.0).port("1")
    >>> natural_frequencies(loop)  # open port: the RC decays at -1/(RC)
    array([-1.+0.j])
    """
    import scipy.linalg

    circuit.validate()
    refused = [element.where() for element in circuit.elements if not element.rational]
    if refused:
        raise InputError(
            f"{circuit.source}: natural frequencies need a lumped circuit with polynomial"
            f" equations; {', '.join(refused)} (lines, blocks, q= loss) have none: use rser="
            " for loss"
        )
    if not (termination_ohm >= 0):
        raise InputError(f"termination {termination_ohm!r} ohm: give a resistance >= 0 or inf")
    for name, value in params.items():
        if np.ndim(value) != 0:
            raise InputError(f"{circuit.source}: parameter {name}: give one value, not an array")
    # A large probe s keeps the difference A(S) − A(0) free of cancellation (S is a power of
    # two, so dividing by it is exact).
    probe = 2.0**60
    constant = _pencil(circuit, termination_ohm, 0.0, params)
    slope = (_pencil(circuit, termination_ohm, probe, params) - constant) / probe
    check = _pencil(circuit, termination_ohm, 2.0 * probe, params)
    if not np.allclose(check, constant + 2.0 * probe * slope, rtol=1e-9, atol=0.0):
        raise InputError(f"{circuit.source}: the circuit equations are not linear in s")
    scale = _frequency_scale(constant, slope)
    rows = np.maximum(np.abs(constant).max(axis=1), scale * np.abs(slope).max(axis=1))
    rows[rows == 0] = 1.0
    alpha, beta = scipy.linalg.eig(
        constant / rows[:, None],
        -scale * slope / rows[:, None],
        right=False,
        homogeneous_eigvals=True,
    )
    finite = np.abs(beta) > INFINITE_EIGENVALUE_TOLERANCE * np.abs(alpha)
    if np.any((np.abs(alpha) == 0) & (np.abs(beta) == 0)):
        raise InputError(
            f"{circuit.source}: the circuit equations are singular at every s; the natural"
            " frequencies are undefined (a floating part or a loop of ideal sources)"
        )
    roots = scale * alpha[finite] / beta[finite]
    return np.asarray(sorted(roots, key=lambda root: (round(root.imag, 6), root.real)))


def _frequency_scale(constant: np.ndarray, slope: np.ndarray) -> float:
    """A typical |s| so the two halves of the pencil are of similar size."""
    constant_norm = float(np.abs(constant).max())
    slope_norm = float(np.abs(slope).max())
    if slope_norm == 0 or constant_norm == 0:
        return 1.0
    return constant_norm / slope_norm


def _pencil(
    circuit: Circuit, termination_ohm: float, s: float, params: dict[str, Any]
) -> np.ndarray:
    """The equations' matrix at real s (without right-hand sides), shorts as extra rows."""
    plan = circuit.plan
    values = circuit.resolve(params).values
    shorted = termination_ohm == 0
    size = plan.size + (len(plan.ports) if shorted else 0)
    matrix = np.zeros((size, size), dtype=complex)

    def add(row: int | None, column: int | None, value: Any) -> None:
        if row is not None and column is not None:
            matrix[row, column] += complex(np.asarray(value).reshape(()))

    for element, nodes, branches in plan.placements:
        context = StampContext(
            s=np.array(complex(s)),
            frequency_hz=np.array(s / (2j * math.pi)),
            values=values[element.name],
        )
        element.stamp(add, nodes, branches, context)
    for index, (node, reference) in enumerate(plan.ports):
        if shorted:
            extra = plan.size + index
            for row, sign in ((node, 1.0), (reference, -1.0)):
                add(row, extra, sign)
                add(extra, row, sign)
        elif math.isfinite(termination_ohm):
            conductance = 1.0 / termination_ohm
            for row, sign in ((node, 1.0), (reference, -1.0)):
                add(row, node, sign * conductance)
                add(row, reference, -sign * conductance)
    return matrix.real if np.all(matrix.imag == 0) else matrix
