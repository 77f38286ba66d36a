"""``oneport amplifier``: screen a negative-resistance device as a reflection amplifier."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from . import options
from .common import add_measurement_impedance_option, add_output_options, write_json

NAME = "amplifier"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``amplifier`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="reflection-amplifier screening: gain, bandwidth, the port match stability needs",
        description="Screen a negative-resistance device behind a circulator: gain"
        " |Γd|², the bands above a threshold, the -3 dB bandwidth, the gain ripple"
        " for a stated port match, the return loss the port needs for guaranteed stability,"
        " and with the port's file the Nyquist verdict.",
        epilog="example: oneport amplifier diode.s1p --port-return-loss 20dB --gain-threshold"
        " 10dB --plot gain.png",
    )
    options.add(
        command,
        "device",
        rule=options.input_path,
        help="the device's Touchstone one-port (.s1p or 2.x .ts)",
    )
    port = command.add_mutually_exclusive_group()
    options.add(
        port, "--load", rule=options.input_path, help="the circulator port's Touchstone one-port"
    )
    options.add(
        port,
        "--port-return-loss",
        rule=options.return_loss,
        metavar="DB",
        help="the port's guaranteed return loss at every frequency (e.g. 20dB)",
    )
    options.add(
        command,
        "--gain-threshold",
        rule=options.gain,
        metavar="DB",
        default=10.0,
        help="list the bands where the gain reaches this (default 10dB)",
    )
    add_measurement_impedance_option(command)
    options.add(
        command, "--plot", rule=options.plot, metavar="FILE", help="save a gain plot (.png or .svg)"
    )
    add_output_options(command)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Screen, print, optionally plot; return the exit code of the verdict."""
    from ..products.amplifier import amplifier
    from ..rendering.amplifier_plot import save_amplifier_plot
    from ..rendering.amplifier_text import render, verdict_line
    from .outcome import exit_code

    targets = options.outputs({"--plot": arguments.plot}, [arguments.device, arguments.load])
    result = amplifier(
        arguments.device,
        arguments.load,
        port_return_loss_db=arguments.port_return_loss,
        gain_threshold_db=arguments.gain_threshold,
        measurement_impedance_ohm=arguments.measurement_impedance,
    )
    if "--plot" in targets:
        save_amplifier_plot(result, targets["--plot"])
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict)
