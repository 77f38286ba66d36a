"""Figure plumbing shared by every picture: new headless figures, their bytes, saving them.

Figures are :class:`matplotlib.figure.Figure` objects built without ``pyplot``, so they need no
display; matplotlib is imported inside the functions only.
"""

from __future__ import annotations

import io
import sys
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..errors import InputError
from .files import check_target, write_atomically

if TYPE_CHECKING:
    from matplotlib.figure import Figure

#: Every picture the package writes, by suffix: one set of formats for every command's --plot.
PLOT_FORMATS = {".png": "png", ".svg": "svg"}


def new_figure(size: tuple[float, float]) -> Figure:
    import matplotlib

    if "matplotlib.pyplot" not in sys.modules:
        matplotlib.use("Agg")
    from matplotlib.figure import Figure

    return Figure(figsize=size, layout="constrained")


def figure_bytes(figure: Figure, image_format: str, dpi: float = 110.0) -> bytes:
    """The figure rendered as ``"png"`` or ``"svg"`` bytes (no software metadata)."""
    buffer = io.BytesIO()
    metadata: dict[str, Any] = {"Software": None} if image_format == "png" else {"Creator": None}
    figure.savefig(buffer, format=image_format, dpi=dpi, metadata=metadata)
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
