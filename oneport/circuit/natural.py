"""Natural frequencies of a lumped circuit: the roots of its characteristic polynomial.

For circuits of R, L, C (with series resistance), transconductances and single-pole op-amps,
the modified-nodal equations are A0 + s·A1 exactly, so the natural frequencies are the finite
generalised eigenvalues of the pencil (A0, −A1), found with scipy's QZ algorithm. With the
ports terminated in Z0 they are the poles of the S-parameters (the right-half-plane count is
the premise of the Nyquist check); with the ports open they are the natural frequencies of the
circuit as drawn, e.g. of a closed device–load loop. Lines, Touchstone blocks and constant-Q
elements have no finite polynomial and are refused.

For many parameter sets at once (a sweep's variants) the pencils are stamped for all of them in
one pass and solved one small eigenproblem per distinct set; a side whose every element is a
resistor, inductor or capacitor of non-negative value is passive, and terminated in a positive
resistance has no right-half-plane natural frequency, so it needs none. The joined circuit of a
device one-port and a load one-port (port to port) gives the loop's natural frequencies
directly: :func:`joined_natural_frequencies`. A check asks for the same pencils twice (its grid
and its facts); the last few answers are kept by the pencil's bytes, so each is solved once.
"""

from __future__ import annotations

import hashlib
import math
import threading
from collections import OrderedDict
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from .elements import Capacitor, Inductor, Resistor, StampContext

if TYPE_CHECKING:
    from .model import Circuit

#: Generalised eigenvalues with |β| below this (relative to |α|) are infinite.
INFINITE_EIGENVALUE_TOLERANCE = 1e-9
#: A finite eigenvalue s is a natural frequency only where the equations are singular at s
#: and not nearby: at s moved by half its size (two ways) the equilibrated matrix's smallest
#: singular value must rise by this factor. An infinite eigenvalue that rounding has made
#: finite (a loop of capacitors, a cut-set of inductors, element values decades apart) sits
#: where the matrix is nearly singular for every large s, and fails the test.
ISOLATED_ROOT_RISE = 1e4


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
    if not (termination_ohm >= 0):
        raise InputError(f"termination {termination_ohm!r} ohm: give a resistance >= 0 or inf")
    for name, value in params.items():
        if np.ndim(value) != 0:
            raise InputError(f"{circuit.source}: parameter {name}: give one value, not an array")
    constant, slope = pencils(circuit, termination_ohm, params)
    return finite_eigenvalues(constant[0], slope[0], circuit.source)


def require_lumped(circuit: Circuit) -> None:
    """Refuse a circuit whose equations are no polynomial in s (lines, blocks, q= loss)."""
    circuit.validate()
    refused = [element.where() for element in circuit.elements if not element.rational]
    if refused:
        raise InputError(
            f"{circuit.source}: natural frequencies need a lumped circuit with polynomial"
            f" equations; {', '.join(refused)} (lines, blocks, q= loss) have none: use esr="
            " for loss"
        )


def pencils(
    circuit: Circuit, termination_ohm: float, params: dict[str, Any]
) -> tuple[np.ndarray, np.ndarray]:
    """The equations A0 + s·A1 for every parameter set, shape (V, m, m) each.

    ``termination_ohm`` is any real resistance across each port (negative ones give the zeros
    of Γ: Z = Z0 is the circuit terminated in −Z0), ``math.inf`` for open ports, 0 for shorts.
    Parameters may be arrays (V = their broadcast size).
    """
    require_lumped(circuit)
    # A large probe s keeps the difference A(S) − A(0) free of cancellation (S is a power of
    # two, so dividing by it is exact).
    probe = 2.0**60
    constant = _pencil(circuit, termination_ohm, 0.0, params)
    slope = (_pencil(circuit, termination_ohm, probe, params) - constant) / probe
    check = _pencil(circuit, termination_ohm, 2.0 * probe, params)
    if not np.allclose(check, constant + 2.0 * probe * slope, rtol=1e-9, atol=0.0):
        raise InputError(f"{circuit.source}: the circuit equations are not linear in s")
    return constant, slope


#: Pencils solved lately (digest of their bytes → roots), most recent last.
_SOLVED: OrderedDict[bytes, np.ndarray] = OrderedDict()
_SOLVED_KEPT = 16
_SOLVED_LOCK = threading.Lock()


