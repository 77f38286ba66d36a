"""Safe, strict reading of Touchstone files (versions 1.x, 2.0 and 2.1), parsed once.

This room is the edge where Touchstone files enter. The bytes come from
:func:`oneport.reading.files.read_user_bytes` (regular files of bounded size only); the header
(option line, 2.x keywords) is read line by line here, the data block in bulk by
:mod:`oneport.reading.number_block`, and RI/MA/DB pairs and Z or Y matrices are turned into S on
numpy arrays here. Nothing is ever unpickled and no second parser reads the text: scikit-rf is
not imported to read a file (``skrf.Network(path)`` tries ``pickle`` first). The rest of the
package sees :class:`OnePort` and :class:`Multiport`, plain numpy arrays.

Accepted: S, Z or Y parameters; RI, MA or DB; Hz, kHz, MHz or GHz; any positive real ``R`` or
``[Reference]``. Refused, each with one line naming file, line, value and what is accepted:
binary, UTF-16 or empty files, no data, wrong value counts, frequencies that are negative,
repeated or not increasing, NaN or infinite values, MA magnitudes below zero, option lines that
repeat an entry or contradict themselves, a second option line or one after the data, unknown or
repeated 2.x keywords, and 2.x two-ports without ``[Two-Port Data Order]``. Never silent: a file
without an option line is read with the specification's defaults (GHz S MA R 50) and carries the
warning ``touchstone-no-option-line``; ``! Port Impedance`` comment lines (written by some field
solvers) are comments, so they are not used, and when they disagree with the reference
impedance the data are read in, the warning ``touchstone-port-impedance-comments-ignored`` says
so. Reader warnings travel on the record (``OnePort.warnings``) for the products to report.
"""

from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import FileFormatError, printable
from ..findings import Finding
from .files import read_user_bytes, text_bytes
from .number_block import NumberBlock, read_number_block
from .touchstone_header import (
    FREQUENCY_UNITS,
    Header,
    ports_from_suffix,
    read_after_data,
    read_header,
)

_PARAMETERS = ("s", "y", "z")
#: Values beyond this in magnitude (RI, MA, or the S they give) are not measurements: a DB
#: level of 400 dB. Below it, products of a few such numbers stay finite in double precision.
_LARGEST_MAGNITUDE = 1e20
_LARGEST_DECIBELS = 400.0
_WHAT = "a Touchstone file (.s1p, .s2p, ... or .ts)"
#: Code of the warning for a file without an option line.
NO_OPTION_LINE = "touchstone-no-option-line"
#: Code of the warning for ``! Port Impedance`` comments that disagree with the reference used.
PORT_IMPEDANCE_COMMENTS = "touchstone-port-impedance-comments-ignored"


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
    comments : tuple of str
        The file's comments (the text after each ``!``).
    warnings : tuple of Finding
        What the reader could not confirm (no option line, ignored port-impedance comments);
        every product that reports on this record adds them to its result's warnings.
    declared_frequencies : int or None
        A 2.x file's ``[Number of Frequencies]`` (met, or the file was refused).
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
    warnings: tuple[Finding, ...] = field(default=())
    declared_frequencies: int | None = None

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
    source, sha256, parameter, number_format, version, warnings, declared_frequencies
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
    warnings: tuple[Finding, ...] = field(default=())
    declared_frequencies: int | None = None

    @property
    def ports(self) -> int:
        """Number of ports."""
        return int(self.s.shape[0])


class IncompleteFileError(FileFormatError):
    """A 2.x file that ends before the frequencies it declares (it may still be being written)."""


@dataclass(frozen=True)
class _Parsed:
    header: Header
    frequency_hz: np.ndarray
    s: np.ndarray
    sha256: str
    comments: tuple[str, ...]
    warnings: tuple[Finding, ...]


