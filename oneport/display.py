"""How a result shows itself at a Python prompt and in a notebook.

Every product's frozen result mixes in :class:`Displayed`: a one-line ``repr`` (class, verdict,
key numbers) instead of the dataclass's thousands of characters, and ``_repr_html_`` (verdict,
key numbers with units, the report's sections, cautions) for Jupyter. Both hand the work to
:mod:`oneport.rendering.notebook` when asked, so importing a result imports no renderer.
The dataclasses that use it are declared with ``repr=False`` so that theirs is not generated.
"""

from __future__ import annotations


class Displayed:
    """Mixin: a short ``repr`` and notebook HTML, both drawn by :mod:`oneport.rendering`."""

    __slots__ = ()

    def __repr__(self) -> str:
        from .rendering.notebook import short_repr

        return short_repr(self)

    def _repr_html_(self) -> str:
        from .rendering.notebook import html_summary

        return html_summary(self)
