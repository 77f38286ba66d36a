"""One module per subcommand, each with ``add_parser(subparsers)`` and ``run(arguments, out)``.

``run`` parses the options, calls one product function and one renderer, and returns the exit
code of the verdict from :mod:`oneport.commands.outcome` (the one verdict → exit-code map). It may
raise ``OneportError`` for bad input, which the CLI turns into one line on stderr. Commands import
their heavy dependencies inside ``run`` so that ``oneport --help`` stays quick.
"""

from __future__ import annotations

from importlib import import_module
from types import ModuleType

#: Subcommand modules, in the order ``--help`` lists them.
COMMAND_MODULES = (
    "check",
    "watch",
    "export",
    "sweep",
    "oscillator",
    "poles",
    "amplifier",
    "terminations",
    "stabilise",
)


def load_commands(names: tuple[str, ...] = COMMAND_MODULES) -> list[ModuleType]:
    """The subcommand modules (all, or those ``names``)."""
    return [import_module(f"{__name__}.{name}") for name in names]
