"""``oneport sweep --workers 2``: two local worker processes give the in-process table, and
start and stop without a line on stderr (no worker traceback at shutdown)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples"


def test_two_workers_write_the_in_process_table_and_nothing_on_stderr(tmp_path: Path) -> None:
    pytest.importorskip("distributed")
    parquet = pytest.importorskip("pyarrow.parquet")
    arguments = [
        sys.executable,
        "-m",
        "oneport",
        "sweep",
        str(EXAMPLES / "stable" / "device.s1p"),
        "--load",
        str(EXAMPLES / "circuits" / "series_load.cir"),
        "--tolerance",
        "R=20%",
        "--tolerance",
        "L=10%",
        "--samples",
        "600",
        "--chunk-size",
        "100",
        "--quiet",
    ]
    here = subprocess.run(
        [*arguments, "-o", str(tmp_path / "here.parquet")], capture_output=True, text=True
    )
    workers = subprocess.run(
        [*arguments, "-o", str(tmp_path / "workers.parquet"), "--workers", "2"],
        capture_output=True,
        text=True,
    )
    assert here.returncode == workers.returncode and here.returncode in (0, 3, 4)
    assert workers.stderr == "" and here.stderr == ""
    assert workers.stdout == here.stdout
    here_table = parquet.read_table(tmp_path / "here.parquet").to_pydict()
    workers_table = parquet.read_table(tmp_path / "workers.parquet").to_pydict()
    assert list(workers_table) == list(here_table)
    for name, column in here_table.items():  # NaN (no oscillation frequency) equals NaN here
        np.testing.assert_array_equal(np.asarray(workers_table[name]), np.asarray(column))
