"""Rational fits of sampled frequency responses (vector fitting without pole flipping).

The fit is this room's own vector fitting (pole relocation by least squares, Gustavsen's
scheme, relaxed form) on s/ω_ref, in real arithmetic with conjugate pole pairs so the model is
a real network's. Unlike scikit-rf's vector fitting it never flips poles into the left half
plane, so it serves both for F = 1 − Γd·ΓL, whose zeros are wanted (``poles.py``), and for a
device's Γd, whose poles are wanted (``character.py``). Least squares, unlike the interpolation
at support points of scipy's AAA, does not chase measurement noise. Pure computation.
"""

from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, TypeVar

import numpy as np

from ..errors import InputError
from .nyquist import estimate_noise

#: Fewest samples a fit is attempted on.
MINIMUM_POINTS = 8
#: Highest model order (number of poles) tried when choosing the order.
DEFAULT_MAX_ORDER = 24
#: Fraction of the band cut off at each end for the band-change variant.
DEFAULT_TRIM_FRACTION = 0.1
#: An order is as good as the best when its RMS error is within this factor of the best.
ORDER_TOLERANCE = 1.1
#: RMS error (relative to the RMS of the data) below which a fit counts as exact.
EXACT_FIT_FLOOR = 1e-9
#: A fit is too poor to judge when its RMS error exceeds both this multiple of the noise...
POOR_FIT_NOISE_FACTOR = 2.5
#: ... and this fraction of the RMS of the data.
POOR_FIT_RELATIVE = 0.01
_RELOCATION_ITERATIONS = 12
_RELOCATION_CONVERGED = 1e-8
#: Points the order search runs on (the data are thinned to about this many).
ORDER_SEARCH_POINTS = 300


@dataclass(frozen=True)
class RationalModel:
    """f(s) = constant + slope·x + Σ residues_k / (x − poles_k), with x = s / angular_scale.

    Attributes
    ----------
    poles, residues : ndarray of complex
        In the normalised variable x (dimensionless).
    constant, slope : complex
        The direct term and the term proportional to x (zero for proper models).
    angular_scale : float
        ω_ref, rad/s: the band's top angular frequency.
    """

    poles: np.ndarray
    residues: np.ndarray
    constant: complex
    slope: complex
    angular_scale: float

    @property
    def order(self) -> int:
        """Number of poles."""
        return int(self.poles.size)

    def evaluate(self, s: np.ndarray) -> np.ndarray:
        """The model at complex frequencies ``s`` (rad/s)."""
        x = np.asarray(s, dtype=complex) / self.angular_scale
        terms = self.residues / (x[..., None] - self.poles)
        return self.constant + self.slope * x + terms.sum(axis=-1)

    def derivative(self, s: np.ndarray) -> np.ndarray:
        """df/ds at ``s`` (rad/s), per rad/s."""
        x = np.asarray(s, dtype=complex) / self.angular_scale
        # At a pole itself (a zero of a degenerate model sitting on one) the slope is infinite.
        with np.errstate(divide="ignore", invalid="ignore"):
            terms = -self.residues / (x[..., None] - self.poles) ** 2
            slope = (self.slope + terms.sum(axis=-1)) / self.angular_scale
        return np.where(np.isnan(slope), np.inf, slope)

    def _pencil_zeros(self) -> np.ndarray:
        """The pencil's eigenvalues by the QZ method (scipy), for the rare case with neither a
        slope nor a constant left (two roots at infinity)."""
        from scipy.linalg import eigvals

        n = self.order
        matrix = np.zeros((n + 1, n + 1), dtype=complex)
        matrix[0, 1:] = self.residues
        matrix[1:, 0] = 1.0
        matrix[1:, 1:] = np.diag(self.poles)
        weight = np.eye(n + 1, dtype=complex)
        weight[0, 0] = 0.0
        roots: np.ndarray = eigvals(matrix, weight)
        return roots

    def pole_frequencies(self) -> np.ndarray:
        """Poles in rad/s."""
        return self.poles * self.angular_scale

    def zeros(self, level: complex = 0.0) -> np.ndarray:
        """Finite roots of f(s) = ``level``, rad/s.

        They are the eigenvalues of the pencil (M, E) with M = [[c − level, rᵀ], [1, diag(p)]]
        and E = diag(−slope, 1, …, 1), whose determinant is Π(p − x)·(f(x) − level).
        """
        n = self.order
        offset = complex(self.constant - level)
        if self.slope != 0.0:
            # E is invertible: the pencil's eigenvalues are those of E⁻¹M (numpy's eigvals; no
            # scipy import for a fit).
            matrix = np.zeros((n + 1, n + 1), dtype=complex)
            matrix[0, 0] = offset / -self.slope
            matrix[0, 1:] = self.residues / -self.slope
            matrix[1:, 0] = 1.0
            matrix[1:, 1:] = np.diag(self.poles)
            roots: np.ndarray = np.linalg.eigvals(matrix)
        elif offset != 0.0:
            # No slope: one root is at infinity, the others are the zeros of
            # offset + Σ r/(x − p), the eigenvalues of diag(p) − 1·rᵀ/offset.
            rank_one = np.outer(np.ones(n), self.residues) / offset
            roots = np.linalg.eigvals(np.diag(self.poles) - rank_one)
        else:
            roots = self._pencil_zeros()
        roots = roots[np.isfinite(roots)]
        # Eigenvalues this far out stand for roots at infinity (a vanishing direct term).
        return roots[np.abs(roots) < 1e8] * self.angular_scale


