"""Figure plumbing shared by every picture: new headless figures, their bytes, saving them.

Figures are :class:`matplotlib.figure.Figure` objects built without ``pyplot``, so they need no
display and no backend is ever chosen; matplotlib is imported inside the functions only. They
carry ``_repr_png_``, so a notebook shows a figure a cell returns even when ``pyplot`` (and with
it the notebook's own figure display) was never loaded.
"""

from __future__ import annotations

import functools
import io
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..errors import InputError
from .files import check_target, write_atomically

if TYPE_CHECKING:
    from matplotlib.figure import Figure

#: Every picture the package writes, by suffix: one set of formats for every command's --plot.
PLOT_FORMATS = {".png": "png", ".svg": "svg"}


def new_figure(size: tuple[float, float], margins: dict[str, float] | None = None) -> Figure:
    """A new headless figure, drawn and saved without a backend, never touching ``pyplot``:
    laid out by matplotlib's constrained layout, or, when ``margins`` are given (``left``,
    ``right``, ``top``, ``bottom``, ``wspace``, ``hspace`` as fractions of the figure), with
    those fixed margins — several times cheaper to draw (benchmarks/README.md)."""
    if margins is None:
        figure: Figure = _shown_figure()(figsize=size, layout="constrained")
        return figure
    figure = _shown_figure()(figsize=size)
    figure.subplots_adjust(**margins)
    return figure


@functools.cache
def _shown_figure() -> type:
    """:class:`matplotlib.figure.Figure` that also shows itself in a notebook (PNG)."""
    from matplotlib.figure import Figure

    class ShownFigure(Figure):
        """A headless figure with ``_repr_png_`` for IPython's display."""

        def _repr_png_(self) -> bytes:
            return figure_bytes(self, "png", dpi=90.0)

    ShownFigure.__qualname__ = "ShownFigure"  # found again by pickle through __getattr__
    return ShownFigure


def __getattr__(name: str) -> type:
    if name == "ShownFigure":
        return _shown_figure()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def figure_bytes(
    figure: Figure, image_format: str, dpi: float = 110.0, quick: bool = False
) -> bytes:
    """The figure rendered as ``"png"`` or ``"svg"`` bytes (no software metadata).

    ``quick`` trades file size for time: the PNG is compressed at the lowest level (a report's
    embedded pictures; a saved plot is compressed fully)."""
    buffer = io.BytesIO()
    metadata: dict[str, Any] = {"Software": None} if image_format == "png" else {"Creator": None}
    extra: dict[str, Any] = {}
    if quick and image_format == "png":
        extra["pil_kwargs"] = {"compress_level": 1}
    figure.savefig(buffer, format=image_format, dpi=dpi, metadata=metadata, **extra)
    return buffer.getvalue()


def save_figure(figure: Figure, path: str | Path) -> Path:
    """Write any figure of the package to ``path`` (``.png`` or ``.svg``), whole or not at all."""
    target, image_format = image_target(path)
    write_atomically(target, figure_bytes(figure, image_format))
    return target


def image_target(path: str | Path, option: str = "--plot") -> tuple[Path, str]:
    """The target path and image format, checked before anything is drawn.

    Raises
    ------
    InputError
        For a suffix other than ``.png`` or ``.svg``, or a target that cannot be written
        (:func:`oneport.rendering.files.check_target`).
    """
    target = Path(path)
    image_format = PLOT_FORMATS.get(target.suffix.lower())
    if image_format is None:
        raise InputError(
            f"{target}: cannot write plots as {target.suffix or 'a file without suffix'!r};"
            " give a file name ending in .png or .svg"
        )
    check_target(target, option)
    return target, image_format
