"""Lumped circuits as rational impedances in s, the truth the Nyquist tests are checked against.

An impedance is a pair ``(numerator, denominator)`` of :class:`numpy.poly1d` in the complex
frequency s (rad/s), with SI coefficients (Ω, H, F). Series and parallel connections are
polynomial algebra, so the closed circuit's natural frequencies are the roots of one polynomial,
n_d·d_L + n_L·d_d (METHODS §1), found with ``numpy.roots``. Hypothesis strategies for random
component values and circuit families live here too.

Imported by the test modules as a plain module (``from lumped import ...``): pytest's default
``prepend`` import mode puts this folder on ``sys.path`` for the test files beside it.
"""

from __future__ import annotations

import numpy as np
from hypothesis import strategies as st

from oneport import OnePort
from oneport.circuit import Circuit

from helpers import Z0

#: ``numpy.roots`` works on s in units of this (rad/s), so SI coefficients stay well scaled.
S_UNIT = 1e9

Impedance = tuple[np.poly1d, np.poly1d]


class Lumped(tuple):
    """Impedance polynomials ``(n, d)`` that remember how the circuit was built (``tree``), so
    the same circuit can be handed to ``oneport`` as a netlist (:func:`circuit`)."""

    tree: tuple

    def __new__(cls, numerator: np.poly1d, denominator: np.poly1d, tree: tuple) -> Lumped:
        made = super().__new__(cls, (numerator, denominator))
        made.tree = tree
        return made


# --- elements and connections ----------------------------------------------------------------


def resistor(resistance_ohm: float) -> Impedance:
    """Impedance polynomials of a resistor, Z = R.

    Parameters
    ----------
    resistance_ohm : float
        R, Ω; negative for a negative-resistance device.

    Returns
    -------
    tuple of numpy.poly1d
        ``(R, 1)``.

    Examples
    --------
    >>> [part.coeffs.tolist() for part in resistor(50.0)]
    [[50.0], [1.0]]
    """
    return Lumped(np.poly1d([float(resistance_ohm)]), np.poly1d([1.0]), ("R", resistance_ohm))


def inductor(inductance_h: float) -> Impedance:
    """Impedance polynomials of an inductor, Z = s·L.

    Parameters
    ----------
    inductance_h : float
        L, H.

    Returns
    -------
    tuple of numpy.poly1d
        ``(L·s, 1)``.
    """
    return Lumped(np.poly1d([float(inductance_h), 0.0]), np.poly1d([1.0]), ("L", inductance_h))


def capacitor(capacitance_f: float) -> Impedance:
    """Impedance polynomials of a capacitor, Z = 1/(s·C).

    Parameters
    ----------
    capacitance_f : float
        C, F.

    Returns
    -------
    tuple of numpy.poly1d
        ``(1, C·s)``.
    """
    return Lumped(np.poly1d([1.0]), np.poly1d([float(capacitance_f), 0.0]), ("C", capacitance_f))


def series(*parts: Impedance) -> Impedance:
    """Impedances in series: their sum, Za + Zb + …, over a common denominator.

    Parameters
    ----------
    *parts : tuple of numpy.poly1d
        The impedances in the string, at least one.

    Returns
    -------
    tuple of numpy.poly1d
        Numerator and denominator of the sum, not reduced (common factors stay).

    Examples
    --------
    >>> numerator, denominator = series(resistor(10.0), inductor(1e-9))
    >>> numerator.coeffs.tolist(), denominator.coeffs.tolist()
    ([1e-09, 10.0], [1.0])
    """
    numerator, denominator = parts[0]
    for other_numerator, other_denominator in parts[1:]:
        numerator, denominator = (
            numerator * other_denominator + other_numerator * denominator,
            denominator * other_denominator,
        )
    return Lumped(numerator, denominator, ("series", tuple(_tree(part) for part in parts)))


def parallel(*parts: Impedance) -> Impedance:
    """Impedances in parallel: Za·Zb/(Za + Zb), applied from left to right.

    Parameters
    ----------
    *parts : tuple of numpy.poly1d
        The impedances side by side, at least one.

    Returns
    -------
    tuple of numpy.poly1d
        Numerator and denominator of the combination; its zeros and poles are not cancelled.

    Examples
    --------
    >>> numerator, denominator = parallel(resistor(100.0), resistor(100.0))
    >>> float(numerator(0.0) / denominator(0.0))
    50.0
    """
    numerator, denominator = parts[0]
    for other_numerator, other_denominator in parts[1:]:
        numerator, denominator = (
            numerator * other_numerator,
            numerator * other_denominator + other_numerator * denominator,
        )
    return Lumped(numerator, denominator, ("parallel", tuple(_tree(part) for part in parts)))


