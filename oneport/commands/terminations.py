"""``oneport terminations``: which terminations of one port make the other port negative."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from . import options
from .common import add_output_options, write_json
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
        " --at 8GHz --terminated-port 2 --plot chart.png",
    )
    options.add(
        command,
        "device",
        rule=options.input_path,
        help="the two-port: a Touchstone file or a netlist (.cir)",
    )
    options.add(
        command,
        "--at",
        rule=options.frequency,
        required=True,
        metavar="FREQUENCY",
        help="the frequency to analyse, e.g. 8GHz",
    )
    command.add_argument(
        "--terminated-port",
        type=int,
        choices=(1, 2),
        default=2,
        help="the port whose termination varies (default 2); the other port is observed",
    )
    options.renamed(
        command,
        "--terminate",
        "--terminate: in terminations the varied port is --terminated-port 1|2 (as in check,"
        " where --terminate names a file)",
    )
    options.add_grid(command, "netlist grid (a netlist has none of its own)", default_points=1001)
    options.add(
        command,
        "--param",
        rule=options.parameter,
        repeat=True,
        metavar="NAME=VALUE",
        help="override a .set value of a netlist",
    )
    options.add(
        command,
        "--reference-impedance",
        rule=options.impedance,
        metavar="OHMS",
        help="reference impedance for a netlist's S-parameters (default 50ohm); a Touchstone"
        " file's data keep their own",
    )
    options.add(
        command,
        "--plot",
        rule=options.plot,
        metavar="FILE",
        help="write a Smith chart (.png or .svg)",
    )
    add_output_options(command, quiet_help="print one summary line", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Analyse, print, optionally plot; return 0 (bad input raises: exit code 2)."""
    from ..circuit import is_circuit_path
    from ..products.terminations import terminations
    from ..rendering.terminations_text import render, verdict_line

    targets = options.outputs({"--plot": arguments.plot}, [arguments.device])
    netlist = is_circuit_path(arguments.device)
    grid = options.grid(
        arguments, netlists=netlist, required=netlist, data=arguments.device, when="a .cir device"
    )
    result = terminations(
        arguments.device,
        arguments.at,
        terminated_port=arguments.terminated_port,
        frequency_hz=grid,
        params=arguments.param,
        reference_impedance_ohm=arguments.reference_impedance,
    )
    if "--plot" in targets:
        from ..rendering.smith import save_termination_chart

        save_termination_chart(result, targets["--plot"])
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return int(ExitCode.HOLDS)
