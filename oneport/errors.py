"""The package's exceptions.

Every error a user can cause derives from :class:`OneportError` and from the matching builtin,
so callers may catch either. Messages are one line: what was read (file, line, option), the bad
value, and what would be accepted. The CLI prints them as they are and exits with code 2.
"""

from __future__ import annotations


class OneportError(Exception):
    """Base class of every error the package raises on purpose."""


class InputError(OneportError, ValueError):
    """A file, option or argument that cannot be used as given."""


class FileFormatError(InputError):
    """A file that is not valid for its stated format (names the file and, where known, line)."""

    def __init__(self, path: str, problem: str, line: int | None = None) -> None:
        where = f"{path}:{line}" if line is not None else path
        super().__init__(f"{where}: {problem}")
        self.path = path
        self.line = line
        self.problem = problem


class NoOverlapError(InputError):
    """The device and load data share too little of the frequency axis to analyse."""
