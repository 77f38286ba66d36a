"""``oneport sweep``: the check over a grid of netlist parameters, a Monte Carlo run over
tolerances, or a list of measured devices — vectorised, chunked, optionally on Dask."""

from __future__ import annotations

import argparse
import sys
from typing import Any, TextIO

from . import options
from .common import add_output_options, write_json

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
    options.add(
        command,
        "devices",
        rule=options.input_path,
        nargs="+",
        help="device Touchstone file(s) or one .cir netlist",
    )
    options.add(
        command,
        "--load",
        rule=options.input_path,
        required=True,
        help="the load: a Touchstone file or a .cir netlist",
    )
    options.add(
        command,
        "--vary",
        rule=options.vary,
        repeat=True,
        metavar="NAME=START:STOP:COUNT",
        help="sweep a netlist parameter (repeatable; all combinations are run, at most"
        f" {options.MAX_VARIANTS:,})",
    )
    command.add_argument(
        "--log", action="append", default=[], metavar="NAME", help="sweep NAME geometrically"
    )
    options.add(
        command,
        "--tolerance",
        rule=options.tolerance,
        repeat=True,
        metavar="NAME=PERCENT%",
        help="Monte Carlo: vary NAME within ±PERCENT of its netlist value (repeatable)",
    )
    command.add_argument(
        "--distribution",
        choices=("uniform", "normal"),
        default="uniform",
        help="uniform within ±tol (default), or normal with sigma = tol/3 truncated at ±tol",
    )
    options.add(
        command,
        "--samples",
        rule=options.samples,
        default=1000,
        metavar="N",
        help=f"Monte Carlo variants (default 1000, at most {options.MAX_VARIANTS:,})",
    )
    options.add(
        command,
        "--seed",
        rule=options.seed,
        default=1,
        metavar="S",
        help="random seed, 0 or more (default 1): the same seed gives the same variants",
    )
    options.add_grid(command, "frequency grid when both sides are netlists")
    facts = command.add_argument_group("DC facts (give both)")
    options.add(facts, "--device-dc-resistance", rule=options.dc_resistance, metavar="OHMS")
    options.add(facts, "--load-dc-resistance", rule=options.dc_resistance, metavar="OHMS")
    options.add(
        command,
        "--reference-impedance",
        rule=options.impedance,
        metavar="OHMS",
        help="the analysis impedance: for a netlist device the Z0 it is analysed in (default"
        " 50ohm), for device files the impedance they were measured in (default: their own)",
    )
    out = command.add_argument_group("output")
    options.add(
        out,
        "-o",
        "--output",
        rule=options.table,
        metavar="FILE",
        help="the per-variant table (.parquet or .csv)",
    )
    options.add(
        out,
        "--plot",
        rule=options.plot,
        metavar="FILE",
        help="stability map or margin histogram (.png or .svg)",
    )
    run_group = command.add_argument_group("where it runs")
    options.add(
        run_group,
        "--scheduler",
        rule=options.scheduler,
        metavar="tcp://HOST:PORT",
        help="a running Dask scheduler",
    )
    options.add(
        run_group,
        "--workers",
        rule=options.workers,
        metavar="N",
        help=f"start a local Dask cluster with N workers (1 to {options.MAX_PARALLEL})",
    )
    options.add(
        run_group,
        "--threads",
        rule=options.threads,
        metavar="N",
        help=f"threads in this process (default 1, at most {options.MAX_PARALLEL})",
    )
    options.add(
        run_group,
        "--chunk-size",
        rule=options.chunk_size,
        metavar="N",
        help="variants per chunk, 1 or more (default: about 1e6 samples)",
    )
    add_output_options(command, json_help="print the summary as one JSON object", arrays=False)
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Plan, run, write the table and print the summary; exit code per the conventions.

    Whatever stops the run early, the finished variants are written (marked partial) and
    summarised before the failure is reported: Ctrl-C exits with 130, a refused input with 2
    (its one line), a bug with 1.
    """
    from ..circuit import is_circuit_path
    from ..products.sweep import sweep
    from ..rendering.sweep_text import render, verdict_line
    from .outcome import exit_code

    targets = options.outputs(
        {"--output": arguments.output, "--plot": arguments.plot},
        [*arguments.devices, arguments.load],
    )
    both_netlists = is_circuit_path(arguments.devices[0]) and is_circuit_path(arguments.load)
    data = arguments.load if is_circuit_path(arguments.devices[0]) else arguments.devices[0]
    grid = options.grid(arguments, netlists=both_netlists, required=both_netlists, data=data)
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
            frequency_hz=grid,
            output=targets.get("--output"),
            chunk_size=arguments.chunk_size,
            scheduler=arguments.scheduler,
            workers=arguments.workers,
            threads=arguments.threads,
            progress=progress,
        )
    finally:
        close()
    if "--plot" in targets and result.run.completed:
        from ..rendering.figures import save_figure

        save_figure(result.plot(), targets["--plot"])
    if arguments.json:
        write_json(result.to_dict(), out)
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    if result.error is not None:
        raise result.error
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
