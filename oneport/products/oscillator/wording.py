"""The oscillator's words for its quantities, shared by its reasons and its renderers.

The results hold SI values and short quantity names (``incident_power``, ``port_peak_voltage``,
``port_peak_current``, ``junction_peak_voltage``); people read engineering words and units
("97.13 mV peak at the port", "-38 dBm incident"). This room only turns numbers into words; it
computes nothing.
"""

from __future__ import annotations

import math

from ...units import format_engineering, format_plain, format_rate

__all__ = [
    "QUANTITIES",
    "format_amount",
    "format_level",
    "format_plain",
    "format_rate",
    "quantity_unit",
    "quantity_words",
    "watts_to_dbm",
]

#: The level and amplitude variables: name -> (what it is; its SI unit; words after a value).
QUANTITIES = {
    "incident_power": ("incident power", "W", "incident"),
    "port_peak_voltage": ("peak voltage at the port", "V", "peak at the port"),
    "port_peak_current": ("peak current into the port", "A", "peak into the port"),
    "junction_peak_voltage": ("peak voltage across the junction", "V", "peak across the junction"),
}


def quantity_words(quantity: str) -> str:
    """``"port_peak_voltage"`` -> ``"peak voltage at the port"``."""
    return QUANTITIES[quantity][0]


def quantity_unit(quantity: str) -> str:
    """The SI unit of a quantity: ``"W"``, ``"V"`` or ``"A"``."""
    return QUANTITIES[quantity][1]


def watts_to_dbm(watts: float) -> float:
    """A power in dBm (−inf for zero)."""
    return 10.0 * math.log10(watts / 1e-3) if watts > 0 else -math.inf


def format_level(value: float, quantity: str) -> str:
    """A drive level or amplitude as a bench engineer reads it.

    Examples
    --------
    >>> format_level(0.09713, "port_peak_voltage")
    '97.13 mV peak at the port'
    >>> format_level(1.585e-7, "incident_power")
    '-38 dBm incident'
    """
    if quantity == "incident_power":
        return f"{format_plain(watts_to_dbm(value))} dBm incident"
    return f"{format_engineering(value, quantity_unit(quantity))} {QUANTITIES[quantity][2]}"


def format_amount(value: float, quantity: str) -> str:
    """The number and unit only: ``97.13 mV``, ``-38 dBm``."""
    if quantity == "incident_power":
        return f"{format_plain(watts_to_dbm(value))} dBm"
    return format_engineering(value, quantity_unit(quantity))
