"""The per-variant table on disk: Parquet (pyarrow) by default, CSV on request for small runs."""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from ..analysis.variants import VERDICT_CODES
from ..errors import InputError

#: Rows above which CSV is refused (Parquet holds them in a fraction of the space).
CSV_ROW_LIMIT = 200_000


def table_columns(table: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
    """The table as written: the verdict as a word beside its code."""
    columns = dict(table)
    if "verdict_code" in columns:
        columns = {
            "verdict": np.asarray(VERDICT_CODES, dtype=object)[table["verdict_code"]],
            **columns,
        }
    return columns


def write_table(table: dict[str, np.ndarray], path: str | Path) -> Path:
    """Write the table; the format follows the suffix (``.parquet`` or ``.csv``)."""
    target = Path(path)
    columns = table_columns(table)
    if not target.parent.exists():
        raise InputError(f"{target}: folder {target.parent} does not exist")
    suffix = target.suffix.lower()
    if suffix == ".parquet":
        import pyarrow as pa
        import pyarrow.parquet as pq

        pq.write_table(pa.table({name: np.asarray(v) for name, v in columns.items()}), target)
    elif suffix == ".csv":
        rows = len(next(iter(columns.values()))) if columns else 0
        if rows > CSV_ROW_LIMIT:
            raise InputError(
                f"{target}: {rows} rows is too many for CSV (limit {CSV_ROW_LIMIT}); write .parquet"
            )
        with target.open("w", newline="") as handle:
            writer = csv.writer(handle)
            writer.writerow(list(columns))
            writer.writerows(zip(*(column.tolist() for column in columns.values()), strict=True))
    else:
        raise InputError(f"{target}: table files end in .parquet or .csv")
    return target
