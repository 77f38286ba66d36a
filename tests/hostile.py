"""Hostile inputs for every command, and the one judge of what a run may do with them.

Shared by the fuzz suite (``tests/test_fuzz_cli.py``, hypothesis drives the ``random.Random``
these generators take) and the long mutation campaign (``benchmarks/robustness_campaign.py``,
a seeded ``random.Random``). A :class:`Case` is a command line and the files it reads, written
into a fresh folder; :func:`run_case` runs it in-process through ``oneport.cli.main`` and
returns what broke the contract (CONVENTIONS.md), if anything:

- the exit code is 0, 2, 3 or 4 (1 is a bug, anything else too); no traceback anywhere;
- exit 2 prints exactly one line on stderr (and nothing on stdout, except a sweep's summary of
  the variants it finished before the failure);
- any other exit prints nothing on stderr, and with ``--json`` one strict JSON object (no NaN,
  no infinity) on stdout;
- no file changes but the named outputs: every input stays as it was, nothing else appears;
- the run ends within its time limit.

All data are invented (an invented tunnel-diode-like device and series R-L loads, as in
tests/test_robustness.py, plus the repository's own invented examples).
"""

from __future__ import annotations

import contextlib
import io
import json
import math
import os
import random
import re
import signal
import time
import warnings
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"

# --- what a run may do --------------------------------------------------------------------------


@dataclass
class Case:
    """One command line, the files it reads (name → bytes) and the names it may write.

    ``argv`` holds ``{dir}`` where the folder's path goes. ``fifos`` and ``folders`` are made
    as named pipes and folders under their names.
    """

    label: str
    argv: list[str]
    files: dict[str, bytes] = field(default_factory=dict)
    outputs: tuple[str, ...] = ()
    fifos: tuple[str, ...] = ()
    folders: tuple[str, ...] = ()
    #: (name, target, "symlink" or "hardlink"): another name for a file of the case.
    links: tuple[tuple[str, str, str], ...] = ()


@dataclass
class Outcome:
    """What a case did: exit code, streams, seconds, and every broken rule (empty: none)."""

    code: int | None
    out: str
    err: str
    seconds: float
    problems: list[str]


def run_case(case: Case, folder: Path, time_limit_s: int = 60) -> Outcome:
    """Write the case's files into ``folder`` (empty), run it in-process, judge the run."""
    from oneport.cli import main

    for name in case.folders:
        (folder / name).mkdir(parents=True, exist_ok=True)
    for name, data in case.files.items():
        (folder / name).parent.mkdir(parents=True, exist_ok=True)
        (folder / name).write_bytes(data)
    for name in case.fifos:
        os.mkfifo(folder / name)
    for name, target, kind in case.links:
        (os.symlink if kind == "symlink" else os.link)(folder / target, folder / name)
    argv = [argument.replace("{dir}", str(folder)) for argument in case.argv]
    before = snapshot(folder)
    out, err = io.StringIO(), io.StringIO()
    problems: list[str] = []
    code: int | None = None
    started = time.perf_counter()
    try:
        with (
            _time_limit(time_limit_s),
            _one_poll_watch(),
            _shell_warnings() as caught,
            contextlib.chdir(folder),  # relative paths land in the folder, where they are judged
        ):
            code = int(main(argv, stdout=out, stderr=err))
    except TimeoutError:
        problems.append(f"hang: no answer within {time_limit_s} s")
    except BaseException as error:  # a traceback: exit code 1 in a shell
        problems.append(f"traceback: {type(error).__name__}: {str(error)[:200]}")
    for warning in caught:
        problems.append(f"a warning on stderr: {warning.category.__name__}: {warning.message}")
    seconds = time.perf_counter() - started
    outcome = Outcome(code, out.getvalue(), err.getvalue(), seconds, problems)
    if code is not None:
        problems += judge(case, argv, outcome)
    problems += _file_problems(before, snapshot(folder), case.outputs)
    return outcome


def judge(case: Case, argv: list[str], outcome: Outcome) -> list[str]:
    """The contract's rules for streams and exit codes (files are judged apart)."""
    problems = []
    code, out, err = outcome.code, outcome.out, outcome.err
    if code not in (0, 2, 3, 4):
        problems.append(f"exit code {code}")
    if "Traceback" in out + err:
        problems.append("a traceback in the output")
    if code == 2:
        if len(err.splitlines()) != 1 or not err.endswith("\n"):
            problems.append(f"exit 2 with {len(err.splitlines())} stderr lines: {err[:300]!r}")
        if out and not (argv and argv[0] == "sweep"):
            problems.append(f"exit 2 with stdout: {out[:200]!r}")
    elif code is not None and err:
        problems.append(f"exit {code} with stderr: {err[:300]!r}")
    if "--json" in argv and out and (code != 2 or argv[0] == "sweep"):
        problem = strict_json_problem(out)
        if problem:
            problems.append(problem)
    return problems


