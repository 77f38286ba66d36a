"""``oneport stabilise``: which network at the device's port makes the pair stable, with margin."""

from __future__ import annotations

import argparse
from pathlib import Path
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

NAME = "stabilise"

_FAMILIES = ("series-resistor", "shunt-resistor", "shunt-rc", "series-rl")

_EPILOG = """examples:
  oneport stabilise diode.s1p --load bias_tee.s1p
  oneport stabilise diode.s1p --load circulator.s1p --band 2GHz:3GHz --margin 0.2 --margin 6dB
  oneport stabilise osc.s1p --load tank.s1p --keep 2.1GHz
  oneport stabilise diode.s1p --load bias.cir --at-node supply --at-node Lchoke --tolerance 5%
  oneport stabilise diode.s1p --load tank.s1p --family series-resistor --bias-current 20mA --json

verdicts: stabilised (exit 0), no-change-needed (0), not-stabilised (3), inconclusive (4).
negative values: write them with '=' (--device-dc-resistance=-76ohm)."""


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``stabilise`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="which resistor or RC/RL network, where and how much, makes the pair stable",
        description="Stabilising advice: scan families of lossy networks at the device's port"
        " (series or shunt resistor, shunt R-C, series R||L) and resistors inside a load"
        " netlist, find the values for which the check says stable, and recommend one with the"
        " requested margin at the least cost, verified by the full check on the changed pair.",
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    command.add_argument(
        "device", help="the device: a Touchstone file (one-port, or see below) or a .cir netlist"
    )
    command.add_argument(
        "--load", required=True, metavar="FILE", help="the load: a Touchstone one-port or a .cir"
    )
    aim = command.add_argument_group("what to reach")
    aim.add_argument(
        "--margin",
        action="append",
        metavar="X|DB",
        help="minimum |1 - L| (e.g. 0.2) or gain margin (e.g. 6dB); repeatable; default 0.3",
    )
    aims = aim.add_mutually_exclusive_group()
    aims.add_argument(
        "--band",
        metavar="F1:F2",
        help="count the cost as the reflection gain lost in this band (e.g. 2GHz:3GHz);"
        " default: where the device has gain",
    )
    aims.add_argument(
        "--keep",
        metavar="FREQUENCY",
        help="an oscillator: remove every mode but the one near this frequency (e.g. 2.1GHz)",
    )
    where = command.add_argument_group("which networks")
    where.add_argument(
        "--family",
        action="append",
        choices=_FAMILIES,
        help="a family at the device's port (repeatable; default: all four)",
    )
    where.add_argument(
        "--at-node",
        action="append",
        default=[],
        metavar="NAME",
        help="netlist load: a resistor from node NAME to ground, or in series with element NAME"
        " (node:NAME, element:NAME when both exist); repeatable",
    )
    where.add_argument(
        "--only-at-node",
        action="store_true",
        help="with --at-node: try no family at the device's port",
    )
    spread = command.add_argument_group("tolerances (a seeded Monte Carlo of each suggestion)")
    spread.add_argument(
        "--tolerance",
        action="append",
        metavar="PCT%|NAME=PCT%",
        help="5%%: the added elements; NAME=10%%: a load netlist parameter; repeatable",
    )
    spread.add_argument("--samples", type=int, default=1000, help="default 1000")
    spread.add_argument("--seed", type=int, default=1, help="default 1: runs repeat")
    spread.add_argument("--distribution", choices=("uniform", "normal"), default="uniform")
    bias = command.add_argument_group("bias (for the resistors' DC drop and dissipation)")
    bias.add_argument("--bias-current", metavar="AMPS", help="the device's DC current, e.g. 20mA")
    bias.add_argument("--bias-voltage", metavar="VOLTS", help="the device's DC voltage, e.g. 1.2V")
    _add_check_inputs(command)
    command.add_argument(
        "--plot", metavar="FILE", help="|L| and Nyquist before and after the first suggestion"
    )
    add_output_options(command, arrays=False)
    return command


def _add_check_inputs(command: argparse.ArgumentParser) -> None:
    """The check's input options, with the same meanings (see ``oneport check --help``)."""
    add_measurement_impedance_option(command)
    facts = command.add_argument_group("DC facts (close the contour towards DC; give both)")
    facts.add_argument("--device-dc-resistance", metavar="OHMS", help="the device's I-V slope")
    facts.add_argument("--load-dc-resistance", metavar="OHMS", help="the load's DC resistance")
    add_grid_options(command, "frequency grid when both sides are netlists")
    command.add_argument(
        "--gamma-uncertainty",
        metavar="X[,Y]",
        help="worst-case absolute error of |gamma|: one value for both sides, or device,load",
    )
    device = command.add_argument_group("device as measured")
    terminations = device.add_mutually_exclusive_group()
    terminations.add_argument("--terminate", metavar="FILE", help="two-port: terminate in this")
    terminations.add_argument(
        "--terminate-impedance", metavar="OHMS", help="two-port: terminate in this resistance"
    )
    terminations.add_argument(
        "--differential-ports", metavar="P,N[:P,N]", help="the differential port's pair(s)"
    )
    device.add_argument("--terminated-port", type=int, choices=(1, 2), default=2)
    planes = command.add_argument_group("reference planes")
    for side in ("device", "load"):
        planes.add_argument(f"--{side}-delay", metavar="TIME", help=f"line on the {side} side")
        planes.add_argument(f"--{side}-fixture", metavar="FILE", help=f"de-embed from the {side}")


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Run the advice and print it; return the verdict's exit code."""
    from ..products.stabilise import stabilise
    from ..rendering.stabilise_text import render, verdict_line

    plot_target = _plot_target(arguments)
    families: tuple[str, ...] | None = None
    if arguments.only_at_node:
        if not arguments.at_node:
            raise InputError("--only-at-node goes with --at-node NAME")
        families = ()
    elif arguments.family:
        families = tuple(dict.fromkeys(arguments.family))
    result = stabilise(
        arguments.device,
        arguments.load,
        margin=arguments.margin,
        band=arguments.band,
        keep=arguments.keep,
        families=families,
        at_node=tuple(arguments.at_node),
        tolerance=arguments.tolerance,
        samples=arguments.samples,
        seed=arguments.seed,
        distribution=arguments.distribution,
        bias_current=arguments.bias_current,
        bias_voltage=arguments.bias_voltage,
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
    )
    if plot_target is not None:
        from ..rendering.stabilise_plots import save_stabilise_plot

        save_stabilise_plot(result, plot_target)
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict)


def _plot_target(arguments: argparse.Namespace) -> Path | None:
    """The plot's path, checked before any work: a writable folder, .png or .svg, no input."""
    if not arguments.plot:
        return None
    from ..rendering.figures import image_target

    target, _ = image_target(arguments.plot)
    inputs = [
        arguments.device,
        arguments.load,
        arguments.terminate,
        arguments.device_fixture,
        arguments.load_fixture,
    ]
    for path in inputs:
        if path and Path(path).resolve() == target.resolve():
            raise InputError(
                f"--plot {arguments.plot}: that is an input of this run; choose another path"
            )
    return target
