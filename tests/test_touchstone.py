"""The Touchstone reader: right values from every encoding, one-line refusals, never unpickling.

Outside references, named beside each check: the Touchstone specification's example files
(IBIS Open Forum, versions 1.x and 2.0, as collected in scikit-rf's parser tests, copied with
their licence into ``tests/data/touchstone-spec/``), the
option-line values of METHODS §7, and scikit-rf's own Touchstone reader on files written here.
"""

from __future__ import annotations

import cmath
import math
import pathlib
import pickle
import tempfile
from pathlib import Path

import numpy as np
import pytest
import skrf
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from oneport import FileFormatError, OnePort, read_one_port
from oneport.reading.alignment import renormalise

from helpers import mutate_lines

SPEC_EXAMPLES = Path(__file__).resolve().parent / "data" / "touchstone-spec"


def spec_file(name: str) -> Path:
    """A Touchstone specification example file (tests/data/touchstone-spec/, in the repository)."""
    path = SPEC_EXAMPLES / name
    assert path.is_file(), f"{path} is missing from the repository"
    return path


def impedance(port: OnePort) -> np.ndarray:
    """Z = R (1 + Γ) / (1 − Γ), the impedance a reflection stands for (common practice)."""
    r = port.reference_impedance_ohm
    return r * (1 + port.gamma) / (1 - port.gamma)


def polar(magnitude: float, angle_deg: float) -> complex:
    return cmath.rect(magnitude, math.radians(angle_deg))


def assert_one_line_error(error: FileFormatError, path: Path, line: int | None) -> None:
    message = str(error)
    assert "\n" not in message
    assert message.startswith(str(path))
    assert error.line == line, f"expected line {line}, got {error.line}: {message}"
    if line is not None:
        assert message.startswith(f"{path}:{line}: ")


# --- the specification's one-port examples ------------------------------------------------------

# Values as printed in the specification's example files (Touchstone specification, IBIS Open
# Forum), typed in by hand: frequency in MHz, magnitude, angle in degrees.
EX_9_ROWS = [
    (100, 0.99, -4),
    (200, 0.80, -22),
    (300, 0.707, -45),
    (400, 0.40, -62),
    (500, 0.01, -89),
]
EX_7_ROWS = [(100, 74.25, -4), (200, 60, -22), (300, 53.025, -45), (400, 30, -62), (500, 0.75, -89)]
EX_2_ROWS = [(1, 11, 10), (2, 12, 20), (3, 13, 30), (4, 14, 40), (5, 15, 50)]


def test_ex_8_is_s_magnitude_angle_in_50_ohm():
    # ex_8.s1p: "# MHz S MA R 50", "2.000 0.894 -12.136" (Touchstone specification)
    port = read_one_port(spec_file("ex_8.s1p"))
    assert port.reference_impedance_ohm == 50.0
    np.testing.assert_allclose(port.frequency_hz, [2.0e6], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [polar(0.894, -12.136)], rtol=1e-12)
    # by hand: 0.894∠−12.136° = 0.87402 − j0.18795
    np.testing.assert_allclose(port.gamma, [0.87402 - 0.18795j], atol=1e-5)


def test_ex_9_is_z_normalised_to_75_ohm():
    # ex_9.s1p: "# MHz Z MA R 75"; Touchstone 1.x Z data are normalised, z = Z / R (Touchstone
    # specification), so the first line 0.99∠−4° is 74.25∠−4° Ω.
    port = read_one_port(spec_file("ex_9.s1p"))
    assert port.reference_impedance_ohm == 75.0
    assert port.parameter == "Z"
    np.testing.assert_allclose(port.frequency_hz, [f * 1e6 for f, _, _ in EX_9_ROWS], rtol=1e-15)
    expected = [75.0 * polar(m, a) for _, m, a in EX_9_ROWS]
    np.testing.assert_allclose(impedance(port), expected, rtol=1e-9)
    # by hand: 74.25∠−4° Ω = 74.0691 − j5.1795 Ω
    assert abs(impedance(port)[0] - (74.0691 - 5.1795j)) < 1e-3


