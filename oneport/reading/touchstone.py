"""Safe, strict reading of one-port Touchstone files (versions 1.x, 2.0 and 2.1).

This room is the edge where user files enter. It never unpickles: ``skrf.Network(path)`` tries
``pickle`` first and so could run code from a hostile file, so the text is first checked here,
line by line, and only then handed to scikit-rf's text reader
(:class:`skrf.io.touchstone.Touchstone`), which converts Z, Y and every number format to S.
scikit-rf objects stop here: the rest of the package sees :class:`OnePort`, plain numpy arrays.

Accepted: S, Z or Y parameters; RI, MA or DB; Hz, kHz, MHz or GHz; any positive real ``R`` or
``[Reference]``. Refused, each with one line naming file, line, value and what is accepted:
binary or empty files, no data, wrong column counts, frequencies that are negative, repeated or
not increasing, NaN or infinite values, and files with more than one port.
"""

from __future__ import annotations

import hashlib
import io
import math
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import FileFormatError

_FREQUENCY_UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
_PARAMETERS = ("s", "y", "z")
_FORMATS = ("ri", "ma", "db")
_PORTS_FROM_SUFFIX = re.compile(r"^\.s(\d+)p$", re.IGNORECASE)
#: Deletes every character a plain number or white space may hold (see ``_parse_numbers``).
_OPTION_LINE = re.compile(r"^[ \t]*#[^\n]*", re.MULTILINE)
_NUMBER_CHARACTERS = str.maketrans("", "", "0123456789+-.eE \t")
_ASCII_NUMBER = re.compile(r"^[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?$")
#: Levels beyond this in a DB file are not measurements (10^(400/20) = 1e20).
_LARGEST_DECIBELS = 400.0


@dataclass(frozen=True)
class OnePort:
    """A one-port's reflection coefficient on its own frequency grid.

    Attributes
    ----------
    frequency_hz : ndarray of float, shape (n,)
        Strictly increasing, non-negative, Hz.
    gamma : ndarray of complex, shape (n,)
        Reflection coefficient referred to ``reference_impedance_ohm``.
    reference_impedance_ohm : float
        The real, positive reference impedance of ``gamma`` (the file's ``R`` or ``[Reference]``).
    source : str
        The file path, or a description for data given as objects.
    sha256 : str or None
        SHA-256 of the file's bytes; None for data not read from a file.
    parameter, number_format, version : str
        What the file said (``"S"``, ``"RI"``, ``"1.x"``…), for the record.
    """

    frequency_hz: np.ndarray
    gamma: np.ndarray
    reference_impedance_ohm: float
    source: str
    sha256: str | None = None
    parameter: str = "S"
    number_format: str = "RI"
    version: str = "1.x"
    comments: tuple[str, ...] = field(default=())

    @property
    def points(self) -> int:
        """Number of frequency points."""
        return int(self.frequency_hz.size)


@dataclass(frozen=True)
class Multiport:
    """An N-port's scattering matrix on its own grid, frequency on the last axis.

    Attributes
    ----------
    frequency_hz : ndarray of float, shape (n,)
    s : ndarray of complex, shape (p, p, n)
        S-parameters referred to ``reference_impedance_ohm`` port by port.
    reference_impedance_ohm : ndarray of float, shape (p,)
    source, sha256, parameter, number_format, version
        As for :class:`OnePort`.
    """

    frequency_hz: np.ndarray
    s: np.ndarray
    reference_impedance_ohm: np.ndarray
    source: str
    sha256: str | None = None
    parameter: str = "S"
    number_format: str = "RI"
    version: str = "1.x"

    @property
    def ports(self) -> int:
        """Number of ports."""
        return int(self.s.shape[0])


@dataclass
class _Header:
    version: str = "1.x"
    ports: int | None = None
    unit: str = "ghz"
    parameter: str = "s"
    number_format: str = "ma"
    reference: float = 50.0
    references: list[float] = field(default_factory=list)
    matrix_format: str = "full"
    declared_frequencies: int | None = None
    option_line: int | None = None
    ports_line: int | None = None
    frequencies_line: int | None = None


