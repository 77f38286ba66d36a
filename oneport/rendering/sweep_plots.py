"""Pictures of a sweep: a stability map over two swept parameters, or a histogram of margins.

Rendering only (matplotlib, headless, imported inside the functions). The map's axes carry the
parameters' names and units (``L (nH)``, no offset), its title the reference impedance; the
colour map runs from orange (not stable) through white to purple (stable) and the stability
boundary is a bold black line, which stands out on every part of it. Artists that tests look
for carry a ``gid``: ``"stability-boundary"``, ``"oscillation-contours"``, ``"nominal-design"``.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ..analysis.variants import STABLE
from ..products.sweep.runner import SweepRun
from ..units import format_resistance

#: Display scale of each SI unit on an axis: (factor to divide by, label unit).
_AXIS_SCALES = {
    "H": (1e-9, "nH"),
    "F": (1e-12, "pF"),
    "s": (1e-12, "ps"),
    "Hz": (1e9, "GHz"),
    "S": (1e-3, "mS"),
    "m": (1e-3, "mm"),
}
_BOUNDARY = "#111111"
_STABLE = "#4a7f8c"
_NOT_STABLE = "#b5533c"


def plot_sweep(result: SweepRun, ax: Any = None, summary: Any = None) -> Any:
    """Stability map for a two-parameter grid, otherwise a histogram of min |1 − L|.

    ``summary`` (:func:`oneport.products.sweep.summary.summarise`) supplies the parameters'
    units and the nominal design of a Monte Carlo run; without it the axes show SI values.
    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    if ax is None:
        from .figures import new_figure

        figure = new_figure((7.8, 5.8))
        ax = figure.add_subplot()
    else:
        figure = ax.figure
    names = list(result.plan.values)
    units = dict(getattr(summary, "units", {}) or {})
    if result.plan.kind == "grid" and len(result.plan.shape) == 2 and result.complete:
        _map(result, names, units, ax, figure)
    else:
        _histogram(result, ax, summary)
    return figure


def axis_label(name: str, unit: str) -> tuple[str, float]:
    """``("L (nH)", 1e-9)``: an axis label and the factor its values are divided by."""
    if unit == "ohm":
        return f"{name} (ohm)", 1.0
    scale = _AXIS_SCALES.get(unit)
    if scale is None:
        return (f"{name} ({unit})" if unit else name), 1.0
    return f"{name} ({scale[1]})", scale[0]


def _map(result: SweepRun, names: list[str], units: dict[str, str], ax: Any, figure: Any) -> None:
    shape = result.plan.shape
    x_label, x_scale = axis_label(names[1], units.get(names[1], ""))
    y_label, y_scale = axis_label(names[0], units.get(names[0], ""))
    x = result.table[names[1]].reshape(shape) / x_scale
    y = result.table[names[0]].reshape(shape) / y_scale
    margin = result.table["min_distance"].reshape(shape)
    stable = (result.table["verdict_code"] == STABLE).reshape(shape)
    signed = np.where(stable, margin, -margin)
    limit = float(np.max(np.abs(signed))) or 1.0
    mesh = ax.pcolormesh(x, y, signed, cmap="PuOr", vmin=-limit, vmax=limit, shading="nearest")
    figure.colorbar(mesh, ax=ax, label="min |1 - L|, signed: negative where not stable")
    frequency = result.table["oscillation_frequency_hz"].reshape(shape) / 1e9
    if np.isfinite(frequency).sum() > 3 and np.nanmax(frequency) > np.nanmin(frequency):
        contours = ax.contour(
            x, y, frequency, colors="#3d3d3d", linewidths=0.7, linestyles="dashed"
        )
        contours.set_gid("oscillation-contours")
        ax.clabel(contours, fmt="%.3g GHz", fontsize=8)
    if stable.any() and not stable.all():
        boundary = ax.contour(
            x, y, stable.astype(float), levels=[0.5], colors=_BOUNDARY, linewidths=2.4
        )
        boundary.set_gid("stability-boundary")
    from matplotlib.lines import Line2D

    handles = [Line2D([], [], color=_BOUNDARY, linewidth=2.4, label="stability boundary")]
    if np.isfinite(frequency).any():
        handles.append(
            Line2D(
                [],
                [],
                color="#3d3d3d",
                linewidth=0.7,
                linestyle="dashed",
                label="oscillation frequency (GHz)",
            )
        )
    ax.legend(
        handles=handles,
        loc="upper center",
        bbox_to_anchor=(0.5, -0.11),
        ncols=2,
        fontsize="small",
        frameon=False,
    )
    for plan in result.plan.parameters:
        if plan.spacing == "logarithmic":
            (ax.set_xscale if plan.name == names[1] else ax.set_yscale)("log")
    if _linear(ax):
        ax.ticklabel_format(useOffset=False)
    ax.set_xlabel(x_label)
    ax.set_ylabel(y_label)
    z0 = format_resistance(result.reference_impedance_ohm)
    ax.set_title(
        f"Stability map, Z0 = {z0} (purple: stable; orange: not stable)", fontsize="medium"
    )


def _linear(ax: Any) -> bool:
    return bool(ax.get_xscale() == "linear" and ax.get_yscale() == "linear")


def _histogram(result: SweepRun, ax: Any, summary: Any) -> None:
    margin = result.table["min_distance"]
    stable = result.table["verdict_code"] == STABLE
    bins = np.linspace(0.0, float(margin.max()) or 1.0, 41)
    ax.hist(
        [margin[stable], margin[~stable]],
        bins=bins,
        stacked=True,
        color=[_STABLE, _NOT_STABLE],
        label=["stable", "not stable"],
    )
    nominal = getattr(summary, "nominal", None)
    title = f"{result.completed} variants: {stable.mean():.1%} stable"
    if nominal is not None:
        line = ax.axvline(
            nominal.min_distance,
            color=_BOUNDARY,
            linewidth=1.4,
            linestyle="--",
            label=f"nominal design ({nominal.verdict})",
        )
        line.set_gid("nominal-design")
        title += f"; the nominal design is {nominal.verdict}"
    z0 = format_resistance(result.reference_impedance_ohm)
    ax.set_xlabel(f"min |1 - L| (distance of the loop from +1, Z0 = {z0})")
    ax.set_ylabel("variants")
    ax.set_title(title, fontsize="medium")
    ax.legend(frameon=False)
