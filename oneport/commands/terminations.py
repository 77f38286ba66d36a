"""``oneport terminations``: which terminations of one port make the other port negative."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from ..errors import InputError
from ..units import parse_quantity
from .common import add_output_options, write_json
from .export import parse_parameter_options

NAME = "terminations"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``terminations`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="terminations of a two-port's port that make the other port's resistance negative",
        description="For a two-port device (a .s2p Touchstone file or a .twoport netlist), find"
        " the passive terminations of one port that make the other port's resistance negative"
        " (the stability circle's region), and the termination giving the most negative"
        " resistance at a chosen frequency.",
        epilog="example: oneport terminations touchstone_examples/circuits/transistor.s2p"
        " --at 8GHz --terminate 2 --plot chart.png",
    )
    command.add_argument("device", help="the two-port: a Touchstone file or a netlist (.cir)")
    command.add_argument("--at", required=True, help="the frequency to analyse, e.g. 8GHz")
    command.add_argument(
        "--terminate",
        type=int,
        choices=(1, 2),
        default=2,
        help="the port whose termination varies (default 2); the other port is observed",
    )
    grid = command.add_argument_group("netlist grid (a netlist has none of its own)")
    grid.add_argument("--start", help="first frequency, e.g. 100MHz")
    grid.add_argument("--stop", help="last frequency, e.g. 18GHz")
    grid.add_argument("--points", type=int, default=1001, help="frequencies (default 1001)")
    grid.add_argument("--spacing", choices=("linear", "log"), default="linear")
    grid.add_argument(
        "--param", action="append", default=[], metavar="NAME=VALUE", help="override a .set value"
    )
    grid.add_argument(
        "--reference-impedance",
        default="50ohm",
        metavar="OHMS",
        help="reference impedance for a netlist's S-parameters (default 50ohm)",
    )
    command.add_argument("--plot", metavar="FILE", help="write a Smith chart (.png or .svg)")
    add_output_options(command, quiet_help="print one summary line", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Analyse, print, optionally plot; return 0 (bad input raises: exit code 2)."""
    from ..analysis.terminations import analyse_terminations

    frequency = parse_quantity(arguments.at, "frequency", option="--at")
    data = _two_port(arguments)
    if arguments.plot is not None:
        from ..rendering.check_plots import require_folder

        require_folder(_path(arguments.plot))
    result = analyse_terminations(data, frequency, terminated_port=arguments.terminate)
    if arguments.plot is not None:
        from ..rendering.smith import save_termination_chart

        save_termination_chart(result, arguments.plot)
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(_summary_line(result), file=out)
    else:
        out.write(_report(result))
    return 0


def _path(text: str) -> Any:
    from pathlib import Path

    return Path(text)


def _two_port(arguments: argparse.Namespace) -> Any:
    from ..circuit import is_circuit_path, multiport_from_circuit
    from ..products.export import frequency_grid
    from ..reading.touchstone import read_touchstone

    if not is_circuit_path(arguments.device):
        if arguments.start or arguments.stop or arguments.param:
            raise InputError("--start, --stop and --param apply to netlists (.cir) only")
        return read_touchstone(arguments.device)
    if arguments.start is None or arguments.stop is None:
        raise InputError(f"{arguments.device}: a netlist needs --start and --stop for its grid")
    start = parse_quantity(arguments.start, "frequency", option="--start")
    stop = parse_quantity(arguments.stop, "frequency", option="--stop")
    reference = parse_quantity(
        arguments.reference_impedance, "resistance", option="--reference-impedance"
    )
    if not reference > 0:
        raise InputError(f"--reference-impedance {arguments.reference_impedance!r}: give ohms > 0")
    grid = frequency_grid(start, stop, arguments.points, arguments.spacing)
    return multiport_from_circuit(
        arguments.device, grid, reference, parse_parameter_options(arguments.param)
    )


def _summary_line(result: Any) -> str:
    from ..units import format_frequency

    best = result.best
    if best.unbounded:
        tail = "unbounded (a passive termination makes it infinite)"
    else:
        tail = f"{best.observed_resistance_ohm:.4g} ohm at best"
    return (
        f"port {result.terminated_port} terminations making port {result.observed_port}"
        f" negative at {format_frequency(result.frequency_hz)}: {result.negative_fraction:.1%}"
        f" of passive terminations; resistance {tail}"
    )


def _report(result: Any) -> str:
    from ..units import format_frequency

    circle, best = result.circle, result.best
    bands = ", ".join(
        f"{format_frequency(start)} to {format_frequency(stop)}" for start, stop in result.bands_hz
    )
    lines = [
        f"{result.source}: terminations of port {result.terminated_port} that make port"
        f" {result.observed_port}'s resistance negative",
        f"  some passive termination does so over: {bands or 'no frequency of the data'}",
        f"At {format_frequency(result.frequency_hz)}, Gamma_T referred to"
        f" {result.reference_impedance_ohm:g} ohm:",
    ]
    if circle.radius < float("inf"):
        side = "inside" if circle.negative_inside else "outside"
        lines.append(
            f"  stability circle: center {circle.center.real:.4g}{circle.center.imag:+.4g}j,"
            f" radius {circle.radius:.4g}; negative resistance {side} it"
        )
    else:
        lines.append("  stability circle: a straight line at this frequency")
    lines.append(
        f"  passive terminations giving negative resistance: {result.negative_fraction:.1%}"
    )
    lines.append(_best_line(result, best))
    return "\n".join(lines) + "\n"


def _best_line(result: Any, best: Any) -> str:
    gamma = f"Gamma_T = {best.gamma.real:.4g}{best.gamma.imag:+.4g}j"
    equivalent = best.equivalent(result.frequency_hz)
    if equivalent["kind"] in ("open", "short"):
        element = f", {'an open' if equivalent['kind'] == 'open' else 'a short'}"
    else:
        if equivalent["kind"] == "inductor":
            reactive = f"{equivalent['inductance_h'] * 1e9:.4g} nH"
        else:
            reactive = f"{equivalent['capacitance_f'] * 1e12:.4g} pF"
        loss = equivalent["series_resistance_ohm"]
        name = "inductor" if equivalent["kind"] == "inductor" else "capacitor"
        element = f", a {reactive} {name}" if loss == 0 else f", {loss:.4g} ohm and {reactive}"
    impedance = best.impedance_ohm
    if abs(impedance.real) < 1e-9 * abs(impedance):
        impedance = complex(0.0, impedance.imag)  # a lossless termination, up to rounding
    where = f"{gamma} (Z_T = {impedance.real:.4g}{impedance.imag:+.4g}j ohm{element})"
    if best.unbounded:
        return f"  unbounded: {where} makes port {result.observed_port}'s impedance infinite"
    return f"  most negative resistance: {best.observed_resistance_ohm:.4g} ohm with {where}"
