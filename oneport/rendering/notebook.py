"""Results at a Python prompt and in a notebook: a one-line ``repr`` and an HTML summary.

Rendering only: the line is each product's own verdict line, the HTML is its own text report
cut into its sections (verdict and reasons first, key numbers with their units, the sections
folded, the cautions always shown), every piece of text escaped. Nothing here computes: the key
numbers are fields of the result, formatted.
"""

from __future__ import annotations

import html
import math
from collections.abc import Callable
from typing import Any

from ..units import format_frequency, format_plain, format_resistance, to_decibels

#: How a repr is kept short: the verdict line is cut here.
REPR_WIDTH = 160


def short_repr(result: Any) -> str:
    """``<ClassName verdict line>``: one line, at most about :data:`REPR_WIDTH` characters."""
    line = _view(result).line(result)
    if len(line) > REPR_WIDTH:
        line = line[: REPR_WIDTH - 1] + "…"
    return f"<{type(result).__name__} {line}>"


def html_summary(result: Any) -> str:
    """The notebook view: verdict, reasons, key numbers, the report's sections, the cautions."""
    view = _view(result)
    text = view.report(result)
    heading, opening, sections = _sections(text)
    cautions = tuple(getattr(result, "cautions", ()))
    if cautions and not any(title == "Cautions" for title, _ in sections):
        sections.append(("Cautions", "\n".join(f"  ! {caution}" for caution in cautions)))
    parts = [f'<div class="oneport-result oneport-{_css(type(result).__name__)}">']
    parts.append(f"<p><strong>{html.escape(heading)}</strong></p>")
    if opening:
        parts.append(f"<pre>{html.escape(opening)}</pre>")
    numbers = view.numbers(result)
    if numbers:
        rows = "".join(
            f"<tr><th style='text-align:left'>{html.escape(name)}</th>"
            f"<td style='text-align:left'>{html.escape(value)}</td></tr>"
            for name, value in numbers
        )
        parts.append(f"<table>{rows}</table>")
    for title, body in sections:
        shown = " open" if title in ("Warnings", "Cautions") else ""
        parts.append(
            f"<details{shown}><summary>{html.escape(title)}</summary>"
            f"<pre>{html.escape(body)}</pre></details>"
        )
    parts.append("</div>")
    return "".join(parts)


def _sections(text: str) -> tuple[str, str, list[tuple[str, str]]]:
    """A text report as its first line, the indented lines before the first heading, and its
    titled sections (a section starts with an unindented line after a blank one)."""
    lines = text.rstrip("\n").splitlines()
    heading = lines[0] if lines else ""
    opening: list[str] = []
    sections: list[tuple[str, list[str]]] = []
    previous_blank = False
    for line in lines[1:]:
        if not line.strip():
            previous_blank = True
            if sections:
                sections[-1][1].append("")
            elif opening:
                opening.append("")
            continue
        if previous_blank and not line.startswith(" "):
            sections.append((line, []))
        elif sections:
            sections[-1][1].append(line)
        else:
            opening.append(line)
        previous_blank = False
    return (
        heading,
        "\n".join(opening).strip("\n"),
        [(title, "\n".join(body).strip("\n")) for title, body in sections],
    )


def _css(name: str) -> str:
    return "".join("-" + c.lower() if c.isupper() else c for c in name).strip("-")


class _View:
    """How one kind of result is shown: its line, its text report, its key numbers."""

    def __init__(
        self,
        line: Callable[[Any], str],
        report: Callable[[Any], str],
        numbers: Callable[[Any], list[tuple[str, str]]],
    ) -> None:
        self.line = line
        self.report = report
        self.numbers = numbers


def _view(result: Any) -> _View:
    """The view of ``result``'s class (looked up by name, so only its renderer is imported)."""
    name = type(result).__name__
    maker = _VIEWS.get(name)
    if maker is None:
        raise TypeError(f"no notebook view for {name}")
    return maker()


