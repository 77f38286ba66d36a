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
        " Nyquist count of the loop gain L = gamma_device * gamma_load around +1, in the"
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
        help="worst-case absolute error of |gamma|: one value for both sides, or device,load",
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
            default=0.0,
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
    from ..products.check import check, check_load_class
    from ..rendering.check_text import render, render_bound, verdict_line

    targets = options.outputs(
        {"--plot": arguments.plot, "--report": arguments.report}, input_paths(arguments)
    )
    result: Any
    if arguments.load_return_loss is not None:
        if arguments.plot or arguments.report or arguments.poles:
            raise InputError(
                "--poles, --plot and --report go with --load, not with --load-return-loss"
            )
        from ..reading.files import is_netlist_path

        if not is_netlist_path(arguments.device):  # a netlist device is refused by the bound
            options.grid(arguments, netlists=False, required=False, data=arguments.device)
        uncertainty = arguments.gamma_uncertainty
        result = check_load_class(
            arguments.device,
            arguments.load_return_loss,
            measurement_impedance_ohm=arguments.measurement_impedance,
            device_uncertainty=float(
                uncertainty[0] if isinstance(uncertainty, tuple) else uncertainty or 0.0
            ),
            device_setup=device_setup(arguments),
        )
        text = render_bound(result)
        line = text.splitlines()[0]
    else:
        result = check(
            arguments.device,
            arguments.load,
            frequency_hz=pair_grid(arguments),
            **check_inputs(arguments),
        )
        text = render(result)
        line = verdict_line(result)
        _pictures(result, targets)
    data = result.to_dict(include_arrays=arguments.include_arrays)
    if arguments.poles and arguments.load is not None:
        second = _second_opinion(result)
        data["poles"] = second.to_dict()
        data["warnings"] += [
            w.to_dict() for w in second.warnings if w.code == "pole-count-disagrees"
        ]
        text = _with_second_opinion(text, second)
    if arguments.json:
        write_json(data, out)
    elif arguments.quiet:
        print(line, file=out)
    else:
        out.write(text)
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
    """The grid options' grid: given only when both sides are netlists."""
    from ..reading.files import is_netlist_path

    netlists = is_netlist_path(arguments.device) and is_netlist_path(arguments.load)
    data = arguments.load if is_netlist_path(arguments.device) else arguments.device
    return options.grid(arguments, netlists=netlists, required=False, data=data)


def check_inputs(arguments: argparse.Namespace) -> dict[str, Any]:
    """The check's keyword arguments from its options (``stabilise`` passes the same)."""
    from ..reading.preparation import PortSetup

    return {
        "measurement_impedance_ohm": arguments.measurement_impedance,
        "device_dc_resistance_ohm": arguments.device_dc_resistance,
        "load_dc_resistance_ohm": arguments.load_dc_resistance,
        "gamma_uncertainty": arguments.gamma_uncertainty,
        "device_setup": device_setup(arguments),
        "load_setup": PortSetup(fixture_path=arguments.load_fixture, delay_s=arguments.load_delay),
    }


def _second_opinion(result: Any) -> Any:
    """The pole–zero identification of F = 1 − L, cross-checked with the count."""
    from ..analysis.pole_zero import identify_natural_frequencies, with_count_check

    fitted = identify_natural_frequencies(
        result.frequency_hz,
        1.0 - result.loop_gain,
        reference_impedance_ohm=result.reference_impedance_ohm,
        inputs=result.inputs,
    )
    return with_count_check(fitted, result)


def _with_second_opinion(text: str, second: Any) -> str:
    """The check's report with the fit's section inserted before the premise."""
    from ..rendering.poles_text import second_opinion_lines

    section = "\n".join(second_opinion_lines(second)) + "\n\n"
    marker = "Premise\n"
    index = text.find(marker)
    return text[:index] + section + text[index:] if index >= 0 else text + "\n" + section


def _pictures(result: Any, targets: dict[str, Any]) -> None:
    if "--plot" in targets:
        from ..rendering.check_plots import save_plots

        save_plots(result, targets["--plot"])
    if "--report" in targets:
        from ..rendering.report import write_report

        write_report(result, targets["--report"])


def device_setup(arguments: argparse.Namespace) -> Any:
    """How the device file becomes a one-port (termination, differential pairs, plane)."""
    from ..reading.preparation import PortSetup

    return PortSetup(
        terminate_path=arguments.terminate,
        terminate_impedance_ohm=arguments.terminate_impedance,
        terminated_port=arguments.terminated_port,
        differential_pairs=arguments.differential_ports or (),
        fixture_path=arguments.device_fixture,
        delay_s=arguments.device_delay,
    )
