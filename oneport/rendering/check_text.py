"""Plain-text report of a check, for a bench engineer reading at a glance.

Rendering only: it formats what the result holds (verdict first, cautions last) and computes
nothing. Units for reading (GHz, dB, degrees) appear here and nowhere inside.
"""

from __future__ import annotations

import math
import textwrap
from collections.abc import Sequence
from typing import TYPE_CHECKING

from ..analysis.result import CheckResult
from ..errors import printable
from ..findings import Finding
from ..units import format_frequency, to_decibels

if TYPE_CHECKING:
    from ..analysis.small_gain import BoundResult

_HEADLINE = {
    "stable": "STABLE (small-signal)",
    "unstable": "UNSTABLE",
    "inconclusive": "INCONCLUSIVE: the data cannot decide",
}
_WIDTH = 92


def verdict_line(result: CheckResult) -> str:
    """One line: the verdict, the count and the analysed band."""
    low, high = result.frequency_range_hz
    band = f"{format_frequency(low)}-{format_frequency(high)}"
    count = "N = ?" if result.encirclements is None else f"N = {result.encirclements}"
    extra = ""
    if result.latch_up:
        extra += ", latch-up (real root)"
    if result.oscillation_frequencies_hz:
        listed = ", ".join(format_frequency(f) for f in result.oscillation_frequencies_hz)
        extra += f", oscillation near {listed}"
    return f"{_HEADLINE[result.verdict]}: {count}{extra}; {band}, Z0 = {_ohm(result)}"


def render(result: CheckResult) -> str:
    """The full text report."""
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += ["", "Inputs"]
    for record in result.inputs:
        low, high = record.frequency_range_hz
        renormalised = (
            f", renormalised {record.file_reference_impedance_ohm:g} -> "
            f"{record.analysed_reference_impedance_ohm:g} ohm"
            if record.file_reference_impedance_ohm != record.analysed_reference_impedance_ohm
            else ""
        )
        parts.append(f"  {record.role:<7} {printable(record.source)}")
        if record.preparation:
            parts.append(f"          {'; '.join(record.preparation)}")
        if record.version == "netlist":
            parts.append(
                f"          netlist, evaluated at {record.points} points,"
                f" {format_frequency(low)}-{format_frequency(high)}, in"
                f" {record.analysed_reference_impedance_ohm:g} ohm"
            )
        else:
            parts.append(
                f"          {record.parameter} {record.number_format}, Touchstone"
                f" {record.version}, {record.points} points,"
                f" {format_frequency(low)}-{format_frequency(high)},"
                f" R = {record.file_reference_impedance_ohm:g} ohm{renormalised}"
            )
    low, high = result.frequency_range_hz
    parts.append(
        f"  analysed {format_frequency(low)}-{format_frequency(high)},"
        f" {result.frequency_hz.size} points, in Z0 = {_ohm(result)} (device measurement"
        " impedance)"
    )
    parts += ["", *_bands(result), "", *_crossings(result), "", *_margins(result), ""]
    parts += _closure(result)
    parts += ["", *_diagnostics(result)]
    if result.startup_estimates:
        parts += ["", *_startup(result)]
    parts += closing_sections(
        result.warnings,
        result.next_steps,
        result.premise,
        result.cautions,
        before_premise=_second_opinion(result),
    )
    return "\n".join(parts) + "\n"


def _second_opinion(result: CheckResult) -> list[str]:
    """The fit's section of ``check --poles``, when the result carries it."""
    if result.second_opinion is None:
        return []
    from .poles_text import second_opinion_lines

    return second_opinion_lines(result.second_opinion)


def _bands(result: CheckResult) -> list[str]:
    title = f"Bands where |L| >= 1 (Z0 = {_ohm(result)})"
    if not result.bands:
        return [title, "  none: |L| < 1 across the analysed band"]
    rows = [title, f"  {'from':>12}  {'to':>12}  {'peak':>9}  {'at':>12}"]
    for band in result.bands:
        edge = band.starts_at_sweep_edge or band.stops_at_sweep_edge
        rows.append(
            f"  {format_frequency(band.start_hz):>12}  {format_frequency(band.stop_hz):>12}"
            f"  {to_decibels(band.peak_loop_gain):>6.2f} dB"
            f"  {format_frequency(band.peak_frequency_hz):>12}"
            + ("  (runs to the sweep edge)" if edge else "")
        )
    return rows


