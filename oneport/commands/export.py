"""``oneport export``: evaluate a netlist over a sweep and write a Touchstone file."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from . import options
from .common import add_output_options, write_json
from .outcome import ExitCode

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
    options.add(command, "circuit", rule=options.input_path, help="the netlist (.cir)")
    options.add_grid(command, "frequency grid (required)", default_points=1001)
    options.add(
        command,
        "-o",
        "--output",
        rule=options.touchstone_output,
        required=True,
        help="the Touchstone file to write (.s1p or .s2p)",
    )
    options.add(
        command,
        "--param",
        rule=options.parameter,
        repeat=True,
        metavar="NAME=VALUE",
        help="override a .set parameter (netlist suffixes: 5meg, 2.2p); repeatable",
    )
    options.add(
        command,
        "--reference-impedance",
        rule=options.impedance,
        default=50.0,
        metavar="OHMS",
        help="reference impedance of the written data (default 50ohm)",
    )
    add_output_options(command, quiet_help="print nothing on success", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Write the file; return 0 (bad input raises and becomes exit code 2)."""
    from ..products.export import export
    from ..rendering.export_text import verdict_line

    targets = options.outputs({"--output": arguments.output}, [arguments.circuit])
    grid = options.grid(arguments, netlists=True, required=True)
    result = export(
        arguments.circuit,
        targets["--output"],
        grid,
        reference_impedance_ohm=arguments.reference_impedance,
        params=arguments.param,
        spacing=arguments.spacing,
    )
    if arguments.json:
        write_json(result.to_dict(), out)
    elif not arguments.quiet:
        print(verdict_line(result), file=out)
    return int(ExitCode.HOLDS)
