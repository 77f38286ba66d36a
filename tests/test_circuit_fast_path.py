"""The circuit engine's fast paths against elimination and against references outside it.

The closed form now takes lines (their input impedance with the far end terminated) and
one- and two-port Touchstone blocks; elimination stores only the coefficients it needs and
pivots on the diagonal, with row exchanges only where a pivot is small. Every path must give
the answer of the others (to 1e-12) and of the references named beside each check: scikit-rf
media and networks, numpy.linalg.solve on nodal matrices written here, a textbook ABCD cascade.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import skrf

from oneport.circuit import Circuit, parse_circuit, solver
from oneport.errors import InputError
from oneport.reading.touchstone import read_touchstone

from helpers import run_cli

EXAMPLES = Path(__file__).resolve().parents[1] / "touchstone_examples"
TRANSISTOR = EXAMPLES / "circuits" / "transistor.s2p"
Z0 = 50.0
C_LIGHT = 299_792_458.0


def _both_paths(circuit: Circuit, frequency_hz: np.ndarray, **params: object) -> np.ndarray:
    """Γ by the closed form, checked equal to elimination's to 1e-12."""
    closed = circuit.evaluate(frequency_hz, Z0, params)
    eliminated = circuit.evaluate(frequency_hz, Z0, params, method="elimination")
    np.testing.assert_allclose(closed, eliminated, rtol=0, atol=1e-12)
    return closed[..., 0, 0, :]


def test_the_sweep_benchmark_load_takes_the_closed_form_and_matches_scikit_rf() -> None:
    frequency_hz = np.geomspace(10e6, 20e9, 401)
    circuit = parse_circuit(
        ".set L=5n C=1p\nL1 1 2 L\nC1 2 0 C\nT1 2 0 3 0 z0=50 len=10m eeff=3 loss=0.2 at=1g\n"
        "R1 3 0 300\nC2 3 4 10p\nR2 4 0 50\n.oneport 1",
        source="line load",
    )
    assert circuit.is_series_parallel
    inductance = np.array([1e-9, 5e-9, 20e-9])
    gamma = _both_paths(circuit, frequency_hz, L=inductance)
    # scikit-rf: media elements cascaded with **; the line as DefinedGammaZ0 with the same
    # γ = α + jβ (α from 0.2 dB at 1 GHz scaling as √f, over 1 cm)
    frequency = skrf.Frequency.from_f(frequency_hz, unit="Hz")
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    alpha = 0.2 * np.log(10) / 20 * np.sqrt(frequency_hz / 1e9) / 0.01
    beta = 2 * np.pi * frequency_hz * np.sqrt(3.0) / C_LIGHT
    line = skrf.media.DefinedGammaZ0(frequency, z0_port=Z0, z0=50.0, gamma=alpha + 1j * beta)
    for row, value in enumerate(inductance):
        reference = (
            media.inductor(value)
            ** media.shunt_capacitor(1e-12)
            ** line.line(0.01, unit="m")
            ** media.shunt(media.resistor(300) ** media.short())
            ** media.capacitor(10e-12)
            ** media.resistor(50)
            ** media.short()
        )
        np.testing.assert_allclose(gamma[row], reference.s[:, 0, 0], rtol=0, atol=1e-12)


def test_open_and_shorted_stubs_and_lines_not_to_ground() -> None:
    frequency_hz = np.linspace(0.0, 12e9, 301)  # 0 Hz included: the stubs' DC limits
    stubs = parse_circuit(
        "T1 1 0 2 0 z0=35 delay=70p loss=1 at=5g\nT2 2 0 3 0 z0=70 delay=40p\n"
        "T3 2 0 0 0 z0=20 delay=15p\nR1 2 4 60\nT4 4 5 6 5 z0=90 delay=25p\nR2 6 5 120\n"
        "C1 5 0 2p\n.oneport 1",
        source="stubs",
    )
    _both_paths(stubs, frequency_hz)
    # A line whose far side is wired elsewhere (node 3 also to ground through C1) is no
    # terminated section; elimination answers alone, with the same results.
    wired = parse_circuit(
        "T1 1 0 2 3 z0=60 len=50m\nR1 2 3 80\nC1 3 0 1p\n.oneport 1", source="wired"
    )
    assert not wired.is_series_parallel


