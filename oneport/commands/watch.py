"""``oneport watch``: check each device file dropped into a folder against one load."""

from __future__ import annotations

import argparse
import math
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any, TextIO

from . import options
from .outcome import ExitCode

NAME = "watch"


def add_parser(commands: Any) -> argparse.ArgumentParser:
    """Register ``watch`` and its options."""
    command: argparse.ArgumentParser = commands.add_parser(
        NAME,
        help="check every new or changed device file in a folder against one load",
        description="Watch FOLDER and check each new or changed Touchstone file (.s1p, .ts)"
        " against the load, once its size and time stamp have stayed the same for two polling"
        " intervals and its last line is complete. Prints one verdict line per file (or"
        " 'waiting' for a file that is not complete yet); stop with Ctrl-C (exit code 130).",
        epilog="example: oneport watch bench/ --load bias_tee.s1p --report-dir reports/",
    )
    options.add(
        command, "folder", rule=options.folder, help="the folder the device files arrive in"
    )
    options.add(
        command,
        "--load",
        rule=options.input_path,
        required=True,
        help="the load: a Touchstone one-port or a netlist (.cir)",
    )
    options.add(
        command,
        "--report-dir",
        rule=options.folder,
        metavar="DIR",
        help="write an HTML report per file into DIR (made if missing), named <file>.html",
    )
    options.add(
        command,
        "--interval",
        rule=options.interval,
        metavar="SECONDS",
        default=1.0,
        help="polling interval, 50ms to 1h (default 1s); a file must stay unchanged for two",
    )
    command.add_argument(
        "--traceback", action="store_true", help="show Python tracebacks for errors (debugging)"
    )
    return command


def run(arguments: argparse.Namespace, out: TextIO) -> int:
    """Watch until interrupted; Ctrl-C reaches the CLI, which exits with 130."""
    return watch_folder(
        arguments.folder, arguments.load, arguments.report_dir, arguments.interval, out
    )


def watch_folder(
    folder: str | Path,
    load: str | Path,
    report_dir: str | Path | None,
    interval_s: float | str,
    out: TextIO,
    *,
    clock: Callable[[], float] = time.monotonic,
    sleep: Callable[[float], None] = time.sleep,
    max_polls: int | None = None,
) -> int:
    """Watch ``folder``, print a line per checked file; return 0 when ``max_polls`` ran out.

    The load is read once first, so a bad load stops the command at once (exit 2); after that,
    a file that cannot be checked prints ``oneport: <error>``, a file not complete yet prints
    ``<name>: waiting: <why>``, and the watch goes on.
    """
    from ..products.watch import watch
    from ..rendering.watch_text import outcome_lines, start_line

    def started(watcher: Any) -> None:
        print(start_line(watcher.folder, watcher.interval_s, load), file=out, flush=True)

    def handle(outcome: Any) -> None:
        for line in outcome_lines(outcome):
            print(line, file=out, flush=True)

    watch(
        folder,
        load,
        polls=math.inf if max_polls is None else max_polls,
        interval_s=interval_s,
        report_dir=report_dir,
        on_outcome=handle,
        on_start=started,
        clock=clock,
        sleep=sleep,
    )
    return int(ExitCode.HOLDS)
