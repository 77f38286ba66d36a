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
