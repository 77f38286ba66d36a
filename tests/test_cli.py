"""The command line, run in-process with injected streams (and once or twice as a subprocess).

Expected verdicts come from the shipped examples' READMEs (``touchstone_examples/*/README.md``,
ground truth from numpy.roots of the circuits); exit codes and JSON keys from CONVENTIONS.md.
"""

from __future__ import annotations

import functools
import hashlib
import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from helpers import run_cli

PROJECT = Path(__file__).resolve().parents[1]
EXAMPLES = PROJECT / "touchstone_examples"

# CONVENTIONS.md: stable 0, unstable 3, inconclusive 4; bad input 2.
EXIT_CODES = {"stable": 0, "unstable": 3, "inconclusive": 4}
BAD_INPUT = 2

# Expected verdict per shipped example (touchstone_examples/README.md and each folder's README).
EXPECTED_VERDICTS = {
    "stable": "stable",
    "oscillates": "unstable",
    "latch-up": "unstable",
    "undecidable": "inconclusive",
}

REQUIRED_KEYS = {
    "schema",
    "verdict",
    "reasons",
    "encirclements",
    "oscillation_frequencies_hz",
    "latch_up",
    "crossings",
    "bands",
    "margins",
    "warnings",
    "cautions",
    "inputs",
    "frequency_range_hz",
    "reference_impedance_ohm",
}


def example_files(name: str) -> tuple[Path, Path]:
    folder = EXAMPLES / name
    loads = sorted(folder.glob("load.*"))
    if not (folder / "device.s1p").is_file() or len(loads) != 1:
        pytest.fail(f"{folder}: expected device.s1p and exactly one load.* file")
    return folder / "device.s1p", loads[0]


@functools.cache
def json_result(name: str) -> tuple[int, dict, str]:
    device, load = example_files(name)
    code, out, err = run_cli("check", device, "--load", load, "--json")
    return code, json.loads(out), err


def assert_one_line_error(code: int, out: str, err: str) -> None:
    assert code == BAD_INPUT, (code, out, err)
    assert "Traceback" not in err and "Traceback" not in out
    assert err.endswith("\n")
    assert len(err.splitlines()) == 1, err
    assert err.strip()
    assert out == ""


# --- verdicts and exit codes on the shipped examples --------------------------------------------


@pytest.mark.parametrize("name", list(EXPECTED_VERDICTS))
def test_exit_code_matches_the_verdict(name):
    device, load = example_files(name)
    code, out, err = run_cli("check", device, "--load", load)
    expected = EXPECTED_VERDICTS[name]
    assert code == EXIT_CODES[expected], out + err
    assert err == ""
    assert expected.upper() in out.splitlines()[0]  # the verdict first (CONVENTIONS.md)
    json_code, data, _ = json_result(name)
    assert data["verdict"] == expected
    assert json_code == code


def test_stable_example():
    _, data, _ = json_result("stable")
    # stable/README.md: R_T = 34 Ω inside the window 10 Ω < R_T < 80 Ω, no RHP root.
    assert data["encirclements"] == 0
    assert data["latch_up"] is False
    assert data["oscillation_frequencies_hz"] == []


def readme_oscillation_frequency_hz(name: str) -> float:
    text = (EXAMPLES / name / "README.md").read_text(encoding="utf-8")
    match = re.search(r"oscillation frequency:\s*([0-9.]+)\s*GHz", text)
    if match is None:
        pytest.fail(f"{name}/README.md states no 'oscillation frequency: ... GHz'")
    return float(match.group(1)) * 1e9


def test_oscillates_example_predicts_the_rhp_root_frequency():
    _, data, _ = json_result("oscillates")
    # oscillates/README.md: a complex RHP pair (numpy.roots), N = 2, at the stated frequency.
    assert data["encirclements"] == 2
    assert data["latch_up"] is False
    expected = readme_oscillation_frequency_hz("oscillates")
    frequencies = data["oscillation_frequencies_hz"]
    assert len(frequencies) == 1
    # The crossing frequency estimates Im(s)/2π of a root with Re s > 0, in a Z0-dependent loop
    # gain: near, not equal (5 %; common practice for a small-signal estimate).
    assert abs(frequencies[0] - expected) < 0.05 * expected, (frequencies, expected)
    assert data["crossings"], "an oscillating loop crosses the real axis beyond +1"


