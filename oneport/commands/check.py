"""``oneport check``: small-signal stability of a device one-port into a load one-port."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from .common import (
    add_grid_options,
    add_measurement_impedance_option,
    add_output_options,
    grid_from_options,
    write_json,
)
from .outcome import exit_code

NAME = "check"

_EPILOG = """examples:
  oneport check diode.s1p --load bias_tee.s1p
  oneport check diode.s1p --load bias_tee.s1p --json
  oneport check diode.s1p --load-return-loss 15dB
  oneport check fet.s2p --terminate-impedance 10ohm --load tank.s1p
  oneport check diode.s1p --load bias.s1p --device-dc-resistance=-76ohm --load-dc-resistance 150
  oneport check diode.s1p --load tank.s1p --device-delay=-12ps --gamma-uncertainty 0.01
  oneport check diode.s1p --load bias_tee.cir
  oneport check diode.cir --load tank.cir --start 1MHz --stop 6GHz --points 2001

negative values: write them with '=' (--device-delay=-12ps)."""


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``check`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="small-signal stability of a device into a load (Nyquist test)",
        description="Small-signal stability of a device one-port into a load one-port: the"
        " Nyquist count of the loop gain L = gamma_device * gamma_load around +1, in the"
        " device's measurement impedance.",
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    command.add_argument(
        "device", help="the device: a Touchstone file (one-port, or see below) or a .cir netlist"
    )
    loads = command.add_mutually_exclusive_group(required=True)
    loads.add_argument(
        "--load", metavar="FILE", help="the load: a Touchstone one-port or a .cir netlist"
    )
    loads.add_argument(
        "--load-return-loss",
        metavar="DB",
        help="instead of a load file: is it stable into every passive load with at least"
        " this return loss (e.g. 15dB)? small-gain bound",
    )
    add_measurement_impedance_option(command)
    facts = command.add_argument_group("DC facts (close the contour towards DC; give both)")
    facts.add_argument(
        "--device-dc-resistance",
        metavar="OHMS",
        help="the device's small-signal resistance at DC: its I-V slope at the bias point",
    )
    facts.add_argument(
        "--load-dc-resistance", metavar="OHMS", help="the load's (bias network's) DC resistance"
    )
    add_grid_options(command, "frequency grid when both sides are netlists")
    command.add_argument(
        "--gamma-uncertainty",
        metavar="X[,Y]",
        help="worst-case absolute error of |gamma|: one value for both sides, or device,load",
    )
    device = command.add_argument_group("device as measured")
    terminations = device.add_mutually_exclusive_group()
    terminations.add_argument(
        "--terminate", metavar="FILE", help="two-port device: terminate one port in this one-port"
    )
    terminations.add_argument(
        "--terminate-impedance",
        metavar="OHMS",
        help="two-port device: terminate in this resistance",
    )
    terminations.add_argument(
        "--differential-ports",
        metavar="P,N[:P,N]",
        help="balanced device measured single-ended: the port pair(s) of its differential port",
    )
    device.add_argument(
        "--terminated-port", type=int, choices=(1, 2), default=2, help="which port (default 2)"
    )
    planes = command.add_argument_group("reference planes")
    for side in ("device", "load"):
        planes.add_argument(
            f"--{side}-delay",
            metavar="TIME",
            help=f"add (negative: remove) a lossless line of this one-way delay on the {side}"
            " side, e.g. 12ps",
        )
        planes.add_argument(
            f"--{side}-fixture",
            metavar="FILE",
            help=f"de-embed this two-port fixture (port 1 at the instrument) from the {side}",
        )
    command.add_argument(
        "--poles",
        action="store_true",
        help="second opinion: fit 1 - L and list its natural frequencies beside the count",
    )
    pictures = command.add_argument_group("pictures")
    pictures.add_argument(
        "--plot", metavar="FILE", help="also write the quick-look plot (.png or .svg)"
    )
    pictures.add_argument(
        "--report", metavar="FILE", help="also write a self-contained HTML report"
    )
    add_output_options(command)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Run the check and print it; return the verdict's exit code."""
    from ..products.check import check
    from ..rendering.check_text import render_result, summary_line

    if arguments.load_return_loss is not None and (arguments.plot or arguments.report):
        raise InputError("--plot and --report go with --load, not with --load-return-loss")
    result = check(
        arguments.device,
        arguments.load,
        load_return_loss_db=arguments.load_return_loss,
        measurement_impedance_ohm=arguments.measurement_impedance,
        device_dc_resistance_ohm=arguments.device_dc_resistance,
        load_dc_resistance_ohm=arguments.load_dc_resistance,
        gamma_uncertainty=arguments.gamma_uncertainty,
        frequency_hz=grid_from_options(arguments, required=False),
        terminate=arguments.terminate,
        terminate_impedance_ohm=arguments.terminate_impedance,
        terminated_port=arguments.terminated_port,
        differential_ports=arguments.differential_ports,
        device_fixture=arguments.device_fixture,
        device_delay_s=arguments.device_delay,
        load_fixture=arguments.load_fixture,
        load_delay_s=arguments.load_delay,
        poles=arguments.poles,
    )
    _pictures(result, arguments)
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(summary_line(result), file=out)
    else:
        out.write(render_result(result))
    return exit_code(result.verdict)


def _pictures(result: Any, arguments: argparse.Namespace) -> None:
    if arguments.plot:
        from ..rendering.check_plots import save_plots

        save_plots(result, arguments.plot)
    if arguments.report:
        from ..rendering.report import run_record, write_report

        write_report(result, arguments.report, run=run_record(getattr(arguments, "argv", None)))
