"""Every option's rule, written once: what it accepts, its bounds, and its one-line refusal.

Each command declares its options through :func:`add` with a *rule* from this module. The rule
runs while the command line is parsed, before any file is read or anything is computed, and
either returns the value in SI units (or a whole number, or a checked path) or raises
:class:`~oneport.errors.InputError` with one line: the option, the bad value, what is accepted.
An option that appears in several commands has the same rule in all of them, and the limits
below are the only ones (listed in README.md, "Usage").

Rules that join several options (a frequency grid, the outputs against the inputs) are
functions here too: :func:`grid` and :func:`outputs`, which every command calls first in its
``run``, before any work.

A negative quantity after a space is read as the option's value (``--device-delay -12ps``), as
people type it: :func:`join_negative_values` rewrites it to ``--device-delay=-12ps`` before
argparse, which would otherwise take ``-12ps`` for an option.
"""

from __future__ import annotations

import argparse
import math
import re
from collections.abc import Callable, Iterable, Sequence
from decimal import Decimal, InvalidOperation
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, printable
from ..products.sweep.plan import MAX_VARIANTS as PLAN_MAX_VARIANTS
from ..rendering.figures import PLOT_FORMATS
from ..units import parse_decibels, parse_quantity

Rule = Callable[[str, str], Any]

# -- the limits (README.md, "Usage"; docs/sweep.md) ------------------------------------------

#: Highest frequency any option takes, Hz: far beyond RF, and low enough that 2π·f times any
#: netlist value's bound stays finite (docs/netlist.md, value bounds).
MAX_FREQUENCY_HZ = 1e15
#: Most frequency points of a grid given with --points.
MAX_POINTS = 1_000_000
#: Most variants of one sweep (grid combinations, Monte Carlo samples), and of --chunk-size:
#: the plan's own limit (the per-variant table is held in memory).
MAX_VARIANTS = PLAN_MAX_VARIANTS
#: Most threads (--threads) and local worker processes (--workers).
MAX_PARALLEL = 64
#: Largest --seed (NumPy's seed sequences take any whole number from 0).
MAX_SEED = 2**64 - 1
#: Most poles a rational fit may try (--max-order).
MAX_MODEL_ORDER = 200
#: Reference and measurement impedances, Ω.
IMPEDANCE_RANGE_OHM = (1e-3, 1e6)
#: A DC resistance or a termination beyond this, Ω, is an open circuit, not a value.
MAX_RESISTANCE_OHM = 1e12
#: A plane shift longer than this is no cable or fixture: a unit was probably left out, s.
MAX_DELAY_S = 1e-6
#: Return losses (--load-return-loss, --port-return-loss), dB: 100 dB is |Γ| = 10⁻⁵.
RETURN_LOSS_RANGE_DB = (0.0, 100.0)
#: A gain threshold, dB (a power ratio of 10⁻¹⁰ to 10¹⁰).
GAIN_RANGE_DB = (-100.0, 100.0)


# -- rules: text and option name in, value out ------------------------------------------------


def _frequency(text: str, option: str) -> float:
    value = parse_quantity(text, "frequency", option=option)
    if not 0.0 <= value <= MAX_FREQUENCY_HZ:
        raise InputError(
            f"{option}: {text!r} is outside 0 Hz to {MAX_FREQUENCY_HZ:g} Hz; give a frequency"
            " in that range, e.g. 2.4GHz"
        )
    return value


def frequency(text: str, option: str) -> float:
    """A frequency from 0 Hz to :data:`MAX_FREQUENCY_HZ`, Hz (``2.4GHz``, ``1e9``)."""
    return _frequency(text, option)


def impedance(text: str, option: str) -> float:
    """A reference or measurement impedance inside :data:`IMPEDANCE_RANGE_OHM`, Ω."""
    value = parse_quantity(text, "resistance", option=option)
    low, high = IMPEDANCE_RANGE_OHM
    if not low <= value <= high:
        raise InputError(
            f"{option}: {text!r} is not accepted; give a positive impedance from {low:g} ohm to"
            f" {high:g} ohm, e.g. 50ohm"
        )
    return value


def dc_resistance(text: str, option: str) -> float:
    """A DC resistance of either sign (an I–V slope may be negative), Ω."""
    value = parse_quantity(text, "resistance", option=option)
    if not abs(value) <= MAX_RESISTANCE_OHM:
        raise InputError(
            f"{option}: {text!r} is beyond {MAX_RESISTANCE_OHM:g} ohm in magnitude; give a"
            " resistance (negative for a device's falling I-V slope), e.g. -76ohm"
        )
    return value