def test_latch_up_example_has_an_odd_count_and_no_frequency():
    _, data, _ = json_result("latch-up")
    # latch-up/README.md: one real RHP root (numpy.roots); CONVENTIONS.md: a real root has no
    # frequency and is reported as latch_up: true.
    assert data["latch_up"] is True
    assert isinstance(data["encirclements"], int)
    assert data["encirclements"] % 2 == 1
    assert data["oscillation_frequencies_hz"] == []


def test_undecidable_example_is_inconclusive_and_says_what_would_decide():
    _, data, _ = json_result("undecidable")
    # undecidable/README.md: the curve's closure towards DC cannot be read from data starting at
    # 200 MHz; CONVENTIONS.md: inconclusive has encirclements null and says what would decide.
    assert data["encirclements"] is None
    assert data["reasons"]
    advice = " ".join(data.get("next_steps", []) + data["reasons"]).lower()
    assert "extend" in advice or "dc resistance" in advice, advice


# --- the JSON object ----------------------------------------------------------------------------


@pytest.mark.parametrize("name", list(EXPECTED_VERDICTS))
def test_json_has_the_schema_keys(name):
    code, data, err = json_result(name)
    assert err == ""
    assert code == EXIT_CODES[data["verdict"]]
    assert data.keys() >= REQUIRED_KEYS, REQUIRED_KEYS - data.keys()
    assert data["schema"] == "oneport.check/3"
    assert data["verdict"] in EXIT_CODES
    assert isinstance(data["reasons"], list) and data["reasons"]
    assert all(isinstance(reason, str) and reason for reason in data["reasons"])
    assert isinstance(data["cautions"], list) and data["cautions"]
    assert all(isinstance(caution, str) and caution for caution in data["cautions"])
    assert isinstance(data["oscillation_frequencies_hz"], list)
    for warning in data["warnings"]:
        assert re.fullmatch(r"[a-z0-9]+(-[a-z0-9]+)*", warning["code"]), warning
        assert isinstance(warning["message"], str) and warning["message"]
    low, high = data["frequency_range_hz"]
    assert 0 <= low < high
    assert data["reference_impedance_ohm"] == 50.0  # every device file is "# GHz S RI R 50"


@pytest.mark.parametrize("name", list(EXPECTED_VERDICTS))
def test_json_inputs_name_the_files_and_their_sha256(name):
    _, data, _ = json_result(name)
    device, load = example_files(name)
    assert len(data["inputs"]) == 2
    for record, path in zip(data["inputs"], (device, load), strict=True):
        assert Path(record["path"]) == path
        assert record["sha256"] == hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.mark.parametrize("name", list(EXPECTED_VERDICTS))
def test_every_z0_dependent_object_states_its_reference(name):
    # CONVENTIONS.md: every figure that depends on the reference impedance sits in an object
    # that states reference_impedance_ohm.
    _, data, _ = json_result(name)
    z0 = data["reference_impedance_ohm"]
    objects = [*data["crossings"], *data["bands"], data["margins"]]
    for item in objects:
        assert item["reference_impedance_ohm"] == z0, item


def test_z0_dependent_objects_are_present_in_the_examples():
    # So that the check above is not vacuous: crossings and bands do occur.
    crossings = sum(len(json_result(name)[1]["crossings"]) for name in EXPECTED_VERDICTS)
    bands = sum(len(json_result(name)[1]["bands"]) for name in EXPECTED_VERDICTS)
    assert crossings > 0
    assert bands > 0


def test_a_75_ohm_load_is_analysed_in_the_devices_50_ohm():
    # oscillates/load.s1p is "# GHz Z MA R 75" (its README): the load is brought to the device's
    # measurement impedance, never the reverse.
    _, data, _ = json_result("oscillates")
    device, load = data["inputs"]
    assert load["reference_impedance_ohm"] == {"as_measured": 75.0, "as_analysed": 50.0}
    assert device["reference_impedance_ohm"] == {"as_measured": 50.0, "as_analysed": 50.0}
    assert data["reference_impedance_ohm"] == 50.0


def test_warnings_carry_code_and_message(tmp_path):
    # A load that covers only part of the device's band: device points are dropped, with a
    # warning (never extrapolated).
    device, load = example_files("stable")
    lines = load.read_text(encoding="utf-8").splitlines()
    kept = []
    for line in lines:
        fields = line.split()
        is_data = fields and not line.startswith(("!", "#"))
        if is_data and not 100.0 <= float(fields[0]) <= 5000.0:  # MHz, from the option line
            continue
        kept.append(line)
    short_load = tmp_path / "load.s1p"
    short_load.write_text("\n".join(kept) + "\n", encoding="utf-8")
    code, out, err = run_cli("check", device, "--load", short_load, "--json")
    data = json.loads(out)
    assert code == EXIT_CODES[data["verdict"]], err
    assert data["warnings"]
    for warning in data["warnings"]:
        assert re.fullmatch(r"[a-z0-9]+(-[a-z0-9]+)*", warning["code"]), warning
        assert isinstance(warning["message"], str) and warning["message"]
    low, high = data["frequency_range_hz"]
    assert low >= 100e6 and high <= 5000e6  # analysed inside the load's band only


