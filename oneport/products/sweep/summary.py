"""What a designer reads first about a sweep: how much is stable, where, and the worst case;
and the sweep's frozen result, whose ``to_dict()`` is the command's JSON."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from ...analysis.variants import INCONCLUSIVE, STABLE, UNSTABLE
from ...cautions import CAUTIONS
from ...display import Displayed
from ...findings import Finding
from .runner import SweepRun

if TYPE_CHECKING:
    from matplotlib.figure import Figure

SWEEP_SCHEMA = "oneport.sweep/1"


@dataclass(frozen=True)
class SweepSummary:
    """The headline figures of a sweep."""

    verdict: str
    variants: int
    completed: int
    stable_fraction: float
    unstable_fraction: float
    inconclusive_fraction: float
    stable_bounds: dict[str, tuple[float, float]]
    worst_row: int | None
    worst_reason: str
    interrupted: bool


def summarise(result: SweepRun) -> SweepSummary:
    """Fractions, the stable variants' parameter bounds, and the worst variant with its reason."""
    table = result.table
    completed = result.completed
    if not completed:
        return SweepSummary(
            "inconclusive", result.plan.variants, 0, 0.0, 0.0, 0.0, {}, None, "", True
        )
    codes = table["verdict_code"]
    stable = codes == STABLE
    unstable = codes == UNSTABLE
    bounds = {
        name: (float(table[name][stable].min()), float(table[name][stable].max()))
        for name in result.plan.values
        if stable.any()
    }
    worst, reason = _worst(table, stable, unstable)
    verdict = "unstable" if unstable.any() else ("stable" if stable.all() else "inconclusive")
    if result.interrupted and verdict == "stable":
        verdict = "inconclusive"
    return SweepSummary(
        verdict=verdict,
        variants=result.plan.variants,
        completed=completed,
        stable_fraction=float(stable.mean()),
        unstable_fraction=float(unstable.mean()),
        inconclusive_fraction=float((codes == INCONCLUSIVE).mean()),
        stable_bounds=bounds,
        worst_row=worst,
        worst_reason=reason,
        interrupted=result.interrupted,
    )


def _worst(
    table: dict[str, np.ndarray], stable: np.ndarray, unstable: np.ndarray
) -> tuple[int, str]:
    if unstable.any():
        # Most right-half-plane roots first, then the largest loop gain.
        key = table["encirclements"] * 1e6 + table["worst_loop_gain"]
        row = int(np.flatnonzero(unstable)[np.argmax(key[unstable])])
        frequency = table["oscillation_frequency_hz"][row]
        where = (
            f", oscillation near {frequency / 1e9:.4g} GHz"
            if np.isfinite(frequency)
            else " (latch-up)"
            if table["latch_up"][row]
            else ""
        )
        return row, (
            f"{table['encirclements'][row]} right-half-plane natural frequency(ies){where};"
            f" peak |L| {table['worst_loop_gain'][row]:.3g}"
        )
    candidates = np.flatnonzero(stable) if stable.any() else np.arange(stable.size)
    row = int(candidates[np.argmin(table["min_distance"][candidates])])
    return row, (
        f"closest approach to +1: |1 - L| = {table['min_distance'][row]:.3g} at"
        f" {table['min_distance_frequency_hz'][row] / 1e9:.4g} GHz"
    )


@dataclass(frozen=True, repr=False)
class SweepResult(Displayed):
    """Everything ``oneport sweep`` found, frozen: the run (plan, table, how it ended), its
    summary, what was read, the warnings, and the table file written (if any).

    Attributes
    ----------
    run : SweepRun
        The plan, the grid, the per-variant table (column → array) and how it ended.
    summary : SweepSummary
        Verdict, fractions, the stable variants' bounds, the worst variant and why.
    inputs : tuple of dict
        What was read, per device file and the load (the JSON's ``inputs``).
    warnings : tuple of Finding
    table_path : str or None
        Where the table was written (``output=``).
    """

    run: SweepRun = field(repr=False)
    summary: SweepSummary
    inputs: tuple[dict[str, Any], ...]
    warnings: tuple[Finding, ...]
    table_path: str | None = None
    cautions: tuple[str, ...] = CAUTIONS

    @property
    def verdict(self) -> str:
        """``unstable`` if any variant is, ``stable`` if all are, else ``inconclusive``."""
        return self.summary.verdict

    @property
    def table(self) -> dict[str, np.ndarray]:
        """The per-variant table: parameter and result columns, one row per variant."""
        return self.run.table

    @property
    def interrupted(self) -> bool:
        """True when the run was stopped before every chunk finished."""
        return self.run.interrupted

    def plot(self, ax: Any = None) -> Figure:
        """A stability map over two swept parameters, else a histogram of min |1 − L|.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ...rendering.sweep_plots import plot_sweep

        figure: Figure = plot_sweep(self.run, ax)
        return figure

    def to_dict(self) -> dict[str, Any]:
        """The ``oneport.sweep/1`` JSON object (docs/sweep.md)."""
        data = summary_dict(self.run, self.summary, list(self.inputs), self.table_path)
        data["warnings"] = [finding.to_dict() for finding in self.warnings]
        return data


def summary_dict(
    result: SweepRun, summary: SweepSummary, inputs: list[dict[str, Any]], table_path: str | None
) -> dict[str, Any]:
    """The ``oneport.sweep/1`` JSON object of a run (warnings left empty)."""
    worst = None
    if summary.worst_row is not None:
        worst = {name: _plain(column[summary.worst_row]) for name, column in result.table.items()}
        worst["reason"] = summary.worst_reason
    return {
        "schema": SWEEP_SCHEMA,
        "verdict": summary.verdict,
        "kind": result.plan.kind,
        "parameters": dict(result.plan.description),
        "variants": summary.variants,
        "completed": summary.completed,
        "interrupted": summary.interrupted,
        "stable_fraction": summary.stable_fraction,
        "unstable_fraction": summary.unstable_fraction,
        "inconclusive_fraction": summary.inconclusive_fraction,
        "stable_bounds": {name: list(pair) for name, pair in summary.stable_bounds.items()},
        "worst_variant": worst,
        "reference_impedance_ohm": result.reference_impedance_ohm,
        "frequency_range_hz": [float(result.frequency_hz[0]), float(result.frequency_hz[-1])],
        "points": int(result.frequency_hz.size),
        "table": table_path,
        "warnings": [],
        "cautions": list(CAUTIONS),
        "inputs": inputs,
    }


def _plain(value: Any) -> Any:
    value = value.item() if hasattr(value, "item") else value
    if isinstance(value, float) and not np.isfinite(value):
        return None
    return value
