"""Watching a folder for device files: which files are ready to check, and checking them.

A file is *ready* once its size and modification time have stayed the same over one whole
polling interval (measured on the watcher's own clock, not from the file's time stamp, so
clock skew between machines sharing a folder does not matter). Each version of a file is
handed out once; a file that changes again is handed out again once it is still again.

This room polls and checks; it never prints, writes reports or exits. The clock and the sleep
are injectable so tests run without waiting, and :func:`run_watch` takes ``max_polls`` to stop.
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from ..errors import InputError, OneportError

if TYPE_CHECKING:
    from ..analysis.result import CheckResult

#: Suffixes of the Touchstone files the watcher picks up (compared case-insensitively).
WATCHED_SUFFIXES = (".s1p", ".ts")
#: Default polling interval, s.
DEFAULT_INTERVAL_S = 1.0


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
    """The check of one ready file: a result, or the one-line reason it could not be checked."""

    path: Path
    result: CheckResult | None
    error: str | None


class FolderWatcher:
    """Tell which Touchstone files in a folder are new or changed, and have stopped changing.

    Parameters
    ----------
    folder : str or Path
        The folder to watch (not its subfolders).
    interval_s : float
        How long, s, a file's size and mtime must stay unchanged before it is ready; also the
        intended time between polls.
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
    >>> [path.name for path in watcher.poll(now=1.0)]
    ['a.s1p']
    >>> watcher.poll(now=2.0)  # unchanged: handed out once only
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
            raise InputError(f"{self.folder}: no such folder; give the folder to watch")
        if not interval_s > 0.0:
            raise InputError(f"--interval: must be a positive time, was {interval_s:g} s")
        self.interval_s = float(interval_s)
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
            still_long_enough = now - tracked.unchanged_since >= self.interval_s
            if still_long_enough and tracked.handed_out != version:
                tracked.handed_out = version
                ready.append(path)
        return ready

    def _scan(self) -> dict[Path, FileVersion]:
        """Current versions of the watched files (entries that vanish meanwhile are skipped)."""
        versions = {}
        try:
            entries = list(os.scandir(self.folder))
        except OSError as error:
            raise InputError(f"{self.folder}: cannot be read ({error.strerror})") from None
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


def check_file(device_path: Path, load_path: str | Path) -> WatchOutcome:
    """Check one ready device file against the load; a user error becomes ``error``."""
    from .check import check

    try:
        return WatchOutcome(device_path, check(device_path, load_path), None)
    except OneportError as error:
        return WatchOutcome(device_path, None, str(error))


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
    took, so polls stay about one interval apart.

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
        sleep(max(0.0, watcher.interval_s - (clock() - started)))
    return polls