@dataclass(frozen=True)
class Variant:
    """A fit the primary one is compared with: ``kind`` is ``"order"`` or ``"band"``."""

    name: str
    kind: str
    model: RationalModel
    rms_error: float


@dataclass(frozen=True)
class FitSet:
    """The primary fit and the variants the trust rules compare it with."""

    primary: RationalModel
    variants: tuple[Variant, ...]
    rms_error: float
    noise_estimate: float
    data_rms: float
    orders_tried: tuple[tuple[int, float], ...]
    frequency_range_hz: tuple[float, float]

    @property
    def adequate(self) -> bool:
        """False when the fit misses the data by clearly more than their noise."""
        limit = max(POOR_FIT_NOISE_FACTOR * self.noise_estimate, POOR_FIT_RELATIVE * self.data_rms)
        return bool(self.rms_error <= limit)


# --------------------------------------------------------------------------------------------
# Fitting


_Result = TypeVar("_Result")


def _one_blas_thread(function: Callable[..., _Result]) -> Callable[..., _Result]:
    """Run ``function`` with one BLAS thread.

    The least-squares problems here are small (a few thousand rows, tens of columns): a
    multi-threaded BLAS spends more on waking and synchronising its threads than on the
    arithmetic, and on a busy machine far more (``oneport poles`` took 3–5× longer with two
    threads; benchmarks/README.md).
    """

    @functools.wraps(function)
    def limited(*args: Any, **kwargs: Any) -> _Result:
        with _blas_controller().limit(limits=1, user_api="blas"):
            return function(*args, **kwargs)

    return limited


@functools.cache
def _blas_controller() -> Any:
    """The thread pools of the loaded BLAS libraries (looked up once: the look-up walks every
    loaded library)."""
    from threadpoolctl import ThreadpoolController

    return ThreadpoolController()