@pytest.mark.parametrize("name", ["ex_7.ts", "ex_10.ts"])
def test_ex_7_and_ex_10_are_z_in_ohms_referred_to_20_ohm(name):
    # ex_7.ts / ex_10.ts: Touchstone 2.0, "# MHz Z MA", "[Reference] 20.0"; 2.0 Z data are in
    # ohms, not normalised (Touchstone specification).
    port = read_one_port(spec_file(name))
    assert port.reference_impedance_ohm == 20.0
    assert port.version == "2.0"
    np.testing.assert_allclose(port.frequency_hz, [f * 1e6 for f, _, _ in EX_7_ROWS], rtol=1e-15)
    expected = [polar(m, a) for _, m, a in EX_7_ROWS]
    np.testing.assert_allclose(impedance(port), expected, rtol=1e-9)
    # by hand, Γ in 20 Ω of 74.25∠−4° Ω: (Z − 20)/(Z + 20) = 0.57607 − j0.02334
    assert abs(port.gamma[0] - (0.57607 - 0.02334j)) < 1e-4


def test_ex_9_and_ex_7_hold_the_same_impedance():
    # The specification writes the same impedances twice: normalised to 75 Ω in ex_9.s1p and in
    # ohms in ex_7.ts (0.99 × 75 = 74.25, 0.80 × 75 = 60, ...; Touchstone specification).
    normalised = read_one_port(spec_file("ex_9.s1p"))
    in_ohms = read_one_port(spec_file("ex_7.ts"))
    np.testing.assert_allclose(normalised.frequency_hz, in_ohms.frequency_hz, rtol=1e-15)
    np.testing.assert_allclose(impedance(normalised), impedance(in_ohms), rtol=1e-9)
    # and so the same reflection once both are referred to one impedance
    np.testing.assert_allclose(
        renormalise(normalised.gamma, 75.0, 20.0), in_ohms.gamma, rtol=1e-9, atol=1e-12
    )


def test_ex_2_is_z_in_ohms_with_the_default_50_ohm():
    # ex_2.ts: Touchstone 2.0 "# MHz Z MA" without R or [Reference]: the default 50 Ω, data
    # in ohms (Touchstone specification).
    port = read_one_port(spec_file("ex_2.ts"))
    assert port.reference_impedance_ohm == 50.0
    np.testing.assert_allclose(port.frequency_hz, [f * 1e6 for f, _, _ in EX_2_ROWS], rtol=1e-15)
    np.testing.assert_allclose(impedance(port), [polar(m, a) for _, m, a in EX_2_ROWS], rtol=1e-9)


MULTI_PORT_EXAMPLES = [
    "ex_1.ts",
    "ex_3.ts",
    "ex_4.ts",
    "ex_5.ts",
    "ex_6.ts",
    "ex_11.s2p",
    "ex_12.ts",
    "ex_12_g.ts",
    "ex_13.s2p",
    "ex_14.s4p",
    "ex_16.ts",
    "ex_17.ts",
    "ex_18.s2p",
]


@pytest.mark.parametrize("name", MULTI_PORT_EXAMPLES)
def test_multi_port_specification_examples_are_refused_with_advice(name):
    # 2-, 4- and 6-port files of the Touchstone specification, with noise data, H/G parameters,
    # [Reference] over lines and [Matrix Format]: none is a one-port.
    path = spec_file(name)
    with pytest.raises(FileFormatError) as caught:
        read_one_port(path)
    message = str(caught.value)
    assert "\n" not in message
    assert message.startswith(str(path))
    assert "port" in message
    assert "one-port" in message
    assert ".s1p" in message  # says how to make a one-port


# --- option-line values (METHODS §7) ------------------------------------------------------------


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_mhz_s_ma_option_line(tmp_path):
    # METHODS §7 (Touchstone specification): "# MHz S MA R 50" with "100 0.5 45" is 1e8 Hz and
    # 0.3536 + j0.3536.
    port = read_one_port(write(tmp_path, "a.s1p", "# MHz S MA R 50\n100 0.5 45\n"))
    np.testing.assert_allclose(port.frequency_hz, [1e8], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [0.3536 + 0.3536j], atol=1e-4)
    assert port.reference_impedance_ohm == 50.0


def test_ghz_s_db_option_line(tmp_path):
    # METHODS §7 (Touchstone specification): "# GHz S DB R 50" with "1 -6.0206 180" is Γ = −0.5.
    port = read_one_port(write(tmp_path, "a.s1p", "# GHz S DB R 50\n1 -6.0206 180\n"))
    np.testing.assert_allclose(port.frequency_hz, [1e9], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [-0.5], atol=1e-5)


