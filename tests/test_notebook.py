"""Every product at home in a notebook: run headless through a real Jupyter kernel (nbclient),
each result shows HTML beside its one-line text, and a figure a cell returns shows as a PNG
even though nothing imported ``pyplot`` (CONVENTIONS.md, "Python API")."""

from __future__ import annotations

import shutil
from pathlib import Path
from typing import Any

import pytest

nbformat = pytest.importorskip("nbformat")
nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")

ROOT = Path(__file__).resolve().parents[1]

#: One cell per product: (name, code whose last line is the result, the result's class).
PRODUCTS = [
    (
        "check",
        "oneport.check('examples/oscillates/device.s1p', 'examples/oscillates/load.s1p',"
        " poles=True)",
        "CheckResult",
    ),
    (
        "bound",
        "oneport.check('examples/stable/device.s1p', load_return_loss_db='15dB')",
        "BoundResult",
    ),
    (
        "poles",
        "oneport.poles('examples/latch-up/device.s1p', 'examples/latch-up/load.ts')",
        "PoleZeroResult",
    ),
    (
        "amplifier",
        "oneport.amplifier('examples/stable/device.s1p', port_return_loss_db='20dB')",
        "AmplifierResult",
    ),
    (
        "oscillator",
        "oneport.oscillator('examples/oscillator/drive_levels.toml',"
        " 'examples/oscillator/load.s1p')",
        "OscillatorResult",
    ),
    (
        "sweep",
        "oneport.sweep('examples/stable/device.s1p', 'examples/circuits/series_load.cir',"
        " vary={'R': (1, 100, 5), 'L': ('0.5n', '8n', 3)})",
        "SweepResult",
    ),
    (
        "terminations",
        "oneport.terminations('examples/circuits/transistor.s2p', '10GHz')",
        "TerminationsResult",
    ),
    (
        "export",
        "oneport.export('examples/circuits/tunnel_diode.cir', 'diode.s1p',"
        " oneport.frequency_grid('1MHz', '6GHz', 201))",
        "ExportResult",
    ),
    (
        "stabilise",
        "oneport.stabilise('examples/oscillates/device.s1p', 'examples/oscillates/load.s1p',"
        " families=['series-resistor'])",
        "StabiliseResult",
    ),
    ("watch", "oneport.watch('examples/stable', 'examples/stable/load.s1p')", "WatchResult"),
]


@pytest.fixture(scope="module")
def executed(tmp_path_factory: pytest.TempPathFactory) -> Any:
    """The notebook, run once: a result cell and a ``.plot()`` cell per product."""
    folder = tmp_path_factory.mktemp("notebook")
    shutil.copytree(ROOT / "touchstone_examples", folder / "examples")
    cells = [
        nbformat.v4.new_code_cell(
            "import sys\nimport oneport\n"
            "assert 'matplotlib.pyplot' not in sys.modules and 'matplotlib' not in sys.modules"
        )
    ]
    for name, code, _ in PRODUCTS:
        cells.append(nbformat.v4.new_code_cell(f"{name} = {code}\n{name}"))
        cells.append(nbformat.v4.new_code_cell(f"{name}.plot()"))
    cells.append(nbformat.v4.new_code_cell("'matplotlib.pyplot' in sys.modules"))
    notebook = nbformat.v4.new_notebook(cells=cells)
    client = nbclient.NotebookClient(
        notebook, timeout=120, kernel_name="python3", resources={"metadata": {"path": folder}}
    )
    try:
        client.execute()
    except nbclient.exceptions.CellExecutionError:
        raise  # a product failed inside the kernel: a real failure
    except Exception as error:  # the kernel itself could not start here
        pytest.skip(f"no Jupyter kernel could be started: {error}")
    return notebook


def _result(cell: Any) -> dict[str, Any]:
    (output,) = [o for o in cell.outputs if o.output_type == "execute_result"]
    return dict(output["data"])


def test_every_result_shows_html_and_a_one_line_repr(executed: Any) -> None:
    cells = [c for c in executed.cells[1:] if not c.source.endswith(".plot()")]
    for (name, _, cls), cell in zip(PRODUCTS, cells, strict=False):
        data = _result(cell)
        text, page = data["text/plain"], data["text/html"]
        assert text.startswith(f"<{cls} ") and "\n" not in text and len(text) < 200, name
        assert page.startswith('<div class="oneport-result') and page.endswith("</div>"), name
        assert "<script" not in page, name
        # The safety cautions are always there (oneport's cautions.py).
        assert "<summary>Cautions</summary>" in page and "spectrum analyser" in page, name


def test_a_returned_figure_shows_as_an_image_without_pyplot(executed: Any) -> None:
    plots = [c for c in executed.cells if c.source.endswith(".plot()")]
    assert len(plots) == len(PRODUCTS)
    for cell in plots:
        data = _result(cell)
        assert "image/png" in data and data["text/plain"].startswith("<"), cell.source
    # The last cell: drawing never imported pyplot, so no backend was chosen for the user.
    assert _result(executed.cells[-1])["text/plain"] == "False"
