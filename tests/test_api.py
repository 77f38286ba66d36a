"""The Python API of CONVENTIONS.md: one function per command, the command's JSON as
``to_dict()``, the command's one line as the error, keywords shared and documented, a cheap
``import oneport`` that never touches matplotlib's backend, and short reprs."""

from __future__ import annotations

import inspect
import json
import re
import subprocess
import sys
from pathlib import Path
from typing import Any

import numpy as np
import pytest

import oneport
from oneport.errors import InputError

from helpers import run_cli

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = ROOT / "touchstone_examples"

#: Every command and its function at the top of the package (CONVENTIONS.md, "Python API").
PRODUCTS = (
    "check",
    "poles",
    "amplifier",
    "oscillator",
    "sweep",
    "terminations",
    "export",
    "stabilise",
    "watch",
)


def _ex(path: str) -> str:
    return str(EXAMPLES / path)


# --- the surface ---------------------------------------------------------------------------


def test_every_command_has_its_function_and_the_surface_is_listed() -> None:
    from oneport.commands import COMMAND_MODULES

    assert set(COMMAND_MODULES) == set(PRODUCTS)
    doc = oneport.__doc__ or ""
    for name in oneport.__all__:
        assert getattr(oneport, name) is not None
        assert re.search(rf"\b{name}\b", doc), f"{name} is not listed in oneport's docstring"
    for name in PRODUCTS:
        assert callable(getattr(oneport, name)) and name in oneport.__all__
    assert sorted(oneport.__all__) == oneport.__all__


def test_every_keyword_of_every_product_is_documented() -> None:
    # As python-control's docstrings test: a public argument with no word in the docstring fails.
    for name in PRODUCTS:
        function = getattr(oneport, name)
        doc = inspect.getdoc(function) or ""
        parameters = doc.split("Parameters", 1)[-1].split("Returns", 1)[0]
        for parameter in inspect.signature(function).parameters:
            assert re.search(rf"\b{parameter}\b", parameters), f"{name}({parameter}=…) undocumented"


#: One concept, one keyword: the spellings a product must not use for a shared concept.
_ALIASES = {
    "measurement_impedance_ohm": ("measurement_impedance", "z0", "reference_ohm"),
    "frequency_hz": ("grid", "frequencies", "frequency_grid_hz"),
    "terminated_port": ("terminate_port", "port"),
    "device_delay_s": ("device_delay", "delay"),
    "params": ("parameters", "overrides"),
}


def test_shared_concepts_have_one_keyword_everywhere() -> None:
    seen: dict[str, set[str]] = {}
    for name in PRODUCTS:
        keywords = set(inspect.signature(getattr(oneport, name)).parameters)
        for canonical, aliases in _ALIASES.items():
            assert not keywords & set(aliases), f"{name} spells {canonical} otherwise"
        for keyword in keywords:
            seen.setdefault(keyword, set()).add(name)
    # The pair's options are spelt the same by every product that prepares a pair.
    sides = ("terminate", "terminated_port", "device_fixture", "load_delay_s", "frequency_hz")
    for keyword in sides:
        assert {"check", "poles", "stabilise"} <= seen[keyword], keyword
    for keyword in ("device_dc_resistance_ohm", "load_dc_resistance_ohm"):
        assert {"check", "sweep", "stabilise"} <= seen[keyword], keyword
    assert {"check", "poles", "amplifier", "sweep", "stabilise"} <= seen[
        "measurement_impedance_ohm"
    ]


def test_importing_oneport_loads_nothing_heavy_and_no_backend() -> None:
    code = (
        "import sys, oneport\n"
        "heavy = [m for m in ('numpy', 'scipy', 'skrf', 'matplotlib') if m in sys.modules]\n"
        "assert not heavy, heavy\n"
        "import oneport.rendering.check_plots, oneport.rendering.figures\n"
        "result = oneport.check({!r}, {!r})\n"
        "figure = result.plot()\n"
        "import matplotlib\n"
        "assert 'matplotlib.pyplot' not in sys.modules\n"
        "assert matplotlib.rcParams._get_backend_or_none() is None\n"
        "assert figure._repr_png_().startswith(b'\\x89PNG')\n"
    ).format(_ex("stable/device.s1p"), _ex("stable/load.s1p"))
    done = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=False
    )
    assert done.returncode == 0, done.stderr


# --- quantities: numbers or text, and the command's own line when bad --------------------------


def test_quantities_as_numbers_or_text_give_the_same_result() -> None:
    device, load = _ex("undecidable/device.s1p"), _ex("undecidable/load.s1p")
    as_text = oneport.check(
        device,
        load,
        measurement_impedance_ohm="50ohm",
        device_dc_resistance_ohm="-76ohm",
        load_dc_resistance_ohm="150ohm",
        device_delay_s="1ps",
        gamma_uncertainty="0.001,0.002",
    )
    as_numbers = oneport.check(
        device,
        load,
        measurement_impedance_ohm=50,
        device_dc_resistance_ohm=-76.0,
        load_dc_resistance_ohm=np.float64(150.0),
        device_delay_s=1e-12,
        gamma_uncertainty=(0.001, 0.002),
    )
    assert as_text.to_dict() == as_numbers.to_dict()
    assert as_text.verdict == "unstable"