def test_option_line_defaults(tmp_path):
    # A bare "#" means GHz, S, MA, R 50 (Touchstone specification).
    port = read_one_port(write(tmp_path, "a.s1p", "#\n1.5 0.5 90\n"))
    np.testing.assert_allclose(port.frequency_hz, [1.5e9], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [0.5j], atol=1e-12)
    assert port.reference_impedance_ohm == 50.0


def test_option_line_is_case_insensitive(tmp_path):
    # Touchstone files are case-insensitive (Touchstone specification, general syntax rules).
    port = read_one_port(write(tmp_path, "a.s1p", "# khz s Ri r 75\n2 0.1 -0.2\n"))
    np.testing.assert_allclose(port.frequency_hz, [2e3], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [0.1 - 0.2j], rtol=1e-15)
    assert port.reference_impedance_ohm == 75.0


def test_reference_keyword_overrides_option_line_r(tmp_path):
    # In 2.0 files [Reference] overrides the option line's R (Touchstone specification).
    text = (
        "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n[Reference] 75\n"
        "[Network Data]\n1 0.1 0.2\n[End]\n"
    )
    port = read_one_port(write(tmp_path, "a.ts", text))
    assert port.reference_impedance_ohm == 75.0
    np.testing.assert_allclose(port.gamma, [0.1 + 0.2j], rtol=1e-15)


def test_reference_on_the_next_line(tmp_path):
    # [Reference] values may sit on the line after the keyword (Touchstone specification, ex_4).
    text = (
        "[Version] 2.0\n# GHz Z RI\n[Number of Ports] 1\n[Reference]\n25\n[Network Data]\n1 25 0\n"
    )
    port = read_one_port(write(tmp_path, "a.ts", text))
    assert port.reference_impedance_ohm == 25.0
    np.testing.assert_allclose(port.gamma, [0.0], atol=1e-15)  # 25 Ω in 25 Ω: matched


def test_comments_and_blank_lines_are_skipped(tmp_path):
    # "!" starts a comment anywhere on a line; blank lines are ignored (Touchstone specification).
    text = (
        "! a comment\n[Version] 2.0 ! trailing comment\n# GHz S RI R 50\n[Number of Ports] 1\n"
        "[Number of Frequencies] 2\n[Network Data]\n1 0.1 0.0 ! first\n\n2 0.2 0.0\n[End]\n"
    )
    port = read_one_port(write(tmp_path, "a.ts", text))
    np.testing.assert_allclose(port.frequency_hz, [1e9, 2e9], rtol=1e-15)
    np.testing.assert_allclose(port.gamma, [0.1, 0.2], rtol=1e-15)
    assert "a comment" in port.comments


def test_information_block_is_skipped(tmp_path):
    # A 2.0 file may carry a [Begin Information] ... [End Information] block before
    # [Network Data] (Touchstone specification, "Information description"); it holds no
    # network data.
    text = (
        "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n"
        "[Begin Information]\n[End Information]\n[Network Data]\n1 0.1 0.0\n[End]\n"
    )
    port = read_one_port(write(tmp_path, "a.ts", text))
    np.testing.assert_allclose(port.gamma, [0.1], rtol=1e-15)


# --- every encoding of the same data reads to the same Γ ----------------------------------------

UNIT_SCALE = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}
FREQUENCIES_HZ = np.array([1.0e6, 2.5e6, 4.0e7, 3.3e8, 1.2e9])
# Passive and negative-resistance impedances; none equals a reference, so no Γ or y is zero.
IMPEDANCES_OHM = np.array([12 + 5j, 73 - 30j, 210 + 95j, 3 - 40j, -28 + 14j])
REFERENCES_OHM = [50.0, 75.0, 0.5, 1000.0]
ENCODINGS = [
    (parameter, number_format, version)
    for parameter in ("S", "Z", "Y")
    for number_format in ("RI", "MA", "DB")
    for version in ("1.x", "2.0")
]


