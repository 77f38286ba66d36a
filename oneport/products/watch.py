"""Watching a folder for device files: which files are ready to check, and checking them.

A file is never judged while it is still being written. It is *still* once its size and
modification time have stayed the same over two whole polling intervals (measured on the
watcher's own clock, not from the file's time stamp, so clock skew between machines sharing a
folder does not matter); each still version is handed out once, and a file that changes again
is handed out again once it is still again. A still file is then *complete* only when its last
line has ended (a newline: Touchstone data lines end with one) or, for a 2.x file, when it
parses with its ``[Number of Frequencies]`` met, and it reads without error; a 2.x file that
holds fewer points than it declares, or a file whose last line has not ended, is reported as
*waiting*, never with a verdict. The bytes checked are the bytes judged complete (read once).

What no watcher can tell: a 1.x file whose writer pauses, after a complete line, for longer
than two intervals looks finished. Writers should save under a hidden name (``.name.s1p``)
or another suffix and rename when done, or the interval should exceed their longest pause.

:func:`watch` (``oneport.watch``) is the product: it checks a folder once, or polls it a given
number of times (the command: until Ctrl-C), hands each outcome to a callback as it comes, and
returns a frozen :class:`WatchResult`. This room polls and checks; it never prints or exits; the
HTML reports it is asked for are drawn by :mod:`oneport.rendering.report`. The clock and the
sleep are injectable so tests run without waiting, and :func:`run_watch` takes ``max_polls`` to
stop.
"""

from __future__ import annotations

import math
import os
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..display import Displayed
from ..errors import FileFormatError, InputError, OneportError, printable

if TYPE_CHECKING:
    from ..analysis.result import CheckResult

#: Suffixes of the Touchstone files the watcher picks up (compared case-insensitively).
WATCHED_SUFFIXES = (".s1p", ".ts")
#: Default polling interval, s.
DEFAULT_INTERVAL_S = 1.0
#: The shortest and longest polling intervals accepted, s (a shorter one only burns a core).
MINIMUM_INTERVAL_S = 0.05
MAXIMUM_INTERVAL_S = 3600.0
#: How many whole intervals a file's size and time stamp must stay the same.
STILL_INTERVALS = 2


@dataclass(frozen=True)
class FileVersion:
    """What identifies one version of a file: its size (bytes) and mtime (ns)."""

    size: int
    modified_ns: int


@dataclass
class _Tracked:
    version: FileVersion
    unchanged_since: float
    handed_out: FileVersion | None = None


@dataclass(frozen=True)
class WatchOutcome:
    """What became of one still file: a result, an error, or why it is still awaited.

    Exactly one of ``result``, ``error`` and ``waiting`` is set, except for a file that changed
    while it was read (all three None): it is handed out again once it is still. ``report`` is
    the HTML report written for a result, ``report_error`` why it could not be.
    """

    path: Path
    result: CheckResult | None
    error: str | None
    waiting: str | None = None
    report: Path | None = None
    report_error: str | None = None


