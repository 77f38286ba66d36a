"""The head of a Touchstone file: its option line and 2.x keywords, read line by line.

Part of the Touchstone reader (:mod:`oneport.reading.touchstone`): :func:`read_header` reads the
lines before the data into a :class:`Header` and says where the data begin; the data themselves
are read in bulk elsewhere. Everything refused is refused with the file, the line and what is
accepted (Touchstone specification: option line, keywords). It never converts data.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import FileFormatError
from .number_block import parse_line_numbers

FREQUENCY_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_FORMATS = ("ri", "ma", "db")
_PORTS_FROM_SUFFIX = re.compile(r"^\.s(\d+)p$", re.IGNORECASE)
#: The most ports a file may declare (by its suffix or ``[Number of Ports]``).
MAX_PORTS = 1000
#: The Touchstone 2.0/2.1 keywords (Touchstone specification, keyword list).
_KEYWORDS = (
    "version",
    "number of ports",
    "two-port data order",
    "number of frequencies",
    "number of noise frequencies",
    "reference",
    "matrix format",
    "mixed-mode order",
    "begin information",
    "end information",
    "network data",
    "noise data",
    "end",
)


@dataclass
class Header:
    """What the lines before the data said (defaults: the specification's GHz S MA R 50)."""

    version: str = "1.x"
    ports: int | None = None
    unit: str = "ghz"
    parameter: str = "s"
    number_format: str = "ma"
    reference: float = 50.0
    references: list[float] = field(default_factory=list)
    matrix_format: str = "full"
    two_port_order: str | None = None
    declared_frequencies: int | None = None
    option_line: int | None = None
    ports_line: int | None = None
    frequencies_line: int | None = None
    ended: bool = False
    keywords: dict[str, int] = field(default_factory=dict)
    comments: list[tuple[int, str]] = field(default_factory=list)


def read_header(name: str, raw: bytes, header: Header) -> tuple[int, int] | None:
    """Read the lines before the data; return the first data line (byte offset, number).

    None when the file holds no data (it ends, or reaches [Noise Data] or [End], first).
    """
    position, number, size = 0, 1, len(raw)
    in_information = awaiting_reference = False
    first_content = True
    while position < size:
        newline = raw.find(b"\n", position)
        end = size if newline < 0 else newline
        here, line = position, number
        position, number = end + 1, number + 1
        content = _content(raw[here:end].decode("utf-8"), line, header)
        if not content:
            continue
        if in_information:
            in_information = not content.lower().startswith("[end information]")
            continue
        if content.startswith("["):
            keyword, rest = _split_keyword(content)
            _keyword_order(name, line, keyword, first_content, header)
            if keyword in ("noise data", "end"):
                header.ended = True
                return None
            awaiting_reference = _keyword(name, line, keyword, rest, header)
            in_information = keyword == "begin information"
            first_content = False
            continue
        first_content = False
        if content.startswith("#"):
            _option_line(name, line, content, header)
            continue
        if awaiting_reference:
            values = parse_line_numbers(name, line, content)
            header.references += [_positive_reference(name, line, v) for v in values]
            awaiting_reference = len(header.references) < (header.ports or 1)
            continue
        return here, line
    return None


def _content(text: str, number: int, header: Header) -> str:
    """The line without its comment (the comment is kept in ``header.comments``)."""
    content, mark, comment = text.partition("!")
    if mark:
        header.comments.append((number, comment.strip()))
    return content.strip()


def _split_keyword(content: str) -> tuple[str, str]:
    keyword, _, rest = content.partition("]")
    return " ".join(keyword[1:].lower().split()), rest.strip()


def _keyword_order(
    name: str, number: int, keyword: str, first_content: bool, header: Header
) -> None:
    """[Version] comes first in a 2.x file; a 1.x file has no keywords at all."""
    if (first_content and keyword != "version") or (not first_content and header.version == "1.x"):
        raise FileFormatError(
            name,
            f"[{keyword.title()}] in a file that does not start with [Version]; a 2.x"
            " file starts with [Version], a 1.x file has no keywords",
            number,
        )


def read_after_data(name: str, raw: bytes, position: int, number: int, header: Header) -> None:
    """The line that ends the data block: [Noise Data] or [End]; anything else is refused."""
    end = raw.find(b"\n", position)
    content = raw[position : len(raw) if end < 0 else end].decode("utf-8")
    content = content.partition("!")[0].strip()
    if content.startswith("#"):
        first = f" (the option line is line {header.option_line})" if header.option_line else ""
        raise FileFormatError(
            name,
            f"an option line after the data{first}; a file has one option line, before its data",
            number,
        )
    keyword, _ = _split_keyword(content)
    if header.version == "1.x":
        _keyword_order(name, number, keyword, False, header)
    if keyword in ("noise data", "end"):
        header.ended = True
        return
    raise FileFormatError(
        name,
        f"[{keyword.title()}] after the network data; the keywords come before [Network Data],"
        " and only [Noise Data] or [End] after the data",
        number,
    )


# --- option line and keywords ---------------------------------------------------------------------


def _option_line(name: str, number: int, content: str, header: Header) -> None:
    """Read the option line; entries in any order, each at most once (Touchstone specification).

    The specification lets later option lines be ignored; a second one is refused here, because
    a file that says two things about its own units cannot be read without guessing.
    """
    if header.option_line is not None:
        raise FileFormatError(
            name,
            f"a second option line (the first is line {header.option_line}); a file has one",
            number,
        )
    header.option_line = number
    tokens = content[1:].split()
    given: dict[str, str] = {}
    index = 0
    while index < len(tokens):
        token = tokens[index]
        lowered = token.lower()
        if lowered in FREQUENCY_UNITS:
            entry, header.unit = "frequency unit", lowered
        elif lowered in ("s", "y", "z", "g", "h"):
            entry, header.parameter = "parameter", lowered
        elif lowered in _FORMATS:
            entry, header.number_format = "format", lowered
        elif lowered == "r":
            entry = "reference R"
            if index + 1 >= len(tokens):
                raise FileFormatError(name, "option line has R without a value", number)
            index += 1
            token = f"R {tokens[index]}"
            header.reference = _option_reference(name, number, tokens[index])
        else:
            raise FileFormatError(
                name,
                f"option line token {token!r} is not understood; accepted: a frequency unit"
                " (Hz kHz MHz GHz), a parameter (S Z Y), a format (RI MA DB), R <ohms>",
                number,
            )
        if entry in given:
            raise FileFormatError(
                name,
                f"option line gives the {entry} twice ({given[entry]}, then {token}); give each"
                " of frequency unit, parameter, format and R once",
                number,
            )
        given[entry] = token
        index += 1


def _option_reference(name: str, number: int, text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise FileFormatError(name, f"option line R {text!r} is not a number", number) from None
    return _positive_reference(name, number, value)


def _keyword(name: str, number: int, keyword: str, rest: str, header: Header) -> bool:
    """Apply a 2.x keyword; return True when its value is still to come on a later line."""
    if keyword not in _KEYWORDS:
        raise FileFormatError(
            name,
            f"[{keyword.title()}] is not a Touchstone keyword; accepted: "
            + ", ".join(f"[{known.title()}]" for known in _KEYWORDS),
            number,
        )
    if keyword in header.keywords:
        raise FileFormatError(
            name,
            f"[{keyword.title()}] is given twice (first on line {header.keywords[keyword]});"
            " give it once",
            number,
        )
    header.keywords[keyword] = number
    if keyword == "version":
        if rest not in ("2.0", "2.1"):
            raise FileFormatError(
                name, f"[Version] {rest!r} is not supported; accepted: 2.0, 2.1", number
            )
        header.version = rest
    elif keyword == "number of ports":
        header.ports = _whole_number(name, number, keyword, rest, MAX_PORTS)
        header.ports_line = number
    elif keyword == "number of frequencies":
        header.declared_frequencies = _whole_number(name, number, keyword, rest)
        header.frequencies_line = number
    elif keyword == "number of noise frequencies":
        _whole_number(name, number, keyword, rest)
    elif keyword == "two-port data order":
        if rest not in ("12_21", "21_12"):
            raise FileFormatError(
                name, f"[Two-Port Data Order] {rest!r}; accepted: 12_21, 21_12", number
            )
        header.two_port_order = rest
    elif keyword == "reference":
        values = parse_line_numbers(name, number, rest) if rest else []
        header.references = [_positive_reference(name, number, v) for v in values]
        return len(header.references) < (header.ports or 1)
    elif keyword == "matrix format":
        if rest.lower() not in ("full", "lower", "upper"):
            raise FileFormatError(
                name, f"[Matrix Format] {rest!r}; accepted: Full, Lower, Upper", number
            )
        header.matrix_format = rest.lower()
    elif keyword == "end information":
        raise FileFormatError(name, "[End Information] without [Begin Information]", number)
    return False


def _whole_number(
    name: str, number: int, keyword: str, rest: str, largest: int | None = None
) -> int:
    value = int(rest) if rest.isascii() and rest.isdigit() and len(rest) < 19 else -1
    if value < 1 or (largest is not None and value > largest):
        bound = f" from 1 to {largest}" if largest is not None else ""
        raise FileFormatError(
            name,
            f"[{keyword.title()}] {rest[:40]!r} is not a positive whole number{bound}",
            number,
        )
    return value


def _positive_reference(name: str, number: int, value: float) -> float:
    if not (math.isfinite(value) and value > 0):
        raise FileFormatError(
            name, f"reference impedance {value!r} ohm; a positive number of ohms is needed", number
        )
    return value


def ports_from_suffix(name: str) -> int | None:
    match = _PORTS_FROM_SUFFIX.match(Path(name).suffix)
    if not match:
        return None
    digits = match.group(1)
    ports = int(digits) if len(digits) < 10 else MAX_PORTS + 1
    if not 1 <= ports <= MAX_PORTS:
        raise FileFormatError(
            name,
            f"the extension {Path(name).suffix!r} names {digits} ports; a Touchstone 1.x file"
            f" is named .s1p, .s2p, ... up to .s{MAX_PORTS}p by its port count",
        )
    return ports
