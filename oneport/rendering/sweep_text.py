"""Plain-text summary of a sweep or a Monte Carlo run.

Rendering only: it formats what a sweep result and its summary hold and computes nothing.
"""

from __future__ import annotations

from typing import Any


def verdict_line(result: Any) -> str:
    """One line: the headline and the fractions of the variants (``--quiet``)."""
    summary = result.summary
    headline = {
        "stable": "ALL STABLE (small-signal)",
        "unstable": "SOME VARIANTS UNSTABLE",
        "inconclusive": "INCONCLUSIVE for some variants",
    }[summary.verdict]
    return (
        f"{headline}: {summary.stable_fraction:.1%} stable, {summary.unstable_fraction:.1%}"
        f" unstable, {summary.inconclusive_fraction:.1%} inconclusive of {summary.completed}"
        f" variants; Z0 = {result.run.reference_impedance_ohm:g} ohm"
    )


def render(result: Any) -> str:
    """The text report of a :class:`~oneport.products.sweep.summary.SweepResult`."""
    from ..units import format_frequency

    summary, table_path, warnings = result.summary, result.table_path, list(result.warnings)
    line = verdict_line(result)
    run = result.run
    rows = [line, ""]
    if summary.interrupted:
        rows.append(f"  interrupted: {summary.completed} of {summary.variants} variants finished")
    rows.append(
        f"  band {format_frequency(run.frequency_hz[0])}-"
        f"{format_frequency(run.frequency_hz[-1])}, {run.frequency_hz.size} points"
    )
    for name, text in run.plan.description.items():
        rows.append(f"  {name}: {text}")
    if summary.stable_bounds:
        rows.append("  stable variants span (not necessarily one connected region):")
        for name, (low, high) in summary.stable_bounds.items():
            rows.append(f"    {name}: {low:.4g} to {high:.4g}")
    if summary.worst_row is not None:
        values = ", ".join(
            f"{name}={run.table[name][summary.worst_row]:.4g}" for name in run.plan.values
        )
        rows.append(f"  worst variant (row {summary.worst_row}; {values}): {summary.worst_reason}")
    if table_path:
        rows.append(f"  table: {table_path}")
    from ..cautions import CAUTIONS
    from .check_text import closing_sections

    rows += closing_sections(warnings, (), None, CAUTIONS)
    return "\n".join(rows) + "\n"