def read_one_port(path: str | Path) -> OnePort:
    """Read a one-port Touchstone file safely and strictly.

    Parameters
    ----------
    path : str or Path
        A Touchstone 1.x file (``.s1p``) or a 2.x file (``.ts`` or ``.s1p`` with ``[Version]``).

    Returns
    -------
    OnePort
        Reflection coefficient in the file's own reference impedance, with the reader's
        warnings.

    Raises
    ------
    FileFormatError
        One line naming the file, the line where possible, the problem and what is accepted.
    """
    name = str(path)
    return _one_port(_parse(name, [read_user_bytes(path, _WHAT)], required_ports=1), name)


def parse_one_port(raw: bytes, source: str) -> OnePort:
    """A one-port from a Touchstone file's bytes already in hand (``source`` names the file).

    Used where the bytes judged must be the bytes read (the folder watcher).
    """
    return _one_port(_parse(source, [raw], required_ports=1), source)


def _one_port(parsed: _Parsed, source: str) -> OnePort:
    header = parsed.header
    return OnePort(
        frequency_hz=parsed.frequency_hz,
        gamma=parsed.s[0, 0],
        reference_impedance_ohm=header.reference,
        source=source,
        sha256=parsed.sha256,
        parameter=header.parameter.upper(),
        number_format=header.number_format.upper(),
        version=header.version,
        comments=parsed.comments,
        warnings=parsed.warnings,
        declared_frequencies=header.declared_frequencies,
    )


def read_touchstone(path: str | Path) -> Multiport:
    """Read a Touchstone file of any port count safely and strictly (S, Z or Y data).

    Used for two-port devices, fixtures and circuit blocks. The same checks as
    :func:`read_one_port` apply; noise data in two-port files are skipped.
    """
    name = str(path)
    parsed = _parse(name, [read_user_bytes(path, _WHAT)], required_ports=None)
    header = parsed.header
    return Multiport(
        frequency_hz=parsed.frequency_hz,
        s=parsed.s,
        reference_impedance_ohm=np.array(header.references, dtype=float),
        source=name,
        sha256=parsed.sha256,
        parameter=header.parameter.upper(),
        number_format=header.number_format.upper(),
        version=header.version,
        warnings=parsed.warnings,
        declared_frequencies=header.declared_frequencies,
    )


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


def multiport_from_network(network: Any, description: str = "network") -> Multiport:
    """Take an N-port from a scikit-rf ``Network`` already in memory (API use), its reference
    impedance real, positive and constant over frequency on every port."""
    s = np.asarray(network.s)
    if s.ndim != 3 or s.shape[1] != s.shape[2]:
        raise FileFormatError(description, "is not a network of square S-matrices")
    z0 = np.asarray(network.z0)
    references = np.array(
        [_constant_real_reference(description, z0[:, k]) for k in range(s.shape[1])]
    )
    frequency_hz = np.asarray(network.f, dtype=float)
    matrix = np.moveaxis(s.astype(complex), 0, -1)
    for row in range(matrix.shape[0]):
        for column in range(matrix.shape[1]):
            _check_arrays(description, frequency_hz, matrix[row, column])
    return Multiport(
        frequency_hz=frequency_hz,
        s=matrix,
        reference_impedance_ohm=references,
        source=str(getattr(network, "name", None) or description),
    )


# --- the whole file ------------------------------------------------------------------------------


