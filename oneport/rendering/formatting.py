"""Complex quantities and table cells for reading, shared by the oscillator's text and HTML.

Display only: values arrive in SI units (Ω, linear reflections) and leave as short strings in
the trade's notation: an impedance as R + jX ohm, a reflection as magnitude and angle.
"""

from __future__ import annotations

import math

from ..products.oscillator.wording import format_plain


def format_impedance(value: complex) -> str:
    """An impedance as ``R + jX ohm``.

    Examples
    --------
    >>> format_impedance(complex(27.41, -36.72))
    '27.4 - j36.7 ohm'
    """
    sign = "-" if value.imag < 0 else "+"
    return f"{format_plain(value.real)} {sign} j{format_plain(abs(value.imag))} ohm"


def format_reflection(value: complex) -> str:
    """A reflection coefficient as magnitude and angle: ``0.352 ∠ 98.1°``.

    Examples
    --------
    >>> format_reflection(complex(0.0, -0.5))
    '0.5 ∠ -90°'
    """
    angle = math.degrees(math.atan2(value.imag, value.real))
    return f"{format_plain(abs(value))} ∠ {format_plain(angle)}°"
