"""A self-contained HTML report of a check: one file to archive, mail or open offline.

Rendering only: it lays out what a :class:`~oneport.analysis.result.CheckResult` holds (verdict
first, inputs, tables, plots, premise, cautions last) and computes nothing. The file needs nothing
else: the plots are embedded as base64 SVG ``data:`` URIs (drawn by
:mod:`oneport.rendering.report_svg`, no matplotlib), the style sheet is inline, there is no
script, no font and no external address, and a Content-Security-Policy in the page forbids loading
anything but the embedded images should a browser ever be asked to. Every piece of text is passed
through :func:`html.escape`, file names and paths from user files included.

Under the title the report says when it was written, by which version, and the command line
that wrote it (a :class:`RunRecord` the command passes in; the check's result and its JSON stay
free of them, so two runs on the same files give the same JSON).
"""

from __future__ import annotations

import base64
import html
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import printable
from ..units import format_frequency, format_resistance
from .check_text import (
    bands_rows,
    closure_rows,
    crossings_rows,
    dc_facts_words,
    margins_notes,
    margins_rows,
    margins_title,
    mode_notes,
    mode_rows,
    sampling_lines,
    verdict_line,
)

if TYPE_CHECKING:
    from ..analysis.result import CheckResult
    from ..reading.records import InputRecord

_CONTENT_POLICY = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"
_VERDICT_WORDS = {
    "stable": "Stable (small-signal): no natural frequency in the right half plane.",
    "unstable": "Unstable: the device will oscillate or latch up into this load.",
    "inconclusive": "Inconclusive: these data cannot decide.",
}
_STYLE = """
body { font-family: system-ui, sans-serif; color: #1f2a33; background: #fbfbf9;
       max-width: 70rem; margin: 1.5rem auto; padding: 0 1rem; line-height: 1.45; }
h1 { font-size: 1.45rem; margin-bottom: 0.3rem; }
h2 { font-size: 1.1rem; margin-top: 1.8rem; border-bottom: 1px solid #d5d9dc; }
.verdict { border-left: 0.45rem solid; padding: 0.6rem 1rem; margin: 1rem 0;
           background: #ffffff; }
.verdict p.headline { font-size: 1.2rem; font-weight: 600; margin: 0 0 0.3rem 0; }
.verdict p.line { font-family: ui-monospace, monospace; margin: 0 0 0.4rem 0; }
.verdict-stable { border-color: #3f7d4e; }
.verdict-unstable { border-color: #b23a31; }
.verdict-inconclusive { border-color: #b98a1e; }
table { border-collapse: collapse; margin: 0.4rem 0; font-size: 0.92rem; }
th, td { border: 1px solid #d5d9dc; padding: 0.2rem 0.55rem; text-align: left;
         vertical-align: top; }
th { background: #eef0f1; }
td.number { text-align: right; font-variant-numeric: tabular-nums; }
code { font-size: 0.85rem; word-break: break-all; }
pre { font-size: 0.85rem; white-space: pre-wrap; }
figure { margin: 1rem 0; }
figure img { max-width: 100%; border: 1px solid #d5d9dc; background: #ffffff; }
figcaption { font-size: 0.9rem; color: #4d5962; }
.cautions li { margin-bottom: 0.35rem; }
.note { color: #4d5962; font-size: 0.9rem; }
.run { color: #4d5962; font-size: 0.9rem; margin-top: 0; }
"""


@dataclass(frozen=True)
class RunRecord:
    """What the report says about the run that wrote it: passed in by the command, so the
    product's result (and its JSON) stays free of dates and command lines.

    Attributes
    ----------
    command_line : str
        The command as typed (quoted for a shell).
    written_at : str
        Local date and time with its UTC offset, to the second (ISO 8601).
    version : str
        The tool's version.
    """

    command_line: str
    written_at: str
    version: str


def run_record(argv: Sequence[str] | None = None) -> RunRecord:
    """The run record of this process: ``oneport`` and ``argv`` (default ``sys.argv[1:]``),
    now, and the package's version."""
    import datetime
    import shlex
    import sys

    from .. import __version__

    words = list(sys.argv[1:] if argv is None else argv)
    moment = datetime.datetime.now().astimezone().replace(microsecond=0)
    return RunRecord(shlex.join(["oneport", *words]), moment.isoformat(sep=" "), __version__)


def write_report(
    result: CheckResult,
    path: str | Path,
    title: str | None = None,
    run: RunRecord | None = None,
) -> Path:
    """Write the HTML report of ``result`` to ``path`` (whole or not at all).

    Parameters
    ----------
    result : CheckResult
    path : str or Path
        The HTML file to write; its folder must exist.
    title : str, optional
        The page title; default names the device and the load by their paths.
    run : RunRecord, optional
        The command line, date and version to print under the title; default: this process's
        (:func:`run_record`).

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        When the file cannot be written (one line naming it).
    """
    from .files import check_target, write_atomically

    target = check_target(path, "--report")
    write_atomically(target, render_report(result, title, run).encode("utf-8"))
    return target


