"""Quantities as people type them (``2.4GHz``, ``12ps``, ``15dB``, ``50ohm``) and as they read them.

This room is the edge of the package: the only place where SI prefixes and display units are
parsed or produced. Everything it returns is in SI base units (Hz, s, Ω) or a linear magnitude.
"""

from __future__ import annotations

import math
import numbers
import re

from .errors import InputError

_PREFIXES = {
    "f": 1e-15,
    "p": 1e-12,
    "n": 1e-9,
    "u": 1e-6,
    "µ": 1e-6,
    "m": 1e-3,
    "": 1.0,
    "k": 1e3,
    "M": 1e6,
    "meg": 1e6,
    "G": 1e9,
    "T": 1e12,
}

# Units each kind of quantity accepts; matched case-insensitively after the prefix.
_UNITS = {
    "frequency": ("hz",),
    "time": ("s",),
    "resistance": ("ohm", "ohms", "Ω"),
    "capacitance": ("f",),
    "inductance": ("h",),
    "current": ("a",),
    "voltage": ("v",),
}

_NUMBER = r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*([a-zA-Zµ]*|Ω)\s*$")


def parse_quantity(text: str, kind: str, *, option: str) -> float:
    """Parse ``text`` as a quantity of ``kind`` and return it in SI units.

    Parameters
    ----------
    text : str
        What the user typed, e.g. ``"2.4GHz"``, ``"50ohm"``, ``"12ps"`` or a bare number (SI).
    kind : str
        One of ``"frequency"``, ``"time"``, ``"resistance"``, ``"capacitance"``, ``"inductance"``,
        ``"current"``, ``"voltage"``.
    option : str
        The option or field name, for the error message.

    Returns
    -------
    float
        The value in Hz, s, Ω, F, H, A or V.

    Examples
    --------
    >>> parse_quantity("2.4GHz", "frequency", option="--start")
    2400000000.0
    >>> parse_quantity("50ohm", "resistance", option="--measurement-impedance")
    50.0
    """
    match = _QUANTITY.match(text)
    accepted = f"a number with an optional SI prefix and unit, e.g. {_EXAMPLES[kind]}"
    if not match:
        raise InputError(f"{option}: cannot read {text!r} as a {kind}; give {accepted}")
    value = float(match.group(1))
    suffix = match.group(2)
    scale = _suffix_scale(suffix, _UNITS[kind])
    if scale is None:
        raise InputError(f"{option}: unknown unit {suffix!r} in {text!r}; give {accepted}")
    result = value * scale
    if not math.isfinite(result):
        raise InputError(f"{option}: {text!r} is not a finite number; give {accepted}")
    return result


def parse_decibels(text: str, *, option: str) -> float:
    """Parse a level in dB (``"15dB"`` or ``"15"``) and return it in dB."""
    match = re.match(rf"^\s*({_NUMBER})\s*(dB|db|DB)?\s*$", text)
    if not match:
        raise InputError(f"{option}: cannot read {text!r} as a level in dB; give e.g. 15dB")
    return float(match.group(1))


def quantity(value: object, kind: str, *, option: str) -> float:
    """A quantity given from Python or typed on the command line, in SI units.

    ``value`` is a number (already SI: Hz, s, Ω, …) or text with a unit (``"2.4GHz"``), read by
    :func:`parse_quantity`, the one rule the commands use too; ``option`` names the option in
    the error (``--start``), so a function call fails with the command's own line.

    Examples
    --------
    >>> quantity("50ohm", "resistance", option="--measurement-impedance")
    50.0
    >>> quantity(2.4e9, "frequency", option="--at")
    2400000000.0
    >>> quantity(True, "resistance", option="--load-dc-resistance")
    Traceback (most recent call last):
    ...
    oneport.errors.InputError: --load-dc-resistance: cannot read True as a resistance; give a \
number with an optional SI prefix and unit, e.g. 50ohm
    """
    if isinstance(value, str):
        return parse_quantity(value, kind, option=option)
    accepted = f"a number with an optional SI prefix and unit, e.g. {_EXAMPLES[kind]}"
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(f"{option}: cannot read {value!r} as a {kind}; give {accepted}")
    number = float(value)
    if not math.isfinite(number):
        raise InputError(f"{option}: {value!r} is not a finite number; give {accepted}")
    return number


