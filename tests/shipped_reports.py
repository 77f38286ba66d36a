"""Every command's report on the shipped examples, run once per test session.

Imported as a plain module beside the tests (as ``helpers`` is). Each command runs in-process
from the repository root with relative paths, as the README's lines do, so the reports hold
the same paths on every machine. ``text(name)`` is the text report, ``data(name)`` the JSON
object, ``html(name)`` the HTML report of the check commands.
"""

from __future__ import annotations

import contextlib
import functools
import json
import os
import tempfile
from pathlib import Path
from typing import Any

from helpers import run_cli

ROOT = Path(__file__).resolve().parent.parent

_E = "touchstone_examples"
#: name -> the arguments after ``oneport`` (relative to the repository root).
COMMANDS: dict[str, list[str]] = {
    "check-stable": ["check", f"{_E}/stable/device.s1p", "--load", f"{_E}/stable/load.s1p"],
    "check-oscillates": [
        "check",
        f"{_E}/oscillates/device.s1p",
        "--load",
        f"{_E}/oscillates/load.s1p",
    ],
    "check-latch-up": ["check", f"{_E}/latch-up/device.s1p", "--load", f"{_E}/latch-up/load.ts"],
    "check-undecidable": [
        "check",
        f"{_E}/undecidable/device.s1p",
        "--load",
        f"{_E}/undecidable/load.s1p",
    ],
    "check-dc-facts": [
        "check",
        f"{_E}/undecidable/device.s1p",
        "--load",
        f"{_E}/undecidable/load.s1p",
        "--device-dc-resistance=-76ohm",
        "--load-dc-resistance",
        "150ohm",
    ],
    "check-netlist-device": [
        "check",
        f"{_E}/circuits/tunnel_diode.cir",
        "--load",
        f"{_E}/stable/load.s1p",
    ],
    "check-netlist-load": [
        "check",
        f"{_E}/stable/device.s1p",
        "--load",
        f"{_E}/circuits/bias_tee.cir",
    ],
    "check-poles": [
        "check",
        f"{_E}/oscillates/device.s1p",
        "--load",
        f"{_E}/oscillates/load.s1p",
        "--poles",
    ],
    "check-return-loss": ["check", f"{_E}/oscillates/device.s1p", "--load-return-loss", "15dB"],
    "poles-latch-up": [
        "poles",
        f"{_E}/latch-up/device.s1p",
        "--load",
        f"{_E}/latch-up/load.ts",
        "--character",
    ],
    "poles-stable": [
        "poles",
        f"{_E}/stable/device.s1p",
        "--load",
        f"{_E}/stable/load.s1p",
        "--character",
    ],
    "amplifier": ["amplifier", f"{_E}/stable/device.s1p", "--port-return-loss", "20dB"],
    "terminations": ["terminations", f"{_E}/circuits/transistor.s2p", "--at", "10GHz"],
    "stabilise": [
        "stabilise",
        f"{_E}/oscillates/device.s1p",
        "--load",
        f"{_E}/oscillates/load.s1p",
        "--band",
        "1GHz:2GHz",
    ],
    "sweep-grid": [
        "sweep",
        f"{_E}/stable/device.s1p",
        "--load",
        f"{_E}/circuits/series_load.cir",
        "--vary",
        "R=1:100:11",
        "--vary",
        "L=0.5n:8n:11",
    ],
    "sweep-monte-carlo": [
        "sweep",
        f"{_E}/stable/device.s1p",
        "--load",
        f"{_E}/circuits/series_load.cir",
        "--tolerance",
        "R=20%",
        "--tolerance",
        "L=10%",
        "--samples",
        "2000",
        "--seed",
        "7",
    ],
    "oscillator": [
        "oscillator",
        f"{_E}/oscillator/drive_levels.toml",
        "--load",
        f"{_E}/oscillator/load.s1p",
    ],
}
#: Commands whose output file goes to a scratch folder (appended as ``-o PATH``).
WRITES = {"export": ["export", f"{_E}/circuits/tunnel_diode.cir", "--start", "1MHz", "--stop",
                     "6GHz", "--points", "101"]}  # fmt: skip
#: The check commands whose HTML report is scanned too.
HTML = ("check-stable", "check-oscillates", "check-latch-up", "check-undecidable", "check-dc-facts")


@contextlib.contextmanager
def _at_root() -> Any:
    previous = os.getcwd()
    os.chdir(ROOT)
    try:
        yield
    finally:
        os.chdir(previous)


@functools.cache
def _run(name: str, *extra: str) -> tuple[int, str, str]:
    with _at_root():
        if name in WRITES:
            folder = tempfile.mkdtemp()
            return run_cli(*WRITES[name], "-o", str(Path(folder) / "out.s1p"), *extra)
        return run_cli(*COMMANDS[name], *extra)


def text(name: str) -> str:
    """The text report of ``name``."""
    _, out, err = _run(name)
    assert err == "", err
    return out


def exit_code(name: str) -> int:
    """The exit code of ``name``'s run."""
    return _run(name)[0]


def data(name: str) -> dict[str, Any]:
    """The JSON object of ``name``."""
    _, out, err = _run(name, "--json")
    assert err == "", err
    return dict(json.loads(out))


@functools.cache
def html(name: str) -> str:
    """The HTML report of a check command (its images left out, they are not text)."""
    folder = Path(tempfile.mkdtemp())
    with _at_root():
        _, _, err = run_cli(*COMMANDS[name], "--report", str(folder / "r.html"), "-q")
    assert err == "", err
    import re

    page = (folder / "r.html").read_text(encoding="utf-8")
    return re.sub(r"data:image/png;base64,[A-Za-z0-9+/=]+", "data:image/png;base64,…", page)


ALL = (*COMMANDS, *WRITES)