#: (function call, the same value on the command line): the error lines must be the same.
_BAD = [
    (
        lambda: oneport.check(_ex("stable/device.s1p"), _ex("stable/load.s1p"),
                              measurement_impedance_ohm="fifty"),
        ["check", _ex("stable/device.s1p"), "--load", _ex("stable/load.s1p"),
         "--measurement-impedance", "fifty"],
    ),
    (
        lambda: oneport.check(_ex("stable/device.s1p"), _ex("stable/load.s1p"),
                              device_delay_s="12"),
        ["check", _ex("stable/device.s1p"), "--load", _ex("stable/load.s1p"),
         "--device-delay", "12"],
    ),
    (
        lambda: oneport.check(_ex("stable/device.s1p"), load_return_loss_db="loud"),
        ["check", _ex("stable/device.s1p"), "--load-return-loss", "loud"],
    ),
    (
        lambda: oneport.amplifier(_ex("stable/device.s1p"), gain_threshold_db="ten"),
        ["amplifier", _ex("stable/device.s1p"), "--gain-threshold", "ten"],
    ),
    (
        lambda: oneport.poles(_ex("stable/device.s1p"), _ex("stable/load.s1p"),
                              measurement_impedance_ohm=-5),
        ["poles", _ex("stable/device.s1p"), "--load", _ex("stable/load.s1p"),
         "--measurement-impedance=-5"],
    ),
    (
        lambda: oneport.terminations(_ex("circuits/transistor.s2p"), "8 parsecs"),
        ["terminations", _ex("circuits/transistor.s2p"), "--at", "8 parsecs"],
    ),
    (
        lambda: oneport.oscillator(_ex("oscillator/drive_levels.toml"),
                                   _ex("oscillator/load.s1p"), injection_below_db="150dB"),
        ["oscillator", _ex("oscillator/drive_levels.toml"), "--load",
         _ex("oscillator/load.s1p"), "--injection-below", "150dB"],
    ),
    (
        lambda: oneport.sweep(_ex("stable/device.s1p"), _ex("circuits/series_load.cir"),
                              vary="R=1:100", measurement_impedance_ohm="50ohm"),
        ["sweep", _ex("stable/device.s1p"), "--load", _ex("circuits/series_load.cir"),
         "--vary", "R=1:100"],
    ),
    (
        lambda: oneport.watch(_ex("stable"), _ex("stable/load.s1p"), interval_s="soon"),
        ["watch", _ex("stable"), "--load", _ex("stable/load.s1p"), "--interval", "soon"],
    ),
]  # fmt: skip


@pytest.mark.parametrize(("call", "argv"), _BAD, ids=lambda value: "")
def test_a_bad_value_raises_the_commands_own_line(call: Any, argv: list[str]) -> None:
    with pytest.raises(InputError) as raised:
        call()
    assert isinstance(raised.value, ValueError)
    code, out, err = run_cli(*argv)
    assert code == 2 and out == ""
    assert err == f"oneport: {raised.value}\n"


def test_a_raw_type_error_never_escapes() -> None:
    for value in (object(), [1, 2], {"ohm": 50}, True):
        with pytest.raises(InputError, match="--measurement-impedance"):
            oneport.check(
                _ex("stable/device.s1p"), _ex("stable/load.s1p"), measurement_impedance_ohm=value
            )


# --- one frozen result per product: its to_dict() is the command's JSON ------------------------


def _json(*argv: str) -> dict[str, Any]:
    code, out, err = run_cli(*argv, "--json")
    assert code in (0, 3, 4), err
    data: dict[str, Any] = json.loads(out)
    return data


def _plain(data: Any) -> Any:
    """JSON as the command writes it (tuples become lists)."""
    return json.loads(json.dumps(data, allow_nan=False))


def test_check_with_its_second_opinion_is_one_object() -> None:
    device, load = _ex("oscillates/device.s1p"), _ex("oscillates/load.s1p")
    result = oneport.check(device, load, poles=True)
    assert result.second_opinion is not None and result.second_opinion.nyquist_encirclements == 2
    assert _plain(result.to_dict()) == _json("check", device, "--load", load, "--poles")
    # The text is the renderer's, from the object alone: the fit's section before the premise.
    code, out, _ = run_cli("check", device, "--load", load, "--poles")
    from oneport.rendering.check_text import render

    assert code == 3 and out == render(result)
    assert out.index("Second opinion") < out.index("\nPremise\n")


