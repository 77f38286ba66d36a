"""Helpers shared by the test modules: the command line in-process, one-ports, Touchstone files.

Imported as a plain module (``from helpers import ...``): pytest's default ``prepend`` import
mode puts this folder on ``sys.path`` for the test files beside it.
"""

from __future__ import annotations

import contextlib
import io
import signal
from collections.abc import Iterator
from pathlib import Path

import numpy as np
from hypothesis import strategies as st

from oneport import OnePort
from oneport.cli import main

#: Reference impedance the tests measure in unless they say otherwise, Ω.
Z0 = 50.0
#: The line-level damage :func:`mutate_lines` can do to a text file.
LINE_MUTATIONS = ("drop", "duplicate", "truncate", "garble", "swap", "insert")


def run_cli(*argv: str | Path) -> tuple[int, str, str]:
    """Run ``oneport`` in-process, as ``oneport ARGV...`` would from a shell.

    Parameters
    ----------
    *argv : str or Path
        The arguments after the program name; paths are passed as strings.

    Returns
    -------
    tuple of (int, str, str)
        The exit code, everything written to stdout and everything written to stderr.

    Examples
    --------
    >>> code, out, err = run_cli("check", "no-such-device.s1p", "--load", "no-such-load.s1p")
    >>> code, out, err.strip()
    (2, '', 'oneport: no-such-device.s1p: no such file')
    """
    out, err = io.StringIO(), io.StringIO()
    code = main([str(argument) for argument in argv], stdout=out, stderr=err)
    return int(code), out.getvalue(), err.getvalue()


@contextlib.contextmanager
def deadline(seconds: int) -> Iterator[None]:
    """Fail, instead of hanging, when the body takes longer than ``seconds`` (POSIX alarm).

    For tests of inputs that could block (a FIFO opened for reading waits for a writer).
    """

    def expire(signum: int, frame: object) -> None:
        raise TimeoutError(f"blocked for more than {seconds} s")

    previous = signal.signal(signal.SIGALRM, expire)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)


def gamma_of(impedance_ohm: np.ndarray, reference_ohm: float = Z0) -> np.ndarray:
    """Γ = (Z − R)/(Z + R) of impedances against a real reference (common practice).

    Parameters
    ----------
    impedance_ohm : array_like of complex
        Z, Ω.
    reference_ohm : float
        R, Ω.

    Returns
    -------
    ndarray of complex
        The reflection coefficients, same shape as ``impedance_ohm``.

    Examples
    --------
    >>> complex(gamma_of(150.0))
    (0.5+0j)
    """
    impedance_ohm = np.asarray(impedance_ohm, dtype=complex)
    return (impedance_ohm - reference_ohm) / (impedance_ohm + reference_ohm)


def one_port(
    frequency_hz: np.ndarray,
    gamma: np.ndarray | complex,
    source: str = "port",
    reference_ohm: float = Z0,
) -> OnePort:
    """An in-memory one-port; a scalar ``gamma`` is repeated at every frequency.

    Parameters
    ----------
    frequency_hz : array_like of float
        Grid, Hz.
    gamma : array_like of complex or complex
        Reflection coefficient, on the grid or one value for all of it.
    source : str
        The one-port's ``source`` (a description: no file is read).
    reference_ohm : float
        Reference impedance of ``gamma``, Ω.

    Returns
    -------
    OnePort
        With its own copy of ``gamma`` as complex.

    Examples
    --------
    >>> one_port([1e9, 2e9], 0.5).gamma.tolist()
    [(0.5+0j), (0.5+0j)]
    """
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    gamma = np.broadcast_to(np.asarray(gamma, dtype=complex), frequency_hz.shape).copy()
    return OnePort(
        frequency_hz=frequency_hz,
        gamma=gamma,
        reference_impedance_ohm=float(reference_ohm),
        source=source,
    )


def write_touchstone(
    path: Path,
    frequency_hz: np.ndarray,
    s: np.ndarray,
    reference_ohm: float = Z0,
    unit: str = "Hz",
) -> Path:
    """Write a Touchstone 1.x file of S-parameters, RI format, every float in full precision.

    Parameters
    ----------
    path : Path
        File to write (overwritten).
    frequency_hz : ndarray of float, shape (n,)
        Grid, Hz; written in ``unit``.
    s : ndarray of complex, shape (n,) or (2, 2, n)
        A one-port's Γ, or a two-port's S written in the Touchstone 1.x two-port order
        N11 N21 N12 N22 (Touchstone specification).
    reference_ohm : float
        The option line's ``R``, Ω.
    unit : {"Hz", "kHz", "MHz", "GHz"}
        Frequency unit of the file.

    Returns
    -------
    Path
        ``path``.
    """
    scale = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}[unit]
    s = np.asarray(s, dtype=complex)
    columns = [s] if s.ndim == 1 else [s[0, 0], s[1, 0], s[0, 1], s[1, 1]]
    lines = ["! invented test data", f"# {unit} S RI R {float(reference_ohm)!r}"]
    for index, frequency in enumerate(np.asarray(frequency_hz, dtype=float)):
        values = " ".join(f"{float(c[index].real)!r} {float(c[index].imag)!r}" for c in columns)
        lines.append(f"{float(frequency) / scale!r} {values}")
    path.write_text("\n".join(lines) + "\n", encoding="ascii")
    return path


def mutate_lines(
    draw: st.DrawFn,
    lines: list[str],
    mutations: int,
    alphabet: str,
    operations: tuple[str, ...] = LINE_MUTATIONS,
) -> tuple[list[str], list[tuple[int, bytes]]]:
    """Damage the lines of a text file at random, for hypothesis fuzzing of the readers.

    Each mutation picks a line and one of ``operations``: drop it, duplicate it, truncate it,
    garble a few characters (from ``alphabet``), swap it with another, insert a garbage line
    before it, or (``"bytes"``) note raw bytes to insert at a random offset of the encoded file.

    Parameters
    ----------
    draw : hypothesis.strategies.DrawFn
        The ``draw`` of the calling composite strategy.
    lines : list of str
        The file's lines (not changed).
    mutations : int
        How many mutations to make.
    alphabet : str
        Characters garbage is drawn from.
    operations : tuple of str
        The mutations allowed, from :data:`LINE_MUTATIONS` and ``"bytes"``.

    Returns
    -------
    tuple of (list of str, list of (int, bytes))
        The damaged lines, and the ``(offset, bytes)`` insertions still to make in the encoded
        file (the offset to be taken modulo its length + 1).
    """
    lines = list(lines)
    inserted: list[tuple[int, bytes]] = []
    for _ in range(mutations):
        if not lines:
            lines.append(draw(st.text(alphabet, max_size=20)))
            continue
        index = draw(st.integers(0, len(lines) - 1))
        operation = draw(st.sampled_from(operations))
        line = lines[index]
        if operation == "drop":
            del lines[index]
        elif operation == "duplicate":
            lines.insert(index, line)
        elif operation == "truncate":
            lines[index] = line[: draw(st.integers(0, len(line)))]
        elif operation == "garble":
            position = draw(st.integers(0, len(line)))
            replacement = draw(st.text(alphabet, min_size=1, max_size=3))
            lines[index] = line[:position] + replacement + line[position + 1 :]
        elif operation == "swap":
            other = draw(st.integers(0, len(lines) - 1))
            lines[index], lines[other] = lines[other], lines[index]
        elif operation == "insert":
            lines.insert(index, draw(st.text(alphabet, max_size=30)))
        else:
            inserted.append((draw(st.integers(0, 10_000)), draw(st.binary(min_size=1, max_size=4))))
    return lines, inserted
