"""What the product functions accept, read once for Python callers and the commands alike.

Every product function takes quantities as numbers (SI: Ω, s, Hz) or as text with a unit
(``"50ohm"``, ``"12ps"``, ``"2.4GHz"``, ``"15dB"``), reads them by :mod:`oneport.units`' one rule,
and names the command's option in its error, so ``oneport.check(…, device_delay_s="12")`` fails
with the same line as ``oneport check … --device-delay 12``. The bounds below are the only ones:
the commands' option rules (:mod:`oneport.commands.options`) are these readers, run while the
command line is parsed, and the product functions read their arguments through them again, so a
Python call meets the same limits and the same one-line refusals. This room reads arguments; it
computes nothing.
"""

from __future__ import annotations

import math
import numbers
import re
from collections.abc import Callable, Iterable, Mapping, Sequence
from decimal import Decimal, InvalidOperation
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, printable
from ..reading.preparation import PortSetup
from ..units import decibels, quantity

# -- the limits (README.md, "Usage"; docs/sweep.md) ------------------------------------------

#: How a grid's frequencies are spaced.
SPACINGS = ("linear", "log")
#: Highest frequency anything takes, Hz: far beyond RF, and low enough that 2π·f times any
#: netlist value's bound stays finite (docs/netlist.md, value bounds).
MAX_FREQUENCY_HZ = 1e15
#: Most frequency points of a grid (``--points``, ``frequency_hz``).
MAX_POINTS = 1_000_000
#: Most variants of one sweep (grid combinations, Monte Carlo samples) and of a chunk. The
#: runner holds the per-variant table in memory, about 100 bytes a variant: some 10 GB here.
MAX_VARIANTS = 100_000_000
#: Most threads (``--threads``) and local worker processes (``--workers``).
MAX_PARALLEL = 64
#: Largest seed (NumPy's seed sequences take any whole number from 0).
MAX_SEED = 2**64 - 1
#: Most poles a rational fit may try (``--max-order``).
MAX_MODEL_ORDER = 200
#: Reference and measurement impedances, Ω.
IMPEDANCE_RANGE_OHM = (1e-3, 1e6)
#: A DC resistance or a termination beyond this, Ω, is an open circuit, not a value.
MAX_RESISTANCE_OHM = 1e12
#: A plane shift longer than this is no cable or fixture: a unit was probably left out, s.
LONGEST_DELAY_S = 1e-6
#: Return losses (``--load-return-loss``, ``--port-return-loss``), dB: 100 dB is |Γ| = 10⁻⁵.
RETURN_LOSS_RANGE_DB = (0.0, 100.0)
#: A gain threshold, dB (a power ratio of 10⁻¹⁰ to 10¹⁰).
GAIN_RANGE_DB = (-100.0, 100.0)

#: A reader: the value as given (number or text) and the option that names it, in; the value
#: in SI units (or a whole number, or a checked text) out, or one-line ``InputError``.
Reader = Callable[[Any, str], Any]


def _shown(value: Any) -> str:
    """The value as the refusal quotes it: text as typed (``'-5ohm'``), a number plainly."""
    if isinstance(value, str):
        return repr(printable(value))
    if isinstance(value, numbers.Real) and not isinstance(value, bool):
        return f"{float(value):g}"
    return printable(repr(value))


# -- quantities --------------------------------------------------------------------------------


def optional_quantity(value: Any, kind: str, option: str) -> float | None:
    """``value`` in SI units by :func:`oneport.units.quantity`, or None when not given."""
    return None if value is None else quantity(value, kind, option=option)


def optional_decibels(value: Any, option: str) -> float | None:
    """``value`` in dB by :func:`oneport.units.decibels`, or None when not given."""
    return None if value is None else decibels(value, option=option)


def optional(reader: Reader, value: Any, option: str) -> Any:
    """``reader(value, option)``, or None when ``value`` is None (not given)."""
    return None if value is None else reader(value, option)


