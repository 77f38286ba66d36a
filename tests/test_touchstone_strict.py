"""The reader never guesses silently, and its one parse gives scikit-rf's S to 1e-12.

Outside references, named beside each check: the Touchstone specification (IBIS Open Forum;
version 1.1 "Option Line" and "Data Lines", version 2.0 keywords, and the Touchstone Issue
Resolution Document 4.1, which states that [Two-Port Data Order] is required for two-ports), its
example files (``tests/data/touchstone-spec/``), TOML 1.0.0, and scikit-rf's Touchstone reader
(``skrf.Network.read_touchstone`` on files written here or shipped with the examples).
"""

from __future__ import annotations

import json
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pytest
import skrf

from oneport import FileFormatError, read_one_port
from oneport.reading import number_block
from oneport.reading.touchstone import (
    NO_OPTION_LINE,
    PORT_IMPEDANCE_COMMENTS,
    IncompleteFileError,
    read_touchstone,
)

from helpers import run_cli

ROOT = Path(__file__).resolve().parent.parent
SPEC = Path(__file__).resolve().parent / "data" / "touchstone-spec"
EXAMPLES = ROOT / "touchstone_examples"


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def refused(path: Path, line: int | None, *words: str) -> str:
    """The one-line refusal of ``path``; it names the line and holds every word."""
    with pytest.raises(FileFormatError) as caught:
        read_touchstone(path)
    message = str(caught.value)
    assert "\n" not in message
    assert caught.value.line == line, message
    for word in words:
        assert word.lower() in message.lower(), message
    return message


# --- option line (Touchstone 1.1, "Option Line") ------------------------------------------------


def test_a_file_without_an_option_line_is_read_with_the_defaults_and_says_so(tmp_path):
    # "If a parameter is missing it assumes the default value": GHz, S, MA, R 50 (Touchstone
    # 1.1, Option Line). The file carries the warning, with a stable code.
    port = read_one_port(write(tmp_path, "a.s1p", "! no option line\n1 0.5 90\n2 0.25 180\n"))
    np.testing.assert_allclose(port.frequency_hz, [1e9, 2e9], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [0.5j, -0.25], atol=1e-15)
    assert port.reference_impedance_ohm == 50.0
    assert [finding.code for finding in port.warnings] == [NO_OPTION_LINE]
    assert "GHz" in port.warnings[0].message and "MA" in port.warnings[0].message


def test_an_explicit_option_line_carries_no_warning(tmp_path):
    # A bare "#" is an option line with every entry at its default (Touchstone 1.1).
    assert read_one_port(write(tmp_path, "a.s1p", "#\n1 0.5 90\n")).warnings == ()


def test_the_no_option_line_warning_reaches_text_and_json(tmp_path):
    device = write(tmp_path, "device.s1p", "")
    body = read_one_port(EXAMPLES / "stable" / "device.s1p")
    pairs = zip(
        (body.frequency_hz / 1e9).tolist(),
        np.abs(body.gamma).tolist(),
        np.degrees(np.angle(body.gamma)).tolist(),
        strict=True,
    )
    lines = [f"{f!r} {m!r} {a!r}" for f, m, a in pairs]
    device.write_text("! no option line\n" + "\n".join(lines) + "\n")
    load = EXAMPLES / "stable" / "load.s1p"
    code, out, _ = run_cli("check", device, "--load", load, "--json")
    assert code in (0, 3, 4)
    codes = [warning["code"] for warning in json.loads(out)["warnings"]]
    assert NO_OPTION_LINE in codes
    message = next(w["message"] for w in json.loads(out)["warnings"] if w["code"] == NO_OPTION_LINE)
    code, out, _ = run_cli("check", device, "--load", load)
    assert " ".join(message.split()[:6]) in " ".join(out.split()), "the warning, in words"