def finite_eigenvalues(constant: np.ndarray, slope: np.ndarray, source: str) -> np.ndarray:
    """The finite s with det(A0 + s·A1) = 0 (QZ on a row- and frequency-scaled pencil)."""
    digest = hashlib.blake2b(digest_size=20)
    for matrix in (constant, slope):
        matrix = np.ascontiguousarray(matrix, dtype=complex)
        digest.update(repr(matrix.shape).encode())
        digest.update(matrix.tobytes())
    key = digest.digest()
    with _SOLVED_LOCK:  # a sweep's threads share it
        if key in _SOLVED:
            _SOLVED.move_to_end(key)
            return _SOLVED[key].copy()
    roots = _finite_eigenvalues(constant, slope, source)
    with _SOLVED_LOCK:
        _SOLVED[key] = roots.copy()
        while len(_SOLVED) > _SOLVED_KEPT:
            _SOLVED.popitem(last=False)
    return roots


def _finite_eigenvalues(constant: np.ndarray, slope: np.ndarray, source: str) -> np.ndarray:
    import scipy.linalg

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
            f"{source}: the circuit equations are singular at every s; the natural"
            " frequencies are undefined (a floating part or a loop of ideal sources)"
        )
    roots = scale * alpha[finite] / beta[finite]
    # Rounding can leave an infinite eigenvalue, or a cluster near 0 of an ill-scaled pencil,
    # as a finite root on either side of the axis. Only a root in the right half plane changes
    # a count; one on the left at most widens a grid. So only those are tested (each test
    # costs three SVDs of the pencil, which for every root of a large netlist was minutes).
    suspect = roots.real > 0
    kept = ~suspect
    kept[suspect] = [_isolated(constant, slope, root, scale) for root in roots[suspect]]
    roots = roots[kept]
    return np.asarray(sorted(roots, key=lambda root: (round(root.imag, 6), root.real)))


def _isolated(constant: np.ndarray, slope: np.ndarray, root: complex, scale: float) -> bool:
    """Whether the pencil is singular at ``root`` and clearly less so half its size away."""
    needed = ISOLATED_ROOT_RISE * max(_singularity(constant + root * slope), np.finfo(float).tiny)
    if needed > 1.0:  # the measure never exceeds 1: not singular enough at the root itself
        return False
    step = 0.5 * max(abs(root), 1e-6 * scale)
    # Either direction rising enough is enough (the second is tried only if the first fails).
    return any(
        _singularity(constant + (root + step * direction) * slope) >= needed
        for direction in (1.0, 0.6 + 0.8j)
    )


def _singularity(matrix: np.ndarray) -> float:
    """Smallest over largest singular value of ``matrix`` equilibrated by rows and columns."""
    rows = np.abs(matrix).max(axis=1)
    rows[rows == 0] = 1.0
    matrix = matrix / rows[:, None]
    columns = np.abs(matrix).max(axis=0)
    columns[columns == 0] = 1.0
    values = np.linalg.svd(matrix / columns[None, :], compute_uv=False)
    return float(values[-1] / values[0]) if values[0] > 0 else 0.0


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
    """The equations' matrices at real s for every parameter set, shape (V, m, m) (without
    right-hand sides), shorts as extra rows."""
    plan = circuit.plan
    resolved = circuit.resolve(params)
    values, variants = resolved.values, resolved.variants
    shorted = termination_ohm == 0
    size = plan.size + (len(plan.ports) if shorted else 0)
    matrix = np.zeros((variants, size, size), dtype=complex)

    def add(row: int | None, column: int | None, value: Any) -> None:
        if row is not None and column is not None:
            matrix[:, row, column] += np.broadcast_to(np.asarray(value), (variants, 1))[:, 0]

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


def is_passive(circuit: Circuit, params: dict[str, Any]) -> np.ndarray:
    """Per parameter set: True when every element is a resistor, inductor or capacitor with
    non-negative values (positive resistances). Terminated in a positive resistance such a
    circuit dissipates what it stores, so it has no right-half-plane natural frequency."""
    resolved = circuit.resolve(params)
    passive = np.ones(resolved.variants, dtype=bool)
    for element in circuit.elements:
        if type(element) not in (Resistor, Inductor, Capacitor):
            return np.zeros(resolved.variants, dtype=bool)
        for key, value in resolved.values[element.name].items():
            array = np.broadcast_to(np.asarray(value, dtype=float), (resolved.variants, 1))[:, 0]
            passive &= array > 0 if key == "resistance" else array >= 0
    return passive


