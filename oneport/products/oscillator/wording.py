"""The oscillator's words for its quantities, shared by its reasons and its renderers.

The results hold SI values and short quantity names (``incident_power``, ``port_peak_voltage``,
``port_peak_current``, ``junction_peak_voltage``); people read engineering words and units
("97.13 mV peak at the port", "-38 dBm incident"). This room only turns numbers into words; it
computes nothing.
"""

from __future__ import annotations

import math

from ...units import format_engineering

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


def format_rate(per_second: float) -> str:
    """A growth or decay rate in 1/s without a computer's exponent: ``4.82e9 /s``.

    Examples
    --------
    >>> format_rate(4.8199e9)
    '4.82e9 /s'
    >>> format_rate(-250.0)
    '-250 /s'
    """
    return f"{format_plain(per_second)} /s"


def format_plain(value: float, digits: int = 3) -> str:
    """A number to ``digits`` significant figures, written ``330`` not ``3.3e+02``, and
    ``4.82e9`` rather than ``4.82e+09`` when it must use an exponent.

    Examples
    --------
    >>> format_plain(330.4), format_plain(2.14), format_plain(-1.2e10), format_plain(0.0123)
    ('330', '2.14', '-1.2e10', '0.0123')
    """
    if not math.isfinite(value):
        return "unbounded" if value > 0 else "-unbounded" if value < 0 else "undefined"
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    if -3 <= exponent < 6:
        decimals = max(digits - 1 - exponent, 0)
        text = f"{value:.{decimals}f}"
        return text.rstrip("0").rstrip(".") if "." in text else text
    mantissa = value / 10.0**exponent
    if round(abs(mantissa), digits - 1) >= 10:
        mantissa, exponent = mantissa / 10, exponent + 1
    text = f"{mantissa:.{digits - 1}f}".rstrip("0").rstrip(".")
    return f"{text}e{exponent}"