@pytest.mark.parametrize("input_port", [1, 2])
def test_two_port_block_ended_by_a_load_matches_scikit_rf(input_port: int) -> None:
    data = read_touchstone(TRANSISTOR)
    frequency = skrf.Frequency.from_f(data.frequency_hz, unit="Hz")
    transistor = skrf.Network(frequency=frequency, s=np.moveaxis(data.s, -1, 0), z0=Z0)
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    load = media.resistor(30) ** media.inductor(1e-9) ** media.short()
    if input_port == 2:
        transistor = transistor.flipped()
    nodes = "1 2" if input_port == 1 else "2 1"
    circuit = parse_circuit(
        f'N1 {nodes} file="{TRANSISTOR}"\nR1 2 3 30\nL1 3 0 1n\n.oneport 1', source="block"
    )
    assert circuit.is_series_parallel
    # scikit-rf: the two-port's far port terminated by the load with **
    expected = (transistor**load).s[:, 0, 0]
    np.testing.assert_allclose(_both_paths(circuit, data.frequency_hz), expected, atol=1e-12)


def test_one_port_block_in_series_matches_scikit_rf() -> None:
    path = EXAMPLES / "stable" / "load.s1p"
    data = read_touchstone(path)
    frequency = skrf.Frequency.from_f(data.frequency_hz, unit="Hz")
    block = skrf.Network(
        frequency=frequency, s=np.moveaxis(data.s, -1, 0), z0=data.reference_impedance_ohm
    )
    media = skrf.media.DefinedGammaZ0(frequency, z0=Z0)
    circuit = parse_circuit(f'R1 1 2 12\nN1 2 file="{path}"\n.oneport 1', source="one-port block")
    assert circuit.is_series_parallel
    # scikit-rf: a series resistor cascaded with the one-port network
    expected = (media.resistor(12) ** block).s[:, 0, 0]
    np.testing.assert_allclose(_both_paths(circuit, data.frequency_hz), expected, atol=1e-12)


def _lc_ladder(sections: int) -> str:
    lines = [
        f"L{k} n{k} n{k + 1} {1e-9 * (1 + k % 3)}\nC{k} n{k + 1} 0 {1e-12 * (1 + k % 5)}"
        for k in range(sections)
    ]
    return "\n".join(lines) + f"\nR0 n{sections} 0 50\n.oneport n0"


def test_a_ladder_of_thousands_of_elements_reduces_without_recursion() -> None:
    sections = 800  # 1,601 elements: deeper than Python's recursion limit
    circuit = parse_circuit(_lc_ladder(sections), source="long ladder")
    assert circuit.is_series_parallel
    frequency_hz = np.geomspace(1e6, 2e9, 201)
    gamma = circuit.gamma(frequency_hz, Z0)
    # Elimination agrees to what 800 lossless sections in the pass band allow in double
    # precision (it did so before the closed form took lines too: about 1.7e-10).
    eliminated = circuit.evaluate(frequency_hz, Z0, {}, method="elimination")[0, 0]
    np.testing.assert_allclose(gamma, eliminated, rtol=0, atol=1e-9)
    # ABCD cascade of series Z and shunt Y sections (textbook two-port algebra, e.g. Pozar,
    # Microwave Engineering, table 4.1; from memory), ended by 50 ohm
    s = 2j * np.pi * frequency_hz
    a, b, c, d = (np.ones_like(s), np.zeros_like(s), np.zeros_like(s), np.ones_like(s))
    for k in range(sections):
        z, y = s * 1e-9 * (1 + k % 3), s * 1e-12 * (1 + k % 5)
        a, b, c, d = a + b * 0, a * z + b, c, c * z + d  # series Z
        a, b, c, d = a + b * y, b, c + d * y, d  # shunt Y
    impedance = (a * 50 + b) / (c * 50 + d)
    np.testing.assert_allclose(gamma, (impedance - Z0) / (impedance + Z0), rtol=0, atol=1e-12)


