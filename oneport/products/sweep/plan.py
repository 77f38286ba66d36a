"""Which variants a sweep runs: a grid over named parameters, or Monte Carlo over tolerances.

A plan holds how to make parameter values (SI units), not the values: :meth:`SweepPlan.chunk`
makes the values of variants ``start`` to ``stop`` − 1 when they are needed, so a plan's
memory does not grow with the number of variants, and a chunk can be made wherever it runs (a
Dask worker too). It knows nothing of circuits or analysis.

Grids: every combination of the axes, the first parameter varying slowest; a chunk's values
come from its variants' indices into the axes.

Tolerances: ``uniform`` draws each parameter uniformly within nominal·(1 ± tol); ``normal``
draws from a normal distribution with σ = tol/3 about the nominal, truncated at ±tol (values
outside are drawn again, so the distribution inside is the normal one, renormalised). The
variants come in blocks of :data:`MONTE_CARLO_BLOCK`; block *b* is drawn by its own generator,
seeded with NumPy's ``SeedSequence(seed, spawn_key=(b,))`` (the *b*-th child of the seed), one
parameter after another in the order given. A variant's values therefore depend only on the
seed, the tolerances, the distribution and its own index — never on the chunk size, the
number of samples asked for, threads or Dask — and a chunk draws only the blocks it covers.
"""

from __future__ import annotations

import re
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from ...errors import InputError
from ..options import MAX_VARIANTS
from ..options import samples as read_samples
from ..options import seed as read_seed

_VARY = re.compile(r"^\s*([A-Za-z_]\w*)\s*=\s*([^:]+):([^:]+):(\d+)\s*$")
_TOLERANCE = re.compile(r"^\s*([A-Za-z_]\w*)\s*=\s*([0-9.eE+-]+)\s*%\s*$")

#: Variants per block of the Monte Carlo stream (each block has its own seeded generator).
MONTE_CARLO_BLOCK = 4096


@dataclass(frozen=True)
class _GridColumns:
    """Values of a grid's variants from their indices: the axes, first varying slowest."""

    names: tuple[str, ...]
    axes: tuple[np.ndarray, ...] = field(repr=False)

    def rows(self, start: int, stop: int) -> dict[str, np.ndarray]:
        shape = tuple(axis.size for axis in self.axes)
        indices = np.unravel_index(np.arange(start, stop), shape)
        return {
            name: axis[index]
            for name, axis, index in zip(self.names, self.axes, indices, strict=True)
        }


@dataclass(frozen=True)
class _DrawnColumns:
    """Values of Monte Carlo variants, drawn block by block from the seeded stream."""

    names: tuple[str, ...]
    tolerances: tuple[float, ...]
    nominal: tuple[float, ...]
    seed: int
    distribution: str

    def rows(self, start: int, stop: int) -> dict[str, np.ndarray]:
        if stop <= start:
            return {name: np.empty(0) for name in self.names}
        first, last = start // MONTE_CARLO_BLOCK, (stop - 1) // MONTE_CARLO_BLOCK
        blocks = [self.block(index) for index in range(first, last + 1)]
        offset = first * MONTE_CARLO_BLOCK
        span = slice(start - offset, stop - offset)
        return {
            name: np.concatenate([block[column] for block in blocks])[span]
            for column, name in enumerate(self.names)
        }

    def block(self, index: int) -> tuple[np.ndarray, ...]:
        """Every parameter's values in block ``index`` (read-only arrays)."""
        return _block(self, index)


@lru_cache(maxsize=4)
def _block(columns: _DrawnColumns, index: int) -> tuple[np.ndarray, ...]:
    sequence = np.random.SeedSequence(columns.seed, spawn_key=(index,))
    rng = np.random.Generator(np.random.PCG64(sequence))
    drawn = []
    for tolerance, nominal in zip(columns.tolerances, columns.nominal, strict=True):
        values = nominal * (1.0 + _draw(rng, columns.distribution, tolerance, MONTE_CARLO_BLOCK))
        values.flags.writeable = False
        drawn.append(values)
    return tuple(drawn)