def test_every_products_to_dict_is_its_commands_json(tmp_path: Path) -> None:
    cases = [
        (
            oneport.check(_ex("stable/device.s1p"), load_return_loss_db="15dB"),
            ["check", _ex("stable/device.s1p"), "--load-return-loss", "15dB"],
        ),
        (
            oneport.poles(_ex("latch-up/device.s1p"), _ex("latch-up/load.ts"), character=True),
            ["poles", _ex("latch-up/device.s1p"), "--load", _ex("latch-up/load.ts"),
             "--character"],
        ),
        (
            oneport.amplifier(_ex("stable/device.s1p"), port_return_loss_db="20dB"),
            ["amplifier", _ex("stable/device.s1p"), "--port-return-loss", "20dB"],
        ),
        (
            oneport.oscillator(_ex("oscillator/drive_levels.toml"), _ex("oscillator/load.s1p")),
            ["oscillator", _ex("oscillator/drive_levels.toml"), "--load",
             _ex("oscillator/load.s1p")],
        ),
        (
            oneport.sweep(_ex("stable/device.s1p"), _ex("circuits/series_load.cir"),
                          vary=["R=1:100:5"], tolerance=()),
            ["sweep", _ex("stable/device.s1p"), "--load", _ex("circuits/series_load.cir"),
             "--vary", "R=1:100:5"],
        ),
        (
            oneport.terminations(_ex("circuits/transistor.s2p"), "8GHz"),
            ["terminations", _ex("circuits/transistor.s2p"), "--at", "8GHz"],
        ),
        (
            oneport.stabilise(_ex("oscillates/device.s1p"), _ex("oscillates/load.s1p"),
                              families=["series-resistor"]),
            ["stabilise", _ex("oscillates/device.s1p"), "--load", _ex("oscillates/load.s1p"),
             "--family", "series-resistor"],
        ),
        (
            oneport.export(_ex("circuits/tunnel_diode.cir"), tmp_path / "api.s1p",
                           oneport.frequency_grid("1MHz", "6GHz", 101)),
            ["export", _ex("circuits/tunnel_diode.cir"), "--start", "1MHz", "--stop", "6GHz",
             "--points", "101", "-o", str(tmp_path / "api.s1p")],
        ),
    ]  # fmt: skip
    for result, argv in cases:
        assert _plain(result.to_dict()) == _json(*argv), argv[0]


def test_sweep_warnings_travel_on_the_result() -> None:
    # A netlist load with a line: its own natural frequencies cannot be counted, and the
    # result (not the command) says so.
    result = oneport.sweep(
        _ex("stable/device.s1p"), _ex("circuits/series_load.cir"), vary={"R": (1, 100, 3)}
    )
    assert result.to_dict()["warnings"] == [w.to_dict() for w in result.warnings]
    assert result.summary.variants == 3 and result.table["R"].tolist() == [1.0, 50.5, 100.0]


def test_watch_once_and_polling_find_the_same_files(tmp_path: Path) -> None:
    import shutil

    shutil.copy(EXAMPLES / "stable/device.s1p", tmp_path / "a.s1p")
    shutil.copy(EXAMPLES / "oscillates/device.s1p", tmp_path / "b.s1p")
    load = EXAMPLES / "stable/load.s1p"
    once = oneport.watch(tmp_path, load)
    # One look checks every complete file there, as the check would.
    assert [(o.path.name, o.result.to_dict()) for o in once.outcomes if o.result] == [
        (name, oneport.check(tmp_path / name, load).to_dict()) for name in ("a.s1p", "b.s1p")
    ]
    assert once.verdict == "stable" and once.polls == 0
    clock = [0.0]
    seen: list[str] = []
    polled = oneport.watch(
        tmp_path,
        load,
        polls=4,
        interval_s="100ms",
        report_dir=tmp_path / "reports",
        on_outcome=lambda outcome: seen.append(outcome.path.name),
        clock=lambda: clock[0],
        sleep=lambda seconds: clock.__setitem__(0, clock[0] + seconds),
    )
    assert seen == ["a.s1p", "b.s1p"] and polled.outcomes == () and polled.polls == 4
    assert sorted(p.name for p in (tmp_path / "reports").iterdir()) == ["a.s1p.html", "b.s1p.html"]


# --- at a prompt ------------------------------------------------------------------------------


def test_reprs_are_one_short_line_and_html_is_escaped(tmp_path: Path) -> None:
    import shutil

    hostile = tmp_path / "<script>alert(1)<!--.s1p"
    shutil.copy(EXAMPLES / "oscillates/device.s1p", hostile)
    result = oneport.check(hostile, _ex("oscillates/load.s1p"))
    text = repr(result)
    assert text.startswith("<CheckResult UNSTABLE: N = 2") and "\n" not in text
    assert len(text) < 200
    page = result._repr_html_()
    assert "<script>" not in page and "&lt;script&gt;" in page
    assert "spectrum analyser" in page and "Premise" in page


def test_median_matches_numpys() -> None:
    # The check's own median (no numpy.ma import) against numpy.median, NaN rule included.
    from oneport.analysis.nyquist import median

    rng = np.random.default_rng(5)
    for shape in [(1,), (2,), (7,), (8,), (3, 5), (2, 3, 6)]:
        values = rng.normal(size=shape)
        assert np.array_equal(median(values), np.median(values, axis=-1))
    values = rng.normal(size=(3, 4))
    values[1, 2] = np.nan
    with np.errstate(invalid="ignore"):
        expected = np.median(values, axis=-1)
    assert np.array_equal(median(values), expected, equal_nan=True)