def encode(unit: str, parameter: str, number_format: str, reference: float, version: str) -> str:
    """A one-port file holding IMPEDANCES_OHM, written from the textbook definitions.

    S: Γ = (Z − R)/(Z + R). Z, Y: in 1.x normalised, z = Z/R and y = Y·R; in 2.0 in ohms and
    siemens (Touchstone specification). RI: real, imaginary; MA: magnitude, degrees; DB:
    20·log10|x|, degrees (Touchstone specification).
    """
    if parameter == "S":
        values = (IMPEDANCES_OHM - reference) / (IMPEDANCES_OHM + reference)
    elif parameter == "Z":
        values = IMPEDANCES_OHM / reference if version == "1.x" else IMPEDANCES_OHM
    else:
        values = reference / IMPEDANCES_OHM if version == "1.x" else 1 / IMPEDANCES_OHM
    lines = []
    for frequency, value in zip(
        (FREQUENCIES_HZ / UNIT_SCALE[unit]).tolist(), values.tolist(), strict=True
    ):
        if number_format == "RI":
            pair = (value.real, value.imag)
        elif number_format == "MA":
            pair = (abs(value), math.degrees(cmath.phase(value)))
        else:
            pair = (20 * math.log10(abs(value)), math.degrees(cmath.phase(value)))
        lines.append(f"{frequency!r} {pair[0]!r} {pair[1]!r}")
    if version == "1.x":
        header = [f"# {unit} {parameter} {number_format} R {reference!r}"]
        footer = []
    else:
        header = [
            "[Version] 2.0",
            f"# {unit} {parameter} {number_format}",
            "[Number of Ports] 1",
            f"[Number of Frequencies] {len(lines)}",
            f"[Reference] {reference!r}",
            "[Network Data]",
        ]
        footer = ["[End]"]
    return "\n".join(["! written by test_touchstone.py", *header, *lines, *footer]) + "\n"


def encoded_file(tmp_path, unit, parameter, number_format, reference, version) -> Path:
    suffix = ".s1p" if version == "1.x" else ".ts"
    name = f"{unit}_{parameter}_{number_format}_{reference:g}_{version}{suffix}"
    return write(tmp_path, name, encode(unit, parameter, number_format, reference, version))


def encoding_id(encoding):
    return "-".join(encoding)


@pytest.mark.parametrize("encoding", ENCODINGS, ids=encoding_id)
def test_every_encoding_reads_to_the_same_gamma(tmp_path, encoding):
    """Every unit, RI/MA/DB, S/Z/Y, any R, 1.x and 2.0: the impedance written is read back.

    All files hold the same impedances, so after renormalisation to 50 Ω each reads to the same
    Γ50 = (Z − 50)/(Z + 50) (common practice), computed here from the impedances alone.
    """
    parameter, number_format, version = encoding
    expected_gamma_50 = (IMPEDANCES_OHM - 50) / (IMPEDANCES_OHM + 50)
    for unit in UNIT_SCALE:
        for reference in REFERENCES_OHM:
            path = encoded_file(tmp_path, unit, parameter, number_format, reference, version)
            port = read_one_port(path)
            where = f"{path.name}: {path.read_text().splitlines()[1:3]}"
            np.testing.assert_allclose(port.frequency_hz, FREQUENCIES_HZ, rtol=1e-13, err_msg=where)
            assert port.reference_impedance_ohm == reference, where
            assert port.parameter == parameter
            assert port.number_format == number_format
            np.testing.assert_allclose(impedance(port), IMPEDANCES_OHM, rtol=1e-9, err_msg=where)
            np.testing.assert_allclose(
                renormalise(port.gamma, reference, 50.0),
                expected_gamma_50,
                rtol=1e-9,
                atol=1e-12,
                err_msg=where,
            )


def test_version_1_admittance_is_normalised_by_multiplying_by_r(tmp_path):
    # Touchstone 1.x Y data are normalised admittances y = Y·R (Touchstone specification;
    # common practice: normalised admittance = Y/Y0 = Y·Z0). y = 1 is a matched load, Γ = 0;
    # y = 2 is R/2, Γ = −1/3; y = 0.5 is 2R, Γ = +1/3.
    port = read_one_port(write(tmp_path, "y.s1p", "# GHz Y RI R 50\n1 1 0\n2 2 0\n3 0.5 0\n"))
    np.testing.assert_allclose(port.gamma, [0.0, -1 / 3, 1 / 3], atol=1e-12)


def test_version_1_impedance_is_normalised_by_dividing_by_r(tmp_path):
    # Touchstone 1.x Z data are normalised impedances z = Z/R (Touchstone specification).
    port = read_one_port(write(tmp_path, "z.s1p", "# GHz Z RI R 50\n1 1 0\n2 0.5 0\n3 2 0\n"))
    np.testing.assert_allclose(port.gamma, [0.0, -1 / 3, 1 / 3], atol=1e-12)


