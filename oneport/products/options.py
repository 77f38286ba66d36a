"""What the product functions accept, read once for Python callers and the commands alike.

Every product function takes quantities as numbers (SI: Ω, s, Hz) or as text with a unit
(``"50ohm"``, ``"12ps"``, ``"2.4GHz"``, ``"15dB"``), reads them by :mod:`oneport.units`' one rule,
and names the command's option in its error, so ``oneport.check(…, device_delay_s="12")`` fails
with the same line as ``oneport check … --device-delay 12``. The commands pass the text they
were given straight through. This room reads arguments; it computes nothing.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping, Sequence
from typing import Any

import numpy as np

from ..errors import InputError
from ..reading.preparation import PortSetup
from ..units import decibels, quantity

#: How a grid's frequencies are spaced.
SPACINGS = ("linear", "log")
#: A plane shift longer than this is no cable or fixture: a unit was probably left out.
LONGEST_DELAY_S = 1e-6


def optional_quantity(value: Any, kind: str, option: str) -> float | None:
    """``value`` in SI units by :func:`oneport.units.quantity`, or None when not given."""
    return None if value is None else quantity(value, kind, option=option)


def optional_decibels(value: Any, option: str) -> float | None:
    """``value`` in dB by :func:`oneport.units.decibels`, or None when not given."""
    return None if value is None else decibels(value, option=option)


def positive_resistance(value: Any, option: str) -> float | None:
    """A reference or measurement impedance, Ω: positive, or None when not given."""
    resistance = optional_quantity(value, "resistance", option)
    if resistance is not None and not resistance > 0:
        raise InputError(
            f"{option} {resistance:g} ohm: a positive number of ohms is needed, e.g. 50ohm"
        )
    return resistance


def delay(value: Any, option: str) -> float:
    """A one-way line delay, s (0 when not given); longer than 1 µs is refused as a slip."""
    if value is None:
        return 0.0
    seconds = quantity(value, "time", option=option)
    if abs(seconds) > LONGEST_DELAY_S:
        raise InputError(
            f"{option}: {value!r} is {seconds:g} s of line, far beyond any fixture or cable; give"
            " the unit, e.g. 12ps or 0.5ns"
        )
    return seconds


def uncertainty(value: Any) -> float | tuple[float, float] | None:
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
            f"--gamma-uncertainty: cannot read {value!r}; give an absolute |gamma| error in"
            " [0, 1), e.g. 0.01, or device,load as 0.01,0.02"
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
    pairs: tuple[tuple[int, int], ...] = ()
    if isinstance(differential_ports, str):
        from ..reading.planes import parse_port_pairs

        pairs = tuple(parse_port_pairs(differential_ports))
    elif differential_ports is not None:
        pairs = _pairs(differential_ports)
    if terminated_port not in (1, 2) or isinstance(terminated_port, bool):
        raise InputError(f"--terminated-port {terminated_port!r}: give 1 or 2")
    return PortSetup(
        terminate_path=None if terminate is None else str(terminate),
        terminate_impedance_ohm=optional_quantity(
            terminate_impedance_ohm, "resistance", "--terminate-impedance"
        ),
        terminated_port=int(terminated_port),
        differential_pairs=pairs,
        fixture_path=None if fixture is None else str(fixture),
        delay_s=delay(delay_s, f"--{role}-delay"),
    )


def _pairs(value: Any) -> tuple[tuple[int, int], ...]:
    """Pairs of port numbers given from Python: ``(1, 2)`` or ``[(1, 3), (2, 4)]``."""
    items = list(value)
    if len(items) == 2 and all(isinstance(v, int) for v in items):
        items = [tuple(items)]
    pairs = []
    for item in items:
        pair = tuple(item) if isinstance(item, Iterable) else ()
        if len(pair) != 2 or not all(isinstance(v, int) and not isinstance(v, bool) for v in pair):
            raise InputError(
                f"--differential-ports {value!r}: give port pairs as P,N (e.g. (1, 2)) or"
                " two pairs (e.g. [(1, 3), (2, 4)])"
            )
        pairs.append((int(pair[0]), int(pair[1])))
    return tuple(pairs)


def frequency_grid(
    start: Any, stop: Any, points: int = 2001, spacing: str = "linear"
) -> np.ndarray:
    """The grid the ``--start``, ``--stop``, ``--points`` and ``--spacing`` options describe, Hz.

    ``start`` and ``stop`` are frequencies (Hz, or text such as ``"1MHz"``).

    Examples
    --------
    >>> frequency_grid("1MHz", "1GHz", 4, "log")
    array([1.e+06, 1.e+07, 1.e+08, 1.e+09])
    """
    low = quantity(start, "frequency", option="--start")
    high = quantity(stop, "frequency", option="--stop")
    if spacing not in SPACINGS:
        raise InputError(f"--spacing {spacing!r}; accepted: {', '.join(SPACINGS)}")
    if isinstance(points, bool) or not isinstance(points, int | np.integer) or points < 1:
        raise InputError(f"--points {points!r}: give a whole number >= 1")
    if low < 0:
        raise InputError(f"--start {low:g} Hz: frequencies are >= 0")
    if points == 1 and low != high:
        raise InputError("--points 1 needs --start equal to --stop; give 2 or more points")
    if points > 1 and not high > low:
        raise InputError(f"--stop {high:g} Hz must be above --start {low:g} Hz")
    if spacing == "log":
        if low <= 0:
            raise InputError("--spacing log needs --start above 0 Hz; use linear to include DC")
        return np.geomspace(low, high, int(points))
    return np.linspace(low, high, int(points))


def given_grid(frequency_hz: Any) -> np.ndarray | None:
    """A grid given from Python (array-like, Hz), or None when not given."""
    if frequency_hz is None:
        return None
    grid = np.asarray(frequency_hz, dtype=float)
    if grid.ndim != 1 or grid.size < 1 or not np.all(np.isfinite(grid)):
        raise InputError(
            "frequency_hz: give a 1-D array of frequencies in Hz (see oneport.frequency_grid)"
        )
    return grid


_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


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
    items: list[tuple[str, Any, str]] = []
    if isinstance(values, Mapping):
        items = [(str(name), value, f"{name}={value}") for name, value in values.items()]
    else:
        for text in values:
            name, equals, value_text = str(text).partition("=")
            if not equals or not _NAME.match(name.strip()):
                raise InputError(f"{option} {text!r}: give NAME=VALUE, e.g. {option} RL=75")
            items.append((name.strip(), value_text.strip(), str(text)))
    return {name: _parameter_value(name, value, text, option) for name, value, text in items}


def _parameter_value(name: str, value: Any, text: str, option: str) -> float:
    from ..circuit.values import ValueTokenError, is_name, parse_number

    if not is_name(name):
        raise InputError(f"{option} {text!r}: give NAME=VALUE, e.g. {option} RL=75")
    if not isinstance(value, str):
        number = _real(value)
        if not np.isfinite(number):
            raise InputError(f"{option} {text!r}: {value!r} is not a finite number")
        return number
    try:
        parsed = parse_number(value)
    except ValueTokenError as error:
        raise InputError(f"{option} {name}: {error}") from None
    if parsed is None:
        raise InputError(
            f"{option} {text!r}: {value!r} is not a number (netlist suffixes: 2.2p, 5meg)"
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
        "device_dc_resistance_ohm": optional_quantity(
            device_dc_resistance_ohm, "resistance", "--device-dc-resistance"
        ),
        "load_dc_resistance_ohm": optional_quantity(
            load_dc_resistance_ohm, "resistance", "--load-dc-resistance"
        ),
        "gamma_uncertainty": uncertainty(gamma_uncertainty),
        "frequency_hz": given_grid(frequency_hz),
        "load_setup": load_setup,
    }


__all__ = [
    "LONGEST_DELAY_S",
    "SPACINGS",
    "decibels",
    "delay",
    "frequency_grid",
    "given_grid",
    "optional_decibels",
    "optional_quantity",
    "pair_arguments",
    "parameters",
    "port_setup",
    "positive_resistance",
    "quantity",
    "uncertainty",
]
