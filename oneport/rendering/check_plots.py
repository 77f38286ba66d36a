"""Pictures of a check: the Nyquist plot of L, the loop gain against frequency, a Smith chart.

Rendering only: every function draws what a :class:`~oneport.analysis.result.CheckResult` holds
(arrays, crossings, bands, predicted frequencies) and computes no analysis. Frequencies are shown in
GHz, |L| in dB and phases in degrees here and nowhere inside the package.

matplotlib is imported inside the functions, never when ``oneport`` is imported. Figures are
built as :class:`matplotlib.figure.Figure` objects without ``pyplot``, so they need no display
and no backend is ever selected (an interactive session keeps its own).

Artists that tests and callers may look for carry a ``gid``: ``"critical-point"`` (the +1
marker), ``"frequency-arrow"``, ``"crossing-label"``, ``"unit-circle"``, ``"loop-gain-band"``
(shaded |L| ≥ 1 bands), ``"oscillation-frequency"``, ``"smith-boundary"`` (|Γ| = 1),
``"load-trace"``, ``"device-trace"``, ``"smith-frequency-mark"`` and ``"smith-frequency-label"``
(round frequencies along both Smith traces), ``"compressed-ring"``, ``"compressed-ring-label"``
and ``"compressed-tick"`` (the true |L| scale of a compressed Nyquist plot), and ``"legend"``
(placed outside the data area, so it never covers a trace).
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from ..units import format_frequency, format_plain, format_resistance
from .figures import figure_bytes, image_target, new_figure
from .files import write_atomically

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from ..analysis.result import CheckResult
    from ..analysis.small_gain import BoundResult

# A neutral palette of our own: ink for the loop, muted warm and cool tones for the rest.
_INK = "#26323d"
_LOAD = "#2f7f86"
_DEVICE = "#a3502d"
_CRITICAL = "#c0262d"
_BAND = "#e3c46a"
_GRID = "#cfd3d6"
_MUTED = "#8b949a"
_GIGAHERTZ = 1e9
_ARROWS = 6
_SMITH_RESISTANCES = (0.2, 0.5, 1.0, 2.0, 5.0)
_SMITH_REACTANCES = (0.2, 0.5, 1.0, 2.0, 5.0)
# Fixed margins (fractions of the figure): room for the legends outside the data areas, and
# several times quicker to draw than matplotlib's constrained layout.
_NYQUIST_MARGINS = {"left": 0.14, "right": 0.97, "top": 0.9, "bottom": 0.2}
_SMITH_MARGINS = {"left": 0.02, "right": 0.98, "top": 0.9, "bottom": 0.12}
_LOOP_GAIN_MARGINS = {"left": 0.1, "right": 0.7, "top": 0.9, "bottom": 0.09, "hspace": 0.15}
_BOUND_MARGINS = {"left": 0.11, "right": 0.97, "top": 0.91, "bottom": 0.3}
_QUICK_LOOK_MARGINS = {
    "left": 0.06,
    "right": 0.79,
    "top": 0.9,
    "bottom": 0.19,
    "wspace": 0.22,
    "hspace": 0.15,
}


def radius_compressed(values: np.ndarray) -> np.ndarray:
    """Map complex points to r' = log10(1 + r) / log10(2), keeping their angle.

    The mapping is monotonic, sends 0 to 0 and keeps the unit circle (and so the critical point
    +1) where it is, while a loop gain of 100 lands at radius 6.7 instead of 100: large loops
    and the neighbourhood of +1 fit one picture.

    Parameters
    ----------
    values : array_like of complex

    Returns
    -------
    ndarray of complex
        Same angles, compressed radii.

    Examples
    --------
    >>> points = radius_compressed(np.array([1.0, -1j, 3.0, 100.0]))
    >>> np.round(np.abs(points), 3).tolist(), round(float(np.angle(points[1])), 3)
    ([1.0, 1.0, 2.0, 6.658], -1.571)
    """
    values = np.asarray(values, dtype=complex)
    radius = np.abs(values)
    scaled = np.log10(1.0 + radius) / np.log10(2.0)
    return scaled * np.exp(1j * np.angle(values))


def plot_nyquist(
    result: CheckResult, ax: Axes | None = None, compress_radius: bool = False
) -> Figure:
    """Draw L(f) = Γd·ΓL in the complex plane around the critical point +1.

    The measured branch (increasing frequency shown by arrows) is drawn solid, its mirror image
    for negative frequencies thin and dashed; the unit circle is dashed; each crossing of the
    real axis beyond +1 is marked and labelled with its frequency and direction.

    Parameters
    ----------
    result : CheckResult
    ax : matplotlib Axes, optional
        Where to draw; a new figure is made when omitted.
    compress_radius : bool
        Plot radii as log10(1 + r) / log10(2) (see :func:`radius_compressed`): |L| = 1 and +1 stay
        fixed, large loops shrink.

    Returns
    -------
    matplotlib.figure.Figure
        The figure drawn into (``ax.figure`` when ``ax`` was given).
    """
    figure, ax = _target(ax, (6.4, 6.9), _NYQUIST_MARGINS)
    mapping = _radius_mapping(compress_radius)
    points = mapping(result.loop_gain)
    mirror = np.conj(points)
    ax.plot(mirror.real, mirror.imag, color=_MUTED, linewidth=0.8, linestyle="--", label="f < 0")
    ax.plot(points.real, points.imag, color=_INK, linewidth=1.4, label="L(f), f > 0")
    _frequency_arrows(ax, points)
    _unit_circle(ax)
    ax.axhline(0.0, color=_GRID, linewidth=0.8, zorder=0)
    ax.axvline(0.0, color=_GRID, linewidth=0.8, zorder=0)
    _crossing_labels(ax, result, mapping)
    _edge_labels(ax, result, points)
    ax.plot(
        [1.0],
        [0.0],
        linestyle="none",
        marker="P",
        markersize=11,
        color=_CRITICAL,
        markeredgecolor="white",
        zorder=5,
        gid="critical-point",
        label="critical point +1",
    )
    ax.set_aspect("equal", adjustable="datalim")
    if compress_radius:
        _compressed_scale(ax, result.loop_gain)
        ax.set_xlabel("Re L (radius compressed; ticks and dotted rings at true values)")
        ax.set_ylabel("Im L (radius compressed)")
    else:
        ax.set_xlabel("Re L")
        ax.set_ylabel("Im L")
    _legend_below(ax, columns=2)
    ax.set_title(f"Nyquist plot of L = Γd·ΓL\n{_headline(result)}", fontsize="medium")
    return figure


def plot_loop_gain(
    result: CheckResult,
    ax: Axes | Sequence[Axes] | None = None,
    log_frequency: bool = False,
) -> Figure:
    """Draw |L| in dB and arg L in degrees against frequency (GHz), one above the other.

    Bands where |L| ≥ 1 are shaded in both panels (their edges are the band edges in GHz);
    predicted oscillation frequencies are vertical lines.

    Parameters
    ----------
    result : CheckResult
    ax : matplotlib Axes or pair of Axes, optional
        A pair ``(magnitude_axes, phase_axes)`` is used as given; a single Axes holds the
        magnitude and gets the phase panel appended below it; a new figure when omitted.
    log_frequency : bool
        Logarithmic frequency axis.

    Returns
    -------
    matplotlib.figure.Figure
    """
    magnitude_ax, phase_ax = _stacked_axes(ax)
    frequency_ghz = result.frequency_hz / _GIGAHERTZ
    with np.errstate(divide="ignore"):
        magnitude_db = 20.0 * np.log10(np.abs(result.loop_gain))
    phase_deg = np.degrees(np.angle(result.loop_gain))
    magnitude_ax.plot(frequency_ghz, magnitude_db, color=_INK, linewidth=1.3, label="|L|")
    magnitude_ax.axhline(0.0, color=_CRITICAL, linewidth=0.9, linestyle=":", label="|L| = 1")
    phase_x, phase_y = _break_phase_wraps(frequency_ghz, phase_deg)
    phase_ax.plot(phase_x, phase_y, color=_INK, linewidth=1.3, label="arg L")
    phase_ax.axhline(0.0, color=_CRITICAL, linewidth=0.9, linestyle=":")
    for panel in (magnitude_ax, phase_ax):
        _shade_bands(panel, result, label=panel is magnitude_ax)
        _oscillation_lines(panel, result, label=panel is magnitude_ax)
        panel.grid(True, color=_GRID, linewidth=0.6)
        if log_frequency:
            panel.set_xscale("log")
    phase_ax.set_ylim(-185.0, 185.0)
    phase_ax.set_yticks([-180, -90, 0, 90, 180])
    magnitude_ax.set_ylabel("|L| (dB)")
    phase_ax.set_ylabel("arg L (deg)")
    phase_ax.set_xlabel("frequency (GHz)")
    _legend_beside(magnitude_ax)
    magnitude_ax.set_title(f"Loop gain L = Γd·ΓL\n{_headline(result)}", fontsize="medium")
    return magnitude_ax.figure  # type: ignore[return-value]


def plot_smith(result: CheckResult, ax: Axes | None = None, max_radius: float = 3.0) -> Figure:
    """A Smith chart with the load's ΓL and the device's 1/Γd over frequency.

    The loop closes (L = 1) where ΓL = 1/Γd, so the designer sees where and how close the two
    traces meet; the dotted segment joins them at the closest approach to +1. 1/Γd of a
    negative-resistance device lies outside the unit circle: the view extends to the largest
    radius either trace reaches, at most ``max_radius``, and the |Γ| = 1 boundary is drawn bold.

    Parameters
    ----------
    result : CheckResult
    ax : matplotlib Axes, optional
    max_radius : float
        Largest |Γ| shown (traces beyond it are clipped), at least 1.

    Returns
    -------
    matplotlib.figure.Figure
    """
    figure, ax = _target(ax, (6.4, 7.0), _SMITH_MARGINS)
    with np.errstate(divide="ignore", invalid="ignore"):
        device_inverse = 1.0 / result.gamma_device
    view = _smith_view_radius(result.gamma_load, device_inverse, max(1.0, max_radius))
    _smith_grid(ax, view)
    view_clip = _circle_patch(view, fill=False, linewidth=0.0)
    ax.add_patch(view_clip)
    for values, color, label, gid in (
        (result.gamma_load, _LOAD, "ΓL (load)", "load-trace"),
        (device_inverse, _DEVICE, "1/Γd (device)", "device-trace"),
    ):
        finite = np.where(np.isfinite(values), values, np.nan)
        (line,) = ax.plot(finite.real, finite.imag, color=color, linewidth=1.5, label=label)
        line.set_gid(gid)
        line.set_clip_path(view_clip)
        _smith_end_markers(ax, finite, color, view_clip)
    _smith_closest_approach(ax, result, device_inverse, view_clip)
    _smith_frequency_marks(ax, result, device_inverse, view)
    ax.text(
        0.0,
        0.0,
        "○ lowest frequency, □ highest; dots: the frequencies written beside them",
        transform=ax.transAxes,
        fontsize="x-small",
        color=_MUTED,
    )
    ax.set_xlim(-1.05 * view, 1.05 * view)
    ax.set_ylim(-1.05 * view, 1.05 * view)
    ax.set_aspect("equal")
    ax.set_axis_off()
    _legend_below(ax, columns=3)
    count = "N = ?" if result.encirclements is None else f"N = {result.encirclements}"
    ax.set_title(
        f"Smith chart in Z0 = {format_resistance(result.reference_impedance_ohm)}: the loop"
        f" closes where ΓL = 1/Γd\n{result.verdict} ({count})",
        fontsize="medium",
    )
    return figure


def save_plots(result: CheckResult, path: str | Path) -> Path:
    """Write the quick look (Nyquist and loop-gain plots in one figure) to ``path``.

    Parameters
    ----------
    result : CheckResult
    path : str or Path
        Ends in ``.png`` or ``.svg``; the format follows the suffix. The file is written
        whole or not at all (a temporary file renamed into place).

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        For another suffix, or when the file cannot be written.
    """
    target, image_format = image_target(path)
    write_atomically(target, figure_bytes(quick_look_figure(result), image_format))
    return target


def quick_look_figure(result: CheckResult) -> Figure:
    """One figure: the (radius-compressed) Nyquist plot beside the loop-gain panels."""
    figure = new_figure((13.0, 6.6), _QUICK_LOOK_MARGINS)
    grid = figure.add_gridspec(2, 2, width_ratios=(1.0, 1.15), **_QUICK_LOOK_MARGINS)
    plot_nyquist(result, figure.add_subplot(grid[:, 0]), compress_radius=True)
    magnitude_ax = figure.add_subplot(grid[0, 1])
    phase_ax = figure.add_subplot(grid[1, 1], sharex=magnitude_ax)
    plot_loop_gain(result, (magnitude_ax, phase_ax))
    return figure


# --- figure plumbing -----------------------------------------------------------------------


def _target(
    ax: Axes | None, size: tuple[float, float], margins: dict[str, float]
) -> tuple[Figure, Axes]:
    if ax is None:
        figure = new_figure(size, margins)
        return figure, figure.add_subplot()
    return ax.figure, ax  # type: ignore[return-value]


def _stacked_axes(ax: Axes | Sequence[Axes] | None) -> tuple[Axes, Axes]:
    if ax is None:
        figure = new_figure((8.8, 6.0), _LOOP_GAIN_MARGINS)
        magnitude_ax = figure.add_subplot(2, 1, 1)
        return magnitude_ax, figure.add_subplot(2, 1, 2, sharex=magnitude_ax)
    if isinstance(ax, Sequence):
        if len(ax) != 2:
            raise InputError(f"ax: give one Axes or a pair of Axes, got {len(ax)} Axes")
        return ax[0], ax[1]
    from mpl_toolkits.axes_grid1 import make_axes_locatable

    phase_ax = make_axes_locatable(ax).append_axes("bottom", size="100%", pad=0.5, sharex=ax)
    return ax, phase_ax


def _headline(result: CheckResult) -> str:
    count = "N = ?" if result.encirclements is None else f"N = {result.encirclements}"
    return f"{result.verdict} ({count}), Z0 = {format_resistance(result.reference_impedance_ohm)}"


def _legend_below(ax: Axes, columns: int) -> None:
    """The legend under the axes, outside the data area, so it never covers a trace."""
    legend = ax.legend(
        loc="upper center",
        bbox_to_anchor=(0.5, -0.1),
        ncols=columns,
        fontsize="small",
        frameon=False,
    )
    legend.set_gid("legend")


def _legend_beside(ax: Axes) -> None:
    """The legend right of the axes, outside the data area."""
    legend = ax.legend(
        loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize="small", frameon=False
    )
    legend.set_gid("legend")


def _radius_mapping(compressed: bool) -> Any:
    if compressed:
        return radius_compressed
    return lambda values: np.asarray(values, dtype=complex)


# --- Nyquist pieces --------------------------------------------------------------------------


def _frequency_arrows(ax: Axes, points: np.ndarray) -> None:
    """Arrow heads along the branch, evenly spaced by path length, pointing up in frequency."""
    finite = np.isfinite(points)
    if points.size < 3 or not finite.all():
        return
    path = np.concatenate(([0.0], np.cumsum(np.abs(np.diff(points)))))
    if path[-1] <= 0.0:
        return
    targets = path[-1] * (np.arange(_ARROWS) + 0.5) / _ARROWS
    # Each arrow spans a few samples either side, so scatter in the data does not turn it.
    span = max(1, points.size // 200)
    indices = np.unique(np.clip(np.searchsorted(path, targets), span, points.size - 1 - span))
    extent = float(np.ptp(points.real) + np.ptp(points.imag)) or 1.0
    for index in indices:
        direction = points[index + span] - points[index - span]
        if direction == 0:
            continue
        # A head with a vanishing shaft: a long chord across a sparse stretch would mislead.
        stop = points[index]
        start = stop - 1e-4 * extent * direction / abs(direction)
        arrow = ax.annotate(
            "",
            xy=(stop.real, stop.imag),
            xytext=(start.real, start.imag),
            arrowprops={
                "arrowstyle": "-|>",
                "color": _INK,
                "shrinkA": 0.0,
                "shrinkB": 0.0,
                "mutation_scale": 14,
            },
        )
        arrow.set_gid("frequency-arrow")


def _unit_circle(ax: Axes) -> None:
    angle = np.linspace(0.0, 2.0 * np.pi, 361)
    (circle,) = ax.plot(
        np.cos(angle), np.sin(angle), color=_MUTED, linewidth=0.9, linestyle=":", label="|L| = 1"
    )
    circle.set_gid("unit-circle")


#: True |L| of the rings and ticks on a compressed Nyquist plot (1-2-5 steps).
_RING_VALUES = (0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0)


def _compressed_scale(ax: Axes, loop_gain: np.ndarray) -> None:
    """Label a compressed plot honestly: dotted rings at true |L| = 0.5, 2, 5, … (gid
    ``"compressed-ring"``; |L| = 1 is the unit circle), and the axes' ticks placed where true
    Re L and Im L take the values 0, ±0.5, ±1, ±2, ±5, … on the axes, labelled with them (gid
    ``"compressed-tick"``). A tick labelled −2 then sits where L = −2 is, not at Re L = −2 of
    the compressed plane."""
    finite = np.abs(loop_gain[np.isfinite(loop_gain)])
    largest = float(finite.max()) if finite.size else 1.0
    values = []
    for value in _RING_VALUES:
        values.append(value)
        if value >= max(2.0, largest):
            break
    angle = np.linspace(0.0, 2.0 * np.pi, 361)
    for value in values:
        if value == 1.0:  # the unit circle, drawn already
            continue
        radius = float(np.abs(radius_compressed(np.array([value]))[0]))
        (ring,) = ax.plot(
            radius * np.cos(angle),
            radius * np.sin(angle),
            color=_GRID,
            linewidth=0.7,
            linestyle=":",
            zorder=0,
        )
        ring.set_gid("compressed-ring")
    signed = sorted({-v for v in values} | {0.0} | set(values))
    positions = [float(np.sign(v) * np.abs(radius_compressed(np.array([v]))[0])) for v in signed]
    labels = [format_plain(v).replace("-", "\N{MINUS SIGN}") for v in signed]
    for axis in (ax.xaxis, ax.yaxis):
        axis.set_ticks(positions, labels=labels)
        for label in axis.get_ticklabels():
            label.set_gid("compressed-tick")
        axis.set_tick_params(labelsize="small")


def _edge_labels(ax: Axes, result: CheckResult, points: np.ndarray) -> None:
    """The lowest and highest analysed frequencies written beside the branch's two ends."""
    for index in (0, -1):
        if not np.isfinite(points[index]):
            continue
        label = ax.annotate(
            format_frequency(float(result.frequency_hz[index])),
            xy=(points[index].real, points[index].imag),
            xytext=(4, -10),
            textcoords="offset points",
            fontsize="x-small",
            color=_MUTED,
        )
        label.set_gid("edge-label")


