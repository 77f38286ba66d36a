"""Writing Touchstone 1.x files (``.s1p``, ``.s2p``) from computed S-parameters.

Frequencies in Hz, S in real/imaginary pairs, 15 significant digits (far below any
measurement's resolution, so a written file reads back to the computed values). Two-port data
follow the version 1.x order S11 S21 S12 S22 (Touchstone specification, IBIS Open Forum).
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import numpy as np

from ..errors import InputError, printable


def touchstone_text(
    frequency_hz: np.ndarray,
    s: np.ndarray,
    reference_impedance_ohm: float,
    comments: Sequence[str] = (),
) -> str:
    """The text of a Touchstone 1.x file.

    Parameters
    ----------
    frequency_hz : ndarray of float, shape (n,)
        Increasing frequencies, Hz.
    s : ndarray of complex, shape (p, p, n)
        S-parameters, p = 1 or 2.
    reference_impedance_ohm : float
        The one reference impedance of every port, Ω.
    comments : sequence of str
        Lines written as ``!`` comments before the option line.

    Examples
    --------
    >>> print(touchstone_text(np.array([1e9]), np.array([[[0.5 - 0.25j]]]), 50.0), end="")
    # Hz S RI R 50
    1000000000 0.5 -0.25
    """
    ports = s.shape[0]
    if s.shape[:2] != (ports, ports) or ports not in (1, 2) or s.shape[2] != frequency_hz.size:
        raise InputError("Touchstone output: S must have shape (p, p, n) with p = 1 or 2")
    # A comment is one line: a file name with a line break or control characters is escaped.
    lines = [f"! {printable(comment)}" for comment in comments]
    lines.append(f"# Hz S RI R {reference_impedance_ohm:.15g}")
    order = [(0, 0)] if ports == 1 else [(0, 0), (1, 0), (0, 1), (1, 1)]
    for index, frequency in enumerate(frequency_hz):
        numbers = [f"{frequency:.15g}"]
        for i, j in order:
            value = s[i, j, index]
            numbers += [f"{value.real:.15g}", f"{value.imag:.15g}"]
        lines.append(" ".join(numbers))
    return "\n".join(lines) + "\n"


def write_touchstone(
    path: str | Path,
    frequency_hz: np.ndarray,
    s: np.ndarray,
    reference_impedance_ohm: float,
    comments: Sequence[str] = (),
) -> None:
    """Write ``s`` (shape (p, p, n)) to ``path``, whose suffix must be ``.s<p>p``.

    Written whole through a temporary file and a rename, as every file the package writes
    (:func:`oneport.rendering.files.write_atomically`): a failure leaves an earlier file as it
    was.
    """
    ports = s.shape[0]
    wanted = f".s{ports}p"
    if Path(path).suffix.lower() != wanted:
        raise InputError(f"output {path}: a {ports}-port is written as a {wanted} file; name it so")
    text = touchstone_text(frequency_hz, s, reference_impedance_ohm, comments)
    # The one writer of the package; imported here so that reading circuits never needs it.
    from ..rendering.files import write_atomically

    write_atomically(Path(path), text.encode("ascii", "replace"))