def termination(text: str, option: str) -> float:
    """A passive termination resistance, 0 Ω (a short) up to :data:`MAX_RESISTANCE_OHM`."""
    value = parse_quantity(text, "resistance", option=option)
    if not 0.0 <= value <= MAX_RESISTANCE_OHM:
        raise InputError(
            f"{option}: {text!r} is not accepted; give a resistance from 0 ohm (a short) to"
            f" {MAX_RESISTANCE_OHM:g} ohm, e.g. 10ohm"
        )
    return value


def delay(text: str, option: str) -> float:
    """A one-way line delay of either sign, at most :data:`MAX_DELAY_S` long, s."""
    value = parse_quantity(text, "time", option=option)
    if abs(value) > MAX_DELAY_S:
        raise InputError(
            f"{option}: {text!r} is {value:g} s of line, far beyond any fixture or cable; give"
            " the unit, e.g. 12ps or 0.5ns"
        )
    return value


def interval(text: str, option: str) -> float:
    """A polling interval inside the watch's range (50 ms to 1 h), s."""
    from ..products.watch import MAXIMUM_INTERVAL_S, MINIMUM_INTERVAL_S

    value = parse_quantity(text, "time", option=option)
    if not MINIMUM_INTERVAL_S <= value <= MAXIMUM_INTERVAL_S:
        raise InputError(
            f"{option}: {value:g} s is outside the accepted range; give a time from"
            f" {MINIMUM_INTERVAL_S * 1e3:g} ms to {MAXIMUM_INTERVAL_S / 3600:g} h, e.g. 1s"
        )
    return value


def decibels(low: float, high: float, what: str) -> Rule:
    """A rule for a level in dB inside [``low``, ``high``]; ``what`` names it in the refusal."""

    def rule(text: str, option: str) -> float:
        value = parse_decibels(text, option=option)
        if not (math.isfinite(value) and low <= value <= high):
            raise InputError(
                f"{option}: {text!r} is not accepted; give {what} from {low:g} dB to"
                f" {high:g} dB, e.g. 15dB"
            )
        return value

    return rule


#: --load-return-loss and --port-return-loss: one rule for the one question.
return_loss = decibels(*RETURN_LOSS_RANGE_DB, "a return loss")
#: --gain-threshold.
gain = decibels(*GAIN_RANGE_DB, "a gain")


def injection_below(text: str, option: str) -> float:
    """How far injected power lies below the oscillator's, dB: the oscillator's own rule."""
    from ..products.oscillator.analysis import injection_ratio_below

    value = parse_decibels(text, option=option)
    injection_ratio_below(value, option)
    return value


def whole_number(low: int, high: int, what: str) -> Rule:
    """A rule for a whole number inside [``low``, ``high``] (``1000``, ``1e6``)."""

    def rule(text: str, option: str) -> int:
        value = _whole(text)
        if value is None:
            raise InputError(
                f"{option}: cannot read {text!r} as a whole number; give {what}, e.g. {low + 1}"
            )
        if not low <= value <= high:
            raise InputError(
                f"{option}: {text.strip()} is outside the accepted range; give {what} from"
                f" {low:,} to {high:,}"
            )
        return value

    return rule


def _whole(text: str) -> int | None:
    try:
        number = Decimal(text.strip().replace("_", ""))
    except InvalidOperation:
        return None
    if not number.is_finite() or number != number.to_integral_value():
        return None
    return int(number)


points = whole_number(1, MAX_POINTS, "a number of frequency points")
samples = whole_number(1, MAX_VARIANTS, "a number of Monte Carlo samples")
chunk_size = whole_number(1, MAX_VARIANTS, "a number of variants per chunk")
threads = whole_number(1, MAX_PARALLEL, "a number of threads")
workers = whole_number(1, MAX_PARALLEL, "a number of worker processes")
seed = whole_number(0, MAX_SEED, "a seed")
model_order = whole_number(1, MAX_MODEL_ORDER, "a number of poles")


def gamma_uncertainty(text: str, option: str) -> float | tuple[float, float]:
    """One |Γ| error for both sides, or ``device,load``; each in [0, 1)."""
    fields = text.split(",")
    try:
        values = [float(field) for field in fields]
    except ValueError:
        values = []
    if len(values) not in (1, 2) or not all(0.0 <= v < 1.0 for v in values):
        raise InputError(
            f"{option}: cannot read {text!r}; give an absolute |gamma| error in [0, 1), e.g."
            " 0.01, or device,load as 0.01,0.02"
        )
    return values[0] if len(values) == 1 else (values[0], values[1])


