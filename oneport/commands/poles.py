"""``oneport poles``: the natural frequencies a rational fit of F = 1 − Γd·ΓL implies."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from . import options
from .common import add_measurement_impedance_option, add_output_options, write_json
from .outcome import exit_code

NAME = "poles"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``poles`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="natural frequencies from a rational fit of 1 − Γd·ΓL",
        description="Fit a rational model to F = 1 − Γd·ΓL over the"
        " measured band and list the natural frequencies its zeros imply (frequency, growth"
        " rate, half plane), each with the trust rules it passed.",
        epilog="example: oneport poles diode.s1p --load bias_tee.s1p --character --json",
    )
    options.add(
        command,
        "device",
        rule=options.input_path,
        help="the device's Touchstone one-port (.s1p or 2.x .ts)",
    )
    options.add(
        command,
        "--load",
        rule=options.input_path,
        required=True,
        help="the load's Touchstone one-port",
    )
    add_measurement_impedance_option(command)
    command.add_argument(
        "--character",
        action="store_true",
        help="add the device's character: stable open-circuited, short-circuited, in Z0, and"
        " the Nyquist count in the reflection, impedance and admittance forms",
    )
    options.add(
        command,
        "--max-order",
        rule=options.model_order,
        default=None,
        metavar="N",
        help=f"highest model order (number of poles) tried; default 24, at most"
        f" {options.MAX_MODEL_ORDER}",
    )
    add_output_options(command)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Fit, cross-check with the Nyquist count, print; return the verdict's exit code."""
    from ..products.poles import poles
    from ..rendering.poles_text import render, verdict_line

    result = poles(
        arguments.device,
        arguments.load,
        measurement_impedance_ohm=arguments.measurement_impedance,
        max_order=arguments.max_order,
        character=arguments.character,
    )
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict)
