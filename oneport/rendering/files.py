"""Files the tool writes: targets checked before any work, files written whole or not at all.

The rules (CONVENTIONS.md, "Files the tool writes"), held here once for every writer:

- :func:`check_targets` runs before any computing. Each target must be a path to a regular file
  or to a name not taken yet, in an existing folder this process may write to, on an ordinary
  file system (never under ``/proc``, ``/sys`` or ``/dev``); it must not be an input of the same
  run (same resolved path, or the same file through another name: device and inode), and no two
  outputs of one run may share a path.
- :func:`write_atomically` (bytes) and :func:`write_through` (a writer that wants a path, such
  as pyarrow's Parquet writer) write to a temporary name in the target's folder and rename it
  into place, so a failure at any point leaves an earlier file as it was, never half a file.

This room writes files; it never computes what goes into them.
"""

from __future__ import annotations

import os
import stat
import tempfile
from collections.abc import Callable, Iterable, Mapping
from pathlib import Path

from ..errors import InputError, printable

#: Folders whose files are the kernel's or the hardware's, never a report's or a table's.
SYSTEM_FOLDERS = (Path("/proc"), Path("/sys"), Path("/dev"))
#: Folders under :data:`SYSTEM_FOLDERS` that are ordinary file systems after all.
ORDINARY_FOLDERS = (Path("/dev/shm"),)
#: Longest file name written (the temporary name adds up to this many characters).
_TEMPORARY_EXTRA = 16
_NAME_MAX = 255

_KINDS = (
    (stat.S_ISDIR, "is a folder"),
    (stat.S_ISFIFO, "is a named pipe (FIFO)"),
    (stat.S_ISCHR, "is a character device"),
    (stat.S_ISBLK, "is a block device"),
    (stat.S_ISSOCK, "is a socket"),
)


def check_target(path: str | Path, option: str) -> Path:
    """``path`` as a place this run may write a file to, checked before any work.

    Parameters
    ----------
    path : str or Path
        The target as given.
    option : str
        The option that named it, for the message (``"--report"``).

    Returns
    -------
    Path
        The target as given (relative paths stay relative, for messages).

    Raises
    ------
    InputError
        One line naming the option, the path and what is wrong: an empty name, a folder that
        does not exist or cannot be written, a system folder, an existing target that is not a
        regular file, a name too long for the file system.

    Examples
    --------
    >>> check_target("/proc/report.html", "--report")
    Traceback (most recent call last):
    ...
    oneport.errors.InputError: --report /proc/report.html: /proc holds the system's files, not a \
run's; write it into an ordinary folder
    """
    text = str(path)
    if not text.strip():
        raise InputError(f"{option}: an empty file name; give a path, e.g. {option} out/result")
    target = Path(text)
    shown = f"{option} {printable(text)}"
    if text.endswith(os.sep) or target.name in ("", ".", ".."):
        raise InputError(f"{shown}: names a folder; give a file name in it")
    if len(os.fsencode(target.name)) + _TEMPORARY_EXTRA > _NAME_MAX:
        raise InputError(
            f"{shown}: the file name is too long ({len(os.fsencode(target.name))} bytes);"
            f" give one of at most {_NAME_MAX - _TEMPORARY_EXTRA} bytes"
        )
    folder = _folder(target)
    try:
        resolved_folder = folder.resolve(strict=True)
    except (OSError, RuntimeError):
        raise InputError(
            f"{shown}: cannot be written (no folder {printable(str(folder))}); make it first"
        ) from None
    if not resolved_folder.is_dir():
        raise InputError(f"{shown}: {printable(str(folder))} is not a folder")
    system = _system_folder(resolved_folder / target.name)
    if system is not None:
        raise InputError(
            f"{shown}: {system} holds the system's files, not a run's; write it into an"
            " ordinary folder"
        )
    try:
        status = os.stat(target)
    except FileNotFoundError:
        status = None
    except OSError as error:
        raise InputError(f"{shown}: cannot be used ({error.strerror or error})") from None
    if status is not None:
        for test, kind in _KINDS:
            if test(status.st_mode):
                raise InputError(f"{shown}: {kind}; give the path of a regular file to write")
        if not stat.S_ISREG(status.st_mode):
            raise InputError(f"{shown}: not a regular file; give another path")
    if not os.access(resolved_folder, os.W_OK | os.X_OK):
        raise InputError(f"{shown}: the folder {printable(str(folder))} cannot be written to")
    return target


