"""Which variants a sweep runs: a grid over named parameters, or Monte Carlo over tolerances.

A plan only holds parameter values (SI units, one array per name, one entry per variant) and
hands them out by chunk; it knows nothing of circuits or analysis.

Tolerances: ``uniform`` draws each parameter uniformly within nominal·(1 ± tol); ``normal``
draws from a normal distribution with σ = tol/3 about the nominal, truncated at ±tol (values
outside are drawn again, so the distribution inside is the normal one, renormalised). The seed
makes a run repeatable: the same seed, samples and tolerances give the same variants.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from ...errors import InputError

_VARY = re.compile(r"^\s*([A-Za-z_]\w*)\s*=\s*([^:]+):([^:]+):(\d+)\s*$")
_TOLERANCE = re.compile(r"^\s*([A-Za-z_]\w*)\s*=\s*([0-9.eE+-]+)\s*%\s*$")


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
    """Parameter values per variant, and how they were chosen."""

    kind: str  # "grid" or "monte-carlo"
    values: Mapping[str, np.ndarray]
    shape: tuple[int, ...]
    description: Mapping[str, str]
    parameters: tuple[ParameterPlan, ...] = ()

    @property
    def variants(self) -> int:
        """Number of variants."""
        return int(np.prod(self.shape)) if self.shape else 0

    def chunk(self, start: int, stop: int) -> dict[str, np.ndarray]:
        """Parameter values of variants ``start`` to ``stop`` − 1."""
        return {name: column[start:stop] for name, column in self.values.items()}


def parse_vary(text: str) -> tuple[str, float, float, int]:
    """``NAME=START:STOP:COUNT`` → (name, start, stop, count); values as in a netlist (SI)."""
    match = _VARY.match(text)
    if not match:
        raise InputError(f"--vary {text!r}: give NAME=START:STOP:COUNT, e.g. Lbias=10nH:100nH:21")
    name, start, stop, count = match.groups()
    count_value = int(count)
    if count_value < 1:
        raise InputError(f"--vary {text!r}: COUNT must be at least 1")
    return name, _value(start, text), _value(stop, text), count_value


def _value(token: str, text: str) -> float:
    from ...circuit.values import ValueTokenError, parse_number

    try:
        value = parse_number(token)
    except ValueTokenError as error:
        raise InputError(f"--vary {text!r}: {error}") from None
    if value is None:
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
        spacing = "logarithmic" if name in logarithmic else "linear"
        plans.append(ParameterPlan(name, start=start, stop=stop, count=count, spacing=spacing))
    mesh = np.meshgrid(*axes, indexing="ij")
    shape = tuple(axis.size for axis in axes)
    values = {name: grid.reshape(-1) for name, grid in zip(names, mesh, strict=True)}
    return SweepPlan("grid", values, shape, description, tuple(plans))


def parse_tolerance(text: str) -> tuple[str, float]:
    """``NAME=5%`` → (name, 0.05)."""
    match = _TOLERANCE.match(text)
    if not match:
        raise InputError(f"--tolerance {text!r}: give NAME=PERCENT%, e.g. Cblock=5%")
    name, percent = match.group(1), float(match.group(2))
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
    """``samples`` random variants, each parameter within nominal·(1 ± tol)."""
    if samples < 1:
        raise InputError(f"--samples {samples}: at least 1 is needed")
    if distribution not in ("uniform", "normal"):
        raise InputError(f"--distribution {distribution!r}: accepted: uniform, normal")
    rng = np.random.default_rng(seed)
    values = {}
    description = {}
    plans = []
    for name, tolerance in tolerances:
        if name not in nominal:
            known = ", ".join(sorted(nominal)) or "none"
            raise InputError(f"--tolerance {name}: no parameter of that name (known: {known})")
        relative = _draw(rng, distribution, tolerance, samples)
        values[name] = nominal[name] * (1.0 + relative)
        description[name] = f"{nominal[name]:g} ±{tolerance:.0%} ({distribution})"
        plans.append(
            ParameterPlan(
                name, nominal=nominal[name], tolerance=tolerance, distribution=distribution
            )
        )
    return SweepPlan("monte-carlo", values, (samples,), description, tuple(plans))


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
