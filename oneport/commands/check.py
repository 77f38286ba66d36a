"""``oneport check``: small-signal stability of a device one-port into a load one-port."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..units import parse_quantity
from .common import add_output_options, write_json

NAME = "check"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``check`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="small-signal stability of a device into a load (Nyquist test)",
        description="Small-signal stability of a device one-port into a load one-port: the"
        " Nyquist count of the loop gain L = gamma_device * gamma_load around +1.",
        epilog="example: oneport check diode.s1p --load bias_tee.s1p --json",
    )
    command.add_argument("device", help="the device's Touchstone one-port (.s1p or 2.x .ts)")
    command.add_argument("--load", required=True, help="the load's Touchstone one-port")
    command.add_argument(
        "--measurement-impedance",
        metavar="OHMS",
        help="impedance the device was measured in, if its file was renormalised afterwards"
        " (e.g. 50ohm); default: the device file's reference",
    )
    add_output_options(command)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Run the check and print it; return the verdict's exit code."""
    from ..check import check
    from ..cli import verdict_exit_code
    from ..text import render, verdict_line

    impedance = None
    if arguments.measurement_impedance is not None:
        impedance = parse_quantity(
            arguments.measurement_impedance, "resistance", option="--measurement-impedance"
        )
    result = check(arguments.device, arguments.load, measurement_impedance_ohm=impedance)
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return verdict_exit_code(result.verdict)
