"""Complex quantities, tables and symbols for reading, shared by every text and HTML report.

Display only: values arrive in SI units (Ω, linear reflections) and leave as short strings in
the trade's notation: an impedance as R + jX ohm, a reflection as magnitude and angle. Tables
are aligned on their widest cell, so a wide number never breaks a column.

The symbols every report uses (docs/report.md): Γd, ΓL, L = Γd·ΓL, |L| ≥ 1, σ, ∠, °, ±, µ,
written in Unicode; resistance in ``ohm`` (as typed on the command line); numbers in ASCII
digits with a hyphen-minus, so they paste into scripts.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from ..units import format_plain, format_value


def format_impedance(value: complex) -> str:
    """An impedance as ``R + jX ohm``.

    Examples
    --------
    >>> format_impedance(complex(27.41, -36.72))
    '27.4 - j36.7 ohm'
    """
    sign = "-" if value.imag < 0 else "+"
    return f"{format_plain(value.real)} {sign} j{format_plain(abs(value.imag))} ohm"


def format_reflection(value: complex) -> str:
    """A reflection coefficient as magnitude and angle: ``0.352 ∠ 98.1°``.

    Examples
    --------
    >>> format_reflection(complex(0.0, -0.5))
    '0.5 ∠ -90°'
    """
    angle = math.degrees(math.atan2(value.imag, value.real))
    return f"{format_plain(abs(value))} ∠ {format_plain(angle)}°"


def format_component(value: float, unit: str) -> str:
    """A component value as the trade writes it: inductors in nH and capacitors in pF across
    their usual RF range (``0.864 nH``, ``2.7 pF``), anything else with an SI prefix.

    Examples
    --------
    >>> format_component(8.64e-10, "H"), format_component(2.7e-12, "F"), format_component(2e-6, "H")
    ('0.864 nH', '2.7 pF', '2 µH')
    """
    return format_value(value, unit)


def format_table(
    headings: Sequence[str],
    rows: Sequence[Sequence[str]],
    right: Sequence[int] = (),
    indent: str = "  ",
) -> list[str]:
    """Rows aligned under their headings, each column as wide as its widest cell.

    ``right`` lists the columns aligned right (numbers); the others are aligned left. The last
    column is not padded.

    Examples
    --------
    >>> for line in format_table(("at", "|L|"), [("1.648 GHz", "2.01 dB")], right=(0, 1)):
    ...     print(line)
             at      |L|
      1.648 GHz  2.01 dB
    """
    table = [list(headings), *[list(row) for row in rows]]
    widths = [max(len(row[column]) for row in table) for column in range(len(headings))]
    lines = []
    for row in table:
        cells = []
        for column, cell in enumerate(row):
            last = column == len(row) - 1
            if column in right:
                cells.append(cell.rjust(widths[column]))
            else:
                cells.append(cell if last else cell.ljust(widths[column]))
        lines.append((indent + "  ".join(cells)).rstrip())
    return lines