def strict_json_problem(text: str) -> str | None:
    """Why ``text`` is not one strict JSON object, or None."""

    def refuse(name: str) -> None:
        raise ValueError(f"non-standard constant {name}")

    try:
        data = json.loads(text, parse_constant=refuse)
    except ValueError as error:
        return f"invalid JSON: {error}"
    if not isinstance(data, dict):
        return "JSON is not one object"
    return None


def snapshot(folder: Path) -> dict[str, tuple[str, bytes | None]]:
    """Every entry under ``folder``: its kind and, for a regular file, its bytes."""
    entries: dict[str, tuple[str, bytes | None]] = {}
    for path in sorted(folder.rglob("*")):
        name = str(path.relative_to(folder))
        if path.is_symlink():
            entries[name] = ("link", os.readlink(path).encode())
        elif path.is_fifo():
            entries[name] = ("fifo", None)
        elif path.is_dir():
            entries[name] = ("folder", None)
        else:
            entries[name] = ("file", path.read_bytes())
    return entries


def _file_problems(
    before: dict[str, tuple[str, bytes | None]],
    after: dict[str, tuple[str, bytes | None]],
    outputs: tuple[str, ...],
) -> list[str]:
    allowed = set(outputs)
    for name in outputs:  # a named folder is made with its parents
        allowed |= {str(parent) for parent in Path(name).parents if str(parent) != "."}
    problems = []
    for name, entry in before.items():
        if name not in allowed and after.get(name) != entry:
            problems.append(f"lost or changed file: {name}")
    for name in after:
        if name not in before and name not in allowed:
            problems.append(f"stray file: {name}")
    return problems


@contextlib.contextmanager
def _time_limit(seconds: int) -> Iterator[None]:
    def expire(signum: int, frame: object) -> None:
        raise TimeoutError

    previous = signal.signal(signal.SIGALRM, expire)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)