def _parse(name: str, content: list[bytes], required_ports: int | None) -> _Parsed:
    """Check the whole file and return its header, frequencies (Hz) and S, shape (p, p, n).

    ``content`` holds the file's bytes and is emptied here, so that, once the numbers are
    parsed, the text of a large file is freed before they are converted (peak memory).
    """
    raw = content.pop()
    sha256 = hashlib.sha256(raw).hexdigest()
    raw = text_bytes(name, raw, _WHAT)
    if not raw or raw.isspace():
        raise FileFormatError(name, "is empty; a Touchstone file holds an option line and data")
    if b"\r" in raw and raw.count(b"\r") != raw.count(b"\r\n"):
        raw = raw.replace(b"\r\n", b"\n").replace(b"\r", b"\n")  # lines ended by CR alone
    header = Header()
    suffix_ports = ports_from_suffix(name)
    start = read_header(name, raw, header)
    if start is None:
        block = NumberBlock(np.empty(0), np.empty(0, int), np.empty(0, int), ())
    else:
        offset, line = start
        stop = _end_of_data(raw, offset)
        block = read_number_block(name, raw, offset, stop, line)
        if stop < len(raw):
            read_after_data(name, raw, stop, line + raw.count(b"\n", offset, stop), header)
    del raw
    ports = _port_count(name, header, suffix_ports, required_ports)
    if not block.values.size:
        raise FileFormatError(name, "has no data lines; expected lines of: frequency, values")
    _complete_references(name, header, ports)
    lines, table = _points(name, header, block, ports)
    frequency_hz = _frequencies(name, header, lines, table)
    _check_levels(name, header, lines, table)
    s = _scattering(name, header, table, ports, frequency_hz)
    comments = header.comments + list(block.comments)
    return _Parsed(
        header=header,
        frequency_hz=frequency_hz,
        s=s,
        sha256=sha256,
        comments=tuple(text for _, text in comments),
        warnings=_warnings(name, header, comments, ports),
    )


def _end_of_data(raw: bytes, start: int) -> int:
    """Where the data block ends: the start of the first line after ``start`` that begins
    (after blanks) with ``#`` or ``[``, or the end of the file."""
    end = len(raw)
    for mark in (b"#", b"["):
        position = raw.find(mark, start, end)
        while position >= 0:
            begin = raw.rfind(b"\n", start, position) + 1 or start
            if not raw[begin:position].strip(b" \t"):
                end = begin
                break
            position = raw.find(mark, position + 1, end)
    return end


# --- the data ------------------------------------------------------------------------------------


def _port_count(
    name: str, header: Header, suffix_ports: int | None, required_ports: int | None
) -> int:
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
    if "mixed-mode order" in header.keywords:
        raise FileFormatError(
            name,
            "[Mixed-Mode Order]: mixed-mode files are not read; give the single-ended data"
            " (for a balanced device, --differential-ports forms the differential one-port)",
            header.keywords["mixed-mode order"],
        )
    if header.version != "1.x" and ports == 2 and header.two_port_order is None:
        # Touchstone 2.0, [Two-Port Data Order]: required when [Number of Ports] is 2.
        raise FileFormatError(
            name,
            "a 2.x two-port file needs [Two-Port Data Order] 12_21 or 21_12 (the Touchstone"
            " specification requires it); without it the order of S12 and S21 is a guess",
            header.ports_line,
        )
    return ports


def _complete_references(name: str, header: Header, ports: int) -> None:
    if not header.references:
        header.references = [header.reference] * ports
    elif len(header.references) != ports:
        raise FileFormatError(
            name,
            f"[Reference] gives {len(header.references)} impedance(s) for {ports} port(s);"
            " give one per port",
            header.keywords.get("reference"),
        )
    header.reference = header.references[0]


