"""Plain-text report of which terminations of one port make the other port negative.

Rendering only: it formats what a terminations result holds and computes nothing.
"""

from __future__ import annotations

from typing import Any


def verdict_line(result: Any) -> str:
    from ..units import format_frequency

    best = result.best
    if best.unbounded:
        tail = "unbounded (a passive termination makes it infinite)"
    else:
        tail = f"{best.observed_resistance_ohm:.4g} ohm at best"
    return (
        f"port {result.terminated_port} terminations making port {result.observed_port}"
        f" negative at {format_frequency(result.frequency_hz)}: {result.negative_fraction:.1%}"
        f" of passive terminations; resistance {tail}"
    )


def render(result: Any) -> str:
    from ..units import format_frequency

    circle, best = result.circle, result.best
    bands = ", ".join(
        f"{format_frequency(start)} to {format_frequency(stop)}" for start, stop in result.bands_hz
    )
    lines = [
        f"{result.source}: terminations of port {result.terminated_port} that make port"
        f" {result.observed_port}'s resistance negative",
        f"  some passive termination does so over: {bands or 'no frequency of the data'}",
        f"At {format_frequency(result.frequency_hz)}, Gamma_T referred to"
        f" {result.reference_impedance_ohm:g} ohm:",
    ]
    if circle.radius < float("inf"):
        side = "inside" if circle.negative_inside else "outside"
        lines.append(
            f"  stability circle: center {circle.center.real:.4g}{circle.center.imag:+.4g}j,"
            f" radius {circle.radius:.4g}; negative resistance {side} it"
        )
    else:
        lines.append("  stability circle: a straight line at this frequency")
    lines.append(
        f"  passive terminations giving negative resistance: {result.negative_fraction:.1%}"
    )
    lines.append(_best_line(result, best))
    return "\n".join(lines) + "\n"


def _best_line(result: Any, best: Any) -> str:
    gamma = f"Gamma_T = {best.gamma.real:.4g}{best.gamma.imag:+.4g}j"
    equivalent = best.equivalent(result.frequency_hz)
    if equivalent["kind"] in ("open", "short"):
        element = f", {'an open' if equivalent['kind'] == 'open' else 'a short'}"
    else:
        if equivalent["kind"] == "inductor":
            reactive = f"{equivalent['inductance_h'] * 1e9:.4g} nH"
        else:
            reactive = f"{equivalent['capacitance_f'] * 1e12:.4g} pF"
        loss = equivalent["series_resistance_ohm"]
        name = "inductor" if equivalent["kind"] == "inductor" else "capacitor"
        element = f", a {reactive} {name}" if loss == 0 else f", {loss:.4g} ohm and {reactive}"
    impedance = best.impedance_ohm
    if abs(impedance.real) < 1e-9 * abs(impedance):
        impedance = complex(0.0, impedance.imag)  # a lossless termination, up to rounding
    where = f"{gamma} (Z_T = {impedance.real:.4g}{impedance.imag:+.4g}j ohm{element})"
    if best.unbounded:
        return f"  unbounded: {where} makes port {result.observed_port}'s impedance infinite"
    return f"  most negative resistance: {best.observed_resistance_ohm:.4g} ohm with {where}"
