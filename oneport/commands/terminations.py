"""``oneport terminations``: which terminations of one port make the other port negative."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from ..units import parse_quantity
from .common import add_output_options, write_json
from .export import parse_parameter_options

NAME = "terminations"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``terminations`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="terminations of a two-port's port that make the other port's resistance negative",
        description="For a two-port device (a .s2p Touchstone file or a .twoport netlist), find"
        " the passive terminations of one port that make the other port's resistance negative"
        " (the stability circle's region), and the termination giving the most negative"
        " resistance at a chosen frequency.",
        epilog="example: oneport terminations touchstone_examples/circuits/transistor.s2p"
        " --at 8GHz --terminate 2 --plot chart.png",
    )
    command.add_argument("device", help="the two-port: a Touchstone file or a netlist (.cir)")
    command.add_argument("--at", required=True, help="the frequency to analyse, e.g. 8GHz")
    command.add_argument(
        "--terminate",
        type=int,
        choices=(1, 2),
        default=2,
        help="the port whose termination varies (default 2); the other port is observed",
    )
    grid = command.add_argument_group("netlist grid (a netlist has none of its own)")
    grid.add_argument("--start", help="first frequency, e.g. 100MHz")
    grid.add_argument("--stop", help="last frequency, e.g. 18GHz")
    grid.add_argument("--points", type=int, default=1001, help="frequencies (default 1001)")
    grid.add_argument("--spacing", choices=("linear", "log"), default="linear")
    grid.add_argument(
        "--param", action="append", default=[], metavar="NAME=VALUE", help="override a .set value"
    )
    grid.add_argument(
        "--reference-impedance",
        default="50ohm",
        metavar="OHMS",
        help="reference impedance for a netlist's S-parameters (default 50ohm)",
    )
    command.add_argument("--plot", metavar="FILE", help="write a Smith chart (.png or .svg)")
    add_output_options(command, quiet_help="print one summary line", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Analyse, print, optionally plot; return 0 (bad input raises: exit code 2)."""
    from ..analysis.terminations import analyse_terminations
    from ..rendering.terminations_text import render, verdict_line

    frequency = parse_quantity(arguments.at, "frequency", option="--at")
    data = _two_port(arguments)
    if arguments.plot is not None:
        from ..rendering.files import require_folder

        require_folder(_path(arguments.plot))
    result = analyse_terminations(data, frequency, terminated_port=arguments.terminate)
    if arguments.plot is not None:
        from ..rendering.smith import save_termination_chart

        save_termination_chart(result, arguments.plot)
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return 0


def _path(text: str) -> Any:
    from pathlib import Path

    return Path(text)


def _two_port(arguments: argparse.Namespace) -> Any:
    from ..circuit import is_circuit_path, multiport_from_circuit
    from ..products.export import frequency_grid
    from ..reading.touchstone import read_touchstone

    if not is_circuit_path(arguments.device):
        if arguments.start or arguments.stop or arguments.param:
            raise InputError("--start, --stop and --param apply to netlists (.cir) only")
        return read_touchstone(arguments.device)
    if arguments.start is None or arguments.stop is None:
        raise InputError(f"{arguments.device}: a netlist needs --start and --stop for its grid")
    start = parse_quantity(arguments.start, "frequency", option="--start")
    stop = parse_quantity(arguments.stop, "frequency", option="--stop")
    reference = parse_quantity(
        arguments.reference_impedance, "resistance", option="--reference-impedance"
    )
    if not reference > 0:
        raise InputError(f"--reference-impedance {arguments.reference_impedance!r}: give ohms > 0")
    grid = frequency_grid(start, stop, arguments.points, arguments.spacing)
    return multiport_from_circuit(
        arguments.device, grid, reference, parse_parameter_options(arguments.param)
    )
