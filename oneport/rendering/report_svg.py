"""The HTML report's pictures as small SVG documents, written directly (no matplotlib).

Rendering only: the same pictures as :mod:`oneport.rendering.check_plots` (a compressed Nyquist
plot of L with ticks at true values, the loop gain against frequency, a Smith chart with
frequencies marked along both traces), drawn from what a
:class:`~oneport.analysis.result.CheckResult` holds and computing nothing beyond placing points
on a page. Written as text, they cost a few milliseconds where importing and running matplotlib
cost most of a second, which keeps ``--report`` within three times a plain check
(benchmarks/README.md); as vector drawings they stay sharp at any zoom. Elements that tests
and readers may look for carry a ``class``: ``trace``, ``mirror``, ``critical-point``,
``compressed-tick``, ``compressed-ring``, ``crossing-label``, ``loop-gain-band``,
``oscillation-frequency``, ``load-trace``, ``device-trace``, ``smith-frequency-mark``,
``smith-frequency-label``, ``closest-approach``, ``legend``.
"""

from __future__ import annotations

import html
import math
from collections.abc import Sequence
from typing import TYPE_CHECKING

import numpy as np

from ..units import format_frequency, format_plain, format_resistance
from .check_plots import (
    _CRITICAL,
    _DEVICE,
    _GRID,
    _INK,
    _LOAD,
    _MUTED,
    _RING_VALUES,
    _SMITH_REACTANCES,
    _SMITH_RESISTANCES,
    radius_compressed,
)

if TYPE_CHECKING:
    from ..analysis.result import CheckResult

_BAND = "#e3c46a"
_FONT = "font-family:system-ui,sans-serif"


class _Page:
    """An SVG page of a given size in pixels, its elements as text."""

    def __init__(self, width: float, height: float) -> None:
        self.width, self.height = width, height
        self.parts: list[str] = []
        self.clips: list[str] = []

    def add(self, element: str) -> None:
        self.parts.append(element)

    def text(
        self,
        x: float,
        y: float,
        words: str,
        size: float = 11,
        colour: str = _INK,
        anchor: str = "start",
        css: str = "",
        weight: str = "normal",
        rotate: bool = False,
    ) -> None:
        turn = f' transform="rotate(-90 {x:.1f} {y:.1f})"' if rotate else ""
        klass = f' class="{css}"' if css else ""
        self.add(
            f'<text x="{x:.1f}" y="{y:.1f}" font-size="{size}" fill="{colour}"'
            f' text-anchor="{anchor}" font-weight="{weight}"{turn}{klass}>'
            f"{html.escape(words)}</text>"
        )

    def clip(self, identifier: str, shape: str) -> str:
        self.clips.append(f'<clipPath id="{identifier}">{shape}</clipPath>')
        return f'clip-path="url(#{identifier})"'

    def svg(self, title: str) -> str:
        return (
            f'<svg xmlns="http://www.w3.org/2000/svg" width="{self.width:.0f}"'
            f' height="{self.height:.0f}" viewBox="0 0 {self.width:.0f} {self.height:.0f}"'
            f' style="{_FONT};background:#ffffff">'
            f"<title>{html.escape(title)}</title><defs>{''.join(self.clips)}</defs>"
            + "".join(self.parts)
            + "</svg>"
        )