def _crossing_labels(ax: Axes, result: CheckResult, mapping: Any) -> None:
    for crossing in result.crossings:
        point = complex(mapping(np.array([crossing.loop_gain]))[0])
        ax.plot([point.real], [point.imag], marker="o", markersize=5, color=_CRITICAL)
        direction = "cw" if crossing.direction == "clockwise" else "ccw"
        doubt = ", within noise" if crossing.within_noise else ""
        label = ax.annotate(
            f"{crossing.frequency_hz / _GIGAHERTZ:.4g} GHz ({direction}{doubt})",
            xy=(point.real, point.imag),
            xytext=(6, 8),
            textcoords="offset points",
            fontsize="small",
            color=_CRITICAL,
        )
        label.set_gid("crossing-label")


# --- loop-gain pieces ------------------------------------------------------------------------


def _break_phase_wraps(x: np.ndarray, phase_deg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Insert gaps where the wrapped phase jumps by more than 180°, so no vertical lines appear."""
    jumps = np.flatnonzero(np.abs(np.diff(phase_deg)) > 180.0) + 1
    return np.insert(x, jumps, np.nan), np.insert(phase_deg, jumps, np.nan)


def _shade_bands(ax: Axes, result: CheckResult, label: bool) -> None:
    for number, band in enumerate(result.bands):
        patch = ax.axvspan(
            band.start_hz / _GIGAHERTZ,
            band.stop_hz / _GIGAHERTZ,
            color=_BAND,
            alpha=0.35,
            linewidth=0.0,
            zorder=0,
            label="|L| ≥ 1" if label and number == 0 else None,
        )
        patch.set_gid("loop-gain-band")


def _oscillation_lines(ax: Axes, result: CheckResult, label: bool) -> None:
    for frequency_hz in result.oscillation_frequencies_hz:
        line = ax.axvline(
            frequency_hz / _GIGAHERTZ,
            color=_CRITICAL,
            linewidth=1.1,
            linestyle="--",
            label=f"predicted oscillation {format_frequency(frequency_hz)}" if label else None,
        )
        line.set_gid("oscillation-frequency")


# --- Smith chart pieces ----------------------------------------------------------------------


def _circle_patch(radius: float, center: tuple[float, float] = (0.0, 0.0), **style: Any) -> Any:
    from matplotlib.patches import Circle

    return Circle(center, radius, **style)


def _smith_view_radius(load: np.ndarray, device_inverse: np.ndarray, cap: float) -> float:
    radii = np.abs(np.concatenate([load, device_inverse]))
    finite = radii[np.isfinite(radii)]
    largest = float(finite.max()) if finite.size else 1.0
    return float(np.clip(1.05 * largest, 1.05, cap))


def _smith_grid(ax: Axes, view: float) -> None:
    """Constant-resistance and constant-reactance circles inside |Γ| ≤ 1, rings outside it."""
    clip = _circle_patch(1.0, fill=False, linewidth=0.0)
    ax.add_patch(clip)
    grid_style: dict[str, Any] = {"fill": False, "edgecolor": _GRID, "linewidth": 0.7, "zorder": 0}
    for resistance in _SMITH_RESISTANCES:
        center = (resistance / (1.0 + resistance), 0.0)
        ax.add_patch(_circle_patch(1.0 / (1.0 + resistance), center, **grid_style))
    for reactance in _SMITH_REACTANCES:
        for sign in (1.0, -1.0):
            arc = _circle_patch(1.0 / reactance, (1.0, sign / reactance), **grid_style)
            ax.add_patch(arc)
            arc.set_clip_path(clip)
    ax.plot([-1.0, 1.0], [0.0, 0.0], color=_GRID, linewidth=0.7, zorder=0)
    for resistance in (0.0, *_SMITH_RESISTANCES):
        x = (resistance - 1.0) / (resistance + 1.0)
        ax.annotate(
            f"{resistance:g}",
            (x, 0.0),
            xytext=(2, 2),
            textcoords="offset points",
            fontsize="x-small",
            color=_MUTED,
        )
    for ring in range(2, int(np.floor(view)) + 1):
        ax.add_patch(_circle_patch(float(ring), linestyle=":", **grid_style))
        ax.annotate(
            f"|Γ| = {ring}",
            (0.0, -ring),
            xytext=(2, 2),
            textcoords="offset points",
            fontsize="x-small",
            color=_MUTED,
        )
    boundary = _circle_patch(1.0, fill=False, edgecolor=_INK, linewidth=1.6, zorder=1)
    boundary.set_gid("smith-boundary")
    ax.add_patch(boundary)


def _smith_end_markers(ax: Axes, values: np.ndarray, color: str, clip: Any) -> None:
    finite = np.flatnonzero(np.isfinite(values))
    if finite.size == 0:
        return
    for index, marker in ((finite[0], "o"), (finite[-1], "s")):
        (dot,) = ax.plot(
            [values[index].real],
            [values[index].imag],
            marker=marker,
            markersize=5,
            color=color,
            linestyle="none",
        )
        dot.set_clip_path(clip)


def _smith_closest_approach(
    ax: Axes, result: CheckResult, device_inverse: np.ndarray, clip: Any
) -> None:
    frequency_hz = result.margins.modulus_margin_frequency_hz
    index = int(np.argmin(np.abs(result.frequency_hz - frequency_hz)))
    load, device = result.gamma_load[index], device_inverse[index]
    if not np.isfinite(device):
        return
    (joint,) = ax.plot(
        [load.real, device.real],
        [load.imag, device.imag],
        color=_CRITICAL,
        linewidth=1.2,
        linestyle=":",
        marker=".",
        label=f"closest to +1: {format_frequency(frequency_hz)}",
    )
    joint.set_gid("closest-approach")
    joint.set_clip_path(clip)


def _smith_frequency_marks(
    ax: Axes, result: CheckResult, device_inverse: np.ndarray, view: float
) -> None:
    """Dots at a few round frequencies along both traces, each labelled with its frequency
    (gid ``"smith-frequency-mark"`` on the dots, ``"smith-frequency-label"`` on the text)."""
    from matplotlib.ticker import MaxNLocator

    frequency = result.frequency_hz
    low, high = float(frequency[0]), float(frequency[-1])
    scale = _GIGAHERTZ if high >= _GIGAHERTZ else 1e6
    ticks = MaxNLocator(nbins=7, steps=[1, 2, 2.5, 5, 10]).tick_values(low / scale, high / scale)
    chosen = [t * scale for t in ticks if low < t * scale < high]
    for values, color, offset in (
        (result.gamma_load, _LOAD, (5, 4)),
        (device_inverse, _DEVICE, (5, -10)),
    ):
        for marked in chosen:
            point = complex(
                np.interp(marked, frequency, values.real), np.interp(marked, frequency, values.imag)
            )
            if not (np.isfinite(point) and abs(point) <= view):
                continue
            (dot,) = ax.plot(
                [point.real], [point.imag], marker="o", markersize=3.5, color=color, zorder=4
            )
            dot.set_gid("smith-frequency-mark")
            label = ax.annotate(
                format_frequency(marked),
                xy=(point.real, point.imag),
                xytext=offset,
                textcoords="offset points",
                fontsize="x-small",
                color=color,
                zorder=4,
            )
            label.set_gid("smith-frequency-label")


def plot_bound(result: BoundResult, ax: Axes | None = None) -> Figure:
    """The return loss a load needs for the small-gain bound, against frequency, beside the
    stated one (``check --load-return-loss``); bands where the stated one is not enough shaded.

    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    figure, ax = _target(ax, (7.6, 5.0), _BOUND_MARGINS)
    frequency_ghz = result.frequency_hz / _GIGAHERTZ
    stated = 0.0 - 20.0 * np.log10(result.reflection_bound)
    ax.plot(
        frequency_ghz,
        0.0 - 20.0 * np.log10(result.allowed_reflection),
        color=_DEVICE,
        linewidth=1.3,
        label="return loss needed (20·log10 |Γd|, at least 0 dB)",
    )
    ax.axhline(stated, color=_LOAD, linewidth=1.2, linestyle="--", label=f"stated: {stated:g} dB")
    for index, band in enumerate(result.failing_bands):
        ax.axvspan(
            band.start_hz / _GIGAHERTZ,
            band.stop_hz / _GIGAHERTZ,
            color=_BAND,
            alpha=0.35,
            label="stated return loss not enough" if index == 0 else None,
        )
    ax.grid(True, color=_GRID, linewidth=0.6)
    ax.set_xlabel("frequency (GHz)")
    ax.set_ylabel(f"return loss (dB, Z0 = {format_resistance(result.reference_impedance_ohm)})")
    _legend_below(ax, 2)
    ax.set_title(
        f"Small-gain bound for the load class: {result.verdict.replace('-', ' ')}",
        fontsize="medium",
    )
    return figure
