"""A block of whitespace-separated numbers read at the speed of the bytes, with line accounting.

The data section of a Touchstone file is millions of plain numbers; splitting it into Python
strings costs more time and memory than the numbers themselves. This room reads it in pieces of
a few megabytes: comments (``!`` to the end of the line) are collected and blanked, one
table look-up proves that only number characters and white space remain, white space is counted
per line with numpy, and numpy's C parser converts the piece. The line-by-line reader runs only
to name the line and token of an error, so every refusal still says where.

Numbers follow the Touchstone grammar (ASCII decimal, optional sign, fraction and exponent:
``1``, ``-2.5``, ``.5``, ``3.``, ``1e-3``); NaN, infinity, hexadecimal, thousands separators or
any other character are refused with the line and the token. It parses; it does not interpret.
"""

from __future__ import annotations

import math
import re
import unicodedata
from dataclasses import dataclass

import numpy as np

from ..errors import FileFormatError

#: Bytes per piece: large enough that numpy's per-call cost vanishes, small enough that the
#: temporaries (a few bytes per input byte) stay far below the file's size.
PIECE_BYTES = 1 << 21

_NUMBER = re.compile(r"^[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$")
_COMMENT = re.compile(rb"![^\n]*")
_SEPARATORS = re.compile(r"[ \t]+")
#: Every byte a block of numbers may hold; the white space among them is all below b"!".
_NUMBER_BYTES = b"0123456789+-.eE \t\r\n"


@dataclass(frozen=True)
class NumberBlock:
    """The numbers of a block of lines, in order, and where they stood.

    Attributes
    ----------
    values : ndarray of float, shape (k,)
        Every number, in reading order (finite).
    lines : ndarray of int, shape (m,)
        The 1-based line number of each line that holds numbers.
    counts : ndarray of int, shape (m,)
        How many numbers each of those lines holds (they sum to k).
    comments : tuple of (int, str)
        The comments inside the block: line number and the text after ``!``.
    """

    values: np.ndarray
    lines: np.ndarray
    counts: np.ndarray
    comments: tuple[tuple[int, str], ...]


@dataclass(frozen=True)
class _Piece:
    start: int
    stop: int
    first_line: int
    commented: bool
    numbers: int


def read_number_block(name: str, raw: bytes, start: int, stop: int, first_line: int) -> NumberBlock:
    """Read the numbers in ``raw[start:stop]``, whose first line is line ``first_line``.

    Two passes over pieces of the block: the first checks the characters and counts the numbers
    on every line, the second converts each piece into its place in one preallocated array, so
    the memory needed beyond the file is the numbers themselves and one piece's temporaries.

    Parameters
    ----------
    name : str
        The file, for messages.
    raw : bytes
        The file's bytes (UTF-8; checked by the caller).
    start, stop : int
        The block's byte range; ``start`` is at the beginning of a line.
    first_line : int
        The 1-based number of the line at ``start``.

    Raises
    ------
    FileFormatError
        The line and token of the first thing that is not a finite plain number.
    """
    pieces: list[_Piece] = []
    most = raw.count(b"\n", start, stop) + 1  # lines in the block, at most
    lines = np.empty(most, dtype=np.int64)
    counts = np.empty(most, dtype=np.int32)
    held = 0
    comments: list[tuple[int, str]] = []
    line, position = first_line, start
    while position < stop:
        end = _piece_end(raw, position, stop)
        piece = raw[position:end]
        commented = b"!" in piece
        if commented:
            piece = _without_comments(piece, line, comments)
        per_line = _numbers_per_line(name, piece, line)
        holding = np.flatnonzero(per_line)
        lines[held : held + holding.size] = holding + line
        counts[held : held + holding.size] = per_line[holding]
        held += holding.size
        pieces.append(_Piece(position, end, line, commented, int(per_line.sum())))
        line += piece.count(b"\n")
        position = end
    values = np.empty(sum(part.numbers for part in pieces))
    filled = 0
    for part in pieces:
        if part.numbers:
            values[filled : filled + part.numbers] = _convert(name, raw, part)
            filled += part.numbers
    block = NumberBlock(
        values=values, lines=lines[:held], counts=counts[:held], comments=tuple(comments)
    )
    _require_finite(name, raw, start, first_line, block)
    return block


def _piece_end(raw: bytes, position: int, stop: int) -> int:
    """Where a piece that starts at ``position`` ends: after a newline, or at ``stop``."""
    cut = position + PIECE_BYTES
    if cut >= stop:
        return stop
    newline = raw.find(b"\n", cut, stop)
    return stop if newline < 0 else newline + 1


def _numbers_per_line(name: str, piece: bytes, first_line: int) -> np.ndarray:
    """How many numbers each line of the piece holds (blank lines too); characters checked."""
    if piece.translate(None, _NUMBER_BYTES):
        _raise_at_character(name, piece, first_line)
    codes = np.frombuffer(piece, dtype=np.uint8)
    space = codes <= 32  # only number characters and white space are left
    starts = np.flatnonzero(space[:-1] & ~space[1:]) + 1
    if codes.size and not space[0]:
        starts = np.concatenate(([0], starts))
    line_ends = np.flatnonzero(codes == 10)
    if not piece.endswith(b"\n"):
        line_ends = np.append(line_ends, codes.size)
    return np.diff(np.searchsorted(starts, line_ends), prepend=0)


