"""Which terminations of one port of a two-port make the other port's resistance negative.

For a two-port S (referred to one real Z0) with port t terminated in Γ_T, the other port o
sees Γ_o = S_oo + S_ot·S_to·Γ_T / (1 − S_tt·Γ_T). Its resistance is negative exactly where
|Γ_o| > 1; the boundary |Γ_o| = 1 is the stability circle in the Γ_T plane, with
Δ = S_oo·S_tt − S_ot·S_to,

    center = conj(S_tt − Δ·conj(S_oo)) / (|S_tt|² − |Δ|²),
    radius = |S_ot·S_to| / | |S_tt|² − |Δ|² |,

and the negative side is the one holding the pole Γ_T = 1/S_tt (where Γ_o is infinite). Z_o
is a Möbius function of Γ_T, so the passive terminations (|Γ_T| ≤ 1) map to a disk of Z_o
whose leftmost point is the most negative resistance, reached by a lossless termination; when
the pole lies inside the unit disk a passive termination makes Z_o infinite and the negative
resistance is unbounded. Which terminations give negative resistance does not depend on Z0;
the circle's position does, so it is reported with its Z0. Nothing here reads files or prints.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..circuit.blocks import interpolate_block
from ..display import Displayed
from ..errors import InputError, printable
from ..reading.touchstone import Multiport
from ..units import format_frequency

TERMINATIONS_SCHEMA = "oneport.terminations/2"
#: The verdict words: at the chosen frequency, does some passive termination make the
#: observed port's resistance negative?
TERMINATIONS_VERDICTS = ("negative-resistance-possible", "no-negative-resistance")
#: |S_tt|² − |Δ|² below this makes the circle a straight line (handled by sampling).
_DEGENERATE = 1e-12


@dataclass(frozen=True)
class StabilityCircle:
    """|Γ_o| = 1 in the Γ_T plane: ``center``, ``radius``; negative resistance inside or out."""

    center: complex
    radius: float
    negative_inside: bool

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "center": _complex(self.center),
            "radius": self.radius if math.isfinite(self.radius) else None,
            "negative_region": "inside" if self.negative_inside else "outside",
        }


@dataclass(frozen=True)
class BestTermination:
    """The passive termination giving the most negative resistance at the observed port.

    Attributes
    ----------
    gamma : complex
        Γ_T of the termination (on the unit circle: lossless), or the pole when unbounded.
    impedance_ohm : complex
        Z_T = Z0·(1 + Γ_T)/(1 − Γ_T), Ω.
    observed_impedance_ohm : complex or None
        Z_o with that termination, Ω (None when unbounded).
    unbounded : bool
        A passive termination makes Z_o infinite: the negative resistance has no limit.
    """

    gamma: complex
    impedance_ohm: complex
    observed_impedance_ohm: complex | None
    unbounded: bool

    @property
    def observed_resistance_ohm(self) -> float | None:
        """Re Z_o, Ω (None when unbounded)."""
        return None if self.observed_impedance_ohm is None else self.observed_impedance_ohm.real

    def equivalent(self, frequency_hz: float) -> dict[str, Any]:
        """The termination as lumped elements at ``frequency_hz``: a reactance (inductor or
        capacitor) with its series resistance (0 for a lossless termination), a plain resistor
        (no reactance), or open/short."""
        impedance = self.impedance_ohm
        if not math.isfinite(impedance.imag) or abs(1 - self.gamma) < 1e-12:
            return {"kind": "open"}
        if abs(1 + self.gamma) < 1e-12:
            return {"kind": "short"}
        resistance = impedance.real if abs(impedance.real) > 1e-9 * abs(impedance) else 0.0
        if abs(impedance.imag) <= 1e-9 * abs(impedance):
            return {"kind": "resistor", "resistance_ohm": resistance}
        omega = 2 * math.pi * frequency_hz
        if impedance.imag > 0:
            element = {"kind": "inductor", "inductance_h": impedance.imag / omega}
        else:
            element = {"kind": "capacitor", "capacitance_f": -1 / (omega * impedance.imag)}
        return {**element, "series_resistance_ohm": resistance}

    def to_dict(self, frequency_hz: float) -> dict[str, Any]:
        """JSON form."""
        observed = self.observed_impedance_ohm
        return {
            "gamma": _complex(self.gamma),
            "impedance_ohm": _complex(self.impedance_ohm),
            "equivalent": self.equivalent(frequency_hz),
            "observed_impedance_ohm": None if observed is None else _complex(observed),
            "observed_resistance_ohm": self.observed_resistance_ohm,
            "unbounded": self.unbounded,
        }


@dataclass(frozen=True, repr=False)
class TerminationsResult(Displayed):
    """Terminations of port ``terminated_port`` that make port ``observed_port`` negative.

    Attributes
    ----------
    source : str
        What was analysed.
    terminated_port, observed_port : int
        Port numbers as the user counts them (1, 2).
    reference_impedance_ohm : float
        Z0 of Γ_T, the circle and the Smith chart, Ω.
    frequency_hz : float
        The chosen frequency, Hz.
    circle : StabilityCircle
        At the chosen frequency.
    negative_fraction : float
        Share of the passive Γ_T disk (by area) giving negative resistance there.
    best : BestTermination
        At the chosen frequency.
    grid_hz : ndarray, shape (n,)
        The two-port's own grid.
    negative_possible : ndarray of bool, shape (n,)
        Per grid frequency: whether some passive termination gives negative resistance.
    bands_hz : tuple of (float, float)
        Runs of ``negative_possible`` (first and last grid frequency of each).
    """

    source: str
    sha256: str | None
    terminated_port: int
    observed_port: int
    reference_impedance_ohm: float
    frequency_hz: float
    circle: StabilityCircle
    negative_fraction: float
    best: BestTermination
    grid_hz: np.ndarray
    negative_possible: np.ndarray
    bands_hz: tuple[tuple[float, float], ...]
    warnings: tuple[dict[str, str], ...] = ()
    cautions: tuple[str, ...] = field(default=CAUTIONS)

    @property
    def verdict(self) -> str:
        """``"negative-resistance-possible"`` when some passive termination of the terminated
        port makes the observed port's resistance negative at the chosen frequency (or
        unbounded), else ``"no-negative-resistance"``."""
        if self.best.unbounded or self.negative_fraction > 0:
            return TERMINATIONS_VERDICTS[0]
        return TERMINATIONS_VERDICTS[1]

    def plot(self, ax: Any = None) -> Any:
        """A Smith chart of the ΓT plane, the negative-resistance terminations shaded.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ..rendering.smith import termination_figure

        return termination_figure(self, ax)

    def to_dict(self) -> dict[str, Any]:
        """The JSON object (schema ``oneport.terminations/2``)."""
        return {
            "schema": TERMINATIONS_SCHEMA,
            "verdict": self.verdict,
            "inputs": [
                {
                    "role": "two-port",
                    "path": self.source,
                    "sha256": self.sha256,
                    "ports": 2,
                    "points": int(self.grid_hz.size),
                    "frequency_range_hz": [float(self.grid_hz[0]), float(self.grid_hz[-1])],
                    "reference_impedance_ohm": self.reference_impedance_ohm,
                }
            ],
            "terminated_port": self.terminated_port,
            "observed_port": self.observed_port,
            "negative_resistance_bands": [
                {"start_hz": start, "stop_hz": stop} for start, stop in self.bands_hz
            ],
            "at": {
                "frequency_hz": self.frequency_hz,
                "reference_impedance_ohm": self.reference_impedance_ohm,
                "stability_circle": self.circle.to_dict(),
                "negative_fraction_of_passive_terminations": self.negative_fraction,
                "negative_resistance_possible": self.negative_fraction > 0,
                "best_termination": self.best.to_dict(self.frequency_hz),
            },
            "warnings": [dict(w) for w in self.warnings],
            "cautions": list(self.cautions),
        }


