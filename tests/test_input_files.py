"""Every user file enters through one reader: regular files of bounded size, never blocking.

Each reproducer of the robustness issue that concerns reading is a case here, run through the
command line in-process: a FIFO, a device node or a folder in every role (device, load, fixture,
termination, netlist, netlist ``file=`` block, I–V table, manifest), oversized files, port counts
no file can have, CSV fields and TOML values beyond what their parsers take, text encodings,
and file names with control characters. The only outcome allowed is exit 2 with one line on
stderr that names the file, never a traceback, a hang or a memory blow-up. Outside references:
TOML 1.0.0 (integers are 64-bit), Python's ``csv`` field limit (131,072 characters), Unicode
(byte-order marks, U+00A0 NO-BREAK SPACE, bidirectional overrides).
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest

from oneport import FileFormatError, read_one_port
from oneport.products.oscillator.manifest import read_device_description, read_iv_table
from oneport.reading.files import SIZE_LIMIT_VARIABLE, decode_text, read_user_bytes

from helpers import deadline, run_cli

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"
DEVICE = EXAMPLES / "stable" / "device.s1p"
LOAD = EXAMPLES / "stable" / "load.s1p"
TRANSISTOR = EXAMPLES / "circuits" / "transistor.s2p"
OSCILLATOR_LOAD = EXAMPLES / "oscillator" / "load.s1p"
THROUGH = "# GHz S RI R 50\n1 0 0 1 0 1 0 0 0\n10 0 0 1 0 1 0 0 0\n"


def refused_in_one_line(*argv: str | Path, naming: str | Path, words: str = "") -> str:
    """Run the command (failing, not hanging, after 30 s); exit 2, one stderr line."""
    with deadline(30):
        code, _, err = run_cli(*argv)
    assert code == 2, (code, err)
    assert err.count("\n") == 1 and err.startswith("oneport: "), err
    assert str(naming) in err, err
    assert words in err, err
    return err


def special_file(tmp_path: Path, kind: str, name: str) -> Path:
    """A FIFO, a link to a device node, or a folder, under ``name``."""
    path = tmp_path / name
    if kind == "fifo":
        os.mkfifo(path)
    elif kind == "folder":
        path.mkdir()
    else:
        path.symlink_to(f"/dev/{kind}")
    return path


KINDS = {
    "fifo": "is a named pipe (FIFO), not a regular file",
    "zero": "is a character device, not a regular file",
    "urandom": "is a character device, not a regular file",
    "folder": "is a folder, not a regular file",
}


@pytest.mark.parametrize("kind", list(KINDS))
@pytest.mark.parametrize(
    "role", ["device", "load", "fixture", "termination", "netlist", "block", "table", "manifest"]
)
def test_special_files_are_refused_at_once_in_every_role(tmp_path, kind, role):
    # Opening a FIFO for reading waits for a writer; /dev/zero and /dev/urandom never end.
    # Each is refused before it is opened, with what it is.
    if role == "device":
        bad = special_file(tmp_path, kind, "device.s1p")
        argv: list[str | Path] = ["check", bad, "--load", LOAD]
    elif role == "load":
        bad = special_file(tmp_path, kind, "load.s1p")
        argv = ["check", DEVICE, "--load", bad]
    elif role == "fixture":
        bad = special_file(tmp_path, kind, "fixture.s2p")
        argv = ["check", DEVICE, "--load", LOAD, "--device-fixture", bad]
    elif role == "termination":
        bad = special_file(tmp_path, kind, "termination.s1p")
        argv = ["check", TRANSISTOR, "--terminate", bad, "--load", LOAD]
    elif role == "netlist":
        bad = special_file(tmp_path, kind, "load.cir")
        argv = ["check", DEVICE, "--load", bad]
    elif role == "block":
        bad = special_file(tmp_path, kind, "block.s2p")
        netlist = tmp_path / "load.cir"
        netlist.write_text("N1 a b file=block.s2p\nR1 b 0 50\n.oneport a\n")
        argv = ["check", DEVICE, "--load", netlist]
    elif role == "table":
        bad = special_file(tmp_path, kind, "iv.csv")
        manifest = tmp_path / "diode.toml"
        manifest.write_text('kind = "iv-curve"\nbias_voltage_v = 0.1\n[iv]\ntable = "iv.csv"\n')
        argv = ["oscillator", manifest, "--load", OSCILLATOR_LOAD]
    else:
        bad = special_file(tmp_path, kind, "diode.toml")
        argv = ["oscillator", bad, "--load", OSCILLATOR_LOAD]
    refused_in_one_line(*argv, naming=bad, words=KINDS[kind])


def test_a_device_node_given_by_its_own_name_is_refused():
    for node in ("/dev/zero", "/dev/urandom", "/dev/null"):
        refused_in_one_line("check", node, "--load", LOAD, naming=node, words="character device")


def test_files_above_the_size_limit_are_refused_naming_the_limit(tmp_path, monkeypatch):
    monkeypatch.setenv(SIZE_LIMIT_VARIABLE, "0.002")  # 2,000 bytes
    big = tmp_path / "device.s1p"
    shutil.copy(DEVICE, big)
    assert big.stat().st_size > 2000
    err = refused_in_one_line("check", big, "--load", LOAD, naming=big, words="0.002 MB limit")
    assert f"{SIZE_LIMIT_VARIABLE}=" in err
    small = tmp_path / "small.s1p"
    small.write_text("# GHz S RI R 50\n1 -0.5 0\n2 -0.5 0.1\n")
    netlist = tmp_path / "big.cir"
    netlist.write_text("R1 a 0 50\n" + "* padding\n" * 300 + ".oneport a\n")
    refused_in_one_line("check", small, "--load", netlist, naming=netlist, words="limit")
    monkeypatch.setenv(SIZE_LIMIT_VARIABLE, "1000")
    code, _, _ = run_cli("check", big, "--load", LOAD, "--quiet")
    assert code == 0


def test_a_bad_size_limit_setting_is_one_line(monkeypatch):
    monkeypatch.setenv(SIZE_LIMIT_VARIABLE, "lots")
    code, _, err = run_cli("check", DEVICE, "--load", LOAD)
    assert code == 2 and err.count("\n") == 1 and SIZE_LIMIT_VARIABLE in err and "'lots'" in err


def test_a_file_that_grows_past_the_limit_while_read_is_refused(tmp_path, monkeypatch):
    # /proc files report size 0 and hold text: they are read to their end, within the limit.
    monkeypatch.setenv(SIZE_LIMIT_VARIABLE, "0.000010")  # 10 bytes
    with pytest.raises(FileFormatError, match="limit"):
        read_user_bytes("/proc/self/status", "a status file")


@pytest.mark.parametrize("suffix", [".s0p", ".s99999999999p", ".s1001p"])
def test_port_counts_no_file_can_have_are_refused(tmp_path, suffix):
    # .s0p used to raise IndexError, .s99999999999p MemoryError; now one line each, as a
    # fixture and as a netlist block.
    fixture = tmp_path / f"fixture{suffix}"
    fixture.write_text(THROUGH)
    refused_in_one_line(
        "check", DEVICE, "--load", LOAD, "--device-fixture", fixture,
        naming=fixture, words="names",
    )  # fmt: skip
    netlist = tmp_path / "load.cir"
    netlist.write_text(f"N1 a b file=fixture{suffix}\nR1 b 0 50\n.oneport a\n")
    refused_in_one_line("check", DEVICE, "--load", netlist, naming=fixture, words="names")


def test_a_huge_number_of_ports_in_a_2x_file_is_refused(tmp_path):
    path = tmp_path / "a.ts"
    path.write_text("[Version] 2.0\n# GHz S RI R 50\n[Number of Ports] 99999999999\n")
    with pytest.raises(FileFormatError, match="from 1 to 1000") as caught:
        read_one_port(path)
    assert caught.value.line == 3


# --- the oscillator's manifests and tables --------------------------------------------------------


def iv_manifest(folder: Path, table: str) -> Path:
    (folder / "iv.csv").write_text(table)
    manifest = folder / "diode.toml"
    manifest.write_text('kind = "iv-curve"\nbias_voltage_v = 0.1\n[iv]\ntable = "iv.csv"\n')
    return manifest


def test_a_csv_field_beyond_the_csv_limit_is_one_line(tmp_path):
    # Python's csv refuses fields over 131,072 characters (csv.field_size_limit()).
    table = "voltage_v,current_a\n0,0\n0.1," + "1" * 200_000 + "\n"
    manifest = iv_manifest(tmp_path, table)
    refused_in_one_line(
        "oscillator", manifest, "--load", OSCILLATOR_LOAD, naming="iv.csv:3", words="field"
    )


def test_a_toml_integer_of_400_digits_is_one_line(tmp_path):
    # TOML 1.0.0, Integer: "Arbitrary 64-bit signed integers ... should be accepted"; larger
    # ones cannot be represented and must be an error.
    manifest = tmp_path / "diode.toml"
    manifest.write_text('kind = "iv-curve"\nbias_voltage_v = 1' + "0" * 399 + "\n")
    refused_in_one_line(
        "oscillator", manifest, "--load", OSCILLATOR_LOAD, naming=manifest,
        words="bias_voltage_v: an integer of 400 digits",
    )  # fmt: skip


def test_toml_nested_2000_deep_is_one_line(tmp_path):
    manifest = tmp_path / "diode.toml"
    manifest.write_text('kind = "iv-curve"\nx = ' + "[" * 2000 + "]" * 2000 + "\n")
    refused_in_one_line(
        "oscillator", manifest, "--load", OSCILLATOR_LOAD, naming=manifest, words="nested"
    )


# --- encodings and characters ---------------------------------------------------------------------


def test_a_utf8_byte_order_mark_is_accepted_everywhere(tmp_path):
    bom = b"\xef\xbb\xbf"
    device = tmp_path / "device.s1p"
    device.write_bytes(bom + DEVICE.read_bytes())
    netlist = tmp_path / "load.cir"
    netlist.write_bytes(bom + b"R1 a 0 30\nL1 a 0 1n\n.oneport a\n")
    code, _, err = run_cli("check", device, "--load", netlist, "--quiet")
    assert code in (0, 3, 4) and err == "", err
    table = "voltage_v,current_a\n" + "".join(f"{v / 100},{v / 1000}\n" for v in range(20))
    (tmp_path / "iv.csv").write_bytes(bom + table.encode())
    manifest = tmp_path / "diode.toml"
    body = 'kind = "iv-curve"\nbias_voltage_v = 0.1\n[iv]\ntable = "iv.csv"\n'
    manifest.write_bytes(bom + body.encode())
    description = read_device_description(manifest)
    assert description.bias_voltage_v == 0.1
    voltage, _, _ = read_iv_table(tmp_path / "iv.csv", "iv.table")
    assert voltage[:3].tolist() == [0.0, 0.01, 0.02]
    assert decode_text("x", bom + b"abc", "text") == "abc"


@pytest.mark.parametrize(("encoding", "named"), [("utf-16", "UTF-16"), ("utf-16-be", "UTF-16")])
def test_utf16_text_is_named_as_such(tmp_path, encoding, named):
    # Not "binary (a pickle ...)": the file is text in another encoding, and says which.
    device = tmp_path / "device.s1p"
    device.write_bytes(DEVICE.read_text().encode(encoding))
    err = refused_in_one_line("check", device, "--load", LOAD, naming=device, words=named)
    assert "pickle" not in err and "save it as UTF-8" in err


def test_a_no_break_space_in_data_names_the_line_and_value(tmp_path):
    device = tmp_path / "device.s1p"
    device.write_text("# GHz S RI R 50\n1 0.5 0\n2\u00a00.4 0\n3 0.3 0\n")
    refused_in_one_line(
        "check", device, "--load", LOAD, naming=f"{device}:3",
        words="U+00A0 (NO-BREAK SPACE) in '2\\xa00.4'",
    )  # fmt: skip


@pytest.mark.parametrize(
    ("name", "shown"),
    [
        ("dev\x1b[31m.s1p", "dev\\x1b[31m.s1p"),
        ("dev\u202egnp.s1p", "dev\\u202egnp.s1p"),
        ("dev\nice.s1p", "dev\\x0aice.s1p"),
    ],
)
def test_control_characters_in_file_names_are_shown_escaped(tmp_path, name, shown):
    # An ANSI escape, a right-to-left override or a newline in a file name reaches the
    # terminal escaped, and the error stays one line.
    device = tmp_path / name
    device.write_text("# GHz S RI R 50\n1 0.5\n")
    with deadline(30):
        code, _, err = run_cli("check", device, "--load", LOAD)
    assert code == 2 and err.count("\n") == 1, err
    assert shown in err and name not in err, err
    assert not any(c in err for c in "\x1b\u202e")


def test_a_missing_block_file_and_an_unreadable_file_are_one_line(tmp_path):
    netlist = tmp_path / "load.cir"
    netlist.write_text("N1 a b file=missing.s2p\nR1 b 0 50\n.oneport a\n")
    refused_in_one_line("check", DEVICE, "--load", netlist, naming="missing.s2p: no such file")
    if os.geteuid() != 0:  # root reads everything
        locked = tmp_path / "locked.s1p"
        shutil.copy(DEVICE, locked)
        locked.chmod(0)
        refused_in_one_line("check", locked, "--load", LOAD, naming=locked, words="cannot be read")
