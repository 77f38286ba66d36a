"""The package's exceptions.

Every error a user can cause derives from :class:`OneportError` and from the matching builtin,
so callers may catch either. Messages are one line: what was read (file, line, option), the bad
value, and what would be accepted. The CLI prints them as they are and exits with code 2.
"""

from __future__ import annotations

import unicodedata

#: Unicode categories never printed raw: controls, format characters (bidirectional overrides,
#: zero-width marks), surrogates (undecodable bytes of a file name) and line separators.
_HIDDEN_CATEGORIES = frozenset({"Cc", "Cf", "Cs", "Zl", "Zp"})


def printable(text: str) -> str:
    """``text`` with every control, format or separator character shown as an escape.

    File names can hold characters that move a terminal's cursor, reorder what it shows
    (bidirectional overrides) or break a one-line message (newlines); every message that shows
    a path passes it through here. Printable characters, including non-ASCII letters, stay.

    Examples
    --------
    >>> printable("dev\\x1b[31m.s1p")
    'dev\\\\x1b[31m.s1p'
    >>> printable("load\\u202egnp.s1p")
    'load\\\\u202egnp.s1p'
    >>> printable("Ω.s1p")
    'Ω.s1p'
    """
    if text.isprintable():
        return text
    return "".join(_escaped(character) for character in text)


def _escaped(character: str) -> str:
    if character == " " or unicodedata.category(character) not in _HIDDEN_CATEGORIES:
        return character
    code = ord(character)
    if 0xDC80 <= code <= 0xDCFF:  # a byte that was not UTF-8, kept by surrogateescape
        return f"\\x{code - 0xDC00:02x}"
    if code < 0x100:
        return f"\\x{code:02x}"
    return f"\\u{code:04x}" if code < 0x10000 else f"\\U{code:08x}"


class OneportError(Exception):
    """Base class of every error the package raises on purpose."""


class InputError(OneportError, ValueError):
    """A file, option or argument that cannot be used as given."""


class FileFormatError(InputError):
    """A file that is not valid for its stated format (names the file and, where known, line)."""

    def __init__(self, path: str, problem: str, line: int | None = None) -> None:
        shown = printable(path)
        where = f"{shown}:{line}" if line is not None else shown
        super().__init__(f"{where}: {problem}")
        self.path = path
        self.line = line
        self.problem = problem


class NoOverlapError(InputError):
    """The device and load data share too little of the frequency axis to analyse."""
