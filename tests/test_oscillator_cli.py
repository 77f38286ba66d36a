"""``oneport oscillator``: manifests, their one-line errors, the CLI contract and the examples."""

from __future__ import annotations

import json
import math
import shutil
from pathlib import Path

import numpy as np
import pytest

from oneport.commands.outcome import exit_code
from oneport.errors import InputError
from oneport.products.oscillator import (
    OSCILLATOR_SCHEMA,
    read_device_description,
)

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples" / "oscillator"


def write_level(path: Path, points: int = 11, reference: float = 50.0, value: float = 0.3) -> None:
    rows = [f"# GHz S RI R {reference:g}"]
    rows += [f"{f:.4f} {value} 0.1" for f in np.linspace(1.0, 2.0, points)]
    path.write_text("\n".join(rows) + "\n")


def manifest(folder: Path, body: str) -> Path:
    path = folder / "device.toml"
    path.write_text(body)
    return path


def levels(*entries: str) -> str:
    return 'kind = "drive-levels"\n' + "".join(f"[[level]]\n{entry}\n" for entry in entries)


@pytest.fixture
def two_files(tmp_path: Path) -> Path:
    write_level(tmp_path / "a.s1p")
    write_level(tmp_path / "b.s1p", value=0.25)
    return tmp_path


@pytest.mark.parametrize(
    ("body", "key", "words"),
    [
        (levels('incident_power_dbm = -20\nfile = "a.s1p"'), "level", "only one drive level"),
        (
            levels(
                'incident_power_dbm = -20\nfile = "a.s1p"',
                'incident_power_dbm = -20\nfile = "b.s1p"',
            ),
            "level[1].incident_power_dbm",
            "repeats",
        ),
        (
            levels(
                'incident_power_dbm = -10\nfile = "a.s1p"',
                'incident_power_dbm = -20\nfile = "b.s1p"',
            ),
            "level[1].incident_power_dbm",
            "increasing order",
        ),
        (
            levels(
                'incident_power_dbm = -20\nfile = "a.s1p"',
                'incident_power_dbm = -10\nfile = "c.s1p"',
            ),
            "level[1].file",
            "no such file 'c.s1p'",
        ),
        (
            levels(
                'incident_power_dbm = -20\nfile = "a.s1p"', 'peak_voltage_v = 0.1\nfile = "b.s1p"'
            ),
            "level[1].peak_voltage_v",
            "same amplitude quantity",
        ),
        (
            levels('peak_voltage_v = -0.1\nfile = "a.s1p"', 'peak_voltage_v = 0.1\nfile = "b.s1p"'),
            "level[0].peak_voltage_v",
            "must be positive",
        ),
        (
            levels(
                'incident_power_dbm = -20\nfile = "a.s1p"',
                'incident_power_dbm = -10\nfiles = "b.s1p"',
            ),
            "level[1].files",
            "unknown key",
        ),
        ('kind = "drive-level"\n', "kind", "is not one of"),
        ('kind = "iv-curve"\nbias_voltage_v = 0.1\namplitude_max_v = 0.1\n', "iv", "missing"),
        (
            'kind = "iv-curve"\nbias_voltage_v = 0.1\n'
            "[iv]\npolynomial_coefficients = [0, -0.01, 0, 1]\n",
            "amplitude_max_v",
            "missing",
        ),
        (
            'kind = "iv-curve"\nbias_voltage_v = 0.1\namplitude_max_v = 0.1\n'
            '[iv]\nmodel = "gunn"\n',
            "iv.model",
            "not a known model",
        ),
        (
            'kind = "iv-curve"\nbias_voltage_v = 0.1\namplitude_max_v = 0.1\n'
            "[iv]\npolynomial_coefficients = [0, -0.01]\n"
            "[parasitics]\nseries_resistance_ohm = -1\n",
            "parasitics.series_resistance_ohm",
            "negative",
        ),
    ],
)
def test_manifest_errors_name_the_manifest_and_the_key(
    two_files: Path, body: str, key: str, words: str
) -> None:
    path = manifest(two_files, body)
    with pytest.raises(InputError) as caught:
        read_device_description(path)
    message = str(caught.value)
    assert message.startswith(f"{path}: {key}: ") and words in message
    assert "\n" not in message


