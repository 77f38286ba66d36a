"""Robustness of ``oneport check`` end to end: mutated files never give a traceback.

A valid device file and a valid load file are mutated (lines dropped, duplicated, truncated,
garbled, swapped or inserted; random bytes inserted) and given to the command line, in-process.
Whatever the damage, the answer must be a verdict (exit 0, 3 or 4) or one line on stderr with
exit 2 (CONVENTIONS.md), never an exception. The reader alone is fuzzed in test_touchstone.py;
here the whole path runs: reading, alignment, analysis, rendering.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from helpers import LINE_MUTATIONS, mutate_lines, run_cli

# CONVENTIONS.md exit codes: 0 stable, 2 bad input, 3 unstable, 4 inconclusive.
ACCEPTED_EXIT_CODES = {0, 2, 3, 4}
BAD_INPUT = 2


def _diode_and_load_text() -> tuple[str, str]:
    """An invented diode (4 Ω + 0.6 nH + (−80 Ω ∥ 2 pF)) and a 10 Ω + 3 nH load, 12 points each.

    The device is a 1.x file in MHz, MA; the load a 2.0 file in GHz, RI, with [Number of
    Frequencies], so both readers' paths are mutated.
    """
    frequency_hz = np.linspace(0.5e9, 6e9, 12)
    s = 2j * np.pi * frequency_hz
    device = 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)
    load = 10.0 + s * 3e-9
    gamma_device = (device - 50.0) / (device + 50.0)
    gamma_load = (load - 50.0) / (load + 50.0)
    device_lines = ["! invented diode for fuzzing", "# MHz S MA R 50", "! f |S11| angle"]
    device_lines += [
        f"{f / 1e6:.6g} {abs(g):.6f} {np.degrees(np.angle(g)):.4f}"
        for f, g in zip(frequency_hz, gamma_device, strict=True)
    ]
    load_lines = [
        "! invented load for fuzzing",
        "[Version] 2.0",
        "# GHz S RI R 50",
        "[Number of Ports] 1",
        f"[Number of Frequencies] {frequency_hz.size}",
        "[Network Data]",
    ]
    load_lines += [
        f"{f / 1e9:.6g} {g.real:.6f} {g.imag:.6f}"
        for f, g in zip(frequency_hz, gamma_load, strict=True)
    ]
    load_lines.append("[End]")
    return "\n".join(device_lines) + "\n", "\n".join(load_lines) + "\n"


DEVICE_TEXT, LOAD_TEXT = _diode_and_load_text()
GARBLE_ALPHABET = "0123456789.-+eE  \t!#[]RrSsZzYyMmAaDdBbHhGgKk,;_xXnNiIfF\x7f\u00b5\u0661"
OPERATIONS = (*LINE_MUTATIONS, "bytes")


@st.composite
def mutated(draw: st.DrawFn, text: str) -> bytes:
    """``text`` with one to five line- or byte-level mutations, as the bytes of a file."""
    mutations = draw(st.integers(1, 5))
    lines, inserted = mutate_lines(draw, text.splitlines(), mutations, GARBLE_ALPHABET, OPERATIONS)
    ending = draw(st.sampled_from(["\n", "\r\n"]))
    data = (ending.join(lines) + ending).encode("utf-8")
    for position, raw in inserted:
        position %= len(data) + 1
        data = data[:position] + raw + data[position:]
    return data


@st.composite
def damaged_pair(draw: st.DrawFn) -> tuple[bytes, bytes, bool]:
    """Device and load bytes, at least one of them mutated, and whether to ask for JSON."""
    which = draw(st.sampled_from(["device", "load", "both"]))
    device = draw(mutated(DEVICE_TEXT)) if which != "load" else DEVICE_TEXT.encode()
    load = draw(mutated(LOAD_TEXT)) if which != "device" else LOAD_TEXT.encode()
    return device, load, draw(st.booleans())


def _run_check(device: bytes, load: bytes, as_json: bool) -> tuple[int, str, str]:
    with tempfile.TemporaryDirectory() as folder:
        device_path = Path(folder) / "device.s1p"
        load_path = Path(folder) / "load.ts"
        device_path.write_bytes(device)
        load_path.write_bytes(load)
        argv = ["check", str(device_path), "--load", str(load_path)]
        return run_cli(*argv, "--json") if as_json else run_cli(*argv)


def test_the_unmutated_pair_gives_a_verdict():
    code, out, err = _run_check(DEVICE_TEXT.encode(), LOAD_TEXT.encode(), False)
    assert code in {0, 3, 4} and err == "", (code, err)
    assert out.strip()


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(damaged_pair())
def test_mutated_files_never_give_a_traceback(case):
    device, load, as_json = case
    code, out, err = _run_check(device, load, as_json)
    assert code in ACCEPTED_EXIT_CODES, (code, out, err)
    assert "Traceback" not in out + err
    if code == BAD_INPUT:
        assert out == ""
        assert len(err.splitlines()) == 1 and err.endswith("\n"), err
        assert err.startswith("oneport: ")
    else:
        assert err == ""
        assert out.strip()
