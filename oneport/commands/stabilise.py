"""``oneport stabilise``: which network at the device's port makes the pair stable, with margin."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from . import options
from .check import add_check_inputs, check_inputs, input_paths, pair_grid
from .common import add_measurement_impedance_option, add_output_options, write_json
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
the check's options (--measurement-impedance, DC facts, planes, grid) mean what they mean there."""


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
    options.add(
        command,
        "device",
        rule=options.input_path,
        help="the device: a Touchstone file (one-port, or see below) or a .cir netlist",
    )
    options.add(
        command,
        "--load",
        rule=options.input_path,
        required=True,
        metavar="FILE",
        help="the load: a Touchstone one-port or a .cir",
    )
    aim = command.add_argument_group("what to reach")
    options.add(
        aim,
        "--margin",
        rule=options.margin,
        repeat=True,
        default=None,
        metavar="X|DB",
        help="minimum |1 - L| (e.g. 0.2) or gain margin (e.g. 6dB); repeatable; default 0.3",
    )
    aims = aim.add_mutually_exclusive_group()
    options.add(
        aims,
        "--band",
        rule=options.band,
        metavar="F1:F2",
        help="count the cost as the reflection gain lost in this band (e.g. 2GHz:3GHz);"
        " default: where the device has gain",
    )
    options.add(
        aims,
        "--keep",
        rule=options.positive_frequency,
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
    options.add(
        spread,
        "--tolerance",
        rule=options.stabilise_tolerance,
        repeat=True,
        default=None,
        metavar="PCT%|NAME=PCT%",
        help="5%%: the added elements; NAME=10%%: a load netlist parameter; repeatable",
    )
    options.add(
        spread,
        "--samples",
        rule=options.samples,
        default=1000,
        metavar="N",
        help=f"default 1000, at most {options.MAX_VARIANTS:,}",
    )
    options.add(spread, "--seed", rule=options.seed, default=1, help="default 1: runs repeat")
    spread.add_argument("--distribution", choices=("uniform", "normal"), default="uniform")
    bias = command.add_argument_group("bias (for the resistors' DC drop and dissipation)")
    options.add(
        bias,
        "--bias-current",
        rule=options.current,
        metavar="AMPS",
        help="the device's DC current, e.g. 20mA",
    )
    options.add(
        bias,
        "--bias-voltage",
        rule=options.voltage,
        metavar="VOLTS",
        help="the device's DC voltage, e.g. 1.2V",
    )
    add_measurement_impedance_option(command)
    add_check_inputs(command)
    options.add_grid(command, "frequency grid when both sides are netlists")
    options.add(
        command,
        "--plot",
        rule=options.plot,
        metavar="FILE",
        help="|L| and Nyquist before and after the first suggestion (.png or .svg)",
    )
    add_output_options(command, arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Run the advice and print it; return the verdict's exit code."""
    from ..products.stabilise import stabilise
    from ..rendering.stabilise_text import render, verdict_line

    targets = options.outputs({"--plot": arguments.plot}, input_paths(arguments))
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
        frequency_hz=pair_grid(arguments),
        **check_inputs(arguments),
    )
    if "--plot" in targets:
        from ..rendering.stabilise_plots import save_stabilise_plot

        save_stabilise_plot(result, targets["--plot"])
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict)