def test_measurement_impedance_renormalises_the_device():
    device, load = example_files("stable")
    code, out, _ = run_cli(
        "check", device, "--load", load, "--json", "--measurement-impedance", "75ohm"
    )
    data = json.loads(out)
    assert code == EXIT_CODES[data["verdict"]]
    assert data["reference_impedance_ohm"] == 75.0
    assert data["inputs"][0]["reference_impedance_ohm"] == {
        "as_measured": 50.0,
        "as_analysed": 75.0,
    }
    assert all(
        item["reference_impedance_ohm"] == 75.0 for item in [*data["bands"], data["margins"]]
    )
    assert any(warning["code"] == "device-renormalised" for warning in data["warnings"])


def test_measurement_impedance_equal_to_the_files_changes_nothing():
    device, load = example_files("stable")
    code, out, _ = run_cli(
        "check", device, "--load", load, "--json", "--measurement-impedance", "50ohm"
    )
    data = json.loads(out)
    plain = json_result("stable")[1]
    assert code == 0
    assert data["verdict"] == plain["verdict"]
    assert data["encirclements"] == plain["encirclements"]
    assert data["reference_impedance_ohm"] == 50.0
    assert not any(warning["code"] == "device-renormalised" for warning in data["warnings"])


def test_include_arrays_adds_the_arrays_with_their_reference():
    device, load = example_files("stable")
    code, out, _ = run_cli("check", device, "--load", load, "--json", "--include-arrays")
    arrays = json.loads(out)["arrays"]
    assert code == 0
    assert arrays["reference_impedance_ohm"] == 50.0
    size = len(arrays["frequency_hz"])
    assert size > 0
    for key in ("gamma_device", "gamma_load", "loop_gain"):
        assert len(arrays[key]) == size
        assert set(arrays[key][0]) == {"re", "im"}  # complex as {"re", "im"} (CONVENTIONS.md)


def test_arrays_are_left_out_unless_asked():
    assert "arrays" not in json_result("stable")[1]


# --- --quiet ------------------------------------------------------------------------------------


@pytest.mark.parametrize("name", list(EXPECTED_VERDICTS))
def test_quiet_prints_one_line(name):
    device, load = example_files(name)
    code, out, err = run_cli("check", device, "--load", load, "--quiet")
    assert code == EXIT_CODES[EXPECTED_VERDICTS[name]]
    assert err == ""
    assert len(out.splitlines()) == 1
    assert EXPECTED_VERDICTS[name].upper() in out


# --- bad input: exit 2, one line on stderr, no traceback ----------------------------------------


@pytest.fixture
def files(tmp_path):
    """Small valid and invalid files for the error cases."""
    device, load = example_files("stable")
    made = {"device": device, "load": load}
    made["garbage"] = tmp_path / "garbage.s1p"
    made["garbage"].write_text("# GHz S RI R 50\n1 0.1 zero\n", encoding="utf-8")
    made["binary"] = tmp_path / "binary.s1p"
    made["binary"].write_bytes(b"\x80\x04\x95 not a touchstone file\x00")
    made["two_port"] = tmp_path / "two.s2p"
    made["two_port"].write_text(
        "# GHz S MA R 50\n1 0.5 10 0.9 -20 0.9 -20 0.5 10\n2 0.5 11 0.9 -21 0.9 -21 0.5 11\n",
        encoding="utf-8",
    )
    data = "".join(f"{1 + 0.1 * i:.1f} 0.2 0.1\n" for i in range(11))
    made["low_band"] = tmp_path / "low.s1p"
    made["low_band"].write_text("# GHz S RI R 50\n" + data, encoding="utf-8")  # 1-2 GHz
    made["high_band"] = tmp_path / "high.s1p"
    high = "".join(f"{3 + 0.1 * i:.1f} 0.2 0.1\n" for i in range(11))
    made["high_band"].write_text("# GHz S RI R 50\n" + high, encoding="utf-8")  # 3-4 GHz
    made["missing"] = tmp_path / "missing.s1p"
    return made