def check_targets(
    outputs: Mapping[str, str | Path | None], inputs: Iterable[str | Path | None] = ()
) -> dict[str, Path]:
    """Every output of one run checked before any work: each alone, then against each other
    and against the run's inputs.

    Parameters
    ----------
    outputs : mapping of str to path or None
        Option → target; None (option not given) is skipped.
    inputs : iterable of path or None
        Every file the run reads (None skipped).

    Returns
    -------
    dict of str to Path
        The checked targets by option.

    Raises
    ------
    InputError
        One line: the first target that fails :func:`check_target`, that is an input of the
        run, or that another output of the run also names.
    """
    checked = {
        option: check_target(path, option) for option, path in outputs.items() if path is not None
    }
    seen: dict[tuple[object, ...], str] = {}
    for option, target in checked.items():
        key = _identity(target)
        if key in seen:
            raise InputError(
                f"{option} {printable(str(target))}: {seen[key]} writes there too; give each"
                " output its own path"
            )
        seen[key] = option
    read = {_identity(Path(path)): Path(path) for path in inputs if path is not None}
    for option, target in checked.items():
        source = read.get(_identity(target))
        if source is not None:
            raise InputError(
                f"{option} {printable(str(target))}: that is an input of this run"
                f" ({printable(str(source))}); writing there would destroy it, so give another"
                " path"
            )
    return checked


def check_folder(path: str | Path, option: str) -> Path:
    """A folder this run writes files into, made if missing (with its parents).

    Raises
    ------
    InputError
        One line: an empty name, a system folder, something that is not a folder, a folder
        that cannot be made or written to.
    """
    text = str(path)
    if not text.strip():
        raise InputError(f"{option}: an empty folder name; give a path, e.g. {option} reports")
    folder = Path(text)
    shown = f"{option} {printable(text)}"
    system = _system_folder(folder.resolve())
    if system is not None:
        raise InputError(
            f"{shown}: {system} holds the system's files, not a run's; give an ordinary folder"
        )
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except FileExistsError:
        raise InputError(f"{shown}: is a file, not a folder") from None
    except OSError as error:
        raise InputError(f"{shown}: cannot be made ({error.strerror or error})") from None
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(f"{shown}: cannot be written to")
    return folder


def write_atomically(target: Path, content: bytes) -> None:
    """Write ``content`` to ``target`` through a temporary file in the same folder.

    An interrupted or failed write leaves any earlier ``target`` as it was, never half a file.

    Raises
    ------
    InputError
        One line naming the file when it cannot be written.
    """

    def write(temporary: Path) -> None:
        with open(temporary, "wb") as stream:
            stream.write(content)

    write_through(target, write)


def write_through(target: Path, writer: Callable[[Path], None]) -> None:
    """Let ``writer`` write a temporary file beside ``target``, then rename it into place.

    For writers that want a path of their own (pyarrow's Parquet writer, the CSV writer). The
    temporary file is removed whatever happens; the target changes only by the final rename.

    Raises
    ------
    InputError
        One line naming the file when it cannot be written (the writer's ``OSError``).
    """
    target = Path(target)
    folder = _folder(target)
    temporary: str | None = None
    try:
        handle, temporary = tempfile.mkstemp(
            dir=folder, prefix=f".{target.name[:64]}.", suffix=".tmp"
        )
        os.close(handle)
        writer(Path(temporary))
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes it private; give the usual mode
        os.replace(temporary, target)
        temporary = None
    except OSError as error:
        raise InputError(
            f"{printable(str(target))}: cannot be written ({error.strerror or error})"
        ) from None
    finally:
        if temporary is not None and os.path.lexists(temporary):
            os.unlink(temporary)


def _folder(target: Path) -> Path:
    return target.parent if str(target.parent) else Path(".")


def _identity(path: Path) -> tuple[object, ...]:
    """What makes two paths one file: device and inode when it exists, else the resolved path."""
    try:
        status = os.stat(path)
    except OSError:
        try:
            return ("path", str(path.resolve()))
        except (OSError, RuntimeError):
            return ("path", os.path.abspath(path))
    return ("inode", status.st_dev, status.st_ino)


def _system_folder(resolved: Path) -> str | None:
    """The system folder ``resolved`` lies in, or None for an ordinary place."""
    for ordinary in ORDINARY_FOLDERS:
        if resolved == ordinary or ordinary in resolved.parents:
            return None
    for system in SYSTEM_FOLDERS:
        if resolved == system or system in resolved.parents:
            return str(system)
    return None


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
