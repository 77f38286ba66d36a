"""Every option's rule, run while the command line is parsed: what it accepts, its bounds, and
its one-line refusal.

Each command declares its options through :func:`add` with a *rule* from this module. The rule
runs while the command line is parsed, before any file is read or anything is computed, and
either returns the value in SI units (or a whole number, or a checked path) or raises
:class:`~oneport.errors.InputError` with one line: the option, the bad value, what is accepted.
An option that appears in several commands has the same rule in all of them.

The bounds are not written here: a rule for a value a product takes *is* that product's reader
in :mod:`oneport.products.options` (or the product's own parser: ``--vary``, ``--tolerance``,
``--margin``, ``--band``, ``--injection-below``), so a Python call of the product meets the same
limits and the same line. What is only the command line's is here: file names and their
suffixes, the grid options' combinations, and the outputs checked against the inputs.

A negative quantity after a space is read as the option's value (``--device-delay -12ps``), as
people type it: :func:`join_negative_values` rewrites it to ``--device-delay=-12ps`` before
argparse, which would otherwise take ``-12ps`` for an option.
"""

from __future__ import annotations

import argparse
import re
from collections.abc import Callable, Iterable, Sequence
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError, printable
from ..products import options as product
from ..products.options import (
    GAIN_RANGE_DB,
    IMPEDANCE_RANGE_OHM,
    LONGEST_DELAY_S,
    MAX_FREQUENCY_HZ,
    MAX_MODEL_ORDER,
    MAX_PARALLEL,
    MAX_POINTS,
    MAX_RESISTANCE_OHM,
    MAX_SEED,
    MAX_VARIANTS,
    RETURN_LOSS_RANGE_DB,
    chunk_size,
    dc_resistance,
    delay,
    frequency,
    gain,
    impedance,
    injection_below,
    interval,
    model_order,
    parameter,
    points,
    positive_frequency,
    return_loss,
    samples,
    scheduler,
    seed,
    termination,
    threads,
    workers,
)
from ..rendering.figures import PLOT_FORMATS
from ..rendering.sweep_table import TABLE_SUFFIXES
from ..units import parse_quantity

Rule = Callable[[str, str], Any]

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
    "chunk_size",
    "dc_resistance",
    "delay",
    "frequency",
    "gain",
    "impedance",
    "injection_below",
    "interval",
    "model_order",
    "parameter",
    "points",
    "positive_frequency",
    "return_loss",
    "samples",
    "scheduler",
    "seed",
    "termination",
    "threads",
    "workers",
]


# -- rules of the products' own readers and parsers ----------------------------------------------


def gamma_uncertainty(text: str, option: str) -> float | tuple[float, float]:
    """One |Γ| error for both sides, or ``device,load``; each in [0, 1)."""
    value = product.uncertainty(text, option)
    assert value is not None
    return value


def port_pairs(text: str, option: str) -> tuple[tuple[int, int], ...]:
    """``P,N`` or ``P,N:P,N``: the differential port's single-ended pairs."""
    return product.port_pairs(text, option)


def vary(text: str, option: str) -> str:
    """``NAME=START:STOP:COUNT``: one axis of a sweep's grid, checked by the sweep's own parser
    (the text goes on to the product, which reads it by the same parser)."""
    from ..products.sweep.plan import parse_vary

    parse_vary(text)
    return text


def tolerance(text: str, option: str) -> str:
    """``NAME=PERCENT%``: a Monte Carlo tolerance around a netlist parameter's value, checked by
    the sweep's own parser."""
    from ..products.sweep.plan import parse_tolerance

    parse_tolerance(text)
    return text


def margin(text: str, option: str) -> str:
    """A stabilising margin (``0.2`` or ``6dB``): the stabilising advice's own rule."""
    from ..products.stabilise.goal import parse_margins

    parse_margins([text])
    return text


def band(text: str, option: str) -> str:
    """``F1:F2``, each a frequency the products accept: the advice's own rule."""
    from ..products.stabilise.goal import parse_band

    parse_band(text)
    return text


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


# -- rules of the command line's own: file names -------------------------------------------------


def _named(text: str, option: str, what: str, wanted: str) -> str:
    """Any path the system can name: not empty, no NUL byte (no file name holds one)."""
    if not text.strip():
        raise InputError(f"{option}: an empty {what} name; give {wanted}")
    if "\0" in text:
        raise InputError(
            f"{option} {printable(text)}: a {what} name cannot hold a NUL byte; give {wanted}"
        )
    return text


def input_path(text: str, option: str) -> str:
    """A file to read: any path the system can name (reading refuses what is not a regular
    file)."""
    return _named(text, option, "file", "the file's path")


def folder(text: str, option: str) -> str:
    """A folder: any path the system can name."""
    return _named(text, option, "folder", "the folder's path")


def _output(suffixes: Sequence[str], what: str) -> Rule:
    def rule(text: str, option: str) -> str:
        _named(text, option, "file", f"a path ending in {_listed(suffixes)}")
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
table = _output(TABLE_SUFFIXES, "the table")
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
    group.add_argument("--spacing", choices=product.SPACINGS, help="default linear")
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
    count = arguments.points if arguments.points is not None else arguments.default_points
    return product.frequency_grid(
        arguments.start, arguments.stop, count, arguments.spacing or "linear"
    )


def outputs(named: dict[str, str | None], inputs: Iterable[Any]) -> dict[str, Path]:
    """The run's outputs, checked before any work (:func:`oneport.products.options.output_targets`:
    never an input, a netlist's ``file=`` block or a manifest's data file, never twice)."""
    return product.output_targets(named, inputs)
