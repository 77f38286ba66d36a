"""Golden text reports of every command on the shipped examples, reviewed by eye once, then
pinned. Regenerate with ``ONEPORT_REGENERATE_GOLDEN=1`` (and review the diff by eye).

The comparison is exact except in the last digit of each number: a number may differ from the
pinned one by one unit in its last written place (noise-free figures computed by different
BLAS or libm builds round alike up to there); words, units, layout and every other digit must
match.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import pytest
import shipped_reports as shipped

GOLDEN = Path(__file__).resolve().parent / "data" / "golden"
_NUMBER = re.compile(r"(?<![\w.])[-+]?\d+(?:\.(\d+))?(?:e(-?\d+))?(?![\w])")


def _normalised(text: str) -> str:
    """The scratch folder of a written file replaced by a fixed name."""
    return re.sub(r"/\S*/out\.s1p", "OUTPUT.s1p", text)


def _last_place(token: str) -> float:
    match = _NUMBER.fullmatch(token)
    assert match is not None
    decimals = len(match.group(1) or "")
    exponent = int(match.group(2) or 0)
    return 10.0 ** (exponent - decimals)


def differences(expected: str, actual: str) -> list[str]:
    """Where ``actual`` departs from ``expected`` by more than a last-digit difference."""
    skeleton_expected = _NUMBER.sub("#", expected)
    skeleton_actual = _NUMBER.sub("#", actual)
    if skeleton_expected != skeleton_actual:
        lines = zip(skeleton_expected.splitlines(), skeleton_actual.splitlines(), strict=False)
        first = next(((a, b) for a, b in lines if a != b), ("(length)", "(length)"))
        return [f"words or layout differ: {first[0]!r} != {first[1]!r}"]
    found = []
    tokens = zip(
        [m.group(0) for m in _NUMBER.finditer(expected)],
        [m.group(0) for m in _NUMBER.finditer(actual)],
        strict=True,
    )
    for want, got in tokens:
        if want == got:
            continue
        place = _last_place(want)
        if abs(float(want) - float(got)) > 1.0001 * place:
            found.append(f"{want} != {got}")
    return found


@pytest.mark.parametrize("name", [name for name in shipped.ALL if name != "oscillator"])
def test_report_matches_its_reviewed_text(name: str) -> None:
    text = _normalised(shipped.text(name))
    path = GOLDEN / f"{name}.txt"
    if os.environ.get("ONEPORT_REGENERATE_GOLDEN"):
        path.write_text(text, encoding="utf-8")
    assert differences(path.read_text(encoding="utf-8"), text) == []


def test_the_comparison_allows_only_the_last_digit() -> None:
    assert differences("gain 7.87 dB at 2.285 GHz", "gain 7.88 dB at 2.285 GHz") == []
    assert differences("gain 7.87 dB", "gain 7.89 dB") == ["7.87 != 7.89"]
    assert differences("σ = 1.18e9 /s", "σ = 1.19e9 /s") == []
    assert differences("N = 2 natural frequencies", "N = 2 natural frequency") != []