@dataclass(frozen=True, repr=False)
class WatchResult(Displayed):
    """What a watch saw: the folder, the load, and each file's outcome in the order they came.

    ``outcomes`` is empty when they were handed to a callback instead (a long watch keeps
    nothing); ``polls`` is 0 for a single look.
    """

    folder: Path
    load: str
    interval_s: float
    polls: int
    outcomes: tuple[WatchOutcome, ...]

    def plot(self, ax: Any = None) -> Any:
        """Each checked file's closest approach to +1, coloured by its verdict.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ..rendering.watch_plot import plot_watch

        return plot_watch(self, ax)

    @property
    def cautions(self) -> tuple[str, ...]:
        """The safety cautions every check ends with."""
        from ..cautions import CAUTIONS

        return CAUTIONS

    @property
    def results(self) -> tuple[CheckResult, ...]:
        """The checks made, in order."""
        return tuple(o.result for o in self.outcomes if o.result is not None)

    @property
    def verdict(self) -> str:
        """The worst verdict among the files checked: ``unstable`` before ``inconclusive`` before
        ``stable``; ``inconclusive`` when nothing could be checked."""
        verdicts = {result.verdict for result in self.results}
        for word in ("unstable", "inconclusive"):
            if word in verdicts:
                return word
        return "stable" if verdicts else "inconclusive"


class FolderWatcher:
    """Tell which Touchstone files in a folder are new or changed, and have stopped changing.

    Parameters
    ----------
    folder : str or Path
        The folder to watch (not its subfolders).
    interval_s : float
        The time between polls, s, from 0.05 s to 1 h; a file's size and mtime must stay
        unchanged over two of them before it is handed out.
    ignore : iterable of path, optional
        Files never handed out (the load, when it lives in the watched folder).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> _ = (folder / "a.s1p").write_text("# GHz S RI R 50\\n1 0.5 0\\n")
    >>> watcher = FolderWatcher(folder, interval_s=1.0)
    >>> watcher.poll(now=0.0)  # seen for the first time: not yet known to be still
    []
    >>> watcher.poll(now=1.0)  # still for one interval only
    []
    >>> [path.name for path in watcher.poll(now=2.0)]
    ['a.s1p']
    >>> watcher.poll(now=3.0)  # unchanged: handed out once only
    []
    """

    def __init__(
        self,
        folder: str | Path,
        interval_s: float = DEFAULT_INTERVAL_S,
        ignore: tuple[str | Path, ...] = (),
    ) -> None:
        self.folder = Path(folder)
        if not self.folder.is_dir():
            raise InputError(
                f"{printable(str(self.folder))}: no such folder; give the folder to watch"
            )
        from .options import interval

        self.interval_s = interval(interval_s, "--interval")
        self._ignored = {os.path.realpath(path) for path in ignore}
        self._tracked: dict[Path, _Tracked] = {}

    def poll(self, now: float) -> list[Path]:
        """Look at the folder at time ``now`` (s, any monotonic clock); return the ready files.

        Files are returned in name order. A file that disappears is forgotten, so a file
        created again under the same name counts as new.
        """
        seen = self._scan()
        for path in set(self._tracked) - set(seen):
            del self._tracked[path]
        ready = []
        for path, version in sorted(seen.items()):
            tracked = self._tracked.get(path)
            if tracked is None or tracked.version != version:
                handed_out = tracked.handed_out if tracked else None
                self._tracked[path] = _Tracked(version, now, handed_out)
                continue
            still = now - tracked.unchanged_since >= STILL_INTERVALS * self.interval_s
            if still and tracked.handed_out != version:
                tracked.handed_out = version
                ready.append(path)
        return ready

    def present(self) -> list[Path]:
        """The watched files in the folder now, in name order (a single look: no waiting)."""
        return sorted(self._scan())

    def version(self, path: Path) -> FileVersion | None:
        """The version of ``path`` last seen (None for a file not tracked)."""
        tracked = self._tracked.get(path)
        return tracked.version if tracked else None

    def _scan(self) -> dict[Path, FileVersion]:
        """Current versions of the watched files (entries that vanish meanwhile are skipped)."""
        versions = {}
        try:
            entries = list(os.scandir(self.folder))
        except OSError as error:
            raise InputError(
                f"{printable(str(self.folder))}: cannot be read ({error.strerror})"
            ) from None
        for entry in entries:
            if not _is_watched_name(entry.name):
                continue
            try:
                if not entry.is_file():
                    continue
                status = entry.stat()
            except OSError:
                continue
            path = Path(entry.path)
            if os.path.realpath(path) in self._ignored:
                continue
            versions[path] = FileVersion(status.st_size, status.st_mtime_ns)
        return versions


def _is_watched_name(name: str) -> bool:
    """Touchstone suffixes only; hidden files (editors' and our own temporaries) are skipped."""
    return not name.startswith(".") and name.lower().endswith(WATCHED_SUFFIXES)


def check_file(
    device_path: Path, load_path: str | Path, expected: FileVersion | None = None
) -> WatchOutcome:
    """Check one still device file against the load, if it is complete.

    The file is read once: the bytes judged complete are the bytes checked. A file that is empty
    so far, whose last line has not ended (unless a 2.x file meets its ``[Number of
    Frequencies]``), or that holds fewer points than it declares, is *waiting*; a file that
    cannot be read or checked gives ``error``; a complete one gives ``result``. With
    ``expected`` (the still version), a file whose size changed since is left for the next poll.
    """
    from ..reading.files import read_user_bytes
    from ..reading.touchstone import IncompleteFileError, parse_one_port
    from .check import check

    try:
        raw = read_user_bytes(device_path, "a Touchstone file")
    except OneportError as error:
        return WatchOutcome(device_path, None, str(error))
    if expected is not None and len(raw) != expected.size:
        return WatchOutcome(device_path, None, None)  # it changed again: seen at the next poll
    if not raw.strip():
        return WatchOutcome(device_path, None, None, "it is empty so far")
    line_ended = raw.rstrip(b" \t").endswith(b"\n")
    try:
        port = parse_one_port(raw, str(device_path))
    except IncompleteFileError as error:
        return WatchOutcome(device_path, None, None, f"{error.problem} so far")
    except FileFormatError as error:
        if not line_ended:
            return WatchOutcome(device_path, None, None, _UNENDED)
        return WatchOutcome(device_path, None, str(error))
    if not line_ended and port.declared_frequencies is None:
        return WatchOutcome(device_path, None, None, _UNENDED)
    try:
        return WatchOutcome(device_path, check(port, load_path), None)
    except OneportError as error:
        return WatchOutcome(device_path, None, str(error))


_UNENDED = (
    "its last line has not ended (Touchstone data lines end with a line break), so it may"
    " still be being written; it is checked once it is complete"
)


def run_watch(
    watcher: FolderWatcher,
    handle: Callable[[Path], None],
    *,
    clock: Callable[[], float] = time.monotonic,
    sleep: Callable[[float], None] = time.sleep,
    max_polls: int | None = None,
) -> int:
    """Poll ``watcher`` every interval and call ``handle`` on each ready file.

    Runs until ``max_polls`` polls have been made (forever when None) or ``KeyboardInterrupt``,
    which is left to the caller. The sleep after a poll is shortened by the time ``handle``
    took, so polls stay about one interval apart, but never below the shortest interval, so the
    loop never spins a core.

    Returns
    -------
    int
        The number of polls made.
    """
    polls = 0
    while max_polls is None or polls < max_polls:
        started = clock()
        for path in watcher.poll(started):
            handle(path)
        polls += 1
        if max_polls is not None and polls >= max_polls:
            break
        sleep(max(MINIMUM_INTERVAL_S, watcher.interval_s - (clock() - started)))
    return polls


def watch(
    folder: str | Path,
    load: str | Path,
    *,
    polls: int | float | None = None,
    interval_s: float | str = DEFAULT_INTERVAL_S,
    report_dir: str | Path | None = None,
    on_outcome: Callable[[WatchOutcome], Any] | None = None,
    on_start: Callable[[FolderWatcher], Any] | None = None,
    clock: Callable[[], float] = time.monotonic,
    sleep: Callable[[float], None] = time.sleep,
) -> WatchResult:
    """Check the Touchstone files of ``folder`` against ``load``, once or as they arrive.

    Parameters
    ----------
    folder : str or Path
        Where the device files are (``.s1p``, ``.ts``; hidden files and the load are skipped).
    load : str or Path
        The load: a Touchstone one-port or a netlist, read once first (a bad load fails at once).
    polls : int, float('inf') or None
        None (default): one look now; every complete file there is checked (one whose last line
        has not ended, or a 2.x file short of its points, is *waiting*). A number: poll that
        many times, ``interval_s`` apart, and check each file once it has stayed unchanged for
        two intervals (``oneport watch``: ``inf``, until Ctrl-C).
    interval_s : float or str
        The polling interval, s or text (``"1s"``, ``"200ms"``), 50 ms to 1 h.
    report_dir : str or Path, optional
        Write an HTML report per checked file there, named ``<file>.html`` (made if missing).
    on_outcome : callable, optional
        Called with each :class:`WatchOutcome` as it comes; the result then keeps none (so a
        long watch holds no memory).
    on_start : callable, optional
        Called with the :class:`FolderWatcher` once the folder, interval and load are accepted.
    clock, sleep
        Injectable for tests.

    Returns
    -------
    WatchResult

    Examples
    --------
    >>> import oneport
    >>> seen = oneport.watch("touchstone_examples/stable", "touchstone_examples/stable/load.s1p")
    >>> [(o.path.name, o.result.verdict) for o in seen.outcomes]
    [('device.s1p', 'stable')]
    """
    from .options import interval

    seconds = interval(interval_s, "--interval")
    if polls is not None and (
        isinstance(polls, bool) or not isinstance(polls, int | float) or not polls >= 1
    ):
        raise InputError(f"polls {polls!r}: give a number of polls, 1 or more, or None")
    watcher = FolderWatcher(folder, seconds, ignore=(load,))
    _read_load(load)
    reports = _report_folder(report_dir)  # made and checked before the watch starts
    if on_start is not None:
        on_start(watcher)
    kept: list[WatchOutcome] = []

    def handle(path: Path, version: FileVersion | None) -> None:
        outcome = _with_report(check_file(path, load, version), reports, load)
        if on_outcome is not None:
            on_outcome(outcome)
        else:
            kept.append(outcome)

    made = 0
    if polls is None:
        for path in watcher.present():
            handle(path, None)
    else:
        limit = None if math.isinf(polls) else int(polls)
        made = run_watch(
            watcher,
            lambda path: handle(path, watcher.version(path)),
            clock=clock,
            sleep=sleep,
            max_polls=limit,
        )
    return WatchResult(watcher.folder, str(load), seconds, made, tuple(kept))


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
    """The report folder, made if missing and checked (never a system folder, writable)."""
    if report_dir is None:
        return None
    from ..rendering.files import check_folder

    return check_folder(report_dir, "--report-dir")


def _with_report(outcome: WatchOutcome, reports: Path | None, load: str | Path) -> WatchOutcome:
    """The outcome with its HTML report written, when reports are asked for: checked first
    (never the checked file or the load, never a special file), written whole."""
    if reports is None or outcome.result is None:
        return outcome
    from dataclasses import replace

    from ..rendering.report import write_report
    from .options import output_targets

    try:
        target = output_targets(
            {"--report-dir": reports / f"{outcome.path.name}.html"}, [outcome.path, load]
        )
        written = write_report(outcome.result, target["--report-dir"])
    except OneportError as error:
        return replace(outcome, report_error=str(error))
    return replace(outcome, report=written)