def test_mismatched_grids_and_references_are_refused(two_files: Path) -> None:
    write_level(two_files / "short.s1p", points=7)
    write_level(two_files / "other.s1p", reference=75.0)
    for name, words in (("short.s1p", "frequency grid"), ("other.s1p", "reference 75 ohm")):
        path = manifest(
            two_files,
            levels(
                'incident_power_dbm = -20\nfile = "a.s1p"',
                f'incident_power_dbm = -10\nfile = "{name}"',
            ),
        )
        with pytest.raises(InputError, match=rf"level\[1\]\.file: .*{words}"):
            read_device_description(path)


def test_iv_table_is_read_with_its_header_and_checked(tmp_path: Path) -> None:
    voltage = np.linspace(0.0, 0.4, 41)
    rows = ["# a comment", "voltage_v,current_a", *(f"{v},{-0.01 * v + v**3}" for v in voltage)]
    (tmp_path / "iv.csv").write_text("\n".join(rows) + "\n")
    body = 'kind = "iv-curve"\nbias_voltage_v = 0.1\n[iv]\ntable = "iv.csv"\n'
    description = read_device_description(manifest(tmp_path, body))
    # The largest swing that stays in the table at this bias: min(0.1 - 0, 0.4 - 0.1).
    assert description.amplitude_max_v == pytest.approx(0.1)
    too_wide = manifest(tmp_path, body.replace("[iv]", "amplitude_max_v = 0.2\n[iv]"))
    with pytest.raises(InputError, match=r"amplitude_max_v: 0\.2 V takes the swing outside"):
        read_device_description(too_wide)
    (tmp_path / "iv.csv").write_text("voltage_v,current_a\n0,0\n0.2,1\n0.1,2\n0.3,3\n")
    with pytest.raises(InputError, match=r"iv.csv:4: voltage 0.1 does not increase"):
        read_device_description(manifest(tmp_path, body))


def test_bad_input_is_one_line_and_exit_2(two_files: Path) -> None:
    path = manifest(two_files, "kind = [unclosed\n")
    code, out, err = run_cli("oscillator", str(path), "--load", str(two_files / "a.s1p"))
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and "is not valid TOML" in err and str(path) in err


def test_json_contract_and_plot(tmp_path: Path) -> None:
    plot = tmp_path / "points.png"
    code, out, _ = run_cli(
        "oscillator",
        str(EXAMPLES / "hard_excitation.toml"),
        "--load",
        str(EXAMPLES / "load.s1p"),
        "--json",
        "--plot",
        str(plot),
    )
    data = json.loads(out)
    assert code == exit_code(data["verdict"]) == 3
    assert data["schema"] == OSCILLATOR_SCHEMA == "oneport.oscillator/2"
    assert data["verdict"] == "hard-excitation" and data["starts_from_noise"] is False
    for key in ("warnings", "cautions", "limits", "inputs", "form", "reasons"):
        assert key in data
    keys = {
        "frequency_hz",
        "amplitude_v",
        "amplitude_quantity",
        "load_power_w",
        "kurokawa_stable",
        "crossing_angle_deg",
        "decay_rate_per_s",
    }
    points = data["operating_points"]
    assert len(points) == 2 and all(keys <= set(point) for point in points)
    assert [p["kurokawa_stable"] for p in points] == [False, True]
    # Kurokawa-stable exactly when the crossing angle lies between 0 and 180 degrees.
    assert [0 < p["crossing_angle_deg"] < 180 for p in points] == [False, True]
    assert points[0]["amplitude_quantity"] == "port_peak_voltage"
    assert points[0]["drive_level"]["quantity"] == "junction_peak_voltage"
    assert set(points[0]["drive_level"]) == {"quantity", "value_v"}
    assert points[0]["reflection"]["reference_impedance_ohm"] == 50.0
    assert data["drive_range"]["low_v"] < data["drive_range"]["high_v"] == 0.4
    assert data["start_up"]["verdict"] == "stable" and data["start_up"]["encirclements"] == 0
    assert plot.stat().st_size > 10_000 and plot.read_bytes()[:4] == b"\x89PNG"