@_one_blas_thread
def fit_rational(
    frequency_hz: np.ndarray, values: np.ndarray, order: int, *, proper: bool = True
) -> RationalModel:
    """Least-squares rational fit of a real network's response by pole relocation.

    The fit runs in real arithmetic with conjugate pole pairs (a real network's F(−jω) is
    conj F(jω)), so poles and zeros come in exact conjugate pairs. Poles are never flipped into
    the left half plane: a right-half-plane pole in the data stays one in the model.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        Non-negative, increasing, Hz.
    values : ndarray of complex, shape (n,)
        The response at those frequencies.
    order : int
        Number of poles (≥ 1).
    proper : bool
        If False, a term proportional to s is fitted as well (impedances of inductors).

    Returns
    -------
    RationalModel

    Examples
    --------
    A pole in the right half plane, at s = +2π·0.3 GHz, survives the fit:

    >>> f = np.linspace(1e6, 3e9, 200)
    >>> s = 2j * np.pi * f
    >>> model = fit_rational(f, 1.0 / (s - 2 * np.pi * 0.3e9), 1)
    >>> round(float(model.pole_frequencies()[0].real / (2 * np.pi * 1e9)), 6)
    0.3
    """
    scale = 2.0 * np.pi * float(frequency_hz[-1])
    x = 1j * np.asarray(frequency_hz, dtype=float) / frequency_hz[-1]
    values = np.asarray(values, dtype=complex)
    poles = _starting_poles(order, float(frequency_hz[0] / frequency_hz[-1]))
    for _ in range(_RELOCATION_ITERATIONS):
        moved = _relocate(x, values, poles, proper)
        if moved is None:
            break
        change = np.max(np.abs(_completed(moved) - _completed(poles)))
        poles = moved
        if change < _RELOCATION_CONVERGED * max(1.0, float(np.max(np.abs(poles)))):
            break
    return _final_model(x, values, poles, proper, scale)


@_one_blas_thread
def fit_with_variants(
    frequency_hz: np.ndarray,
    values: np.ndarray,
    *,
    proper: bool = True,
    max_order: int = DEFAULT_MAX_ORDER,
    trim_fraction: float = DEFAULT_TRIM_FRACTION,
    noise_estimate: float | None = None,
) -> FitSet:
    """Choose the model order and fit the variants the trust rules need.

    The order is the smallest whose RMS error is within ``ORDER_TOLERANCE`` of the best order
    tried (orders rise until the error stops improving). Variants: one and two poles more on
    the full band, and the whole identification repeated (order chosen afresh) on the band
    trimmed by ``trim_fraction`` at each end.
    """
    frequency_hz, values = validated_samples(frequency_hz, values)
    noise = estimate_noise(values) if noise_estimate is None else float(noise_estimate)
    data_rms = float(np.sqrt(np.mean(np.abs(values) ** 2)))
    adequate = max(POOR_FIT_NOISE_FACTOR * noise, POOR_FIT_RELATIVE * data_rms)
    order, tried = _choose_order(frequency_hz, values, max_order, proper, data_rms, adequate)
    primary = fit_rational(frequency_hz, values, order, proper=proper)
    variants = []
    for higher in (order + 1, order + 2):
        model = fit_rational(frequency_hz, values, higher, proper=proper)
        error = _rms(model, frequency_hz, values)
        variants.append(Variant(f"order {higher}", "order", model, error))
    span = frequency_hz[-1] - frequency_hz[0]
    keep = (frequency_hz >= frequency_hz[0] + trim_fraction * span) & (
        frequency_hz <= frequency_hz[-1] - trim_fraction * span
    )
    if np.count_nonzero(keep) >= MINIMUM_POINTS:
        trimmed_f, trimmed_v = frequency_hz[keep], values[keep]
        trimmed_order, _ = _choose_order(
            trimmed_f, trimmed_v, max_order, proper, data_rms, adequate
        )
        trimmed = fit_rational(trimmed_f, trimmed_v, trimmed_order, proper=proper)
        # Roots are in rad/s, so fits on different bands compare directly.
        name = f"band trimmed {trim_fraction:.0%} at each end, order {trimmed_order}"
        variants.append(Variant(name, "band", trimmed, _rms(trimmed, trimmed_f, trimmed_v)))
    return FitSet(
        primary=primary,
        variants=tuple(variants),
        rms_error=_rms(primary, frequency_hz, values),
        noise_estimate=noise,
        data_rms=data_rms,
        orders_tried=tuple(tried),
        frequency_range_hz=(float(frequency_hz[0]), float(frequency_hz[-1])),
    )


