"""The per-variant table on disk: Parquet (pyarrow) by default, CSV on request for small runs.

Written whole through a temporary file and a rename (:mod:`oneport.rendering.files`). A table
of a run that stopped early (Ctrl-C, a refused variant, a bug) holds the finished variants and
says so: its ``complete`` column is false in every row, and a Parquet file's metadata gives
``oneport:variants_planned`` and ``oneport:variants_written``.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from ..analysis.variants import VERDICT_CODES
from ..errors import InputError, printable
from .files import write_through

#: Rows above which CSV is refused (Parquet holds them in a fraction of the space).
CSV_ROW_LIMIT = 200_000
#: The table formats, by suffix.
TABLE_SUFFIXES = (".parquet", ".csv")


def check_table(path: str | Path, variants: int, option: str = "--output") -> None:
    """A table target's format, before the run: ``.parquet``, or ``.csv`` for at most
    :data:`CSV_ROW_LIMIT` planned variants (a longer CSV is refused now, not after the run).

    Raises
    ------
    InputError
        One line naming the option, the path and what is accepted.
    """
    target = Path(path)
    suffix = target.suffix.lower()
    if suffix not in TABLE_SUFFIXES:
        raise InputError(
            f"{option} {printable(str(target))}: cannot write the table as"
            f" {printable(suffix) or 'a file without suffix'!r}; give a file name ending in"
            " .parquet or .csv"
        )
    if suffix == ".csv" and variants > CSV_ROW_LIMIT:
        raise InputError(
            f"{option} {printable(str(target))}: {variants:,} variants is too many rows for CSV"
            f" (limit {CSV_ROW_LIMIT:,}); write a .parquet table"
        )


def table_columns(
    table: dict[str, np.ndarray], planned: int | None = None
) -> dict[str, np.ndarray]:
    """The table as written: the verdict as a word beside its code, and whether the run that
    made it finished (``complete``; ``planned`` variants were asked for, None: all were run)."""
    columns = dict(table)
    if "verdict_code" in columns:
        columns = {
            "verdict": np.asarray(VERDICT_CODES, dtype=object)[table["verdict_code"]],
            **columns,
        }
    rows = len(next(iter(columns.values()))) if columns else 0
    columns["complete"] = np.full(rows, planned is None or rows >= planned)
    return columns


def write_table(table: dict[str, np.ndarray], path: str | Path, planned: int | None = None) -> Path:
    """Write the table; the format follows the suffix (``.parquet`` or ``.csv``).

    Parameters
    ----------
    table : dict of str to ndarray
        Column name → one value per finished variant.
    path : str or Path
        The target, already checked (:func:`oneport.rendering.files.check_targets`).
    planned : int, optional
        Variants the run was to have; fewer rows mark the table partial.
    """
    target = Path(path)
    columns = table_columns(table, planned)
    rows = len(next(iter(columns.values()))) if columns else 0
    suffix = target.suffix.lower()
    if suffix == ".parquet":
        import pyarrow as pa
        import pyarrow.parquet as pq

        arrow = pa.table({name: np.asarray(v) for name, v in columns.items()})
        arrow = arrow.replace_schema_metadata(
            {
                "oneport:variants_planned": str(rows if planned is None else planned),
                "oneport:variants_written": str(rows),
            }
        )
        write_through(target, lambda temporary: pq.write_table(arrow, temporary))
    elif suffix == ".csv":
        if rows > CSV_ROW_LIMIT:
            raise InputError(
                f"{target}: {rows} rows is too many for CSV (limit {CSV_ROW_LIMIT}); write .parquet"
            )

        def write_csv(temporary: Path) -> None:
            with temporary.open("w", newline="") as handle:
                writer = csv.writer(handle)
                writer.writerow(list(columns))
                writer.writerows(
                    zip(*(column.tolist() for column in columns.values()), strict=True)
                )

        write_through(target, write_csv)
    else:
        raise InputError(f"{target}: table files end in .parquet or .csv")
    return target
