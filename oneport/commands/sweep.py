"""``oneport sweep``: the check over a grid of netlist parameters, a Monte Carlo run over
tolerances, or a list of measured devices — vectorised, chunked, optionally on Dask."""

from __future__ import annotations

import argparse
import sys
from typing import Any, TextIO

from .common import add_grid_options, add_output_options, grid_from_options, write_json

NAME = "sweep"

_EPILOG = """examples:
  oneport sweep diode.s1p --load tank.cir --vary Lbias=10nH:100nH:31 --vary Rb=20:200:31
  oneport sweep diode.s1p --load tank.cir --tolerance Ct=5% --tolerance Lt=10% --samples 10000
  oneport sweep bias_a.s1p bias_b.s1p bias_c.s1p --load tank.s1p
  oneport sweep diode.s1p --load tank.cir --vary Lt=1n:5n:101 --workers 2 -o table.parquet"""


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``sweep`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="the check over parameter grids, tolerances or several devices",
        description="Run the stability check for many variants at once: a grid over netlist"
        " parameters (--vary), a Monte Carlo run over tolerances (--tolerance), or a list of"
        " measured device files. One row per variant goes to a Parquet (or CSV) table.",
        epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    command.add_argument("devices", nargs="+", help="device Touchstone file(s) or one .cir netlist")
    command.add_argument(
        "--load", required=True, help="the load: a Touchstone file or a .cir netlist"
    )
    command.add_argument(
        "--vary",
        action="append",
        default=[],
        metavar="NAME=START:STOP:COUNT",
        help="sweep a netlist parameter (repeatable; all combinations are run)",
    )
    command.add_argument(
        "--log", action="append", default=[], metavar="NAME", help="sweep NAME geometrically"
    )
    command.add_argument(
        "--tolerance",
        action="append",
        default=[],
        metavar="NAME=PERCENT%",
        help="Monte Carlo: vary NAME within ±PERCENT of its netlist value (repeatable)",
    )
    command.add_argument(
        "--distribution",
        choices=("uniform", "normal"),
        default="uniform",
        help="uniform within ±tol (default), or normal with sigma = tol/3 truncated at ±tol",
    )
    command.add_argument(
        "--samples", type=int, default=1000, help="Monte Carlo variants (default 1000)"
    )
    command.add_argument("--seed", type=int, default=1, help="random seed (default 1): runs repeat")
    add_grid_options(command, "frequency grid when both sides are netlists")
    facts = command.add_argument_group("DC facts (give both)")
    facts.add_argument("--device-dc-resistance", metavar="OHMS")
    facts.add_argument("--load-dc-resistance", metavar="OHMS")
    command.add_argument(
        "--reference-impedance",
        metavar="OHMS",
        help="the analysis impedance: for a netlist device the Z0 it is analysed in (default"
        " 50ohm), for device files the impedance they were measured in (default: their own)",
    )
    out = command.add_argument_group("output")
    out.add_argument(
        "-o", "--output", metavar="FILE", help="the per-variant table (.parquet or .csv)"
    )
    out.add_argument(
        "--plot", metavar="FILE", help="stability map or margin histogram (.png, .svg)"
    )
    run_group = command.add_argument_group("where it runs")
    run_group.add_argument(
        "--scheduler", metavar="tcp://HOST:PORT", help="a running Dask scheduler"
    )
    run_group.add_argument("--workers", type=int, help="start a local Dask cluster with N workers")
    run_group.add_argument(
        "--threads", type=int, help="threads in this process (default 1; --workers uses cores)"
    )
    run_group.add_argument(
        "--chunk-size",
        type=int,
        help="variants per chunk, 1 or more (default: about 1e6 samples)",
    )
    add_output_options(command, json_help="print the summary as one JSON object", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Plan, run, write the table and print the summary; exit code per the conventions."""
    from ..products.sweep import sweep
    from ..rendering.sweep_text import render, verdict_line
    from .outcome import exit_code

    if arguments.plot:
        from ..rendering.figures import image_target

        image_target(arguments.plot)  # checked before any work
    progress, close = _progress(arguments)
    try:
        result = sweep(
            arguments.devices,
            arguments.load,
            vary=arguments.vary,
            log=arguments.log,
            tolerance=arguments.tolerance,
            samples=arguments.samples,
            seed=arguments.seed,
            distribution=arguments.distribution,
            measurement_impedance_ohm=arguments.reference_impedance,
            device_dc_resistance_ohm=arguments.device_dc_resistance,
            load_dc_resistance_ohm=arguments.load_dc_resistance,
            frequency_hz=grid_from_options(arguments, required=False),
            output=arguments.output,
            chunk_size=arguments.chunk_size,
            scheduler=arguments.scheduler,
            workers=arguments.workers,
            threads=arguments.threads,
            progress=progress,
        )
    finally:
        close()
    if arguments.plot and result.run.completed:
        from ..rendering.figures import save_figure

        save_figure(result.plot(), arguments.plot)
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return exit_code(result.verdict, interrupted=result.interrupted)


def _progress(arguments: argparse.Namespace) -> tuple[Any, Any]:
    """A progress bar on a terminal, else nothing: ``(done, total)`` moves it."""
    if not sys.stderr.isatty():
        return None, lambda: None
    from tqdm import tqdm

    bar = tqdm(unit="variant", file=sys.stderr)

    def advance(done: int, total: int) -> None:
        bar.total = total
        bar.update(done - bar.n)

    return advance, bar.close