@pytest.mark.parametrize("encoding", ENCODINGS, ids=encoding_id)
def test_reader_agrees_with_scikit_rf(tmp_path, encoding):
    # scikit-rf's own Touchstone reader on the same files (scikit-rf): same frequencies, same
    # reference and same S11. (Only files written here: skrf.Network(path) would unpickle.)
    # scikit-rf 2.2 scales 1.x Y data by R instead of reading them as y = Y·R (its
    # Touchstone.__init__ multiplies every 1.x Z/Y/G/H matrix by z0), so for 1.x Y files it
    # reads the 2.0 file holding the same admittances in siemens instead.
    parameter, number_format, version = encoding
    for unit in UNIT_SCALE:
        for reference in (50.0, 75.0):
            path = encoded_file(tmp_path, unit, parameter, number_format, reference, version)
            port = read_one_port(path)
            twin = path
            if parameter == "Y" and version == "1.x":
                twin = encoded_file(tmp_path, unit, parameter, number_format, reference, "2.0")
            network = skrf.Network()
            network.read_touchstone(str(twin))
            np.testing.assert_allclose(port.frequency_hz, network.f, rtol=1e-13)
            np.testing.assert_allclose(network.z0[:, 0], reference, rtol=0)
            np.testing.assert_allclose(port.gamma, network.s[:, 0, 0], rtol=1e-9, atol=1e-12)


# --- malformed files: one-line FileFormatError with the line where one exists --------------------

GOOD_2_0_HEAD = "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 1\n"