def read_one_port(path: str | Path) -> OnePort:
    """Read a one-port Touchstone file safely and strictly.

    Parameters
    ----------
    path : str or Path
        A Touchstone 1.x file (``.s1p``) or a 2.x file (``.ts`` or ``.s1p`` with ``[Version]``).

    Returns
    -------
    OnePort
        Reflection coefficient in the file's own reference impedance.

    Raises
    ------
    FileFormatError
        One line naming the file, the line where possible, the problem and what is accepted.
    """
    name, raw, text = _read_text(path)
    header, frequency_hz = _validate(name, text, required_ports=1)
    s = _convert_with_scikit_rf(name, text, header, frequency_hz)
    comments = tuple(line.split("!", 1)[1].strip() for line in text.splitlines() if "!" in line)
    return OnePort(
        frequency_hz=frequency_hz,
        gamma=s[0, 0],
        reference_impedance_ohm=header.reference,
        source=name,
        sha256=hashlib.sha256(raw).hexdigest(),
        parameter=header.parameter.upper(),
        number_format=header.number_format.upper(),
        version=header.version,
        comments=comments,
    )


def read_touchstone(path: str | Path) -> Multiport:
    """Read a Touchstone file of any port count safely and strictly (S, Z or Y data).

    Used for two-port devices, fixtures and circuit blocks. The same checks as
    :func:`read_one_port` apply; noise data in two-port files are skipped.
    """
    name, raw, text = _read_text(path)
    header, frequency_hz = _validate(name, text, required_ports=None)
    s = _convert_with_scikit_rf(name, text, header, frequency_hz)
    return Multiport(
        frequency_hz=frequency_hz,
        s=s,
        reference_impedance_ohm=np.array(header.references, dtype=float),
        source=name,
        sha256=hashlib.sha256(raw).hexdigest(),
        parameter=header.parameter.upper(),
        number_format=header.number_format.upper(),
        version=header.version,
    )


def _read_text(path: str | Path) -> tuple[str, bytes, str]:
    name = str(path)
    try:
        raw = Path(path).read_bytes()
    except FileNotFoundError:
        raise FileFormatError(name, "no such file") from None
    except IsADirectoryError:
        raise FileFormatError(name, "is a folder, not a Touchstone file") from None
    except OSError as error:
        raise FileFormatError(name, f"cannot be read ({error.strerror})") from None
    return name, raw, _decode(name, raw)


def one_port_from_network(network: Any, description: str = "network") -> OnePort:
    """Take a one-port from a scikit-rf ``Network`` already in memory (API use).

    The network must have one port and a real, positive reference impedance that does not change
    with frequency.
    """
    s = np.asarray(network.s)
    if s.ndim != 3 or s.shape[1:] != (1, 1):
        ports = s.shape[1] if s.ndim == 3 else "?"
        raise FileFormatError(description, f"has {ports} ports; a one-port network is needed")
    z0 = np.asarray(network.z0)[:, 0]
    reference = _constant_real_reference(description, z0)
    frequency_hz = np.asarray(network.f, dtype=float)
    gamma = s[:, 0, 0].astype(complex)
    _check_arrays(description, frequency_hz, gamma)
    return OnePort(
        frequency_hz=frequency_hz,
        gamma=gamma,
        reference_impedance_ohm=reference,
        source=str(getattr(network, "name", None) or description),
    )


def _decode(name: str, raw: bytes) -> str:
    if not raw.strip():
        raise FileFormatError(name, "is empty; a Touchstone file holds an option line and data")
    if raw[:1] == b"\x80" or b"\x00" in raw:
        raise FileFormatError(
            name,
            "has binary content (a pickle or other binary file); only Touchstone text is read,"
            " and binary files are never opened as objects",
        )
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as error:
        line = raw[: error.start].count(b"\n") + 1
        raise FileFormatError(
            name, "is not text (invalid UTF-8); Touchstone files are ASCII text", line
        ) from None


