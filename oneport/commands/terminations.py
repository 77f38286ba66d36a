"""``oneport terminations``: which terminations of one port make the other port negative."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from ..reading.files import is_netlist_path
from .common import add_output_options, grid_from_options, write_json
from .outcome import ExitCode

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
    from ..products.terminations import terminations
    from ..rendering.terminations_text import render, verdict_line

    if arguments.plot is not None:
        from ..rendering.figures import image_target

        image_target(arguments.plot)  # checked before any work
    netlist = is_netlist_path(arguments.device)
    if not netlist and (arguments.start is not None or arguments.stop is not None):
        raise InputError("--start, --stop and --param apply to netlists (.cir) only")
    if netlist and (arguments.start is None or arguments.stop is None):
        raise InputError(f"{arguments.device}: a netlist needs --start and --stop for its grid")
    result = terminations(
        arguments.device,
        arguments.at,
        terminated_port=arguments.terminate,
        frequency_hz=grid_from_options(arguments, required=False),
        params=arguments.param,
        reference_impedance_ohm=arguments.reference_impedance,
    )
    if arguments.plot is not None:
        from ..rendering.smith import save_termination_chart

        save_termination_chart(result, arguments.plot)
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return int(ExitCode.HOLDS)
