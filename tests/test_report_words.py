"""What a person reads, across every command's reports on the shipped examples: no JSON key,
code word or Python repr in prose or tables, and every number with its unit.

The unit checker (:func:`numbers_without_units`) is deliberately simple and documented here,
so a failure says exactly which number is bare:

- A number passes when a unit follows it: the SI units and prefixes the reports use (Hz, kHz,
  MHz, GHz, dB, dBm, ohm, kohm, °, %, /s and V, A, W, H, F, S, s, m with prefixes p n µ m k).
- A number passes when it is the value of a named dimensionless quantity: a symbol and ``=``
  (or ``≥``, ``≤``, ``<``, ``>``, ``about``) before it — ``N = 2``, ``Z = 2``, ``P = 0``,
  ``|1 - L| = 0.24``, ``|ΔL| about 0.002``, ``ρ``, a ``|…|`` magnitude or an RMS error.
- Allow-listed forms: counts before the noun they count (``1601 points``, ``4 of 4
  networks``, ``2 natural frequencies``, ``row 40``, ``port 1``, ``order 3``, ``model order``),
  the critical point ``+1`` and the unit circle's ``1`` in ``|L| < 1`` and ``1 - L``, a
  Touchstone version (``1.x``, ``2.0``), the tool's version, ISO dates, ``2π`` in formulas,
  ``f^-3.97`` (a power law's exponent), a ratio written ``2:1`` / ``3 x``, reflection
  magnitudes before ``∠``, an impedance ``R + jX ohm`` and a range ``3.3 to 7.6 dB`` (one unit
  after both ends), ``F(0)``, ``F > 0``, ``below 1`` (the unit circle), formulas (``1/Γd``,
  ``1/(2π·R·C)``, ``log10(1 + r)``), counts of variants by verdict (``67 unstable``), a year
  after a name (``Kurokawa's 1973``), numbered list items (``1.``), SHA-256 digests and file
  paths.
"""

from __future__ import annotations

import html as html_module
import re
from collections.abc import Iterator
from typing import Any

import pytest
import shipped_reports as shipped

_UNIT = r"(?:[pnuµmkMG]?Hz|dBm?|k?ohm|°|%|/s|[pnuµmk]?[VAWHFS]|[pnuµm]?s|[mµkn]?m)(?![A-Za-z])"
_NUMBER = re.compile(r"(?<![\w.^/∠±])[-+]?\d+(?:\.\d+)?(?:e-?\d+)?(?![\w.])")
_ALLOWED = [
    # an impedance R + jX ohm, and a range "3.3 to 7.6 dB" whose unit follows its end
    re.compile(r"-?\d+(?:\.\d+)? [+-] j\d+(?:\.\d+)? ohm"),
    re.compile(rf"[-+]?\d+(?:\.\d+)? to [-+]?\d+(?:\.\d+)?\s?{_UNIT}"),
    # a number followed by its unit
    re.compile(rf"[-+]?\d+(?:\.\d+)?(?:e-?\d+)?\s?{_UNIT}"),
    # a named dimensionless quantity's value
    re.compile(
        r"(?:\b[NZPQ]|N \+ P|ρ|σ|\|[^|\n]{1,12}\|(?:·ρ)?|[Γ][dLT]?)\s*(?:=|≥|≤|<|>|about)\s*"
        r"[-+]?\d+(?:\.\d+)?(?:e-?\d+)?"
    ),
    re.compile(r"(?:RMS error(?: of F)?|noise about)\s+\d+(?:\.\d+)?(?:e-?\d+)?"),
    # counts before what they count, ordinals, versions, dates
    re.compile(
        r"\b\d+(?:\.\d+)?\s+(?:of\s+(?:the\s+)?\d+\s+)?(?:points?|variants?|values?|networks?|"
        r"samples?|candidate|natural\s+frequenc|right-half-plane|trusted|device|drive|levels?|"
        r"times|measured|files?|sides?|zeros?|poles?|modes?|elements?)"
    ),
    re.compile(r"\b(?:row|port|ports|order|line|of|N|P|Z|variant|seed|number)\s+\d+\b"),
    re.compile(r"\b\d+\.\s"),  # a numbered list item
    re.compile(
        r"Touchstone \d\.[x\d]|oneport \d+\.\d+\.\d+|\d{4}-\d\d-\d\d[T ][\d:]+[+-]\d\d:\d\d"
    ),
    re.compile(r"\d+:\d|\d+ x\b|2π|f\^-?\d+(?:\.\d+)?"),
    # the critical point and the unit circle
    re.compile(r"[-+]?1 - [LΓ]|\+1\b|\b[<>≥≤] 1\b|\(0, 1\)|between 0 and \+1|\b0 Hz|SHA-256"),
    re.compile(r"\d+(?:\.\d+)? ∠"),  # a reflection's magnitude before its angle
    # the characteristic function at DC and infinity, and |L| against 1
    re.compile(
        r"\bF(?:\((?:0|∞)\))? [<>] 0\b|F\((?:0|∞)\)|\b(?:below|above|than) 1\b|\b[NPZ] stays \d"
    ),
    # formulas: 1/Γd, 1/(2π·R·C), log10(1 + r), 2π
    re.compile(r"\b1/[(Γ]|log10\([^)]*\)"),
    # counts of variants by verdict, and a year after a name (Kurokawa's 1973 estimate)
    re.compile(r"\b\d+ (?:are )?(?:stable|unstable|inconclusive)\b|'s (?:19|20)\d\d\b"),
    re.compile(r"=\s*-?1\)"),  # roots of Γd = 1, Γd = -1
    re.compile(r"\b\d+ \(the last is|\bthe first \d|\d+ below, \d+ above"),
]


