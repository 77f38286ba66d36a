"""What ``oneport export`` says it wrote: one line.

Rendering only: it formats what an :class:`~oneport.products.export.ExportResult` holds.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..errors import printable
from ..units import format_frequency

if TYPE_CHECKING:
    from ..products.export import ExportResult


def verdict_line(result: ExportResult) -> str:
    """One line: the file written, its ports, points, band, spacing and reference."""
    kind = "one-port" if result.ports == 1 else "two-port"
    return (
        f"wrote {printable(result.output_path)}: {kind}, {result.points} points,"
        f" {format_frequency(result.start_hz)} to {format_frequency(result.stop_hz)}"
        f" ({result.spacing}), reference {result.reference_impedance_ohm:g} ohm"
    )


def render(result: ExportResult) -> str:
    """The text report: the line written, the parameters used, the cautions."""
    from .check_text import closing_sections

    used = ", ".join(f"{name}={value:.6g}" for name, value in result.parameters.items())
    parts = [verdict_line(result), "", f"  netlist {printable(result.circuit_path)}"]
    parts.append(f"  parameters: {used or 'none'}")
    parts += closing_sections((), (), None, result.cautions)
    return "\n".join(parts) + "\n"