def test_ri_data_without_an_option_line_are_refused_as_negative_magnitudes(tmp_path):
    # Read by the default MA, real parts below zero would be magnitudes below zero: impossible
    # (a magnitude is |x| >= 0, common practice), so the file is refused at that line.
    path = write(tmp_path, "a.s1p", "1 0.5 0.1\n2 -0.3 0.2\n")
    message = refused(path, 2, "magnitude -0.3 is negative", "no option line", "RI")
    assert message.startswith(f"{path}:2: ")


def test_negative_magnitudes_in_ma_data_are_refused(tmp_path):
    refused(write(tmp_path, "a.s1p", "# GHz S MA R 50\n1 0.5 10\n2 -0.01 20\n"), 3, "negative")
    # Z data in MA as well: a magnitude is never negative (Touchstone 1.1, format MA).
    refused(write(tmp_path, "z.s1p", "# GHz Z MA R 50\n1 -1 10\n"), 2, "negative")
    # DB levels may be negative: -6 dB is a magnitude of one half (20·log10|x|).
    port = read_one_port(write(tmp_path, "d.s1p", "# GHz S DB R 50\n1 -6.0206 0\n"))
    np.testing.assert_allclose(port.gamma, [0.5], atol=1e-5)


@pytest.mark.parametrize(
    ("option", "words"),
    [
        ("# GHz MHz S RI R 50", ("frequency unit twice", "GHz", "MHz")),
        ("# GHz GHz S RI R 50", ("frequency unit twice",)),
        ("# GHz S Z RI R 50", ("parameter twice",)),
        ("# GHz S RI MA R 50", ("format twice", "RI", "MA")),
        ("# GHz S RI R 50 R 75", ("reference R twice", "R 50", "R 75")),
        ("# GHz S RI RI", ("format twice",)),
    ],
)
def test_duplicated_or_contradictory_option_entries_are_refused(tmp_path, option, words):
    # Each entry of the option line says one thing (Touchstone 1.1, Option Line); "last one
    # wins" would be a guess.
    refused(write(tmp_path, "a.s1p", f"! c\n{option}\n1 0.5 0\n"), 2, *words)


def test_a_second_option_line_is_refused_with_its_line(tmp_path):
    # Touchstone 1.1 lets later option lines be ignored; two different statements about one
    # file's units cannot both hold, so a second one is refused (stricter than the text).
    text = "# GHz S RI R 50\n! c\n# MHz S MA R 75\n1 0.5 0\n"
    refused(write(tmp_path, "a.s1p", text), 3, "second option line", "line 1")


def test_an_option_line_after_the_data_is_refused_with_its_line(tmp_path):
    # "The option line must be the first non-comment line" before the data (Touchstone 1.1).
    text = "! c\n1 0.5 0\n2 0.4 0\n  # GHz S RI R 50\n"
    refused(write(tmp_path, "a.s1p", text), 4, "option line after the data")
    text = "# GHz S RI R 50\n1 0.5 0\n# GHz S RI R 50\n2 0.4 0\n"
    refused(write(tmp_path, "b.s1p", text), 3, "option line after the data", "line 1")


# --- 2.x keywords (Touchstone 2.0) --------------------------------------------------------------

TWO_PORT_HEAD = "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n"
TWO_PORT_ROW = "1 0.1 0 0.9 0.1 0.01 0 0.2 0\n"


def test_a_2x_two_port_without_its_data_order_is_refused(tmp_path):
    # [Two-Port Data Order] is required when [Number of Ports] is 2 (Touchstone 2.0 keyword
    # rules; TSIRD 4.1): reading it as 21_12 would swap S12 and S21 on a guess.
    path = write(tmp_path, "a.ts", TWO_PORT_HEAD + "[Network Data]\n" + TWO_PORT_ROW)
    refused(path, 3, "[Two-Port Data Order]", "12_21", "21_12")


