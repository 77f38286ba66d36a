"""The picture of a pole–zero identification: natural frequencies in the s-plane.

Rendering only: it draws what a :class:`~oneport.analysis.pole_zero.PoleZeroResult` holds (its
natural frequencies and the fit's poles) and computes no analysis. Growth rates are shown in
1/µs and frequencies in GHz here only.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from ..analysis.pole_zero import NaturalFrequency, PoleZeroResult

_INK = "#26323d"
_RIGHT = "#c0262d"
_MUTED = "#8b949a"
_POLE = "#2f7f86"
_BAND = "#e3c46a"


def plot_poles(result: PoleZeroResult, ax: Axes | None = None) -> Figure:
    """Natural frequencies (zeros of the fitted F) and the fit's poles, frequency against growth
    rate; right-half-plane roots in red, untrusted ones hollow, the fitted band shaded.

    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    if ax is None:
        from .figures import new_figure

        figure = new_figure((7.2, 5.2))
        ax = figure.add_subplot()
    else:
        figure = ax.figure  # type: ignore[assignment]
    low, high = result.frequency_range_hz
    ax.axhspan(low / 1e9, high / 1e9, color=_BAND, alpha=0.25, label="fitted band")
    ax.axvline(0.0, color=_MUTED, linewidth=0.9)
    _roots(ax, result.natural_frequencies, "o", "natural frequency")
    _roots(ax, result.characteristic_poles, "x", "pole of the fit (a side in Z0)")
    ax.set_xlabel("growth rate σ (1/µs; right of 0: grows)")
    ax.set_ylabel("frequency (GHz)")
    ax.grid(True, color="#cfd3d6", linewidth=0.6)
    ax.legend(loc="best", fontsize="small", framealpha=0.85)
    ax.set_title(f"Natural frequencies of 1 - L: {result.verdict}", fontsize="medium")
    return figure


def _roots(ax: Any, roots: tuple[NaturalFrequency, ...], marker: str, label: str) -> None:
    if not roots:
        return
    sigma = np.array([root.sigma_per_s for root in roots]) / 1e6
    frequency = np.array([root.frequency_hz for root in roots]) / 1e9
    right = np.array([root.rhp for root in roots])
    trusted = np.array([root.trusted for root in roots])
    for chosen, colour, suffix in ((right, _RIGHT, ", right half plane"), (~right, _INK, "")):
        for sure, words in ((trusted, ""), (~trusted, ", not trusted")):
            picked = chosen & sure
            if not picked.any():
                continue
            style: dict[str, Any] = {"color": colour, "linestyle": "none", "marker": marker}
            if marker == "x":
                style["color"] = _POLE
            elif not sure.all() and words:
                style["markerfacecolor"] = "none"
            ax.plot(sigma[picked], frequency[picked], label=f"{label}{suffix}{words}", **style)
