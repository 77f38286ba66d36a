"""Pictures of a reflection-amplifier screening: gain and the return loss stability needs.

Rendering only (matplotlib imported inside the functions): it draws what an
:class:`~oneport.analysis.amplifier.AmplifierResult` holds and computes nothing.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from ..analysis.amplifier import AmplifierResult
from ..errors import InputError


def plot_amplifier(result: AmplifierResult, ax: Any = None) -> Any:
    """Gain and the return loss stability needs, against frequency (matplotlib).

    Parameters
    ----------
    result : AmplifierResult
    ax : matplotlib Axes, optional
        Drawn into; a new figure's axes otherwise.

    Returns
    -------
    matplotlib Figure
        The figure drawn into (a new headless one when ``ax`` is None).
    """
    if ax is None:
        from .figures import new_figure

        ax = new_figure((8.0, 5.0)).add_subplot()
    f_ghz = result.frequency_hz / 1e9
    z0 = result.reference_impedance_ohm
    ax.plot(f_ghz, _power_db(result.gain), label="gain |Γd|²")
    needed = 0.0 - 20.0 * np.log10(result.allowed_reflection)
    ax.plot(f_ghz, needed, "--", label="return loss needed (small gain)")
    if result.port_reflection is not None:
        port_db = -20.0 * np.log10(np.maximum(result.port_reflection, 1e-300))
        ax.plot(f_ghz, port_db, ":", label="port return loss")
    if result.gain_bounds is not None:
        lower, upper = (_power_db(bound) for bound in result.gain_bounds)
        top = np.where(np.isfinite(upper), upper, np.nan)
        ax.fill_between(f_ghz, lower, top, alpha=0.2, label="gain ripple bounds")
    if result.gain_with_load is not None:
        ax.plot(f_ghz, _power_db(result.gain_with_load), label="gain with this port")
    threshold = float(_power_db(np.array(result.gain_threshold)))
    ax.axhline(threshold, color="grey", linewidth=0.8, label="gain threshold")
    ax.set_xlabel("frequency (GHz)")
    ax.set_ylabel(f"dB (Z0 = {z0:g} ohm)")
    ax.set_title(f"Reflection amplifier: {result.verdict}")
    ax.legend(loc="best", fontsize="small")
    return ax.figure


def _power_db(ratio: np.ndarray) -> np.ndarray:
    """Power ratios in dB (+inf stays +inf)."""
    return np.asarray(10.0 * np.log10(np.maximum(ratio, 1e-300)))


def save_amplifier_plot(result: AmplifierResult, path: str | Path) -> None:
    """Draw :func:`plot_amplifier` on a new figure and save it (format from the suffix)."""
    figure = plot_amplifier(result)
    try:
        figure.savefig(path)
    except (OSError, ValueError) as error:
        raise InputError(f"--plot {path}: cannot write the plot ({error})") from error
