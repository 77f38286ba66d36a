"""Amplitudes and powers for reading, shared by the reasons and the text report.

Display only: values arrive in SI units (V, A, W) and leave as short strings.
"""

from __future__ import annotations

import math


def format_engineering(value: float, unit: str) -> str:
    """``0.09712 -> '97.12 mV'`` style: four significant digits with an SI prefix.

    Examples
    --------
    >>> format_engineering(0.09712, "V")
    '97.12 mV'
    """
    magnitude = abs(value)
    for scale, prefix in ((1.0, ""), (1e-3, "m"), (1e-6, "u"), (1e-9, "n")):
        if magnitude >= scale:
            return f"{value / scale:.4g} {prefix}{unit}"
    return f"{value:.3g} {unit}"


def format_amplitude(value: float, quantity: str) -> str:
    """A peak amplitude named by its quantity (``peak_voltage_v`` or ``peak_current_a``)."""
    unit = "A" if quantity.endswith("_a") else "V"
    return f"{format_engineering(value, unit)} pk"


def format_power(watts: float) -> str:
    """A power in W and dBm.

    Examples
    --------
    >>> format_power(1e-3)
    '1 mW (0.0 dBm)'
    """
    if watts <= 0:
        return format_engineering(watts, "W")
    return f"{format_engineering(watts, 'W')} ({10 * math.log10(watts / 1e-3):.1f} dBm)"