def right_half_plane_counts(
    circuit: Circuit, termination_ohm: float, params: dict[str, Any]
) -> np.ndarray:
    """Right-half-plane natural frequencies with every port terminated in ``termination_ohm``,
    for every parameter set (arrays broadcast; one count per set, flattened).

    Passive sets (:func:`is_passive`) need no eigenproblem when the termination is a positive
    resistance; the others are solved once per distinct set of values. Raises InputError for a
    circuit without polynomial equations.
    """
    require_lumped(circuit)
    passive = is_passive(circuit, params) if termination_ohm > 0 else None
    resolved = circuit.resolve(params)
    counts = np.zeros(resolved.variants, dtype=int)
    todo = np.arange(resolved.variants) if passive is None else np.flatnonzero(~passive)
    if not todo.size:
        return counts
    names = list(circuit.parameters)
    given = {key.lower(): value for key, value in params.items()}
    table = np.column_stack(
        [
            np.broadcast_to(
                np.asarray(given.get(name.lower(), circuit.parameters[name]), dtype=float),
                resolved.lead or (1,),
            ).reshape(-1)
            for name in names
        ]
        or [np.zeros(resolved.variants)]
    )
    distinct, inverse = np.unique(table[todo], axis=0, return_inverse=True)
    chosen = {name: distinct[:, i] for i, name in enumerate(names)}
    constant, slope = pencils(circuit, termination_ohm, chosen if names else {})
    found = np.array(
        [
            int(np.sum(finite_eigenvalues(constant[k], slope[k], circuit.source).real > 0))
            for k in range(distinct.shape[0])
        ]
    )
    counts[todo] = found[np.asarray(inverse).reshape(-1)]
    return counts


def joined_natural_frequencies(
    device: Circuit,
    load: Circuit,
    device_params: dict[str, float] | None = None,
    load_params: dict[str, float] | None = None,
) -> np.ndarray:
    """Natural frequencies (s, 1/s) of a device one-port joined port to port with a load one-port.

    The two sides' open-port equations are bordered by the port current i, which leaves the
    device's port node and enters the load's, and by the condition that both port voltages are
    equal: ``[[Ad, 0, ed], [0, Al, −el], [edᵀ, −elᵀ, 0]]``, still linear in s. Its finite
    generalized eigenvalues are the zeros of Zd + ZL, with the modes each side hides from its
    port (so Z = N + P holds with P from :func:`right_half_plane_counts`).

    Examples
    --------
    −60 Ω into 50 Ω + 10 nH + 2.533 pF (METHODS §7): 5.0e8 ± j6.263e9 1/s.

    >>> from oneport.circuit import Circuit
    >>> device = Circuit("d").resistor("R1", "1", "0", -60.0).port("1")
    >>> load = Circuit("l").resistor("R1", "1", "2", 50.0).inductor("L1", "2", "3", 10e-9)
    >>> load = load.capacitor("C1", "3", "0", 2.533e-12).port("1")
    >>> roots = joined_natural_frequencies(device, load)
    >>> [f"{r.real:.2e} {abs(r.imag):.3e}" for r in roots]
    ['5.00e+08 6.263e+09', '5.00e+08 6.263e+09']
    """
    for circuit in (device, load):
        if len(circuit.ports) != 1:
            raise InputError(f"{circuit.source}: joining needs one-port circuits")
    for name, params in (("device", device_params), ("load", load_params)):
        for key, value in (params or {}).items():
            if np.ndim(value) != 0:
                raise InputError(f"{name} parameter {key}: give one value, not an array")
    device_constant, device_slope = pencils(device, math.inf, dict(device_params or {}))
    load_constant, load_slope = pencils(load, math.inf, dict(load_params or {}))
    constant = _joined(device_constant[0], load_constant[0], device, load, border=True)
    slope = _joined(device_slope[0], load_slope[0], device, load, border=False)
    return finite_eigenvalues(constant, slope, f"{device.source} joined to {load.source}")