def _convert(name: str, raw: bytes, piece: _Piece) -> np.ndarray:
    """The numbers of a checked piece, by numpy's C parser; the line of any bad token."""
    text = raw[piece.start : piece.stop]
    if piece.commented:
        text = _COMMENT.sub(b"", text)
    try:
        numbers = np.fromstring(text, dtype=float, sep=" ")
    except ValueError:
        numbers = np.empty(0)
    if numbers.size != piece.numbers:
        _raise_in_lines(name, text, piece.first_line)
    return numbers


def _without_comments(piece: bytes, first_line: int, comments: list[tuple[int, str]]) -> bytes:
    """The piece with every comment blanked (its newlines kept); the comments noted."""
    line, position = first_line, 0
    for match in _COMMENT.finditer(piece):
        line += piece.count(b"\n", position, match.start())
        position = match.start()
        text = match.group()[1:].decode("utf-8", errors="replace").strip()
        comments.append((line, text))
    return _COMMENT.sub(b"", piece)


def _raise_at_character(name: str, piece: bytes, first_line: int) -> None:
    """Raise the error for the line that holds the first byte no number has."""
    odd = piece.translate(None, _NUMBER_BYTES)[:1]
    index = piece.index(odd)
    begin = piece.rfind(b"\n", 0, index) + 1
    end = piece.find(b"\n", index)
    content = piece[begin : len(piece) if end < 0 else end].decode("utf-8", errors="replace")
    number = first_line + piece.count(b"\n", 0, begin)
    parse_line_numbers(name, number, content)
    raise FileFormatError(name, f"{content.strip()!r} is not a line of plain numbers", number)


def _raise_in_lines(name: str, piece: bytes, first_line: int) -> None:
    """Read the piece line by line to name the first bad line (numpy refused the piece)."""
    for offset, content in enumerate(piece.decode("utf-8", errors="replace").split("\n")):
        parse_line_numbers(name, first_line + offset, content)
    raise FileFormatError(name, "holds data that are not plain numbers", first_line)


def _require_finite(name: str, raw: bytes, start: int, first_line: int, block: NumberBlock) -> None:
    """Name the line of the first value that overflowed to infinity (e.g. ``1e999``)."""
    finite = np.isfinite(block.values)
    if finite.all():
        return
    token = int(np.argmin(finite))
    index = int(np.searchsorted(np.cumsum(block.counts), token, side="right"))
    number = int(block.lines[index])
    begin = start
    for _ in range(number - first_line):
        begin = raw.index(b"\n", begin) + 1
    end = raw.find(b"\n", begin)
    content = raw[begin : len(raw) if end < 0 else end].decode("utf-8", errors="replace")
    parse_line_numbers(name, number, content.split("!", 1)[0])
    raise FileFormatError(name, "holds a value that is not finite", number)


def parse_line_numbers(name: str, number: int, content: str) -> list[float]:
    """The numbers of one line (its comment already removed), or the error naming the token.

    Examples
    --------
    >>> parse_line_numbers("a.s1p", 3, "1.5 -2e-3 .25")
    [1.5, -0.002, 0.25]
    >>> parse_line_numbers("a.s1p", 3, "1\\u00a00.5 0")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    oneport.errors.FileFormatError: a.s1p:3: the character U+00A0 (NO-BREAK SPACE) in ...
    """
    values = []
    for token in _SEPARATORS.split(content.strip(" \t\r\n")):
        if not token:
            continue
        odd = next((c for c in token if not ("!" <= c <= "~")), None)
        if odd is not None:
            raise FileFormatError(
                name,
                f"the character {describe_character(odd)} in {token!r}; data lines hold plain"
                " ASCII numbers separated by spaces or tabs",
                number,
            )
        if not _NUMBER.match(token):
            if token.lower().lstrip("+-") in ("nan", "inf", "infinity"):
                raise FileFormatError(
                    name,
                    f"value {token!r} is not finite; NaN and infinity are not accepted",
                    number,
                )
            raise FileFormatError(
                name,
                f"{token!r} is not a number; data lines hold plain numbers (e.g. 1.5, -2e-3)",
                number,
            )
        value = float(token)
        if not math.isfinite(value):
            raise FileFormatError(
                name, f"value {token!r} is not finite; NaN and infinity are not accepted", number
            )
        values.append(value)
    return values


def describe_character(character: str) -> str:
    """A character as a reader can identify it: ``U+00A0 (NO-BREAK SPACE)``."""
    if unicodedata.category(character).startswith("C"):
        return f"U+{ord(character):04X} (a control or format character)"
    return f"U+{ord(character):04X} ({unicodedata.name(character, 'unnamed')})"
