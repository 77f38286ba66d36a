"""The one small-gain rule: is a device stable into *every* passive load matched at least so well?

With no right-half-plane poles on either side, a load with |ΓL| ≤ ρ cannot make the loop encircle
+1 if |Γd|·ρ < 1 at every frequency (METHODS §6), so the load's required return loss at each
frequency is 20·log10 |Γd| (0 dB, any passive load, where |Γd| ≤ 1). :func:`small_gain_bound`
is the rule behind ``check --load-return-loss`` and ``amplifier --port-return-loss`` (and the
amplifier's port file), with one set of words (CONVENTIONS.md): ``guaranteed``,
``not-guaranteed`` (some load of the class could oscillate, not necessarily the one you build),
``inconclusive`` (the bound holds, but not by more than the data's scatter and the stated |Γ|
errors somewhere).

The bound must hold outside the sweep as well. As for the Nyquist closure (METHODS §2), it is
founded beyond an edge only where it holds there by more than that scatter and error: |Γd|·ρ is
the worst loop gain over the class, so this is the same test as |L| < 1 at the edge. The answer
then rests on |Γd|·ρ staying below 1 beyond both edges, which the premise states; a constant
device whose bound holds with margin at both edges is guaranteed.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..display import Displayed
from ..errors import InputError
from ..findings import Finding
from ..reading.alignment import MINIMUM_OVERLAP_POINTS
from ..reading.records import InputRecord
from ..reading.touchstone import OnePort
from ..units import format_frequency, to_decibels
from . import nyquist
from .result import CHECK_SCHEMA, _band

#: The verdict words of a guarantee over a class of loads (CONVENTIONS.md).
BOUND_VERDICTS = ("guaranteed", "not-guaranteed", "inconclusive")


@dataclass(frozen=True)
class EdgeBound:
    """Whether the small-gain bound is carried beyond one sweep edge, and by how much: the
    factor ``margin`` (> 1: it holds there beyond scatter and error; linear)."""

    side: str
    founded: bool
    margin: float | None
    note: str


@dataclass(frozen=True)
class SmallGainBound:
    """The small-gain rule applied to one device and one class of loads.

    Attributes
    ----------
    verdict : str
        One of :data:`BOUND_VERDICTS`.
    worst_loop_gain : float
        max over the band of |Γd|·ρ (the class's worst loop gain), at ``worst_frequency_hz``.
    margin : float
        min over the band of 1/((|Γd| + δd + 3σ)·ρ): the factor by which the bound holds beyond
        the data's scatter σ and the stated device error δd (below 1: it does not), at
        ``margin_frequency_hz``; linear (its dB only in reports and JSON).
    failing_bands : tuple of Band
        Where |Γd|·ρ ≥ 1.
    at_stake_ranges_hz : tuple of (float, float)
        Where the bound holds on the data but not beyond scatter and error.
    edges : (EdgeBound, EdgeBound)
        The low and the high edge.
    """

    verdict: str
    worst_loop_gain: float
    worst_frequency_hz: float
    margin: float
    margin_frequency_hz: float
    failing_bands: tuple[nyquist.Band, ...]
    at_stake_ranges_hz: tuple[tuple[float, float], ...]
    edges: tuple[EdgeBound, EdgeBound]
    scatter: float

    @property
    def guaranteed(self) -> bool:
        """True when every load of the class is stable with this device."""
        return self.verdict == "guaranteed"


def allowed_reflection(gamma_device: np.ndarray) -> np.ndarray:
    """The largest |ΓL| a load may have for the small-gain bound: 1/|Γd|, at most 1 (its
    return loss, 20·log10 |Γd| or 0 dB, is what the reports call the return loss needed).

    Examples
    --------
    A pure −100 Ω in 50 Ω has |Γd| = (100 + 50)/(100 − 50) = 3, so the load needs |ΓL| < 1/3,
    9.54 dB of return loss:

    >>> rho = allowed_reflection(np.array([(-100 - 50) / (-100 + 50)]))[0]
    >>> round(float(rho), 4), round(float(-20 * np.log10(rho)), 2)
    (0.3333, 9.54)
    """
    # |Γd| = 0 allows any passive load (1), without a division warning.
    return np.minimum(1.0 / np.maximum(np.abs(gamma_device), 1e-300), 1.0)


def small_gain_bound(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    reflection_bound: Any,
    device_uncertainty: float = 0.0,
    load_uncertainty: float = 0.0,
) -> SmallGainBound:
    """The small-gain rule for loads with |ΓL| ≤ ``reflection_bound`` (ρ; a number, or one per
    frequency for a port file's |ΓL|), by the module docstring.

    Examples
    --------
    A constant −75 Ω in 50 Ω (|Γd| = 5, 13.98 dB of gain) against loads of 14.5 dB return loss:
    the bound holds by 0.52 dB at every frequency, both edges included.

    >>> f = np.linspace(1e9, 2e9, 11)
    >>> bound = small_gain_bound(f, np.full(11, 5.0 + 0j), 10 ** (-14.5 / 20))
    >>> bound.verdict, round(float(20 * np.log10(bound.margin)), 2)
    ('guaranteed', 0.52)
    """
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    gamma_device = np.asarray(gamma_device, dtype=complex)
    rho = np.broadcast_to(np.asarray(reflection_bound, dtype=float), frequency_hz.shape)
    rho = np.minimum(rho + load_uncertainty, np.inf)
    magnitude = np.abs(gamma_device)
    scatter = float(nyquist.estimate_noise(gamma_device, nyquist.EDGE_NOISE_ORDERS))
    worst_loop = magnitude * np.asarray(reflection_bound, dtype=float)
    guarded = (magnitude + device_uncertainty + nyquist.NOISE_MARGIN * scatter) * rho
    margin = 1.0 / np.maximum(guarded, 1e-300)
    worst = int(np.argmax(worst_loop))
    tightest = int(np.argmin(margin))
    failing = nyquist.find_bands(frequency_hz, worst_loop.astype(complex))
    stake = (guarded >= 1.0) & (worst_loop < 1.0)
    edges = (_edge(frequency_hz, margin, "low"), _edge(frequency_hz, margin, "high"))
    if worst_loop[worst] >= 1.0:
        verdict = "not-guaranteed"
    elif margin[tightest] <= 1.0:
        verdict = "inconclusive"
    else:
        verdict = "guaranteed"
    return SmallGainBound(
        verdict=verdict,
        worst_loop_gain=float(worst_loop[worst]),
        worst_frequency_hz=float(frequency_hz[worst]),
        margin=float(margin[tightest]),
        margin_frequency_hz=float(frequency_hz[tightest]),
        failing_bands=tuple(failing),
        at_stake_ranges_hz=_ranges(frequency_hz, stake),
        edges=edges,
        scatter=scatter,
    )


def _edge(frequency_hz: np.ndarray, margin: np.ndarray, side: str) -> EdgeBound:
    index = 0 if side == "low" else frequency_hz.size - 1
    factor = float(margin[index])
    value = to_decibels(factor)
    where = format_frequency(frequency_hz[index])
    if side == "low" and frequency_hz[0] == 0.0:
        return EdgeBound(side, factor > 1.0, factor, "The sweep includes 0 Hz.")
    beyond = "below" if side == "low" else "above"
    if factor > 1.0:
        note = (
            f"At the {side} edge ({where}) the bound holds by {value:.2f} dB beyond the data's"
            f" scatter and the stated errors; it is assumed to hold {beyond} the sweep too."
        )
    else:
        note = (
            f"At the {side} edge ({where}) the bound does not hold by more than the data's"
            f" scatter and the stated errors ({value:+.2f} dB), so it cannot be carried {beyond}"
            " the sweep."
        )
    return EdgeBound(side, factor > 1.0, factor, note)


def _ranges(frequency_hz: np.ndarray, mask: np.ndarray) -> tuple[tuple[float, float], ...]:
    edges = np.flatnonzero(np.diff(np.concatenate(([0], mask.astype(int), [0]))))
    return tuple(
        (float(frequency_hz[start]), float(frequency_hz[stop - 1]))
        for start, stop in zip(edges[::2], edges[1::2], strict=True)
    )


def bound_words(
    bound: SmallGainBound,
    allowed: np.ndarray,
    frequency_hz: np.ndarray,
    z0: float,
    what: str,
) -> tuple[list[str], list[str]]:
    """Reasons and next steps for a bound, the same words in every command; ``what`` names the
    class ("every passive load with at least 14.5 dB return loss", "the stated port match");
    ``allowed`` is :func:`allowed_reflection` of the device."""
    required_db = np.maximum(-20.0 * np.log10(allowed), 0.0)
    worst = int(np.argmax(required_db))
    need = f"{required_db[worst]:.2f} dB return loss at {format_frequency(frequency_hz[worst])}"
    if bound.verdict == "not-guaranteed":
        return (
            [
                f"NOT GUARANTEED: the small-gain bound fails for {what}: at"
                f" {format_frequency(bound.worst_frequency_hz)} |Γd|·ρ ="
                f" {bound.worst_loop_gain:.3g} (ρ: the largest |ΓL| the class allows), so some"
                " such load could make the device oscillate"
                f" (not necessarily the one you build). It needs at least {need} (in {z0:g} ohm).",
            ],
            [
                f"Specify at least {required_db[worst]:.1f} dB return loss (plus margin) across the"
                " failing bands, or check the actual load with its file (--load)."
            ],
        )
    if bound.verdict == "inconclusive":
        listed = ", ".join(
            f"{format_frequency(a)}-{format_frequency(b)}" if a != b else format_frequency(a)
            for a, b in bound.at_stake_ranges_hz
        )
        return (
            [
                f"The small-gain bound holds for {what} on the data, but not by more than their"
                f" scatter and the stated |Γ| errors at {listed} (margin"
                f" {to_decibels(bound.margin):+.2f} dB): the guarantee cannot be given.",
                *[edge.note for edge in bound.edges if not edge.founded],
            ],
            [
                "Measure the device more accurately there (calibration, averaging), or ask for"
                f" more return loss than {required_db[worst]:.1f} dB."
            ],
        )
    return (
        [
            f"GUARANTEED: {what} keeps the loop gain below 1 at every frequency, by"
            f" {to_decibels(bound.margin):.2f} dB beyond the data's scatter and the stated errors"
            f" (worst |Γd|·ρ = {bound.worst_loop_gain:.3g} at"
            f" {format_frequency(bound.worst_frequency_hz)}, ρ being the largest |ΓL| the class"
            " allows): small-signal stable into all of"
            " them. The guarantee rests on the device being stable in its measurement impedance"
            " and on the bound holding beyond both sweep edges, as it does at them.",
        ],
        [],
    )


def bound_premise(z0: float, frequency_hz: np.ndarray) -> str:
    """What every small-gain answer rests on."""
    band = f"{format_frequency(frequency_hz[0])} to {format_frequency(frequency_hz[-1])}"
    return (
        f"The small-gain bound proves stability only if the device is stable terminated in"
        f" {z0:g} ohm (its measurement impedance, as a device measured on a VNA without"
        f" oscillating is) and the load's match holds at every frequency. It is checked over"
        f" {band}; beyond the sweep it is assumed to keep holding, as it does at both edges by"
        " more than the data's scatter. A class verdict: 'not guaranteed' does not mean a"
        " particular load will oscillate. It is a small-signal result."
    )


@dataclass(frozen=True, repr=False)
class BoundResult(Displayed):
    """The answer for a class of loads (every passive load with return loss ≥ the stated one).

    ``reflection_bound`` is the class's largest |ΓL| (ρ = 10^(−RL/20)); ``allowed_reflection``
    the largest |ΓL| the bound allows per frequency (:func:`allowed_reflection`), smallest
    (``smallest_allowed_reflection``) at ``worst_frequency_hz``. All linear; return losses in
    dB only in the JSON's ``_db`` keys and the reports.
    """

    verdict: str
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    premise: str
    reflection_bound: float
    smallest_allowed_reflection: float
    worst_frequency_hz: float
    failing_bands: tuple[nyquist.Band, ...]
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    inputs: tuple[InputRecord, ...]
    reference_impedance_ohm: float
    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)
    allowed_reflection: np.ndarray = field(repr=False)
    bound: SmallGainBound | None = None

    @property
    def guaranteed(self) -> bool:
        """True when every load of the class is stable with this device."""
        return self.verdict == "guaranteed"

    @property
    def frequency_range_hz(self) -> tuple[float, float]:
        """The analysed band, Hz."""
        return float(self.frequency_hz[0]), float(self.frequency_hz[-1])

    def plot(self, ax: Any = None) -> Any:
        """The return loss a load needs against frequency, beside the stated one.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ..rendering.check_plots import plot_bound

        return plot_bound(self, ax)

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.check`` object in its ``return-loss-bound`` mode."""
        z0 = self.reference_impedance_ohm
        data: dict[str, Any] = {
            "schema": CHECK_SCHEMA,
            "mode": "return-loss-bound",
            "verdict": self.verdict,
            "guaranteed": self.guaranteed,
            "reasons": list(self.reasons),
            "next_steps": list(self.next_steps),
            "premise": self.premise,
            "small_signal": True,
            "encirclements": None,
            "latch_up": None,
            "oscillation_frequencies_hz": [],
            "crossings": [],
            "bands": [_band(b, z0) for b in self.failing_bands],
            "load_class": {
                "reference_impedance_ohm": z0,
                "return_loss_db": _return_loss_db(self.reflection_bound),
                "reflection_bound": self.reflection_bound,
            },
            "required_return_loss": {
                "reference_impedance_ohm": z0,
                "worst_db": _return_loss_db(self.smallest_allowed_reflection),
                "worst_frequency_hz": self.worst_frequency_hz,
            },
            "bound": None if self.bound is None else bound_json(self.bound, z0),
            "warnings": [w.to_dict() for w in self.warnings],
            "cautions": list(self.cautions),
            "inputs": [record.to_dict() for record in self.inputs],
            "frequency_range_hz": list(self.frequency_range_hz),
            "reference_impedance_ohm": z0,
        }
        if include_arrays:
            data["arrays"] = {
                "reference_impedance_ohm": z0,
                "frequency_hz": self.frequency_hz.tolist(),
                "required_return_loss_db": (
                    0.0 - 20.0 * np.log10(self.allowed_reflection)
                ).tolist(),
            }
        return data


def bound_json(bound: SmallGainBound, z0: float) -> dict[str, Any]:
    """JSON form of a :class:`SmallGainBound` (shared by check and amplifier)."""
    return {
        "reference_impedance_ohm": z0,
        "verdict": bound.verdict,
        "worst_loop_gain": bound.worst_loop_gain,
        "worst_frequency_hz": bound.worst_frequency_hz,
        "margin_db": to_decibels(bound.margin),
        "margin_frequency_hz": bound.margin_frequency_hz,
        "device_scatter": bound.scatter,
        "at_stake_ranges_hz": [list(r) for r in bound.at_stake_ranges_hz],
        "edges": [
            {
                "side": e.side,
                "founded": e.founded,
                "margin_db": None if e.margin is None else to_decibels(e.margin),
                "note": e.note,
            }
            for e in bound.edges
        ],
    }


def _return_loss_db(reflection: float) -> float:
    """A reflection bound as a return loss in dB, for the ``_db`` keys (0.0, never −0.0)."""
    return float(0.0 - 20.0 * np.log10(max(reflection, 1e-300)))


def check_return_loss(
    device: OnePort,
    return_loss_db: float,
    record: InputRecord,
    device_uncertainty: float = 0.0,
) -> BoundResult:
    """Is ``device`` stable into every passive load with at least ``return_loss_db``?"""
    if not (np.isfinite(return_loss_db) and return_loss_db >= 0):
        raise InputError(
            f"--load-return-loss {return_loss_db!r} dB: a return loss of 0 dB or more is needed"
        )
    if device.points < MINIMUM_OVERLAP_POINTS:
        raise InputError(
            f"{device.source}: {device.points} frequency point(s); a bound over frequency needs"
            f" at least {MINIMUM_OVERLAP_POINTS}"
        )
    rho = 10 ** (-return_loss_db / 20)
    frequency_hz, gamma = device.frequency_hz, device.gamma
    z0 = device.reference_impedance_ohm
    allowed = allowed_reflection(gamma)
    bound = small_gain_bound(frequency_hz, gamma, rho, device_uncertainty)
    reasons, steps = bound_words(
        bound,
        allowed,
        frequency_hz,
        z0,
        f"every passive load with at least {return_loss_db:g} dB return loss",
    )
    worst = int(np.argmin(allowed))
    return BoundResult(
        verdict=bound.verdict,
        reasons=tuple(reasons),
        next_steps=tuple(steps),
        premise=bound_premise(z0, frequency_hz),
        reflection_bound=float(rho),
        smallest_allowed_reflection=float(allowed[worst]),
        worst_frequency_hz=float(frequency_hz[worst]),
        failing_bands=bound.failing_bands,
        warnings=(),
        cautions=CAUTIONS,
        inputs=(record,),
        reference_impedance_ohm=z0,
        frequency_hz=frequency_hz,
        gamma_device=gamma,
        allowed_reflection=allowed,
        bound=bound,
    )
