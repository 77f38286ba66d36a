"""Two-port termination analysis: stability circles, negative share, best termination, chart, CLI.

Outside references: scikit-rf's ``Network.stability_circle`` loci and ``Network.stability``
(Rollett's K, with the common-practice rule that K > 1 and |Δ| < 1 mean no passive termination
of either port gives the other a negative resistance), and a brute-force search over a grid of
passive terminations written in this file.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import numpy as np
import pytest
import skrf

from oneport.analysis.terminations import (
    analyse_terminations,
    negative_fraction,
    observed_gamma,
    stability_circle,
)
from oneport.circuit import multiport_from_circuit, parse_circuit
from oneport.circuit.blocks import interpolate_block
from oneport.cli import main
from oneport.reading.touchstone import Multiport, read_touchstone
from oneport.rendering.smith import termination_figure

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples" / "circuits"
TRANSISTOR = EXAMPLES / "transistor.s2p"


def _passive_grid(rings: int = 250) -> np.ndarray:
    """Equal-area polar grid of the unit disk."""
    radii = np.sqrt((np.arange(rings) + 0.5) / rings)
    angles = np.linspace(0, 2 * np.pi, 4 * rings, endpoint=False)
    return (radii[:, None] * np.exp(1j * angles[None, :])).ravel()


def _common_gate() -> Multiport:
    circuit = parse_circuit(
        f'N1 g d s file="{TRANSISTOR}"\nLg g 0 1.2n esr=0.4\n.twoport s d', source="common gate"
    )
    return multiport_from_circuit(circuit, read_touchstone(TRANSISTOR).frequency_hz)


@pytest.mark.parametrize("case", ["common source", "common gate"])
@pytest.mark.parametrize("terminated_port", [1, 2])
@pytest.mark.parametrize("frequency_hz", [1e9, 6e9, 14e9])
def test_against_a_brute_force_search(case: str, terminated_port: int, frequency_hz: float) -> None:
    data = read_touchstone(TRANSISTOR) if case == "common source" else _common_gate()
    result = analyse_terminations(data, frequency_hz, terminated_port=terminated_port)
    s = interpolate_block(data, np.array([frequency_hz]), "test")[:, :, 0, 0]
    # Brute force (this test): evaluate the observed port for every grid termination
    grid = _passive_grid()
    gamma = observed_gamma(s, grid, terminated_port - 1)
    negative = np.abs(gamma) > 1
    assert result.negative_fraction == pytest.approx(negative.mean(), abs=3e-3)
    circle = result.circle
    inside = np.abs(grid - circle.center) < circle.radius
    agree = np.mean(inside[negative] == circle.negative_inside) if negative.any() else 1.0
    assert agree == 1.0
    impedance = 50 * (1 + gamma) / (1 - gamma)
    if result.best.unbounded:
        assert abs(result.best.gamma) <= 1.0
        assert abs(observed_gamma(s, result.best.gamma, terminated_port - 1) - 1) < 1e-9
    else:
        best = result.best.observed_resistance_ohm
        assert best is not None
        assert best <= impedance.real.min() + 1e-9
        # the optimum is lossless: search the unit circle itself finely
        ring = np.exp(2j * np.pi * np.arange(100_000) / 100_000)
        on_ring = observed_gamma(s, ring, terminated_port - 1)
        ring_resistance = (50 * (1 + on_ring) / (1 - on_ring)).real
        assert best == pytest.approx(ring_resistance.min(), rel=1e-6)
        assert abs(result.best.gamma) == pytest.approx(1.0, abs=1e-9)  # lossless optimum


@pytest.mark.parametrize("target", [0, 1])
def test_circle_matches_scikit_rf_loci(target: int) -> None:
    data = read_touchstone(TRANSISTOR)
    network = skrf.Network(
        frequency=skrf.Frequency.from_f(data.frequency_hz, unit="Hz"),
        s=np.moveaxis(data.s, -1, 0),
        z0=50,
    )
    # scikit-rf: Network.stability_circle(target_port) gives points on each circle
    loci = network.stability_circle(target_port=target, npoints=31)
    center, radius, _ = stability_circle(data.s, target)
    distances = np.abs(loci - center[None, :])
    np.testing.assert_allclose(distances, np.broadcast_to(radius, distances.shape), rtol=1e-9)


def test_no_negative_terminations_exactly_when_unconditionally_stable() -> None:
    generator = np.random.default_rng(5)
    s = generator.uniform(-0.9, 0.9, (2, 2, 400)) + 1j * generator.uniform(-0.9, 0.9, (2, 2, 400))
    s[1, 0] *= generator.uniform(0.5, 4.0, 400)  # a range of forward gains
    network = skrf.Network(
        frequency=skrf.Frequency(1, 400, 400, unit="MHz"), s=np.moveaxis(s, -1, 0), z0=50
    )
    rollett = network.stability  # scikit-rf: Rollett's K
    delta = np.abs(s[0, 0] * s[1, 1] - s[0, 1] * s[1, 0])
    fractions = []
    for terminated in (0, 1):
        center, radius, inside = stability_circle(s, terminated)
        fractions.append(negative_fraction(s, terminated, center, radius, inside))
    none_negative = (fractions[0] < 1e-12) & (fractions[1] < 1e-12)
    clear = np.abs(rollett - 1) > 1e-6
    # common practice (Rollett): K > 1 and |Δ| < 1 ⇔ unconditionally stable
    np.testing.assert_array_equal(none_negative[clear], ((rollett > 1) & (delta < 1))[clear])


def test_degenerate_circle_is_sampled() -> None:
    # |S22| = |Δ| makes the boundary a straight line (Δ = 0.25 + 0.25 = 0.5 = |S22|)
    s = np.array([[0.5, 0.5], [-0.5, 0.5]], dtype=complex)[:, :, None]
    center, radius, inside = stability_circle(s, 1)
    assert not np.isfinite(radius[0])
    fraction = negative_fraction(s, 1, center, radius, inside)[0]
    brute = np.mean(np.abs(observed_gamma(s[:, :, 0], _passive_grid(), 1)) > 1)
    assert fraction == pytest.approx(brute, abs=5e-3)


@pytest.mark.parametrize("s11", [0.0, 0.6j, 3.0, -2.0 + 1.0j])
def test_an_uncoupled_port_sees_its_own_reflection_whatever_terminates_the_other(s11):
    # S21 = S12 = 0: Γ_o = S_oo for every termination (the formula above, common practice),
    # so the resistance is negative for all passive terminations or for none. A campaign case
    # (50 ohm to ground at port 1, 50 ohm ∥ 1 nH at port 2) was reported as 100 % negative
    # with "most negative resistance: 50 ohm", then failed on the termination's equivalent.
    s = np.array([[s11, 0.0], [0.0, 0.3 - 0.4j]], dtype=complex)[:, :, None]
    center, radius, inside = stability_circle(s, 1)
    fraction = negative_fraction(s, 1, center, radius, inside)[0]
    assert fraction == (1.0 if abs(s11) > 1 else 0.0)
    data = Multiport(
        frequency_hz=np.array([1e9, 2e9]),
        s=np.repeat(s, 2, axis=2),
        reference_impedance_ohm=np.array([50.0, 50.0]),
        source="uncoupled",
    )
    result = analyse_terminations(data, 1.5e9, terminated_port=2)
    assert not result.best.unbounded
    assert result.best.observed_impedance_ohm == pytest.approx(50 * (1 + s11) / (1 - s11))
    json.dumps(result.to_dict(), allow_nan=False)


def test_negative_side_agrees_with_brute_force_on_random_two_ports() -> None:
    # Random S, some with |S_oo| > 1 and some nearly uncoupled: the share of the unit disk
    # where |Γ_o| > 1, by the circle, equals a brute-force count on an equal-area grid.
    generator = np.random.default_rng(13)
    size = 300
    s = generator.normal(0, 0.8, (2, 2, size)) + 1j * generator.normal(0, 0.8, (2, 2, size))
    s[0, 1] *= np.where(np.arange(size) % 5 == 0, 1e-9, 1.0)
    grid = _passive_grid(120)
    for terminated in (0, 1):
        center, radius, inside = stability_circle(s, terminated)
        fraction = negative_fraction(s, terminated, center, radius, inside)
        brute = np.array(
            [np.mean(np.abs(observed_gamma(s[:, :, k], grid, terminated)) > 1) for k in range(size)]
        )
        assert np.max(np.abs(fraction - brute)) < 0.01


def test_chart_draws_the_result() -> None:
    figure = termination_figure(analyse_terminations(read_touchstone(TRANSISTOR), 8e9))
    gids = {artist.get_gid() for artist in figure.axes[0].get_children()}
    assert {"passive-boundary", "stability-circle", "negative-region", "best-termination"} <= gids


def _run(*arguments: str) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    return main(list(arguments), stdout=out, stderr=err), out.getvalue(), err.getvalue()


def test_command_text_json_and_chart(tmp_path: Path) -> None:
    code, out, err = _run("terminations", str(TRANSISTOR), "--at", "8GHz")
    assert (code, err) == (0, "")
    assert out.startswith("NEGATIVE RESISTANCE POSSIBLE at 8 GHz:")
    assert "most negative resistance: -11.2 ohm" in out and "1.17 nH inductor" in out
    assert "ZT = 0 + j" in out and " ∠ " in out, "R + jX ohm and |Γ| ∠ angle°"
    assert out.rstrip().endswith("do not replace them."), "the cautions last"
    chart = tmp_path / "chart.png"
    code, out, _ = _run(
        "terminations", str(TRANSISTOR), "--at", "8GHz", "--terminated-port", "1", "--json",
        "--plot", str(chart),
    )  # fmt: skip
    assert code == 0
    record = json.loads(out)
    assert record["schema"] == "oneport.terminations/2"
    assert record["verdict"] == "negative-resistance-possible"
    assert [entry["path"] for entry in record["inputs"]] == [str(TRANSISTOR)]
    assert (record["terminated_port"], record["observed_port"]) == (1, 2)
    at = record["at"]
    assert at["reference_impedance_ohm"] == 50.0 and at["negative_resistance_possible"]
    assert at["best_termination"]["observed_resistance_ohm"] == pytest.approx(-54.28, abs=0.01)
    assert record["negative_resistance_bands"] == [{"start_hz": 1e8, "stop_hz": 1.8e10}]
    assert chart.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_command_with_a_netlist(tmp_path: Path) -> None:
    netlist = tmp_path / "cg.cir"
    netlist.write_text(f'N1 g d s file="{TRANSISTOR}"\nLg g 0 1.2n esr=0.4\n.twoport s d\n')
    code, out, _ = _run(
        "terminations", str(netlist), "--at", "5GHz", "--start", "1GHz", "--stop", "10GHz",
        "--points", "91", "--quiet",
    )  # fmt: skip
    assert code == 0
    assert out.startswith("NEGATIVE RESISTANCE POSSIBLE at 5 GHz:")
    assert "without limit" in out


@pytest.mark.parametrize(
    ("arguments", "message"),
    [
        (["--at", "30GHz"], "30 GHz lies outside its data"),
        (["--at", "8GHz", "--start", "1GHz"], "apply to netlists"),
        (["--at", "8 parsecs"], "--at"),
    ],
)
def test_command_refusals(arguments: list[str], message: str) -> None:
    code, out, err = _run("terminations", str(TRANSISTOR), *arguments)
    assert code == 2 and out == "" and message in err and len(err.splitlines()) == 1


def test_netlist_needs_a_grid_and_two_ports(tmp_path: Path) -> None:
    netlist = tmp_path / "one.cir"
    netlist.write_text("R1 1 0 50\n.oneport 1\n")
    code, _, err = _run("terminations", str(netlist), "--at", "1GHz")
    assert code == 2 and "needs --start and --stop" in err
    code, _, err = _run(
        "terminations", str(netlist), "--at", "1GHz", "--start", "1GHz", "--stop", "2GHz"
    )
    assert code == 2 and "has 1 ports; the analysis needs a two-port" in err


def test_an_uncoupled_netlist_reads_no_negative_resistance(tmp_path: Path) -> None:
    # The campaign's netlist: port 1 is 50 ohm to ground, port 2 is 50 ohm ∥ 1 nH; nothing
    # couples them, so port 1 is 50 ohm whatever terminates port 2 (common practice).
    netlist = tmp_path / "apart.cir"
    netlist.write_text("R2 0 2 50\nR1 1 0 50\nL2 2 0 1n\n.twoport 1 2\n")
    grid = ("--start", "1GHz", "--stop", "3GHz", "--points", "21")
    code, out, err = _run("terminations", str(netlist), "--at", "2GHz", *grid)
    assert (code, err) == (0, "")
    assert out.startswith("NO NEGATIVE RESISTANCE at 2 GHz")
    assert "does not couple to port 1 here" in out
    assert "lowest resistance (positive): 50 ohm at port 1" in out
    code, out, _ = _run("terminations", str(netlist), "--at", "2GHz", *grid, "--json")
    best = json.loads(out)["at"]["best_termination"]
    assert best["equivalent"] == {"kind": "resistor", "resistance_ohm": 50.0}