class _Axes:
    """A rectangle of the page mapping data coordinates to pixels."""

    def __init__(
        self,
        page: _Page,
        box: tuple[float, float, float, float],
        xlim: tuple[float, float],
        ylim: tuple[float, float],
        name: str,
    ) -> None:
        self.page = page
        self.left, self.top, self.width, self.height = box
        self.xlim, self.ylim = xlim, ylim
        self.clip = page.clip(
            name,
            f'<rect x="{self.left:.1f}" y="{self.top:.1f}" width="{self.width:.1f}"'
            f' height="{self.height:.1f}"/>',
        )

    def x(self, value: float) -> float:
        low, high = self.xlim
        return self.left + (value - low) / (high - low) * self.width

    def y(self, value: float) -> float:
        low, high = self.ylim
        return self.top + (high - value) / (high - low) * self.height

    def path(self, xs: np.ndarray, ys: np.ndarray) -> str:
        """Polyline points, broken into pieces where a value is not finite."""
        pieces, current = [], []
        for x, y in zip(
            np.asarray(xs, float).tolist(), np.asarray(ys, float).tolist(), strict=True
        ):
            if math.isfinite(x) and math.isfinite(y):
                current.append(f"{self.x(x):.1f},{self.y(y):.1f}")
            elif current:
                pieces.append(current)
                current = []
        if current:
            pieces.append(current)
        return "".join(f"M{' L'.join(piece)}" for piece in pieces if len(piece) > 1)

    def line(
        self,
        xs: np.ndarray,
        ys: np.ndarray,
        colour: str,
        width: float = 1.2,
        dash: str = "",
        css: str = "",
    ) -> None:
        data = self.path(xs, ys)
        if not data:
            return
        dashes = f' stroke-dasharray="{dash}"' if dash else ""
        klass = f' class="{css}"' if css else ""
        self.page.add(
            f'<path d="{data}" fill="none" stroke="{colour}" stroke-width="{width}"'
            f' stroke-linejoin="round"{dashes} {self.clip}{klass}/>'
        )

    def frame(self) -> None:
        self.page.add(
            f'<rect x="{self.left:.1f}" y="{self.top:.1f}" width="{self.width:.1f}"'
            f' height="{self.height:.1f}" fill="none" stroke="{_MUTED}" stroke-width="0.8"/>'
        )

    def xticks(self, values: Sequence[float], labels: Sequence[str], css: str = "") -> None:
        bottom = self.top + self.height
        for value, label in zip(values, labels, strict=True):
            x = self.x(value)
            if not self.left - 0.5 <= x <= self.left + self.width + 0.5:
                continue
            self.page.add(
                f'<line x1="{x:.1f}" y1="{self.top:.1f}" x2="{x:.1f}" y2="{bottom:.1f}"'
                f' stroke="{_GRID}" stroke-width="0.6"/>'
            )
            self.page.text(x, bottom + 14, label, 10, _INK, "middle", css)

    def yticks(self, values: Sequence[float], labels: Sequence[str], css: str = "") -> None:
        right = self.left + self.width
        for value, label in zip(values, labels, strict=True):
            y = self.y(value)
            if not self.top - 0.5 <= y <= self.top + self.height + 0.5:
                continue
            self.page.add(
                f'<line x1="{self.left:.1f}" y1="{y:.1f}" x2="{right:.1f}" y2="{y:.1f}"'
                f' stroke="{_GRID}" stroke-width="0.6"/>'
            )
            self.page.text(self.left - 5, y + 3.5, label, 10, _INK, "end", css)


def _nice_ticks(low: float, high: float, count: int = 6) -> list[float]:
    """Round tick values (1, 2, 2.5 or 5 times a power of ten) spanning [low, high]."""
    if not high > low:
        return [low]
    raw = (high - low) / count
    power = 10.0 ** math.floor(math.log10(raw))
    step = next(m * power for m in (1.0, 2.0, 2.5, 5.0, 10.0) if m * power >= raw)
    first = math.ceil(low / step - 1e-9) * step
    return [first + i * step for i in range(int((high - first) / step + 1e-9) + 1)]


def _label(value: float) -> str:
    return format_plain(value).replace("-", "\N{MINUS SIGN}")


def _legend(page: _Page, entries: Sequence[tuple[str, str, str]], x: float, y: float) -> None:
    """Legend entries (colour, dash, words) in rows from (x, y), below the data areas; a row
    that would leave the page continues on the next."""
    items = []
    start = x
    for colour, dash, words in entries:
        width = 27 + 6.0 * len(words) + 18
        if x > start and x + width > page.width:
            x, y = start, y + 15
        dashes = f' stroke-dasharray="{dash}"' if dash else ""
        items.append(
            f'<line x1="{x:.1f}" y1="{y - 4:.1f}" x2="{x + 22:.1f}" y2="{y - 4:.1f}"'
            f' stroke="{colour}" stroke-width="1.6"{dashes}/>'
            f'<text x="{x + 27:.1f}" y="{y:.1f}" font-size="10" fill="{_INK}">'
            f"{html.escape(words)}</text>"
        )
        x += width
    page.add(f'<g class="legend">{"".join(items)}</g>')