def _tree(part: Impedance) -> tuple:
    tree = getattr(part, "tree", None)
    if tree is None:
        raise TypeError("only circuits built with resistor/inductor/capacitor/series/parallel")
    return tree


def _wire(tree: tuple) -> bool:
    return tree[0] == "R" and abs(tree[1]) < 1e-12


def circuit(z: Impedance, source: str = "circuit") -> Circuit:
    """The same circuit as an ``oneport`` netlist (:class:`~oneport.circuit.Circuit`), its port
    from node ``p`` to ground; a resistor below 1 pΩ in series is a wire (netlists refuse 0 Ω).

    Examples
    --------
    >>> built = circuit(series(resistor(10.0), inductor(1e-9)), "R+L")
    >>> [element.name for element in built.elements]
    ['R2', 'L3']
    """
    built = Circuit(source)
    counter = iter(range(1, 1_000_000))

    def place(tree: tuple, a: str, b: str) -> None:
        kind = tree[0]
        if kind in ("R", "L", "C"):
            method = {"R": built.resistor, "L": built.inductor, "C": built.capacitor}[kind]
            method(f"{kind}{next(counter)}", a, b, float(tree[1]))
        elif kind == "series":
            children = [child for child in tree[1] if not _wire(child)] or [tree[1][0]]
            nodes = [a, *[f"n{next(counter)}" for _ in children[:-1]], b]
            for child, start, stop in zip(children, nodes[:-1], nodes[1:], strict=True):
                place(child, start, stop)
        else:
            for child in tree[1]:
                place(child, a, b)

    place(_tree(z), "p", "0")
    return built.port("p")


def tunnel_diode(rs_ohm: float, ls_h: float, rd_ohm: float, cj_f: float) -> Impedance:
    """The tunnel-diode equivalent circuit Rs + s·Ls + (−Rd ∥ Cj) (METHODS §7).

    Parameters
    ----------
    rs_ohm, ls_h : float
        Series resistance (Ω) and lead inductance (H).
    rd_ohm : float
        Magnitude of the negative differential resistance, Ω (the element is −Rd).
    cj_f : float
        Junction capacitance, F.

    Returns
    -------
    tuple of numpy.poly1d
        Its impedance polynomials.
    """
    return series(resistor(rs_ohm), inductor(ls_h), parallel(resistor(-rd_ohm), capacitor(cj_f)))


# --- on the jω axis ---------------------------------------------------------------------------


def impedance(z: Impedance, frequency_hz: np.ndarray) -> np.ndarray:
    """Z(j2πf) of a circuit, Ω, as numerator over denominator evaluated on a grid.

    Parameters
    ----------
    z : tuple of numpy.poly1d
        The circuit's impedance polynomials.
    frequency_hz : ndarray of float
        Frequencies, Hz.

    Returns
    -------
    ndarray of complex
        Z at s = j2πf.
    """
    s = 2j * np.pi * np.asarray(frequency_hz, dtype=float)
    return z[0](s) / z[1](s)


def gamma(z: Impedance, frequency_hz: np.ndarray, z0: float = Z0) -> np.ndarray:
    """Γ = (n − Z0·d)/(n + Z0·d) of a circuit, evaluated at s = j2πf.

    Parameters
    ----------
    z : tuple of numpy.poly1d
        The circuit's impedance polynomials ``(n, d)``.
    frequency_hz : ndarray of float
        Frequencies, Hz.
    z0 : float
        Reference impedance, Ω.

    Returns
    -------
    ndarray of complex
        The reflection coefficient (common practice: Γ = (Z − Z0)/(Z + Z0) with Z = n/d).

    Examples
    --------
    >>> complex(gamma(resistor(150.0), 1e9))
    (0.5+0j)
    """
    s = 2j * np.pi * frequency_hz
    n, d = z[0](s), z[1](s)
    return (n - z0 * d) / (n + z0 * d)


def port(z: Impedance, frequency_hz: np.ndarray, name: str, z0: float = Z0) -> OnePort:
    """A circuit sampled as an in-memory one-port: Γ of :func:`gamma` referred to ``z0``.

    Parameters
    ----------
    z : tuple of numpy.poly1d
        The circuit's impedance polynomials.
    frequency_hz : ndarray of float
        Grid, Hz.
    name : str
        The one-port's ``source``.
    z0 : float
        Reference impedance, Ω.

    Returns
    -------
    OnePort
    """
    return OnePort(frequency_hz, gamma(z, frequency_hz, z0), z0, name)


# --- natural frequencies (truth: numpy.roots) --------------------------------------------------


