"""Files the tool writes: checked before any work, written whole or not at all.

Every output (reports, plots, tables, Touchstone exports) goes through :func:`write_atomically`:
a temporary file in the target's folder, renamed into place, so a failure leaves an earlier file
as it was. :func:`require_folder` fails early, before any computing or drawing.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from ..errors import InputError


def require_folder(target: Path) -> None:
    """Fail early, before any rendering, when ``target``'s folder does not exist.

    Raises
    ------
    InputError
        One line naming the file and its missing folder.
    """
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(f"{target}: cannot be written (no folder {folder}); make it first")


def write_atomically(target: Path, content: bytes) -> None:
    """Write ``content`` to ``target`` through a temporary file in the same folder.

    An interrupted write leaves any earlier ``target`` as it was, never half a file.

    Raises
    ------
    InputError
        One line naming the file when it cannot be written.
    """
    folder = target.parent if str(target.parent) else Path(".")
    temporary: str | None = None
    try:
        handle, temporary = tempfile.mkstemp(dir=folder, prefix=f".{target.name}.", suffix=".tmp")
        with os.fdopen(handle, "wb") as stream:
            stream.write(content)
        os.chmod(temporary, 0o666 & ~_umask())  # mkstemp makes it private; give the usual mode
        os.replace(temporary, target)
        temporary = None
    except OSError as error:
        raise InputError(f"{target}: cannot be written ({error.strerror or error})") from None
    finally:
        if temporary is not None and os.path.exists(temporary):
            os.unlink(temporary)


def _umask() -> int:
    current = os.umask(0)
    os.umask(current)
    return current