def test_drive_levels_in_incident_power_carry_watts_and_dbm() -> None:
    code, out, _ = run_cli(
        "oscillator",
        str(EXAMPLES / "drive_levels.toml"),
        "--load",
        str(EXAMPLES / "load.s1p"),
        "--json",
        "--include-arrays",
    )
    data = json.loads(out)
    assert code == 0 and data["verdict"] == "settles"
    assert data["drive_range"]["quantity"] == "incident_power"
    assert data["drive_range"]["low_dbm"] == pytest.approx(-38.0)
    # 1 mW is 0 dBm (definition of the dBm).
    assert data["drive_range"]["low_w"] == pytest.approx(1e-3 * 10 ** (-38 / 10))
    (point,) = data["operating_points"]
    assert point["drive_level"]["value_dbm"] == pytest.approx(
        10 * math.log10(point["drive_level"]["value_w"] / 1e-3)
    )
    (line,) = data["arrays"]["device_lines"]
    assert {"drive_levels_w", "amplitude_v", "total_admittance_s"} <= set(line)
    assert "admittance_s" in data["arrays"]["load"]
    device = data["inputs"][0]
    assert device["levels_dbm"][0] == -38.0 and device["level_quantity"] == "incident_power"


def test_unwritable_plot_is_refused_before_any_work(tmp_path: Path) -> None:
    for target, words in (
        (tmp_path / "missing" / "plot.png", "cannot be written (no folder"),
        (tmp_path / "plot.pdf", "give a file name ending in .png or .svg"),
    ):
        code, out, err = run_cli(
            "oscillator",
            str(EXAMPLES / "tunnel_diode.toml"),
            "--load",
            str(tmp_path / "no-such-load.s1p"),  # never read: the target is checked first
            "--quiet",
            "--plot",
            str(target),
        )
        assert code == 2 and out == "" and err.count("\n") == 1 and words in err


@pytest.mark.parametrize("name", ["tunnel_diode", "iv_table", "drive_levels"])
def test_examples_settle_at_the_same_point(name: str) -> None:
    # The three descriptions of the invented diode D2 are one device (generate.py): the drive
    # levels were computed from the same I-V curve, so they must agree.
    code, out, _ = run_cli(
        "oscillator", str(EXAMPLES / f"{name}.toml"), "--load", str(EXAMPLES / "load.s1p"), "--json"
    )
    data = json.loads(out)
    assert code == 0 and data["verdict"] == "settles"
    (point,) = data["operating_points"]
    assert point["frequency_hz"] == pytest.approx(2.1105e9, rel=2e-4)
    assert point["amplitude_v"] == pytest.approx(0.09712, rel=1e-3)
    assert point["load_power_w"] == pytest.approx(2.620e-5, rel=2e-3)
    # Start-up: the small-signal count finds the pair, and the rational fit locates it.
    (mode,) = data["start_up"]["natural_frequencies"]
    assert data["start_up"]["encirclements"] == 2 and mode["rhp"] and mode["trusted"]


