"""Netlist parameters for reports and JSON: each one's SI unit, from the elements that use it.

A ``.set L=3n`` parameter used as an inductor's value is in henries, one used as a resistor's in
ohms: reports then read ``L = 3 nH`` and JSON keys name the unit (``value_h``). This room reads
the circuits' element rules only; it evaluates nothing.
"""

from __future__ import annotations

from collections.abc import Iterable
from typing import Any

#: The JSON key suffix of each SI unit symbol (siemens spelled out: ``_s`` is seconds).
KEY_SUFFIX = {
    "ohm": "_ohm",
    "H": "_h",
    "F": "_f",
    "S": "_siemens",
    "m": "_m",
    "s": "_s",
    "Hz": "_hz",
    "dB": "_db",
    "": "",
}


def parameter_units(circuits: Iterable[Any]) -> dict[str, str]:
    """Each declared parameter's SI unit symbol (``"H"``, ``"ohm"``, …; ``""`` for a plain
    number, for a parameter no element uses, or one used for quantities of different units).

    Examples
    --------
    >>> from oneport.circuit import parse_circuit
    >>> circuit = parse_circuit(".set R=20 L=3n\\nR1 1 2 R\\nL1 2 0 L\\n.oneport 1")
    >>> parameter_units([circuit])
    {'R': 'ohm', 'L': 'H'}
    """
    found: dict[str, set[str]] = {}
    declared: dict[str, str] = {}
    for circuit in circuits:
        if circuit is None:
            continue
        names = {name.lower(): name for name in circuit.parameters}
        declared.update(names)
        for element in circuit.elements:
            for key, spec in element.values.items():
                reference = getattr(spec, "name", None)
                if reference is None or reference.lower() not in names:
                    continue
                rule = element.rules.get(key)
                found.setdefault(names[reference.lower()], set()).add(rule.unit if rule else "")
    return {
        name: (found[name].pop() if len(found.get(name, ())) == 1 else "")
        for name in declared.values()
    }


def key_suffix(unit: str) -> str:
    """``"_h"`` for ``"H"``: the JSON key suffix of a unit (``""`` for a plain number)."""
    return KEY_SUFFIX.get(unit, "")


def value_record(name: str, value: float, unit: str) -> dict[str, Any]:
    """``{"name": "L", "unit": "H", "value_h": 3e-9}``: a parameter's value for JSON."""
    return {"name": name, "unit": unit, f"value{key_suffix(unit)}": value}
