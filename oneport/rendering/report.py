"""A self-contained HTML report of a check: one file to archive, mail or open offline.

Rendering only: it lays out what a :class:`~oneport.analysis.result.CheckResult` holds (verdict
first, inputs, tables, plots, premise, cautions last) and computes nothing. The file needs nothing
else: the plots are embedded as base64 PNG ``data:`` URIs, the style sheet is inline, there is no
script, no font and no external address, and a Content-Security-Policy in the page forbids loading
anything but the embedded images should a browser ever be asked to. Every piece of text is passed
through :func:`html.escape`, file names and paths from user files included.
"""

from __future__ import annotations

import base64
import html
import math
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from ..units import format_frequency, to_decibels
from .check_text import verdict_line

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from ..analysis.nyquist import EdgeClosure
    from ..analysis.result import CheckResult
    from ..reading.records import InputRecord

_CONTENT_POLICY = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"
_VERDICT_WORDS = {
    "stable": "Stable (small-signal): no natural frequency in the right half plane.",
    "unstable": "Unstable: the device will oscillate or latch up into this load.",
    "inconclusive": "Inconclusive: these data cannot decide.",
}
_CLOSURE_WORDS = {
    "dc-sample": "the data include 0 Hz",
    "loop-gain-below-unity": "|L| < 1 at the edge",
    "settled": "L has settled, far from +1",
    "dc-resistances": "from the DC facts",
    "netlist-limit": "both netlists evaluated beyond every natural frequency",
    "not-founded": "not founded: |L| not clearly below 1 at the edge (towards DC: still moving)",
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
figure { margin: 1rem 0; }
figure img { max-width: 100%; border: 1px solid #d5d9dc; background: #ffffff; }
figcaption { font-size: 0.9rem; color: #4d5962; }
.cautions li { margin-bottom: 0.35rem; }
.note { color: #4d5962; font-size: 0.9rem; }
"""


def write_report(result: CheckResult, path: str | Path, title: str | None = None) -> Path:
    """Write the HTML report of ``result`` to ``path`` (whole or not at all).

    Parameters
    ----------
    result : CheckResult
    path : str or Path
        The HTML file to write; its folder must exist.
    title : str, optional
        The page title; default names the device and the load.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        When the file cannot be written (one line naming it).
    """
    from .files import require_folder, write_atomically

    target = Path(path)
    require_folder(target)
    write_atomically(target, render_report(result, title).encode("utf-8"))
    return target


def render_report(result: CheckResult, title: str | None = None) -> str:
    """The report as one HTML document (a string), images embedded."""
    heading = title if title is not None else _default_title(result)
    sections = [
        f"<h1>{_escape(heading)}</h1>",
        _verdict_section(result),
        _section("Inputs", _inputs_table(result)),
        _section(f"Bands where |L| ≥ 1 ({_ohm(result)})", _bands_table(result)),
        _section(
            f"Crossings of the real axis beyond +1 ({_ohm(result)})", _crossings_table(result)
        ),
        _section(f"Margins ({_ohm(result)})", _margins_table(result)),
        _section("Closing the contour outside the sweep", _closure_table(result)),
        _section("Warnings", _warnings_table(result)),
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
        f"<body>\n{body}\n{_footer()}\n</body>\n</html>\n"
    )


# --- sections ----------------------------------------------------------------------------


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
    return table + analysed


def _input_row(record: InputRecord) -> list[str]:
    low, high = record.frequency_range_hz
    measured = record.file_reference_impedance_ohm
    analysed = record.analysed_reference_impedance_ohm
    impedance = f"{measured:g} ohm in the file"
    if measured != analysed:
        impedance += f", renormalised to {analysed:g} ohm"
    digest = f"<code>{_escape(record.sha256)}</code>" if record.sha256 else "(not from a file)"
    return [
        record.role,
        record.source,
        digest,
        f"{record.parameter} {record.number_format}, Touchstone {record.version}",
        str(record.points),
        f"{format_frequency(low)} to {format_frequency(high)}",
        impedance,
    ]


def _bands_table(result: CheckResult) -> str:
    if not result.bands:
        return "<p>None: |L| &lt; 1 across the analysed band.</p>"
    rows = []
    for band in result.bands:
        edges = [
            word
            for flag, word in (
                (band.starts_at_sweep_edge, "starts at the sweep's low edge"),
                (band.stops_at_sweep_edge, "stops at the sweep's high edge"),
            )
            if flag
        ]
        rows.append(
            [
                format_frequency(band.start_hz),
                format_frequency(band.stop_hz),
                _decibels(band.peak_loop_gain),
                format_frequency(band.peak_frequency_hz),
                "; ".join(edges),
            ]
        )
    return _table(("from", "to", "peak |L|", "at", "note"), rows, numeric_columns=(2,))


def _crossings_table(result: CheckResult) -> str:
    if not result.crossings:
        return "<p>None.</p>"
    rows = [
        [
            format_frequency(crossing.frequency_hz),
            _decibels(abs(crossing.loop_gain)),
            crossing.direction,
            "within the data's scatter" if crossing.within_noise else "",
        ]
        for crossing in result.crossings
    ]
    table = _table(("at", "|L|", "direction", "note"), rows, numeric_columns=(1,))
    return table + (
        '<p class="note">The verdict rests on the net count of encirclements, not on any single'
        " crossing; crossing frequencies move with Z0.</p>"
    )


def _margins_table(result: CheckResult) -> str:
    margins = result.margins
    rows = [
        [
            "closest approach to +1, |1 − L|",
            f"{margins.modulus_margin:.3g}",
            format_frequency(margins.modulus_margin_frequency_hz),
        ]
    ]
    if margins.gain_margin is not None and margins.gain_margin_frequency_hz is not None:
        rows.append(
            [
                "gain margin",
                f"{to_decibels(margins.gain_margin):.2f} dB",
                format_frequency(margins.gain_margin_frequency_hz),
            ]
        )
    else:
        rows.append(["gain margin", "none", "L does not cross (0, 1) on the real axis"])
    if margins.phase_margin_rad is not None and margins.phase_margin_frequency_hz is not None:
        rows.append(
            [
                "phase margin",
                f"{math.degrees(margins.phase_margin_rad):.1f} deg",
                format_frequency(margins.phase_margin_frequency_hz),
            ]
        )
    else:
        rows.append(["phase margin", "none", "|L| does not pass 1"])
    return _table(("margin", "value", "at"), rows, numeric_columns=(1,))


def _closure_table(result: CheckResult) -> str:
    rows = [_closure_row(closure) for closure in result.closures]
    table = _table(("towards", "basis", "sign of F there", "extend the sweep to"), rows)
    step = math.degrees(result.largest_phase_step_rad)
    sampling = (
        f"<p>Largest phase step of 1 − L between samples: {step:.1f} deg; estimated scatter"
        f" of L: {result.noise_estimate:.2g}; device points left out (outside the load's"
        f" band): {result.points_dropped}.</p>"
    )
    return table + sampling


def _closure_row(closure: EdgeClosure) -> list[str]:
    towards = "DC" if closure.side == "low" else "infinite frequency"
    sign = {1: "F > 0", -1: "F < 0"}.get(closure.sign_at_limit, "unknown")
    extend = "" if closure.extend_to_hz is None else format_frequency(closure.extend_to_hz)
    return [towards, _CLOSURE_WORDS.get(closure.basis, closure.basis), sign, extend]


def _warnings_table(result: CheckResult) -> str:
    if not result.warnings:
        return "<p>None.</p>"
    rows = [[f"<code>{_escape(w.code)}</code>", _escape(w.message)] for w in result.warnings]
    return _table(("code", "message"), rows, raw_columns=(0, 1))


def _figures(result: CheckResult) -> str:
    from . import check_plots as plots

    pictures = (
        (
            plots.plot_nyquist(result, compress_radius=True),
            "Nyquist plot of L = Γd·ΓL (radius log-compressed: r ↦ log10(1 + r)/log10(2), so"
            " |L| = 1 and the critical point +1 stay in place). Clockwise encirclements of +1"
            " count right-half-plane natural frequencies.",
        ),
        (
            plots.plot_loop_gain(result),
            "Loop gain against frequency; shaded: bands where |L| ≥ 1; dashed: predicted"
            " oscillation frequencies.",
        ),
        (
            plots.plot_smith(result),
            "Smith chart of the load ΓL and the device as 1/Γd: the loop closes where they"
            " meet; the bold circle is |Γ| = 1.",
        ),
    )
    return "\n".join(_figure(figure, caption) for figure, caption in pictures)


def _figure(figure: Figure, caption: str) -> str:
    from .figures import figure_bytes

    encoded = base64.b64encode(figure_bytes(figure, "png")).decode("ascii")
    return (
        f'<figure><img alt="{_escape(caption)}" src="data:image/png;base64,{encoded}">'
        f"<figcaption>{_escape(caption)}</figcaption></figure>"
    )


def _footer() -> str:
    from .. import __version__

    return f'<p class="note">Written by oneport {_escape(__version__)}.</p>'


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
    names = {record.role: Path(record.source).name for record in result.inputs}
    return f"oneport check: {names.get('device', 'device')} into {names.get('load', 'load')}"


def _ohm(result: CheckResult) -> str:
    return f"Z0 = {result.reference_impedance_ohm:g} ohm"


def _decibels(magnitude: float) -> str:
    return f"{to_decibels(magnitude):.2f} dB"
