"""Findings: the warnings every analysis can attach to its result, and their JSON form.

A :class:`Finding` is a numerical doubt or a fact worth a reader's attention: a stable
kebab-case ``code`` (documented per schema), a plain sentence, and context values. Results carry
them, so JSON users see what a person reads. Nothing here computes or renders.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np


@dataclass(frozen=True)
class Finding:
    """A warning: a stable kebab-case ``code``, a plain ``message``, and context values."""

    code: str
    message: str
    context: dict[str, Any] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """JSON form: code, message and the context keys beside them."""
        return {"code": self.code, "message": self.message, **json_safe(self.context)}


def complex_json(value: complex) -> dict[str, float]:
    """A complex number as ``{"re": …, "im": …}``."""
    return {"re": float(value.real), "im": float(value.imag)}


def json_safe(value: Any) -> Any:
    """Context values made JSON-safe (numpy scalars, tuples, complex)."""
    if isinstance(value, dict):
        return {key: json_safe(item) for key, item in value.items()}
    if isinstance(value, list | tuple):
        return [json_safe(item) for item in value]
    if isinstance(value, complex | np.complexfloating):
        return complex_json(complex(value))
    if isinstance(value, np.generic):
        return value.item()
    return value