def test_a_netlist_load_gives_the_touchstone_load_s_answer(tmp_path: Path) -> None:
    # load.cir and load.s1p describe one load (generate.py): 180 ohm with a 3.3 nH shunt.
    results = {}
    for load in ("load.s1p", "load.cir"):
        code, out, _ = run_cli(
            "oscillator",
            str(EXAMPLES / "drive_levels.toml"),
            "--load",
            str(EXAMPLES / load),
            "--json",
        )
        assert code == 0
        results[load] = json.loads(out)
    (a,), (b,) = (results[name]["operating_points"] for name in ("load.s1p", "load.cir"))
    assert a["frequency_hz"] == pytest.approx(b["frequency_hz"], rel=1e-6)
    assert a["amplitude_v"] == pytest.approx(b["amplitude_v"], rel=1e-5)
    assert results["load.cir"]["inputs"][1]["touchstone_version"] == "netlist"
    # An I-V description has no grid of its own: with a netlist load it must state its band.
    code, out, err = run_cli(
        "oscillator", str(EXAMPLES / "tunnel_diode.toml"), "--load", str(EXAMPLES / "load.cir")
    )
    assert code == 2 and out == "" and err.count("\n") == 1
    assert "frequency_start_hz, frequency_stop_hz" in err
    text = (
        (EXAMPLES / "tunnel_diode.toml")
        .read_text()
        .replace(
            "amplitude_max_v = 0.12",
            'amplitude_max_v = 0.12\nfrequency_start_hz = "1GHz"\nfrequency_stop_hz = "3GHz"',
        )
    )
    (tmp_path / "banded.toml").write_text(text)
    code, out, _ = run_cli(
        "oscillator", str(tmp_path / "banded.toml"), "--load", str(EXAMPLES / "load.cir"), "--json"
    )
    (point,) = json.loads(out)["operating_points"]
    assert code == 0 and point["amplitude_v"] == pytest.approx(0.09712, rel=1e-3)


@pytest.mark.parametrize(
    "value", ["-1e308", "1e999", "-1dB", "101dB", "nan", "inf", "twenty", "1e308"]
)
def test_injection_below_out_of_range_is_one_line(value: str) -> None:
    code, out, err = run_cli(
        "oscillator",
        str(EXAMPLES / "tunnel_diode.toml"),
        "--load",
        str(EXAMPLES / "load.s1p"),
        f"--injection-below={value}",
    )
    assert code == 2 and out == "" and err.count("\n") == 1
    assert err.startswith("oneport: --injection-below: ")


@pytest.mark.parametrize(
    ("old", "new", "key"),
    [
        ('series_inductance_h = "0.4nH"', "series_inductance_h = 1e308", "parasitics."),
        ('junction_capacitance_f = "1.5pF"', "junction_capacitance_f = 1e308", "parasitics."),
        ("series_resistance_ohm = 3", "series_resistance_ohm = 1e-308", "parasitics."),
        ("amplitude_max_v = 0.12", "amplitude_max_v = 5e-324", "amplitude_"),
        (
            "amplitude_max_v = 0.12",
            "amplitude_max_v = 0.12\namplitude_min_v = 1e-300",
            "amplitude_",
        ),
        ("emission_voltage_v = 0.03", "emission_voltage_v = 1e-308", "iv:"),
        ("peak_voltage_v = 0.065", "peak_voltage_v = 5e-324", "iv:"),
        ("peak_current_a = 0.002", "peak_current_a = 1e308", "iv:"),
    ],
)
def test_values_no_device_has_are_one_line(tmp_path: Path, old: str, new: str, key: str) -> None:
    # Each of these overflowed somewhere in the analysis (an infinite admittance, a zero
    # amplitude): now refused before any computing.
    text = (EXAMPLES / "tunnel_diode.toml").read_text()
    assert old in text
    path = manifest(tmp_path, text.replace(old, new))
    code, out, err = run_cli("oscillator", str(path), "--load", str(EXAMPLES / "load.s1p"))
    assert code == 2 and out == "" and err.count("\n") == 1
    assert err.startswith(f"oneport: {path}: {key}")


def test_text_report_puts_the_verdict_first_and_cautions_last(tmp_path: Path) -> None:
    shutil.copy(EXAMPLES / "load.s1p", tmp_path / "load.s1p")
    code, out, _ = run_cli(
        "oscillator", str(EXAMPLES / "tunnel_diode.toml"), "--load", str(tmp_path / "load.s1p")
    )
    assert code == 0
    assert out.startswith("SETTLES at one stable operating point")
    assert out.index("Limits of the method") < out.index("Cautions")
    assert "stiff DC bias" in out
