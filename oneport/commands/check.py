"""``oneport check``: small-signal stability of a device one-port into a load one-port."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from ..units import parse_decibels, parse_quantity
from .common import (
    add_grid_options,
    add_measurement_impedance_option,
    add_output_options,
    grid_from_options,
    measurement_impedance,
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
    from ..products.check import check, check_load_class
    from ..reading.preparation import PortSetup
    from ..rendering.check_text import render, render_bound, verdict_line

    impedance = measurement_impedance(arguments)
    device_setup = _device_setup(arguments)
    result: Any
    if arguments.load_return_loss is not None:
        if arguments.plot or arguments.report or arguments.poles:
            raise InputError(
                "--poles, --plot and --report go with --load, not with --load-return-loss"
            )
        uncertainty = _uncertainty(arguments.gamma_uncertainty)
        result = check_load_class(
            arguments.device,
            parse_decibels(arguments.load_return_loss, option="--load-return-loss"),
            measurement_impedance_ohm=impedance,
            device_uncertainty=float(
                uncertainty[0] if isinstance(uncertainty, tuple) else uncertainty or 0.0
            ),
            device_setup=device_setup,
        )
        text = render_bound(result)
        line = text.splitlines()[0]
    else:
        load_setup = PortSetup(
            fixture_path=arguments.load_fixture,
            delay_s=_time(arguments.load_delay, "--load-delay"),
        )
        result = check(
            arguments.device,
            arguments.load,
            measurement_impedance_ohm=impedance,
            device_dc_resistance_ohm=_resistance(
                arguments.device_dc_resistance, "--device-dc-resistance"
            ),
            load_dc_resistance_ohm=_resistance(
                arguments.load_dc_resistance, "--load-dc-resistance"
            ),
            gamma_uncertainty=_uncertainty(arguments.gamma_uncertainty),
            frequency_hz=grid_from_options(arguments, required=False),
            device_setup=device_setup,
            load_setup=load_setup,
        )
        text = render(result)
        line = verdict_line(result)
        _pictures(result, arguments)
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


def _pictures(result: Any, arguments: argparse.Namespace) -> None:
    if arguments.plot:
        from ..rendering.check_plots import save_plots

        save_plots(result, arguments.plot)
    if arguments.report:
        from ..rendering.report import run_record, write_report

        write_report(result, arguments.report, run=run_record(getattr(arguments, "argv", None)))


def _device_setup(arguments: argparse.Namespace) -> Any:
    from ..reading.planes import parse_port_pairs
    from ..reading.preparation import PortSetup

    pairs: tuple[tuple[int, int], ...] = ()
    if arguments.differential_ports is not None:
        pairs = tuple(parse_port_pairs(arguments.differential_ports))
    return PortSetup(
        terminate_path=arguments.terminate,
        terminate_impedance_ohm=_resistance(arguments.terminate_impedance, "--terminate-impedance"),
        terminated_port=arguments.terminated_port,
        differential_pairs=pairs,
        fixture_path=arguments.device_fixture,
        delay_s=_time(arguments.device_delay, "--device-delay"),
    )


def _resistance(text: str | None, option: str) -> float | None:
    return None if text is None else parse_quantity(text, "resistance", option=option)


#: A plane shift longer than this is no cable or fixture: a unit was probably left out.
_LONGEST_DELAY_S = 1e-6


def _time(text: str | None, option: str) -> float:
    if text is None:
        return 0.0
    delay = parse_quantity(text, "time", option=option)
    if abs(delay) > _LONGEST_DELAY_S:
        raise InputError(
            f"{option}: {text!r} is {delay:g} s of line, far beyond any fixture or cable; give"
            " the unit, e.g. 12ps or 0.5ns"
        )
    return delay


def _uncertainty(text: str | None) -> float | tuple[float, float] | None:
    if text is None:
        return None
    fields = text.split(",")
    try:
        values = [float(field) for field in fields]
    except ValueError:
        values = []
    if len(values) not in (1, 2) or not all(0.0 <= v < 1.0 for v in values):
        raise InputError(
            f"--gamma-uncertainty: cannot read {text!r}; give an absolute |gamma| error in"
            " [0, 1), e.g. 0.01, or device,load as 0.01,0.02"
        )
    return values[0] if len(values) == 1 else (values[0], values[1])