def frequency(value: Any, option: str) -> float:
    """A frequency from 0 Hz to :data:`MAX_FREQUENCY_HZ`, Hz (``"2.4GHz"``, ``1e9``).

    Examples
    --------
    >>> frequency("2.4GHz", "--at")
    2400000000.0
    >>> frequency("1e308", "--stop")
    Traceback (most recent call last):
    ...
    oneport.errors.InputError: --stop: 1e+308 Hz is outside 0 Hz to 1e+15 Hz; give a frequency in \
that range, e.g. 2.4GHz
    """
    hertz = quantity(value, "frequency", option=option)
    if not 0.0 <= hertz <= MAX_FREQUENCY_HZ:
        raise InputError(
            f"{option}: {hertz:g} Hz is outside 0 Hz to {MAX_FREQUENCY_HZ:g} Hz; give a"
            " frequency in that range, e.g. 2.4GHz"
        )
    return hertz


def positive_frequency(value: Any, option: str) -> float:
    """A frequency above 0 Hz and at most :data:`MAX_FREQUENCY_HZ`, Hz."""
    hertz = frequency(value, option)
    if not hertz > 0.0:
        raise InputError(f"{option}: {hertz:g} Hz: a frequency above 0 Hz is needed, e.g. 2.1GHz")
    return hertz


def impedance(value: Any, option: str) -> float:
    """A reference or measurement impedance inside :data:`IMPEDANCE_RANGE_OHM`, Ω.

    Examples
    --------
    >>> impedance("50ohm", "--measurement-impedance")
    50.0
    >>> impedance("-5ohm", "--measurement-impedance")
    Traceback (most recent call last):
    ...
    oneport.errors.InputError: --measurement-impedance: -5 ohm is not accepted; give a positive \
number of ohms from 0.001 ohm to 1e+06 ohm, e.g. 50ohm
    """
    ohms = quantity(value, "resistance", option=option)
    low, high = IMPEDANCE_RANGE_OHM
    if not low <= ohms <= high:
        raise InputError(
            f"{option}: {ohms:g} ohm is not accepted; give a positive number of ohms from"
            f" {low:g} ohm to {high:g} ohm, e.g. 50ohm"
        )
    return ohms


def positive_resistance(value: Any, option: str) -> float | None:
    """A reference or measurement impedance (:func:`impedance`), or None when not given."""
    return optional(impedance, value, option)


def dc_resistance(value: Any, option: str) -> float:
    """A DC resistance of either sign (an I–V slope may be negative), Ω."""
    ohms = quantity(value, "resistance", option=option)
    if not abs(ohms) <= MAX_RESISTANCE_OHM:
        raise InputError(
            f"{option}: {ohms:g} ohm is beyond {MAX_RESISTANCE_OHM:g} ohm in magnitude; give"
            " a resistance (negative for a device's falling I-V slope), e.g. -76ohm"
        )
    return ohms


def termination(value: Any, option: str) -> float:
    """A passive termination resistance, 0 Ω (a short) up to :data:`MAX_RESISTANCE_OHM`."""
    ohms = quantity(value, "resistance", option=option)
    if not 0.0 <= ohms <= MAX_RESISTANCE_OHM:
        raise InputError(
            f"{option}: {ohms:g} ohm is not accepted; give a resistance from 0 ohm (a short)"
            f" to {MAX_RESISTANCE_OHM:g} ohm, e.g. 10ohm"
        )
    return ohms


def delay(value: Any, option: str) -> float:
    """A one-way line delay of either sign, s (0 when not given); longer than
    :data:`LONGEST_DELAY_S` is refused as a slip."""
    if value is None:
        return 0.0
    seconds = quantity(value, "time", option=option)
    if abs(seconds) > LONGEST_DELAY_S:
        raise InputError(
            f"{option}: {seconds:g} s of line is far beyond any fixture or"
            " cable; give the unit, e.g. 12ps or 0.5ns"
        )
    return seconds


def interval(value: Any, option: str) -> float:
    """A polling interval inside the watch's range (50 ms to 1 h), s."""
    from .watch import MAXIMUM_INTERVAL_S, MINIMUM_INTERVAL_S

    seconds = quantity(value, "time", option=option)
    if not MINIMUM_INTERVAL_S <= seconds <= MAXIMUM_INTERVAL_S:
        raise InputError(
            f"{option}: {seconds:g} s is outside the accepted range; give a time from"
            f" {MINIMUM_INTERVAL_S * 1e3:g} ms to {MAXIMUM_INTERVAL_S / 3600:g} h, e.g. 1s"
        )
    return seconds


