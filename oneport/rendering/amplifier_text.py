"""Plain-text report of a reflection-amplifier screening.

Rendering only: it formats what an :class:`~oneport.analysis.amplifier.AmplifierResult` holds
and computes nothing.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from ..units import format_frequency, format_plain, format_resistance, to_decibels
from .check_text import closing_sections, wrap

if TYPE_CHECKING:
    from ..analysis.amplifier import AmplifierResult, GainBand

_HEADLINE = {
    "guaranteed": "GUARANTEED STABLE",
    "stable": "STABLE",
    "not-guaranteed": "NOT GUARANTEED",
    "unstable": "UNSTABLE",
    "inconclusive": "INCONCLUSIVE",
}


def verdict_line(result: AmplifierResult) -> str:
    """One line: verdict and its basis, peak gain, port, Z0."""
    basis = {
        "small-gain": "small-gain bound",
        "nyquist": "Nyquist count with the load",
        "none": "no port stated",
    }[result.basis]
    port = ""
    if result.port_source == "return-loss":
        port = f"; port return loss {_return_loss(result.port_reflection_bound):.1f} dB"
    elif result.port_source == "load":
        port = f"; port file, worst return loss {_return_loss(result.port_reflection_bound):.1f} dB"
    return (
        f"{_HEADLINE[result.verdict]} ({basis}): peak gain {_power(result.peak_gain):.2f} dB at"
        f" {format_frequency(result.peak_frequency_hz)}{port};"
        f" Z0 = {format_resistance(result.reference_impedance_ohm)}"
    )


def render(result: AmplifierResult) -> str:
    """The full text report."""
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += ["", *_gain(result), "", *_requirement(result)]
    if result.nyquist is not None:
        nyquist = result.nyquist
        count = "?" if nyquist.encirclements is None else str(nyquist.encirclements)
        parts += ["", "Nyquist check with the port file", f"  {nyquist.verdict}, N = {count}"]
    parts += closing_sections(result.warnings, result.next_steps, result.premise, result.cautions)
    return "\n".join(parts) + "\n"


def _gain(result: AmplifierResult) -> list[str]:
    z0 = result.reference_impedance_ohm
    bandwidth = result.bandwidth
    rows = [
        f"Gain |Γd|² (Z0 = {format_resistance(z0)})",
        f"  peak {_power(result.peak_gain):.2f} dB at {format_frequency(result.peak_frequency_hz)}",
        f"  -3 dB band {_span(bandwidth)}, bandwidth"
        f" {format_frequency(bandwidth.stop_hz - bandwidth.start_hz)}",
    ]
    threshold = _power(result.gain_threshold)
    if not result.bands:
        rows.append(f"  no band reaches {format_plain(threshold)} dB")
    for band in result.bands:
        rows.append(
            f"  ≥ {format_plain(threshold)} dB: {_span(band)}, peak"
            f" {_power(band.peak_gain):.2f} dB"
            f" at {format_frequency(band.peak_frequency_hz)}"
        )
    return rows


def _requirement(result: AmplifierResult) -> list[str]:
    rows = [
        "Port match for guaranteed stability (small-gain bound |Γd·Γport| < 1 at every frequency)",
        f"  return loss needed: {_return_loss(result.smallest_allowed_reflection):.2f} dB at"
        f" {format_frequency(result.worst_frequency_hz)} (the gain in dB at each frequency)",
    ]
    if result.port_margin is not None and result.port_margin_frequency_hz is not None:
        source = {
            "return-loss": "stated",
            "load": "from the port file",
            "any-passive-port": "any passive port",
        }[result.port_source or ""]
        rows.append(
            f"  port return loss {_return_loss(result.port_reflection_bound):.2f} dB ({source}):"
            f" margin {to_decibels(result.port_margin):+.2f} dB at"
            f" {format_frequency(result.port_margin_frequency_hz)}"
        )
        rows += [wrap(edge.note, "  ") for edge in result.edges]
    ripple = result.ripple_at_peak
    if ripple is not None:
        lower, upper = ripple
        top = "unbounded" if upper == float("inf") else f"{_power(upper):.2f} dB"
        rows.append(f"  gain at the peak with this match: {_power(lower):.2f} dB to {top}")
    return rows


def _power(ratio: float) -> float:
    """A power gain in dB (a gain that underflows to 0 reads as -3000 dB, never -inf)."""
    return 10.0 * math.log10(max(ratio, 1e-300))


def _return_loss(reflection: float | None) -> float:
    """A reflection bound as a return loss, dB."""
    return 0.0 - to_decibels(reflection or 0.0)


def _span(band: GainBand) -> str:
    low = format_frequency(band.start_hz) + (" (sweep edge)" if band.starts_at_sweep_edge else "")
    high = format_frequency(band.stop_hz) + (" (sweep edge)" if band.stops_at_sweep_edge else "")
    return f"{low} to {high}"