def port_pairs(text: str, option: str) -> tuple[tuple[int, int], ...]:
    """``P,N`` or ``P,N:P,N``: the differential port's single-ended pairs."""
    from ..reading.planes import parse_port_pairs

    return tuple(parse_port_pairs(text, option=option))


def parameter(text: str, option: str) -> tuple[str, float]:
    """``NAME=VALUE``: a netlist ``.set`` override, with netlist value suffixes."""
    from ..circuit.values import ValueTokenError, is_name, parse_number

    name, equals, value_text = text.partition("=")
    name = name.strip()
    if not equals or not is_name(name):
        raise InputError(f"{option} {text!r}: give NAME=VALUE, e.g. {option} RL=75")
    try:
        value = parse_number(value_text.strip())
    except ValueTokenError as error:
        raise InputError(f"{option} {name}: {error}") from None
    if value is None or not math.isfinite(value):
        raise InputError(
            f"{option} {text!r}: {value_text!r} is not a number (netlist suffixes: 2.2p, 5meg)"
        )
    return name, value


def vary(text: str, option: str) -> tuple[str, float, float, int]:
    """``NAME=START:STOP:COUNT``: one axis of a sweep's grid."""
    from ..products.sweep.plan import parse_vary

    name, start, stop, count = parse_vary(text)
    if count > MAX_VARIANTS:
        raise InputError(
            f"{option} {text!r}: {count:,} values is above the limit of {MAX_VARIANTS:,} variants"
            " per sweep; give fewer"
        )
    return name, start, stop, count


def tolerance(text: str, option: str) -> tuple[str, float]:
    """``NAME=PERCENT%``: a Monte Carlo tolerance around a netlist parameter's value."""
    from ..products.sweep.plan import parse_tolerance

    return parse_tolerance(text)


def scheduler(text: str, option: str) -> str:
    """A Dask scheduler's address: ``tcp://HOST:PORT`` (or ``tls://``)."""
    match = re.fullmatch(r"(tcp|tls)://([^\s/:]+|\[[0-9A-Fa-f:.]+\]):(\d{1,5})", text.strip())
    if match is None or not 1 <= int(match.group(3)) <= 65535:
        raise InputError(
            f"{option}: cannot read {text!r} as a scheduler's address; give tcp://HOST:PORT,"
            " e.g. tcp://127.0.0.1:8786"
        )
    return text.strip()


def margin(text: str, option: str) -> str:
    """A stabilising margin (``0.2`` or ``6dB``): the stabilising advice's own rule."""
    from ..products.stabilise.goal import parse_margins

    parse_margins([text])
    return text


def band(text: str, option: str) -> str:
    """``F1:F2``, each frequency inside the accepted range: the advice's own rule too."""
    from ..products.stabilise.goal import parse_band

    parts = text.split(":")
    if len(parts) == 2:
        for part in parts:
            _frequency(part, option)
    parse_band(text)
    return text


def positive_frequency(text: str, option: str) -> float:
    """A frequency above 0 Hz and at most :data:`MAX_FREQUENCY_HZ`, Hz."""
    value = _frequency(text, option)
    if not value > 0.0:
        raise InputError(f"{option}: {text!r}: a frequency above 0 Hz is needed, e.g. 2.1GHz")
    return value


def stabilise_tolerance(text: str, option: str) -> str:
    """``5%`` (the added elements) or ``NAME=10%`` (a load netlist parameter)."""
    from ..products.sweep.plan import parse_tolerance

    if "=" in text:
        parse_tolerance(text)
    else:
        parse_tolerance(f"x={text}")
    return text


def current(text: str, option: str) -> str:
    """A DC current with its unit (``20mA``), finite."""
    parse_quantity(text, "current", option=option)
    return text


def voltage(text: str, option: str) -> str:
    """A DC voltage with its unit (``1.2V``), finite."""
    parse_quantity(text, "voltage", option=option)
    return text


def input_path(text: str, option: str) -> str:
    """A file to read: any non-empty path (reading refuses what is not a regular file)."""
    if not text.strip():
        raise InputError(f"{option}: an empty file name; give the file's path")
    return text


