"""``oneport oscillator``: large-signal operating points of a device into a load (Kurokawa)."""

from __future__ import annotations

import argparse
from typing import Any, TextIO

from . import options
from .common import add_output_options, write_json

NAME = "oscillator"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``oscillator`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="where an oscillator settles: operating points and Kurokawa stability",
        description="Large-signal operating points of a negative-resistance device into a load:"
        " every point inside the data where the device's reflection times the load's is 1, its"
        " frequency, amplitude and power, Kurokawa's stability, start-up from noise (the"
        " small-signal Nyquist count) and a verdict. DEVICE is a TOML manifest: drive-level"
        " Touchstone files or an I-V description (docs/oscillator.md).",
        epilog="example: oneport oscillator touchstone_examples/oscillator/drive_levels.toml"
        " --load touchstone_examples/oscillator/load.s1p --plot operating_points.png",
    )
    options.add(
        command,
        "device",
        rule=options.input_path,
        help="the device manifest (TOML): drive levels or I-V curve",
    )
    options.add(
        command,
        "--load",
        rule=options.input_path,
        required=True,
        help="the load: a Touchstone one-port or a netlist (.cir)",
    )
    command.add_argument(
        "--form",
        choices=("auto", "admittance", "impedance"),
        default=None,
        help="Kurokawa's form: admittance (G_T, B_T, port voltage) or impedance (R_T, X_T, port"
        " current); default: the manifest's form, else chosen to suit the device",
    )
    options.add(
        command,
        "--injection-below",
        rule=options.injection_below,
        metavar="DB",
        default=20.0,
        help="how far the injected power lies below the oscillator's, 0dB to 100dB, for the"
        " stated injection-locking range (default 20dB)",
    )
    options.add(
        command, "--plot", rule=options.plot, metavar="FILE", help="write the plot (.png or .svg)"
    )
    add_output_options(command)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Run the analysis and print it; return the verdict's exit code."""
    from ..products.oscillator import oscillator
    from ..rendering.oscillator_text import render, verdict_line
    from .outcome import exit_code

    targets = options.outputs({"--plot": arguments.plot}, [arguments.device, arguments.load])
    result = oscillator(
        arguments.device,
        arguments.load,
        form=arguments.form,
        injection_below_db=arguments.injection_below,
    )
    if "--plot" in targets:
        from ..rendering.figures import save_figure
        from ..rendering.oscillator_plot import plot_oscillator

        save_figure(plot_oscillator(result), targets["--plot"])
    if arguments.json:
        write_json(result.to_dict(include_arrays=arguments.include_arrays), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict)
