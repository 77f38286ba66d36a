"""The oscillator plot: device lines against the load locus, operating points marked.

Two panels. Left, the reflection plane (a Smith chart in Z0): the load locus ΓL(f) and the
device line 1/Γd(A) at each operating frequency; they meet where Γd·ΓL = 1. Right, the
immittance plane of the chosen form: YL(f) against −Yd(A) (or ZL against −Zd). Stable points
are filled, unstable ones hollow. Rendering only: everything drawn is in the result already.
matplotlib is imported inside :func:`plot_oscillator`, with the Agg backend.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError
from ..products.oscillator.result import OscillatorResult
from ..units import format_frequency


def plot_oscillator(result: OscillatorResult, path: str | Path) -> None:
    """Draw the result into an image file (the format follows the suffix: .png, .svg, .pdf).

    Parameters
    ----------
    result : OscillatorResult
    path : str or Path
    """
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    figure, (smith, plane, amplitude) = plt.subplots(1, 3, figsize=(18, 6))
    try:
        _smith_grid(smith)
        _reflection(smith, result)
        _immittance(plane, result)
        _along_amplitude(amplitude, result)
        figure.suptitle(f"oneport oscillator: {result.verdict}")
        figure.tight_layout()
        figure.savefig(path, dpi=120)
    except OSError as error:
        raise InputError(f"--plot: cannot write {str(path)!r} ({error.strerror})") from None
    except ValueError as error:
        accepted = ", ".join(sorted(figure.canvas.get_supported_filetypes()))
        raise InputError(f"--plot: {error}; accepted suffixes: {accepted}") from None
    finally:
        plt.close(figure)


def _smith_grid(axes: Any) -> None:
    """Unit circle, constant-resistance circles and constant-reactance arcs, drawn faintly."""
    theta = np.linspace(0, 2 * np.pi, 361)
    axes.plot(np.cos(theta), np.sin(theta), color="0.4", linewidth=0.8)
    style = {"color": "0.85", "linewidth": 0.6, "zorder": 0}
    for r in (0.2, 0.5, 1.0, 2.0, 5.0):
        centre, radius = r / (1 + r), 1 / (1 + r)
        axes.plot(centre + radius * np.cos(theta), radius * np.sin(theta), **style)
    for x in (0.2, 0.5, 1.0, 2.0, 5.0):
        for sign in (1, -1):
            gamma = _reactance_arc(sign * x)
            axes.plot(gamma.real, gamma.imag, **style)
    axes.axhline(0, **style)
    axes.set_aspect("equal")
    axes.set_xlim(-1.1, 1.1)
    axes.set_ylim(-1.1, 1.1)


def _reactance_arc(x: float) -> np.ndarray:
    z = np.linspace(0, 50, 2000) + 1j * x
    result: np.ndarray = (z - 1) / (z + 1)
    return result


def _reflection(axes: Any, result: OscillatorResult) -> None:
    axes.plot(result.load_gamma.real, result.load_gamma.imag, color="tab:blue", label="load ΓL(f)")
    _label_ends(axes, result.load_frequency_hz, result.load_gamma)
    for trace in result.device_traces:
        line = trace.inverse_gamma_device
        axes.plot(
            line.real,
            line.imag,
            color="tab:red",
            linewidth=1.0,
            label=f"device 1/Γd(A) at {format_frequency(trace.frequency_hz)}",
        )
        axes.annotate(
            "",
            xy=(line[-1].real, line[-1].imag),
            xytext=(line[-2].real, line[-2].imag),
            arrowprops={"arrowstyle": "->", "color": "tab:red"},
        )
    for point in result.operating_points:
        _marker(axes, point.gamma_load, point.kurokawa_stable)
    axes.set_title(f"Reflection plane, Z0 = {result.reference_impedance_ohm:g} ohm")
    axes.set_xlabel("Re Γ")
    axes.set_ylabel("Im Γ")
    axes.legend(loc="lower left", fontsize=7)


def _immittance(axes: Any, result: OscillatorResult) -> None:
    admittance = result.form == "admittance"
    scale, unit = (1e3, "mS") if admittance else (1.0, "ohm")
    symbol = "Y" if admittance else "Z"
    load = result.load_immittance * scale
    axes.plot(load.real, load.imag, color="tab:blue", label=f"load {symbol}L(f)")
    _label_ends(axes, result.load_frequency_hz, load)
    for trace in result.device_traces:
        line = trace.negative_device_immittance * scale
        axes.plot(
            line.real,
            line.imag,
            color="tab:red",
            linewidth=1.0,
            label=f"device -{symbol}d(A) at {format_frequency(trace.frequency_hz)}",
        )
    for point in result.operating_points:
        gamma = point.gamma_load
        z0 = result.reference_impedance_ohm
        value = (1 - gamma) / (z0 * (1 + gamma)) if admittance else z0 * (1 + gamma) / (1 - gamma)
        _marker(axes, value * scale, point.kurokawa_stable)
    axes.axhline(0, color="0.85", linewidth=0.6, zorder=0)
    axes.axvline(0, color="0.85", linewidth=0.6, zorder=0)
    axes.set_title(f"{result.form.capitalize()} plane (filled: stable, hollow: unstable)")
    axes.set_xlabel(f"Re {symbol} ({unit})")
    axes.set_ylabel(f"Im {symbol} ({unit})")
    finite = np.concatenate(
        [load[np.isfinite(load)]]
        + [
            (t.negative_device_immittance * scale)[np.isfinite(t.negative_device_immittance)]
            for t in result.device_traces
        ]
    )
    if finite.size:
        _limits(axes, finite)
    axes.legend(loc="best", fontsize=7)


def _along_amplitude(axes: Any, result: OscillatorResult) -> None:
    """Re W_T against the form's amplitude at each trace frequency: zeros are the points."""
    admittance = result.form == "admittance"
    scale, unit = (1e3, "mS") if admittance else (1.0, "ohm")
    amplitude_scale, amplitude_unit = (1e3, "mV") if admittance else (1e3, "mA")
    part = "G_T" if admittance else "R_T"
    for trace in result.device_traces:
        axes.plot(
            trace.amplitude * amplitude_scale,
            trace.total_immittance.real * scale,
            label=f"{part} at {format_frequency(trace.frequency_hz)}",
        )
    for point in result.operating_points:
        _marker(axes, complex(point.amplitude * amplitude_scale, 0.0), point.kurokawa_stable)
    axes.axhline(0, color="0.6", linewidth=0.8, zorder=0)
    axes.set_title(f"Loop {part} along the amplitude (zero: operating point)")
    axes.set_xlabel(f"{result.amplitude_quantity} ({amplitude_unit})")
    axes.set_ylabel(f"{part} ({unit})")
    axes.legend(loc="best", fontsize=7)


def _limits(axes: Any, values: np.ndarray) -> None:
    """Robust axis limits: the 2nd to 98th percentile, so a pole does not flatten the plot."""
    for part, setter in ((values.real, axes.set_xlim), (values.imag, axes.set_ylim)):
        low, high = np.percentile(part, [2, 98])
        margin = 0.1 * (high - low) or 1.0
        setter(low - margin, high + margin)


def _label_ends(axes: Any, frequency_hz: np.ndarray, values: np.ndarray) -> None:
    for index in (0, -1):
        axes.annotate(
            format_frequency(frequency_hz[index]),
            (values[index].real, values[index].imag),
            fontsize=7,
            color="tab:blue",
        )


def _marker(axes: Any, value: complex, stable: bool) -> None:
    # Hollow rings are drawn larger and below, so a stable dot on the same spot stays visible.
    axes.plot(
        [value.real],
        [value.imag],
        marker="o",
        markersize=7 if stable else 12,
        color="black",
        markerfacecolor="black" if stable else "none",
        linestyle="none",
        zorder=6 if stable else 5,
    )