def _validate(name: str, text: str, required_ports: int | None) -> tuple[_Header, np.ndarray]:
    """Check the whole file and return its header and frequencies in Hz."""
    header = _Header()
    suffix_ports = _ports_from_suffix(name)
    # 1.x two-port files may end with noise data (a frequency at or below the last one).
    noise_possible = suffix_ports == 2
    rows: list[tuple[int, str]] = []
    in_information = False
    awaiting_reference = False
    first_content = True
    for number, line in enumerate(text.splitlines(), start=1):
        content = line.split("!", 1)[0].strip()
        if not content:
            continue
        lowered = content.lower()
        if in_information:
            in_information = not lowered.startswith("[end information]")
            continue
        if content.startswith("["):
            keyword, _, rest = content.partition("]")
            keyword = keyword[1:].strip().lower()
            rest = rest.strip()
            if (first_content and keyword != "version") or (
                not first_content and header.version == "1.x"
            ):
                raise FileFormatError(
                    name,
                    f"[{keyword.title()}] in a file that does not start with [Version]; a 2.x"
                    " file starts with [Version], a 1.x file has no keywords",
                    number,
                )
            if keyword in ("noise data", "end"):
                break
            noise_possible = False
            awaiting_reference = _keyword(name, number, keyword, rest, header)
            in_information = keyword == "begin information"
            first_content = False
            continue
        first_content = False
        if content.startswith("#"):
            if header.option_line is None:
                _option_line(name, number, content, header)
            continue
        if awaiting_reference:
            values = _numbers(name, number, content)
            header.references += [_positive_reference(name, number, v) for v in values]
            awaiting_reference = len(header.references) < (header.ports or 1)
            continue
        if noise_possible and _starts_noise_data(name, number, content, rows):
            break
        rows.append((number, content))

    ports = header.ports if header.version != "1.x" else suffix_ports
    if ports is None:
        raise FileFormatError(
            name,
            "cannot tell how many ports it has: a Touchstone 1.x file needs the extension .s1p"
            " (.sNp), a 2.x file needs [Version] and [Number of Ports]",
        )
    if required_ports is not None and ports != required_ports:
        raise FileFormatError(
            name,
            f"is a {ports}-port file; a one-port is needed: terminate the other port(s) with"
            " --terminate FILE or --terminate-impedance OHMS, or save S11 alone as a .s1p",
            header.ports_line,
        )
    if header.parameter not in _PARAMETERS:
        raise FileFormatError(
            name,
            f"holds {header.parameter.upper()} parameters; oneport reads S, Z or Y data",
            header.option_line,
        )
    if not rows:
        raise FileFormatError(name, "has no data lines; expected lines of: frequency, values")
    _complete_references(name, header, ports)
    lines, table = _records(name, header, rows, ports)
    with np.errstate(over="ignore"):
        frequency_hz = table[:, 0] * _FREQUENCY_UNITS[header.unit]
    if not np.all(np.isfinite(frequency_hz)):
        index = int(np.flatnonzero(~np.isfinite(frequency_hz))[0])
        raise FileFormatError(
            name, f"frequency {table[index, 0]!r} {header.unit} overflows", int(lines[index])
        )
    _check_frequencies(name, lines, table[:, 0], frequency_hz)
    if header.declared_frequencies is not None and header.declared_frequencies != len(lines):
        raise FileFormatError(
            name,
            f"[Number of Frequencies] says {header.declared_frequencies} but the file holds"
            f" {len(lines)} frequency points",
            header.frequencies_line,
        )
    if header.number_format == "db":
        loud = np.flatnonzero(np.abs(table[:, 1::2]).max(axis=1) > _LARGEST_DECIBELS)
        if loud.size:
            raise FileFormatError(
                name,
                f"a level beyond {_LARGEST_DECIBELS:g} dB is not a measurement; DB data hold"
                " 20*log10|value| and an angle in degrees",
                int(lines[loud[0]]),
            )
    return header, frequency_hz