def _level(low: float, high: float, what: str) -> Reader:
    """A reader of a level in dB inside [``low``, ``high``]; ``what`` names it in the refusal."""

    def read(value: Any, option: str) -> float:
        level = decibels(value, option=option)
        if not low <= level <= high:
            raise InputError(
                f"{option}: {level:g} dB is not accepted; give {what} from {low:g} dB to"
                f" {high:g} dB, e.g. 15dB"
            )
        return level

    return read


#: A return loss (``--load-return-loss``, ``--port-return-loss``): one reader, one question.
return_loss = _level(*RETURN_LOSS_RANGE_DB, "a return loss")
#: A gain threshold (``--gain-threshold``).
gain = _level(*GAIN_RANGE_DB, "a gain")


def injection_below(value: Any, option: str) -> float:
    """How far injected power lies below the oscillator's, dB: the oscillator's own rule."""
    from .oscillator.analysis import injection_ratio_below

    level = decibels(value, option=option)
    injection_ratio_below(level, option)
    return level


# -- whole numbers -----------------------------------------------------------------------------


def _whole_number(low: int, high: int, what: str) -> Reader:
    """A reader of a whole number inside [``low``, ``high``] (``1000``, ``"1e6"``, ``"1_000"``)."""

    def read(value: Any, option: str) -> int:
        number = _whole(value)
        if number is None:
            raise InputError(
                f"{option}: cannot read {_shown(value)} as a whole number; give {what}, e.g."
                f" {low + 1}"
            )
        if not low <= number <= high:
            raise InputError(
                f"{option}: {number} is outside the accepted range; give {what} from {low:,} to"
                f" {high:,}"
            )
        return number

    return read


def _whole(value: Any) -> int | None:
    """``value`` as a whole number, or None when it is none."""
    if isinstance(value, bool):
        return None
    if isinstance(value, numbers.Integral):
        return int(value)
    if isinstance(value, numbers.Real):
        number = float(value)
        return int(number) if math.isfinite(number) and number == int(number) else None
    if not isinstance(value, str):
        return None
    try:
        decimal = Decimal(value.strip().replace("_", ""))
    except InvalidOperation:
        return None
    if not decimal.is_finite() or decimal != decimal.to_integral_value():
        return None
    return int(decimal)


points = _whole_number(1, MAX_POINTS, "a number of frequency points")
samples = _whole_number(1, MAX_VARIANTS, "a number of Monte Carlo samples")
chunk_size = _whole_number(1, MAX_VARIANTS, "a number of variants per chunk")
threads = _whole_number(1, MAX_PARALLEL, "a number of threads")
workers = _whole_number(1, MAX_PARALLEL, "a number of worker processes")
seed = _whole_number(0, MAX_SEED, "a seed")
model_order = _whole_number(1, MAX_MODEL_ORDER, "a number of poles")
_points = points  # for frequency_grid, whose argument has the name


def scheduler(value: Any, option: str) -> str:
    """A Dask scheduler's address: ``tcp://HOST:PORT`` (or ``tls://``)."""
    text = value.strip() if isinstance(value, str) else ""
    match = re.fullmatch(r"(tcp|tls)://([^\s/:]+|\[[0-9A-Fa-f:.]+\]):(\d{1,5})", text)
    if match is None or not 1 <= int(match.group(3)) <= 65535:
        raise InputError(
            f"{option}: cannot read {_shown(value)} as a scheduler's address; give"
            " tcp://HOST:PORT, e.g. tcp://127.0.0.1:8786"
        )
    return text


# -- the rest of what products take ------------------------------------------------------------


