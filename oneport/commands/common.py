"""Options and output shared by the subcommands."""

from __future__ import annotations

import argparse
from typing import Any, TextIO


def add_output_options(
    command: argparse.ArgumentParser,
    *,
    quiet_help: str = "print the verdict line only",
    json_help: str = "print one JSON object",
    arrays: bool = True,
) -> None:
    """``--json``, ``--quiet``, ``--traceback`` and (with ``arrays``) ``--include-arrays``."""
    output = command.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help=json_help)
    output.add_argument("--quiet", "-q", action="store_true", help=quiet_help)
    if arrays:
        command.add_argument(
            "--include-arrays",
            action="store_true",
            help="with --json: add the per-frequency arrays",
        )
    command.add_argument(
        "--traceback", action="store_true", help="show Python tracebacks for errors (debugging)"
    )


def write_json(data: dict[str, Any], out: TextIO) -> None:
    """One JSON object on ``out``."""
    import json

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
    from ..products.options import frequency_grid

    return frequency_grid(arguments.start, arguments.stop, arguments.points, arguments.spacing)


def add_measurement_impedance_option(command: argparse.ArgumentParser) -> None:
    """``--measurement-impedance OHMS``: what the device was really measured in."""
    command.add_argument(
        "--measurement-impedance",
        metavar="OHMS",
        help="impedance the device was measured in, if its file was renormalised afterwards"
        " (e.g. 50ohm); default: the device file's reference",
    )
