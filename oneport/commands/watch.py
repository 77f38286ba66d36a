"""``oneport watch``: check each device file dropped into a folder against one load."""

from __future__ import annotations

import argparse
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any, TextIO

from ..errors import printable
from . import options

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
    interval_s: float,
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
    from ..products.watch import FolderWatcher, run_watch

    _read_load(load)
    watcher = FolderWatcher(folder, interval_s, ignore=(load,))
    reports = _report_folder(report_dir)
    print(
        f"watching {printable(str(watcher.folder))} every {interval_s:g} s against"
        f" {printable(str(load))} (Ctrl-C stops)",
        file=out,
        flush=True,
    )

    def handle(path: Path) -> None:
        _check_and_print(path, load, watcher.version(path), reports, out)

    run_watch(watcher, handle, clock=clock, sleep=sleep, max_polls=max_polls)
    return 0


def _read_load(load: str | Path) -> None:
    """Read the load once, so a bad load stops the watch before it starts."""
    from ..reading.files import is_netlist_path

    if is_netlist_path(load):
        from ..circuit import read_circuit

        read_circuit(load)
    else:
        from ..reading.touchstone import read_one_port

        read_one_port(load)


def _report_folder(report_dir: str | Path | None) -> Path | None:
    """The report folder, made if missing and checked before the watch starts."""
    if report_dir is None:
        return None
    from ..rendering.files import check_folder

    return check_folder(report_dir, "--report-dir")


def _check_and_print(
    path: Path, load: str | Path, version: Any, reports: Path | None, out: TextIO
) -> None:
    from ..errors import OneportError
    from ..products.watch import check_file
    from ..rendering.check_text import verdict_line

    outcome = check_file(path, load, version)
    name = printable(path.name)
    if outcome.waiting is not None:
        print(f"{name}: waiting: {outcome.waiting}", file=out, flush=True)
        return
    if outcome.error is not None:
        print(f"oneport: {printable(outcome.error)}", file=out, flush=True)
        return
    if outcome.result is None:
        return  # it changed while it was read: it is handed out again once it is still
    print(f"{name}: {verdict_line(outcome.result)}", file=out, flush=True)
    if reports is not None:
        from ..rendering.files import check_targets
        from ..rendering.report import write_report

        try:
            target = check_targets({"--report-dir": reports / f"{path.name}.html"}, [path, load])
            write_report(outcome.result, target["--report-dir"])
        except OneportError as error:
            print(f"oneport: {printable(str(error))}", file=out, flush=True)
