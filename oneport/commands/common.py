"""Options and output shared by the subcommands: the output switches and the one JSON writer."""

from __future__ import annotations

import argparse
import json
import math
from collections.abc import Iterator
from typing import Any, TextIO

from . import options


class NonFiniteJSONError(RuntimeError):
    """A result held NaN or infinity where its JSON needs a number: a bug, never written.

    Strict JSON has no NaN or infinity; every legitimate figure that can be missing is
    ``null`` with a documented meaning. The CLI prints this as one line with exit code 1.
    """


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
    """One strict JSON object on ``out``, or nothing at all.

    Raises
    ------
    NonFiniteJSONError
        When ``data`` holds NaN or infinity (named by its place in the object); nothing is
        written then.
    """
    try:
        text = json.dumps(data, indent=2, allow_nan=False)
    except ValueError:
        where = next(_non_finite(data, "$"), "$")
        raise NonFiniteJSONError(
            f"internal error: the JSON would hold a non-finite number at {where}; nothing was"
            " written (please report this with the command line)"
        ) from None
    out.write(text + "\n")


def _non_finite(value: Any, where: str) -> Iterator[str]:
    """Places (``$.bands[0].peak_db``) of NaN or infinity in a JSON-like object."""
    if isinstance(value, float) and not math.isfinite(value):
        yield f"{where} ({value})"
    elif isinstance(value, dict):
        for key, item in value.items():
            yield from _non_finite(item, f"{where}.{key}")
    elif isinstance(value, list | tuple):
        for index, item in enumerate(value):
            yield from _non_finite(item, f"{where}[{index}]")


def add_measurement_impedance_option(command: argparse.ArgumentParser) -> None:
    """``--measurement-impedance OHMS``: what the device was really measured in."""
    options.add(
        command,
        "--measurement-impedance",
        rule=options.impedance,
        metavar="OHMS",
        help="impedance the device was measured in, if its file was renormalised afterwards"
        " (e.g. 50ohm); default: the device file's reference",
    )