def _headline(result: CheckResult) -> str:
    count = "N = ?" if result.encirclements is None else f"N = {result.encirclements}"
    return f"{result.verdict} ({count}), Z0 = {format_resistance(result.reference_impedance_ohm)}"


# --- the Nyquist plot ------------------------------------------------------------------------


def nyquist_svg(result: CheckResult) -> str:
    """L = Γd·ΓL with its radius compressed, ticks and rings at the true values of L."""
    page = _Page(470, 500)
    points = radius_compressed(result.loop_gain)
    finite = np.abs(points[np.isfinite(points)])
    reach = max(1.35, 1.08 * float(finite.max()) if finite.size else 1.35)
    axes = _Axes(page, (62, 48, 390, 390), (-reach, reach), (-reach, reach), "nyquist-area")
    values = []
    for value in _RING_VALUES:
        values.append(value)
        if radius_compressed(np.array([value]))[0].real >= reach:
            break
    angle = np.linspace(0.0, 2.0 * np.pi, 241)
    for value in values:
        radius = float(abs(radius_compressed(np.array([value]))[0]))
        style = (
            ("3,3", _GRID, "compressed-ring") if value != 1.0 else ("2,3", _MUTED, "unit-circle")
        )
        axes.line(radius * np.cos(angle), radius * np.sin(angle), style[1], 0.8, style[0], style[2])
    signed = sorted({-v for v in values} | {0.0} | set(values))
    positions = [float(np.sign(v) * abs(radius_compressed(np.array([v]))[0])) for v in signed]
    labels = [_label(v) for v in signed]
    axes.xticks(positions, labels, "compressed-tick")
    axes.yticks(positions, labels, "compressed-tick")
    axes.line(np.array([-reach, reach]), np.array([0.0, 0.0]), _GRID, 0.8)
    axes.line(np.array([0.0, 0.0]), np.array([-reach, reach]), _GRID, 0.8)
    axes.line(points.real, -points.imag, _MUTED, 0.8, "4,3", "mirror")
    axes.line(points.real, points.imag, _INK, 1.5, "", "trace")
    _arrow_heads(axes, points)
    for crossing in result.crossings:
        point = complex(radius_compressed(np.array([crossing.loop_gain]))[0])
        x, y = axes.x(point.real), axes.y(point.imag)
        direction = "cw" if crossing.direction == "clockwise" else "ccw"
        page.add(f'<circle cx="{x:.1f}" cy="{y:.1f}" r="3.2" fill="{_CRITICAL}"/>')
        page.text(
            x + 6,
            y - 7,
            f"{format_frequency(crossing.frequency_hz)} ({direction})",
            10,
            _CRITICAL,
            css="crossing-label",
        )
    for index in (0, -1):
        if np.isfinite(points[index]):
            page.text(
                axes.x(points[index].real) + 4,
                axes.y(points[index].imag) + 11,
                format_frequency(float(result.frequency_hz[index])),
                9,
                _MUTED,
            )
    cx, cy = axes.x(1.0), axes.y(0.0)
    page.add(
        f'<path class="critical-point" d="M{cx - 6:.1f},{cy:.1f} L{cx + 6:.1f},{cy:.1f}'
        f' M{cx:.1f},{cy - 6:.1f} L{cx:.1f},{cy + 6:.1f}" stroke="{_CRITICAL}"'
        ' stroke-width="3"/>'
    )
    axes.frame()
    page.text(
        257,
        468,
        "Re L (radius compressed; ticks and dotted rings at true values)",
        11,
        anchor="middle",
    )
    page.text(18, 243, "Im L (radius compressed)", 11, anchor="middle", rotate=True)
    page.text(257, 18, "Nyquist plot of L = Γd·ΓL", 13, anchor="middle")
    page.text(257, 36, _headline(result), 11, anchor="middle")
    _legend(
        page,
        (
            (_INK, "", "L(f), f > 0"),
            (_MUTED, "4,3", "f < 0"),
            (_MUTED, "2,3", "|L| = 1"),
            (_CRITICAL, "", "critical point +1"),
        ),
        40,
        492,
    )
    return page.svg("Nyquist plot of L")


