"""The shipped example transistor is what its generator writes, byte for byte, on any machine."""

from __future__ import annotations

import importlib.util
import re
from pathlib import Path

CIRCUITS = Path(__file__).resolve().parent.parent / "touchstone_examples" / "circuits"


def _generator():
    spec = importlib.util.spec_from_file_location(
        "generate_transistor", CIRCUITS / "generate_transistor.py"
    )
    assert spec is not None and spec.loader is not None
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_generator_rewrites_the_shipped_file_byte_for_byte(tmp_path: Path) -> None:
    generator = _generator()
    first = generator.main(tmp_path / "first.s2p").read_bytes()
    second = generator.main(tmp_path / "second.s2p").read_bytes()
    assert first == second
    assert first == (CIRCUITS / "transistor.s2p").read_bytes()


def test_every_number_has_a_fixed_format() -> None:
    # Whole hertz for frequencies and nine decimals for every S value: the last-digit noise of
    # exp, sin and cos between platforms (about 1e-16) cannot reach the written digits.
    lines = (CIRCUITS / "transistor.s2p").read_text(encoding="ascii").splitlines()
    data = [line for line in lines if line and line[0] not in "!#"]
    assert len(data) == 180
    for line in data:
        frequency, *values = line.split()
        assert re.fullmatch(r"[1-9]\d*00000000", frequency)
        assert len(values) == 8
        assert all(re.fullmatch(r"-?\d+\.\d{9}", value) for value in values), line