MALFORMED = {
    # name: (file name, text, line the error must name or None, a word the message must hold)
    "empty": ("a.s1p", "", None, "empty"),
    "blank lines only": ("a.s1p", "\n   \n\t\n", None, "empty"),
    "only comments": ("a.s1p", "! one\n! two\n", None, "no data"),
    "option line, no data": ("a.s1p", "! c\n# GHz S RI R 50\n", None, "no data"),
    "2.0 without data": ("a.ts", GOOD_2_0_HEAD + "[Network Data]\n[End]\n", None, "no data"),
    "two columns": ("a.s1p", "# GHz S RI R 50\n1 0.1 0.2\n2 0.1\n", 3, "3 values"),
    "four columns": ("a.s1p", "# GHz S RI R 50\n1 0.1 0.2 0.3\n", 2, "3 values"),
    "frequency only": ("a.s1p", "# GHz S RI R 50\n1 0.1 0.2\n2\n", 3, "3 values"),
    "decreasing frequency": (
        "a.s1p",
        "# GHz S RI R 50\n1 0.1 0\n3 0.1 0\n2 0.1 0\n",
        4,
        "increase",
    ),
    "repeated frequency": (
        "a.s1p",
        "# GHz S RI R 50\n1 0.1 0\n! c\n2 0.1 0\n2 0.2 0\n",
        5,
        "repeats",
    ),
    "NaN value": ("a.s1p", "# GHz S RI R 50\n1 0.1 0\n2 nan 0\n", 3, "finite"),
    "NaN frequency": ("a.s1p", "# GHz S RI R 50\nNaN 0.1 0\n", 2, "finite"),
    "infinite value": ("a.s1p", "# GHz S RI R 50\n1 0.1 inf\n", 2, "finite"),
    "minus infinity": ("a.s1p", "# GHz S MA R 50\n1 -Infinity 0\n", 2, "finite"),
    "overflowing value": ("a.s1p", "# GHz S RI R 50\n1 1e999 0\n", 2, "finite"),
    "negative frequency": ("a.s1p", "# GHz S RI R 50\n-1 0.1 0\n1 0.1 0\n", 2, "negative"),
    "not a number": ("a.s1p", "# GHz S RI R 50\n1 0.1 O.2\n", 2, "not a number"),
    "unknown option token": ("a.s1p", "# GHz S XY R 50\n1 0.1 0\n", 1, "XY"),
    "unknown frequency unit": ("a.s1p", "# THz S RI R 50\n1 0.1 0\n", 1, "THz"),
    "G parameters": ("a.s1p", "# GHz G MA R 50\n1 0.1 0\n", 1, "G parameters"),
    "H parameters": ("a.s1p", "# GHz H MA R 50\n1 0.1 0\n", 1, "H parameters"),
    "R zero": ("a.s1p", "# GHz S RI R 0\n1 0.1 0\n", 1, "positive"),
    "R negative": ("a.s1p", "# GHz S RI R -50\n1 0.1 0\n", 1, "positive"),
    "R without value": ("a.s1p", "# GHz S RI R\n1 0.1 0\n", 1, "R"),
    "R not a number": ("a.s1p", "# GHz S RI R fifty\n1 0.1 0\n", 1, "fifty"),
    "R NaN": ("a.s1p", "# GHz S RI R nan\n1 0.1 0\n", 1, "positive"),
    "[Reference] zero": (
        "a.ts",
        GOOD_2_0_HEAD + "[Reference] 0\n[Network Data]\n1 0 0\n",
        4,
        "positive",
    ),
    "[Reference] negative on next line": (
        "a.ts",
        GOOD_2_0_HEAD + "[Reference]\n-50\n[Network Data]\n1 0 0\n",
        5,
        "positive",
    ),
    "[Number of Frequencies] too many": (
        "a.ts",
        GOOD_2_0_HEAD + "[Number of Frequencies] 3\n[Network Data]\n1 0.1 0\n2 0.1 0\n",
        4,
        "says 3",
    ),
    "[Number of Frequencies] too few": (
        "a.ts",
        GOOD_2_0_HEAD + "[Number of Frequencies] 1\n[Network Data]\n1 0.1 0\n2 0.1 0\n",
        4,
        "says 1",
    ),
    "[Number of Frequencies] not a number": (
        "a.ts",
        GOOD_2_0_HEAD + "[Number of Frequencies] two\n[Network Data]\n1 0.1 0\n",
        4,
        "two",
    ),
    "2.x keyword before [Version]": (
        "a.ts",
        "! c\n[Number of Ports] 1\n[Version] 2.0\n# GHz S RI R 50\n[Network Data]\n1 0.1 0\n",
        2,
        "[Version]",
    ),
    "2.x keyword after the option line, before [Version]": (
        "a.ts",
        "# GHz S RI R 50\n[Number of Ports] 1\n[Version] 2.0\n[Network Data]\n1 0.1 0\n",
        2,
        "[Version]",
    ),
    "unsupported [Version]": ("a.ts", "[Version] 3.0\n# GHz S RI R 50\n", 1, "3.0"),
    "[Number of Ports] 2 in 2.0": (
        "a.ts",
        "[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n"
        "[Network Data]\n1 0.1 0 0.9 0 0.9 0 0.1 0\n",
        3,
        "one-port",
    ),
    "two-port .s2p": (
        "a.s2p",
        "# GHz S MA R 50\n1 0.5 10 0.9 -20 0.9 -20 0.5 10\n2 0.5 11 0.9 -21 0.9 -21 0.5 11\n",
        None,
        "one-port",
    ),
    "no .s1p suffix and no [Version]": ("a.txt", "# GHz S RI R 50\n1 0.1 0\n", None, ".s1p"),
    "invalid UTF-8": ("a.s1p", "# GHz S RI R 50\n1 0.1 0\n", 3, "UTF-8"),  # bytes appended below
    "NUL byte": ("a.s1p", "# GHz S RI R 50\n1 0.1\x00 0\n", None, "binary"),
}


@pytest.mark.parametrize("case", list(MALFORMED))
def test_malformed_files_are_refused_in_one_line(tmp_path, case):
    name, text, line, word = MALFORMED[case]
    path = tmp_path / name
    data = text.encode("utf-8")
    if case == "invalid UTF-8":
        data += b"2 0.1 \xff\n"
    path.write_bytes(data)
    with pytest.raises(FileFormatError) as caught:
        read_one_port(path)
    assert_one_line_error(caught.value, path, line)
    assert word.lower() in str(caught.value).lower()


def test_missing_file_and_folder_are_refused(tmp_path):
    missing = tmp_path / "missing.s1p"
    with pytest.raises(FileFormatError) as caught:
        read_one_port(missing)
    assert_one_line_error(caught.value, missing, None)
    assert "no such file" in str(caught.value)
    folder = tmp_path / "folder.s1p"
    folder.mkdir()
    with pytest.raises(FileFormatError) as caught:
        read_one_port(folder)
    assert_one_line_error(caught.value, folder, None)


