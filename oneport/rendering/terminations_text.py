"""Plain-text report of which terminations of one port make the other port negative.

Rendering only: it formats what a terminations result holds and computes nothing. The verdict
line comes first, the cautions last; reflections read as |Γ| ∠ angle°, impedances as
R + jX ohm.
"""

from __future__ import annotations

from typing import Any

from ..errors import printable
from ..findings import Finding
from ..units import format_frequency, format_plain, format_resistance
from .check_text import closing_sections, wrap
from .formatting import format_component, format_impedance, format_reflection

_HEADLINE = {
    "negative-resistance-possible": "NEGATIVE RESISTANCE POSSIBLE",
    "no-negative-resistance": "NO NEGATIVE RESISTANCE",
}


def verdict_line(result: Any) -> str:
    """One line: whether some passive termination makes the observed port negative, how much
    of them, the most negative resistance, Z0."""
    head = _HEADLINE[result.verdict]
    at = format_frequency(result.frequency_hz)
    port, other = result.terminated_port, result.observed_port
    z0 = format_resistance(result.reference_impedance_ohm)
    if result.verdict == "no-negative-resistance":
        return (
            f"{head} at {at}: no passive termination of port {port} makes port {other}'s"
            f" resistance negative; Z0 = {z0}"
        )
    best = result.best
    if best.unbounded:
        depth = "without limit: a passive termination makes it infinite"
    else:
        depth = f"down to {format_resistance(best.observed_resistance_ohm)}"
    return (
        f"{head} at {at}: {result.negative_fraction:.1%} of the passive terminations of port"
        f" {port} make port {other}'s resistance negative ({depth}); Z0 = {z0}"
    )


def render(result: Any) -> str:
    """The full text report: verdict, the band, the circle and the best termination, inputs,
    cautions."""
    circle, best = result.circle, result.best
    bands = ", ".join(
        f"{format_frequency(start)} to {format_frequency(stop)}" for start, stop in result.bands_hz
    )
    over = (
        f"Some passive termination of port {result.terminated_port} makes port"
        f" {result.observed_port}'s resistance negative over {bands} (of the data's"
        f" {format_frequency(result.grid_hz[0])} to {format_frequency(result.grid_hz[-1])})."
        if bands
        else f"No passive termination of port {result.terminated_port} makes port"
        f" {result.observed_port}'s resistance negative at any frequency of the data."
    )
    lines = [verdict_line(result), "", wrap(over, "  "), ""]
    lines.append(
        f"At {format_frequency(result.frequency_hz)} (terminations ΓT referred to Z0 ="
        f" {format_resistance(result.reference_impedance_ohm)})"
    )
    if circle.radius == 0:
        lines.append(
            wrap(
                f"stability circle: none; port {result.terminated_port} does not couple to port"
                f" {result.observed_port} here, so its termination changes nothing",
                "  ",
            )
        )
    elif circle.radius < float("inf"):
        side = "inside" if circle.negative_inside else "outside"
        lines.append(
            wrap(
                f"stability circle: centre at ΓT = {format_reflection(circle.center)}, radius"
                f" |ΓT - centre| = {format_plain(circle.radius)}; negative resistance {side} it",
                "  ",
            )
        )
    else:
        lines.append("  stability circle: a straight line at this frequency")
    lines.append(
        f"  passive terminations giving negative resistance: {result.negative_fraction:.1%}"
    )
    lines.append(wrap(_best_line(result, best), "  ", hang=4))
    lines += ["", "Inputs", f"  two-port  {printable(result.source)}"]
    lines.append(
        f"            {result.grid_hz.size} points,"
        f" {format_frequency(result.grid_hz[0])}-{format_frequency(result.grid_hz[-1])},"
        f" R = {format_resistance(result.reference_impedance_ohm)}"
    )
    warnings = [Finding(str(w.get("code", "")), str(w.get("message", ""))) for w in result.warnings]
    lines += closing_sections(warnings, (), None, result.cautions)
    return "\n".join(lines) + "\n"


def _best_line(result: Any, best: Any) -> str:
    termination = f"ΓT = {format_reflection(best.gamma)}"
    equivalent = best.equivalent(result.frequency_hz)
    if equivalent["kind"] in ("open", "short"):
        element = "an open" if equivalent["kind"] == "open" else "a short"
        where = f"{termination} ({element})"
    elif equivalent["kind"] == "resistor":
        resistance = format_resistance(equivalent["resistance_ohm"])
        where = f"{termination}, ZT = {resistance} (a resistor)"
    else:
        if equivalent["kind"] == "inductor":
            reactive = f"a {format_component(equivalent['inductance_h'], 'H')} inductor"
        else:
            reactive = f"a {format_component(equivalent['capacitance_f'], 'F')} capacitor"
        loss = equivalent["series_resistance_ohm"]
        element = reactive if loss == 0 else f"{reactive} with {format_resistance(loss)} in series"
        impedance = best.impedance_ohm
        if abs(impedance.real) < 1e-9 * abs(impedance):
            impedance = complex(0.0, impedance.imag)  # a lossless termination, up to rounding
        where = f"{termination}, ZT = {format_impedance(impedance)} ({element})"
    if best.unbounded:
        return f"unbounded: {where} makes port {result.observed_port}'s impedance infinite"
    lowest = best.observed_resistance_ohm
    words = "most negative resistance" if lowest < 0 else "lowest resistance (positive)"
    return f"{words}: {format_resistance(lowest)} at port {result.observed_port}, with {where}"
