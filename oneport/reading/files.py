"""Where every user file enters: regular files of bounded size, read whole, never blocking.

Every reader of the package (Touchstone files, netlists and their ``file=`` blocks, oscillator
manifests and I–V tables, the watched folder's files) takes its bytes from
:func:`read_user_bytes` and its text from :func:`decode_text`, so one set of rules holds for all:

- Only regular files are read. A folder, a named pipe (FIFO), a device node (``/dev/zero``,
  ``/dev/urandom``) or a socket is refused at once with one line: the kind is checked with
  ``os.stat`` before opening, the file is opened non-blocking, and the kind is checked again on
  the open descriptor, so nothing ever waits on a writer that never comes.
- A file larger than the input limit is refused with one line naming the limit and how to raise
  it: ``ONEPORT_MAX_INPUT_MB`` (megabytes of 10⁶ bytes, default 200).
- Text is UTF-8 (ASCII is UTF-8); a UTF-8 byte-order mark is accepted and dropped; UTF-16 and
  UTF-32 text are named as such; binary content (a pickle, an image) is refused without being
  interpreted.

This room reads bytes and decodes text; it never parses a format, and never prints or exits.
"""

from __future__ import annotations

import codecs
import io
import math
import os
import stat
from pathlib import Path

from ..errors import FileFormatError, InputError

#: The environment variable that raises (or lowers) the input-size limit, in megabytes (10⁶ B).
SIZE_LIMIT_VARIABLE = "ONEPORT_MAX_INPUT_MB"
#: The input-size limit when the variable is not set, MB (10⁶ bytes).
DEFAULT_SIZE_LIMIT_MB = 200.0
#: File suffixes read as netlists rather than Touchstone files (compared in lower case).
NETLIST_SUFFIXES = (".cir",)

_KINDS = (
    (stat.S_ISDIR, "is a folder"),
    (stat.S_ISFIFO, "is a named pipe (FIFO)"),
    (stat.S_ISCHR, "is a character device"),
    (stat.S_ISBLK, "is a block device"),
    (stat.S_ISSOCK, "is a socket"),
)
_READ_STEP = 1 << 20


def is_netlist_path(path: str | Path) -> bool:
    """Whether ``path`` names a netlist (by its suffix, ``.cir``), not a Touchstone file.

    Examples
    --------
    >>> is_netlist_path("bias_tee.CIR"), is_netlist_path("load.s1p")
    (True, False)
    """
    return Path(path).suffix.lower() in NETLIST_SUFFIXES


def size_limit_bytes() -> int:
    """The largest input file read, bytes: ``ONEPORT_MAX_INPUT_MB`` × 10⁶, default 200 MB.

    Raises
    ------
    InputError
        When the variable is set to something that is not a positive number.
    """
    text = os.environ.get(SIZE_LIMIT_VARIABLE, "").strip()
    if not text:
        return int(DEFAULT_SIZE_LIMIT_MB * 1e6)
    try:
        megabytes = float(text)
    except ValueError:
        megabytes = -1.0
    if not 0 < megabytes < 1e9:
        raise InputError(
            f"{SIZE_LIMIT_VARIABLE}={text!r} in the environment: give the input-size limit as"
            f" a positive number of megabytes below 1e9, e.g. {SIZE_LIMIT_VARIABLE}=500"
        )
    return int(megabytes * 1e6)


def read_user_bytes(path: str | Path, what: str) -> bytes:
    """The whole content of a user's file, refusing anything but a regular file of bounded size.

    Parameters
    ----------
    path : str or Path
        The file as the user named it.
    what : str
        What the file should be, for messages: ``"a Touchstone file"``, ``"a netlist"``, …

    Returns
    -------
    bytes

    Raises
    ------
    FileFormatError
        One line: missing, unreadable, not a regular file, or above the size limit.
    """
    name = str(path)
    limit = size_limit_bytes()
    try:
        status = os.stat(path)
    except FileNotFoundError:
        raise FileFormatError(name, "no such file") from None
    except (OSError, ValueError) as error:
        raise FileFormatError(name, f"cannot be read ({_reason(error)})") from None
    _refuse_special(name, status, what, limit)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0)
    try:
        descriptor = os.open(path, flags)
    except OSError as error:
        raise FileFormatError(name, f"cannot be read ({_reason(error)})") from None
    with io.FileIO(descriptor, "rb", closefd=True) as stream:
        # Checked again on the open file: the name may now lead somewhere else.
        status = os.fstat(stream.fileno())
        _refuse_special(name, status, what, limit)
        try:
            return _read_bounded(name, stream, status.st_size, limit)
        except OSError as error:
            raise FileFormatError(name, f"cannot be read ({_reason(error)})") from None