def render_report(
    result: CheckResult, title: str | None = None, run: RunRecord | None = None
) -> str:
    """The report as one HTML document (a string), images embedded."""
    heading = title if title is not None else _default_title(result)
    record = run if run is not None else run_record()
    sections = [
        f"<h1>{_escape(heading)}</h1>",
        _run_section(record),
        _verdict_section(result),
        _section("Inputs", _inputs_table(result)),
        _section(f"Bands where |L| ≥ 1 ({_ohm(result)})", _bands_table(result)),
        _section(
            f"Crossings of the real axis beyond +1 ({_ohm(result)})", _crossings_table(result)
        ),
        _section(margins_title(result), _margins_table(result)),
        _section("Closing the contour outside the sweep", _closure_table(result)),
        _section("Sampling and measurement", _list(sampling_lines(result))),
    ]
    if result.modes is not None or result.verdict == "unstable":
        sections.append(_section("Modes the count establishes", _modes_table(result)))
    if result.second_opinion is not None:
        sections.append(_section("Second opinion: pole-zero fit of 1 - L", _second_opinion(result)))
    sections += [
        _section("Warnings", _warnings_list(result)),
        _section("What to do next", _list(result.next_steps, empty="Nothing further.")),
        _section("Plots", _figures(result)),
        _section("Premise", f"<p>{_escape(result.premise)}</p>"),
        _section("Cautions", _list(result.cautions, css_class="cautions")),
    ]
    body = "\n".join(sections)
    return (
        '<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        f'<meta http-equiv="Content-Security-Policy" content="{_CONTENT_POLICY}">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f"<title>{_escape(heading)}</title>\n<style>{_STYLE}</style>\n</head>\n"
        f"<body>\n{body}\n{_footer(record)}\n</body>\n</html>\n"
    )


# --- sections ----------------------------------------------------------------------------


def _run_section(record: RunRecord) -> str:
    return (
        '<p class="run">'
        f"Written {_escape(record.written_at)} by oneport {_escape(record.version)}<br>"
        f"<code>{_escape(record.command_line)}</code></p>"
    )


def _verdict_section(result: CheckResult) -> str:
    reasons = "".join(f"<li>{_escape(reason)}</li>" for reason in result.reasons)
    return (
        f'<section class="verdict verdict-{_escape(result.verdict)}" id="verdict">\n'
        f'<p class="headline">{_escape(_VERDICT_WORDS[result.verdict])}</p>\n'
        f'<p class="line">{_escape(verdict_line(result))}</p>\n'
        f"<ul>{reasons}</ul>\n</section>"
    )


def _inputs_table(result: CheckResult) -> str:
    rows = [_input_row(record) for record in result.inputs]
    low, high = result.frequency_range_hz
    table = _table(
        (
            "role",
            "file",
            "SHA-256",
            "data",
            "points",
            "frequency range",
            "reference impedance",
        ),
        rows,
        raw_columns=(2,),
    )
    analysed = (
        f"<p>Analysed {_escape(format_frequency(low))} to {_escape(format_frequency(high))},"
        f" {result.frequency_hz.size} points, in {_escape(_ohm(result))} (the device's"
        " measurement impedance).</p>"
    )
    facts = dc_facts_words(result)
    if facts:
        analysed += f"<p>{_escape(facts)}.</p>"
    return table + analysed


def _input_row(record: InputRecord) -> list[str]:
    low, high = record.frequency_range_hz
    measured = record.file_reference_impedance_ohm
    analysed = record.analysed_reference_impedance_ohm
    impedance = f"{format_resistance(measured)} in the file"
    if measured != analysed:
        impedance += f", renormalised to {format_resistance(analysed)}"
    if record.version == "netlist":
        impedance = f"evaluated in {format_resistance(analysed)}"
    digest = f"<code>{_escape(record.sha256)}</code>" if record.sha256 else "(not from a file)"
    data = (
        "netlist"
        if record.version == "netlist"
        else f"{record.parameter} {record.number_format}, Touchstone {record.version}"
    )
    return [
        record.role,
        record.source,
        digest,
        data,
        f"{record.points} points",
        f"{format_frequency(low)} to {format_frequency(high)}",
        impedance,
    ]


def _bands_table(result: CheckResult) -> str:
    headings, rows = bands_rows(result)
    if not rows:
        return "<p>None: |L| &lt; 1 across the analysed band.</p>"
    return _table(headings, rows, numeric_columns=(2,))


def _crossings_table(result: CheckResult) -> str:
    headings, rows = crossings_rows(result)
    if not rows:
        return "<p>None.</p>"
    table = _table(headings, rows, numeric_columns=(1,))
    return table + (
        '<p class="note">The verdict rests on the net count of encirclements, not on any single'
        " crossing; crossing frequencies move with Z0.</p>"
    )