def _crossings(result: CheckResult) -> list[str]:
    title = f"Crossings of the real axis beyond +1 (Z0 = {_ohm(result)})"
    if not result.crossings:
        return [title, "  none"]
    rows = [title, f"  {'at':>12}  {'|L|':>9}  direction"]
    for crossing in result.crossings:
        note = "  (within noise)" if crossing.within_noise else ""
        rows.append(
            f"  {format_frequency(crossing.frequency_hz):>12}"
            f"  {to_decibels(abs(crossing.loop_gain)):>6.2f} dB  {crossing.direction}{note}"
        )
    return rows


def _margins(result: CheckResult) -> list[str]:
    margins = result.margins
    rows = [f"Margins (Z0 = {_ohm(result)})"]
    rows.append(
        f"  closest approach to +1   |1 - L| = {margins.modulus_margin:.3g}"
        f" at {format_frequency(margins.modulus_margin_frequency_hz)}"
    )
    if margins.gain_margin is not None and margins.gain_margin_frequency_hz is not None:
        rows.append(
            f"  gain margin              {to_decibels(margins.gain_margin):.2f} dB"
            f" at {format_frequency(margins.gain_margin_frequency_hz)}"
        )
    else:
        rows.append("  gain margin              none (L does not cross (0, 1) on the real axis)")
    if margins.phase_margin_rad is not None and margins.phase_margin_frequency_hz is not None:
        rows.append(
            f"  phase margin             {math.degrees(margins.phase_margin_rad):.1f} deg"
            f" at {format_frequency(margins.phase_margin_frequency_hz)}"
        )
    else:
        rows.append("  phase margin             none (|L| does not pass 1)")
    return rows


def _closure(result: CheckResult) -> list[str]:
    words = {
        "dc-sample": "the data include 0 Hz",
        "dc-resistances": "from the DC facts",
        "netlist-limit": "both netlists evaluated beyond every natural frequency",
        "loop-gain-below-unity": "|L| < 1 at the edge",
        "settled": "L has settled, far from +1",
        "not-founded": "NOT FOUNDED",
    }
    rows = ["Closing the contour outside the sweep"]
    for closure in result.closures:
        limit = "towards DC      " if closure.side == "low" else "towards infinity"
        sign = {1: ", F > 0 there", -1: ", F < 0 there"}.get(closure.sign_at_limit, "")
        rows.append(f"  {limit}  {words[closure.basis]}{sign}")
    step = math.degrees(result.largest_phase_step_rad)
    rows.append(f"  largest phase step of 1 - L between samples: {step:.1f} deg")
    return rows


def _diagnostics(result: CheckResult) -> list[str]:
    rows = ["Sampling and measurement"]
    for grid in result.grid_resolution:
        rows.append(
            f"  finest loaded Q the grid resolves: {grid.finest_resolvable_q:.2g}"
            f" (step {format_frequency(grid.largest_step_hz)} near"
            f" {format_frequency(grid.at_frequency_hz)})  {printable(grid.source)}"
        )
    rows.append(f"  scatter of L between neighbouring points: {result.noise_estimate:.2g}")
    uncertainty = result.uncertainty
    if uncertainty.device or uncertainty.load:
        state = "the count is at stake" if uncertainty.count_at_stake else "the count is robust"
        rows.append(
            f"  stated |gamma| errors {uncertainty.device:g} (device), {uncertainty.load:g}"
            f" (load): L may move by up to {uncertainty.largest_loop_gain_change:.3g}; smallest"
            f" slack {uncertainty.smallest_slack:.3g} at"
            f" {format_frequency(uncertainty.smallest_slack_frequency_hz)}: {state}"
        )
    return rows


