"""Figure plumbing shared by every picture: new headless figures, their bytes, saving them.

Figures are :class:`matplotlib.figure.Figure` objects built without ``pyplot``, so they need no
display; matplotlib is imported inside the functions only.
"""

from __future__ import annotations

import io
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..errors import InputError
from .files import require_folder, write_atomically

if TYPE_CHECKING:
    from matplotlib.figure import Figure

_SAVE_FORMATS = {".png": "png", ".svg": "svg"}


def new_figure(size: tuple[float, float]) -> Figure:
    """A new headless figure: drawn and saved without a backend, never touching ``pyplot``."""
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


def image_target(path: str | Path) -> tuple[Path, str]:
    """The target path and image format, checked before anything is drawn."""
    target = Path(path)
    image_format = _SAVE_FORMATS.get(target.suffix.lower())
    if image_format is None:
        raise InputError(
            f"{target}: cannot write plots as {target.suffix or 'a file without suffix'!r};"
            " give a file name ending in .png or .svg"
        )
    require_folder(target)
    return target, image_format