def _refuse_special(name: str, status: os.stat_result, what: str, limit: int) -> None:
    for is_kind, described in _KINDS:
        if is_kind(status.st_mode):
            raise FileFormatError(name, f"{described}, not a regular file; give {what}")
    if not stat.S_ISREG(status.st_mode):
        raise FileFormatError(name, f"is not a regular file; give {what}")
    if status.st_size > limit:
        raise FileFormatError(name, _too_large(status.st_size, limit, growing=False))


def _read_bounded(name: str, stream: io.FileIO, size: int, limit: int) -> bytes:
    """Read to the end, never more than ``limit`` bytes (a file may grow, or report size 0)."""
    parts: list[bytes] = []
    total = 0
    want = min(size, limit) + 1  # one read for a file that is as large as it said
    while part := stream.read(want):
        parts.append(part)
        total += len(part)
        if total > limit:
            raise FileFormatError(name, _too_large(total, limit, growing=True))
        want = min(_READ_STEP, limit + 1 - total)
    return parts[0] if len(parts) == 1 else b"".join(parts)


def _too_large(size: int, limit: int, growing: bool) -> str:
    suggestion = math.ceil(max(2 * limit, 1.1 * size) / 1e6)
    more = " and growing" if growing else ""
    return (
        f"is {_megabytes(size)}{more}, above the {_megabytes(limit)} limit on input files;"
        f" raise it with the environment variable {SIZE_LIMIT_VARIABLE}"
        f" (e.g. {SIZE_LIMIT_VARIABLE}={suggestion})"
    )


def _megabytes(size: int) -> str:
    return f"{size / 1e6:.4g} MB"


def _reason(error: Exception) -> str:
    if isinstance(error, OSError) and error.strerror:
        return error.strerror.lower()
    return str(error)


def decode_text(name: str, raw: bytes, what: str) -> str:
    """The text of a user's file: UTF-8, a leading byte-order mark dropped.

    Parameters
    ----------
    name : str
        The file, for messages.
    raw : bytes
        Its content (from :func:`read_user_bytes`).
    what : str
        What it should be, for messages (``"a netlist"``).

    Raises
    ------
    FileFormatError
        UTF-16 or UTF-32 text (named as such), binary content, or bytes that are not UTF-8
        (with the line of the first one).

    Examples
    --------
    >>> decode_text("a.cir", b"\\xef\\xbb\\xbfR1 1 0 50\\n", "a netlist")
    'R1 1 0 50\\n'
    >>> decode_text("a.cir", "R1 1 0 50\\n".encode("utf-16"), "a netlist")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    oneport.errors.FileFormatError: a.cir: is UTF-16 (little-endian) text; save it as UTF-8 ...
    """
    raw = text_bytes(name, raw, what)
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as error:
        raise _not_utf8(name, raw, error) from None


def text_bytes(name: str, raw: bytes, what: str) -> bytes:
    """``raw`` checked to be UTF-8 text and without its byte-order mark (no decoding kept).

    For large files whose text is parsed as bytes: ASCII files are checked in one pass.
    """
    encoding = _wide_encoding(raw)
    if encoding is not None:
        raise FileFormatError(name, f"is {encoding} text; save it as UTF-8 or ASCII text")
    if raw.startswith(codecs.BOM_UTF8):
        raw = raw[len(codecs.BOM_UTF8) :]
    if raw[:1] == b"\x80" or b"\x00" in raw:
        raise FileFormatError(
            name,
            f"has binary content (a pickle or other binary file); give {what} as text; binary"
            " files are never opened as objects",
        )
    if not raw.isascii():
        try:
            raw.decode("utf-8")
        except UnicodeDecodeError as error:
            raise _not_utf8(name, raw, error) from None
    return raw


def _not_utf8(name: str, raw: bytes, error: UnicodeDecodeError) -> FileFormatError:
    line = raw[: error.start].count(b"\n") + 1
    return FileFormatError(
        name, f"is not UTF-8 text (byte 0x{raw[error.start]:02x}); save it as UTF-8", line
    )


def _wide_encoding(raw: bytes) -> str | None:
    """The name of a UTF-16 or UTF-32 encoding the bytes are in, by mark or by their zeros."""
    if raw.startswith((codecs.BOM_UTF32_LE, codecs.BOM_UTF32_BE)):
        return "UTF-32"
    if raw.startswith(codecs.BOM_UTF16_LE):
        return "UTF-16 (little-endian)"
    if raw.startswith(codecs.BOM_UTF16_BE):
        return "UTF-16 (big-endian)"
    head = raw[:4096]
    if len(head) < 4 or b"\x00" not in head:
        return None
    # ASCII text in UTF-16 without a mark: every other byte is zero.
    even, odd = head[0::2], head[1::2]
    if odd.count(0) >= 0.9 * len(odd) and even.count(0) == 0:
        return "UTF-16 (little-endian)"
    if even.count(0) >= 0.9 * len(even) and odd.count(0) == 0:
        return "UTF-16 (big-endian)"
    return None