BAD_INPUTS = {
    # case: (argv with {name} placeholders, a text the error line must contain)
    "bad device file": (["check", "{garbage}", "--load", "{load}"], "{garbage}:2"),
    "bad load file": (["check", "{device}", "--load", "{garbage}"], "{garbage}:2"),
    "binary device file": (["check", "{binary}", "--load", "{load}"], "{binary}"),
    "two-port device": (["check", "{two_port}", "--load", "{load}"], "one-port"),
    "missing device file": (["check", "{missing}", "--load", "{load}"], "{missing}"),
    "missing load file": (["check", "{device}", "--load", "{missing}"], "{missing}"),
    "device is a folder": (["check", "{folder}", "--load", "{load}"], "{folder}"),
    "measurement impedance abc": (
        ["check", "{device}", "--load", "{load}", "--measurement-impedance", "abc"],
        "--measurement-impedance",
    ),
    "measurement impedance wrong unit": (
        ["check", "{device}", "--load", "{load}", "--measurement-impedance", "50GHz"],
        "50GHz",
    ),
    "measurement impedance zero": (
        ["check", "{device}", "--load", "{load}", "--measurement-impedance", "0ohm"],
        "positive",
    ),
    "measurement impedance negative": (
        ["check", "{device}", "--load", "{load}", "--measurement-impedance", "-50"],
        "-50",
    ),
    "missing --load": (["check", "{device}"], "--load"),
    "missing device": (["check", "--load", "{load}"], "device"),
    "no overlap": (["check", "{low_band}", "--load", "{high_band}"], "{high_band}"),
    "--json with --quiet": (
        ["check", "{device}", "--load", "{load}", "--json", "--quiet"],
        "not allowed",
    ),
    "unknown option": (["check", "{device}", "--load", "{load}", "--colour"], "--colour"),
    "unknown command": (["fly", "{device}"], "fly"),
}


@pytest.mark.parametrize("case", list(BAD_INPUTS))
def test_bad_input_exits_2_with_one_line(files, tmp_path, case):
    files["folder"] = tmp_path
    argv, must_contain = BAD_INPUTS[case]
    code, out, err = run_cli(*(arg.format(**files) for arg in argv))
    assert_one_line_error(code, out, err)
    assert must_contain.format(**files) in err, err


def test_bad_input_with_json_prints_no_json(files):
    code, out, err = run_cli("check", files["garbage"], "--load", files["load"], "--json")
    assert_one_line_error(code, out, err)


def test_version_prints_the_version():
    code, out, err = run_cli("--version")
    assert code == 0
    assert re.fullmatch(r"oneport \d+\.\d+\.\d+\S*\n", out)
    assert err == ""


# --- as a program -------------------------------------------------------------------------------


def run_program(*argv: str | Path) -> subprocess.CompletedProcess:
    return subprocess.run(
        [str(a) for a in argv], capture_output=True, text=True, timeout=60, cwd=PROJECT
    )


def test_python_m_oneport_help():
    done = run_program(sys.executable, "-m", "oneport", "--help")
    assert done.returncode == 0, done.stderr
    assert "usage: oneport" in done.stdout
    assert "check" in done.stdout


def test_check_help_shows_an_example_line():
    # CONVENTIONS.md: --help on every command shows an example line.
    done = run_program(sys.executable, "-m", "oneport", "check", "--help")
    assert done.returncode == 0, done.stderr
    examples = re.search(r"^examples?:\s*\n?\s*(oneport check .+)$", done.stdout, re.MULTILINE)
    assert examples, done.stdout


def test_python_m_oneport_exit_codes_reach_the_shell(files):
    device, load = example_files("oscillates")
    done = run_program(sys.executable, "-m", "oneport", "check", device, "--load", load, "-q")
    assert done.returncode == 3, done.stderr
    assert len(done.stdout.splitlines()) == 1
    done = run_program(sys.executable, "-m", "oneport", "check", files["missing"], "--load", load)
    assert done.returncode == BAD_INPUT
    assert len(done.stderr.splitlines()) == 1
    assert "Traceback" not in done.stderr


def test_console_script():
    script = shutil.which("oneport", path=str(Path(sys.executable).parent))
    if script is None:
        pytest.skip("the oneport console script is not installed next to this Python")
    done = run_program(script, "--help")
    assert done.returncode == 0, done.stderr
    assert "usage: oneport" in done.stdout
    device, load = example_files("stable")
    done = run_program(script, "check", device, "--load", load, "--quiet")
    assert done.returncode == 0, done.stderr
    assert "STABLE" in done.stdout