def numbers_without_units(text: str) -> list[str]:
    """The numbers of ``text`` that carry no unit and match no allowed form, in context."""
    masked = re.sub(
        r"\S*/\S*\.(?:s\dp|ts|cir|toml|csv|html|png|parquet)\b|\b[0-9a-f]{64}\b",
        lambda match: " " * len(match.group(0)),
        text,
    )
    for pattern in _ALLOWED:
        masked = pattern.sub(lambda match: " " * len(match.group(0)), masked)
    found = []
    for match in _NUMBER.finditer(masked):
        start = max(0, match.start() - 30)
        found.append(text[start : match.end() + 10].replace("\n", " "))
    return found


def _visible(page: str) -> str:
    """An HTML page's text as a reader sees it (tags, the style sheet and images left out)."""
    body = re.sub(r"<style>.*?</style>|<head>.*?</head>", " ", page, flags=re.S)
    body = re.sub(r'alt="[^"]*"', " ", body)
    return html_module.unescape(re.sub(r"<[^>]+>", " ", body))


def _keys(value: Any) -> Iterator[str]:
    if isinstance(value, dict):
        for key, inner in value.items():
            yield str(key)
            yield from _keys(inner)
    elif isinstance(value, list):
        for inner in value:
            yield from _keys(inner)


def _codes(value: Any) -> Iterator[str]:
    if isinstance(value, dict):
        if isinstance(value.get("code"), str):
            yield value["code"]
        for inner in value.values():
            yield from _codes(inner)
    elif isinstance(value, list):
        for inner in value:
            yield from _codes(inner)


#: Python reprs and program words that must never reach a reader.
_REPRS = re.compile(
    r"np\.\w|numpy\.|array\(|dtype|<\w[\w.]* object at|\b\w+\(\w+=|\(np\.|\bNone\b(?!\.)|"
    r"\bTrue\b|\bFalse\b|\d[eE][+-]0\d|\bnan\b|\binf\b|\(ies\)|\w\(s\)|gamma_|_hz\b|_ohm\b|"
    r"\|gamma|\^2|\bsigma\b|\bGamma_"
)


def _reports() -> list[tuple[str, str]]:
    reports = [(name, "text") for name in shipped.ALL]
    return reports + [(name, "html") for name in shipped.HTML]


def _read(name: str, kind: str) -> str:
    return shipped.text(name) if kind == "text" else _visible(shipped.html(name))


@pytest.mark.parametrize(("name", "kind"), _reports())
def test_no_json_key_code_word_or_repr_in_a_report(name: str, kind: str) -> None:
    report = _read(name, kind)
    data = shipped.data(name) if name in shipped.COMMANDS or name in shipped.WRITES else {}
    keys = {key for key in _keys(data) if "_" in key and len(key) > 4}
    codes = {code for code in _codes(data) if code.count("-") >= 2}
    leaked = sorted(word for word in keys | codes if re.search(rf"\b{re.escape(word)}\b", report))
    assert leaked == [], f"{name} ({kind}) shows program words: {leaked}"
    reprs = [match.group(0) for match in _REPRS.finditer(report)]
    assert reprs == [], f"{name} ({kind}) shows Python reprs or identifiers: {reprs}"


@pytest.mark.parametrize(("name", "kind"), _reports())
def test_every_number_in_a_report_carries_a_unit(name: str, kind: str) -> None:
    bare = numbers_without_units(_read(name, kind))
    assert bare == [], f"{name} ({kind}): numbers without a unit: {bare}"


def test_the_unit_checker_finds_a_bare_number_and_passes_units() -> None:
    # The checker itself, on invented sentences.
    assert numbers_without_units("peak |L| 4.66 at 1 GHz") == ["peak |L| 4.66 at 1 GHz"]
    assert numbers_without_units("L: 41 values from 5e-10 to 8e-09") != []
    assert numbers_without_units("gain margin 11.06 dB at 2.285 GHz; N = 2") == []
    assert numbers_without_units("L: 41 values from 0.5 nH to 8 nH, |1 - L| = 0.24") == []
    assert numbers_without_units("smallest level (0.00012)") == ["smallest level (0.00012)"]