@pytest.mark.parametrize(("order", "s21"), [("12_21", 0.01), ("21_12", 0.9 + 0.1j)])
def test_the_2x_two_port_data_order_is_honoured(tmp_path, order, s21):
    # 12_21: N11 N12 N21 N22; 21_12: N11 N21 N12 N22 (Touchstone 2.0, [Two-Port Data Order]).
    text = TWO_PORT_HEAD + f"[Two-Port Data Order] {order}\n[Network Data]\n" + TWO_PORT_ROW
    two_port = read_touchstone(write(tmp_path, "a.ts", text))
    assert two_port.s[1, 0, 0] == pytest.approx(s21)
    network = skrf.Network()
    network.read_touchstone(str(tmp_path / "a.ts"))  # scikit-rf reads the same order
    assert network.s[0, 1, 0] == pytest.approx(s21)


@pytest.mark.parametrize(
    ("extra", "line", "words"),
    [
        ("[Two-Port Data Order] 12-21\n", 4, ("12_21",)),
        ("[Number of Ports] 2\n", 4, ("given twice", "line 3")),
        ("[Number Of Pins] 2\n", 4, ("not a Touchstone keyword",)),
        ("[End Information]\n", 4, ("without [Begin Information]",)),
        ("[Number of Ports] 2\n[Mixed-Mode Order] D1,2 C1,2\n", 4, ("given twice",)),
    ],
)
def test_keyword_mistakes_are_refused_with_their_line(tmp_path, extra, line, words):
    text = TWO_PORT_HEAD + extra + "[Two-Port Data Order] 12_21\n[Network Data]\n" + TWO_PORT_ROW
    if "12-21" in extra:
        text = TWO_PORT_HEAD + extra + "[Network Data]\n" + TWO_PORT_ROW
    refused(write(tmp_path, "a.ts", text), line, *words)


def test_keywords_after_the_data_are_refused(tmp_path):
    text = TWO_PORT_HEAD + "[Two-Port Data Order] 12_21\n[Network Data]\n" + TWO_PORT_ROW
    refused(write(tmp_path, "a.ts", text + "[Number of Frequencies] 1\n"), 7, "after the network")


def test_mixed_mode_files_are_refused_not_misread(tmp_path):
    # ex_16.ts (Touchstone specification example) orders its ports by [Mixed-Mode Order];
    # reading it single-ended would mislabel every port.
    refused(SPEC / "ex_16.ts", 8, "[Mixed-Mode Order]")


def test_a_2x_file_short_of_its_declared_frequencies_is_incomplete(tmp_path):
    # [Number of Frequencies] states the count (Touchstone 2.0). Short without [End]: maybe
    # still being written (IncompleteFileError); short with [End]: simply wrong.
    head = "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 3\n"
    body = "[Network Data]\n1 0.1 0\n2 0.1 0\n"
    with pytest.raises(IncompleteFileError):
        read_one_port(write(tmp_path, "a.ts", head + body))
    with pytest.raises(FileFormatError) as caught:
        read_one_port(write(tmp_path, "b.ts", head + body + "[End]\n"))
    assert not isinstance(caught.value, IncompleteFileError)


# --- port-impedance comments ----------------------------------------------------------------------


def test_port_impedance_comments_are_ignored_and_reported(tmp_path):
    # Comments carry no data (Touchstone 1.1/2.0, comments); scikit-rf's reader uses them as
    # per-frequency reference impedances. oneport reads the data in R as the option line says,
    # and the warning names what was not used and what was.
    text = "# GHz S RI R 50\n1 0.2 0.1\n! Port Impedance 30 0\n2 0.3 0.1\n! Port Impedance 31 -1\n"
    port = read_one_port(write(tmp_path, "a.s1p", text))
    assert port.reference_impedance_ohm == 50.0
    np.testing.assert_allclose(port.gamma, [0.2 + 0.1j, 0.3 + 0.1j], rtol=0)
    (finding,) = port.warnings
    assert finding.code == PORT_IMPEDANCE_COMMENTS
    assert finding.context["reference_impedance_ohm"] == [50.0]
    assert "50 ohm" in finding.message and "lines 3-5" in finding.message
    # scikit-rf refers the same numbers to the commented impedances: a different Γ in 50 Ω.
    network = skrf.Network()
    network.read_touchstone(str(tmp_path / "a.s1p"))
    assert network.z0[0, 0] == pytest.approx(30.0)


