"""The Smith chart of a termination analysis: which ΓT make the other port negative.

Rendering only: it draws what a :class:`~oneport.analysis.terminations.TerminationsResult`
holds (the stability circle, its negative side, the best termination) and computes no
analysis. matplotlib is imported inside the functions; files are written through
:func:`oneport.rendering.figures.save_figure` (``.png`` or ``.svg``, whole or not at all).

Artists carry a ``gid`` for tests and callers: ``"passive-boundary"`` (|ΓT| = 1),
``"stability-circle"``, ``"negative-region"`` and ``"best-termination"``.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..units import format_frequency, format_resistance

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from ..analysis.terminations import TerminationsResult

_INK = "#26323d"
_NEGATIVE = "#e8b7a0"
_CIRCLE = "#a3502d"
_GRID = "#cfd3d6"
_MUTED = "#8b949a"
_VALUES = (0.2, 0.5, 1.0, 2.0, 5.0)


def termination_figure(result: TerminationsResult, ax: Axes | None = None) -> Figure:
    """A Smith chart of the ΓT plane with the negative-resistance terminations shaded.

    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    if ax is None:
        from .figures import new_figure

        figure = new_figure((6.4, 6.8))
        ax = figure.add_subplot()
    else:
        figure = ax.figure  # type: ignore[assignment]
    clip = _circle(1.0, fill=False, linewidth=0.0)
    ax.add_patch(clip)
    _shade_negative(ax, result, clip)
    _grid(ax, clip)
    _stability_circle(ax, result)
    _best_marker(ax, result)
    ax.set_xlim(-1.15, 1.15)
    ax.set_ylim(-1.15, 1.15)
    ax.set_aspect("equal")
    ax.set_axis_off()
    ax.set_title(
        f"{Path(result.source).name}: port {result.terminated_port} terminations that make"
        f" port {result.observed_port}'s resistance negative\n"
        f"at {format_frequency(result.frequency_hz)}, ΓT in Z0 ="
        f" {format_resistance(result.reference_impedance_ohm)} (shaded:"
        f" {result.negative_fraction:.0%} of the passive terminations)",
        fontsize="small",
    )
    return figure


def save_termination_chart(result: TerminationsResult, path: str | Path) -> Path:
    """Write :func:`termination_figure` to ``path`` (``.png`` or ``.svg``)."""
    from .figures import save_figure

    return save_figure(termination_figure(result), path)


def _circle(radius: float, center: tuple[float, float] = (0.0, 0.0), **style: Any) -> Any:
    from matplotlib.patches import Circle

    return Circle(center, radius, **style)


def _shade_negative(ax: Axes, result: TerminationsResult, clip: Any) -> None:
    circle = result.circle
    if not circle.radius < float("inf"):
        return  # a straight-line boundary: the share is reported, the shading left out
    center = (circle.center.real, circle.center.imag)
    if circle.negative_inside:
        region = _circle(circle.radius, center, color=_NEGATIVE, zorder=0)
        region.set_clip_path(clip)
    else:
        region = _circle(1.0, color=_NEGATIVE, zorder=0)
        hole = _circle(circle.radius, center, color="white", zorder=0.5)
        hole.set_clip_path(clip)
        ax.add_patch(hole)
    region.set_gid("negative-region")
    ax.add_patch(region)


def _grid(ax: Axes, clip: Any) -> None:
    style: dict[str, Any] = {"fill": False, "edgecolor": _GRID, "linewidth": 0.7, "zorder": 1}
    for resistance in _VALUES:
        ax.add_patch(_circle(1 / (1 + resistance), (resistance / (1 + resistance), 0.0), **style))
    for reactance in _VALUES:
        for sign in (1.0, -1.0):
            arc = _circle(1 / reactance, (1.0, sign / reactance), **style)
            ax.add_patch(arc)
            arc.set_clip_path(clip)
    ax.plot([-1.0, 1.0], [0.0, 0.0], color=_GRID, linewidth=0.7, zorder=1)
    boundary = _circle(1.0, fill=False, edgecolor=_INK, linewidth=1.6, zorder=2)
    boundary.set_gid("passive-boundary")
    ax.add_patch(boundary)


def _stability_circle(ax: Axes, result: TerminationsResult) -> None:
    circle = result.circle
    if not circle.radius < float("inf"):
        return
    outline = _circle(
        circle.radius,
        (circle.center.real, circle.center.imag),
        fill=False,
        edgecolor=_CIRCLE,
        linestyle="--",
        linewidth=1.2,
        zorder=3,
    )
    outline.set_gid("stability-circle")
    ax.add_patch(outline)


def _best_marker(ax: Axes, result: TerminationsResult) -> None:
    best = result.best
    if best.unbounded:
        text = "Z at the other port is infinite here:\nthe negative resistance is unbounded"
    else:
        text = (
            f"most negative: R = {format_resistance(best.observed_resistance_ohm or 0.0)}"
            f" at port {result.observed_port}"
        )
    (marker,) = ax.plot(
        [best.gamma.real], [best.gamma.imag], marker="x", color=_INK, markersize=9, zorder=4
    )
    marker.set_gid("best-termination")
    ax.annotate(
        text,
        (best.gamma.real, best.gamma.imag),
        xytext=(8, 8),
        textcoords="offset points",
        fontsize="x-small",
        color=_INK,
        zorder=5,
        bbox={
            "boxstyle": "round,pad=0.2",
            "facecolor": "white",
            "edgecolor": "none",
            "alpha": 0.85,
        },
    )
