"""Options and output shared by the subcommands."""

from __future__ import annotations

import argparse
import json
from typing import Any, TextIO


def add_output_options(command: argparse.ArgumentParser) -> None:
    """``--json``, ``--quiet``, ``--include-arrays`` and ``--traceback``."""
    output = command.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print one JSON object")
    output.add_argument("--quiet", "-q", action="store_true", help="print the verdict line only")
    command.add_argument(
        "--include-arrays", action="store_true", help="with --json: add the per-frequency arrays"
    )
    command.add_argument(
        "--traceback", action="store_true", help="show Python tracebacks for errors (debugging)"
    )


def write_json(data: dict[str, Any], out: TextIO) -> None:
    """One JSON object on ``out``."""
    json.dump(data, out, indent=2, allow_nan=False)
    out.write("\n")


def add_grid_options(command: argparse.ArgumentParser, title: str) -> None:
    """``--start``, ``--stop``, ``--points``, ``--spacing`` for a grid of the user's choosing."""
    grid = command.add_argument_group(title)
    grid.add_argument("--start", metavar="FREQUENCY", help="e.g. 1MHz")
    grid.add_argument("--stop", metavar="FREQUENCY", help="e.g. 6GHz")
    grid.add_argument("--points", type=int, default=2001, help="default 2001")
    grid.add_argument("--spacing", choices=("linear", "log"), default="linear")


def grid_from_options(arguments: argparse.Namespace, required: bool) -> Any:
    """The grid the grid options describe, Hz; None when neither end is given and not required."""
    if arguments.start is None and arguments.stop is None and not required:
        return None
    if arguments.start is None or arguments.stop is None:
        from ..errors import InputError

        raise InputError("give both --start and --stop (e.g. 1MHz and 6GHz)")
    from ..circuit.export import frequency_grid
    from ..units import parse_quantity

    return frequency_grid(
        parse_quantity(arguments.start, "frequency", option="--start"),
        parse_quantity(arguments.stop, "frequency", option="--stop"),
        arguments.points,
        arguments.spacing,
    )