def decibels(value: object, *, option: str) -> float:
    """A level in dB given as a number (dB) or text (``"15dB"``), by :func:`parse_decibels`.

    Examples
    --------
    >>> decibels("15dB", option="--load-return-loss"), decibels(20, option="--gain-threshold")
    (15.0, 20.0)
    """
    if isinstance(value, str):
        return parse_decibels(value, option=option)
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(f"{option}: cannot read {value!r} as a level in dB; give e.g. 15dB")
    number = float(value)
    if not math.isfinite(number):
        raise InputError(f"{option}: {value!r} is not a finite level in dB; give e.g. 15dB")
    return number


_EXAMPLES = {
    "frequency": "2.4GHz",
    "time": "12ps",
    "resistance": "50ohm",
    "capacitance": "1.2pF",
    "inductance": "3.3nH",
    "current": "20mA",
    "voltage": "1.2V",
}


def _suffix_scale(suffix: str, units: tuple[str, ...]) -> float | None:
    """Scale factor of a prefix+unit suffix, or None when it is not one of ``units``."""
    if suffix == "":
        return 1.0
    for unit in units:
        if suffix.lower().endswith(unit.lower()):
            prefix = suffix[: len(suffix) - len(unit)]
            if prefix in _PREFIXES:
                return _PREFIXES[prefix]
            if prefix.lower() in ("meg", "k", "u", "n", "p", "f"):
                return _PREFIXES[prefix.lower()]
            return None
    # A bare SI prefix with no unit letter ("2.4G") is accepted as the kind's unit.
    if suffix in _PREFIXES:
        return _PREFIXES[suffix]
    if suffix.lower() == "meg":
        return 1e6
    return None


def format_frequency(frequency_hz: float) -> str:
    """Frequency for reading: ``1.472 GHz``, ``350.0 MHz``, ``12.0 kHz``."""
    magnitude = abs(frequency_hz)
    for scale, unit in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if magnitude >= scale:
            return f"{frequency_hz / scale:.4g} {unit}"
    return f"{frequency_hz:.4g} Hz"


def to_decibels(magnitude: float) -> float:
    """A linear magnitude (voltage-like ratio) in dB; ``-inf`` for zero."""
    return 20.0 * math.log10(magnitude) if magnitude > 0 else -math.inf


def format_engineering(value: float, unit: str, digits: int = 4) -> str:
    """A quantity with an SI prefix for reading: ``0.09712, "V" -> '97.12 mV'``.

    Examples
    --------
    >>> format_engineering(0.09712, "V")
    '97.12 mV'
    >>> format_engineering(2.62e-5, "W", digits=3)
    '26.2 µW'
    """
    magnitude = abs(value)
    if not math.isfinite(value) or magnitude == 0:
        return f"{value:.{digits}g} {unit}"
    for scale, prefix in ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ")):
        if magnitude >= scale * (1 - 0.5 * 10.0**-digits):
            return f"{value / scale:.{digits}g} {prefix}{unit}"
    for scale, prefix in ((1e-9, "n"), (1e-12, "p"), (1e-15, "f")):
        if magnitude >= scale:
            return f"{value / scale:.{digits}g} {prefix}{unit}"
    return f"{value:.{digits}g} {unit}"


def format_power(watts: float) -> str:
    """A power in W with an SI prefix, and in dBm when positive.

    Examples
    --------
    >>> format_power(1e-3)
    '1 mW (0.0 dBm)'
    """
    if not watts > 0:
        return format_engineering(watts, "W", digits=3)
    return f"{format_engineering(watts, 'W', digits=3)} ({10 * math.log10(watts / 1e-3):.1f} dBm)"


