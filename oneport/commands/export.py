"""``oneport export``: evaluate a netlist over a sweep and write a Touchstone file."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from ..units import parse_quantity
from .common import add_output_options, write_json

NAME = "export"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``export`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="write a netlist's one-port (.s1p) or two-port (.s2p) as a Touchstone file",
        description="Evaluate a circuit netlist (.cir, see docs/netlist.md) over a frequency"
        " sweep and write its S-parameters as a Touchstone 1.x file.",
        epilog="example: oneport export load.cir --start 1MHz --stop 20GHz --points 2001"
        " -o load.s1p --param RL=75",
    )
    command.add_argument("circuit", help="the netlist (.cir)")
    command.add_argument("--start", required=True, help="first frequency, e.g. 1MHz")
    command.add_argument("--stop", required=True, help="last frequency, e.g. 20GHz")
    command.add_argument(
        "--points", type=int, default=1001, help="number of frequencies (default 1001)"
    )
    command.add_argument(
        "--spacing",
        choices=("linear", "log"),
        default="linear",
        help="linear (default) or log spacing of the frequencies",
    )
    command.add_argument(
        "-o", "--output", required=True, help="the Touchstone file to write (.s1p or .s2p)"
    )
    command.add_argument(
        "--param",
        action="append",
        default=[],
        metavar="NAME=VALUE",
        help="override a .set parameter (netlist suffixes: 5meg, 2.2p); repeatable",
    )
    command.add_argument(
        "--reference-impedance",
        default="50ohm",
        metavar="OHMS",
        help="reference impedance of the written data (default 50ohm)",
    )
    add_output_options(command, quiet_help="print nothing on success", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Write the file; return 0 (bad input raises and becomes exit code 2)."""
    from ..products.export import export_circuit, frequency_grid
    from ..units import format_frequency

    start = parse_quantity(arguments.start, "frequency", option="--start")
    stop = parse_quantity(arguments.stop, "frequency", option="--stop")
    reference = parse_quantity(
        arguments.reference_impedance, "resistance", option="--reference-impedance"
    )
    if not reference > 0:
        raise InputError(f"--reference-impedance {arguments.reference_impedance!r}: give ohms > 0")
    grid = frequency_grid(start, stop, arguments.points, arguments.spacing)
    result = export_circuit(
        arguments.circuit,
        arguments.output,
        grid,
        reference_impedance_ohm=reference,
        params=parse_parameter_options(arguments.param),
        spacing=arguments.spacing,
    )
    if arguments.json:
        write_json(result.to_dict(), out)
    elif not arguments.quiet:
        kind = "one-port" if result.ports == 1 else "two-port"
        print(
            f"wrote {result.output_path}: {kind}, {result.points} points,"
            f" {format_frequency(result.start_hz)} to {format_frequency(result.stop_hz)}"
            f" ({result.spacing}), reference {result.reference_impedance_ohm:g} ohm",
            file=out,
        )
    return 0


def parse_parameter_options(texts: list[str]) -> dict[str, float]:
    """``--param NAME=VALUE`` options as a dict (netlist value suffixes)."""
    from ..circuit.values import ValueTokenError, is_name, parse_number

    values: dict[str, float] = {}
    for text in texts:
        name, equals, value_text = text.partition("=")
        name = name.strip()
        if not equals or not is_name(name):
            raise InputError(f"--param {text!r}: give NAME=VALUE, e.g. --param RL=75")
        try:
            value = parse_number(value_text.strip())
        except ValueTokenError as error:
            raise InputError(f"--param {name}: {error}") from None
        if value is None:
            raise InputError(
                f"--param {text!r}: {value_text!r} is not a number (netlist suffixes: 2.2p, 5meg)"
            )
        values[name] = value
    return values