def _points(
    name: str, header: Header, block: NumberBlock, ports: int
) -> tuple[np.ndarray, np.ndarray]:
    """The line of each frequency point and its values, shape (n, 1 + 2·entries)."""
    values, lines, counts = block.values, block.lines, block.counts
    if ports == 1:
        wrong = np.flatnonzero(counts != 3)
        if wrong.size:
            raise FileFormatError(
                name,
                "a one-port data line holds 3 values (frequency and two parts of the"
                f" parameter), this one has {counts[wrong[0]]}",
                int(lines[wrong[0]]),
            )
        return lines, values.reshape(-1, 3)
    if header.version == "1.x" and ports == 2:
        values, lines, counts = _without_noise_data(values, lines, counts)
    entries = ports * ports if header.matrix_format == "full" else ports * (ports + 1) // 2
    size = 1 + 2 * entries
    ends = np.cumsum(counts)
    if values.size % size:
        start = (values.size // size) * size
        raise FileFormatError(
            name,
            f"the last frequency point has {values.size - start} values; each point of a"
            f" {ports}-port file holds {size} (frequency and {entries} complex values)",
            int(lines[np.searchsorted(ends, start, side="right")]),
        )
    starts = np.arange(0, values.size, size)
    return lines[np.searchsorted(ends, starts, side="right")], values.reshape(-1, size)


def _without_noise_data(
    values: np.ndarray, lines: np.ndarray, counts: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A 1.x two-port's network data alone: noise data follow on lines of 5 values whose
    frequency is at or below the last network point's (Touchstone specification, noise data)."""
    firsts = values[np.cumsum(counts) - counts]
    index = np.arange(counts.size)
    last_network = np.maximum.accumulate(np.where(counts == 9, index, -1))
    noise = (counts == 5) & (last_network >= 0)
    noise &= firsts <= firsts[np.maximum(last_network, 0)]
    if not noise.any():
        return values, lines, counts
    cut = int(np.argmax(noise))
    offset = int(np.sum(counts[:cut]))
    return values[:offset], lines[:cut], counts[:cut]


def _frequencies(name: str, header: Header, lines: np.ndarray, table: np.ndarray) -> np.ndarray:
    with np.errstate(over="ignore"):
        frequency_hz = table[:, 0] * FREQUENCY_UNITS[header.unit]
    if not np.all(np.isfinite(frequency_hz)):
        index = int(np.flatnonzero(~np.isfinite(frequency_hz))[0])
        raise FileFormatError(
            name, f"frequency {table[index, 0]!r} {header.unit} overflows", int(lines[index])
        )
    _check_frequencies(name, lines, table[:, 0], frequency_hz)
    declared = header.declared_frequencies
    if declared is not None and declared != len(lines):
        problem = (
            f"[Number of Frequencies] says {declared} but the file holds {len(lines)}"
            " frequency points"
        )
        if declared > len(lines) and not header.ended:
            raise IncompleteFileError(name, problem, header.frequencies_line)
        raise FileFormatError(name, problem, header.frequencies_line)
    return frequency_hz


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


def _check_levels(name: str, header: Header, lines: np.ndarray, table: np.ndarray) -> None:
    """MA magnitudes are >= 0; DB levels, MA magnitudes and RI pairs are measurements
    (Touchstone specification, formats; the bound is :data:`_LARGEST_MAGNITUDE`)."""
    first = table[:, 1::2]
    if header.number_format in ("ri", "ma"):
        size = np.hypot(first, table[:, 2::2]) if header.number_format == "ri" else np.abs(first)
        loud = np.flatnonzero(size.max(axis=1) > _LARGEST_MAGNITUDE)
        if loud.size:
            raise FileFormatError(
                name,
                f"a value of magnitude {float(size[loud[0]].max()):g} is not a measurement;"
                f" magnitudes up to {_LARGEST_MAGNITUDE:g} ({_LARGEST_DECIBELS:g} dB) are"
                " accepted",
                int(lines[loud[0]]),
            )
    if header.number_format == "ma":
        negative = np.flatnonzero((first < 0).any(axis=1))
        if negative.size:
            index = int(negative[0])
            value = float(first[index][first[index] < 0][0])
            unstated = (
                " (the file has no option line, so the specification's default MA applies)"
                if header.option_line is None
                else ""
            )
            raise FileFormatError(
                name,
                f"magnitude {value:g} is negative{unstated}; MA data hold a magnitude >= 0 and"
                " an angle in degrees; if the columns are real and imaginary parts, the option"
                " line must say RI (e.g. # GHz S RI R 50)",
                int(lines[index]),
            )
    elif header.number_format == "db":
        loud = np.flatnonzero(np.abs(first).max(axis=1) > _LARGEST_DECIBELS)
        if loud.size:
            raise FileFormatError(
                name,
                f"a level beyond {_LARGEST_DECIBELS:g} dB is not a measurement; DB data hold"
                " 20*log10|value| and an angle in degrees",
                int(lines[loud[0]]),
            )


# --- conversion to S ------------------------------------------------------------------------------


def _scattering(
    name: str, header: Header, table: np.ndarray, ports: int, frequency_hz: np.ndarray
) -> np.ndarray:
    """S, shape (p, p, n), from the pairs as written (RI, MA, DB) and the parameter (S, Z, Y).

    Touchstone specification: RI is real and imaginary parts; MA magnitude and angle in
    degrees; DB 20·log10|x| and angle. 1.x Z and Y data are normalised (z = Z/R, y = Y·R),
    2.x data are in ohms and siemens, each port referred to its own ``[Reference]``. With the
    normalised matrices z̃ = Z/√(RᵢRⱼ) and ỹ = Y·√(RᵢRⱼ) (real references):
    S = (z̃ + I)⁻¹(z̃ − I) = (I + ỹ)⁻¹(I − ỹ) (common practice).
    """
    values = _complex_pairs(header.number_format, table)
    normalised = header.version == "1.x"
    if ports == 1:
        reference = header.reference
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            if header.parameter == "z":
                z = values[:, 0] if normalised else values[:, 0] / reference
                gamma = (z - 1.0) / (z + 1.0)
            elif header.parameter == "y":
                y = values[:, 0] if normalised else values[:, 0] * reference
                gamma = (1.0 - y) / (1.0 + y)
            else:
                gamma = values[:, 0]
        _check_arrays(name, frequency_hz, gamma)
        return gamma[np.newaxis, np.newaxis, :]
    matrix = _matrix(header, values, ports)
    if header.parameter != "s":
        matrix = _from_impedance_or_admittance(name, header, matrix, frequency_hz)
    s = np.moveaxis(matrix, 0, -1)
    _check_arrays(name, frequency_hz, s)
    return s


def _complex_pairs(number_format: str, table: np.ndarray) -> np.ndarray:
    """The complex values of each point, shape (n, entries), from the columns after frequency."""
    first, second = table[:, 1::2], table[:, 2::2]
    values = np.empty(first.shape, dtype=complex)
    if number_format == "ri":
        values.real, values.imag = first, second
        return values
    magnitude = first if number_format == "ma" else 10.0 ** (first / 20.0)
    angle = second * (np.pi / 180.0)
    part = np.cos(angle)
    part *= magnitude
    values.real = part
    np.sin(angle, out=part)
    part *= magnitude
    values.imag = part
    return values


def _matrix(header: Header, values: np.ndarray, ports: int) -> np.ndarray:
    """The (n, p, p) matrices, from full rows or one triangle (Touchstone 2.x [Matrix Format])."""
    n = values.shape[0]
    if header.matrix_format == "full":
        matrix = values.reshape(n, ports, ports)
        # Two-ports are written N11 N21 N12 N22 in 1.x and with [Two-Port Data Order] 21_12.
        if ports == 2 and (header.version == "1.x" or header.two_port_order == "21_12"):
            matrix = matrix.transpose(0, 2, 1)
        return np.ascontiguousarray(matrix)
    lower = header.matrix_format == "lower"
    rows, columns = np.tril_indices(ports) if lower else np.triu_indices(ports)
    matrix = np.zeros((n, ports, ports), dtype=complex)
    matrix[:, rows, columns] = values
    matrix[:, columns, rows] = values
    return matrix


def _from_impedance_or_admittance(
    name: str, header: Header, matrix: np.ndarray, frequency_hz: np.ndarray
) -> np.ndarray:
    identity = np.eye(matrix.shape[-1])
    if header.version != "1.x":
        root = np.sqrt(np.asarray(header.references, dtype=float))
        scale = np.outer(root, root)
        matrix = matrix / scale if header.parameter == "z" else matrix * scale
    if header.parameter == "z":
        left, right = matrix + identity, matrix - identity
    else:
        left, right = identity + matrix, identity - matrix
    try:
        return np.asarray(np.linalg.solve(left, right))
    except np.linalg.LinAlgError:
        singular = np.flatnonzero(np.linalg.det(left) == 0)
        at = frequency_hz[singular[0]] if singular.size else frequency_hz[0]
        raise FileFormatError(
            name,
            f"the {header.parameter.upper()} matrix at {at:.6g} Hz cannot be converted to S"
            " (Z + R or Y + 1/R is singular there)",
        ) from None


# --- warnings ------------------------------------------------------------------------------------


def _warnings(
    name: str, header: Header, comments: list[tuple[int, str]], ports: int
) -> tuple[Finding, ...]:
    found = []
    if header.option_line is None:
        found.append(
            Finding(
                NO_OPTION_LINE,
                f"{printable(name)} has no option line, so it was read with the Touchstone"
                " specification's defaults: GHz, S parameters, magnitude and angle (MA),"
                " R 50 ohm. If the file holds anything else, add its option line"
                " (e.g. # GHz S RI R 50).",
                {"path": name},
            )
        )
    impedance = _port_impedance_finding(name, header, comments, ports)
    if impedance is not None:
        found.append(impedance)
    return tuple(found)


def _port_impedance_finding(
    name: str, header: Header, comments: list[tuple[int, str]], ports: int
) -> Finding | None:
    """``! Port Impedance`` comments that disagree with the reference the data were read in.

    Comments carry no data (Touchstone specification, comments), so the data stay referred to
    the option line's R or [Reference]; scikit-rf's reader would instead refer them to the
    commented impedances. Commented impedances equal to the references used need no warning.
    """
    marked = [(line, text) for line, text in comments if text.lower().startswith("port impedance")]
    if not marked:
        return None
    references = np.asarray(header.references, dtype=float)
    parts: list[complex] = []
    readable = True
    for _, text in marked:
        numbers = re.findall(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?", text[14:])
        try:
            floats = [float(number) for number in numbers]
        except ValueError:
            floats = []
        if not floats or len(floats) % 2:
            readable = False
            break
        parts += [complex(re_, im) for re_, im in zip(floats[0::2], floats[1::2], strict=True)]
    if readable and parts and len(parts) % ports == 0:
        commented = np.asarray(parts).reshape(-1, ports)
        if np.allclose(commented, references, rtol=1e-9, atol=0):
            return None
    used = ", ".join(f"{value:g}" for value in references)
    where = f"lines {marked[0][0]}-{marked[-1][0]}" if len(marked) > 1 else f"line {marked[0][0]}"
    described = ""
    if readable and parts:
        magnitudes = np.abs(np.asarray(parts))
        described = f" (|Z| {magnitudes.min():.4g} to {magnitudes.max():.4g} ohm)"
    return Finding(
        PORT_IMPEDANCE_COMMENTS,
        f"{printable(name)} gives per-frequency port impedances in '! Port Impedance' comments"
        f" ({where}){described}. Comments carry no data in the Touchstone specification, so"
        f" they were not used: the data were read referred to {used} ohm as the file's option"
        " line or [Reference] says, and every figure is referred to that. If the data are"
        " referred to the commented impedances instead, renormalise the file to one real"
        " impedance first.",
        {
            "path": name,
            "lines": len(marked),
            "reference_impedance_ohm": [float(value) for value in references],
        },
    )


# --- arrays given from Python ---------------------------------------------------------------------


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
    loud = (np.abs(values) > _LARGEST_MAGNITUDE).reshape(-1, frequency_hz.size).any(axis=0)
    if loud.any():
        index = int(np.flatnonzero(loud)[0])
        raise FileFormatError(
            description,
            f"S-parameters at {frequency_hz[index]:.6g} Hz exceed {_LARGEST_MAGNITUDE:g} in"
            f" magnitude ({_LARGEST_DECIBELS:g} dB), which no measurement gives (an impedance"
            " within a hair of minus the reference)",
        )
    if frequency_hz[0] < 0 or np.any(np.diff(frequency_hz) <= 0):
        raise FileFormatError(description, "frequencies must be >= 0 and increase strictly")
