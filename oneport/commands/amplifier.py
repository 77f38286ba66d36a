"""``oneport amplifier``: screen a negative-resistance device as a reflection amplifier.

Text rendering of :class:`~oneport.analysis.amplifier.AmplifierResult` lives here too; it formats
and computes nothing.
"""

from __future__ import annotations

import argparse
from typing import TYPE_CHECKING, Any, TextIO

from ..rendering.check_text import closing_sections, wrap
from ..units import format_frequency, parse_decibels
from .common import (
    add_measurement_impedance_option,
    add_output_options,
    measurement_impedance,
    write_json,
)

if TYPE_CHECKING:
    from ..analysis.amplifier import AmplifierResult, GainBand

NAME = "amplifier"
_HEADLINE = {
    "stable": "STABLE",
    "not-guaranteed": "NOT GUARANTEED",
    "unstable": "UNSTABLE",
    "inconclusive": "INCONCLUSIVE",
}


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
    from ..products.amplifier import screen_amplifier
    from ..rendering.amplifier_plot import save_amplifier_plot
    from .outcome import exit_code

    impedance = measurement_impedance(arguments)
    return_loss = None
    if arguments.port_return_loss is not None:
        return_loss = parse_decibels(arguments.port_return_loss, option="--port-return-loss")
    threshold = parse_decibels(arguments.gain_threshold, option="--gain-threshold")
    result = screen_amplifier(
        arguments.device,
        load=arguments.load,
        port_return_loss_db=return_loss,
        gain_threshold_db=threshold,
        measurement_impedance_ohm=impedance,
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


def verdict_line(result: AmplifierResult) -> str:
    """One line: verdict and its basis, peak gain, port, Z0."""
    basis = {
        "small-gain": "small-gain bound",
        "nyquist": "Nyquist count with the load",
        "none": "no port stated",
    }[result.basis]
    port = ""
    if result.port_source == "return-loss":
        port = f"; port {result.port_return_loss_db:.1f} dB return loss"
    elif result.port_source == "load":
        port = f"; port file, worst return loss {result.port_return_loss_db:.1f} dB"
    return (
        f"{_HEADLINE[result.verdict]} ({basis}): peak gain {result.peak_gain_db:.2f} dB at"
        f" {format_frequency(result.peak_frequency_hz)}{port};"
        f" Z0 = {result.reference_impedance_ohm:g} ohm"
    )


def render(result: AmplifierResult) -> str:
    """The full text report."""
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += ["", *_gain(result), "", *_requirement(result)]
    if result.nyquist is not None:
        nyquist = result.nyquist
        count = "?" if nyquist.encirclements is None else str(nyquist.encirclements)
        parts += ["", "Nyquist check with the load", f"  {nyquist.verdict}, N = {count}"]
    parts += closing_sections(result.warnings, result.next_steps, result.premise, result.cautions)
    return "\n".join(parts) + "\n"


def _gain(result: AmplifierResult) -> list[str]:
    z0 = result.reference_impedance_ohm
    bandwidth = result.bandwidth
    rows = [
        f"Gain |gamma_device|^2 (Z0 = {z0:g} ohm)",
        f"  peak {result.peak_gain_db:.2f} dB at {format_frequency(result.peak_frequency_hz)}",
        f"  -3 dB band {_span(bandwidth)}, bandwidth"
        f" {format_frequency(bandwidth.stop_hz - bandwidth.start_hz)}",
    ]
    if not result.bands:
        rows.append(f"  no band reaches {result.gain_threshold_db:g} dB")
    for band in result.bands:
        rows.append(
            f"  >= {result.gain_threshold_db:g} dB: {_span(band)}, peak {band.peak_gain_db:.2f} dB"
            f" at {format_frequency(band.peak_frequency_hz)}"
        )
    return rows


def _requirement(result: AmplifierResult) -> list[str]:
    rows = [
        "Port match for guaranteed stability (small-gain bound |gamma_device * gamma_port| < 1)",
        f"  return loss needed: {result.worst_required_return_loss_db:.2f} dB at"
        f" {format_frequency(result.worst_frequency_hz)} (the gain in dB at each frequency)",
    ]
    if result.port_margin_db is not None and result.port_margin_frequency_hz is not None:
        source = {
            "return-loss": "stated",
            "load": "from the port file",
            "any-passive-port": "any passive port",
        }[result.port_source or ""]
        rows.append(
            f"  port return loss {result.port_return_loss_db:.2f} dB ({source}): margin"
            f" {result.port_margin_db:+.2f} dB at"
            f" {format_frequency(result.port_margin_frequency_hz)}"
        )
        rows += [wrap(edge.note, "  ") for edge in result.edges]
    ripple = result.ripple_at_peak_db
    if ripple is not None:
        lower, upper = ripple
        top = "unbounded" if upper == float("inf") else f"{upper:.2f} dB"
        rows.append(f"  gain at the peak with this match: {lower:.2f} dB to {top}")
    return rows


def _span(band: GainBand) -> str:
    low = format_frequency(band.start_hz) + (" (sweep edge)" if band.starts_at_sweep_edge else "")
    high = format_frequency(band.stop_hz) + (" (sweep edge)" if band.stops_at_sweep_edge else "")
    return f"{low} to {high}"
