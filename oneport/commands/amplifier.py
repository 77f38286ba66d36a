"""``oneport amplifier``: screen a negative-resistance device as a reflection amplifier."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from .common import add_measurement_impedance_option, add_output_options, write_json

NAME = "amplifier"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``amplifier`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="reflection-amplifier screening: gain, bandwidth, the port match stability needs",
        description="Screen a negative-resistance device behind a circulator: gain"
        " |gamma_device|^2, the bands above a threshold, the -3 dB bandwidth, the gain ripple"
        " for a stated port match, the return loss the port needs for guaranteed stability,"
        " and with the port's file the Nyquist verdict.",
        epilog="example: oneport amplifier diode.s1p --port-return-loss 20dB --gain-threshold"
        " 10dB --plot gain.png",
    )
    command.add_argument("device", help="the device's Touchstone one-port (.s1p or 2.x .ts)")
    port = command.add_mutually_exclusive_group()
    port.add_argument("--load", help="the circulator port's Touchstone one-port")
    port.add_argument(
        "--port-return-loss",
        metavar="DB",
        help="the port's guaranteed return loss at every frequency (e.g. 20dB)",
    )
    command.add_argument(
        "--gain-threshold",
        metavar="DB",
        default="10dB",
        help="list the bands where the gain reaches this (default 10dB)",
    )
    add_measurement_impedance_option(command)
    command.add_argument("--plot", metavar="FILE", help="save a gain plot (.png, .svg, .pdf)")
    add_output_options(command)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Screen, print, optionally plot; return the exit code of the verdict."""
    from ..products.amplifier import amplifier
    from ..rendering.amplifier_plot import save_amplifier_plot
    from ..rendering.amplifier_text import render, verdict_line
    from .outcome import exit_code

    result = amplifier(
        arguments.device,
        arguments.load,
        port_return_loss_db=arguments.port_return_loss,
        gain_threshold_db=arguments.gain_threshold,
        measurement_impedance_ohm=arguments.measurement_impedance,
    )
    if arguments.plot:
        save_amplifier_plot(result, arguments.plot)
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict)