def uncertainty(
    value: Any, option: str = "--gamma-uncertainty"
) -> float | tuple[float, float] | None:
    """``--gamma-uncertainty``: one absolute |Γ| error for both sides, or (device, load).

    Accepts a number, a pair, or the command's text (``"0.01"``, ``"0.01,0.02"``).

    Examples
    --------
    >>> uncertainty("0.01,0.02"), uncertainty(0.01), uncertainty(None)
    ((0.01, 0.02), 0.01, None)
    """
    if value is None:
        return None
    values: list[float] = []
    if isinstance(value, str):
        try:
            values = [float(field) for field in value.split(",")]
        except ValueError:
            values = []
    elif isinstance(value, Sequence | np.ndarray) and not isinstance(value, bytes):
        values = [_real(v) for v in value]
    else:
        values = [_real(value)]
    if len(values) not in (1, 2) or not all(0.0 <= v < 1.0 for v in values):
        raise InputError(
            f"{option}: cannot read {_shown(value)}; give an absolute |gamma| error in [0, 1),"
            " e.g. 0.01, or device,load as 0.01,0.02"
        )
    return values[0] if len(values) == 1 else (values[0], values[1])


def _real(value: Any) -> float:
    """A plain real number, NaN for anything else (refused by the caller's range test)."""
    if isinstance(value, bool):
        return float("nan")
    try:
        return float(value)
    except (TypeError, ValueError):
        return float("nan")


def port_pairs(value: Any, option: str = "--differential-ports") -> tuple[tuple[int, int], ...]:
    """The differential port's single-ended pairs: text (``"1,2"``, ``"1,3:2,4"``) or pairs of
    port numbers (``(1, 2)``, ``[(1, 3), (2, 4)]``)."""
    if isinstance(value, str):
        from ..reading.planes import parse_port_pairs

        return tuple(parse_port_pairs(value, option=option))
    items = list(value)
    if len(items) == 2 and all(isinstance(v, int) for v in items):
        items = [tuple(items)]
    pairs = []
    for item in items:
        pair = tuple(item) if isinstance(item, Iterable) else ()
        if len(pair) != 2 or not all(isinstance(v, int) and not isinstance(v, bool) for v in pair):
            raise InputError(
                f"{option} {value!r}: give port pairs as P,N (e.g. (1, 2)) or two pairs (e.g."
                " [(1, 3), (2, 4)])"
            )
        pairs.append((int(pair[0]), int(pair[1])))
    return tuple(pairs)


def port_setup(
    role: str,
    *,
    terminate: Any = None,
    terminate_impedance_ohm: Any = None,
    terminated_port: int = 2,
    differential_ports: Any = None,
    fixture: Any = None,
    delay_s: Any = None,
) -> PortSetup:
    """How a Touchstone side becomes its one-port: termination or mixed mode, fixture, delay.

    ``differential_ports`` is the command's text (``"1,2"``, ``"1,3:2,4"``) or pairs of port
    numbers; the other arguments are read as the ``--{role}-…`` options are.
    """
    pairs = () if differential_ports is None else port_pairs(differential_ports)
    if terminated_port not in (1, 2) or isinstance(terminated_port, bool):
        raise InputError(f"--terminated-port {terminated_port!r}: give 1 or 2")
    return PortSetup(
        terminate_path=None if terminate is None else str(terminate),
        terminate_impedance_ohm=optional(
            termination, terminate_impedance_ohm, "--terminate-impedance"
        ),
        terminated_port=int(terminated_port),
        differential_pairs=pairs,
        fixture_path=None if fixture is None else str(fixture),
        delay_s=delay(delay_s, f"--{role}-delay"),
    )


def grid_spacing(value: Any, option: str = "--spacing") -> str:
    """How a grid's frequencies are spaced: ``linear`` or ``log``."""
    if value not in SPACINGS:
        raise InputError(f"{option} {_shown(value)}; accepted: {', '.join(SPACINGS)}")
    return str(value)