def _choose_order(
    frequency_hz: np.ndarray,
    values: np.ndarray,
    max_order: int,
    proper: bool,
    data_rms: float,
    adequate: float,
) -> tuple[int, list[tuple[int, float]]]:
    """The smallest order within ``ORDER_TOLERANCE`` of the best, searched on a thinned grid.

    Orders rise until the error is exact, or has stopped improving once it is ``adequate``
    (a fit still far from the data keeps adding poles: delays need many), or ``max_order``.
    """
    step = max(1, frequency_hz.size // ORDER_SEARCH_POINTS)
    thin_f, thin_v = frequency_hz[::step], values[::step]
    if thin_f[-1] != frequency_hz[-1]:
        thin_f, thin_v = np.append(thin_f, frequency_hz[-1]), np.append(thin_v, values[-1])
    limit = max(1, min(max_order, thin_f.size // 4))
    tried: list[tuple[int, float]] = []
    for order in range(1, limit + 1):
        model = fit_rational(thin_f, thin_v, order, proper=proper)
        tried.append((order, _rms(model, thin_f, thin_v)))
        errors = [e for _, e in tried]
        if errors[-1] <= EXACT_FIT_FLOOR * data_rms:
            break
        if min(errors) <= adequate and _plateaued(errors):
            break
    best = min(error for _, error in tried)
    threshold = max(ORDER_TOLERANCE * best, EXACT_FIT_FLOOR * data_rms)
    return next(o for o, error in tried if error <= threshold), tried


def validated_samples(frequency_hz: Any, values: Any) -> tuple[np.ndarray, np.ndarray]:
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    values = np.asarray(values, dtype=complex)
    if frequency_hz.ndim != 1 or values.shape != frequency_hz.shape:
        raise InputError(
            f"frequency_hz and values must be 1-D arrays of one length; got shapes"
            f" {frequency_hz.shape} and {values.shape}"
        )
    if frequency_hz.size < MINIMUM_POINTS:
        raise InputError(
            f"{frequency_hz.size} frequency points: a rational fit needs at least {MINIMUM_POINTS}"
        )
    if not (np.all(np.isfinite(frequency_hz)) and np.all(np.isfinite(values))):
        raise InputError("frequency_hz and values must be finite (no NaN or infinity)")
    if frequency_hz[0] < 0 or np.any(np.diff(frequency_hz) <= 0):
        raise InputError("frequency_hz must be non-negative and strictly increasing")
    return frequency_hz, values


def _starting_poles(order: int, low: float) -> np.ndarray:
    """Lightly damped pairs spread over the band (normalised), plus a real pole for odd orders.

    Pairs are stored by their upper member only; real poles have an imaginary part of zero.
    """
    pairs = order // 2
    poles: list[complex] = []
    for beta in np.linspace(max(low, 0.01), 1.0, pairs) if pairs else []:
        poles.append(complex(-0.01 * beta, beta))
    if order % 2:
        poles.append(complex(-0.5 * (max(low, 0.01) + 1.0), 0.0))
    return np.array(poles, dtype=complex)


def _completed(poles: np.ndarray) -> np.ndarray:
    """Upper members and real poles completed with the lower members, sorted."""
    return np.sort_complex(np.concatenate([poles, np.conj(poles[poles.imag > 0])]))


def _basis(x: np.ndarray, poles: np.ndarray) -> np.ndarray:
    """Columns with real coefficients: 1/(x − a) for a real pole; for a pair (a, ā),
    1/(x − a) + 1/(x − ā) and j/(x − a) − j/(x − ā)."""
    columns = []
    for pole in poles:
        if pole.imag == 0.0:
            columns.append(1.0 / (x - pole.real))
        else:
            upper, lower = 1.0 / (x - pole), 1.0 / (x - np.conj(pole))
            columns += [upper + lower, 1j * (upper - lower)]
    return np.stack(columns, axis=1)


def _direct_terms(x: np.ndarray, proper: bool) -> np.ndarray:
    return np.stack([np.ones_like(x), *([] if proper else [x])], axis=1)


def _solve_real(matrix: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Least squares with real unknowns: real and imaginary rows stacked, columns scaled."""
    stacked = np.vstack([matrix.real, matrix.imag])
    target = np.concatenate([rhs.real, rhs.imag])
    norms = np.linalg.norm(stacked, axis=0)
    norms[norms == 0] = 1.0
    return np.linalg.lstsq(stacked / norms, target, rcond=None)[0] / norms


def _realisation(poles: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Real A and b with cᵀ(xI − A)⁻¹b = Σ_real c/(x − a) + Σ_pairs r/(x − a) + r̄/(x − ā),
    r = c₁ + jc₂ (Gustavsen's real form of a conjugate pair)."""
    blocks, inputs = [], []
    for pole in poles:
        if pole.imag == 0.0:
            blocks.append(np.array([[pole.real]]))
            inputs.append([1.0])
        else:
            blocks.append(np.array([[pole.real, pole.imag], [-pole.imag, pole.real]]))
            inputs.append([2.0, 0.0])
    size = sum(block.shape[0] for block in blocks)
    state = np.zeros((size, size))
    start = 0
    for block in blocks:
        stop = start + block.shape[0]
        state[start:stop, start:stop] = block
        start = stop
    return state, np.concatenate(inputs)


def _relocate(x: np.ndarray, y: np.ndarray, poles: np.ndarray, proper: bool) -> np.ndarray | None:
    """One pole relocation: the zeros of the fitted weighting σ(x) = d̃ + Σ c̃·basis(x).

    Relaxed form (Gustavsen 2006): d̃ is free, and one extra row asks the real part of σ summed
    over the samples to equal their number, which keeps the solution away from σ = 0 and
    converges far better on noisy data than fixing d̃ = 1.
    """
    basis = _basis(x, poles)
    direct = _direct_terms(x, proper)
    matrix = np.hstack([basis, direct, -y[:, None] * basis, -y[:, None]])
    stacked = np.vstack([matrix.real, matrix.imag])
    weight = float(np.linalg.norm(y)) / x.size
    constraint = np.zeros(matrix.shape[1])
    constraint[basis.shape[1] + direct.shape[1] : -1] = weight * basis.real.sum(axis=0)
    constraint[-1] = weight * x.size
    stacked = np.vstack([stacked, constraint])
    target = np.zeros(stacked.shape[0])
    target[-1] = weight * x.size
    norms = np.linalg.norm(stacked, axis=0)
    norms[norms == 0] = 1.0
    solution = np.linalg.lstsq(stacked / norms, target, rcond=None)[0] / norms
    weights, offset = solution[-basis.shape[1] - 1 : -1], solution[-1]
    if not (np.all(np.isfinite(solution)) and abs(offset) > 1e-8):
        return None
    state, inputs = _realisation(poles)
    moved = np.linalg.eigvals(state - np.outer(inputs, weights) / offset)
    if not np.all(np.isfinite(moved)) or np.any(moved == 0):
        return None
    if np.any(np.abs(x[:, None] - moved[None, :]) <= 1e-9 * np.abs(x[:, None])):
        return None  # a pole on a sample: the basis and the model would be infinite there
    # A real matrix's eigenvalues: exact conjugate pairs, real ones with zero imaginary part.
    return moved[moved.imag >= 0.0]


def _final_model(
    x: np.ndarray, y: np.ndarray, poles: np.ndarray, proper: bool, scale: float
) -> RationalModel:
    basis = _basis(x, poles)
    solution = _solve_real(np.hstack([basis, _direct_terms(x, proper)]), y)
    all_poles, residues, index = [], [], 0
    for pole in poles:
        if pole.imag == 0.0:
            all_poles.append(complex(pole.real))
            residues.append(complex(solution[index]))
            index += 1
        else:
            residue = complex(solution[index], solution[index + 1])
            all_poles += [complex(pole), complex(np.conj(pole))]
            residues += [residue, residue.conjugate()]
            index += 2
    slope = 0j if proper else complex(solution[index + 1])
    return RationalModel(
        np.array(all_poles), np.array(residues), complex(solution[index]), slope, scale
    )


def _rms(model: RationalModel, frequency_hz: np.ndarray, values: np.ndarray) -> float:
    residual = model.evaluate(2j * np.pi * frequency_hz) - values
    return float(np.sqrt(np.mean(np.abs(residual) ** 2)))


def _plateaued(errors: list[float]) -> bool:
    """True when the last four orders improved on the earlier best by less than 5 %."""
    if len(errors) < 6:
        return False
    return min(errors[-4:]) > 0.95 * min(errors[:-4])
