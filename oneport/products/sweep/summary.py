"""What a designer reads first about a sweep: how much is stable, where, the worst case, the
nominal design, in words and in the ``oneport.sweep/2`` JSON object.

Every parameter carries its SI unit, found from the netlist elements that use it (an
inductance in H, a resistance in ohm, …); the JSON keys name it (``start_h``, ``value_ohm``)
and the words read it in engineering notation (``0.5 nH``). The verdict words are the
check's: ``stable``, ``unstable``, ``inconclusive``, for the run and for each row. The sweep's
frozen result, :class:`SweepResult`, lives here too: its ``to_dict()`` is the command's JSON.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from ...analysis.variants import INCONCLUSIVE, STABLE, UNSTABLE, VERDICT_CODES
from ...cautions import CAUTIONS
from ...display import Displayed
from ...findings import Finding
from ...units import format_count, format_frequency, format_plain, format_value, to_decibels
from ..parameters import key_suffix, value_record
from ..parameters import parameter_units as units_of
from .plan import ParameterPlan
from .runner import SweepRun, run_chunk

if TYPE_CHECKING:
    from matplotlib.figure import Figure

SWEEP_SCHEMA = "oneport.sweep/2"
#: What the device-list column counts.
DEVICE_INDEX_WORDS = "device file number (from 0, in the order given)"


@dataclass(frozen=True)
class Nominal:
    """The nominal design of a Monte Carlo run (every parameter at its netlist value), judged
    by the same source and judgement as the variants."""

    values: dict[str, float]
    verdict: str
    encirclements: int | None
    min_distance: float


@dataclass(frozen=True)
class SweepSummary:
    """The headline figures of a sweep, with the words a reader and a script need."""

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
    #: Whether every planned variant ran; a partial run's table holds the finished ones.
    complete: bool = True
    #: What stopped the run early, other than Ctrl-C (one line); None when nothing did.
    error: str | None = None
    units: dict[str, str] = field(default_factory=dict)
    nominal: Nominal | None = None
    reasons: tuple[str, ...] = ()


def parameter_units(source: Any) -> dict[str, str]:
    """Each netlist parameter's SI unit symbol, from the elements that use it (``""`` for a
    plain number, or when elements use it for quantities of different units)."""
    sides = (getattr(source, "device", None), getattr(source, "load", None))
    return units_of([getattr(side, "circuit", None) for side in sides])


def summarise(result: SweepRun, source: Any = None, dc_sign: int | None = None) -> SweepSummary:
    """Fractions, the stable variants' parameter bounds, the worst variant with its reason, the
    parameters' units and, for a Monte Carlo run, the nominal design judged (``source`` is the
    sweep's variant source; without it units are unknown and the nominal is not judged)."""
    units = parameter_units(source) if source is not None else {}
    units = {name: units.get(name, "") for name in result.plan.values}
    table = result.table
    completed = result.completed
    error = None if result.error is None else " ".join(str(result.error).split())
    # After a failure the nominal design is not judged: what failed may fail again.
    nominal = _nominal(result, source, dc_sign) if result.error is None else None
    if not completed:
        empty = SweepSummary(
            "inconclusive",
            result.plan.variants,
            0,
            0.0,
            0.0,
            0.0,
            {},
            None,
            "",
            result.interrupted,
            complete=False,
            error=error,
            units=units,
            nominal=nominal,
        )
        return _with_reasons(empty, result)
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
    if not result.complete and verdict == "stable":
        verdict = "inconclusive"
    summary = SweepSummary(
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
        complete=result.complete,
        error=error,
        units=units,
        nominal=nominal,
    )
    return _with_reasons(summary, result)


def _nominal(result: SweepRun, source: Any, dc_sign: int | None) -> Nominal | None:
    """The Monte Carlo run's nominal design, judged by the one judgement (one more row)."""
    if result.plan.kind != "monte-carlo" or source is None:
        return None
    values = {
        plan.name: float(plan.nominal)
        for plan in result.plan.parameters
        if plan.nominal is not None
    }
    if set(values) != set(result.plan.values):
        return None
    columns = run_chunk(
        source,
        {name: np.array([value]) for name, value in values.items()},
        result.frequency_hz,
        result.reference_impedance_ohm,
        dc_sign,
    )
    code = int(columns["verdict_code"][0])
    count = int(columns["encirclements"][0]) if bool(columns["count_known"][0]) else None
    return Nominal(values, VERDICT_CODES[code], count, float(columns["min_distance"][0]))


