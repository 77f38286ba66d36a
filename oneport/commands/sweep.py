"""``oneport sweep``: the check over a grid of netlist parameters, a Monte Carlo run over
tolerances, or a list of measured devices — vectorised, chunked, optionally on Dask."""

from __future__ import annotations

import argparse
import sys
from typing import Any, TextIO

from ..errors import InputError
from ..units import parse_quantity
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
    from ..products.sweep.runner import run_sweep
    from ..products.sweep.summary import summarise, summary_dict
    from ..rendering.sweep_table import write_table
    from ..rendering.sweep_text import render
    from .outcome import exit_code

    setup = _setup(arguments)
    plan = _plan(arguments, setup)
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
    summary = summarise(result, setup["source"], setup["dc_sign"])
    table_path = None
    if arguments.output and result.completed:
        table_path = str(write_table(result.table, arguments.output))
    if arguments.plot and result.completed:
        from ..rendering.figures import save_figure
        from ..rendering.sweep_plots import plot_sweep

        save_figure(plot_sweep(result, summary=summary), arguments.plot)
    if arguments.json:
        data = summary_dict(result, summary, setup["inputs"], table_path)
        data["warnings"] = [finding.to_dict() for finding in setup["warnings"]]
        write_json(data, out)
    else:
        out.write(render(result, summary, table_path, arguments.quiet, setup["warnings"]))
    return exit_code(summary.verdict, interrupted=result.interrupted)


def _setup(arguments: argparse.Namespace) -> dict[str, Any]:
    """The sweep's source, built by the one preparation the single check uses."""
    from ..circuit import is_circuit_path
    from ..products.sweep.sources import prepare_sweep

    both_netlists = is_circuit_path(arguments.devices[0]) and is_circuit_path(arguments.load)
    prepared = prepare_sweep(
        arguments.devices,
        arguments.load,
        measurement_impedance_ohm=_resistance(
            arguments.reference_impedance, "--reference-impedance"
        ),
        device_dc_resistance_ohm=_resistance(
            arguments.device_dc_resistance, "--device-dc-resistance"
        ),
        load_dc_resistance_ohm=_resistance(arguments.load_dc_resistance, "--load-dc-resistance"),
        frequency_hz=grid_from_options(arguments, required=both_netlists),
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
    from ..products.sweep.plan import grid_plan, monte_carlo_plan, parse_tolerance, parse_vary
    from ..products.sweep.sources import DEVICE_INDEX

    known = {name.lower(): name for name in setup["parameters"]}
    if arguments.vary and arguments.tolerance:
        raise InputError("sweep: give --vary (a grid) or --tolerance (Monte Carlo), not both")
    specifications = [parse_vary(text) for text in arguments.vary]
    tolerances = [parse_tolerance(text) for text in arguments.tolerance]
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


def _resistance(text: str | None, option: str) -> float | None:
    return None if text is None else parse_quantity(text, "resistance", option=option)


def _progress(total: int) -> tuple[Any, Any]:
    if not sys.stderr.isatty():
        return None, lambda: None
    from tqdm import tqdm

    bar = tqdm(total=total, unit="variant", file=sys.stderr)
    return bar.update, bar.close