# --- the products ------------------------------------------------------------------------------


def _ohm(value: float | None) -> str:
    return "—" if value is None else format_resistance(value)


def _band(low: float, high: float) -> str:
    return f"{format_frequency(low)} to {format_frequency(high)}"


def _db(magnitude: float) -> str:
    return f"{to_decibels(magnitude):.2f} dB"


def _check() -> _View:
    from .check_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        margins = result.margins
        rows = [
            ("verdict", result.verdict),
            (
                "encirclements N",
                "cannot be counted" if result.encirclements is None else str(result.encirclements),
            ),
            ("analysed band", _band(*result.frequency_range_hz)),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
            (
                "closest approach to +1",
                f"|1 - L| = {format_plain(margins.modulus_margin)} at"
                f" {format_frequency(margins.modulus_margin_frequency_hz)}",
            ),
        ]
        if result.oscillation_frequencies_hz:
            listed = ", ".join(format_frequency(f) for f in result.oscillation_frequencies_hz)
            rows.append(("oscillation near", listed))
        if result.bands:
            peak = max(result.bands, key=lambda band: band.peak_loop_gain)
            rows.append(
                (
                    "largest |L|",
                    f"{_db(peak.peak_loop_gain)} at {format_frequency(peak.peak_frequency_hz)}",
                )
            )
        return rows

    return _View(verdict_line, render, numbers)


def _bound() -> _View:
    from .check_text import bound_line, render_bound

    def numbers(result: Any) -> list[tuple[str, str]]:
        return [
            ("verdict", result.verdict),
            (
                "load class",
                f"|ΓL| ≤ {format_plain(result.reflection_bound, 4)}"
                f" (return loss ≥ {format_plain(0.0 - to_decibels(result.reflection_bound))} dB)",
            ),
            (
                "return loss the device needs",
                f"{0.0 - to_decibels(result.smallest_allowed_reflection):.2f} dB at"
                f" {format_frequency(result.worst_frequency_hz)}",
            ),
            ("analysed band", _band(*result.frequency_range_hz)),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
        ]

    return _View(bound_line, render_bound, numbers)


def _poles() -> _View:
    from .poles_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        rows = [
            ("verdict (the count's)", result.verdict),
            ("the fit's own verdict", result.fit_verdict or result.verdict),
            ("trusted right-half-plane natural frequencies", str(result.trusted_rhp_count)),
            ("model order", str(result.model_order)),
            ("fit RMS error", f"{result.fit_rms_error:.3g} (F is dimensionless)"),
            ("fitted band", _band(*result.frequency_range_hz)),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
        ]
        if result.nyquist_encirclements is not None:
            rows.insert(2, ("Nyquist count N", str(result.nyquist_encirclements)))
        return rows

    return _View(verdict_line, render, numbers)


def _amplifier() -> _View:
    from .amplifier_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        bandwidth = result.bandwidth
        return [
            ("verdict", f"{result.verdict} ({result.basis})"),
            (
                "peak gain |Γd|²",
                f"{format_plain(result.peak_gain, 4)}"
                f" ({10 * math.log10(result.peak_gain):.2f} dB) at"
                f" {format_frequency(result.peak_frequency_hz)}",
            ),
            (
                "-3 dB bandwidth",
                f"{format_frequency(bandwidth.stop_hz - bandwidth.start_hz)}"
                f" ({_band(bandwidth.start_hz, bandwidth.stop_hz)})",
            ),
            (
                "port return loss needed",
                f"{0.0 - to_decibels(result.smallest_allowed_reflection):.2f} dB at"
                f" {format_frequency(result.worst_frequency_hz)}",
            ),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
        ]

    return _View(verdict_line, render, numbers)


