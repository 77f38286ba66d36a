"""The picture of a watch: each checked file's closest approach to +1, coloured by its verdict.

Rendering only: it draws what a :class:`~oneport.products.watch.WatchResult` holds.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..errors import printable

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from ..products.watch import WatchResult

_COLOURS = {"stable": "#4a7f8c", "unstable": "#b5533c", "inconclusive": "#c9a227"}


def plot_watch(result: WatchResult, ax: Axes | None = None) -> Figure:
    """One bar per checked file: min |1 − L| (its distance from oscillating), by verdict.

    Drawn into ``ax`` when given, else on a new headless figure; returns the figure.
    """
    checked = [o for o in result.outcomes if o.result is not None]
    if ax is None:
        from .figures import new_figure

        figure = new_figure((7.2, 1.2 + 0.35 * max(len(checked), 1)))
        ax = figure.add_subplot()
    else:
        figure = ax.figure  # type: ignore[assignment]
    names = [printable(o.path.name) for o in checked]
    distances = [o.result.margins.modulus_margin for o in checked if o.result is not None]
    verdicts = [o.result.verdict for o in checked if o.result is not None]
    ax.barh(names, distances, color=[_COLOURS[v] for v in verdicts])
    for row, verdict in enumerate(verdicts):
        ax.annotate(
            verdict,
            (distances[row], row),
            xytext=(4, 0),
            textcoords="offset points",
            va="center",
            fontsize="small",
        )
    ax.invert_yaxis()
    ax.set_xlabel("closest approach to +1, min |1 - L|")
    ax.set_title(
        f"{printable(str(result.folder))}: {len(checked)} file(s) checked", fontsize="medium"
    )
    return figure