def _mesh(side: int) -> tuple[str, list[tuple[str, str, float]]]:
    """A resistor mesh between corner p and the far corner (ground)."""

    def name(i: int, j: int) -> str:
        return "p" if (i, j) == (0, 0) else "0" if (i, j) == (side - 1, side - 1) else f"n{i}_{j}"

    resistors = []
    for i in range(side):
        for j in range(side):
            if i + 1 < side:
                resistors.append((name(i, j), name(i + 1, j), 10.0 + len(resistors) % 7))
            if j + 1 < side:
                resistors.append((name(i, j), name(i, j + 1), 10.0 + len(resistors) % 5))
    text = "\n".join(f"R{k} {a} {b} {r}" for k, (a, b, r) in enumerate(resistors))
    return text + "\n.oneport p", resistors


def test_mesh_by_sparse_elimination_matches_numpy_solve() -> None:
    text, resistors = _mesh(9)
    circuit = parse_circuit(text, source="mesh")
    assert not circuit.is_series_parallel
    gamma = circuit.gamma(np.array([1e6, 1e9]))
    # numpy.linalg.solve on the nodal matrix written here: a unit current into p
    nodes = sorted({n for a, b, _ in resistors for n in (a, b)} - {"0"})
    where = {node: i for i, node in enumerate(nodes)}
    matrix = np.zeros((len(nodes), len(nodes)))
    for a, b, r in resistors:
        for x, y in ((a, a), (b, b)):
            if x != "0":
                matrix[where[x], where[y]] += 1 / r
        if "0" not in (a, b):
            matrix[where[a], where[b]] -= 1 / r
            matrix[where[b], where[a]] -= 1 / r
    current = np.zeros(len(nodes))
    current[where["p"]] = 1.0
    impedance = np.linalg.solve(matrix, current)[where["p"]]
    np.testing.assert_allclose(gamma, (impedance - Z0) / (impedance + Z0), rtol=0, atol=1e-12)