def _worst(
    table: dict[str, np.ndarray], stable: np.ndarray, unstable: np.ndarray
) -> tuple[int, str]:
    if unstable.any():
        # Most right-half-plane roots first, then the largest loop gain.
        key = table["encirclements"] * 1e6 + table["worst_loop_gain"]
        row = int(np.flatnonzero(unstable)[np.argmax(key[unstable])])
        frequency = table["oscillation_frequency_hz"][row]
        where = (
            f", oscillation near {format_frequency(float(frequency))}"
            if np.isfinite(frequency)
            else " (latch-up)"
            if table["latch_up"][row]
            else ""
        )
        roots = format_count(
            int(table["encirclements"][row]),
            "right-half-plane natural frequency",
            "right-half-plane natural frequencies",
        )
        peak = to_decibels(float(table["worst_loop_gain"][row]))
        return row, f"unstable, {roots}{where}; peak |L| {peak:.2f} dB"
    candidates = np.flatnonzero(stable) if stable.any() else np.arange(stable.size)
    row = int(candidates[np.argmin(table["min_distance"][candidates])])
    word = VERDICT_CODES[int(table["verdict_code"][row])]
    return row, (
        f"{word}, closest approach to +1: |1 - L| = {format_plain(table['min_distance'][row])}"
        f" at {format_frequency(float(table['min_distance_frequency_hz'][row]))}"
    )


def parameter_words(plan: ParameterPlan, unit: str) -> str:
    """How one parameter was varied, in units: ``41 values from 0.5 nH to 8 nH, linear``."""
    if plan.name == _device_index_name():
        return f"{plan.count} measured device files"
    if plan.nominal is not None:
        tolerance = plan.tolerance or 0.0
        return f"{format_value(plan.nominal, unit)} ±{tolerance:.0%} ({plan.distribution})"
    assert plan.start is not None and plan.stop is not None
    return (
        f"{plan.count} values from {format_value(plan.start, unit)} to"
        f" {format_value(plan.stop, unit)}, {plan.spacing}"
    )


def values_words(values: Mapping[str, float], units: Mapping[str, str]) -> str:
    """``R = 1 ohm, L = 8 nH``."""
    return ", ".join(
        f"{name} = {format_value(float(value), units.get(name, ''))}"
        if name != _device_index_name()
        else f"device file {int(value)}"
        for name, value in values.items()
    )


def _device_index_name() -> str:
    from .sources import DEVICE_INDEX

    return DEVICE_INDEX


