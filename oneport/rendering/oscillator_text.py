"""Text and notebook HTML of ``oneport oscillator``: verdict first, cautions last.

Rendering only: it lays out what the result holds, in engineering words and units (peak
voltage in mV, incident power in dBm, R + jX ohm, |Γ| ∠ angle), and computes nothing beyond
unit scaling.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from ..products.oscillator.result import LevelCount, OperatingPoint, OscillatorResult
from ..products.oscillator.wording import (
    format_amount,
    format_level,
    format_plain,
    format_rate,
    quantity_words,
)
from ..units import format_frequency, format_power
from .check_text import closing_sections, wrap
from .formatting import format_impedance, format_reflection

_HEADLINE = {
    "settles": "SETTLES at one stable operating point",
    "hard-excitation": "HARD EXCITATION: no start from noise, but a kick reaches a stable point",
    "mode-jumping": "MODE JUMPING: several stable operating points",
    "latch-up": "LATCH-UP: the bias point runs away before an oscillation can settle",
    "outside-data": "OUTSIDE THE DATA: the amplitude grows past the largest drive level",
    "no-oscillation": "NO OSCILLATION in the data",
    "inconclusive": "INCONCLUSIVE: the data cannot decide",
}
_KIND = {"drive-levels": "drive-level files", "iv-curve": "I-V description"}


def verdict_line(result: OscillatorResult) -> str:
    """One line: the verdict and the stable points."""
    listed = "; ".join(_point_summary(p) for p in _stable(result))
    if not listed:
        return _HEADLINE[result.verdict]
    if result.verdict in ("settles", "hard-excitation", "mode-jumping"):
        return f"{_HEADLINE[result.verdict]}: {listed}"
    return f"{_HEADLINE[result.verdict]} (stable in the data: {listed})"


def summary_line(result: OscillatorResult) -> str:
    """A short line for a Python prompt: the verdict word and the stable points."""
    listed = "; ".join(_point_summary(p) for p in _stable(result))
    return result.verdict + (f": {listed}" if listed else "")


def render(result: OscillatorResult) -> str:
    """The full text report."""
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += ["", wrap(f"Form: {result.form} ({result.form_reason}).", "")]
    parts += ["", *_points(result)]
    if result.operating_points:
        parts += ["", *_loads(result)]
    parts += ["", *_start(result)]
    parts += ["", "Inputs", *_inputs(result)]
    parts += closing_sections(
        result.warnings, result.next_steps, None, result.cautions, result.limits
    )
    return "\n".join(parts) + "\n"


def _stable(result: OscillatorResult) -> list[OperatingPoint]:
    return [p for p in result.operating_points if p.kurokawa_stable and not p.marginal]


def _point_summary(point: OperatingPoint) -> str:
    return (
        f"{format_frequency(point.frequency_hz)},"
        f" {format_level(point.amplitude, point.amplitude_quantity)},"
        f" {format_power(point.load_power_w)} into the load"
    )


def _point_headers(result: OscillatorResult) -> list[tuple[str, str]]:
    amplitude = (
        "peak voltage" if result.amplitude_quantity == "port_peak_voltage" else "peak current"
    )
    headers = [
        ("frequency", ""),
        (amplitude, "at the port"),
        ("power", "into the load"),
        ("Kurokawa", ""),
        ("decay rate", "of perturbations"),
    ]
    if result.drive_quantity != result.amplitude_quantity:
        level = {
            "incident_power": ("equivalent", "incident power"),
            "junction_peak_voltage": ("peak voltage", "at the junction"),
            "port_peak_voltage": ("peak voltage", "at the port"),
            "port_peak_current": ("peak current", "into the port"),
        }[result.drive_quantity]
        headers.append(level)
    return headers


def _point_cells(result: OscillatorResult, point: OperatingPoint) -> list[str]:
    state = "marginal" if point.marginal else "stable" if point.kurokawa_stable else "unstable"
    rate = point.decay_rate_per_s
    cells = [
        format_frequency(point.frequency_hz),
        format_amount(point.amplitude, point.amplitude_quantity),
        format_power(point.load_power_w),
        state,
        "not stated" if rate is None else format_rate(rate),
    ]
    if result.drive_quantity != result.amplitude_quantity:
        cells.append(format_amount(point.drive_level, point.drive_quantity))
    return cells


def _points(result: OscillatorResult) -> list[str]:
    title = "Operating points"
    if not result.operating_points:
        return [title, "  none inside the data"]
    headers = _point_headers(result)
    body = [_point_cells(result, point) for point in result.operating_points]
    rows = [title, *_table(headers, body)]
    if any(p.decay_rate_per_s is None for p in result.operating_points):
        rows.append(
            "  decay rate not stated: at that point the port amplitude does not rise with the"
            " level, and the level is a power"
        )
    return rows


def _loads(result: OscillatorResult) -> list[str]:
    z0 = format_plain(result.reference_impedance_ohm)
    headers = [
        ("frequency", ""),
        ("load impedance", ""),
        ("load reflection", f"in {z0} ohm"),
        ("external Q", "of the load"),
        ("locking range", "one side"),
    ]
    body = []
    for point in result.operating_points:
        lock = point.pulling.locking_half_range_hz
        body.append(
            [
                format_frequency(point.frequency_hz),
                format_impedance(point.load_impedance_ohm),
                format_reflection(point.gamma_load),
                f"Q = {format_plain(point.pulling.external_q)}",
                "none (Q not positive)" if lock is None else f"±{format_frequency(lock)}",
            ]
        )
    ratio = result.operating_points[0].pulling.injection_ratio
    return [
        "What the device sees at each point",
        *_table(headers, body),
        f"  locking range for an injected power {format_plain(-10 * math.log10(ratio))} dB below"
        " the oscillator's",
    ]


def _start(result: OscillatorResult) -> list[str]:
    rows = ["Start-up (small-signal Nyquist count, the device held at one level)"]
    for label, count in (
        ("smallest level", result.start_up),
        ("largest level", result.at_largest_level),
    ):
        rows.append(
            f"  {label}, {format_level(count.drive_level, count.drive_quantity)}:"
            f" {_count_words(count)}"
        )
        for mode in count.natural_frequencies:
            where = "real root" if mode.real else f"pair at {format_frequency(mode.frequency_hz)}"
            rows.append(f"      {where}, growing at {format_rate(mode.sigma_per_s)}")
        if count.grows and not count.natural_frequencies and count.oscillation_frequencies_hz:
            near = ", ".join(format_frequency(f) for f in count.oscillation_frequencies_hz)
            rows.append(f"      loop crosses +1 near {near}; growth rate not located")
    rows.append(f"  starts from noise: {_start_words(result.start_up)}")
    return rows


def _count_words(count: LevelCount) -> str:
    if count.encirclements is None or count.verdict == "inconclusive":
        return "undecided"
    return f"{count.verdict}, N = {count.encirclements}"


def _start_words(count: LevelCount) -> str:
    return {True: "yes", False: "no", None: "cannot be told"}[count.grows]


def _inputs(result: OscillatorResult) -> list[str]:
    device = result.device_input
    kind = _KIND.get(str(device["kind"]), str(device["kind"]))
    rows = [f"  device  {device['path']} ({kind})"]
    if device.get("curve_summary"):
        rows.append(f"          {device['curve_summary']}")
    if device["kind"] == "drive-levels":
        low, high = result.drive_range
        quantity = result.drive_quantity
        rows.append(
            f"          {len(device['files'])} drive levels of {quantity_words(quantity)},"
            f" {format_amount(low, quantity)} to {format_amount(high, quantity)}"
        )
    load = result.load_input
    if load.version == "netlist":
        rows.append(f"  load    {load.source} (netlist), evaluated at {load.points} frequencies")
    else:
        reference = format_plain(load.file_reference_impedance_ohm)
        rows.append(
            f"  load    {load.source}, {load.points} points, file reference {reference} ohm"
        )
    low, high = result.frequency_range_hz
    rows.append(
        f"  analysed {format_frequency(low)} to {format_frequency(high)},"
        f" reflections in Z0 = {format_plain(result.reference_impedance_ohm)} ohm"
    )
    return rows


def _table(headers: Sequence[tuple[str, str]], body: Sequence[Sequence[str]]) -> list[str]:
    """Rows of cells under two-line headers, each column as wide as its widest entry."""
    widths = [
        max(len(top), len(bottom), *(len(row[i]) for row in body))
        for i, (top, bottom) in enumerate(headers)
    ]

    def line(cells: Sequence[str]) -> str:
        return ("  " + "   ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True))).rstrip()

    lines = [line([h[0] for h in headers])]
    if any(h[1] for h in headers):
        lines.append(line([h[1] for h in headers]))
    return lines + [line(row) for row in body]