def format_plain(value: float, digits: int = 3) -> str:
    """A number to ``digits`` significant figures, written ``330`` not ``3.3e+02``, and
    ``4.82e9`` rather than ``4.82e+09`` when it must use an exponent.

    Examples
    --------
    >>> format_plain(330.4), format_plain(2.14), format_plain(-1.2e10), format_plain(0.0123)
    ('330', '2.14', '-1.2e10', '0.0123')
    >>> format_plain(269.4, 2), format_plain(18594.0)
    ('270', '18600')
    >>> format_plain(9.9996e7), format_plain(5e-324)
    ('1e8', '4.94e-324')
    """
    if not math.isfinite(value):
        return "unbounded" if value > 0 else "-unbounded" if value < 0 else "undefined"
    if value == 0:
        return "0"
    exponent = math.floor(math.log10(abs(value)))
    if -3 <= exponent < 6:
        decimals = digits - 1 - exponent
        if decimals < 0:
            return f"{round(value, decimals):.0f}"
        text = f"{value:.{decimals}f}"
        return text.rstrip("0").rstrip(".") if "." in text else text
    # Python's own rounding to significant digits (10.0**exponent underflows for subnormals)
    mantissa, _, power = f"{value:.{digits - 1}e}".partition("e")
    if "." in mantissa:
        mantissa = mantissa.rstrip("0").rstrip(".")
    return f"{mantissa}e{int(power)}"


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


def format_resistance(ohm: float, digits: int = 3) -> str:
    """A resistance for reading: ``-76 ohm``, ``1.5 kohm``, ``0.2 ohm``.

    Examples
    --------
    >>> format_resistance(-76.0), format_resistance(1500.0), format_resistance(0.25)
    ('-76 ohm', '1.5 kohm', '0.25 ohm')
    """
    if math.isfinite(ohm) and abs(ohm) >= 1e3:
        return format_engineering(ohm, "ohm", digits=digits)
    return f"{format_plain(ohm, digits)} ohm"


def format_decibels(magnitude: float, digits: int = 2) -> str:
    """A linear magnitude (voltage-like ratio) in dB with ``digits`` decimals: ``4.66`` →
    ``'13.37 dB'``.

    Examples
    --------
    >>> format_decibels(4.66), format_decibels(0.5, 1)
    ('13.37 dB', '-6.0 dB')
    """
    return f"{to_decibels(magnitude):.{digits}f} dB"


def format_count(count: int, singular: str, plural: str | None = None) -> str:
    """A count with its noun in the right number: ``2 natural frequencies``.

    Examples
    --------
    >>> format_count(1, "natural frequency", "natural frequencies"), format_count(3, "zero")
    ('1 natural frequency', '3 zeros')
    """
    return f"{count} {singular if count == 1 else plural or singular + 's'}"


#: How a value of each SI unit reads best: a fixed scale for the trade's usual components.
_READING_SCALES = {"H": (1e-9, "nH"), "F": (1e-12, "pF")}


def format_value(value: float, unit: str, digits: int = 3) -> str:
    """Any quantity for reading by its SI unit symbol (``""`` for a plain number): ohm as
    :func:`format_resistance`, Hz as :func:`format_frequency`, inductance in nH and capacitance
    in pF across their usual RF range, anything else with an SI prefix.

    Examples
    --------
    >>> format_value(8e-9, "H"), format_value(2.7e-12, "F"), format_value(20.0, "ohm")
    ('8 nH', '2.7 pF', '20 ohm')
    >>> format_value(1.2e-11, "s"), format_value(0.065, "S"), format_value(3.0, "")
    ('12 ps', '65 mS', '3')
    """
    if not math.isfinite(value):
        return format_plain(value) + (f" {unit}" if unit else "")
    if unit == "ohm":
        return format_resistance(value, digits)
    if unit == "Hz":
        return format_frequency(value)
    if not unit:
        return format_plain(value, digits)
    scale = _READING_SCALES.get(unit)
    if scale is not None and 0.01 * scale[0] <= abs(value) < 1000 * scale[0]:
        return f"{format_plain(value / scale[0], digits)} {scale[1]}"
    if value == 0:
        return f"0 {unit}"
    return format_engineering(float(format_plain(value, digits)), unit, digits)
