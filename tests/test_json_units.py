"""Every command's JSON names the unit of every dimensional number in its key (CONVENTIONS:
``_hz``, ``_ohm``, ``_s``, ``_per_s``, ``_w``, ``_v``, ``_a``, ``_db``, ``_deg``; this package
adds ``_dbm``, ``_siemens``, ``_h``, ``_f``, ``_m``), SI values, plain numbers linear
magnitudes; one ``inputs`` shape (a list of records) and one verdict vocabulary.

A key names a dimension when it holds one of the words in ``_DIMENSIONS`` (a frequency, a
resistance, a delay, …); such a key holding a number must end in a unit suffix. The members of
an object or list under a unit-named key (``frequency_range_hz: [low, high]``,
``before_db: {"min", "max"}``, ``loop_gain: {"re", "im"}``) carry its unit; ratios and fractions
(``*_ratio``, ``*_fraction``) are linear.
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from typing import Any

import pytest
import shipped_reports as shipped

_SUFFIX = re.compile(r"_(?:hz|ohm|s|per_s|w|v|a|db|dbm|deg|siemens|h|f|m)$")
_DIMENSIONS = re.compile(
    r"frequenc|resistance|impedance|reactance|conductance|susceptance|admittance|capacitance|"
    r"inductance|delay|power|voltage|current|phase|angle|bandwidth|real_part|return_loss|"
    r"_rate|sigma|step|level|amplitude|duration|time"
)
#: Verdict words per schema (CONVENTIONS "Verdict words"; each product's docs/json-*.md).
_VERDICTS = {
    "check": {"stable", "unstable", "inconclusive", "guaranteed", "not-guaranteed"},
    "poles": {"stable", "unstable", "inconclusive"},
    "amplifier": {"guaranteed", "not-guaranteed", "stable", "unstable", "inconclusive"},
    "terminations": {"negative-resistance-possible", "no-negative-resistance"},
    "stabilise": {"stabilised", "no-change-needed", "not-stabilised", "inconclusive"},
    "sweep": {"stable", "unstable", "inconclusive"},
}


def _numbers(value: Any, path: str, unit_named: bool) -> Iterator[tuple[str, bool]]:
    """(path, whether an enclosing key names a unit) of every number in ``value``."""
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return
    if isinstance(value, (int, float)):
        yield path, unit_named
    elif isinstance(value, dict):
        for key, inner in value.items():
            named = unit_named or bool(_SUFFIX.search(str(key)))
            yield from _numbers(inner, f"{path}.{key}", named)
    elif isinstance(value, list):
        for inner in value:
            yield from _numbers(inner, f"{path}[]", unit_named)


def _dimensional_without_unit(data: dict[str, Any]) -> list[str]:
    found = set()
    for path, unit_named in _numbers(data, "", False):
        key = path.rsplit(".", 1)[-1].removesuffix("[]")
        if unit_named or key in ("re", "im") or key.endswith(("_ratio", "_fraction")):
            continue
        if _DIMENSIONS.search(key):
            found.add(path)
    return sorted(found)


@pytest.mark.parametrize("name", shipped.ALL)
def test_every_dimensional_number_names_its_unit(name: str) -> None:
    assert _dimensional_without_unit(shipped.data(name)) == []


@pytest.mark.parametrize("name", shipped.ALL)
def test_inputs_are_one_shape_in_every_command(name: str) -> None:
    inputs = shipped.data(name)["inputs"]
    assert isinstance(inputs, list) and inputs
    for record in inputs:
        assert isinstance(record, dict) and "path" in record and "sha256" in record


@pytest.mark.parametrize("name", [n for n in shipped.ALL if n not in ("export", "oscillator")])
def test_verdicts_are_words_of_the_schema(name: str) -> None:
    data = shipped.data(name)
    command = data["schema"].split(".")[1].split("/")[0]
    assert data["verdict"] in _VERDICTS[command]
    assert isinstance(data.get("reasons", []), list)
    worst = data.get("worst_variant")
    if worst:
        assert worst["verdict"] in _VERDICTS["check"] and "verdict_code" not in worst


def test_the_checker_catches_a_bare_dimensional_key() -> None:
    assert _dimensional_without_unit({"total_real_part": 3.0, "start_hz": 1.0}) == [
        ".total_real_part"
    ]
    assert _dimensional_without_unit({"modes": [{"sigma": 1e9}]}) == [".modes[].sigma"]
    assert _dimensional_without_unit({"frequency_range_hz": [1.0, 2.0], "count": 3}) == []