def observed_gamma(s: np.ndarray, gamma_termination: Any, terminated: int) -> np.ndarray:
    """Γ_o of the other port with port ``terminated`` (0 or 1) in ``gamma_termination``.

    ``s`` has shape (2, 2, ...); ``gamma_termination`` broadcasts against the trailing shape.
    """
    t, o = terminated, 1 - terminated
    termination = np.asarray(gamma_termination)
    return s[o, o] + s[o, t] * s[t, o] * termination / (1 - s[t, t] * termination)


def stability_circle(s: np.ndarray, terminated: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Center, radius and negative side (True: inside) of |Γ_o| = 1, per frequency.

    ``s`` has shape (2, 2, n). Degenerate circles (straight lines) have an infinite radius.
    """
    t, o = terminated, 1 - terminated
    delta = s[o, o] * s[t, t] - s[o, t] * s[t, o]
    denominator = np.abs(s[t, t]) ** 2 - np.abs(delta) ** 2
    with np.errstate(divide="ignore", invalid="ignore"):
        center = np.conj(s[t, t] - delta * np.conj(s[o, o])) / denominator
        radius = np.abs(s[o, t] * s[t, o]) / np.abs(denominator)
        pole = 1 / s[t, t]
        # The side holding Γ_T = 0, where Γ_o = S_oo, is negative iff |S_oo| > 1; the pole's
        # side decides only when 0 lies on the circle. (Without coupling the pole cancels and
        # the circle shrinks to a point: Γ_o = S_oo for every termination.)
        zero_inside = np.abs(center) < radius
        on_circle = np.abs(np.abs(s[o, o]) - 1.0) <= 1e-9
        negative_inside = np.where(
            on_circle, np.abs(pole - center) < radius, zero_inside == (np.abs(s[o, o]) > 1.0)
        )
    degenerate = np.abs(denominator) < _DEGENERATE
    radius = np.where(degenerate, np.inf, radius)
    return center, radius, negative_inside & ~degenerate


def negative_fraction(
    s: np.ndarray, terminated: int, center: np.ndarray, radius: np.ndarray, inside: np.ndarray
) -> np.ndarray:
    """Share of the unit Γ_T disk (by area) where the other port's resistance is negative."""
    overlap = _lens_area(np.abs(center), radius) / math.pi
    fraction = np.where(inside, overlap, 1.0 - overlap)
    degenerate = ~np.isfinite(radius)
    if degenerate.any():
        fraction = fraction.copy()
        fraction[degenerate] = _sampled_fraction(s[..., degenerate], terminated)
    return np.clip(fraction, 0.0, 1.0)


def _lens_area(distance: np.ndarray, radius: np.ndarray) -> np.ndarray:
    """Area shared by the unit disk and a disk of ``radius`` whose center is ``distance`` away."""
    d, r = np.asarray(distance, float), np.asarray(radius, float)
    finite_r = np.where(np.isfinite(r), r, 0.0)
    area = np.zeros(np.broadcast(d, r).shape)
    contained = d <= np.abs(finite_r - 1.0)
    area = np.where(contained, math.pi * np.minimum(1.0, finite_r) ** 2, area)
    partial = (d < 1.0 + finite_r) & ~contained & (d > 0)
    if np.any(partial):
        dp, rp = d[partial], finite_r[partial]
        first = np.arccos(np.clip((dp**2 + 1 - rp**2) / (2 * dp), -1, 1))
        second = np.arccos(np.clip((dp**2 + rp**2 - 1) / (2 * dp * rp), -1, 1))
        kite = (-dp + 1 + rp) * (dp + 1 - rp) * (dp - 1 + rp) * (dp + 1 + rp)
        area[partial] = first + rp**2 * second - 0.5 * np.sqrt(np.maximum(kite, 0.0))
    return area


def _sampled_fraction(s: np.ndarray, terminated: int, rings: int = 200) -> np.ndarray:
    """The negative share of the unit disk on an equal-area polar grid (degenerate circles)."""
    radii = np.sqrt((np.arange(rings) + 0.5) / rings)
    angles = np.linspace(0, 2 * np.pi, 4 * rings, endpoint=False)
    points = (radii[:, None] * np.exp(1j * angles[None, :])).ravel()
    gamma = observed_gamma(s[..., None], points, terminated)
    return np.mean(np.abs(gamma) > 1, axis=-1)


def best_termination(s: np.ndarray, terminated: int, reference_ohm: float) -> BestTermination:
    """The passive Γ_T with the most negative Re Z_o, for one frequency (``s`` shape (2, 2))."""
    t, o = terminated, 1 - terminated
    delta = s[o, o] * s[t, t] - s[o, t] * s[t, o]
    # Z_o(Γ_T) = (a + b·Γ_T) / (c + d·Γ_T)
    a = reference_ohm * (1 + s[o, o])
    b = -reference_ohm * (s[t, t] + delta)
    c = 1 - s[o, o]
    d = -(s[t, t] - delta)
    if abs(b * c - a * d) <= 1e-12 * (abs(a * d) + abs(b * c)) and abs(c) > 0:
        # No coupling (S_ot·S_to = 0): Z_o = a/c whatever terminates port t.
        return BestTermination(0j, _impedance(0j, reference_ohm), complex(a / c), False)
    if abs(d) > 0 and abs(c / d) <= 1.0:
        pole = complex(-c / d)
        return BestTermination(pole, _impedance(pole, reference_ohm), None, True)
    scale = abs(c) ** 2 - abs(d) ** 2
    center = (a * np.conj(c) - b * np.conj(d)) / scale
    radius = abs(b * c - a * d) / scale
    leftmost = complex(center - radius)
    gamma = complex((a - c * leftmost) / (d * leftmost - b)) if radius > 0 else 0j
    return BestTermination(gamma, _impedance(gamma, reference_ohm), leftmost, False)


def analyse_terminations(
    data: Multiport, frequency_hz: float, *, terminated_port: int = 2
) -> TerminationsResult:
    """The termination analysis of a two-port at ``frequency_hz`` and across its grid.

    Parameters
    ----------
    data : Multiport
        Two ports, one real reference impedance for both.
    frequency_hz : float
        Where the circle and the best termination are computed, Hz (inside the data's band;
        S is interpolated linearly there).
    terminated_port : int
        1 or 2: the port whose termination varies; the other is observed.
    """
    if data.ports != 2:
        raise InputError(f"{data.source}: has {data.ports} ports; the analysis needs a two-port")
    references = np.asarray(data.reference_impedance_ohm, dtype=float)
    if not np.allclose(references, references[0], rtol=1e-12):
        raise InputError(
            f"{data.source}: the ports have different reference impedances {references.tolist()};"
            " give data referred to one impedance"
        )
    if terminated_port not in (1, 2):
        raise InputError(f"--terminate {terminated_port}: give 1 or 2")
    terminated = terminated_port - 1
    reference = float(references[0])
    low, high = float(data.frequency_hz[0]), float(data.frequency_hz[-1])
    if not low <= frequency_hz <= high:
        raise InputError(
            f"{printable(data.source)}: {format_frequency(frequency_hz)} lies outside its data"
            f" ({format_frequency(low)} to {format_frequency(high)}); give a frequency inside"
            " them (nothing is extrapolated)"
        )
    at = interpolate_block(data, np.array([frequency_hz]), data.source)[:, :, 0, :]
    center, radius, inside = stability_circle(at, terminated)
    fraction = negative_fraction(at, terminated, center, radius, inside)
    grid_center, grid_radius, grid_inside = stability_circle(data.s, terminated)
    possible = negative_fraction(data.s, terminated, grid_center, grid_radius, grid_inside) > 0
    return TerminationsResult(
        source=data.source,
        sha256=data.sha256,
        terminated_port=terminated_port,
        observed_port=3 - terminated_port,
        reference_impedance_ohm=reference,
        frequency_hz=float(frequency_hz),
        circle=StabilityCircle(complex(center[0]), float(radius[0]), bool(inside[0])),
        negative_fraction=float(fraction[0]),
        best=best_termination(at[:, :, 0], terminated, reference),
        grid_hz=data.frequency_hz,
        negative_possible=possible,
        bands_hz=_runs(data.frequency_hz, possible),
    )


def _runs(frequency_hz: np.ndarray, flags: np.ndarray) -> tuple[tuple[float, float], ...]:
    """(first, last) grid frequency of each run of True in ``flags``."""
    edges = np.diff(np.concatenate([[0], flags.astype(int), [0]]))
    starts, stops = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1
    return tuple(
        (float(frequency_hz[i]), float(frequency_hz[j])) for i, j in zip(starts, stops, strict=True)
    )


def _impedance(gamma: complex, reference_ohm: float) -> complex:
    if abs(1 - gamma) < 1e-15:
        return complex(math.inf, 0.0)
    return complex(reference_ohm * (1 + gamma) / (1 - gamma))


def _complex(value: complex) -> dict[str, float | None]:
    return {
        "re": float(value.real) if math.isfinite(value.real) else None,
        "im": float(value.imag) if math.isfinite(value.imag) else None,
    }
