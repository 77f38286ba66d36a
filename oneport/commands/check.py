"""``oneport check``: small-signal stability of a device one-port into a load one-port."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from . import options
from .common import add_measurement_impedance_option, add_output_options, write_json
from .outcome import exit_code

NAME = "check"

_EPILOG = """examples:
  oneport check diode.s1p --load bias_tee.s1p
  oneport check diode.s1p --load bias_tee.s1p --json
  oneport check diode.s1p --load-return-loss 15dB
  oneport check fet.s2p --terminate-impedance 10ohm --load tank.s1p
  oneport check diode.s1p --load bias.s1p --device-dc-resistance -76ohm --load-dc-resistance 150
  oneport check diode.s1p --load tank.s1p --device-delay -12ps --gamma-uncertainty 0.01
  oneport check diode.s1p --load bias_tee.cir
  oneport check diode.cir --load tank.cir --start 1MHz --stop 6GHz --points 2001

the grid options (--start, --stop, --points, --spacing) go with two netlists only; with a data
file the analysis runs on the data's own grid."""


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``check`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="small-signal stability of a device into a load (Nyquist test)",
        description="Small-signal stability of a device one-port into a load one-port: the"
        " Nyquist count of the loop gain L = Γd·ΓL around +1, in the"
        " device's measurement impedance.",
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    options.add(
        command,
        "device",
        rule=options.input_path,
        help="the device: a Touchstone file (one-port, or see below) or a .cir netlist",
    )
    loads = command.add_mutually_exclusive_group(required=True)
    options.add(
        loads,
        "--load",
        rule=options.input_path,
        metavar="FILE",
        help="the load: a Touchstone one-port or a .cir netlist",
    )
    options.add(
        loads,
        "--load-return-loss",
        rule=options.return_loss,
        metavar="DB",
        help="instead of a load file: is it stable into every passive load with at least"
        " this return loss (e.g. 15dB)? small-gain bound",
    )
    add_measurement_impedance_option(command)
    add_check_inputs(command)
    options.add_grid(command, "frequency grid when both sides are netlists")
    command.add_argument(
        "--poles",
        action="store_true",
        help="second opinion: fit 1 - L and list its natural frequencies beside the count",
    )
    pictures = command.add_argument_group("pictures")
    options.add(
        pictures,
        "--plot",
        rule=options.plot,
        metavar="FILE",
        help="also write the quick-look plot (.png or .svg)",
    )
    options.add(
        pictures,
        "--report",
        rule=options.report,
        metavar="FILE",
        help="also write a self-contained HTML report (.html)",
    )
    add_output_options(command)
    return command


def add_check_inputs(command: argparse.ArgumentParser) -> None:
    """The check's options on how each side is read; ``stabilise`` takes the same."""
    facts = command.add_argument_group("DC facts (close the contour towards DC; give both)")
    options.add(
        facts,
        "--device-dc-resistance",
        rule=options.dc_resistance,
        metavar="OHMS",
        help="the device's small-signal resistance at DC: its I-V slope at the bias point",
    )
    options.add(
        facts,
        "--load-dc-resistance",
        rule=options.dc_resistance,
        metavar="OHMS",
        help="the load's (bias network's) DC resistance",
    )
    options.add(
        command,
        "--gamma-uncertainty",
        rule=options.gamma_uncertainty,
        metavar="X[,Y]",
        help="worst-case absolute error of |Γ|: one value for both sides, or device,load",
    )
    device = command.add_argument_group("device as measured")
    terminations = device.add_mutually_exclusive_group()
    options.add(
        terminations,
        "--terminate",
        rule=options.input_path,
        metavar="FILE",
        help="two-port device: terminate one port in this one-port",
    )
    options.add(
        terminations,
        "--terminate-impedance",
        rule=options.termination,
        metavar="OHMS",
        help="two-port device: terminate in this resistance",
    )
    options.add(
        terminations,
        "--differential-ports",
        rule=options.port_pairs,
        metavar="P,N[:P,N]",
        help="balanced device measured single-ended: the port pair(s) of its differential port",
    )
    device.add_argument(
        "--terminated-port", type=int, choices=(1, 2), default=2, help="which port (default 2)"
    )
    planes = command.add_argument_group("reference planes")
    for side in ("device", "load"):
        options.add(
            planes,
            f"--{side}-delay",
            rule=options.delay,
            metavar="TIME",
            help=f"add (negative: remove) a lossless line of this one-way delay on the {side}"
            " side, e.g. 12ps",
        )
        options.add(
            planes,
            f"--{side}-fixture",
            rule=options.input_path,
            metavar="FILE",
            help=f"de-embed this two-port fixture (port 1 at the instrument) from the {side}",
        )


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Run the check and print it; return the verdict's exit code."""
    from ..products.check import check
    from ..rendering.check_text import render_result, summary_line

    targets = options.outputs(
        {"--plot": arguments.plot, "--report": arguments.report}, input_paths(arguments)
    )
    if arguments.load_return_loss is not None and targets:
        raise InputError("--plot and --report go with --load, not with --load-return-loss")
    result = check(
        arguments.device,
        arguments.load,
        load_return_loss_db=arguments.load_return_loss,
        frequency_hz=pair_grid(arguments),
        poles=arguments.poles,
        **check_inputs(arguments),
    )
    _pictures(result, targets, arguments)
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(summary_line(result), file=out)
    else:
        out.write(render_result(result))
    return exit_code(result.verdict)


def input_paths(arguments: argparse.Namespace) -> list[str | None]:
    """Every file the check's options name (the outputs must miss them all)."""
    return [
        arguments.device,
        arguments.load,
        arguments.terminate,
        arguments.device_fixture,
        arguments.load_fixture,
    ]


def pair_grid(arguments: argparse.Namespace) -> Any:
    """The grid options' grid: given only when both sides are netlists (refused, not ignored,
    with a data file; with --load-return-loss the product says what goes with the bound)."""
    from ..reading.files import is_netlist_path

    device_netlist = is_netlist_path(arguments.device)
    if arguments.load is None:
        return options.grid(
            arguments, netlists=device_netlist, required=False, data=arguments.device
        )
    netlists = device_netlist and is_netlist_path(arguments.load)
    data = arguments.load if device_netlist else arguments.device
    return options.grid(arguments, netlists=netlists, required=False, data=data)


def check_inputs(arguments: argparse.Namespace) -> dict[str, Any]:
    """The check's keyword arguments from its options (``stabilise`` passes the same)."""
    return {
        "measurement_impedance_ohm": arguments.measurement_impedance,
        "device_dc_resistance_ohm": arguments.device_dc_resistance,
        "load_dc_resistance_ohm": arguments.load_dc_resistance,
        "gamma_uncertainty": arguments.gamma_uncertainty,
        "terminate": arguments.terminate,
        "terminate_impedance_ohm": arguments.terminate_impedance,
        "terminated_port": arguments.terminated_port,
        "differential_ports": arguments.differential_ports,
        "device_fixture": arguments.device_fixture,
        "device_delay_s": arguments.device_delay,
        "load_fixture": arguments.load_fixture,
        "load_delay_s": arguments.load_delay,
    }


def _pictures(result: Any, targets: dict[str, Any], arguments: argparse.Namespace) -> None:
    if "--plot" in targets:
        from ..rendering.check_plots import save_plots

        save_plots(result, targets["--plot"])
    if "--report" in targets:
        from ..rendering.report import run_record, write_report

        write_report(result, targets["--report"], run=run_record(getattr(arguments, "argv", None)))
