"""Plots: the artists drawn say what the result holds (markers, bands, labels, mapping)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import oneport
from oneport.rendering import check_plots as plots

EXAMPLES = Path(__file__).resolve().parent.parent / "touchstone_examples"


@pytest.fixture(scope="module")
def oscillating() -> oneport.CheckResult:
    """The shipped example with a band, a crossing beyond +1 and a predicted frequency."""
    return oneport.check(EXAMPLES / "oscillates/device.s1p", EXAMPLES / "oscillates/load.s1p")


@pytest.fixture(scope="module")
def resistive() -> oneport.CheckResult:
    """A 25 ohm device into 100 ohm in 50 ohm: gamma_device = -1/3, so 1/gamma_device = -3."""
    import skrf

    frequency = skrf.Frequency(0.1, 3.0, 31, unit="GHz")
    media = skrf.media.DefinedGammaZ0(frequency, z0=50)
    return oneport.check(media.resistor(25) ** media.short(), media.resistor(100) ** media.short())


def _with_gid(container, gid: str) -> list:
    return list(container.findobj(lambda artist: artist.get_gid() == gid))


def test_nyquist_marks_the_critical_point(oscillating):
    figure = plots.plot_nyquist(oscillating)
    (marker,) = _with_gid(figure, "critical-point")
    assert list(marker.get_xdata()) == [1.0]
    assert list(marker.get_ydata()) == [0.0]
    assert "critical point" in marker.get_label()
    assert _with_gid(figure, "frequency-arrow"), "arrows showing increasing frequency"


def test_nyquist_labels_each_crossing_with_its_frequency(oscillating):
    assert oscillating.crossings, "the example must cross beyond +1"
    figure = plots.plot_nyquist(oscillating)
    labels = _with_gid(figure, "crossing-label")
    assert len(labels) == len(oscillating.crossings)
    for label, crossing in zip(labels, oscillating.crossings, strict=True):
        assert f"{crossing.frequency_hz / 1e9:.4g} GHz" in label.get_text()
        assert label.xy == pytest.approx((crossing.loop_gain.real, crossing.loop_gain.imag))


def test_radius_compression_keeps_the_unit_circle_and_angles():
    angles = np.linspace(-np.pi, np.pi, 37)
    on_circle = plots.radius_compressed(np.exp(1j * angles))
    np.testing.assert_allclose(np.abs(on_circle), 1.0, rtol=1e-15)
    np.testing.assert_allclose(np.angle(on_circle), np.angle(np.exp(1j * angles)), atol=1e-15)
    assert plots.radius_compressed(np.array([1.0 + 0j]))[0] == pytest.approx(1.0)
    # log10(1 + r) / log10(2) at r = 3 and 7 is exactly 2 and 3 (arithmetic, from memory).
    np.testing.assert_allclose(np.abs(plots.radius_compressed(np.array([3.0, -7j]))), [2, 3])
    radii = np.abs(plots.radius_compressed(np.geomspace(1e-3, 1e3, 50)))
    assert np.all(np.diff(radii) > 0), "monotonic"


def test_compressed_nyquist_keeps_critical_point_and_unit_circle(oscillating):
    figure = plots.plot_nyquist(oscillating, compress_radius=True)
    (marker,) = _with_gid(figure, "critical-point")
    assert (marker.get_xdata()[0], marker.get_ydata()[0]) == (1.0, 0.0)
    (circle,) = _with_gid(figure, "unit-circle")
    np.testing.assert_allclose(np.hypot(circle.get_xdata(), circle.get_ydata()), 1.0)
    (label,) = _with_gid(figure, "crossing-label")
    expected = plots.radius_compressed(np.array([oscillating.crossings[0].loop_gain]))[0]
    assert label.xy == pytest.approx((expected.real, expected.imag))


def test_loop_gain_shades_bands_at_their_edges(oscillating):
    assert oscillating.bands
    figure = plots.plot_loop_gain(oscillating)
    magnitude_ax, phase_ax = figure.axes
    for panel in (magnitude_ax, phase_ax):
        patches = _with_gid(panel, "loop-gain-band")
        assert len(patches) == len(oscillating.bands)
        for patch, band in zip(patches, oscillating.bands, strict=True):
            # x-extent in the plotted unit (GHz); the right edge is x + width, equal to
            # within rounding of one addition.
            assert patch.get_x() == band.start_hz / 1e9
            right = patch.get_x() + patch.get_width()
            assert right == pytest.approx(band.stop_hz / 1e9, rel=1e-14)
        lines = _with_gid(panel, "oscillation-frequency")
        assert [line.get_xdata()[0] for line in lines] == pytest.approx(
            [f / 1e9 for f in oscillating.oscillation_frequencies_hz]
        )
    assert magnitude_ax.get_ylabel() == "|L| (dB)"
    assert phase_ax.get_ylabel() == "arg L (deg)"
    assert "Z0 = 50 ohm" in magnitude_ax.get_title()
    assert oscillating.verdict in magnitude_ax.get_title()


def test_loop_gain_log_frequency(oscillating):
    figure = plots.plot_loop_gain(oscillating, log_frequency=True)
    assert [panel.get_xscale() for panel in figure.axes] == ["log", "log"]


def test_given_axes_are_used(oscillating):
    from matplotlib.figure import Figure

    for draw in (plots.plot_nyquist, plots.plot_smith):
        figure = Figure()
        ax = figure.add_subplot()
        assert draw(oscillating, ax=ax) is figure
        assert figure.axes == [ax] and ax.lines
    figure = Figure()
    ax = figure.add_subplot()
    assert plots.plot_loop_gain(oscillating, ax=ax) is figure
    assert figure.axes[0] is ax and len(figure.axes) == 2, "phase panel appended below ax"
    figure = Figure()
    pair = (figure.add_subplot(211), figure.add_subplot(212))
    assert plots.plot_loop_gain(oscillating, ax=pair) is figure
    assert all(panel.lines for panel in pair) and len(figure.axes) == 2


def test_smith_view_extends_to_inverse_device_and_is_capped(resistive):
    np.testing.assert_allclose(1.0 / resistive.gamma_device, -3.0)  # (25 - 50)/(25 + 50) = -1/3
    figure = plots.plot_smith(resistive)
    (ax,) = figure.axes
    assert ax.get_xlim() == pytest.approx((-3.15, 3.15)), "radius 3 cap, 5 % room"
    (boundary,) = _with_gid(figure, "smith-boundary")
    assert boundary.get_radius() == 1.0
    (device,) = _with_gid(figure, "device-trace")
    np.testing.assert_allclose(device.get_xdata(), -3.0)
    figure = plots.plot_smith(resistive, max_radius=2.0)
    assert figure.axes[0].get_xlim() == pytest.approx((-2.1, 2.1))


def test_smith_view_stays_near_unit_circle_when_traces_are_inside(oscillating):
    figure = plots.plot_smith(oscillating)
    (load,) = _with_gid(figure, "load-trace")
    np.testing.assert_allclose(load.get_xdata(), oscillating.gamma_load.real)
    high = figure.axes[0].get_xlim()[1]
    largest = max(np.abs(oscillating.gamma_load).max(), np.abs(1 / oscillating.gamma_device).max())
    assert high == pytest.approx(1.05 * float(np.clip(1.05 * largest, 1.05, 3.0)))


@pytest.mark.parametrize(("name", "signature"), [("quick.png", b"\x89PNG"), ("quick.SVG", b"<svg")])
def test_save_plots_writes_png_and_svg(oscillating, tmp_path, name, signature):
    path = plots.save_plots(oscillating, tmp_path / name)
    content = path.read_bytes()
    assert len(content) > 10_000
    assert signature in content[:2000]
    assert [p.name for p in tmp_path.iterdir()] == [name], "no temporary file left behind"


def test_save_plots_refuses_other_formats(oscillating, tmp_path):
    with pytest.raises(oneport.InputError, match=r"quick\.pdf.*\.png or \.svg") as caught:
        plots.save_plots(oscillating, tmp_path / "quick.pdf")
    assert "\n" not in str(caught.value)
    assert not (tmp_path / "quick.pdf").exists()
    with pytest.raises(oneport.InputError, match="cannot be written"):
        plots.save_plots(oscillating, tmp_path / "missing-folder" / "quick.png")


def test_importing_the_rendering_modules_does_not_import_matplotlib():
    code = (
        "import sys, oneport, oneport.rendering.check_plots, oneport.rendering.report,"
        " oneport.products.watch, oneport.cli;"
        " print('matplotlib' in sys.modules)"
    )
    output = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True
    ).stdout
    assert output.strip() == "False"


def test_atomic_write_leaves_no_temporary_file_when_it_fails(tmp_path):
    (tmp_path / "taken.png").mkdir()
    with pytest.raises(oneport.InputError, match=r"taken\.png: cannot be written"):
        plots.write_atomically(tmp_path / "taken.png", b"picture")
    assert [path.name for path in tmp_path.iterdir()] == ["taken.png"]
    plots.write_atomically(tmp_path / "fresh.png", b"picture")
    assert (tmp_path / "fresh.png").read_bytes() == b"picture"


# --- pictures a bench engineer reads at a glance (artists inspected by gid, not pixels) ------


def _drawn(figure):
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    FigureCanvasAgg(figure).draw()
    return figure


def _overlap(first, second) -> float:
    width = min(first.x1, second.x1) - max(first.x0, second.x0)
    height = min(first.y1, second.y1) - max(first.y0, second.y0)
    return max(width, 0.0) * max(height, 0.0)


def test_smith_chart_marks_frequencies_along_both_traces_and_says_z0_once(oscillating):
    figure = plots.plot_smith(oscillating)
    labels = _with_gid(figure, "smith-frequency-label")
    marks = _with_gid(figure, "smith-frequency-mark")
    (load,) = _with_gid(figure, "load-trace")
    (device,) = _with_gid(figure, "device-trace")
    colours = {mark.get_color() for mark in marks}
    assert colours == {load.get_color(), device.get_color()}, "marks on both traces"
    low, high = oscillating.frequency_range_hz
    for label in labels:
        number, unit = label.get_text().split()
        value = float(number) * {"GHz": 1e9, "MHz": 1e6}[unit]
        assert low < value < high
    assert len(labels) == len(marks) >= 6
    texts = [t.get_text() for t in figure.findobj(lambda a: hasattr(a, "get_text"))]
    assert sum(text.count("Z0") for text in texts) == 1


def test_compressed_nyquist_axes_carry_the_true_scale(oscillating):
    figure = plots.plot_nyquist(oscillating, compress_radius=True)
    ax = figure.axes[0]
    ticks = _with_gid(figure, "compressed-tick")
    assert ticks, "tick labels of the true scale"
    labels = [t.get_text() for t in ax.xaxis.get_ticklabels()]
    positions = dict(zip(labels, ax.get_xticks(), strict=True))
    # True Re L = -2 sits at the compressed radius log10(1 + 2)/log10(2) = 1.585 on the left.
    assert positions["\N{MINUS SIGN}2"] == pytest.approx(-np.log10(3.0) / np.log10(2.0))
    assert positions["1"] == pytest.approx(1.0) and positions["0.5"] == pytest.approx(
        np.log10(1.5) / np.log10(2.0)
    )
    assert "compressed" in ax.get_xlabel()
    assert _with_gid(figure, "compressed-ring"), "dotted rings at true |L|"
    plain = plots.plot_nyquist(oscillating).axes[0]
    assert "compressed" not in plain.get_xlabel() and not _with_gid(plain, "compressed-tick")


@pytest.mark.parametrize("draw", ["quick-look", "nyquist", "smith", "loop-gain"])
def test_legends_sit_outside_the_data_areas(oscillating, draw):
    figure = {
        "quick-look": plots.quick_look_figure,
        "nyquist": plots.plot_nyquist,
        "smith": plots.plot_smith,
        "loop-gain": plots.plot_loop_gain,
    }[draw](oscillating)
    _drawn(figure)
    legends = _with_gid(figure, "legend")
    assert legends
    page = figure.bbox
    for legend in legends:
        box = legend.get_window_extent()
        for ax in figure.axes:
            assert _overlap(box, ax.get_window_extent()) == 0.0, (draw, ax.get_title())
        # and on the page: a legend cut at the figure's edge loses its numbers' units
        assert page.x0 <= box.x0 and box.x1 <= page.x1, (draw, "legend cut at the side")
        assert page.y0 <= box.y0 and box.y1 <= page.y1, (draw, "legend cut at the top or bottom")


def test_sweep_map_names_its_axes_with_units_and_the_boundary_stands_out(tmp_path):
    from matplotlib import colormaps, colors

    from oneport.products.sweep.plan import grid_plan
    from oneport.products.sweep.runner import run_sweep
    from oneport.products.sweep.sources import prepare_sweep
    from oneport.products.sweep.summary import summarise
    from oneport.rendering.sweep_plots import plot_sweep

    prepared = prepare_sweep(
        [str(EXAMPLES / "stable/device.s1p")], str(EXAMPLES / "circuits/series_load.cir")
    )
    plan = grid_plan([("R", 1.0, 100.0, 9), ("L", 0.5e-9, 8e-9, 9)])
    source = prepared.source
    result = run_sweep(plan, source, source.frequency_hz, source.reference_impedance_ohm)
    figure = _drawn(plot_sweep(result, summary=summarise(result, source)))
    ax = figure.axes[0]
    assert (ax.get_xlabel(), ax.get_ylabel()) == ("L (nH)", "R (ohm)")
    assert ax.xaxis.get_offset_text().get_text() == "" and max(ax.get_xlim()) < 10
    assert "Z0 = 50 ohm" in ax.get_title()
    (boundary,) = _with_gid(figure, "stability-boundary")
    edge = colors.to_rgb(boundary.get_edgecolor()[0])
    centre = colors.to_rgb(colormaps["PuOr"](0.5))
    assert np.linalg.norm(np.subtract(edge, centre)) > 1.0, "the boundary is not the map's zero"
