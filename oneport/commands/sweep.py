"""``oneport sweep``: the check over a grid of netlist parameters, a Monte Carlo run over
tolerances, or a list of measured devices — vectorised, chunked, optionally on Dask."""

from __future__ import annotations

import argparse
import sys
from typing import Any, TextIO

from ..errors import InputError
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
    from ..products.sweep.runner import run_sweep
    from ..products.sweep.summary import summarise, summary_dict
    from ..rendering.sweep_table import write_table
    from ..rendering.sweep_text import render
    from .outcome import exit_code

    targets = options.outputs(
        {"--output": arguments.output, "--plot": arguments.plot},
        [*arguments.devices, arguments.load],
    )
    setup = _setup(arguments)
    plan = _plan(arguments, setup)
    _refuse_long_csv(targets.get("--output"), plan.variants)
    progress, close = _progress(plan.variants)
    try:
        result = run_sweep(
            plan,
            setup["source"],
            setup["frequency_hz"],
            setup["z0"],
            dc_sign=setup["dc_sign"],
            chunk_size=arguments.chunk_size,
            scheduler=arguments.scheduler,
            workers=arguments.workers,
            threads=arguments.threads,
            progress=progress,
        )
    finally:
        close()
    summary = summarise(result)
    table_path = None
    if "--output" in targets and result.completed:
        table_path = str(write_table(result.table, targets["--output"], result.plan.variants))
    if "--plot" in targets and result.completed:
        from ..rendering.figures import save_figure
        from ..rendering.sweep_plots import plot_sweep

        save_figure(plot_sweep(result), targets["--plot"])
    if arguments.json:
        data = summary_dict(result, summary, setup["inputs"], table_path)
        data["warnings"] = [finding.to_dict() for finding in setup["warnings"]]
        write_json(data, out)
    else:
        out.write(render(result, summary, table_path, arguments.quiet, setup["warnings"]))
    if result.error is not None:
        raise result.error
    return exit_code(summary.verdict, interrupted=result.interrupted)


def _setup(arguments: argparse.Namespace) -> dict[str, Any]:
    """The sweep's source, built by the one preparation the single check uses."""
    from ..circuit import is_circuit_path
    from ..products.sweep.sources import prepare_sweep

    both_netlists = is_circuit_path(arguments.devices[0]) and is_circuit_path(arguments.load)
    data = arguments.load if is_circuit_path(arguments.devices[0]) else arguments.devices[0]
    prepared = prepare_sweep(
        arguments.devices,
        arguments.load,
        measurement_impedance_ohm=arguments.reference_impedance,
        device_dc_resistance_ohm=arguments.device_dc_resistance,
        load_dc_resistance_ohm=arguments.load_dc_resistance,
        frequency_hz=options.grid(
            arguments, netlists=both_netlists, required=both_netlists, data=data
        ),
    )
    return {
        "source": prepared.source,
        "frequency_hz": prepared.source.frequency_hz,
        "z0": prepared.source.reference_impedance_ohm,
        "dc_sign": None,
        "devices": prepared.devices,
        "inputs": prepared.inputs,
        "warnings": list(prepared.warnings),
        "parameters": prepared.parameters,
    }


def _plan(arguments: argparse.Namespace, setup: dict[str, Any]) -> Any:
    from ..products.sweep.plan import grid_plan, monte_carlo_plan
    from ..products.sweep.sources import DEVICE_INDEX

    known = {name.lower(): name for name in setup["parameters"]}
    if arguments.vary and arguments.tolerance:
        raise InputError("sweep: give --vary (a grid) or --tolerance (Monte Carlo), not both")
    specifications = list(arguments.vary)
    tolerances = list(arguments.tolerance)
    for name in [s[0] for s in specifications] + [t[0] for t in tolerances]:
        if name.lower() not in known:
            listed = ", ".join(setup["parameters"]) or "none (no netlist parameters)"
            raise InputError(f"sweep: no netlist parameter {name!r} (known: {listed})")
    specifications = [(known[s[0].lower()], *s[1:]) for s in specifications]
    tolerances = [(known[t[0].lower()], t[1]) for t in tolerances]
    if setup["devices"] > 1:
        specifications.insert(0, (DEVICE_INDEX, 0.0, setup["devices"] - 1.0, setup["devices"]))
        if tolerances:
            raise InputError("sweep: Monte Carlo over a list of device files is not supported")
    if tolerances:
        return monte_carlo_plan(
            tolerances,
            setup["parameters"],
            arguments.samples,
            arguments.seed,
            arguments.distribution,
        )
    if not specifications:
        raise InputError(
            "sweep: nothing to vary: give --vary, --tolerance, or several device files"
        )
    return grid_plan(specifications, [known.get(n.lower(), n) for n in arguments.log])


def _refuse_long_csv(target: Any, variants: int) -> None:
    """A CSV table of more rows than the CSV limit is refused before the run, not after."""
    from ..rendering.sweep_table import CSV_ROW_LIMIT

    if target is not None and target.suffix.lower() == ".csv" and variants > CSV_ROW_LIMIT:
        raise InputError(
            f"--output {target}: {variants:,} variants is too many rows for CSV (limit"
            f" {CSV_ROW_LIMIT:,}); write a .parquet table"
        )


def _progress(total: int) -> tuple[Any, Any]:
    if not sys.stderr.isatty():
        return None, lambda: None
    from tqdm import tqdm

    bar = tqdm(total=total, unit="variant", file=sys.stderr)
    return bar.update, bar.close
