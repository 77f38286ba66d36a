"""Pictures of stabilising advice: |L| and the Nyquist curve before and after a network.

Rendering only: it draws the loop gains the result's checks hold (the pair as given and the
changed pair of one suggestion) and computes nothing. Frequencies in GHz, |L| in dB here only.
Figures are :class:`matplotlib.figure.Figure` objects built without ``pyplot`` (see
:mod:`.figures`). Artists tests may look for carry a ``gid``: ``"loop-gain-before"``,
``"loop-gain-after"``, ``"nyquist-before"``, ``"nyquist-after"``, ``"critical-point"``.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import InputError
from ..products.stabilise.wording import format_element, topology_words
from ..units import format_resistance
from .check_plots import _compressed_scale, radius_compressed
from .figures import figure_bytes, image_target, new_figure
from .files import write_atomically

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from ..products.stabilise import StabiliseResult

# The check plots' neutral palette: ink for the pair as given, a cool tone for the change.
_BEFORE = "#8b949a"
_AFTER = "#2f7f86"
_CRITICAL = "#c0262d"
_GRID = "#cfd3d6"
_GIGAHERTZ = 1e9


def plot_stabilise(
    result: StabiliseResult, ax: Axes | Sequence[Axes] | None = None, suggestion: int = 0
) -> Figure:
    """|L| in dB against frequency and the (radius-compressed) Nyquist curve, before and after.

    Parameters
    ----------
    result : StabiliseResult
    ax : pair of matplotlib Axes, optional
        Where to draw (|L| first, Nyquist second); a new figure is made when omitted.
    suggestion : int
        Which suggestion's changed pair to draw (0: the first ranked); without suggestions
        only the pair as given is drawn.

    Returns
    -------
    matplotlib.figure.Figure
    """
    gain_ax, nyquist_ax = _axes(ax)
    original = result.original
    chosen = None
    if result.suggestions:
        if not 0 <= suggestion < len(result.suggestions):
            raise InputError(f"suggestion {suggestion}: give 0 to {len(result.suggestions) - 1}")
        chosen = result.suggestions[suggestion]
    z0 = result.reference_impedance_ohm
    traces = [("as given", original, _BEFORE, "before")]
    if chosen is not None:
        traces.append((_label(chosen), chosen.check_after, _AFTER, "after"))
    for label, check, colour, tag in traces:
        with np.errstate(divide="ignore"):
            decibels = 20.0 * np.log10(np.abs(check.loop_gain))
        gain_ax.plot(
            check.frequency_hz / _GIGAHERTZ,
            decibels,
            color=colour,
            linewidth=1.3,
            label=f"{label}: {check.verdict}",
            gid=f"loop-gain-{tag}",
        )
        points = radius_compressed(check.loop_gain)
        nyquist_ax.plot(
            points.real,
            points.imag,
            color=colour,
            linewidth=1.3,
            label=f"{label}: {check.verdict}",
            gid=f"nyquist-{tag}",
        )
        nyquist_ax.plot(points.real, -points.imag, color=colour, linewidth=0.6, linestyle="--")
    gain_ax.axhline(0.0, color=_CRITICAL, linewidth=0.8, linestyle="--", label="|L| = 1")
    gain_ax.set_xlabel("frequency (GHz)")
    gain_ax.set_ylabel(f"|L| (dB), Z0 = {format_resistance(z0)}")
    gain_ax.grid(True, color=_GRID, linewidth=0.6)
    gain_ax.legend(
        loc="upper center", bbox_to_anchor=(0.5, -0.12), ncols=2, fontsize="small", frameon=False
    ).set_gid("legend")
    gain_ax.set_title("Loop gain |L| = |Γd·ΓL| before and after", fontsize="medium")
    angle = np.linspace(0.0, 2.0 * np.pi, 361)
    nyquist_ax.plot(np.cos(angle), np.sin(angle), color=_GRID, linewidth=0.8, linestyle="--")
    nyquist_ax.plot(
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
    nyquist_ax.axhline(0.0, color=_GRID, linewidth=0.8, zorder=0)
    nyquist_ax.axvline(0.0, color=_GRID, linewidth=0.8, zorder=0)
    nyquist_ax.set_aspect("equal", adjustable="datalim")
    _compressed_scale(nyquist_ax, np.concatenate([check.loop_gain for _, check, _, _ in traces]))
    nyquist_ax.set_xlabel("Re L (radius compressed; ticks and dotted rings at true values)")
    nyquist_ax.set_ylabel("Im L (radius compressed)")
    nyquist_ax.legend(
        loc="upper center", bbox_to_anchor=(0.5, -0.12), ncols=2, fontsize="small", frameon=False
    ).set_gid("legend")
    nyquist_ax.set_title(f"Nyquist plot of L, Z0 = {format_resistance(z0)}", fontsize="medium")
    figure: Figure = gain_ax.figure
    return figure


def save_stabilise_plot(result: StabiliseResult, path: str | Path, suggestion: int = 0) -> Path:
    """Write :func:`plot_stabilise` to ``path`` (``.png`` or ``.svg``), whole or not at all."""
    target, image_format = image_target(path)
    figure = plot_stabilise(result, suggestion=suggestion)
    write_atomically(target, figure_bytes(figure, image_format))
    return target


def _axes(ax: Axes | Sequence[Axes] | None) -> tuple[Any, Any]:
    if ax is None:
        figure = new_figure((12.4, 5.6))
        grid = figure.add_gridspec(1, 2, width_ratios=(1.2, 1.0))
        return figure.add_subplot(grid[0, 0]), figure.add_subplot(grid[0, 1])
    if isinstance(ax, Sequence) and len(ax) == 2:
        return ax[0], ax[1]
    raise InputError("ax: give a pair of Axes (|L| and Nyquist)")


def _label(suggestion: Any) -> str:
    values = " + ".join(format_element(k, v) for k, v in suggestion.elements.items())
    return f"with {topology_words(suggestion.topology)} {values}"