def _starts_noise_data(name: str, number: int, content: str, rows: list[tuple[int, str]]) -> bool:
    """In a 1.x two-port file, noise data follow with a frequency at or below the last one."""
    values = _numbers(name, number, content)
    if not rows or len(values) != 5:
        return False
    # The last network-data record starts on the last line with 9 values (or earlier ones).
    for _, previous in reversed(rows):
        previous_values = previous.split()
        if len(previous_values) == 9:
            return values[0] <= float(previous_values[0])
    return False


def _complete_references(name: str, header: _Header, ports: int) -> None:
    if not header.references:
        header.references = [header.reference] * ports
    elif len(header.references) != ports:
        raise FileFormatError(
            name,
            f"[Reference] gives {len(header.references)} impedance(s) for {ports} port(s);"
            " give one per port",
        )
    header.reference = header.references[0]


def _records(
    name: str, header: _Header, rows: list[tuple[int, str]], ports: int
) -> tuple[np.ndarray, np.ndarray]:
    """Parse the data lines: the line of each frequency point and its values, shape (n, size)."""
    counts = np.fromiter((len(content.split()) for _, content in rows), dtype=int, count=len(rows))
    numbers = np.fromiter((number for number, _ in rows), dtype=int, count=len(rows))
    flat = _parse_numbers(name, rows)
    if ports == 1:
        wrong = np.flatnonzero(counts != 3)
        if wrong.size:
            raise FileFormatError(
                name,
                "a one-port data line holds 3 values (frequency and two parts of the"
                f" parameter), this one has {counts[wrong[0]]}",
                int(numbers[wrong[0]]),
            )
        return numbers, flat.reshape(-1, 3)
    entries = ports * ports if header.matrix_format == "full" else ports * (ports + 1) // 2
    size = 1 + 2 * entries
    ends = np.cumsum(counts)
    if flat.size % size:
        start = (flat.size // size) * size
        raise FileFormatError(
            name,
            f"the last frequency point has {flat.size - start} values; each point of a"
            f" {ports}-port file holds {size} (frequency and {entries} complex values)",
            int(numbers[np.searchsorted(ends, start, side="right")]),
        )
    starts = np.arange(0, flat.size, size)
    return numbers[np.searchsorted(ends, starts, side="right")], flat.reshape(-1, size)


def _parse_numbers(name: str, rows: list[tuple[int, str]]) -> np.ndarray:
    """All numbers of the data lines, in order; errors name the line and token.

    The fast path converts the whole block at once; when the block holds a character no plain
    number has, or a token numpy cannot read, or a value beyond float range, the lines are read
    one by one to say exactly where.
    """
    block = " ".join(content for _, content in rows)
    if not block.translate(_NUMBER_CHARACTERS):
        try:
            with np.errstate(over="ignore"):
                flat = np.array(block.split(), dtype=float)
            if np.all(np.isfinite(flat)):
                return flat
        except ValueError:
            pass
    for number, content in rows:
        _numbers(name, number, content)
    raise FileFormatError(name, "holds data that are not plain numbers")  # not reached


def _keyword(name: str, number: int, keyword: str, rest: str, header: _Header) -> bool:
    """Apply a 2.x keyword; return True when its value is still to come on a later line."""
    if keyword == "version":
        if rest not in ("2.0", "2.1"):
            raise FileFormatError(
                name, f"[Version] {rest!r} is not supported; accepted: 2.0, 2.1", number
            )
        header.version = rest
    elif keyword == "number of ports":
        header.ports = _whole_number(name, number, keyword, rest)
        header.ports_line = number
    elif keyword == "number of frequencies":
        header.declared_frequencies = _whole_number(name, number, keyword, rest)
        header.frequencies_line = number
    elif keyword == "reference":
        values = _numbers(name, number, rest) if rest else []
        header.references = [_positive_reference(name, number, v) for v in values]
        return len(header.references) < (header.ports or 1)
    elif keyword == "matrix format":
        if rest.lower() not in ("full", "lower", "upper"):
            raise FileFormatError(
                name, f"[Matrix Format] {rest!r}; accepted: Full, Lower, Upper", number
            )
        header.matrix_format = rest.lower()
    return False


def _option_line(name: str, number: int, content: str, header: _Header) -> None:
    header.option_line = number
    tokens = content[1:].split()
    index = 0
    while index < len(tokens):
        token = tokens[index].lower()
        if token in _FREQUENCY_UNITS:
            header.unit = token
        elif token in ("s", "y", "z", "g", "h"):
            header.parameter = token
        elif token in _FORMATS:
            header.number_format = token
        elif token == "r":
            if index + 1 >= len(tokens):
                raise FileFormatError(name, "option line has R without a value", number)
            index += 1
            try:
                value = float(tokens[index])
            except ValueError:
                raise FileFormatError(
                    name, f"option line R {tokens[index]!r} is not a number", number
                ) from None
            header.reference = _positive_reference(name, number, value)
        else:
            raise FileFormatError(
                name,
                f"option line token {tokens[index]!r} is not understood; accepted: a frequency"
                " unit (Hz kHz MHz GHz), a parameter (S Z Y), a format (RI MA DB), R <ohms>",
                number,
            )
        index += 1


def _numbers(name: str, number: int, content: str) -> list[float]:
    values = []
    for token in content.split():
        if not _ASCII_NUMBER.match(token):
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


def _whole_number(name: str, number: int, keyword: str, rest: str) -> int:
    try:
        value = int(rest)
    except ValueError:
        value = -1
    if value < 1:
        raise FileFormatError(
            name, f"[{keyword.title()}] {rest!r} is not a positive whole number", number
        )
    return value


def _positive_reference(name: str, number: int, value: float) -> float:
    if not (math.isfinite(value) and value > 0):
        raise FileFormatError(
            name, f"reference impedance {value!r} ohm; a positive number of ohms is needed", number
        )
    return value


def _ports_from_suffix(name: str) -> int | None:
    match = _PORTS_FROM_SUFFIX.match(Path(name).suffix)
    return int(match.group(1)) if match else None


def _check_frequencies(
    name: str, lines: np.ndarray, values: np.ndarray, frequency_hz: np.ndarray
) -> None:
    """Frequencies must be >= 0 and strictly increasing (``values`` as written, per point)."""
    if frequency_hz[0] < 0:
        raise FileFormatError(
            name, f"frequency {values[0]:g} is negative; frequencies are >= 0", int(lines[0])
        )
    steps = np.diff(frequency_hz)
    bad = np.flatnonzero(steps <= 0)
    if bad.size:
        index = int(bad[0]) + 1
        word = "repeats" if steps[bad[0]] == 0 else "is below"
        raise FileFormatError(
            name,
            f"frequency {values[index]:g} {word} the one before (line {lines[index - 1]});"
            " frequencies must increase strictly",
            int(lines[index]),
        )


def _convert_with_scikit_rf(
    name: str, text: str, header: _Header, frequency_hz: np.ndarray
) -> np.ndarray:
    """Convert the checked text to S, shape (p, p, n), with scikit-rf's text reader.

    The text goes in as a string buffer: scikit-rf's pickle path is never reached.
    """
    from skrf.io.touchstone import Touchstone

    if "[begin information]" in text.lower():
        text = _without_information_block(text)
    buffer = io.StringIO(_canonical_option_line(text, header))
    # scikit-rf takes the port count of a 1.x file from the name of the file object.
    buffer.name = f"data.s{len(header.references)}p" if header.version == "1.x" else "data.ts"
    try:
        parsed = Touchstone(buffer)
        skrf_frequency, s = parsed.get_sparameter_arrays()
    except Exception as error:  # the text passed our checks; say what scikit-rf refused
        raise FileFormatError(name, f"scikit-rf's Touchstone reader refused it: {error}") from None
    s = np.asarray(s, dtype=complex)
    if header.version == "1.x" and header.parameter == "y":
        s = _normalised_admittance_to_s(parsed)
    s = np.moveaxis(s, 0, -1)
    if s.shape[-1] != frequency_hz.size or not np.allclose(skrf_frequency, frequency_hz):
        raise FileFormatError(name, "scikit-rf read a different frequency list than the file has")
    _check_arrays(name, frequency_hz, s)
    return s


def _normalised_admittance_to_s(parsed: Any) -> np.ndarray:
    """S (shape (n, p, p)) of 1.x Y data, from the file's normalised admittances y = Y·R.

    scikit-rf (2.2) scales every 1.x Z, Y, G or H file by R — right for Z, wrong for Y — so the
    conversion is done here: with one real R for all ports, S = (I + y)⁻¹ (I − y).
    """
    y = np.asarray(parsed.s_flat, dtype=complex)
    ports = round(float(np.sqrt(y.shape[1])))
    y = y.reshape(-1, ports, ports)
    if ports == 2:
        y = np.transpose(y, (0, 2, 1))  # 1.x two-ports list N11 N21 N12 N22
    identity = np.eye(ports)
    return np.linalg.solve(identity + y, identity - y)


def _canonical_option_line(text: str, header: _Header) -> str:
    """The text with its first option line written in the usual order, the others dropped.

    The specification lets the option line's entries come in any order; scikit-rf's reader
    expects the usual one. Entries were validated and stored in ``header`` already. Large
    files usually need no change, and then the text is passed on as it is.
    """
    option = (
        f"# {header.unit.upper()} {header.parameter.upper()} {header.number_format.upper()}"
        f" R {header.reference!r}"
    )
    spans = [match.span() for match in _OPTION_LINE.finditer(text)]
    if not spans:
        return text
    first_start, first_end = spans[0]
    if len(spans) == 1 and _same_options(text[first_start:first_end], option):
        return text
    pieces = [text[:first_start], option]
    position = first_end
    for start, end in spans[1:]:
        pieces.append(text[position:start])
        position = end
    pieces.append(text[position:])
    return "".join(pieces)


def _same_options(line: str, option: str) -> bool:
    """Whether an option line already reads as ``option`` (case and spacing aside)."""
    return line.split("!", 1)[0].lower().split() == option.lower().split()


def _without_information_block(text: str) -> str:
    """The text less any 2.1 ``[Begin Information]`` … ``[End Information]`` block.

    scikit-rf's reader does not know the block; it carries nothing the conversion needs.
    """
    kept = []
    inside = False
    for line in text.splitlines():
        keyword = line.split("!", 1)[0].strip().lower()
        if keyword.startswith("[begin information]"):
            inside = True
        elif inside and keyword.startswith("[end information]"):
            inside = False
        elif not inside:
            kept.append(line)
    return "\n".join(kept) + "\n"


def _constant_real_reference(description: str, z0: np.ndarray) -> float:
    reference = complex(z0[0])
    if (
        abs(reference.imag) > 0
        or not reference.real > 0
        or not np.allclose(z0, reference, rtol=1e-12, atol=0)
    ):
        raise FileFormatError(
            description,
            "reference impedance must be real, positive and the same at every frequency",
        )
    return reference.real


def _check_arrays(description: str, frequency_hz: np.ndarray, values: np.ndarray) -> None:
    if frequency_hz.size == 0:
        raise FileFormatError(description, "has no frequency points")
    finite = np.isfinite(values).reshape(-1, frequency_hz.size).all(axis=0)
    if not finite.all():
        index = int(np.flatnonzero(~finite)[0])
        raise FileFormatError(
            description,
            f"S-parameters at {frequency_hz[index]:.6g} Hz are not finite (an impedance of exactly"
            " the reference value in a Y file, or infinite Z, cannot be converted to S)",
        )
    if frequency_hz[0] < 0 or np.any(np.diff(frequency_hz) <= 0):
        raise FileFormatError(description, "frequencies must be >= 0 and increase strictly")
