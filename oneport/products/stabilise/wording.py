"""Component values for reading, in the reasons of the advice and in its text report alike.

``format_value(4.7e-12, "F")`` gives ``4.7 pF``: four significant digits at most, an SI prefix
from femto to giga, resistances in ``ohm``; the networks' names (``shunt R-C``) and the joins
of sentences. Display only; values arrive in SI units.
"""

from __future__ import annotations

import math

from .families import CAPACITANCE, INDUCTANCE, RESISTANCE

_PREFIXES = ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"),
             (1e-9, "n"), (1e-12, "p"), (1e-15, "f"))  # fmt: skip
#: Display unit of each element key.
UNITS = {RESISTANCE: "ohm", CAPACITANCE: "F", INDUCTANCE: "H"}
#: The element's letter for people (R, C, L).
LETTERS = {RESISTANCE: "R", CAPACITANCE: "C", INDUCTANCE: "L"}
#: Each network's name for people (the JSON keeps the short codes).
TOPOLOGY_WORDS = {
    "series-resistor": "series R",
    "shunt-resistor": "shunt R",
    "shunt-rc": "shunt R-C",
    "series-rl": "series R∥L",
}


def topology_words(code: str) -> str:
    """``"shunt-rc"`` → ``"shunt R-C"``: a network's name as a person reads it."""
    return TOPOLOGY_WORDS.get(code, code.replace("-", " "))


def lower_first(sentence: str) -> str:
    """The sentence continued after a colon: its first word lower-cased, unless it is a symbol
    or a name (``Z = 2``, ``DC``) that keeps its case."""
    if len(sentence) > 1 and sentence[0].isupper() and sentence[1].islower():
        return sentence[0].lower() + sentence[1:]
    return sentence


def format_value(value: float, unit: str) -> str:
    """A value with an SI prefix: ``format_value(2.7e-12, "F")`` → ``'2.7 pF'``.

    Examples
    --------
    >>> format_value(47.0, "ohm"), format_value(3.9e-8, "H"), format_value(1500.0, "ohm")
    ('47 ohm', '39 nH', '1.5 kohm')
    """
    if value == 0 or not math.isfinite(value):
        return f"{value:g} {unit}"
    magnitude = abs(value)
    for scale, prefix in _PREFIXES:
        if magnitude >= scale * (1 - 1e-9):
            return f"{value / scale:.4g} {prefix}{unit}"
    scale, prefix = _PREFIXES[-1]
    return f"{value / scale:.4g} {prefix}{unit}"


def format_element(key: str, value: float) -> str:
    """An added element's value with its unit (``resistance_ohm`` → ohm)."""
    return format_value(value, UNITS[key])
