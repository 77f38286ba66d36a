"""Plain-text report of a check, for a bench engineer reading at a glance.

Rendering only: it formats what the result holds (verdict first, cautions last) and computes
nothing. Units for reading (GHz, dB, degrees) appear here and nowhere inside. The sections'
rows are built once (``*_rows``) and laid out both here and in the HTML report, so the two
always say the same thing.

What a reader can rely on: nothing contradicts the verdict — gain and phase margins appear only
under a stable verdict (otherwise the distance of L from +1, which always means something),
the modes listed are only those the count establishes (never a one-step estimate), and every
number carries its unit or names its quantity (``|1 - L| = 0.24``).
"""

from __future__ import annotations

import math
import re
import textwrap
from collections.abc import Sequence
from typing import TYPE_CHECKING

from ..analysis.result import CheckResult
from ..errors import printable
from ..findings import Finding
from ..units import (
    format_count,
    format_decibels,
    format_frequency,
    format_plain,
    format_rate,
    format_resistance,
    to_decibels,
)
from .formatting import format_table

if TYPE_CHECKING:
    from ..analysis.small_gain import BoundResult

_HEADLINE = {
    "stable": "STABLE (small-signal)",
    "unstable": "UNSTABLE",
    "inconclusive": "INCONCLUSIVE: the data cannot decide",
}
_WIDTH = 92
#: How each basis of closing the contour reads.
CLOSURE_WORDS = {
    "dc-sample": "the data include 0 Hz",
    "dc-resistances": "from the DC facts",
    "netlist-limit": "both netlists evaluated beyond every natural frequency",
    "loop-gain-below-unity": "|L| < 1 at the edge",
    "settled": "L has settled, far from +1",
    "not-founded": "not closed",
}


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
    parts += ["", "Inputs", *input_lines(result)]
    parts += ["", f"Bands where |L| ≥ 1 (Z0 = {_ohm(result)})"]
    headings, rows = bands_rows(result)
    parts += format_table(headings, rows, right=(0, 1, 2, 3)) if rows else [f"  {headings[0]}"]
    parts += ["", f"Crossings of the real axis beyond +1 (Z0 = {_ohm(result)})"]
    headings, rows = crossings_rows(result)
    parts += format_table(headings, rows, right=(0, 1)) if rows else ["  none"]
    parts += ["", margins_title(result)]
    parts += [_pair_line(label, value) for label, value in margins_rows(result)]
    parts += [wrap(note, "  ") for note in margins_notes(result)]
    parts += ["", "Closing the contour outside the sweep"]
    parts += [_pair_line(label, value) for label, value in closure_rows(result)]
    parts += [
        "",
        "Sampling and measurement",
        *[wrap(line, "  ") for line in sampling_lines(result)],
    ]
    if result.modes is not None or result.verdict == "unstable":
        parts += ["", "Modes the count establishes"]
        headings, rows = mode_rows(result)
        if rows:
            parts += format_table(headings, rows, right=(0, 1))
        parts += [wrap(note, "  ") for note in mode_notes(result)]
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


# --- rows shared with the HTML report ------------------------------------------------------


def input_lines(result: CheckResult) -> list[str]:
    """The inputs, two lines each, the analysed band, and the DC facts when given."""
    parts = []
    for record in result.inputs:
        low, high = record.frequency_range_hz
        renormalised = (
            f", renormalised to {format_resistance(record.analysed_reference_impedance_ohm)}"
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
                f" {format_resistance(record.analysed_reference_impedance_ohm)}"
            )
        else:
            parts.append(
                f"          {record.parameter} {record.number_format}, Touchstone"
                f" {record.version}, {record.points} points,"
                f" {format_frequency(low)}-{format_frequency(high)},"
                f" R = {format_resistance(record.file_reference_impedance_ohm)}{renormalised}"
            )
    low, high = result.frequency_range_hz
    parts.append(
        f"  analysed {format_frequency(low)}-{format_frequency(high)},"
        f" {result.frequency_hz.size} points, in Z0 = {_ohm(result)} (device measurement"
        " impedance)"
    )
    facts = dc_facts_words(result)
    if facts:
        parts.append(wrap(facts, "  "))
    return parts


def dc_facts_words(result: CheckResult) -> str | None:
    """The DC facts as given, echoed: 'DC facts: device -76 ohm, load 150 ohm (stated)'."""
    device, load = result.dc_resistances_ohm
    if device is None and load is None and result.dc_facts_source is None:
        return None
    given = [
        f"{role} {format_resistance(value)}"
        for role, value in (("device", device), ("load", load))
        if value is not None
    ]
    source = result.dc_facts_source
    closure = result.closures[0]
    sign = {1: "F(0) > 0", -1: "F(0) < 0"}.get(closure.sign_at_limit)
    text = "DC facts: " + (", ".join(given) if given else "from the netlists")
    if source and source != "stated":
        text += f" ({source})"
    elif given:
        text += " (stated)"
    if closure.basis == "dc-resistances" and sign:
        text += f"; they give {sign}"
    return text