class _Values(Mapping[str, np.ndarray]):
    """Every variant's value by parameter, made on access (iterating gives the names only)."""

    def __init__(self, plan: SweepPlan) -> None:
        self._plan = plan

    def __getitem__(self, name: str) -> np.ndarray:
        if name not in self._plan.columns.names:
            raise KeyError(name)
        return self._plan.chunk(0, self._plan.variants)[name]

    def __iter__(self) -> Iterator[str]:
        return iter(self._plan.columns.names)

    def __len__(self) -> int:
        return len(self._plan.columns.names)


@dataclass(frozen=True)
class ParameterPlan:
    """How one parameter's values were chosen (SI units), for reports and JSON.

    A grid parameter has ``start``, ``stop``, ``count`` and ``spacing`` (``"linear"`` or
    ``"logarithmic"``); a Monte Carlo one has ``nominal``, ``tolerance`` (a fraction, 0.05 for
    ±5 %) and ``distribution``.
    """

    name: str
    start: float | None = None
    stop: float | None = None
    count: int | None = None
    spacing: str | None = None
    nominal: float | None = None
    tolerance: float | None = None
    distribution: str | None = None


@dataclass(frozen=True)
class SweepPlan:
    """How the variants' parameter values are made, how many there are, and how chosen."""

    kind: str  # "grid" or "monte-carlo"
    columns: _GridColumns | _DrawnColumns = field(repr=False)
    shape: tuple[int, ...]
    description: Mapping[str, str]
    parameters: tuple[ParameterPlan, ...] = ()

    @property
    def variants(self) -> int:
        """Number of variants."""
        return int(np.prod(self.shape)) if self.shape else 0

    @property
    def values(self) -> Mapping[str, np.ndarray]:
        """Parameter values of every variant by name (made when a name is looked up)."""
        return _Values(self)

    def chunk(self, start: int, stop: int) -> dict[str, np.ndarray]:
        """Parameter values of variants ``start`` to ``stop`` − 1."""
        stop = min(stop, self.variants)
        return self.columns.rows(start, max(start, stop))


def parse_vary(text: str) -> tuple[str, float, float, int]:
    """``NAME=START:STOP:COUNT`` → (name, start, stop, count); values as in a netlist (SI)."""
    match = _VARY.match(text)
    if not match:
        raise InputError(f"--vary {text!r}: give NAME=START:STOP:COUNT, e.g. Lbias=10nH:100nH:21")
    name, start, stop, count = match.groups()
    count_value = int(count)
    if not 1 <= count_value <= MAX_VARIANTS:
        raise InputError(
            f"--vary {text!r}: COUNT must be from 1 to {MAX_VARIANTS:,} (the limit of variants"
            " per sweep)"
        )
    return name, _value(start, text), _value(stop, text), count_value


def _value(token: str, text: str) -> float:
    from ...circuit.values import ValueTokenError, parse_number

    try:
        value = parse_number(token)
    except ValueTokenError as error:
        raise InputError(f"--vary {text!r}: {error}") from None
    if value is None or not np.isfinite(value):
        raise InputError(f"--vary {text!r}: {token!r} is not a number (e.g. 3.3nH, 10p, 5meg)")
    return value