def test_port_impedance_comments_equal_to_the_reference_need_no_warning(tmp_path):
    text = "# GHz S RI R 50\n1 0.2 0.1\n! Port Impedance 50 0\n2 0.3 0.1\n! Port Impedance 50 0\n"
    assert read_one_port(write(tmp_path, "a.s1p", text)).warnings == ()


# --- the one parse: scikit-rf's S to 1e-12 -------------------------------------------------------

SPEC_READABLE = [
    "ex_2.ts",
    "ex_3.ts",
    "ex_4.ts",
    "ex_5.ts",
    "ex_6.ts",
    "ex_7.ts",
    "ex_8.s1p",
    "ex_9.s1p",
    "ex_10.ts",
    "ex_13.s2p",
    "ex_14.s4p",
    "ex_17.ts",
    "ex_18.s2p",
]


def skrf_network(path: Path) -> skrf.Network:
    """scikit-rf's reading of a text file (never Network(path), which tries pickle first)."""
    network = skrf.Network()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # its own remarks on the files
        network.read_touchstone(str(path))
    return network


@pytest.mark.parametrize("name", SPEC_READABLE)
def test_specification_examples_read_as_scikit_rf_reads_them(name):
    # Touchstone specification examples; scikit-rf's reader as the reference, to 1e-12.
    ours = read_touchstone(SPEC / name)
    theirs = skrf_network(SPEC / name)
    np.testing.assert_allclose(ours.frequency_hz, theirs.f, rtol=1e-15)
    np.testing.assert_allclose(ours.reference_impedance_ohm, theirs.z0[0].real, rtol=0)
    np.testing.assert_allclose(np.moveaxis(ours.s, -1, 0), theirs.s, rtol=1e-12, atol=1e-12)


def random_file(rng: np.random.Generator, folder: Path, index: int) -> tuple[Path, Path]:
    """A random Touchstone file and the file scikit-rf is to read for the same network.

    Random impedance matrices (passive and not) written as S, Z or Y in RI, MA or DB, version
    1.x or 2.0, 1 to 4 ports, references 10 to 100 ohm. scikit-rf 2.2 scales 1.x Y data by R
    instead of reading y = Y·R, so for those it reads the 2.0 twin holding the same network.
    """
    ports = int(rng.integers(1, 5))
    parameter = str(rng.choice(["S", "Z", "Y"]))
    number_format = str(rng.choice(["RI", "MA", "DB"]))
    version = str(rng.choice(["1.x", "2.0"]))
    points = int(rng.integers(1, 40))
    frequency = np.cumsum(rng.uniform(0.01, 1.0, points))
    z = rng.normal(size=(points, ports, ports)) + 1j * rng.normal(size=(points, ports, ports))
    z = 40.0 * (z + 3.0 * np.eye(ports))
    references = rng.uniform(10, 100, ports) if version == "2.0" else np.full(ports, 50.0)
    texts = {
        v: _text(frequency, z, references, ports, parameter, number_format, v)
        for v in ("1.x", "2.0")
    }
    suffix = f".s{ports}p" if version == "1.x" else ".ts"
    path = folder / f"r{index}{suffix}"
    path.write_text(texts[version])
    twin = path
    if version == "1.x" and parameter == "Y":
        twin = folder / f"r{index}_twin.ts"
        twin.write_text(texts["2.0"])
    return path, twin