def test_row_exchanges_where_pivots_are_small_give_the_same_answer(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    # A bridge with a transconductance and an op-amp: every point once by diagonal pivots
    # (exchanges only where needed), once with every point sent to row exchanges.
    netlist = (
        ".set GM=40m\nR1 1 2 20\nR2 1 3 75\nC3 2 3 0.5p\nL4 2 4 4n\nR5 3 0 33\nG1 4 0 2 0 GM\n"
        "R6 4 0 200\nC7 4 3 0.3p\n.opamp O1 5 3 6 gbw=2g\nR8 6 5 1k\nR9 6 0 1k\n"
        "R10 5 1 5k\n.oneport 1"
    )
    circuit = parse_circuit(netlist, source="bridge")
    frequency_hz = np.linspace(1e6, 12e9, 401)
    gm = np.linspace(-0.2, 0.2, 7)
    default = circuit.gamma(frequency_hz, Z0, GM=gm)
    monkeypatch.setattr(solver, "GROWTH_LIMIT", 0.0)
    exchanged = circuit.gamma(frequency_hz, Z0, GM=gm)
    np.testing.assert_allclose(default, exchanged, rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize(
    ("netlist", "message"),
    [
        ("L1 1 0 1e308\nR1 1 0 50", "L1: inductance = 1e+308 H; it must be"),
        ("L1 2 0 1e-320\nR1 1 2 50", "L1: inductance = 9.99989e-321 H"),
        # Just beyond the bound: the value is shown with the digits that break the rule.
        ("L1 1 0 1000.0000000005\nR1 1 0 50", "inductance = 1000.0000000005 H; it must be 0 or"),
        ("T1 1 0 0 0 z0=50 delay=1e300", "T1: delay = 1e+300 s; it must be from 0 to 0.001 s"),
        ("L1 1 0 0 q=30\nR1 1 0 50", "q= needs a nonzero inductance"),
        ("T1 1 0 2 0 z0=50 delay=1n loss=1e300 at=1g\nR1 2 0 50", "loss = 1e+300 dB"),
        ("T1 1 0 2 0 z0=50 len=1e9\nR1 2 0 50", "len = 1e+09 m"),
        ("T1 1 0 2 0 z0=50 len=100k eeff=100\nR1 2 0 50", "delay len·√eeff/c must be at most"),
    ],
)
def test_extreme_values_are_refused_in_one_line(netlist: str, message: str, tmp_path: Path) -> None:
    path = tmp_path / "extreme.cir"
    path.write_text(netlist + "\n.oneport 1\n")
    code, out, err = run_cli(
        "export", path, "--start", "1MHz", "--stop", "1GHz", "-o", tmp_path / "out.s1p"
    )
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and message in err and f"{path}:1:" in err
    assert not (tmp_path / "out.s1p").exists()


def test_swept_parameters_outside_the_bounds_name_the_parameter_set() -> None:
    circuit = parse_circuit(".set L=1n\nL1 1 0 L\nR1 1 0 50\n.oneport 1", source="swept")
    with pytest.raises(InputError, match=r"L1: inductance = 1e\+09 H \(parameter set \(1,\)"):
        circuit.gamma([1e9], Z0, L=[1e-9, 1e9])


def test_a_point_without_a_finite_answer_names_the_element() -> None:
    # Within the bounds, but a grid at 1e306 Hz makes 1/(jωC) of 1 kF underflow and the
    # transconductance's node unsolvable: no NaN or inf may come back.
    circuit = parse_circuit("G1 1 0 1 0 1e6\nC1 1 0 1000\nR1 1 0 1e-12\n.oneport 1", source="x")
    for method in ("auto", "elimination"):
        with pytest.raises(
            InputError, match=r"x: C1 \(line 2\) has no finite value at 1e\+297 GHz"
        ):
            circuit.evaluate(np.array([1.0, 1e306]), Z0, {}, method=method)


def test_a_line_of_absurd_delay_is_refused_before_any_json_is_written(tmp_path: Path) -> None:
    # Issue reproducer: `T1 1 0 0 0 z0=50 delay=1e300` once gave NaN in --json (invalid JSON).
    load = tmp_path / "stub.cir"
    load.write_text("T1 1 0 0 0 z0=50 delay=1e300\n.oneport 1\n")
    device = EXAMPLES / "stable" / "device.s1p"
    code, out, err = run_cli("check", device, "--load", load, "--json")
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and "T1: delay = 1e+300 s" in err


def _random_load(generator: np.random.Generator) -> str:
    """A random cascade of series and shunt R, L, C, lines, open and shorted stubs, ended by
    a resistor, sometimes bridged by one more resistor (then elimination answers)."""
    lines, chain = [], ["1"]
    for k in range(int(generator.integers(2, 9))):
        kind = str(generator.choice(["R", "L", "C", "shunt", "line", "open", "short"]))
        here, there = chain[-1], f"n{k}"
        z0, delay = generator.uniform(20, 120), generator.uniform(1e-12, 150e-12)
        if kind in ("R", "L", "C"):
            value = {"R": 60.0, "L": 4e-9, "C": 2e-12}[kind] * generator.uniform(0.1, 2)
            lines.append(f"{kind}{k} {here} {there} {value}")
            chain.append(there)
        elif kind == "shunt":
            lines.append(f"C{k} {here} 0 {generator.uniform(0.2e-12, 5e-12)} q=50")
        elif kind == "line":
            loss = f" loss={generator.uniform(0, 2):.3f} at=1g" if generator.random() < 0.5 else ""
            lines.append(f"T{k} {here} 0 {there} 0 z0={z0} delay={delay}{loss}")
            chain.append(there)
        else:
            far = there if kind == "open" else "0"
            lines.append(f"T{k} {here} 0 {far} 0 z0={z0} delay={delay}")
    lines.append(f"Rend {chain[-1]} 0 {generator.uniform(1, 300)}")
    if len(chain) > 2 and generator.random() < 0.3:
        lines.append(f"Rbridge {chain[0]} {chain[-2]} {generator.uniform(10, 300)}")
    return "\n".join(lines) + "\n.oneport 1"


@pytest.mark.parametrize("seed", range(3))
def test_random_loads_with_lines_agree_between_paths(seed: int) -> None:
    generator = np.random.default_rng(seed)
    frequency_hz = np.linspace(1e6, 15e9, 201)
    for _ in range(15):
        circuit = parse_circuit(_random_load(generator), source="random load")
        closed = circuit.evaluate(frequency_hz, Z0, {})
        eliminated = circuit.evaluate(frequency_hz, Z0, {}, method="elimination")
        np.testing.assert_allclose(closed, eliminated, rtol=0, atol=1e-11)
