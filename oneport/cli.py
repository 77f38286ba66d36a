"""The command line: parse options, run one analysis, render, choose the exit code.

The only room that prints or exits. Expected errors (bad files, bad options) become one line on
stderr and exit code 2; a traceback appears only for a bug (exit 1) or with ``--traceback``.
"""

from __future__ import annotations

import argparse
import enum
import json
import sys
from collections.abc import Sequence
from typing import TextIO

from .errors import OneportError
from .units import parse_quantity


class ExitCode(enum.IntEnum):
    """Exit codes shared by every command (docs/conventions in CONVENTIONS.md)."""

    HOLDS = 0
    INTERNAL_ERROR = 1
    BAD_INPUT = 2
    FAILS = 3
    INCONCLUSIVE = 4
    INTERRUPTED = 130


_VERDICT_CODES = {
    "stable": ExitCode.HOLDS,
    "unstable": ExitCode.FAILS,
    "inconclusive": ExitCode.INCONCLUSIVE,
}


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as one line and exit code 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise _UsageError(f"{self.prog}: {message} (see --help)")


class _UsageError(Exception):
    pass


def build_parser() -> argparse.ArgumentParser:
    """The ``oneport`` argument parser with its subcommands."""
    parser = _Parser(
        prog="oneport",
        description="Check whether a negative-resistance one-port oscillates into a load.",
    )
    parser.add_argument("--version", action="store_true", help="print the version and stop")
    commands = parser.add_subparsers(dest="command", parser_class=_Parser)
    check = commands.add_parser(
        "check",
        help="small-signal stability of a device into a load (Nyquist test)",
        description="Small-signal stability of a device one-port into a load one-port: the"
        " Nyquist count of the loop gain L = gamma_device * gamma_load around +1.",
        epilog="example: oneport check diode.s1p --load bias_tee.s1p --json",
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    check.add_argument("device", help="the device's Touchstone one-port (.s1p or 2.x .ts)")
    check.add_argument("--load", required=True, help="the load's Touchstone one-port")
    check.add_argument(
        "--measurement-impedance",
        metavar="OHMS",
        help="impedance the device was measured in, if its file was renormalised afterwards"
        " (e.g. 50ohm); default: the device file's reference",
    )
    _add_output_options(check)
    return parser


def _add_output_options(command: argparse.ArgumentParser) -> None:
    output = command.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print one JSON object")
    output.add_argument("--quiet", "-q", action="store_true", help="print the verdict line only")
    command.add_argument(
        "--include-arrays", action="store_true", help="with --json: add the per-frequency arrays"
    )
    command.add_argument(
        "--traceback", action="store_true", help="show Python tracebacks for errors (debugging)"
    )


def main(
    argv: Sequence[str] | None = None, stdout: TextIO | None = None, stderr: TextIO | None = None
) -> int:
    """Run the command line; return the exit code (streams injectable for tests)."""
    out = stdout or sys.stdout
    err = stderr or sys.stderr
    parser = build_parser()
    arguments = None
    try:
        arguments = parser.parse_args(argv)
        if arguments.version:
            from . import __version__

            print(f"oneport {__version__}", file=out)
            return ExitCode.HOLDS
        if arguments.command is None:
            parser.print_help(out)
            return ExitCode.BAD_INPUT
        return _run_check(arguments, out)
    except _UsageError as error:
        print(str(error), file=err)
        return ExitCode.BAD_INPUT
    except OneportError as error:
        if arguments is not None and arguments.traceback:
            raise
        print(f"oneport: {error}", file=err)
        return ExitCode.BAD_INPUT
    except KeyboardInterrupt:
        print("oneport: interrupted", file=err)
        return ExitCode.INTERRUPTED


def _run_check(arguments: argparse.Namespace, out: TextIO) -> int:
    from .check import check
    from .text import render, verdict_line

    impedance = None
    if arguments.measurement_impedance is not None:
        impedance = parse_quantity(
            arguments.measurement_impedance, "resistance", option="--measurement-impedance"
        )
    result = check(arguments.device, arguments.load, measurement_impedance_ohm=impedance)
    if arguments.json:
        json.dump(result.to_dict(include_arrays=arguments.include_arrays), out, indent=2)
        out.write("\n")
    elif arguments.quiet:
        print(verdict_line(result), file=out)
    else:
        out.write(render(result))
    return _VERDICT_CODES[result.verdict]