def folder(text: str, option: str) -> str:
    """A folder: any non-empty path."""
    if not text.strip():
        raise InputError(f"{option}: an empty folder name; give the folder's path")
    return text


def _output(suffixes: Sequence[str], what: str) -> Rule:
    def rule(text: str, option: str) -> str:
        if not text.strip():
            raise InputError(
                f"{option}: an empty file name; give a path ending in {_listed(suffixes)}"
            )
        suffix = Path(text).suffix.lower()
        if suffix not in suffixes:
            raise InputError(
                f"{option} {printable(text)}: cannot write {what} as"
                f" {printable(suffix) or 'a file without suffix'!r}; give a file name ending in"
                f" {_listed(suffixes)}"
            )
        return text

    return rule


def _listed(suffixes: Sequence[str]) -> str:
    return ", ".join(suffixes[:-1]) + f" or {suffixes[-1]}" if len(suffixes) > 1 else suffixes[0]


#: Every picture a command writes: one set of formats for all (rendering/figures.py).
PLOT_SUFFIXES = tuple(PLOT_FORMATS)
plot = _output(PLOT_SUFFIXES, "a plot")
report = _output((".html", ".htm"), "a report")
table = _output((".parquet", ".csv"), "the table")
touchstone_output = _output((".s1p", ".s2p"), "a netlist's S-parameters")


# -- argparse actions ---------------------------------------------------------------------------


class _Checked(argparse.Action):
    """Stores ``rule(value, option)``; a refusal propagates as the one-line ``InputError``."""

    def __init__(self, option_strings: Sequence[str], dest: str, rule: Rule, **kwargs: Any):
        super().__init__(option_strings, dest, **kwargs)
        self.rule = rule

    def __call__(
        self,
        parser: argparse.ArgumentParser,
        namespace: argparse.Namespace,
        values: Any,
        option_string: str | None = None,
    ) -> None:
        name = option_string or self.metavar or self.dest.upper()
        if isinstance(values, list):
            setattr(namespace, self.dest, [self.rule(v, str(name)) for v in values])
        else:
            setattr(namespace, self.dest, self.rule(values, str(name)))


class _CheckedAppend(_Checked):
    """A repeatable option: each value checked by the rule, all kept in order."""

    def __call__(
        self,
        parser: argparse.ArgumentParser,
        namespace: argparse.Namespace,
        values: Any,
        option_string: str | None = None,
    ) -> None:
        kept = list(getattr(namespace, self.dest, None) or [])
        kept.append(self.rule(values, str(option_string or self.dest)))
        setattr(namespace, self.dest, kept)


class _Renamed(argparse.Action):
    """An old spelling, refused with the new one: one option, one meaning."""

    def __init__(self, option_strings: Sequence[str], dest: str, message: str, **kwargs: Any):
        super().__init__(option_strings, dest, nargs="?", help=argparse.SUPPRESS, **kwargs)
        self.message = message

    def __call__(self, *args: Any, **kwargs: Any) -> None:
        raise InputError(self.message)


def add(
    where: Any, *flags: str, rule: Rule, repeat: bool = False, **kwargs: Any
) -> argparse.Action:
    """Register an option (or a positional) whose value ``rule`` checks while parsing.

    ``repeat`` makes it repeatable (a list, ``[]`` when absent). Defaults are given as values
    (SI units), not as text: they are the program's own and need no checking.
    """
    if repeat:
        kwargs.setdefault("default", [])
        return where.add_argument(*flags, action=_CheckedAppend, rule=rule, **kwargs)
    return where.add_argument(*flags, action=_Checked, rule=rule, **kwargs)


def renamed(where: Any, old: str, message: str) -> None:
    """Keep ``old`` as an option that is refused with ``message`` (hidden from --help)."""
    where.add_argument(old, action=_Renamed, message=message, dest=f"_renamed_{old.strip('-')}")


# -- negative values after a space --------------------------------------------------------------

_NEGATIVE_QUANTITY = re.compile(r"-(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?\s*[A-Za-zµΩ%]*")