def _margins_table(result: CheckResult) -> str:
    rows = [[label, value] for label, value in margins_rows(result)]
    notes = "".join(f'<p class="note">{_escape(note)}</p>' for note in margins_notes(result))
    return _table(("quantity", "value"), rows) + notes


def _closure_table(result: CheckResult) -> str:
    rows = [[label, value] for label, value in closure_rows(result)]
    extend = [
        [
            "towards DC" if closure.side == "low" else "towards ∞",
            f"extend the sweep to about {format_frequency(closure.extend_to_hz)}",
        ]
        for closure in result.closures
        if not closure.founded and closure.extend_to_hz is not None
    ]
    return _table(("edge", "basis"), rows + extend)


def _modes_table(result: CheckResult) -> str:
    headings, rows = mode_rows(result)
    notes = "".join(f"<p>{_escape(note)}</p>" for note in mode_notes(result))
    return (_table(headings, rows, numeric_columns=(1,)) if rows else "") + notes


def _second_opinion(result: CheckResult) -> str:
    """The fit's verdict, natural frequencies and fit quality, laid out as the text report has
    them (``check --poles``); a disagreement with the count is among the warnings."""
    from .poles_text import second_opinion_lines

    assert result.second_opinion is not None
    # The text's section without its heading (the page's <h2> says it) and its indent.
    lines = [line.removeprefix("  ") for line in second_opinion_lines(result.second_opinion)[1:]]
    return f"<pre>{_escape(chr(10).join(lines))}</pre>"


def _warnings_list(result: CheckResult) -> str:
    return _list([w.message for w in result.warnings], empty="None.")


def _figures(result: CheckResult) -> str:
    from . import report_svg

    pictures = (
        (
            report_svg.nyquist_svg(result),
            "Nyquist plot of L = Γd·ΓL, its radius compressed (r ↦ log10(1 + r)/log10(2)); the"
            " ticks and dotted rings give the true values, and |L| = 1 and the critical point +1"
            " stay in place. Clockwise encirclements of +1 count right-half-plane natural"
            " frequencies.",
        ),
        (
            report_svg.loop_gain_svg(result),
            "Loop gain against frequency; shaded: bands where |L| ≥ 1; dashed: predicted"
            " oscillation frequencies.",
        ),
        (
            report_svg.smith_svg(result),
            "Smith chart of the load ΓL and the device as 1/Γd, frequencies marked along both:"
            " the loop closes where they meet; the bold circle is |Γ| = 1.",
        ),
    )
    return "\n".join(_figure(svg, caption) for svg, caption in pictures)


def _figure(svg: str, caption: str) -> str:
    """An SVG picture as an image (a data: address, so it can run nothing and load nothing)."""
    encoded = base64.b64encode(svg.encode("utf-8")).decode("ascii")
    return (
        f'<figure><img alt="{_escape(caption)}" src="data:image/svg+xml;base64,{encoded}">'
        f"<figcaption>{_escape(caption)}</figcaption></figure>"
    )


def _footer(record: RunRecord) -> str:
    return f'<p class="note">Written by oneport {_escape(record.version)}.</p>'


# --- small builders ----------------------------------------------------------------------


def _section(heading: str, content: str) -> str:
    return f"<section>\n<h2>{_escape(heading)}</h2>\n{content}\n</section>"


def _table(
    headings: Sequence[str],
    rows: Iterable[Sequence[str]],
    numeric_columns: Sequence[int] = (),
    raw_columns: Sequence[int] = (),
) -> str:
    """A table; cells are escaped unless their column is in ``raw_columns`` (already HTML)."""
    head = "".join(f"<th>{_escape(heading)}</th>" for heading in headings)
    body = []
    for row in rows:
        cells = []
        for index, cell in enumerate(row):
            content = cell if index in raw_columns else _escape(cell)
            css = ' class="number"' if index in numeric_columns else ""
            cells.append(f"<td{css}>{content}</td>")
        body.append(f"<tr>{''.join(cells)}</tr>")
    return f"<table>\n<tr>{head}</tr>\n" + "\n".join(body) + "\n</table>"


def _list(items: Sequence[str], empty: str = "", css_class: str = "") -> str:
    if not items:
        return f"<p>{_escape(empty)}</p>"
    css = f' class="{css_class}"' if css_class else ""
    return f"<ul{css}>" + "".join(f"<li>{_escape(item)}</li>" for item in items) + "</ul>"


def _escape(text: object) -> str:
    return html.escape(str(text), quote=True)


def _default_title(result: CheckResult) -> str:
    paths = {record.role: printable(record.source) for record in result.inputs}
    return f"oneport check: {paths.get('device', 'device')} into {paths.get('load', 'load')}"


def _ohm(result: CheckResult) -> str:
    return f"Z0 = {format_resistance(result.reference_impedance_ohm)}"