def frequency_grid(
    start: Any, stop: Any, points: Any = 2001, spacing: str = "linear"
) -> np.ndarray:
    """The grid the ``--start``, ``--stop``, ``--points`` and ``--spacing`` options describe, Hz.

    ``start`` and ``stop`` are frequencies (Hz, or text such as ``"1MHz"``) from 0 Hz to
    :data:`MAX_FREQUENCY_HZ`; ``points`` at most :data:`MAX_POINTS`.

    Examples
    --------
    >>> frequency_grid("1MHz", "1GHz", 4, "log")
    array([1.e+06, 1.e+07, 1.e+08, 1.e+09])
    """
    low = frequency(start, "--start")
    high = frequency(stop, "--stop")
    how = grid_spacing(spacing)
    count = _points(points, "--points")
    if count == 1 and low != high:
        raise InputError("--points 1 needs --start equal to --stop; give 2 or more points")
    if count > 1 and not high > low:
        raise InputError(f"--stop {high:g} Hz must be above --start {low:g} Hz")
    if how == "log":
        if low <= 0:
            raise InputError("--spacing log needs --start above 0 Hz; use linear to include DC")
        return np.geomspace(low, high, count)
    return np.linspace(low, high, count)


def given_grid(frequency_hz: Any) -> np.ndarray | None:
    """A grid given from Python (array-like, Hz), or None when not given: the same limits as
    the grid options (0 Hz to :data:`MAX_FREQUENCY_HZ`, at most :data:`MAX_POINTS` points)."""
    if frequency_hz is None:
        return None
    try:
        grid = np.asarray(frequency_hz, dtype=float)
    except (TypeError, ValueError):
        grid = np.empty((0, 0))
    if (
        grid.ndim != 1
        or not 1 <= grid.size <= MAX_POINTS
        or not np.all(np.isfinite(grid))
        or not np.all((grid >= 0.0) & (grid <= MAX_FREQUENCY_HZ))
    ):
        raise InputError(
            f"frequency_hz: give a 1-D array of 1 to {MAX_POINTS:,} frequencies from 0 Hz to"
            f" {MAX_FREQUENCY_HZ:g} Hz (see oneport.frequency_grid)"
        )
    return grid


_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


def parameter(text: Any, option: str = "--param") -> tuple[str, float]:
    """``NAME=VALUE``: one netlist ``.set`` override, with netlist value suffixes (``2.2p``)."""
    name, equals, value_text = str(text).partition("=")
    if not equals or not _NAME.match(name.strip()):
        raise InputError(f"{option} {_shown(text)}: give NAME=VALUE, e.g. {option} RL=75")
    return name.strip(), _parameter_value(name.strip(), value_text.strip(), str(text), option)


def parameters(values: Any, option: str = "--param") -> dict[str, float]:
    """Netlist parameter overrides: a mapping of name to value, or ``NAME=VALUE`` texts.

    Values are numbers or netlist value text (``2.2p``, ``5meg``).

    Examples
    --------
    >>> parameters(["RL=75", "C=1p"])
    {'RL': 75.0, 'C': 1e-12}
    >>> parameters({"RL": 75})
    {'RL': 75.0}
    """
    if values is None:
        return {}
    if isinstance(values, str):
        values = [values]
    if isinstance(values, Mapping):
        return {
            str(name): _parameter_value(str(name), value, f"{name}={value}", option)
            for name, value in values.items()
        }
    read: dict[str, float] = {}
    for item in values:
        if isinstance(item, tuple) and len(item) == 2:  # already read (the command's rule)
            name, value = item
            read[str(name)] = _parameter_value(str(name), value, f"{name}={value}", option)
        else:
            name, value = parameter(item, option)
            read[name] = value
    return read


def _parameter_value(name: str, value: Any, text: str, option: str) -> float:
    from ..circuit.values import ValueTokenError, is_name, parse_number

    if not is_name(name):
        raise InputError(f"{option} {_shown(text)}: give NAME=VALUE, e.g. {option} RL=75")
    if not isinstance(value, str):
        number = _real(value)
        if not np.isfinite(number):
            raise InputError(f"{option} {_shown(text)}: {value!r} is not a finite number")
        return number
    try:
        parsed = parse_number(value)
    except ValueTokenError as error:
        raise InputError(f"{option} {name}: {error}") from None
    if parsed is None or not math.isfinite(parsed):
        raise InputError(
            f"{option} {_shown(text)}: {value!r} is not a number (netlist suffixes: 2.2p, 5meg)"
        )
    return parsed