def grid_plan(
    specifications: Sequence[tuple[str, float, float, int]], logarithmic: Sequence[str] = ()
) -> SweepPlan:
    """Every combination of the swept values (the first parameter varies slowest)."""
    names = [spec[0] for spec in specifications]
    if len(set(names)) != len(names):
        raise InputError(f"--vary: a parameter is given twice ({', '.join(names)})")
    unknown = set(logarithmic) - set(names)
    if unknown:
        raise InputError(f"--log {', '.join(sorted(unknown))}: not a swept parameter (--vary)")
    total = 1
    for _, _, _, count in specifications:
        total *= int(count)
    if total > MAX_VARIANTS:
        raise InputError(
            f"--vary: {' × '.join(str(spec[3]) for spec in specifications)} = {total:,}"
            f" combinations is above the limit of {MAX_VARIANTS:,} variants per sweep; give"
            " fewer values"
        )
    axes = []
    description = {}
    plans = []
    for name, start, stop, count in specifications:
        if name in logarithmic:
            if start <= 0 or stop <= 0:
                raise InputError(f"--log {name}: a logarithmic sweep needs positive values")
            axes.append(np.geomspace(start, stop, count))
            description[name] = f"{count} values from {start:g} to {stop:g}, logarithmic"
        else:
            axes.append(np.linspace(start, stop, count))
            description[name] = f"{count} values from {start:g} to {stop:g}, linear"
        if not np.all(np.isfinite(axes[-1])):
            raise InputError(
                f"--vary {name}: {start:g} to {stop:g} leaves the finite numbers; give values"
                " within the netlist's bounds (docs/netlist.md)"
            )
        spacing = "logarithmic" if name in logarithmic else "linear"
        plans.append(ParameterPlan(name, start=start, stop=stop, count=count, spacing=spacing))
    shape = tuple(axis.size for axis in axes)
    columns = _GridColumns(tuple(names), tuple(axes))
    return SweepPlan("grid", columns, shape, description, tuple(plans))


def parse_tolerance(text: str) -> tuple[str, float]:
    """``NAME=5%`` → (name, 0.05)."""
    match = _TOLERANCE.match(text)
    if not match:
        raise InputError(f"--tolerance {text!r}: give NAME=PERCENT%, e.g. Cblock=5%")
    name = match.group(1)
    try:
        percent = float(match.group(2))
    except ValueError:
        percent = float("nan")
    if not 0 < percent < 100:
        raise InputError(f"--tolerance {text!r}: the tolerance must be between 0 and 100 %")
    return name, percent / 100.0


def monte_carlo_plan(
    tolerances: Sequence[tuple[str, float]],
    nominal: Mapping[str, float],
    samples: int,
    seed: int,
    distribution: str = "uniform",
) -> SweepPlan:
    """``samples`` random variants, each parameter within nominal·(1 ± tol).

    Variant *i* is the same in every run with the same seed, tolerances and distribution,
    whatever ``samples`` (as long as it exceeds *i*) and however the run is cut into chunks.
    """
    samples = read_samples(samples, "--samples")
    seed = read_seed(seed, "--seed")
    if distribution not in ("uniform", "normal"):
        raise InputError(f"--distribution {distribution!r}: accepted: uniform, normal")
    names, spreads, centres = [], [], []
    description = {}
    plans = []
    for name, tolerance in tolerances:
        if name not in nominal:
            known = ", ".join(sorted(nominal)) or "none"
            raise InputError(f"--tolerance {name}: no parameter of that name (known: {known})")
        if name in names:
            raise InputError(f"--tolerance {name}: given twice; give each parameter once")
        names.append(name)
        spreads.append(float(tolerance))
        centres.append(float(nominal[name]))
        description[name] = f"{nominal[name]:g} ±{tolerance:.0%} ({distribution})"
        plans.append(
            ParameterPlan(
                name, nominal=nominal[name], tolerance=tolerance, distribution=distribution
            )
        )
    columns = _DrawnColumns(tuple(names), tuple(spreads), tuple(centres), int(seed), distribution)
    return SweepPlan("monte-carlo", columns, (samples,), description, tuple(plans))


def _draw(
    rng: np.random.Generator, distribution: str, tolerance: float, samples: int
) -> np.ndarray:
    if distribution == "uniform":
        return rng.uniform(-tolerance, tolerance, samples)
    sigma = tolerance / 3.0
    drawn = rng.normal(0.0, sigma, samples)
    outside = np.abs(drawn) > tolerance
    while outside.any():
        drawn[outside] = rng.normal(0.0, sigma, int(outside.sum()))
        outside = np.abs(drawn) > tolerance
    return drawn