def bands_rows(result: CheckResult) -> tuple[tuple[str, ...], list[list[str]]]:
    """Headings and rows of the bands where |L| ≥ 1 (a single 'none' heading when none)."""
    if not result.bands:
        return ("none: |L| < 1 across the analysed band",), []
    rows = []
    for band in result.bands:
        edges = [
            word
            for flag, word in (
                (band.starts_at_sweep_edge, "starts at the sweep's low edge"),
                (band.stops_at_sweep_edge, "runs to the sweep's top edge"),
            )
            if flag
        ]
        rows.append(
            [
                format_frequency(band.start_hz),
                format_frequency(band.stop_hz),
                format_decibels(band.peak_loop_gain),
                format_frequency(band.peak_frequency_hz),
                "; ".join(edges),
            ]
        )
    return ("from", "to", "peak |L|", "at", "note"), rows


def crossings_rows(result: CheckResult) -> tuple[tuple[str, ...], list[list[str]]]:
    """Headings and rows of the crossings of the real axis beyond +1."""
    rows = [
        [
            format_frequency(crossing.frequency_hz),
            format_decibels(abs(crossing.loop_gain)),
            crossing.direction,
            "within the data's scatter" if crossing.within_noise else "",
        ]
        for crossing in result.crossings
    ]
    return ("at", "|L|", "direction", "note"), rows


def margins_title(result: CheckResult) -> str:
    """The margins section's title: margins only for a stable loop."""
    if result.verdict == "stable":
        return f"Margins (Z0 = {_ohm(result)})"
    return f"Distance of L from +1 (Z0 = {_ohm(result)})"


def margins_rows(result: CheckResult) -> list[tuple[str, str]]:
    """(label, value) pairs: the distance from +1 always; gain and phase margins only when the
    verdict is stable (they measure how far a stable loop is from instability)."""
    margins = result.margins
    rows = [
        (
            "closest approach to +1",
            f"|1 - L| = {format_plain(margins.modulus_margin)} at"
            f" {format_frequency(margins.modulus_margin_frequency_hz)}",
        )
    ]
    if result.verdict != "stable":
        return rows
    if margins.gain_margin is not None and margins.gain_margin_frequency_hz is not None:
        gain = (
            f"{to_decibels(margins.gain_margin):.2f} dB at"
            f" {format_frequency(margins.gain_margin_frequency_hz)}"
        )
    else:
        gain = "none: L does not cross the real axis between 0 and +1"
    rows.append(("gain margin", gain))
    if margins.phase_margin_rad is not None and margins.phase_margin_frequency_hz is not None:
        phase = (
            f"{math.degrees(margins.phase_margin_rad):.1f}° at"
            f" {format_frequency(margins.phase_margin_frequency_hz)}"
        )
    else:
        phase = "none: |L| never passes through 1"
    rows.append(("phase margin", phase))
    return rows


def margins_notes(result: CheckResult) -> list[str]:
    """Why no gain or phase margin is given under a verdict other than stable."""
    if result.verdict == "stable":
        return []
    return [
        "Gain and phase margins are not given: they say how far a stable loop is from"
        " instability, and this loop is not shown stable."
    ]


def closure_rows(result: CheckResult) -> list[tuple[str, str]]:
    """(towards, basis) pairs for both edges, and the largest phase step."""
    rows = []
    for closure in result.closures:
        limit = "towards DC" if closure.side == "low" else "towards ∞"
        if closure.founded:
            sign = {1: "; F > 0 there", -1: "; F < 0 there"}.get(closure.sign_at_limit, "")
            words = f"{CLOSURE_WORDS[closure.basis]}{sign}"
        else:
            words = _not_closed(closure.side, abs(closure.loop_gain_at_edge))
        rows.append((limit, words))
    step = math.degrees(result.largest_phase_step_rad)
    rows.append(("largest phase step", f"{step:.1f}° of 1 - L between neighbouring samples"))
    return rows


def _not_closed(side: str, magnitude: float) -> str:
    if side == "low":
        return (
            f"not closed: |L| = {format_plain(magnitude)} at the edge and L still moving (see"
            " the reasons)"
        )
    return f"not closed: |L| = {format_plain(magnitude)} at the edge, not clearly below 1"


def sampling_lines(result: CheckResult) -> list[str]:
    """The measured files' grid resolution where it matters, the scatter, stated errors."""
    lines = []
    roles = {record.source: record.role for record in result.inputs}
    for grid in result.grid_resolution:
        role = roles.get(grid.source, "file")
        lines.append(
            f"{role} grid ({printable(grid.source)}): the largest loaded Q this grid resolves"
            f" where the device has gain: Q = {format_plain(grid.finest_resolvable_q, 2)} (step"
            f" {format_frequency(grid.largest_step_hz)} near"
            f" {format_frequency(grid.at_frequency_hz)})"
        )
    lines.append(
        f"scatter of L between neighbouring points: |ΔL| about"
        f" {format_plain(result.noise_estimate, 2)}"
    )
    uncertainty = result.uncertainty
    if uncertainty.device or uncertainty.load:
        state = "the count is at stake" if uncertainty.count_at_stake else "the count is robust"
        lines.append(
            f"stated |Γ| errors {format_plain(uncertainty.device)} (device),"
            f" {format_plain(uncertainty.load)} (load): L may move by up to |ΔL| ="
            f" {format_plain(uncertainty.largest_loop_gain_change)}; the smallest slack |1 - L| -"
            f" |ΔL| = {format_plain(uncertainty.smallest_slack)} at"
            f" {format_frequency(uncertainty.smallest_slack_frequency_hz)}: {state}"
        )
    return lines