def pair_arguments(
    *,
    measurement_impedance_ohm: Any = None,
    device_dc_resistance_ohm: Any = None,
    load_dc_resistance_ohm: Any = None,
    gamma_uncertainty: Any = None,
    frequency_hz: Any = None,
    load_fixture: Any = None,
    load_delay_s: Any = None,
    measurement_option: str = "--measurement-impedance",
) -> dict[str, Any]:
    """The keywords of :func:`~oneport.products.pair.prepare_pair` from a product's arguments,
    read as the commands read them (``measurement_option`` names the impedance's option)."""
    load_setup = None
    if load_fixture is not None or load_delay_s is not None:
        load_setup = port_setup("load", fixture=load_fixture, delay_s=load_delay_s)
    return {
        "measurement_impedance_ohm": positive_resistance(
            measurement_impedance_ohm, measurement_option
        ),
        "device_dc_resistance_ohm": optional(
            dc_resistance, device_dc_resistance_ohm, "--device-dc-resistance"
        ),
        "load_dc_resistance_ohm": optional(
            dc_resistance, load_dc_resistance_ohm, "--load-dc-resistance"
        ),
        "gamma_uncertainty": uncertainty(gamma_uncertainty),
        "frequency_hz": given_grid(frequency_hz),
        "load_setup": load_setup,
    }


# -- files written -----------------------------------------------------------------------------


def output_targets(named: Mapping[str, Any], inputs: Iterable[Any] = ()) -> dict[str, Path]:
    """The outputs of one run (option → path; None skipped), checked before any work.

    Each must be a file this run may write (:func:`oneport.rendering.files.check_targets`), no
    two may share a path, and none may be an input of the run: the files in ``inputs`` and every
    file they name in turn (a netlist's ``file=`` blocks, a manifest's data files).
    """
    if not any(path is not None for path in named.values()):
        return {}
    from ..rendering.files import check_targets

    return check_targets(named, input_files(inputs))


def input_files(sources: Iterable[Any]) -> list[Path]:
    """The files among ``sources`` (paths; records and networks are skipped) and every file they
    name in turn (netlist blocks, manifest data)."""
    found: list[Path] = []
    for source in sources:
        if hasattr(source, "elements"):  # a Circuit given from Python: its blocks' files
            found += _block_files(source)
            continue
        if not isinstance(source, str | Path):
            continue
        found.append(Path(source))
        suffix = Path(source).suffix.lower()
        if suffix == ".cir":
            from ..circuit import read_circuit

            found += _block_files(read_circuit(source))
        elif suffix == ".toml":
            found += _manifest_files(source)
    return found


def _block_files(circuit: Any) -> list[Path]:
    return [Path(element.path) for element in circuit.elements if hasattr(element, "path")]


def _manifest_files(path: str | Path) -> list[Path]:
    from .oscillator.manifest import read_device_description

    device = read_device_description(path)
    named = [getattr(port, "source", None) for port in getattr(device, "ports", ())]
    named.append(getattr(device, "table_source", None))
    return [Path(name) for name in named if name]


__all__ = [
    "GAIN_RANGE_DB",
    "IMPEDANCE_RANGE_OHM",
    "LONGEST_DELAY_S",
    "MAX_FREQUENCY_HZ",
    "MAX_MODEL_ORDER",
    "MAX_PARALLEL",
    "MAX_POINTS",
    "MAX_RESISTANCE_OHM",
    "MAX_SEED",
    "MAX_VARIANTS",
    "RETURN_LOSS_RANGE_DB",
    "SPACINGS",
    "chunk_size",
    "dc_resistance",
    "decibels",
    "delay",
    "frequency",
    "frequency_grid",
    "gain",
    "given_grid",
    "grid_spacing",
    "impedance",
    "injection_below",
    "input_files",
    "interval",
    "model_order",
    "optional",
    "optional_decibels",
    "optional_quantity",
    "output_targets",
    "pair_arguments",
    "parameter",
    "parameters",
    "points",
    "port_pairs",
    "port_setup",
    "positive_frequency",
    "positive_resistance",
    "quantity",
    "return_loss",
    "samples",
    "scheduler",
    "seed",
    "termination",
    "threads",
    "uncertainty",
    "workers",
]
