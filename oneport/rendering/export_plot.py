"""The picture of an export: the written S-parameters against frequency.

Rendering only: it draws what an :class:`~oneport.products.export.ExportResult` holds and
computes no analysis; |S| in dB and frequencies in GHz appear here only.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from ..products.export import ExportResult


def plot_export(result: ExportResult, ax: Axes | None = None) -> Figure:
    """|S_ij| in dB of the written file against frequency, one line per parameter.

    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    if ax is None:
        from .figures import new_figure

        figure = new_figure((7.6, 4.6))
        ax = figure.add_subplot()
    else:
        figure = ax.figure  # type: ignore[assignment]
    if result.s_parameters is None or result.frequency_hz is None:
        from ..errors import InputError

        raise InputError("this export result holds no data to draw")
    frequency_ghz = result.frequency_hz / 1e9
    ports = result.s_parameters.shape[0]
    with np.errstate(divide="ignore"):
        for row in range(ports):
            for column in range(ports):
                magnitude = np.abs(result.s_parameters[row, column])
                ax.plot(
                    frequency_ghz,
                    20.0 * np.log10(magnitude),
                    label=f"|S{row + 1}{column + 1}|",
                )
    ax.set_xlabel("frequency (GHz)")
    ax.set_ylabel(f"dB (Z0 = {result.reference_impedance_ohm:g} ohm)")
    ax.grid(True, color="#cfd3d6", linewidth=0.6)
    ax.legend(loc="best", fontsize="small")
    ax.set_title(f"{result.output_path}: {ports}-port, {result.points} points", fontsize="medium")
    return figure