def _text(frequency, z, references, ports, parameter, number_format, version) -> str:
    root = np.sqrt(references)
    normalised = z / np.outer(root, root)
    identity = np.eye(ports)
    if parameter == "S":
        # S = (z̃ − I)(z̃ + I)⁻¹ (common practice; the two factors commute)
        values = (normalised - identity) @ np.linalg.inv(normalised + identity)
    elif parameter == "Z":
        values = normalised if version == "1.x" else z
    else:
        values = np.linalg.inv(normalised) if version == "1.x" else np.linalg.inv(z)
    if version == "1.x" and ports == 2:
        values = values.transpose(0, 2, 1)  # N11 N21 N12 N22
    flat = values.reshape(values.shape[0], -1)
    if number_format == "RI":
        pairs = np.stack([flat.real, flat.imag], axis=-1)
    else:
        first = np.abs(flat) if number_format == "MA" else 20 * np.log10(np.abs(flat))
        pairs = np.stack([first, np.degrees(np.angle(flat))], axis=-1)
    rows = [
        " ".join(repr(x) for x in [f, *row.ravel().tolist()])
        for f, row in zip(frequency.tolist(), pairs, strict=True)
    ]
    if version == "1.x":
        return f"# GHz {parameter} {number_format} R 50\n" + "\n".join(rows) + "\n"
    head = [
        "[Version] 2.0",
        f"# GHz {parameter} {number_format}",
        f"[Number of Ports] {ports}",
        f"[Number of Frequencies] {len(rows)}",
        "[Reference] " + " ".join(repr(r) for r in references.tolist()),
    ]
    if ports == 2:
        head.append("[Two-Port Data Order] 12_21")
    return "\n".join([*head, "[Network Data]", *rows, "[End]"]) + "\n"


def test_random_files_read_as_scikit_rf_reads_them(tmp_path):
    # 60 random networks, every parameter, format and version: the same S as scikit-rf's
    # reader to 1e-12 (relative to the largest entry), the same frequencies and references.
    rng = np.random.default_rng(20261202)
    for index in range(60):
        path, twin = random_file(rng, tmp_path, index)
        ours = read_touchstone(path)
        theirs = skrf_network(twin)
        where = f"{path.name}: {path.read_text().splitlines()[:2]}"
        np.testing.assert_allclose(ours.frequency_hz, theirs.f, rtol=1e-15, err_msg=where)
        np.testing.assert_allclose(ours.reference_impedance_ohm, theirs.z0[0].real, rtol=1e-15)
        scale = max(1.0, float(np.abs(theirs.s).max()))
        np.testing.assert_allclose(
            np.moveaxis(ours.s, -1, 0), theirs.s, rtol=1e-12, atol=1e-12 * scale, err_msg=where
        )


PIECE_BYTES = 4096  # pieces this small make a file of many pieces quick to write and read


def test_a_file_spanning_many_pieces_reads_as_scikit_rf_reads_it(tmp_path, monkeypatch):
    # The bulk reader works on pieces of PIECE_BYTES; a file of many pieces, with comments
    # and blank lines scattered through the data, reads as scikit-rf reads it.
    monkeypatch.setattr(number_block, "PIECE_BYTES", PIECE_BYTES)
    rng = np.random.default_rng(7)
    points = 30 * PIECE_BYTES // 40
    frequency = np.cumsum(rng.uniform(0.1, 1.0, points))
    values = rng.normal(size=(points, 2))
    pairs = zip(frequency.tolist(), values.tolist(), strict=True)
    lines = [f"{f!r} {a!r} {b!r}" for f, (a, b) in pairs]
    for position in rng.choice(points, 50, replace=False):
        lines[position] += " ! remark"
    for position in sorted(rng.integers(0, points, 20), reverse=True):
        lines.insert(int(position), "")
    path = write(tmp_path, "big.s1p", "# MHz S RI R 50\n" + "\n".join(lines) + "\n")
    assert path.stat().st_size > 20 * PIECE_BYTES
    ours = read_one_port(path)
    theirs = skrf_network(path)
    np.testing.assert_allclose(ours.frequency_hz, theirs.f, rtol=1e-15)
    np.testing.assert_allclose(ours.gamma, theirs.s[:, 0, 0], rtol=1e-12, atol=1e-12)
    assert ours.comments.count("remark") == 50


