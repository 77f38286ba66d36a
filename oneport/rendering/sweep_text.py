"""Plain-text summary of a sweep or a Monte Carlo run.

Rendering only: it formats what a sweep result and its summary hold and computes nothing.
"""

from __future__ import annotations

from typing import Any


def render(
    result: Any, summary: Any, table_path: str | None, quiet: bool, warnings: list[Any]
) -> str:
    from ..units import format_frequency

    headline = {
        "stable": "ALL STABLE (small-signal)",
        "unstable": "SOME VARIANTS UNSTABLE",
        "inconclusive": "INCONCLUSIVE for some variants",
    }[summary.verdict]
    line = (
        f"{headline}: {summary.stable_fraction:.1%} stable, {summary.unstable_fraction:.1%}"
        f" unstable, {summary.inconclusive_fraction:.1%} inconclusive of {summary.completed}"
        f" variants; Z0 = {result.reference_impedance_ohm:g} ohm"
    )
    if quiet:
        return line + "\n"
    rows = [line, ""]
    if summary.interrupted:
        rows.append(f"  interrupted: {summary.completed} of {summary.variants} variants finished")
    elif not summary.complete:
        rows.append(
            f"  stopped by an error after {summary.completed} of {summary.variants} variants:"
            f" {summary.error}"
        )
    rows.append(
        f"  band {format_frequency(result.frequency_hz[0])}-"
        f"{format_frequency(result.frequency_hz[-1])}, {result.frequency_hz.size} points"
    )
    for name, text in result.plan.description.items():
        rows.append(f"  {name}: {text}")
    if summary.stable_bounds:
        rows.append("  stable variants span (not necessarily one connected region):")
        for name, (low, high) in summary.stable_bounds.items():
            rows.append(f"    {name}: {low:.4g} to {high:.4g}")
    if summary.worst_row is not None:
        values = ", ".join(
            f"{name}={result.table[name][summary.worst_row]:.4g}" for name in result.plan.values
        )
        rows.append(f"  worst variant (row {summary.worst_row}; {values}): {summary.worst_reason}")
    if table_path:
        partial = "" if summary.complete else " (partial: its column complete is false)"
        rows.append(f"  table: {table_path}{partial}")
    from ..cautions import CAUTIONS
    from .check_text import closing_sections

    rows += closing_sections(warnings, (), None, CAUTIONS)
    return "\n".join(rows) + "\n"
