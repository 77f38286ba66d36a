"""What ``oneport watch`` prints: a line when it starts, and lines per file as they are checked.

Rendering only: it formats the watcher's settings and each
:class:`~oneport.products.watch.WatchOutcome`, and computes nothing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..errors import printable

if TYPE_CHECKING:
    from pathlib import Path

    from ..products.watch import WatchOutcome


def start_line(folder: Path, interval_s: float, load: object) -> str:
    """The line printed once the watch begins."""
    return (
        f"watching {printable(str(folder))} every {interval_s:g} s against"
        f" {printable(str(load))} (Ctrl-C stops)"
    )


def outcome_lines(outcome: WatchOutcome) -> list[str]:
    """A file's lines: its verdict line, ``waiting: why``, or the error (none for a file that
    changed while it was read: it is checked again once it is still)."""
    from .check_text import verdict_line

    name = printable(outcome.path.name)
    if outcome.waiting is not None:
        return [f"{name}: waiting: {outcome.waiting}"]
    if outcome.error is not None:
        return [f"oneport: {printable(outcome.error)}"]
    if outcome.result is None:
        return []
    lines = [f"{name}: {verdict_line(outcome.result)}"]
    if outcome.report_error is not None:
        lines.append(f"oneport: {printable(outcome.report_error)}")
    return lines