@pytest.mark.parametrize(
    ("token", "words"),
    [
        ("1e999", "not finite"),
        ("1.2.3", "'1.2.3' is not a number"),
        ("1-2", "'1-2' is not a number"),
        ("0x1p3", "'0x1p3' is not a number"),
        ("1\u00a00.5", "U+00A0 (NO-BREAK SPACE)"),
    ],
)
def test_a_bad_token_deep_in_a_large_file_is_named_with_its_line(
    tmp_path, monkeypatch, token, words
):
    # The bulk path finds that a piece is bad; the line-by-line reader names line and token.
    monkeypatch.setattr(number_block, "PIECE_BYTES", PIECE_BYTES)
    lines = [f"{k + 1} 0.5 0" for k in range(30 * PIECE_BYTES // 12)]
    bad = len(lines) - 17
    lines[bad] = f"{bad + 1} {token} 0"
    path = write(tmp_path, "a.s1p", "# MHz S RI R 50\n" + "\n".join(lines) + "\n")
    with pytest.raises(FileFormatError) as caught:
        read_one_port(path)
    assert caught.value.line == bad + 2
    assert words in str(caught.value)


# --- imports only where needed (issue 16) ---------------------------------------------------------


def test_plain_files_need_neither_scikit_rf_nor_the_circuit_package():
    # A check of two Touchstone files, in a fresh interpreter with warnings as errors: exit 0,
    # nothing on stderr (no scikit-rf warning can leak: scikit-rf is never imported), and
    # neither skrf nor oneport.circuit in sys.modules.
    program = (
        "import io, sys\n"
        "from oneport.cli import main\n"
        "out = io.StringIO()\n"
        f"code = main(['check', {str(EXAMPLES / 'stable' / 'device.s1p')!r}, '--load',"
        f" {str(EXAMPLES / 'stable' / 'load.s1p')!r}, '--json'], stdout=out)\n"
        "print(code, 'skrf' in sys.modules, 'oneport.circuit' in sys.modules)\n"
    )
    done = subprocess.run(
        [sys.executable, "-W", "error", "-c", program],
        capture_output=True,
        text=True,
        timeout=120,
        check=False,
    )
    assert done.stderr == ""
    assert done.stdout.split() == ["0", "False", "False"]


@pytest.mark.parametrize(
    ("text", "line", "wanted"),
    [
        ("# GHz S RI R 50\n1 0.5 0.1\n2 1e308 0.2\n", 3, "magnitude 1e+308 is not a measurement"),
        ("# GHz S MA R 50\n1 0.5 10\n2 3e20 20\n", 3, "magnitude 3e+20 is not a measurement"),
        ("# GHz S DB R 50\n1 -6 0\n2 401 0\n", 3, "beyond 400 dB"),
    ],
)
def test_values_no_measurement_gives_are_refused(tmp_path, text: str, line: int, wanted: str):
    # One bound for every format: magnitudes up to 1e20 (a DB level of 400 dB). Beyond it the
    # arithmetic of a check (products of a few reflections) would overflow double precision
    # (IEEE 754 binary64 reaches about 1.8e308) and no VNA reads such a value (common practice).
    path = write(tmp_path, "loud.s1p", text)
    with pytest.raises(FileFormatError, match=wanted.replace("+", r"\+")) as caught:
        read_one_port(path)
    assert f":{line}:" in str(caught.value)
    port = read_one_port(write(tmp_path, "ok.s1p", "# GHz S RI R 50\n1 1e19 0\n2 0.5 0\n"))
    assert abs(port.gamma[0]) == 1e19, "just inside the bound is read as written"


def test_a_network_in_memory_meets_the_same_bound():
    # The API's scikit-rf door: S beyond 1e20 in magnitude is refused as a file's value is.
    from oneport.reading.touchstone import one_port_from_network

    frequency = skrf.Frequency(1, 2, 2, unit="GHz")
    loud = skrf.Network(frequency=frequency, s=np.array([0.5, 2e20], dtype=complex), z0=50)
    with pytest.raises(FileFormatError, match=r"exceed 1e\+20 in magnitude"):
        one_port_from_network(loud, "in memory")