def join_negative_values(arguments: Sequence[str], takes_value: Callable[[str], bool]) -> list[str]:
    """``--opt -12ps`` → ``--opt=-12ps`` wherever ``--opt`` takes one value.

    argparse reads ``-12ps`` as an unknown option; a negative quantity (a number with an
    optional unit) right after an option that takes a value is that option's value. Nothing
    after ``--`` is touched.

    Examples
    --------
    >>> join_negative_values(["d.s1p", "--device-delay", "-12ps", "-q"], lambda o: o != "-q")
    ['d.s1p', '--device-delay=-12ps', '-q']
    """
    joined: list[str] = []
    index = 0
    while index < len(arguments):
        token = arguments[index]
        if token == "--":
            joined += arguments[index:]
            break
        following = arguments[index + 1] if index + 1 < len(arguments) else None
        if (
            following is not None
            and token.startswith("-")
            and "=" not in token
            and _NEGATIVE_QUANTITY.fullmatch(following)
            and takes_value(token)
        ):
            joined.append(f"{token}={following}")
            index += 2
            continue
        joined.append(token)
        index += 1
    return joined


# -- rules that join options --------------------------------------------------------------------


def add_grid(command: argparse.ArgumentParser, title: str, default_points: int = 2001) -> None:
    """``--start``, ``--stop``, ``--points``, ``--spacing``: a grid of the user's choosing."""
    group = command.add_argument_group(title)
    add(group, "--start", rule=frequency, metavar="FREQUENCY", help="e.g. 1MHz")
    add(group, "--stop", rule=frequency, metavar="FREQUENCY", help="e.g. 6GHz")
    add(
        group,
        "--points",
        rule=points,
        metavar="N",
        help=f"default {default_points}, at most {MAX_POINTS:,}",
    )
    group.add_argument("--spacing", choices=("linear", "log"), help="default linear")
    command.set_defaults(default_points=default_points)


def grid(
    arguments: argparse.Namespace,
    *,
    netlists: bool,
    required: bool,
    data: str = "",
    when: str = "both sides netlists",
) -> np.ndarray | None:
    """The grid the grid options give, Hz; None when none is given and none is required.

    ``netlists`` says whether the run evaluates netlists on this grid (``when`` says when
    that is); otherwise any grid option is refused rather than ignored, since the data's own
    grid is used (``data`` names the file whose grid that is).
    """
    given = [
        flag
        for flag, value in (
            ("--start", arguments.start),
            ("--stop", arguments.stop),
            ("--points", arguments.points),
            ("--spacing", arguments.spacing),
        )
        if value is not None
    ]
    if not netlists:
        if given:
            raise InputError(
                f"{given[0]}: the grid options apply to netlists only ({when}); the analysis runs"
                f" on the data's own grid{f' ({printable(data)})' if data else ''}, so leave out"
                " --start, --stop, --points and --spacing"
            )
        return None
    if arguments.start is None or arguments.stop is None:
        if required or arguments.start is not None or arguments.stop is not None:
            needs = f"{printable(data)}: a netlist needs" if data else "give"
            raise InputError(f"{needs} --start and --stop for its grid (e.g. 1MHz and 6GHz)")
        if given:
            raise InputError(f"{given[0]} goes with --start and --stop; give both")
        return None
    from ..products.export import frequency_grid

    count = arguments.points if arguments.points is not None else arguments.default_points
    return frequency_grid(arguments.start, arguments.stop, count, arguments.spacing or "linear")


def outputs(named: dict[str, str | None], inputs: Iterable[str | Path | None]) -> dict[str, Path]:
    """The run's outputs, checked before any work (rendering/files.py ``check_targets``).

    ``inputs`` are the files named on the command line; a netlist's ``file=`` blocks and a
    manifest's data files are looked up here too, so no output can land on any of them.
    """
    from ..rendering.files import check_targets

    if not any(path is not None for path in named.values()):
        return {}
    return check_targets(named, input_files(inputs))


def input_files(paths: Iterable[str | Path | None]) -> list[Path]:
    """``paths`` and every file they name in turn (netlist blocks, manifest data)."""
    found: list[Path] = []
    for path in paths:
        if path is None:
            continue
        found.append(Path(path))
        suffix = Path(path).suffix.lower()
        if suffix == ".cir":
            found += _netlist_files(path)
        elif suffix == ".toml":
            found += _manifest_files(path)
    return found


def _netlist_files(path: str | Path) -> list[Path]:
    from ..circuit import read_circuit

    circuit = read_circuit(path)
    return [Path(element.path) for element in circuit.elements if hasattr(element, "path")]


def _manifest_files(path: str | Path) -> list[Path]:
    from ..products.oscillator.manifest import read_device_description

    device = read_device_description(path)
    named = [getattr(port, "source", None) for port in getattr(device, "ports", ())]
    named.append(getattr(device, "table_source", None))
    return [Path(name) for name in named if name]
