"""The oscillator figure: device lines against the load locus, operating points marked.

Three panels. Left, the reflection plane (a Smith chart in Z0): the load locus ΓL(f) and the
device line 1/Γd(A) at each operating frequency; they meet where Γd·ΓL = 1. Middle, the
immittance plane of the chosen form: YL(f) against −Yd(A) (or ZL against −Zd). Right, the
loop's real part along the amplitude, whose zeros are the operating points. Device lines carry
arrowheads towards increasing amplitude and amplitude labels; stable points are filled dots,
unstable ones hollow squares, each labelled with its amplitude, so two points at one frequency
(which meet the load locus at the same spot) stay apart. Rendering only: everything drawn is
in the result already. Figures are headless (:func:`oneport.rendering.figures.new_figure`).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING, Any, cast

import numpy as np

from ..errors import InputError
from ..products.oscillator.result import OperatingPoint, OscillatorResult
from ..products.oscillator.wording import format_amount, quantity_words
from ..units import format_frequency
from .figures import new_figure

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

_LOAD = "tab:blue"
_DEVICE = "tab:red"
#: Label offsets (points) for operating points drawn on one spot, used in turn.
_OFFSETS = ((10, 10), (10, -20), (-95, 10), (-95, -20))
_MAX_VIEW_RADIUS = 3.0


def plot_oscillator(result: OscillatorResult, ax: Axes | Sequence[Axes] | None = None) -> Figure:
    """Draw the result and return the figure.

    Parameters
    ----------
    result : OscillatorResult
    ax : matplotlib Axes, three Axes, or None
        None: a new figure with the three panels. One ``Axes``: the loop's real part along the
        amplitude only. Three ``Axes``: the reflection plane, the immittance plane and the real
        part along the amplitude, in that order.

    Returns
    -------
    matplotlib.figure.Figure
    """
    if ax is None:
        figure = new_figure((18.0, 6.4))
        smith, plane, amplitude = figure.subplots(1, 3)
        panels: list[Any] = [smith, plane, amplitude]
    elif isinstance(ax, Sequence):
        panels = list(ax)
        if len(panels) != 3:
            raise InputError(f"ax: give one Axes or three, got {len(panels)} Axes")
        figure = cast("Figure", panels[0].get_figure(root=True))
    else:
        panels = [ax]
        figure = cast("Figure", ax.get_figure(root=True))
    if len(panels) == 3:
        _smith_grid(panels[0], _view_radius(result))
        _reflection(panels[0], result)
        _immittance(panels[1], result)
    _along_amplitude(panels[-1], result)
    if ax is None:
        figure.suptitle(f"Oscillator operating points: {result.verdict.replace('-', ' ')}")
        figure.legend(
            handles=_legend_handles(result), loc="outside lower center", ncol=4, fontsize=8
        )
    return figure


def _legend_handles(result: OscillatorResult) -> list[Any]:
    from matplotlib.lines import Line2D

    handles = [
        Line2D([], [], color=_LOAD, label="load, along frequency"),
        Line2D([], [], color=_DEVICE, label="device, along amplitude (arrows: increasing)"),
    ]
    for stable, label in ((True, "stable operating point"), (False, "unstable operating point")):
        if any(_stable(point) == stable for point in result.operating_points):
            handles.append(Line2D([], [], linestyle="none", **_marker_style(stable), label=label))
    return handles


def _view_radius(result: OscillatorResult) -> float:
    values = [np.abs(result.load_gamma)] + [
        np.abs(t.inverse_gamma_device) for t in result.device_traces
    ]
    finite = np.concatenate(values)
    finite = finite[np.isfinite(finite)]
    largest = float(finite.max()) if finite.size else 1.0
    return min(max(1.1, 1.05 * largest), _MAX_VIEW_RADIUS)


def _smith_grid(axes: Any, view: float) -> None:
    """Unit circle, constant-resistance circles and constant-reactance arcs, drawn faintly."""
    theta = np.linspace(0, 2 * np.pi, 361)
    axes.plot(np.cos(theta), np.sin(theta), color="0.4", linewidth=0.8)
    style = {"color": "0.85", "linewidth": 0.6, "zorder": 0}
    for r in (0.2, 0.5, 1.0, 2.0, 5.0):
        centre, radius = r / (1 + r), 1 / (1 + r)
        axes.plot(centre + radius * np.cos(theta), radius * np.sin(theta), **style)
    for x in (0.2, 0.5, 1.0, 2.0, 5.0):
        for sign in (1, -1):
            z = np.linspace(0, 50, 2000) + 1j * sign * x
            gamma = (z - 1) / (z + 1)
            axes.plot(gamma.real, gamma.imag, **style)
    axes.axhline(0, **style)
    axes.set_aspect("equal")
    axes.set_xlim(-view, view)
    axes.set_ylim(-view, view)


def _reflection(axes: Any, result: OscillatorResult) -> None:
    axes.plot(result.load_gamma.real, result.load_gamma.imag, color=_LOAD)
    _label_ends(axes, result.load_frequency_hz, result.load_gamma)
    for trace in result.device_traces:
        _device_line(axes, trace.inverse_gamma_device, trace.amplitude, result)
    _points(axes, result, [p.gamma_load for p in result.operating_points])
    z0 = f"{result.reference_impedance_ohm:g}"
    axes.set_title(f"Reflection plane, Z0 = {z0} ohm: load and 1/(device reflection)", fontsize=10)
    axes.set_xlabel("real part")
    axes.set_ylabel("imaginary part")


def _immittance(axes: Any, result: OscillatorResult) -> None:
    admittance = result.form == "admittance"
    scale, unit = (1e3, "mS") if admittance else (1.0, "ohm")
    name = "admittance" if admittance else "impedance"
    load = result.load_immittance * scale
    axes.plot(load.real, load.imag, color=_LOAD)
    _label_ends(axes, result.load_frequency_hz, load)
    for trace in result.device_traces:
        _device_line(axes, trace.negative_device_immittance * scale, trace.amplitude, result)
    z0 = result.reference_impedance_ohm
    values = []
    for point in result.operating_points:
        gamma = point.gamma_load
        value = (1 - gamma) / (z0 * (1 + gamma)) if admittance else z0 * (1 + gamma) / (1 - gamma)
        values.append(value * scale)
    _points(axes, result, values)
    axes.axhline(0, color="0.85", linewidth=0.6, zorder=0)
    axes.axvline(0, color="0.85", linewidth=0.6, zorder=0)
    axes.set_title(f"{name.capitalize()} plane: load and the device's negative {name}", fontsize=10)
    part = ("conductance", "susceptance") if admittance else ("resistance", "reactance")
    axes.set_xlabel(f"{part[0]} ({unit})")
    axes.set_ylabel(f"{part[1]} ({unit})")
    # The device lines and the points mark where the answer lies; the load locus runs far off
    # towards DC and infinity (a shunt inductor's susceptance), so it does not set the view.
    device = [t.negative_device_immittance * scale for t in result.device_traces]
    finite = np.concatenate([*(d[np.isfinite(d)] for d in device), np.array(values, complex)])
    if finite.size == 0:
        finite = load[np.isfinite(load)]
    if finite.size:
        _limits(axes, finite)


def _along_amplitude(axes: Any, result: OscillatorResult) -> None:
    """The loop's real part against the form's amplitude at each trace frequency: zeros are the
    operating points."""
    admittance = result.form == "admittance"
    scale, unit = (1e3, "mS") if admittance else (1.0, "ohm")
    amplitude_unit = "mV" if admittance else "mA"
    part = "conductance" if admittance else "resistance"
    for trace in result.device_traces:
        axes.plot(
            trace.amplitude * 1e3,
            trace.total_immittance.real * scale,
            label=f"at {format_frequency(trace.frequency_hz)}",
        )
    _points(axes, result, [complex(p.amplitude * 1e3, 0.0) for p in result.operating_points])
    axes.axhline(0, color="0.6", linewidth=0.8, zorder=0)
    axes.set_title(f"Loop {part} along the amplitude (zero: operating point)", fontsize=10)
    axes.set_xlabel(f"{quantity_words(result.amplitude_quantity)} ({amplitude_unit})")
    axes.set_ylabel(f"loop {part}, device + load ({unit})")
    if result.device_traces:
        axes.legend(loc="best", fontsize=8, title="device line", title_fontsize=8)


def _device_line(axes: Any, values: np.ndarray, amplitude: np.ndarray, result: Any) -> None:
    """One device line, with arrowheads towards increasing amplitude and amplitude labels,
    both spaced evenly along the drawn length (levels are often spaced evenly in dB)."""
    finite = np.isfinite(values)
    points, amplitudes = values[finite], amplitude[finite]
    axes.plot(points.real, points.imag, color=_DEVICE, linewidth=1.0)
    if points.size < 6:
        return
    length = np.concatenate([[0.0], np.cumsum(np.abs(np.diff(points)))])
    if not length[-1] > 0:
        return

    def at(fraction: float) -> int:
        return int(min(np.searchsorted(length, fraction * length[-1]), points.size - 2))

    for fraction in (0.25, 0.5, 0.75):
        index = at(fraction)
        axes.annotate(
            "",
            xy=(points[index + 1].real, points[index + 1].imag),
            xytext=(points[index].real, points[index].imag),
            arrowprops={"arrowstyle": "-|>", "color": _DEVICE, "mutation_scale": 12},
        )
    for index in sorted({0, at(1 / 3), at(2 / 3), points.size - 1}):
        axes.plot([points[index].real], [points[index].imag], ".", color=_DEVICE, markersize=4)
        axes.annotate(
            format_amount(float(amplitudes[index]), result.amplitude_quantity),
            (points[index].real, points[index].imag),
            xytext=(4, -10),
            textcoords="offset points",
            fontsize=7,
            color=_DEVICE,
        )


def _points(axes: Any, result: OscillatorResult, values: Sequence[complex]) -> None:
    """Mark every operating point and label it with its amplitude and stability; points on one
    spot get their labels in turn around it."""
    placed: list[complex] = []
    span = max(np.ptp(axes.get_xlim()), np.ptp(axes.get_ylim())) or 1.0
    for point, value in zip(result.operating_points, values, strict=True):
        axes.plot([value.real], [value.imag], linestyle="none", **_marker_style(_stable(point)))
        turn = sum(1 for other in placed if abs(other - value) < 0.03 * span)
        placed.append(value)
        axes.annotate(
            f"{format_amount(point.amplitude, point.amplitude_quantity)}, {_state(point)}",
            (value.real, value.imag),
            xytext=_OFFSETS[turn % len(_OFFSETS)],
            textcoords="offset points",
            fontsize=8,
            arrowprops={"arrowstyle": "-", "color": "0.4", "linewidth": 0.6},
        )


def _stable(point: OperatingPoint) -> bool:
    return point.kurokawa_stable and not point.marginal


def _state(point: OperatingPoint) -> str:
    return "marginal" if point.marginal else "stable" if point.kurokawa_stable else "unstable"


def _marker_style(stable: bool) -> dict[str, Any]:
    if stable:
        return {"marker": "o", "markersize": 8, "color": "black", "markerfacecolor": "black"}
    return {
        "marker": "s",
        "markersize": 11,
        "color": "black",
        "markerfacecolor": "none",
        "markeredgewidth": 1.4,
    }


def _limits(axes: Any, values: np.ndarray) -> None:
    """Robust axis limits: the 2nd to 98th percentile, so a pole does not flatten the plot,
    with room around them and never narrower in one direction than a fifth of the other."""
    spans = []
    for part in (values.real, values.imag):
        low, high = np.percentile(part, [2, 98])
        spans.append((float(low), float(high)))
    widest = max(high - low for low, high in spans) or 1.0
    for (low, high), setter in zip(spans, (axes.set_xlim, axes.set_ylim), strict=True):
        margin = 0.15 * max(high - low, 0.2 * widest)
        setter(low - margin, high + margin)


def _label_ends(axes: Any, frequency_hz: np.ndarray, values: np.ndarray) -> None:
    for index in (0, -1):
        if np.isfinite(values[index]):
            axes.annotate(
                format_frequency(frequency_hz[index]),
                (values[index].real, values[index].imag),
                fontsize=7,
                color=_LOAD,
            )