def _arrow_heads(axes: _Axes, points: np.ndarray, count: int = 6) -> None:
    """Small triangles along the branch, pointing up in frequency, evenly by path length."""
    if points.size < 3 or not np.isfinite(points).all():
        return
    path = np.concatenate(([0.0], np.cumsum(np.abs(np.diff(points)))))
    if path[-1] <= 0:
        return
    span = max(1, points.size // 200)
    targets = path[-1] * (np.arange(count) + 0.5) / count
    for index in np.unique(np.clip(np.searchsorted(path, targets), span, points.size - 1 - span)):
        x0, y0 = axes.x(points[index].real), axes.y(points[index].imag)
        dx = axes.x(points[index + span].real) - axes.x(points[index - span].real)
        dy = axes.y(points[index + span].imag) - axes.y(points[index - span].imag)
        length = math.hypot(dx, dy)
        if length == 0:
            continue
        ux, uy = dx / length, dy / length
        tip = (x0 + 5 * ux, y0 + 5 * uy)
        left = (x0 - 4 * ux - 3.5 * uy, y0 - 4 * uy + 3.5 * ux)
        right = (x0 - 4 * ux + 3.5 * uy, y0 - 4 * uy - 3.5 * ux)
        axes.page.add(
            f'<path d="M{tip[0]:.1f},{tip[1]:.1f} L{left[0]:.1f},{left[1]:.1f}'
            f' L{right[0]:.1f},{right[1]:.1f} Z" fill="{_INK}"/>'
        )


# --- the loop gain against frequency ---------------------------------------------------------


def loop_gain_svg(result: CheckResult) -> str:
    """|L| in dB and arg L in degrees against frequency in GHz, bands shaded."""
    page = _Page(560, 515)
    frequency = result.frequency_hz / 1e9
    xlim = (float(frequency[0]), float(frequency[-1]))
    with np.errstate(divide="ignore"):
        magnitude = 20.0 * np.log10(np.abs(result.loop_gain))
    phase = np.degrees(np.angle(result.loop_gain))
    shown = magnitude[np.isfinite(magnitude)]
    low = min(float(shown.min()) if shown.size else -1.0, -1.0)
    high = max(float(shown.max()) if shown.size else 1.0, 1.0)
    pad = 0.06 * (high - low)
    top = _Axes(page, (62, 48, 470, 175), xlim, (low - pad, high + pad), "gain-area")
    bottom = _Axes(page, (62, 255, 470, 175), xlim, (-190.0, 190.0), "phase-area")
    ticks = _nice_ticks(*xlim)
    for axes in (top, bottom):
        for band in result.bands:
            x0, x1 = axes.x(band.start_hz / 1e9), axes.x(band.stop_hz / 1e9)
            page.add(
                f'<rect class="loop-gain-band" x="{x0:.1f}" y="{axes.top:.1f}"'
                f' width="{max(x1 - x0, 0.5):.1f}" height="{axes.height:.1f}" fill="{_BAND}"'
                ' fill-opacity="0.35"/>'
            )
    top.xticks(ticks, [""] * len(ticks))
    bottom.xticks(ticks, [_label(t) for t in ticks])
    gain_ticks = _nice_ticks(low, high, 5)
    top.yticks(gain_ticks, [_label(t) for t in gain_ticks])
    bottom.yticks([-180.0, -90.0, 0.0, 90.0, 180.0], ["−180", "−90", "0", "90", "180"])
    top.line(np.array(xlim), np.zeros(2), _CRITICAL, 0.9, "2,2")
    bottom.line(np.array(xlim), np.zeros(2), _CRITICAL, 0.9, "2,2")
    top.line(frequency, magnitude, _INK, 1.3, "", "trace")
    wraps = np.flatnonzero(np.abs(np.diff(phase)) > 180.0) + 1
    bottom.line(np.insert(frequency, wraps, np.nan), np.insert(phase, wraps, np.nan), _INK, 1.3)
    for axes in (top, bottom):
        for oscillation in result.oscillation_frequencies_hz:
            x = axes.x(oscillation / 1e9)
            page.add(
                f'<line class="oscillation-frequency" x1="{x:.1f}" y1="{axes.top:.1f}"'
                f' x2="{x:.1f}" y2="{axes.top + axes.height:.1f}" stroke="{_CRITICAL}"'
                ' stroke-width="1.1" stroke-dasharray="5,3"/>'
            )
        axes.frame()
    page.text(18, 135, "|L| (dB)", 11, anchor="middle", rotate=True)
    page.text(18, 342, "arg L (°)", 11, anchor="middle", rotate=True)
    page.text(297, 462, "frequency (GHz)", 11, anchor="middle")
    page.text(297, 18, "Loop gain L = Γd·ΓL", 13, anchor="middle")
    page.text(297, 36, _headline(result), 11, anchor="middle")
    entries = [(_INK, "", "|L|, arg L"), (_CRITICAL, "2,2", "|L| = 1, arg L = 0")]
    entries.append((_BAND, "", "|L| ≥ 1 (shaded)"))
    if result.oscillation_frequencies_hz:
        listed = ", ".join(format_frequency(f) for f in result.oscillation_frequencies_hz)
        entries.append((_CRITICAL, "5,3", f"predicted oscillation {listed}"))
    _legend(page, entries, 40, 490)
    return page.svg("Loop gain against frequency")


# --- the Smith chart -------------------------------------------------------------------------


def smith_svg(result: CheckResult, max_radius: float = 3.0) -> str:
    """ΓL and 1/Γd on a Smith chart in Z0, frequencies marked along both traces."""
    page = _Page(470, 520)
    with np.errstate(divide="ignore", invalid="ignore"):
        inverse = 1.0 / result.gamma_device
    radii = np.abs(np.concatenate([result.gamma_load, inverse]))
    radii = radii[np.isfinite(radii)]
    view = float(np.clip(1.05 * (radii.max() if radii.size else 1.0), 1.05, max_radius))
    size = 400.0
    axes = _Axes(page, (35, 55, size, size), (-view, view), (-view, view), "smith-square")
    cx, cy, unit = axes.x(0.0), axes.y(0.0), size / (2 * view)
    inside = page.clip("smith-unit", f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="{unit:.1f}"/>')
    shown = page.clip("smith-view", f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="{view * unit:.1f}"/>')
    grid = []
    for resistance in _SMITH_RESISTANCES:
        centre, radius = resistance / (1 + resistance), 1 / (1 + resistance)
        grid.append(f'<circle cx="{axes.x(centre):.1f}" cy="{cy:.1f}" r="{radius * unit:.1f}"/>')
    for reactance in _SMITH_REACTANCES:
        for sign in (1.0, -1.0):
            grid.append(
                f'<circle cx="{axes.x(1.0):.1f}" cy="{axes.y(sign / reactance):.1f}"'
                f' r="{unit / reactance:.1f}"/>'
            )
    grid.append(f'<line x1="{axes.x(-1):.1f}" y1="{cy:.1f}" x2="{axes.x(1):.1f}" y2="{cy:.1f}"/>')
    page.add(f'<g fill="none" stroke="{_GRID}" stroke-width="0.7" {inside}>{"".join(grid)}</g>')
    for resistance in (0.0, *_SMITH_RESISTANCES):
        page.text(
            axes.x((resistance - 1) / (resistance + 1)) + 2, cy - 3, _label(resistance), 8, _MUTED
        )
    for ring in range(2, math.floor(view) + 1):
        page.add(
            f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="{ring * unit:.1f}" fill="none"'
            f' stroke="{_GRID}" stroke-dasharray="2,3"/>'
        )
        page.text(cx + 3, axes.y(-ring) - 3, f"|Γ| = {ring}", 8, _MUTED)
    page.add(
        f'<circle cx="{cx:.1f}" cy="{cy:.1f}" r="{unit:.1f}" fill="none" stroke="{_INK}"'
        ' stroke-width="1.6"/>'
    )
    for values, colour, css in (
        (result.gamma_load, _LOAD, "load-trace"),
        (inverse, _DEVICE, "device-trace"),
    ):
        data = axes.path(values.real, values.imag)
        page.add(
            f'<path class="{css}" d="{data}" fill="none" stroke="{colour}" stroke-width="1.5"'
            f" {shown}/>"
        )
        finite = np.flatnonzero(np.isfinite(values))
        if finite.size:
            first, last = values[finite[0]], values[finite[-1]]
            page.add(
                f'<circle cx="{axes.x(first.real):.1f}" cy="{axes.y(first.imag):.1f}" r="3.5"'
                f' fill="{colour}" {shown}/><rect x="{axes.x(last.real) - 3.5:.1f}"'
                f' y="{axes.y(last.imag) - 3.5:.1f}" width="7" height="7" fill="{colour}"'
                f" {shown}/>"
            )
    _smith_marks(page, axes, result, inverse, view)
    closest = result.margins.modulus_margin_frequency_hz
    index = int(np.argmin(np.abs(result.frequency_hz - closest)))
    load, device = result.gamma_load[index], inverse[index]
    if np.isfinite(device):
        page.add(
            f'<path class="closest-approach" d="M{axes.x(load.real):.1f},'
            f'{axes.y(load.imag):.1f} L{axes.x(device.real):.1f},{axes.y(device.imag):.1f}"'
            f' stroke="{_CRITICAL}" stroke-width="1.3" stroke-dasharray="2,2" {shown}/>'
        )
    count = "N = ?" if result.encirclements is None else f"N = {result.encirclements}"
    z0 = format_resistance(result.reference_impedance_ohm)
    page.text(
        235, 18, f"Smith chart in Z0 = {z0}: the loop closes where ΓL = 1/Γd", 13, anchor="middle"
    )
    page.text(235, 36, f"{result.verdict} ({count})", 11, anchor="middle")
    page.text(
        12,
        478,
        "○ lowest frequency, □ highest; dots: the frequencies written beside them",
        9,
        _MUTED,
    )
    _legend(
        page,
        (
            (_LOAD, "", "ΓL (load)"),
            (_DEVICE, "", "1/Γd (device)"),
            (_CRITICAL, "2,2", f"closest to +1: {format_frequency(closest)}"),
        ),
        20,
        505,
    )
    return page.svg("Smith chart of the load and the device")


def _smith_marks(
    page: _Page, axes: _Axes, result: CheckResult, inverse: np.ndarray, view: float
) -> None:
    frequency = result.frequency_hz
    low, high = float(frequency[0]), float(frequency[-1])
    scale = 1e9 if high >= 1e9 else 1e6
    chosen = [
        t * scale for t in _nice_ticks(low / scale, high / scale, 7) if low < t * scale < high
    ]
    for values, colour, offset in (
        (result.gamma_load, _LOAD, (5, -4)),
        (inverse, _DEVICE, (5, 11)),
    ):
        for marked in chosen:
            point = complex(
                np.interp(marked, frequency, values.real), np.interp(marked, frequency, values.imag)
            )
            if not (np.isfinite(point) and abs(point) <= view):
                continue
            x, y = axes.x(point.real), axes.y(point.imag)
            page.add(
                f'<circle class="smith-frequency-mark" cx="{x:.1f}" cy="{y:.1f}" r="2.6"'
                f' fill="{colour}"/>'
            )
            page.text(
                x + offset[0],
                y + offset[1],
                format_frequency(marked),
                9,
                colour,
                css="smith-frequency-label",
            )
