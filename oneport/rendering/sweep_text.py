"""Plain-text summary of a sweep or a Monte Carlo run.

Rendering only: it formats what a sweep result and its summary hold and computes nothing.
Parameters read in their units (``L: 41 values from 0.5 nH to 8 nH``), the worst variant in
units and its peak |L| in dB, as ``check`` gives it.
"""

from __future__ import annotations

from typing import Any

from ..products.sweep.summary import parameter_words, values_words
from ..units import format_frequency, format_resistance, format_value
from .check_text import closing_sections, wrap

_HEADLINE = {
    "stable": "ALL STABLE (small-signal)",
    "unstable": "SOME VARIANTS UNSTABLE",
    "inconclusive": "INCONCLUSIVE for some variants",
}


def verdict_line(result: Any) -> str:
    """One line: the verdict and the shares of each verdict word (``--quiet``)."""
    summary = result.summary
    return (
        f"{_HEADLINE[summary.verdict]}: {summary.stable_fraction:.1%} stable,"
        f" {summary.unstable_fraction:.1%} unstable, {summary.inconclusive_fraction:.1%}"
        f" inconclusive of {summary.completed} variants;"
        f" Z0 = {format_resistance(result.run.reference_impedance_ohm)}"
    )


def render(result: Any) -> str:
    """The text report of a :class:`~oneport.products.sweep.summary.SweepResult`: verdict,
    reasons, what was varied, what was found, cautions."""
    summary, table_path, warnings = result.summary, result.table_path, list(result.warnings)
    run = result.run
    line = verdict_line(result)
    units = summary.units
    rows = [line, ""]
    rows += [wrap(reason, "  ") for reason in summary.reasons]
    rows += ["", "Plan"]
    rows.append(
        f"  band {format_frequency(run.frequency_hz[0])}-"
        f"{format_frequency(run.frequency_hz[-1])}, {run.frequency_hz.size} points"
    )
    for plan in run.plan.parameters:
        rows.append(wrap(f"{plan.name}: {parameter_words(plan, units.get(plan.name, ''))}", "  "))
    rows += ["", "Found"]
    if summary.interrupted:
        rows.append(f"  interrupted: {summary.completed} of {summary.variants} variants finished")
    elif not summary.complete:
        rows.append(
            wrap(
                f"stopped by an error after {summary.completed} of {summary.variants} variants:"
                f" {summary.error}",
                "  ",
                hang=4,
            )
        )
    if summary.stable_bounds:
        rows.append("  stable variants span (not necessarily one connected region):")
        for name, (low, high) in summary.stable_bounds.items():
            unit = units.get(name, "")
            rows.append(f"    {name}: {format_value(low, unit)} to {format_value(high, unit)}")
    elif summary.completed:
        rows.append("  no variant is stable")
    if summary.worst_row is not None:
        values = values_words(
            {name: float(run.table[name][summary.worst_row]) for name in run.plan.values},
            units,
        )
        rows.append(
            wrap(
                f"worst variant (row {summary.worst_row}): {values}: {summary.worst_reason}",
                "  ",
                hang=4,
            )
        )
    if table_path:
        partial = "" if summary.complete else " (partial: its column complete is false)"
        rows.append(f"  table: {table_path}{partial}")
    rows += closing_sections(warnings, (), None, result.cautions)
    return "\n".join(rows) + "\n"