def roots(poly: np.poly1d) -> np.ndarray:
    """``numpy.roots`` of a polynomial in s (rad/s), computed on s / S_UNIT for scaling.

    Parameters
    ----------
    poly : numpy.poly1d
        Coefficients in SI units of s.

    Returns
    -------
    ndarray of complex
        Its roots, rad/s.

    Examples
    --------
    >>> roots(np.poly1d([1.0, 2e9])).tolist()
    [-2000000000.0]
    """
    coefficients = poly.coeffs * S_UNIT ** np.arange(poly.order, -1, -1)
    return np.roots(coefficients) * S_UNIT


def characteristic_polynomial(device: Impedance, load: Impedance) -> np.poly1d:
    """n_d·d_L + n_L·d_d: zero where Zd + ZL = 0, at the closed circuit's natural frequencies.

    Parameters
    ----------
    device, load : tuple of numpy.poly1d
        Zd = n_d/d_d and ZL = n_L/d_L.

    Returns
    -------
    numpy.poly1d
        The characteristic polynomial of the loop (METHODS §1).
    """
    (n_d, d_d), (n_l, d_l) = device, load
    return n_d * d_l + n_l * d_d


def natural_frequencies(device: Impedance, load: Impedance) -> np.ndarray:
    """Roots of n_d·d_L + n_L·d_d: the closed circuit's natural frequencies (METHODS §1).

    Parameters
    ----------
    device, load : tuple of numpy.poly1d
        The two sides of the loop, Zd and ZL.

    Returns
    -------
    ndarray of complex
        The natural frequencies s, rad/s, by :func:`roots` (numpy.roots).
    """
    return roots(characteristic_polynomial(device, load))


def right_half_plane_roots(device: Impedance, load: Impedance) -> np.ndarray:
    """The natural frequencies with σ > 0, those that grow (METHODS §1), by numpy.roots.

    Parameters
    ----------
    device : tuple of numpy.poly1d
        Zd, the negative-resistance side.
    load : tuple of numpy.poly1d
        ZL.

    Returns
    -------
    ndarray of complex
        Those of :func:`natural_frequencies` with a positive real part, rad/s.

    Examples
    --------
    >>> right_half_plane_roots(resistor(-60.0), resistor(50.0)).size
    0
    """
    natural = natural_frequencies(device, load)
    return natural[natural.real > 0]


def wide_grid(*root_sets: np.ndarray, points: int = 3000) -> np.ndarray:
    """Log grid from 1e-3 of the smallest to 1e3 times the largest non-zero |s| / 2π (Hz).

    Parameters
    ----------
    *root_sets : ndarray of complex
        Roots (rad/s) the grid must span, with margin.
    points : int
        Number of frequencies.

    Returns
    -------
    ndarray of float
        Geometrically spaced frequencies, Hz.
    """
    scales = np.abs(np.concatenate(root_sets))
    scales = scales[scales > 0]
    return np.geomspace(1e-3 * scales.min(), 1e3 * scales.max(), points) / (2 * np.pi)


# --- hypothesis strategies ---------------------------------------------------------------------


def log_uniform(low: float, high: float) -> st.SearchStrategy[float]:
    """Floats between ``low`` and ``high`` whose base-10 logarithm is drawn uniformly.

    Parameters
    ----------
    low, high : float
        Positive bounds.

    Returns
    -------
    hypothesis.strategies.SearchStrategy of float
    """
    return st.floats(np.log10(low), np.log10(high)).map(lambda e: float(10.0**e))


def tunnel_diodes() -> st.SearchStrategy[Impedance]:
    """Random :func:`tunnel_diode` circuits (METHODS §7), each value log-uniform.

    Rs in 0.5–10 Ω, Ls in 0.05–3 nH, Rd in 60–400 Ω, Cj in 0.2–10 pF.

    Returns
    -------
    hypothesis.strategies.SearchStrategy of tuple of numpy.poly1d
    """
    return st.builds(
        tunnel_diode,
        log_uniform(0.5, 10.0),
        log_uniform(0.05e-9, 3e-9),
        log_uniform(60.0, 400.0),
        log_uniform(0.2e-12, 10e-12),
    )


def series_rl_loads() -> st.SearchStrategy[Impedance]:
    """Random series R + L loads: R uniform in 0–300 Ω, L log-uniform in 0.1–20 nH.

    Returns
    -------
    hypothesis.strategies.SearchStrategy of tuple of numpy.poly1d
    """
    return st.builds(
        lambda r, inductance: series(resistor(r), inductor(inductance)),
        st.floats(0.0, 300.0),
        log_uniform(0.1e-9, 20e-9),
    )