def test_frequency_overflowing_when_scaled_to_hz_is_refused(tmp_path):
    # 1e300 GHz is a finite number in the file but 1e309 Hz is not: the frequency list must
    # stay finite (the reader's contract: finite, strictly increasing frequencies).
    path = write(tmp_path, "a.s1p", "# GHz S RI R 50\n1 0.1 0\n1e300 0.1 0\n2e300 0.1 0\n")
    with pytest.raises(FileFormatError) as caught:
        read_one_port(path)
    assert "\n" not in str(caught.value)


def test_file_errors_are_value_errors(tmp_path):
    # FileFormatError derives from ValueError so callers may catch either (oneport's contract).
    with pytest.raises(ValueError):
        read_one_port(write(tmp_path, "a.s1p", "# GHz S RI R 50\n1 0.1\n"))


# --- nothing is ever unpickled -----------------------------------------------------------------


class _TouchOnUnpickle:
    """Unpickling this object calls ``Path.touch(marker)``: a harmless stand-in for code."""

    def __init__(self, marker: Path) -> None:
        self.marker = marker

    def __reduce__(self):
        return (pathlib.Path.touch, (self.marker,))


@pytest.mark.parametrize("protocol", [0, 2, pickle.HIGHEST_PROTOCOL])
def test_a_pickle_saved_as_s1p_is_refused_and_never_unpickled(tmp_path, protocol):
    # The payload is live: unpickling it really creates its marker file.
    control = tmp_path / "control-marker"
    pickle.loads(pickle.dumps(_TouchOnUnpickle(control), protocol=protocol))
    assert control.exists()

    marker = tmp_path / "marker"
    path = tmp_path / "device.s1p"
    path.write_bytes(pickle.dumps(_TouchOnUnpickle(marker), protocol=protocol))
    with pytest.raises(FileFormatError) as caught:
        read_one_port(path)
    assert "\n" not in str(caught.value)
    assert str(caught.value).startswith(str(path))
    assert not marker.exists(), "the file was unpickled"


# --- fuzzing: a mutated valid file reads to a valid OnePort or a FileFormatError ----------------

VALID_1_X = (
    "! fuzz base\n# MHz S MA R 50\n!freq mag ang\n"
    "100 0.99 -4\n200 0.80 -22\n300 0.707 -45\n400 0.40 -62\n500 0.01 -89\n"
)
VALID_2_0 = (
    "! fuzz base\n[Version] 2.0\n# MHz Z RI\n[Number of Ports] 1\n[Number of Frequencies] 4\n"
    "[Reference] 20.0\n[Network Data]\n100 74.1 -5.2\n200 55.6 -22.5\n300 37.5 -37.5\n"
    "400 14.1 -26.5\n[End]\n"
)
GARBLE_ALPHABET = "0123456789.-+eE  \t!#[]RrSsZzYyMmAaDdBbHhGgKk,;_xXnNiIfF\x00\x7f\xb5\u00b5\u0661"


@st.composite
def mutated_file(draw):
    lines = draw(st.sampled_from([VALID_1_X, VALID_2_0])).splitlines()
    suffix = draw(st.sampled_from([".s1p", ".ts", ".s2p", ".txt"]))
    lines, _ = mutate_lines(draw, lines, draw(st.integers(1, 6)), GARBLE_ALPHABET)
    ending = draw(st.sampled_from(["\n", "\r\n"]))
    return suffix, ending.join(lines) + ending


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mutated_file())
def test_mutated_files_read_to_a_valid_one_port_or_a_file_format_error(case):
    suffix, text = case
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / f"fuzz{suffix}"
        path.write_bytes(text.encode("utf-8"))
        try:
            port = read_one_port(path)
        except FileFormatError as error:
            assert "\n" not in str(error)
            assert str(error).startswith(str(path))
            return
    assert isinstance(port, OnePort)
    assert port.frequency_hz.ndim == 1 and port.frequency_hz.size >= 1
    assert port.gamma.shape == port.frequency_hz.shape
    assert np.all(np.isfinite(port.frequency_hz))
    assert np.all(port.frequency_hz >= 0)
    assert np.all(np.diff(port.frequency_hz) > 0)
    assert np.all(np.isfinite(port.gamma))
    assert math.isfinite(port.reference_impedance_ohm) and port.reference_impedance_ohm > 0