@contextlib.contextmanager
def _shell_warnings() -> Iterator[list[warnings.WarningMessage]]:
    """Warnings as a shell shows them (Python's default filters), recorded: each would be an
    extra line on stderr."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.resetwarnings()
        warnings.simplefilter("default")
        for category in (DeprecationWarning, PendingDeprecationWarning, ImportWarning,
                         ResourceWarning):  # fmt: skip
            warnings.filterwarnings("ignore", category=category)
        yield caught


@contextlib.contextmanager
def _one_poll_watch() -> Iterator[None]:
    """``oneport watch`` polls until Ctrl-C; here it polls three times without sleeping."""
    from oneport.products import watch

    original = watch.run_watch

    def three_polls(watcher, handle, **kwargs):  # type: ignore[no-untyped-def]
        clock = iter(range(10**6))
        kwargs.update(max_polls=3, sleep=lambda s: None, clock=lambda: float(next(clock)) * 10)
        return original(watcher, handle, **kwargs)

    watch.run_watch = three_polls
    try:
        yield
    finally:
        watch.run_watch = original


# --- valid files to start from --------------------------------------------------------------

Z0 = 50.0
UNITS = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}


def device_impedance(frequency_hz: np.ndarray) -> np.ndarray:
    """An invented tunnel-diode-like device: 4 Ω + 0.6 nH + (−80 Ω ∥ 2 pF)."""
    s = 2j * np.pi * frequency_hz
    return 4.0 + s * 0.6e-9 + 1.0 / (-1.0 / 80.0 + s * 2e-12)


def load_impedance(frequency_hz: np.ndarray, resistance: float, inductance: float) -> np.ndarray:
    """An invented series R-L load."""
    return resistance + 2j * np.pi * frequency_hz * inductance


def touchstone(rng: random.Random, impedance: np.ndarray, frequency_hz: np.ndarray) -> str:
    """A one-port Touchstone file of ``impedance``: version, unit, parameter, format and
    reference chosen by ``rng`` (Touchstone specification 1.1 and 2.0)."""
    unit = rng.choice(list(UNITS))
    parameter = rng.choice("SZY")
    form = rng.choice(["RI", "MA", "DB"])
    reference = rng.choice([50.0, 50.0, 75.0, 25.0, 1.0])
    gamma = (impedance - reference) / (impedance + reference)
    values = {"S": gamma, "Z": impedance / reference, "Y": reference / impedance}[parameter]
    version2 = rng.random() < 0.4
    lines = ["! invented data for fuzzing"]
    if version2:
        lines += [
            "[Version] 2.0",
            f"# {unit} {parameter} {form} R {reference:g}",
            "[Number of Ports] 1",
        ]
        lines += [f"[Number of Frequencies] {frequency_hz.size}", "[Network Data]"]
    else:
        lines.append(f"# {unit} {parameter} {form} R {reference:g}")
    for f, value in zip(frequency_hz, values, strict=True):
        angle = math.degrees(np.angle(value))
        if form == "RI":
            pair = f"{value.real:.9g} {value.imag:.9g}"
        elif form == "MA":
            pair = f"{abs(value):.9g} {angle:.6f}"
        else:
            pair = f"{20 * math.log10(max(abs(value), 1e-300)):.9g} {angle:.6f}"
        lines.append(f"{f / UNITS[unit]:.12g} {pair}")
    if version2:
        lines.append("[End]")
    return "\n".join(lines) + "\n"


def device_and_load(rng: random.Random) -> tuple[str, str]:
    """A device file and a load file on overlapping grids."""
    points = rng.randint(8, 40)
    start = rng.choice([1e6, 1e8, 5e8])
    frequency = np.linspace(start, rng.choice([4e9, 6e9, 8e9]), points)
    resistance, inductance = rng.uniform(1, 100), rng.uniform(0.2e-9, 10e-9)
    device = touchstone(rng, device_impedance(frequency), frequency)
    load_grid = np.linspace(start, frequency[-1], rng.randint(8, 40))
    load = touchstone(rng, load_impedance(load_grid, resistance, inductance), load_grid)
    return device, load


def example(name: str) -> str:
    return (EXAMPLES / name).read_text()


NETLISTS = (
    "circuits/bias_tee.cir",
    "circuits/tunnel_diode.cir",
    "circuits/series_load.cir",
    "circuits/parallel_tank_load.cir",
    "circuits/negative_impedance_converter.cir",
    "circuits/cross_coupled_pair.cir",
    "oscillator/load.cir",
)
INVENTED_NETLISTS = (
    ".set R=20 Lt=3n\nR1 1 2 R\nL1 2 0 Lt\n.oneport 1\n",
    "R1 1 2 10\nL1 2 3 2n rser=0.5\nC1 3 0 1p q=50\n.oneport 1\n",
    "T1 1 0 2 0 z0=50 delay=20p\nR2 2 0 75\n.oneport 1\n",
    "T1 1 0 2 0 z0=30 len=10mm eeff=4 loss=0.5 at=2g\nC2 2 0 2p\n.oneport 1\n",
    "O1 1 0 z0=50 len=5mm\nR1 1 0 200\n.oneport 1\n",
    "N1 1 file=block.s1p\nR1 1 0 100\n.oneport 1\n",
    "G1 1 0 1 0 0.01\nR1 1 0 50\nC1 1 0 1p\n.oneport 1\n",
    "R1 1 0 50\nR2 1 2 50\nL2 2 0 1n\n.twoport 1 2\n",
)
MANIFESTS = ("tunnel_diode.toml", "iv_table.toml", "hard_excitation.toml", "drive_levels.toml")


# --- damage ------------------------------------------------------------------------------------

#: Numbers nobody measures, and words where numbers belong.
HOSTILE_NUMBERS = (
    "0", "-0", "-1", "1e308", "1e309", "-1e308", "1e-320", "5e-324", "nan", "NaN", "inf",
    "-inf", "99999999999999999999", "1e999", "", "abc", "1,5", "1.5.5", "0x10", "１２", "١٢",
    "1e-9", "-1e-9", "1" * 400, "1_000", "+", "-", ".", "e5", "1e", "1meg", "1mil", "12\x00",
    "\u00a012", "\u202e12", "3.3nH", "-12ps", "50ohm", "2.4GHz", "15dB", "5%", "-5%", "200%",
)  # fmt: skip
#: Values of options, as a careless or hostile person might type them.
HOSTILE_VALUES = (
    *HOSTILE_NUMBERS,
    " ", "\n", "\t", "'", '"', "--json", "-q", "-", "=", "1GHz:2GHz", "2GHz:1GHz", "1:2:3",
    "R=1:2:3", "R=5%", "x=1", "tcp://", "tcp://256.0.0.1:99999", "1,2:3,4", "0,0", "9,9",
    "1e6", "1e9", "100000001", "65", "1000", "0.5", "node:x", "element:y", "\x1b[31m", "∞",
)  # fmt: skip
#: Paths for options that name files to read or write.
HOSTILE_PATHS = (
    "", ".", "/", "{dir}", "{dir}/", "{dir}/missing/x", "/proc/x.png", "/proc/self/status",
    "/sys/x.csv", "/dev/null", "/dev/zero", "/dev/urandom", "{dir}/fifo", "{dir}/sub",
    "{dir}/a\nb.png", "{dir}/" + "x" * 300 + ".png", "{dir}/x.pdf", "{dir}/x.png",
    "{dir}/x.svg", "{dir}/x.html", "{dir}/x.csv", "{dir}/x.parquet", "{dir}/x.s1p",
    "{dir}/x.s2p", "{dir}/\u202egnp.svg", "{dir}/sub/..", "~/x.png", "{dir}/device.s1p",
    "{dir}/load.s1p", "{dir}/net.cir",
)  # fmt: skip
GARBAGE = "0123456789.-+eE  \t!#[]=:%RrSsZzYyMmAaDdBbHhGgKkLlCcTtNnOo,;_xXfFpPuU\x7f\u00b5\u00a0"
RAW_BYTES = (
    b"\x00", b"\xff\xfe", b"\xef\xbb\xbf", b"\x80\x81", b"\r", b"\x1b[2J", b"\xe2\x80\xae",
    b"\xc2\xa0", b"\n" * 50, b"9" * 5000, b"[" * 3000,
)  # fmt: skip


PLAUSIBLE_VALUES = (
    "3", "11", "2", "1", "0.01", "0.2", "1GHz", "8GHz", "10ohm", "75ohm", "-12ps", "12ps",
    "15dB", "6dB", "-3dB", "1e15", "0", "0Hz", "1e6", "100MHz:3GHz", "R=10%", "5%", "1,2",
    "20mA", "1.2V", "log", "{dir}/x.png", "{dir}/x.svg",
)  # fmt: skip
_NUMBER = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")


def damage(rng: random.Random, text: str, alphabet: str = GARBAGE, most: int = 5) -> bytes:
    """``text`` damaged, as bytes. Mostly (two in three) a soft change that keeps the file
    readable but changes what it says: one to three numbers scaled, negated, zeroed, made
    huge or tiny, or a line's numbers swapped with another's. Otherwise one to ``most`` hard
    mutations: lines dropped, duplicated, cut, garbled, swapped or inserted; a number or token
    replaced by a hostile one; raw bytes inserted; the file re-encoded (UTF-16, BOM, CRLF)."""
    if rng.random() < 2 / 3:
        return _soften(rng, text).encode()
    return _harden(rng, text, alphabet, most)


def _soften(rng: random.Random, text: str) -> str:
    lines = text.splitlines()
    numbered = [
        i for i, line in enumerate(lines) if _NUMBER.search(line) and line[:1] not in "!#*["
    ]
    for _ in range(rng.randint(1, 3)):
        if not numbered:
            break
        index = rng.choice(numbered)
        matches = list(_NUMBER.finditer(lines[index]))
        if len(matches) > 1 and rng.random() < 0.8:
            matches = matches[1:]  # the data rather than the frequency, mostly
        match = rng.choice(matches)
        value = float(match.group())
        changed = rng.choice(
            [value * rng.choice([-1, 0, 2, 10, 1e3, 1e-3, 1e6, 1e-9, 1.0000001]), 1e30, 1e-30,
             1.0, -1.0, 0.0]
        )  # fmt: skip
        line = lines[index]
        lines[index] = f"{line[: match.start()]}{changed:.9g}{line[match.end() :]}"
        if rng.random() < 0.2:
            other = rng.choice(numbered)
            lines[index], lines[other] = lines[other], lines[index]
    return "\n".join(lines) + "\n"


def _harden(rng: random.Random, text: str, alphabet: str, most: int) -> bytes:
    lines = text.splitlines()
    inserted: list[tuple[int, bytes]] = []
    for _ in range(rng.randint(1, most)):
        if not lines:
            lines = [""]
        index = rng.randrange(len(lines))
        operation = rng.choice(
            ["drop", "duplicate", "truncate", "garble", "swap", "insert", "number", "token",
             "bytes", "long"]
        )  # fmt: skip
        line = lines[index]
        if operation == "drop":
            del lines[index]
        elif operation == "duplicate":
            lines.insert(index, line)
        elif operation == "truncate":
            lines[index] = line[: rng.randint(0, len(line))]
        elif operation == "garble":
            chars = list(line) or [" "]
            for _ in range(rng.randint(1, 4)):
                chars[rng.randrange(len(chars))] = rng.choice(alphabet)
            lines[index] = "".join(chars)
        elif operation == "swap":
            other = rng.randrange(len(lines))
            lines[index], lines[other] = lines[other], lines[index]
        elif operation == "insert":
            lines.insert(index, "".join(rng.choice(alphabet) for _ in range(rng.randint(0, 40))))
        elif operation in ("number", "token"):
            tokens = line.split(" ")
            position = rng.randrange(len(tokens))
            pool = HOSTILE_NUMBERS if operation == "number" else HOSTILE_VALUES
            tokens[position] = rng.choice(pool)
            lines[index] = " ".join(tokens)
        elif operation == "bytes":
            inserted.append((rng.randrange(1 << 30), rng.choice(RAW_BYTES)))
        else:
            lines[index] = line + " " + " ".join(["1.0"] * rng.randint(1, 2000))
    ending = rng.choice(["\n", "\n", "\r\n", "\r"])
    joined = ending.join(lines) + (ending if rng.random() < 0.9 else "")
    encoding = rng.choice(["utf-8"] * 12 + ["utf-16", "utf-8-sig", "latin-1"])
    data = joined.encode(encoding, errors="replace")
    for position, raw in inserted:
        position %= len(data) + 1
        data = data[:position] + raw + data[position:]
    return data


# --- cases ------------------------------------------------------------------------------------


def touchstone_case(rng: random.Random) -> Case:
    """Damaged device or load files through check, poles, amplifier, sweep or watch."""
    device, load = device_and_load(rng)
    which = rng.choice(["device", "load", "both"])
    files = {
        "device.s1p": damage(rng, device) if which != "load" else device.encode(),
        "load.s1p": damage(rng, load) if which != "device" else load.encode(),
    }
    command = rng.choice(
        ["check"] * 6 + ["check-json"] * 6 + ["poles", "amplifier", "amplifier-load", "sweep",
                                              "watch", "check-dc"]
    )  # fmt: skip
    d, ld = "{dir}/device.s1p", "{dir}/load.s1p"
    argv = {
        "check": ["check", d, "--load", ld],
        "check-json": ["check", d, "--load", ld, "--json"],
        "check-dc": ["check", d, "--load", ld, "--device-dc-resistance", "-76ohm",
                     "--load-dc-resistance", "150", "--gamma-uncertainty", "0.01", "--json"],
        "poles": ["poles", d, "--load", ld, "--json", "--character"],
        "amplifier": ["amplifier", d, "--port-return-loss", "20dB", "--json"],
        "amplifier-load": ["amplifier", d, "--load", ld, "--json"],
        "sweep": ["sweep", d, "{dir}/device2.s1p", "--load", ld, "--json", "-o",
                  "{dir}/table.csv"],
        "watch": ["watch", "{dir}/bench", "--load", ld, "--report-dir", "{dir}/reports"],
    }[command]  # fmt: skip
    outputs: tuple[str, ...] = ()
    if command == "sweep":
        files["device2.s1p"] = device.encode()
        outputs = ("table.csv",)
    if command == "watch":
        files["bench/device.s1p"] = files.pop("device.s1p")
        outputs = ("reports", "reports/device.s1p.html")
    return Case(f"touchstone/{command}", argv, files, outputs)


def two_port_case(rng: random.Random) -> Case:
    """A damaged two-port through terminations or a terminated check."""
    text = damage(rng, example("circuits/transistor.s2p"))
    _, load = device_and_load(rng)
    if rng.random() < 0.5:
        argv = ["terminations", "{dir}/amp.s2p", "--at", rng.choice(["8GHz", "1GHz", "30GHz"]),
                "--json", "--terminated-port", rng.choice("12")]  # fmt: skip
    else:
        argv = ["check", "{dir}/amp.s2p", "--load", "{dir}/load.s1p", "--terminate-impedance",
                "10ohm", "--json"]  # fmt: skip
    return Case("two-port", argv, {"amp.s2p": text, "load.s1p": load.encode()})


def netlist_case(rng: random.Random) -> Case:
    """A damaged netlist through check, export, sweep or terminations."""
    base = rng.choice([example(name) for name in NETLISTS] + list(INVENTED_NETLISTS) * 2)
    alphabet = GARBAGE + "RLCGTON*.=\"'/" + "\u00b5"
    files = {
        "net.cir": damage(rng, base, alphabet),
        "block.s1p": example("stable/load.s1p").encode(),
    }
    device, _ = device_and_load(rng)
    files["device.s1p"] = device.encode()
    command = rng.choice(["check", "check", "export", "sweep", "both", "terminations"])
    outputs: tuple[str, ...] = ()
    if command == "check":
        argv = ["check", "{dir}/device.s1p", "--load", "{dir}/net.cir", "--json"]
    elif command == "both":
        files["diode.cir"] = example("circuits/tunnel_diode.cir").encode()
        argv = ["check", "{dir}/diode.cir", "--load", "{dir}/net.cir", "--start", "1MHz",
                "--stop", "6GHz", "--points", "201", "--json"]  # fmt: skip
    elif command == "export":
        name = rng.choice(["out.s1p", "out.s2p"])
        argv = ["export", "{dir}/net.cir", "--start", "1MHz", "--stop", "6GHz", "--points",
                "51", "-o", f"{{dir}}/{name}", "--json"]  # fmt: skip
        outputs = (name,)
    elif command == "sweep":
        argv = ["sweep", "{dir}/device.s1p", "--load", "{dir}/net.cir", "--tolerance",
                rng.choice(["R=20%", "Lt=10%", "LCHOKE=5%", "RSUPPLY=50%"]), "--samples", "20",
                "--json", "-o", "{dir}/table.parquet"]  # fmt: skip
        outputs = ("table.parquet",)
    else:
        argv = ["terminations", "{dir}/net.cir", "--at", "2GHz", "--start", "1GHz", "--stop",
                "3GHz", "--points", "21", "--json"]  # fmt: skip
    return Case(f"netlist/{command}", argv, files, outputs)


def manifest_case(rng: random.Random) -> Case:
    """A damaged oscillator manifest, I-V table or drive-level file through oscillator."""
    name = rng.choice(MANIFESTS)
    files: dict[str, bytes] = {name: example(f"oscillator/{name}").encode()}
    if name == "iv_table.toml":
        files["iv_table.csv"] = example("oscillator/iv_table.csv").encode()
    if name == "drive_levels.toml":
        for level in sorted((EXAMPLES / "oscillator" / "levels").iterdir()):
            files[f"levels/{level.name}"] = level.read_bytes()
    target = rng.choice(list(files))
    alphabet = GARBAGE + '"[]{}=,' + "\u00b5"
    files[target] = damage(rng, files[target].decode(), alphabet)
    load = rng.choice(["oscillator/load.s1p", "oscillator/load.cir", "stable/load.s1p",
                       "latch-up/load.ts", "undecidable/load.s1p"])  # fmt: skip
    load_name = "load" + Path(load).suffix
    files[load_name] = example(load).encode()
    argv = ["oscillator", f"{{dir}}/{name}", "--load", f"{{dir}}/{load_name}", "--json"]
    if rng.random() < 0.3:
        argv += ["--form", rng.choice(["auto", "admittance", "impedance"])]
    return Case(f"manifest/{name}", argv, files)


#: A valid run of every command, the base the option fuzzing starts from.
BASES: dict[str, list[str]] = {
    "check": ["check", "{dir}/device.s1p", "--load", "{dir}/load.s1p"],
    "check-netlists": ["check", "{dir}/diode.cir", "--load", "{dir}/net.cir"],
    "poles": ["poles", "{dir}/device.s1p", "--load", "{dir}/load.s1p"],
    "amplifier": ["amplifier", "{dir}/device.s1p"],
    "terminations": ["terminations", "{dir}/amp.s2p", "--at", "8GHz"],
    "export": ["export", "{dir}/net.cir", "--start", "1MHz", "--stop", "1GHz", "-o",
               "{dir}/out.s1p"],
    "sweep": ["sweep", "{dir}/device.s1p", "--load", "{dir}/net.cir", "--vary",
              "RSUPPLY=1:2:3"],
    "oscillator": ["oscillator", "{dir}/diode.toml", "--load", "{dir}/osc_load.s1p"],
    "stabilise": ["stabilise", "{dir}/device.s1p", "--load", "{dir}/load.s1p", "--family",
                  "series-resistor"],
    "watch": ["watch", "{dir}/bench", "--load", "{dir}/load.s1p"],
}  # fmt: skip
#: Values that would make a valid but very long run (a fuzzer must not wait hours).
TOO_LONG = {
    "--workers": lambda v: True, "--scheduler": lambda v: True,
    "--samples": lambda v: _number(v) > 200, "--points": lambda v: _number(v) > 20_000,
    "--chunk-size": lambda v: False, "--max-order": lambda v: _number(v) > 40,
}  # fmt: skip


def _number(text: str) -> float:
    try:
        return float(text.replace("_", ""))
    except ValueError:
        return 0.0


def base_files() -> dict[str, bytes]:
    """The files every base command line reads."""
    return {
        "device.s1p": example("oscillates/device.s1p").encode(),
        "load.s1p": example("oscillates/load.s1p").encode(),
        "net.cir": example("circuits/bias_tee.cir").encode(),
        "diode.cir": example("circuits/tunnel_diode.cir").encode(),
        "amp.s2p": example("circuits/transistor.s2p").encode(),
        "diode.toml": example("oscillator/tunnel_diode.toml").encode(),
        "osc_load.s1p": example("oscillator/load.s1p").encode(),
        "bench/new.s1p": example("stable/device.s1p").encode(),
    }


def command_options() -> dict[str, list[tuple[str, bool]]]:
    """Every option of every command: (flag, takes a value), read from the parser itself."""
    import argparse

    from oneport.cli import build_parser

    parser, _ = build_parser()
    subparsers = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    found = {}
    for name, command in subparsers.choices.items():
        found[name] = [
            (action.option_strings[-1], action.nargs != 0)
            for action in command._actions
            if action.option_strings and action.option_strings[-1] not in ("--help", "--traceback")
        ]
    return found


def option_case(rng: random.Random, options: dict[str, list[tuple[str, bool]]]) -> Case:
    """A valid command line with one to three options given hostile (or valid) values."""
    base_name = rng.choice(list(BASES))
    argv = list(BASES[base_name])
    files = base_files()
    fifos = ("fifo", "fifo.png", "fifo.s1p")
    command = argv[0]
    outputs: list[str] = ["out.s1p"] if command == "export" else []
    for _ in range(rng.randint(1, 3)):
        flag, takes_value = rng.choice(options[command])
        if not takes_value:
            argv.append(flag)
            continue
        pool = rng.choice([HOSTILE_VALUES, HOSTILE_PATHS, HOSTILE_NUMBERS, PLAUSIBLE_VALUES])
        value = rng.choice(pool)
        if flag in TOO_LONG and TOO_LONG[flag](value) and _accepted_count(value):
            value = "0"  # accepted, but a run of hours: not what a fuzzer can wait for
        if flag in ("--plot", "--report", "-o", "--output", "--report-dir"):
            value = rng.choice(HOSTILE_PATHS)
            name = _output_name(value)
            if name is not None and name not in _inputs(argv) and name not in fifos:
                outputs.append(name)  # a named output may be written; an input never
        argv += rng.choice([[flag, value], [f"{flag}={value}"]])
    if rng.random() < 0.3:
        argv.append("--json")
    if command == "watch":  # a report folder holds a report of each file checked
        outputs += [str(Path(name) / "new.s1p.html") for name in list(outputs)]
    return Case(f"options/{base_name}", argv, files, tuple(outputs), fifos, folders=("sub",))


def _output_name(value: str) -> str | None:
    """Where an output path lands in the case's folder (the run's working folder), or None
    for a place outside it."""
    if value.startswith("{dir}"):
        value = value.removeprefix("{dir}").lstrip("/") or "."
    elif value.startswith("/"):
        return None
    return os.path.normpath(value) if value else ""


def _inputs(argv: list[str]) -> set[str]:
    """Names of the case's folder that ``argv`` reads (a base command line's files, with the
    manifest's and netlist's own)."""
    named = {a.removeprefix("{dir}/") for a in argv if a.startswith("{dir}/")}
    return named | {"bench/new.s1p"}


def _accepted_count(text: str) -> bool:
    number = _number(text)
    return 1 <= number <= 1e8 and number == int(number)


def _edge_grid(rng: random.Random) -> np.ndarray:
    choice = rng.choice(["one", "two", "five", "dc", "wide", "dense", "repeat", "narrow"])
    if choice == "one":
        return np.array([1e9])
    if choice == "two":
        return np.array([1e9, 2e9])
    if choice == "five":
        return np.linspace(1e9, 2e9, 5)
    if choice == "dc":
        return np.linspace(0.0, 6e9, rng.randint(6, 60))
    if choice == "wide":
        return np.geomspace(1.0, 1e12, rng.randint(20, 200))
    if choice == "dense":
        return np.linspace(1e6, 6e9, rng.choice([5000, 20000]))
    if choice == "repeat":
        grid = np.linspace(1e8, 6e9, 20)
        grid[7] = grid[6]
        return grid
    return np.linspace(1e9, 1e9 + 1e-3, 10)


def _edge_gamma(rng: random.Random, frequency_hz: np.ndarray, device: bool) -> np.ndarray:
    n = frequency_hz.size
    choice = rng.choice(["zero", "one", "minus one", "huge", "tiny", "unit circle", "just below",
                         "just above", "model", "noise", "plus one at a sample"])  # fmt: skip
    if choice == "zero":
        return np.zeros(n, complex)
    if choice == "one":
        return np.ones(n, complex)
    if choice == "minus one":
        return -np.ones(n, complex)
    if choice == "huge":
        return np.full(n, 1e6 + 0j)
    if choice == "tiny":
        return np.full(n, 1e-300 + 0j)
    if choice == "unit circle":
        return np.exp(1j * np.linspace(0, 20, n))
    if choice == "just below":
        return np.full(n, 1 - 1e-16 + 0j)
    if choice == "just above":
        return np.full(n, 1 + 1e-12 + 0j)
    if choice == "noise":
        generator = np.random.default_rng(rng.randrange(2**32))
        return generator.normal(0, 2, n) + 1j * generator.normal(0, 2, n)
    if choice == "plus one at a sample":
        gamma = np.full(n, 0.5 + 0j)
        gamma[n // 2] = 1.0
        return gamma
    impedance = (
        device_impedance(frequency_hz) if device else load_impedance(frequency_hz, 20.0, 3e-9)
    )
    return (impedance - Z0) / (impedance + Z0)


def _plain_touchstone(frequency_hz: np.ndarray, gamma: np.ndarray) -> bytes:
    lines = ["! invented edge data", "# Hz S RI R 50"]
    lines += [
        f"{float(f)!r} {float(g.real)!r} {float(g.imag)!r}"
        for f, g in zip(frequency_hz, gamma, strict=True)
    ]
    return ("\n".join(lines) + "\n").encode()


def edge_data_case(rng: random.Random) -> Case:
    """Readable files saying extreme things: Γ of 0, ±1, 10⁶ or 10⁻³⁰⁰, a grid of one point
    or 20,000, from DC, over 12 decades, a repeated frequency, L exactly +1 at a sample."""
    grid = _edge_grid(rng)
    load_grid = grid if rng.random() < 0.7 else _edge_grid(rng)
    files = {
        "device.s1p": _plain_touchstone(grid, _edge_gamma(rng, grid, True)),
        "load.s1p": _plain_touchstone(load_grid, _edge_gamma(rng, load_grid, False)),
    }
    d, ld = "{dir}/device.s1p", "{dir}/load.s1p"
    command = rng.choice(["check", "check", "check-dc", "poles", "amplifier", "amplifier-load",
                          "bound", "sweep", "stabilise"])  # fmt: skip
    outputs: tuple[str, ...] = ()
    argv = {
        "check": ["check", d, "--load", ld, "--json"],
        "check-dc": ["check", d, "--load", ld, "--device-dc-resistance", "-76",
                     "--load-dc-resistance", "150", "--json", "--poles"],
        "poles": ["poles", d, "--load", ld, "--json", "--character"],
        "amplifier": ["amplifier", d, "--port-return-loss", "20dB", "--json"],
        "amplifier-load": ["amplifier", d, "--load", ld, "--json"],
        "bound": ["check", d, "--load-return-loss", "15dB", "--json"],
        "sweep": ["sweep", d, ld, "--load", ld, "--json", "-o", "{dir}/t.parquet"],
        "stabilise": ["stabilise", d, "--load", ld, "--json", "--family", "series-resistor"],
    }[command]  # fmt: skip
    if command == "sweep":
        outputs = ("t.parquet",)
    if grid.size > 5000 and command in ("poles", "stabilise", "check-dc"):
        argv = ["check", d, "--load", ld, "--json"]
    return Case(f"edge-data/{command}", argv, files, outputs)


#: Netlist values at and beyond their bounds (docs/netlist.md, "Value bounds").
EDGE_VALUES = ("1e-18", "1e-19", "1000", "1001", "1e15", "1.1e15", "1e-12", "0", "-50", "1e-3",
               "1e9", "5e-324", "1p", "1meg", "-1n")  # fmt: skip


def edge_netlist_case(rng: random.Random) -> Case:
    """Generated netlists: ladders of up to 300 elements and meshes of up to 30 nodes, with
    values drawn at and beyond the bounds, lines at their longest, shorted or floating ports."""
    elements = []
    if rng.random() < 0.5:
        for k in range(1, rng.randint(2, 300)):
            series = rng.choice("RL")
            shunt = rng.choice("RC")
            value = rng.choice(EDGE_VALUES[:9]) if rng.random() < 0.01 else rng.choice(["10", "1n"])
            elements.append(f"{series}s{k} n{k} n{k + 1} {value}")
            elements.append(f"{shunt}p{k} n{k + 1} 0 {rng.choice(['1p', '100', '2p', '1k'])}")
        port = "n1"
    else:
        nodes = [f"m{k}" for k in range(rng.randint(3, 30))] + ["0"]
        for k in range(rng.randint(3, 90)):
            a, b = rng.sample(nodes, 2)
            letter = rng.choice("RLCRRG")
            value = (
                rng.choice(EDGE_VALUES) if rng.random() < 0.02 else rng.choice(["50", "1n", "1p"])
            )
            if letter == "G":
                c, d = rng.sample(nodes, 2)
                elements.append(f"G{k} {a} {b} {c} {d} {rng.choice(['0.01', '-0.02', '1e3'])}")
            else:
                elements.append(f"{letter}{k} {a} {b} {value}")
        port = nodes[0]
    if rng.random() < 0.3:
        delay = rng.choice(["1m", "1.0001m", "1e-15", "0"])
        elements.append(f"T1 {port} 0 tx 0 z0={rng.choice(['50', '1e-3', '1e9'])} delay={delay}")
        elements.append("Rtx tx 0 50")
    text = "\n".join(elements) + f"\n.oneport {port}\n"
    files = {"net.cir": text.encode(), "device.s1p": example("oscillates/device.s1p").encode()}
    command = rng.choice(["check", "export", "both"])
    outputs: tuple[str, ...] = ()
    if command == "check":
        argv = ["check", "{dir}/device.s1p", "--load", "{dir}/net.cir", "--json"]
    elif command == "export":
        argv = ["export", "{dir}/net.cir", "--start", "0", "--stop", rng.choice(["6GHz", "1e15"]),
                "--points", "101", "-o", "{dir}/out.s1p", "--json"]  # fmt: skip
        outputs = ("out.s1p",)
    else:
        files["diode.cir"] = example("circuits/tunnel_diode.cir").encode()
        argv = ["check", "{dir}/diode.cir", "--load", "{dir}/net.cir", "--json"]
    return Case(f"edge-netlist/{command}", argv, files, outputs)


def linked_output_case(rng: random.Random) -> Case:
    """An output path that is an input under another name (symbolic or hard link)."""
    files = base_files()
    base_name, flag, name = rng.choice(
        [("check", "--report", "r.html"), ("check", "--plot", "p.png"),
         ("check-netlists", "--plot", "p.svg"), ("sweep", "-o", "t.csv"),
         ("export", "-o", "e.s1p"), ("terminations", "--plot", "c.png"),
         ("oscillator", "--plot", "o.png"), ("amplifier", "--plot", "a.svg")]
    )  # fmt: skip
    argv = [a for a in BASES[base_name] if not a.endswith("/out.s1p")]
    if base_name == "export":
        argv = argv[:-1]  # its own -o goes
    inputs = [a.removeprefix("{dir}/") for a in argv if a.startswith("{dir}/") and "." in a]
    target = rng.choice(inputs)
    argv += [flag, f"{{dir}}/{name}"]
    kind = rng.choice(["symlink", "hardlink"])
    return Case(f"linked/{kind}", argv, files, links=((name, target, kind),))


KINDS = {
    "touchstone": touchstone_case,
    "two-port": two_port_case,
    "netlist": netlist_case,
    "manifest": manifest_case,
    "edge-data": edge_data_case,
    "edge-netlist": edge_netlist_case,
    "linked": linked_output_case,
}