def _with_reasons(summary: SweepSummary, result: SweepRun) -> SweepSummary:
    """The verdict's reasons: how many variants are what, the nominal design, interruption."""
    from dataclasses import replace

    reasons = []
    done = summary.completed
    if summary.interrupted:
        reasons.append(
            f"Interrupted after {done} of {summary.variants} variants: the verdict covers the"
            " variants finished (their rows are valid)."
        )
    elif not summary.complete:
        reasons.append(
            f"Stopped by an error after {done} of {summary.variants} variants"
            f" ({summary.error}): the verdict covers the variants finished (their rows are"
            " valid)."
        )
    if done:
        unstable = round(summary.unstable_fraction * done)
        undecided = round(summary.inconclusive_fraction * done)
        stable = done - unstable - undecided
        if summary.verdict == "stable":
            reasons.append(
                f"All {done} variants are stable (small-signal): each one's count is N = 0 under"
                " the check's premise and closures."
            )
        else:
            reasons.append(
                f"Of {done} variants {stable} are stable, {unstable} unstable (their count is"
                f" N ≥ 1) and {undecided} inconclusive (the data cannot decide them; the table"
                " holds each row's count)."
            )
    if summary.nominal is not None:
        nominal = summary.nominal
        reasons.append(
            f"The nominal design ({values_words(nominal.values, summary.units)}) is"
            f" {nominal.verdict}"
            + (
                f": its loop comes no closer to +1 than |1 - L| ="
                f" {format_plain(nominal.min_distance)}."
                if nominal.verdict == "stable"
                else "."
            )
        )
    return replace(summary, reasons=tuple(reasons))


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
        """True when the run was stopped by Ctrl-C before every chunk finished."""
        return self.run.interrupted

    @property
    def complete(self) -> bool:
        """True when every planned variant ran (else the table holds the finished ones)."""
        return self.run.complete

    @property
    def error(self) -> BaseException | None:
        """What stopped the run early, other than Ctrl-C (the command re-raises it after
        writing and reporting the finished variants); None when nothing did."""
        return self.run.error

    def plot(self, ax: Any = None) -> Figure:
        """A stability map over two swept parameters, else a histogram of min |1 − L|.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ...rendering.sweep_plots import plot_sweep

        figure: Figure = plot_sweep(self.run, ax, summary=self.summary)
        return figure

    def to_dict(self) -> dict[str, Any]:
        """The ``oneport.sweep/2`` JSON object (docs/sweep.md)."""
        data = summary_dict(self.run, self.summary, list(self.inputs), self.table_path)
        data["warnings"] = [finding.to_dict() for finding in self.warnings]
        return data


def summary_dict(
    result: SweepRun, summary: SweepSummary, inputs: list[dict[str, Any]], table_path: str | None
) -> dict[str, Any]:
    """The ``oneport.sweep/2`` JSON object of a run (warnings left empty)."""
    units = summary.units
    worst = None
    if summary.worst_row is not None:
        row = summary.worst_row
        table = result.table
        frequency = _plain(table["oscillation_frequency_hz"][row])
        peak = float(table["worst_loop_gain"][row])
        worst = {
            "row": row,
            "verdict": VERDICT_CODES[int(table["verdict_code"][row])],
            "parameters": [
                _value_record(name, float(table[name][row]), units.get(name, ""))
                for name in result.plan.values
            ],
            "encirclements": int(table["encirclements"][row])
            if bool(table["count_known"][row])
            else None,
            "latch_up": bool(table["latch_up"][row]),
            "oscillation_frequency_hz": frequency,
            "oscillatory_modes": _plain(table["oscillatory_modes"][row]),
            "min_distance_to_critical_point": _plain(table["min_distance"][row]),
            "min_distance_frequency_hz": _plain(table["min_distance_frequency_hz"][row]),
            "peak_loop_gain_db": to_decibels(peak) if peak > 0 else None,
            "peak_loop_gain_frequency_hz": _plain(table["worst_loop_gain_frequency_hz"][row]),
            "reason": summary.worst_reason,
            "reference_impedance_ohm": result.reference_impedance_ohm,
        }
    nominal = None
    if summary.nominal is not None:
        nominal = {
            "verdict": summary.nominal.verdict,
            "encirclements": summary.nominal.encirclements,
            "min_distance_to_critical_point": summary.nominal.min_distance,
            "parameters": [
                _value_record(name, value, units.get(name, ""))
                for name, value in summary.nominal.values.items()
            ],
            "reference_impedance_ohm": result.reference_impedance_ohm,
        }
    return {
        "schema": SWEEP_SCHEMA,
        "verdict": summary.verdict,
        "reasons": list(summary.reasons),
        "kind": result.plan.kind,
        "parameters": [
            _plan_record(plan, units.get(plan.name, "")) for plan in result.plan.parameters
        ],
        "variants": summary.variants,
        "completed": summary.completed,
        "interrupted": summary.interrupted,
        "complete": summary.complete,
        "error": summary.error,
        "stable_fraction": summary.stable_fraction,
        "unstable_fraction": summary.unstable_fraction,
        "inconclusive_fraction": summary.inconclusive_fraction,
        "nominal": nominal,
        "stable_bounds": [
            {
                "name": name,
                "unit": units.get(name, ""),
                f"low{_suffix(units.get(name, ''))}": low,
                f"high{_suffix(units.get(name, ''))}": high,
            }
            for name, (low, high) in summary.stable_bounds.items()
        ],
        "worst_variant": worst,
        "reference_impedance_ohm": result.reference_impedance_ohm,
        "frequency_range_hz": [float(result.frequency_hz[0]), float(result.frequency_hz[-1])],
        "points": int(result.frequency_hz.size),
        "table": table_path,
        "warnings": [],
        "cautions": list(CAUTIONS),
        "inputs": inputs,
    }


def _suffix(unit: str) -> str:
    return key_suffix(unit)


def _value_record(name: str, value: float, unit: str) -> dict[str, Any]:
    return value_record(name, value, unit)


def _plan_record(plan: ParameterPlan, unit: str) -> dict[str, Any]:
    suffix = _suffix(unit)
    record: dict[str, Any] = {"name": plan.name, "unit": unit}
    if plan.nominal is not None:
        record[f"nominal{suffix}"] = plan.nominal
        record["relative_tolerance"] = plan.tolerance
        record["distribution"] = plan.distribution
    else:
        record[f"start{suffix}"] = plan.start
        record[f"stop{suffix}"] = plan.stop
        record["count"] = plan.count
        record["spacing"] = plan.spacing
    return record


def _plain(value: Any) -> Any:
    value = value.item() if hasattr(value, "item") else value
    if isinstance(value, float) and not np.isfinite(value):
        return None
    return value