_MODE_SOURCES = {
    "exact": "the joined circuit's natural frequencies",
    "continuation": "Newton's iteration on 1 - L continued off the frequency axis near the"
    " crossing",
    "pole-zero-fit": "a trusted pole-zero fit of 1 - L",
}


def mode_rows(result: CheckResult) -> tuple[tuple[str, ...], list[list[str]]]:
    """Headings and rows of the modes the count establishes (none when not located)."""
    rows = []
    for mode in result.modes or ():
        frequency = "real root" if mode.real else format_frequency(mode.frequency_hz)
        kind = "latch-up (no oscillation)" if mode.real else "oscillation (a complex pair)"
        rows.append([frequency, format_rate(mode.sigma_per_s), kind])
    return ("frequency", "growth rate σ", "kind"), rows


def mode_notes(result: CheckResult) -> list[str]:
    """Where the modes come from, or why they are not listed."""
    count = result.encirclements
    if result.modes:
        source = _MODE_SOURCES.get(result.modes[0].source, result.modes[0].source)
        return [
            f"From {source}; together they account for the count (N = {count}). A disturbance"
            " grows as exp(σt) until the device's nonlinearity limits it."
        ]
    if count:
        roots = format_count(
            count, "right-half-plane natural frequency", "right-half-plane natural frequencies"
        )
        return [
            f"Not located: neither Newton's iteration on 1 - L continued near the crossings nor a"
            f" trusted pole-zero fit accounts exactly for the {roots} the count establishes"
            f" (N = {count}); oneport poles shows the fit. The count decides."
        ]
    return []


# --- the return-loss bound -----------------------------------------------------------------


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
    return_loss = 0.0 - to_decibels(result.reflection_bound)
    return (
        f"{headline}: return loss ≥ {format_plain(return_loss)} dB in"
        f" {format_resistance(result.reference_impedance_ohm)};"
        f" {format_frequency(low)}-{format_frequency(high)}"
    )


def render_bound(result: BoundResult) -> str:
    """The text report of a worst-case-load (return-loss bound) check."""
    z0 = format_resistance(result.reference_impedance_ohm)
    parts = [bound_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += [
        "",
        f"Required load return loss (Z0 = {z0})",
        f"  worst: {0.0 - to_decibels(result.smallest_allowed_reflection):.2f} dB at"
        f" {format_frequency(result.worst_frequency_hz)}",
    ]
    if result.failing_bands:
        parts.append("  bands where the stated return loss is not enough:")
        for band in result.failing_bands:
            parts.append(
                f"    {format_frequency(band.start_hz)}-{format_frequency(band.stop_hz)}"
                f" (worst |Γd|·ρ = {format_plain(band.peak_loop_gain)} at"
                f" {format_frequency(band.peak_frequency_hz)})"
            )
    parts += closing_sections(result.warnings, result.next_steps, result.premise, result.cautions)
    return "\n".join(parts) + "\n"


# --- shared by every report ----------------------------------------------------------------


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
        parts += ["", "Warnings", *[wrap(w.message, "  - ") for w in warnings]]
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


def _pair_line(label: str, value: str) -> str:
    return wrap(f"{label:<24} {value}", "  ", hang=27)


def _ohm(result: CheckResult) -> str:
    return format_resistance(result.reference_impedance_ohm)


#: A number and the unit after it (or a symbol, "=" and its value) stay on one line.
_KEEP_TOGETHER = re.compile(
    r"(?<=\d) (?=(?:[GMk]?Hz|dB|dBm|ohm|kohm|°|%|/s|[pnuµm]?[FHVAWs])\b)|(?<=[=≥≤<>]) (?=[-+\d])"
    r"|(?<=\w) (?=[=≥≤] [-+\d])|(?<=\b[NPZ]) (?=\+ [NPZ]\b)|(?<=\b[NPZ] \+) (?=[NPZ]\b)"
)
_GLUE = "\x00"


def wrap(text: str, indent: str, hang: int | None = None) -> str:
    """``text`` wrapped to the report width, every line indented (continuation lines by
    ``hang`` spaces when given). A value and its unit, and ``N = 2``, are never split."""
    following = " " * (len(indent) if hang is None else hang)
    glued = _KEEP_TOGETHER.sub(_GLUE, text)
    return textwrap.fill(
        glued,
        width=_WIDTH,
        initial_indent=indent,
        subsequent_indent=following,
        break_on_hyphens=False,
    ).replace(_GLUE, " ")