def _startup(result: CheckResult) -> list[str]:
    rows = [
        "Start-up estimates (Kurokawa, one Newton step; estimates beside the count)",
        f"  {'form':<11}{'X=0 or B=0':>12}  {'estimate':>12}  {'growth /s':>11}  {'-Rd/RL':>7}"
        f"  {'Q ext':>7}",
    ]
    for estimate in result.startup_estimates:
        ratio = "" if estimate.resistance_ratio is None else f"{estimate.resistance_ratio:.2f}"
        q = "" if estimate.external_q is None else f"{estimate.external_q:.1f}"
        rows.append(
            f"  {estimate.form:<11}{format_frequency(estimate.crossing_frequency_hz):>12}"
            f"  {format_frequency(estimate.estimated_frequency_hz):>12}"
            f"  {estimate.sigma_per_s:>11.3g}  {ratio:>7}  {q:>7}"
            + ("  grows" if estimate.grows else "")
        )
    rows.append(
        wrap(
            "common practice for reliable start-up: |negative resistance| about 3 x the load's"
            " (2 x for a cubic device)",
            "  ",
        )
    )
    if any(e.grows for e in result.startup_estimates):
        rows.append(
            wrap(
                "where a 'grows' disagrees with the count, the count decides: one Newton step"
                " misleads near an anti-resonance, where the reactance falls through zero",
                "  ",
            )
        )
    return rows


def render_result(result: CheckResult | BoundResult) -> str:
    """The text report of what ``check`` returned: a pair's check, or a load class's bound."""
    return render(result) if isinstance(result, CheckResult) else render_bound(result)


def summary_line(result: CheckResult | BoundResult) -> str:
    """The verdict line of what ``check`` returned (``--quiet``)."""
    return verdict_line(result) if isinstance(result, CheckResult) else bound_line(result)


def bound_line(result: BoundResult) -> str:
    """One line: the load class's verdict, its return loss, Z0 and the band."""
    low, high = result.frequency_range_hz
    headline = {
        "guaranteed": "GUARANTEED STABLE (small-signal) for the load class",
        "not-guaranteed": "NOT GUARANTEED for the load class",
        "inconclusive": "INCONCLUSIVE: the data cannot decide",
    }[result.verdict]
    return (
        f"{headline}: return loss >= {0.0 - to_decibels(result.reflection_bound):g} dB in"
        f" {result.reference_impedance_ohm:g} ohm;"
        f" {format_frequency(low)}-{format_frequency(high)}"
    )


def render_bound(result: BoundResult) -> str:
    """The text report of a worst-case-load (return-loss bound) check."""
    parts = [bound_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += [
        "",
        f"Required load return loss (Z0 = {result.reference_impedance_ohm:g} ohm)",
        f"  worst: {0.0 - to_decibels(result.smallest_allowed_reflection):.2f} dB at"
        f" {format_frequency(result.worst_frequency_hz)}",
    ]
    if result.failing_bands:
        parts.append("  bands where the stated return loss is not enough:")
        for band in result.failing_bands:
            parts.append(
                f"    {format_frequency(band.start_hz)}-{format_frequency(band.stop_hz)}"
                f" (worst |gamma_d|*rho {band.peak_loop_gain:.3g} at"
                f" {format_frequency(band.peak_frequency_hz)})"
            )
    parts += closing_sections(result.warnings, result.next_steps, result.premise, result.cautions)
    return "\n".join(parts) + "\n"


def closing_sections(
    warnings: Sequence[Finding],
    next_steps: Sequence[str] = (),
    premise: str | None = None,
    cautions: Sequence[str] = (),
    limits: Sequence[str] = (),
    *,
    before_premise: Sequence[str] = (),
) -> list[str]:
    """The sections every report ends with: warnings, next steps, premise, limits, cautions
    (``before_premise``: a product's own section just before the premise)."""
    parts: list[str] = []
    if warnings:
        parts += ["", "Warnings", *[wrap(f"[{w.code}] {w.message}", "  ") for w in warnings]]
    if next_steps:
        parts += ["", "What to do next", *[wrap(step, "  - ") for step in next_steps]]
    if before_premise:
        parts += ["", *before_premise]
    if premise:
        parts += ["", "Premise", wrap(premise, "  ")]
    if limits:
        parts += ["", "Limits of the method", *[wrap(limit, "  - ") for limit in limits]]
    parts += ["", "Cautions", *[wrap(caution, "  ! ") for caution in cautions]]
    return parts


def _ohm(result: CheckResult) -> str:
    return f"{result.reference_impedance_ohm:g} ohm"


def wrap(text: str, indent: str) -> str:
    """``text`` wrapped to the report width, every line indented."""
    return textwrap.fill(
        text, width=_WIDTH, initial_indent=indent, subsequent_indent=" " * len(indent)
    )
