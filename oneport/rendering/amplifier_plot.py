"""Pictures of a reflection-amplifier screening: gain and the return loss stability needs.

Rendering only (matplotlib imported inside the functions; headless figures, no backend
chosen): it draws what an :class:`~oneport.analysis.amplifier.AmplifierResult` holds and
computes nothing. The records are linear (power gains, reflections); dB only here.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from ..analysis.amplifier import AmplifierResult
from ..units import format_plain, format_resistance


def plot_amplifier(result: AmplifierResult, ax: Any = None) -> Any:
    """Gain and the return loss stability needs, against frequency (matplotlib).

    Parameters
    ----------
    result : AmplifierResult
    ax : matplotlib Axes, optional
        Drawn into; a new headless figure's axes otherwise.

    Returns
    -------
    matplotlib Figure
        The figure drawn into (a new headless one when ``ax`` is None).
    """
    if ax is None:
        from .figures import new_figure

        ax = new_figure((9.0, 5.4)).add_subplot()
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
    ax.axhline(
        threshold,
        color="grey",
        linewidth=0.8,
        label=f"gain threshold {format_plain(threshold)} dB",
    )
    ax.set_xlabel("frequency (GHz)")
    ax.set_ylabel(f"dB (Z0 = {format_resistance(z0)})")
    ax.set_title(f"Reflection amplifier: {result.verdict.replace('-', ' ')}")
    ax.grid(True, color="#cfd3d6", linewidth=0.6)
    ax.legend(
        loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize="small", frameon=False
    ).set_gid("legend")
    return ax.figure


def _power_db(ratio: np.ndarray) -> np.ndarray:
    """Power ratios in dB (+inf stays +inf)."""
    return np.asarray(10.0 * np.log10(np.maximum(ratio, 1e-300)))


def save_amplifier_plot(result: AmplifierResult, path: str | Path) -> None:
    """Draw :func:`plot_amplifier` on a new figure and save it (format from the suffix), whole
    or not at all."""
    from .figures import save_figure

    save_figure(plot_amplifier(result), path)
