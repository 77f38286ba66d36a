"""Pictures of a sweep: a stability map over two swept parameters, or a histogram of margins.

Rendering only (matplotlib imported inside the functions; headless figures, no backend chosen).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..analysis.variants import STABLE
from ..products.sweep.runner import SweepRun


def plot_sweep(result: SweepRun, ax: Any = None) -> Any:
    """Stability map for a two-parameter grid, otherwise a histogram of min |1 − L|.

    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    if ax is None:
        from .figures import new_figure

        figure = new_figure((7.5, 5.5))
        ax = figure.add_subplot()
    else:
        figure = ax.figure
    names = list(result.plan.values)
    if result.plan.kind == "grid" and len(result.plan.shape) == 2 and not result.interrupted:
        _map(result, names, ax, figure)
    else:
        _histogram(result, ax)
    return figure


def _map(result: SweepRun, names: list[str], ax: Any, figure: Any) -> None:
    shape = result.plan.shape
    x = result.table[names[1]].reshape(shape)
    y = result.table[names[0]].reshape(shape)
    margin = result.table["min_distance"].reshape(shape)
    stable = (result.table["verdict_code"] == STABLE).reshape(shape)
    signed = np.where(stable, margin, -margin)
    limit = float(np.max(np.abs(signed))) or 1.0
    mesh = ax.pcolormesh(x, y, signed, cmap="PuOr", vmin=-limit, vmax=limit, shading="nearest")
    figure.colorbar(mesh, ax=ax, label="min |1 - L| (negative: not stable)")
    frequency = result.table["oscillation_frequency_hz"].reshape(shape) / 1e9
    if np.isfinite(frequency).sum() > 3 and np.nanmax(frequency) > np.nanmin(frequency):
        contours = ax.contour(x, y, frequency, colors="black", linewidths=0.8)
        ax.clabel(contours, fmt="%.3g GHz", fontsize=8)
    ax.contour(x, y, stable.astype(float), levels=[0.5], colors="white", linewidths=2)
    ax.set_xlabel(names[1])
    ax.set_ylabel(names[0])
    ax.set_title("Stability map (white line: stability boundary; contours: oscillation GHz)")


def _histogram(result: SweepRun, ax: Any) -> None:
    margin = result.table["min_distance"]
    stable = result.table["verdict_code"] == STABLE
    bins = np.linspace(0.0, float(margin.max()) or 1.0, 41)
    ax.hist(margin[stable], bins=bins, color="#4a7f8c", label="stable")
    ax.hist(margin[~stable], bins=bins, color="#b5533c", alpha=0.8, label="not stable")
    ax.set_xlabel("min |1 - L| (distance of the loop from +1)")
    ax.set_ylabel("variants")
    ax.set_title(f"{result.completed} variants: {stable.mean():.1%} stable")
    ax.legend()