def _oscillator() -> _View:
    from ..products.oscillator.wording import format_level
    from .oscillator_text import render, summary_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        rows = [
            ("verdict", result.verdict),
            ("form", result.form),
            (
                "starts from noise",
                {True: "yes", False: "no", None: "cannot be told"}[result.starts_from_noise],
            ),
            ("operating points in the data", str(len(result.operating_points))),
        ]
        for point in result.operating_points:
            state = "stable" if point.kurokawa_stable and not point.marginal else "not stable"
            rows.append(
                (
                    f"point at {format_frequency(point.frequency_hz)}",
                    f"{format_level(point.amplitude, point.amplitude_quantity)}, {state}",
                )
            )
        rows.append(("reference impedance Z0", _ohm(result.reference_impedance_ohm)))
        return rows

    return _View(summary_line, render, numbers)


def _sweep() -> _View:
    from .sweep_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        summary = result.summary
        rows = [
            ("verdict", summary.verdict),
            ("variants", f"{summary.completed} of {summary.variants} run"),
            ("stable", f"{summary.stable_fraction:.1%}"),
            ("unstable", f"{summary.unstable_fraction:.1%}"),
            ("inconclusive", f"{summary.inconclusive_fraction:.1%}"),
            ("reference impedance Z0", _ohm(result.run.reference_impedance_ohm)),
        ]
        if summary.worst_reason:
            rows.append(("worst variant", summary.worst_reason))
        return rows

    return _View(verdict_line, render, numbers)


def _terminations() -> _View:
    from .terminations_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        best = result.best
        resistance = (
            "unbounded"
            if best.unbounded
            else f"{format_resistance(best.observed_resistance_ohm)} at port {result.observed_port}"
        )
        return [
            ("at", format_frequency(result.frequency_hz)),
            ("terminated port", str(result.terminated_port)),
            ("passive terminations that make it negative", f"{result.negative_fraction:.1%}"),
            ("most negative resistance", resistance),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
        ]

    return _View(verdict_line, render, numbers)


def _export() -> _View:
    from .export_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        return [
            ("written", result.output_path),
            ("ports", str(result.ports)),
            ("points", f"{result.points} ({result.spacing})"),
            ("band", _band(result.start_hz, result.stop_hz)),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
        ]

    return _View(verdict_line, render, numbers)


def _stabilise() -> _View:
    from .stabilise_text import render, verdict_line

    def numbers(result: Any) -> list[tuple[str, str]]:
        rows = [
            ("verdict", result.verdict),
            ("networks suggested", str(len(result.suggestions))),
            ("candidates judged", str(result.candidates_judged)),
            ("reference impedance Z0", _ohm(result.reference_impedance_ohm)),
        ]
        if result.suggestions:
            rows.insert(1, ("best", result.suggestions[0].description))
        return rows

    return _View(verdict_line, render, numbers)


def _watch() -> _View:
    from .watch_text import outcome_lines

    def line(result: Any) -> str:
        counts: dict[str, int] = {}
        for checked in result.results:
            counts[checked.verdict] = counts.get(checked.verdict, 0) + 1
        listed = ", ".join(f"{n} {word}" for word, n in sorted(counts.items())) or "none checked"
        return f"{result.folder}: {len(result.outcomes)} file(s), {listed}"

    def report(result: Any) -> str:
        rows = [line(result), ""]
        rows += ["  " + row for outcome in result.outcomes for row in outcome_lines(outcome)]
        return "\n".join(rows) + "\n"

    def numbers(result: Any) -> list[tuple[str, str]]:
        return [
            ("worst verdict", result.verdict),
            ("files", str(len(result.outcomes))),
            ("load", result.load),
        ]

    return _View(line, report, numbers)


_VIEWS: dict[str, Callable[[], _View]] = {
    "CheckResult": _check,
    "BoundResult": _bound,
    "PoleZeroResult": _poles,
    "AmplifierResult": _amplifier,
    "OscillatorResult": _oscillator,
    "SweepResult": _sweep,
    "TerminationsResult": _terminations,
    "ExportResult": _export,
    "StabiliseResult": _stabilise,
    "WatchResult": _watch,
}
