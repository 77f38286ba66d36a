"""The command line: parse options, run one subcommand, choose the exit code.

The only room that prints or exits. Expected errors (bad files, bad options) become one line on
stderr and exit code 2; a traceback appears only for a bug (exit 1) or with ``--traceback``.
Each subcommand lives in ``oneport/commands/<name>.py``.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from types import ModuleType
from typing import NoReturn, TextIO

from .commands.common import NonFiniteJSONError
from .commands.outcome import ExitCode
from .errors import OneportError, printable


class _UsageError(Exception):
    pass


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors as one line and exit code 2, and reads a negative
    quantity after a space as the value of the option before it (``--device-delay -12ps``)."""

    def parse_known_args(  # type: ignore[override]
        self, args: Sequence[str] | None = None, namespace: argparse.Namespace | None = None
    ) -> tuple[argparse.Namespace, list[str]]:
        from .commands.options import join_negative_values

        given = list(sys.argv[1:] if args is None else args)
        return super().parse_known_args(join_negative_values(given, self._takes_value), namespace)

    def _takes_value(self, token: str) -> bool:
        """Whether ``token`` is one of this parser's options that takes exactly one value."""
        actions = self._option_string_actions
        action = actions.get(token)
        if action is None and token.startswith("--") and self.allow_abbrev:
            matches = {a for option, a in actions.items() if option.startswith(token)}
            action = matches.pop() if len(matches) == 1 else None
        return action is not None and action.nargs is None

    def error(self, message: str) -> NoReturn:
        raise _UsageError(f"{self.prog}: {message}{_hint(message)} (see --help)")


def _hint(message: str) -> str:
    """A hint for the slips argparse words least helpfully, naming the option concerned."""
    if message.startswith("unrecognized arguments:"):
        extra = message.split(":", 1)[1].split()
        if extra and extra[0].isalpha() and len(extra[0]) <= 4:
            return f"; write the unit next to the number (15{extra[0]}, not 15 {extra[0]})"
    if message.endswith("expected one argument"):
        option = message.removeprefix("argument ").split(":", 1)[0].split("/")[-1]
        return f"; give its value after it, e.g. {option} VALUE (or {option}=VALUE)"
    return ""


def build_parser(
    argv: Sequence[str] | None = None,
) -> tuple[argparse.ArgumentParser, dict[str, ModuleType]]:
    """The ``oneport`` parser and the subcommand modules by name.

    When ``argv`` starts with a subcommand's name, only that subcommand is registered (a quick
    command loads none of the others); otherwise all are, for ``--help`` and usage errors.
    """
    from .commands import COMMAND_MODULES, load_commands

    chosen: tuple[str, ...] = COMMAND_MODULES
    if argv and argv[0] in COMMAND_MODULES:
        chosen = (argv[0],)

    parser = _Parser(
        prog="oneport",
        description="Check whether a negative-resistance one-port oscillates into a load.",
    )
    parser.add_argument("--version", action="store_true", help="print the version and stop")
    subparsers = parser.add_subparsers(dest="command", parser_class=_Parser)
    modules = {}
    for module in load_commands(chosen):
        module.add_parser(subparsers)
        modules[module.NAME] = module
    return parser, modules


def _silence_stdout() -> None:
    """Point stdout at /dev/null so the interpreter's final flush cannot fail again."""
    import os

    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
    except (OSError, ValueError):
        pass


def main(
    argv: Sequence[str] | None = None, stdout: TextIO | None = None, stderr: TextIO | None = None
) -> int:
    """Run the command line; return the exit code (streams injectable for tests)."""
    out = stdout or sys.stdout
    err = stderr or sys.stderr
    parser, modules = build_parser(sys.argv[1:] if argv is None else list(argv))
    arguments = None
    try:
        arguments = parser.parse_args(argv)
        # The words as typed, for reports that record their command line.
        arguments.argv = list(sys.argv[1:] if argv is None else argv)
        if arguments.version:
            from . import __version__

            print(f"oneport {__version__}", file=out)
            return ExitCode.HOLDS
        if arguments.command is None:
            parser.print_help(out)
            return ExitCode.BAD_INPUT
        return int(modules[arguments.command].run(arguments, out))
    except _UsageError as error:
        print(printable(str(error)), file=err)
        return ExitCode.BAD_INPUT
    except OneportError as error:
        if arguments is not None and getattr(arguments, "traceback", False):
            raise
        # Paths inside messages may hold control characters: never let them reach the terminal.
        print(f"oneport: {printable(str(error))}", file=err)
        return ExitCode.BAD_INPUT
    except NonFiniteJSONError as error:
        if arguments is not None and getattr(arguments, "traceback", False):
            raise
        print(f"oneport: {error}", file=err)
        return ExitCode.INTERNAL_ERROR
    except KeyboardInterrupt:
        print("oneport: interrupted", file=err)
        return ExitCode.INTERRUPTED
    except BrokenPipeError:
        # The reader of our output went away (``oneport ... | head``): nothing left to say.
        _silence_stdout()
        return ExitCode.HOLDS
