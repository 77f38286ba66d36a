"""Touchstone blocks inside a circuit: reading their files and putting them on the grid.

Files are read with :func:`oneport.reading.touchstone.read_touchstone` (safe, strict: regular
files of bounded size only, with a port count the reader accepts). A block's data are
interpolated onto the analysis grid linearly in real and imaginary parts, inside the file's band
only: a grid that leaves the band is refused, never extrapolated.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import FileFormatError, InputError, printable
from ..reading.touchstone import Multiport, read_touchstone
from ..units import format_frequency

#: Grid points this close (relative) outside a block's band count as inside (rounding).
BAND_TOLERANCE = 1e-9


def read_block_file(path: str | Path, where: str) -> Multiport:
    """Read a block's Touchstone file; errors say which element asked for it.

    Parameters
    ----------
    path : str or Path
        The file, already resolved against the netlist's folder.
    where : str
        The asking element for messages, e.g. ``"amp.cir:7: N1"``.
    """
    try:
        return read_touchstone(path)
    except FileFormatError as error:
        raise InputError(f"{printable(where)}: {error}") from None


def interpolate_block(data: Multiport, frequency_hz: np.ndarray, where: str) -> np.ndarray:
    """The block's S-matrix on ``frequency_hz``, shape (p, p, 1, n), for stamping.

    Raises
    ------
    InputError
        When ``frequency_hz`` leaves the file's band.
    """
    low, high = float(data.frequency_hz[0]), float(data.frequency_hz[-1])
    slack = BAND_TOLERANCE * max(abs(high), 1.0)
    if frequency_hz.size and (frequency_hz[0] < low - slack or frequency_hz[-1] > high + slack):
        raise InputError(
            f"{where}: the analysis grid ({format_frequency(float(frequency_hz[0]))} to"
            f" {format_frequency(float(frequency_hz[-1]))}) leaves the band of"
            f" {printable(data.source)}"
            f" ({format_frequency(low)} to {format_frequency(high)}); a block is interpolated"
            " inside its band only, never extrapolated: keep the grid inside it"
        )
    clipped = np.clip(frequency_hz, low, high)
    ports = data.ports
    s = np.empty((ports, ports, 1, frequency_hz.size), dtype=complex)
    for i in range(ports):
        for j in range(ports):
            trace = data.s[i, j]
            if data.frequency_hz.size == 1:
                s[i, j, 0] = trace[0]
            else:
                real = np.interp(clipped, data.frequency_hz, trace.real)
                imaginary = np.interp(clipped, data.frequency_hz, trace.imag)
                s[i, j, 0] = real + 1j * imaginary
    return s
