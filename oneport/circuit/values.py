"""Values as netlists write them: ``3.3nH``, ``10k``, ``5meg``, ``-80``, or a parameter name.

Netlist suffixes follow the trade's long-standing convention, which differs from the command
line's (:mod:`oneport.units`): suffixes are case-insensitive, so ``m`` is milli and ``meg`` is
mega, and ``1f`` is one femto. Unit letters after the prefix are optional and must be one of
:data:`UNIT_WORDS` (they are not checked against the element: ``3.3nH`` and ``3.3n`` are equal).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

#: Scale of each prefix, matched case-insensitively (``meg`` before ``m``).
PREFIXES: dict[str, float] = {
    "t": 1e12,
    "g": 1e9,
    "meg": 1e6,
    "k": 1e3,
    "m": 1e-3,
    "u": 1e-6,
    "µ": 1e-6,
    "n": 1e-9,
    "p": 1e-12,
    "f": 1e-15,
}

#: Unit words accepted after the prefix (ignored apart from being checked).
UNIT_WORDS = ("ohm", "ohms", "Ω", "h", "f", "s", "hz", "m", "db")

_NUMBER = re.compile(r"^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)(.*)$")
_NAME = re.compile(r"^([+-]?)([A-Za-z_][A-Za-z0-9_]*)$")

ACCEPTED_VALUE = (
    "a number with an optional suffix (f p n u m k meg g t) and unit (ohm h f s hz m db),"
    " e.g. 3.3nH, 10k, 5meg, or a parameter name set with .set"
)


@dataclass(frozen=True)
class ParameterReference:
    """An element value taken from a named parameter, optionally negated (``-RD``)."""

    name: str
    negate: bool = False

    def __str__(self) -> str:
        return f"-{self.name}" if self.negate else self.name


#: What an element value can be before parameters are substituted.
ValueSpec = float | ParameterReference


class ValueTokenError(ValueError):
    """A token that is not a value; the message says why and what is accepted."""


def parse_number(token: str) -> float | None:
    """The SI value of a number token such as ``3.3nH``, or None if it does not start as one.

    Parameters
    ----------
    token : str
        One netlist token.

    Returns
    -------
    float or None
        The value in SI units; None when ``token`` does not begin with a digit, sign or point.

    Raises
    ------
    ValueTokenError
        When the token starts as a number but its suffix is unknown, or is a capital ``M``
        (milli in a netlist, but almost always meant as mega).

    Examples
    --------
    >>> parse_number("3.3nH")
    3.3e-09
    >>> parse_number("5meg"), parse_number("2m"), parse_number("1f")
    (5000000.0, 0.002, 1e-15)
    >>> parse_number("RD") is None
    True
    """
    match = _NUMBER.match(token.strip())
    if not match:
        return None
    suffix = match.group(2)
    if suffix.startswith("M") and not suffix.lower().startswith("meg"):
        raise ValueTokenError(
            f"{token!r}: a netlist reads M as milli (case is ignored), which is rarely meant;"
            " write meg for mega (5meg, 100megHz) or a small m for milli"
        )
    scale = suffix_scale(suffix)
    if scale is None:
        raise ValueTokenError(f"{token!r} has an unknown suffix {suffix!r}; give {ACCEPTED_VALUE}")
    value = float(match.group(1)) * scale
    if not math.isfinite(value):
        raise ValueTokenError(f"{token!r} is not a finite number; give {ACCEPTED_VALUE}")
    return value


def suffix_scale(suffix: str) -> float | None:
    """Scale factor of a prefix-and-unit suffix (``"nH"`` gives 1e-9), or None if unknown."""
    lowered = suffix.lower()
    units = {word.lower() for word in UNIT_WORDS} | {""}
    if lowered in units:
        # A bare unit word, except that a lone "m" or "f" is a prefix (milli, femto).
        return PREFIXES.get(lowered, 1.0)
    for prefix in sorted(PREFIXES, key=len, reverse=True):
        if lowered.startswith(prefix) and lowered[len(prefix) :] in units:
            return PREFIXES[prefix]
    return None


def parse_value(token: str) -> ValueSpec:
    """A number (SI value) or a parameter reference from one token.

    Raises
    ------
    ValueTokenError
        When the token is neither; the message says what is accepted.

    Examples
    --------
    >>> parse_value("-RD")
    ParameterReference(name='RD', negate=True)
    >>> parse_value("47p")
    4.7e-11
    """
    number = parse_number(token)
    if number is not None:
        return number
    match = _NAME.match(token)
    if match:
        return ParameterReference(match.group(2), negate=match.group(1) == "-")
    raise ValueTokenError(f"{token!r} is not a value; give {ACCEPTED_VALUE}")


def is_name(token: str) -> bool:
    """Whether ``token`` is a valid parameter name (a letter or ``_``, then letters, digits)."""
    return bool(re.match(r"^[A-Za-z_][A-Za-z0-9_]*$", token))