def _joined(
    device_matrix: np.ndarray,
    load_matrix: np.ndarray,
    device: Circuit,
    load: Circuit,
    border: bool,
) -> np.ndarray:
    """The bordered matrix of the joined circuit (the border is constant: in A0 only)."""
    m, n = device_matrix.shape[0], load_matrix.shape[0]
    size = m + n + 1
    dtype = np.result_type(device_matrix, load_matrix)
    joined = np.zeros((size, size), dtype=dtype)
    joined[:m, :m] = device_matrix
    joined[m : m + n, m : m + n] = load_matrix
    if border:
        current = size - 1
        for offset, (node, reference), sign in (
            (0, device.plan.ports[0], 1.0),
            (m, load.plan.ports[0], -1.0),
        ):
            for index, polarity in ((node, 1.0), (reference, -1.0)):
                if index is None:
                    continue
                joined[offset + index, current] += sign * polarity
                joined[current, offset + index] += sign * polarity
    return joined


#: A lumped loop has reached its limit at a frequency at least this many times every natural
#: frequency of L and F ...
LIMIT_REACH = 10.0
#: ... when the phase those natural frequencies can still turn beyond it, the sum of
#: arctan(|s_k|/ω), stays below this (rad).
LIMIT_PHASE_RAD = math.radians(45.0)


def lumped_pair_facts(
    device: Circuit,
    load: Circuit,
    reference_impedance_ohm: float,
    device_params: dict[str, Any],
    load_params: dict[str, Any],
    variants: int,
    top_hz: float,
) -> tuple[np.ndarray, np.ndarray]:
    """For two lumped one-ports and ``variants`` parameter sets (arrays of that length, or
    scalars), one eigenproblem set per distinct set of values:

    - the right-half-plane natural frequencies of the joined circuit
      (:func:`joined_natural_frequencies`), −1 where the equations are too ill-scaled to solve;
    - whether ``top_hz`` lies beyond the loop's features: every pole and zero of Γd and ΓL (each
      side terminated in ±Z0) and of F (the joined circuit) at least ``LIMIT_REACH`` times lower
      in |s|, and the phase they can still turn above it below ``LIMIT_PHASE_RAD``. There a
      rational L has reached its limit, so F(∞) takes the sign of F at the top.
    """
    for circuit in (device, load):
        if len(circuit.ports) != 1:
            raise InputError(f"{circuit.source}: joining needs one-port circuits")
    columns = [
        np.broadcast_to(np.asarray(value, dtype=float), (variants,))
        for params in (device_params, load_params)
        for value in params.values()
    ]
    table = np.column_stack(columns) if columns else np.zeros((variants, 1))
    distinct, inverse = np.unique(table, axis=0, return_inverse=True)
    names = [("device", key) for key in device_params] + [("load", key) for key in load_params]
    chosen = {
        side: {key: distinct[:, i] for i, (owner, key) in enumerate(names) if owner == side}
        for side in ("device", "load")
    }
    open_pencils = {
        "device": pencils(device, math.inf, chosen["device"]),
        "load": pencils(load, math.inf, chosen["load"]),
    }
    terminated = [
        (circuit, pencils(circuit, termination, chosen[side]))
        for side, circuit in (("device", device), ("load", load))
        for termination in (reference_impedance_ohm, -reference_impedance_ohm)
    ]
    omega_top = 2.0 * math.pi * top_hz
    counts = np.full(distinct.shape[0], -1, dtype=int)
    beyond = np.zeros(distinct.shape[0], dtype=bool)
    source = f"{device.source} joined to {load.source}"
    for k in range(distinct.shape[0]):
        (device_constant, device_slope), (load_constant, load_slope) = (
            open_pencils["device"],
            open_pencils["load"],
        )
        d, l_ = min(k, device_constant.shape[0] - 1), min(k, load_constant.shape[0] - 1)
        try:
            joined = finite_eigenvalues(
                _joined(device_constant[d], load_constant[l_], device, load, border=True),
                _joined(device_slope[d], load_slope[l_], device, load, border=False),
                source,
            )
            roots = [joined]
            for circuit, (constant, slope) in terminated:
                j = min(k, constant.shape[0] - 1)
                roots.append(finite_eigenvalues(constant[j], slope[j], circuit.source))
        except InputError:
            continue
        counts[k] = int(np.sum(joined.real > 0))
        sizes = np.abs(np.concatenate(roots))
        remaining = float(np.sum(np.arctan(sizes / omega_top))) if omega_top > 0 else np.inf
        beyond[k] = bool(
            omega_top > 0
            and (sizes.size == 0 or sizes.max() * LIMIT_REACH <= omega_top)
            and remaining < LIMIT_PHASE_RAD
        )
    flat = np.asarray(inverse).reshape(-1)
    return counts[flat], beyond[flat]
