"""The frozen result of stabilising advice, and its JSON form (``oneport.stabilise/2``).

Results carry the original check, each suggestion's verifying check and its scan; ``to_dict()``
gives the JSON object documented in docs/stabilise.md. Nothing here computes or renders text.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from ...display import Displayed
from ...findings import Finding
from .goal import Requirement
from .placements import Position
from .scan import Line, Range

STABILISE_SCHEMA = "oneport.stabilise/2"
#: The command's verdict words (mapped to exit codes in ``commands/outcome.py``).
VERDICTS = ("stabilised", "no-change-needed", "not-stabilised", "inconclusive")


@dataclass(frozen=True)
class MarginsAfter:
    """The changed pair's margins, from its verifying check (Z0-dependent).

    With ``keep`` the distance and gain margin are measured away from the wanted mode
    (``outside_wanted_mode``); the phase margin is the check's own over the whole band.
    """

    min_distance: float
    min_distance_frequency_hz: float | None
    gain_margin: float | None
    phase_margin_rad: float | None
    outside_wanted_mode: bool
    reference_impedance_ohm: float

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "reference_impedance_ohm": self.reference_impedance_ohm,
            "min_distance_to_critical_point": _finite(self.min_distance),
            "min_distance_frequency_hz": self.min_distance_frequency_hz,
            "gain_margin_db": _finite(_decibels(self.gain_margin)),
            "phase_margin_deg": _degrees(self.phase_margin_rad),
            "outside_wanted_mode": self.outside_wanted_mode,
        }


@dataclass(frozen=True)
class GainCost:
    """What the network costs in the band: the largest loss of gain there.

    ``kind`` ``"reflection-gain"``: |Γ|² of the device with the port network absorbed, as a
    reflection amplifier's circulator sees it; ``"loop-gain"`` (a network inside the load):
    the loss of |L| = |Γd·ΓL|, i.e. of the load's reflection. ``before`` and ``after`` are the
    smallest and largest |Γd| (or |L|) in the band, linear; ``largest_loss`` the largest ratio
    before/after (≥ 1 is a loss), at ``largest_loss_frequency_hz``.
    """

    kind: str
    band_hz: tuple[float, float]
    band_stated: bool
    before: tuple[float, float]
    after: tuple[float, float]
    largest_loss: float
    largest_loss_frequency_hz: float
    reference_impedance_ohm: float

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "kind": self.kind,
            "band_hz": list(self.band_hz),
            "band_stated": self.band_stated,
            "before_db": {"min": _decibels(self.before[0]), "max": _decibels(self.before[1])},
            "after_db": {"min": _decibels(self.after[0]), "max": _decibels(self.after[1])},
            "largest_loss_db": _decibels(self.largest_loss),
            "largest_loss_frequency_hz": self.largest_loss_frequency_hz,
            "reference_impedance_ohm": self.reference_impedance_ohm,
        }


@dataclass(frozen=True)
class WantedMode:
    """With ``keep``: does the wanted mode still start on the changed pair, and how strongly.

    ``starts`` is the verifying check's count (exactly one complex pair, its crossing near the
    wanted frequency). The growth rate comes from the pole–zero fit of 1 − L on the changed
    pair (its trusted right-half-plane zero nearest the wanted frequency; None when the fit does
    not confirm one); the resistance ratio is −Re(device)/Re(load) at the nearest zero of the
    loop reactance (or susceptance), for the common 3:1 start-up practice.
    """

    keep_hz: float
    starts: bool
    crossing_frequency_hz: float | None
    loop_gain_at_crossing: float | None
    natural_frequency_hz: float | None
    sigma_per_s: float | None
    resistance_ratio: float | None
    resistance_ratio_form: str | None
    reference_impedance_ohm: float

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "kind": "wanted-mode",
            "keep_frequency_hz": self.keep_hz,
            "starts": self.starts,
            "crossing_frequency_hz": self.crossing_frequency_hz,
            "loop_gain_at_crossing_db": _decibels(self.loop_gain_at_crossing),
            "natural_frequency_hz": self.natural_frequency_hz,
            "growth_rate_per_s": self.sigma_per_s,
            "negative_to_load_resistance_ratio": self.resistance_ratio,
            "resistance_ratio_form": self.resistance_ratio_form,
            "reference_impedance_ohm": self.reference_impedance_ohm,
        }


@dataclass(frozen=True)
class ToleranceRun:
    """A seeded Monte Carlo over the added elements' (and the load netlist's) tolerances,
    judged by the check's vectorised judgement."""

    samples: int
    seed: int
    distribution: str
    tolerances: dict[str, float]
    fraction_goal_met: float
    fraction_margin_met: float

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "samples": self.samples,
            "seed": self.seed,
            "distribution": self.distribution,
            "tolerances": dict(self.tolerances),
            "fraction_goal_met": self.fraction_goal_met,
            "fraction_margin_met": self.fraction_margin_met,
        }


@dataclass(frozen=True)
class BiasFigures:
    """DC figures of the added resistor at the stated bias (None where they do not apply)."""

    voltage_drop_v: float | None
    current_a: float | None
    power_w: float | None

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "voltage_drop_v": self.voltage_drop_v,
            "current_a": self.current_a,
            "power_w": self.power_w,
        }


@dataclass(frozen=True)
class Suggestion:
    """One family at one position, with its recommended values, verified.

    Attributes
    ----------
    topology : str
        The family's name (``series-resistor``, ``shunt-resistor``, ``shunt-rc``, ``series-rl``).
    position : Position
        Where it goes.
    elements : dict of str to float
        Recommended values, unit-named keys (``resistance_ohm``, ``capacitance_f``,
        ``inductance_h``): preferred values (E24 resistors, E12 capacitors and inductors) where
        one reaches the goal and margin.
    stable_range : dict of str to Range
        Per element, the run of values holding the recommended one, each element varied alone
        with the others at their recommended values; open ends are None.
    other_ranges : dict of str to tuple of Range
        Further runs along the same line, if any.
    reaches_margin : bool
        The verifying check reaches the goal and the margins reach what was asked.
    verdict_after : str
        The verifying check's verdict on the changed pair.
    """

    topology: str
    position: Position
    description: str
    elements: dict[str, float]
    corner_frequency_hz: float | None
    stable_range: dict[str, Range]
    other_ranges: dict[str, tuple[Range, ...]]
    reaches_margin: bool
    goal_met_after: bool
    verdict_after: str
    encirclements_after: int | None
    margins_after: MarginsAfter
    cost: GainCost | WantedMode | None
    tolerance: ToleranceRun | None
    bias: BiasFigures | None
    notes: tuple[str, ...]
    check_after: Any = field(repr=False)
    lines: tuple[Line, ...] = field(repr=False, default=())

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "topology": self.topology,
            "position": self.position.to_dict(),
            "description": self.description,
            "elements": dict(self.elements),
            "corner_frequency_hz": self.corner_frequency_hz,
            "stable_range": {key: _range(r) for key, r in self.stable_range.items()},
            "other_stable_ranges": {
                key: [_range(r) for r in ranges] for key, ranges in self.other_ranges.items()
            },
            "reaches_margin": self.reaches_margin,
            "goal_met_after": self.goal_met_after,
            "verdict_after": self.verdict_after,
            "encirclements_after": self.encirclements_after,
            "oscillation_frequencies_after_hz": list(self.check_after.oscillation_frequencies_hz),
            "margins_after": _margins_for(self.margins_after.to_dict(), self.verdict_after),
            "cost": None if self.cost is None else self.cost.to_dict(),
            "tolerance": None if self.tolerance is None else self.tolerance.to_dict(),
            "bias": None if self.bias is None else self.bias.to_dict(),
            "notes": list(self.notes),
        }


def _margins_for(margins: dict[str, Any], verdict: str) -> dict[str, Any]:
    """Gain and phase margins only for a stable changed pair; the distance always."""
    if verdict != "stable":
        margins = {**margins, "gain_margin_db": None, "phase_margin_deg": None}
    return margins


@dataclass(frozen=True)
class Unsolved:
    """A family at a position with no value that reaches the goal."""

    topology: str
    position: Position
    reason: str

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "topology": self.topology,
            "position": self.position.to_dict(),
            "reason": self.reason,
        }


@dataclass(frozen=True, repr=False)
class StabiliseResult(Displayed):
    """Stabilising advice for a device and its load, frozen.

    Attributes
    ----------
    verdict : str
        ``stabilised`` (at least one suggestion reaches the goal with the margin, verified),
        ``no-change-needed`` (the pair already does), ``not-stabilised`` (no suggestion does)
        or ``inconclusive`` (the original pair cannot be judged).
    original : CheckResult
        The check of the pair as given.
    suggestions : tuple of Suggestion
        Ranked: those reaching the margin first, by cost; then the others, by margin.
    """

    verdict: str
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    premise: str
    requirement: Requirement
    original: Any = field(repr=False)
    suggestions: tuple[Suggestion, ...]
    unsolved: tuple[Unsolved, ...]
    candidates_judged: int
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    reference_impedance_ohm: float
    tolerance_asked: dict[str, float] = field(default_factory=dict)

    def to_dict(self) -> dict[str, Any]:
        """The ``oneport.stabilise/2`` JSON object (plain Python types only)."""
        original = self.original
        stable = original.verdict == "stable"
        return {
            "schema": STABILISE_SCHEMA,
            "verdict": self.verdict,
            "reasons": list(self.reasons),
            "next_steps": list(self.next_steps),
            "premise": self.premise,
            "small_signal": True,
            "requirement": self.requirement.to_dict(),
            "original": {
                "verdict": original.verdict,
                "encirclements": original.encirclements,
                "latch_up": original.latch_up,
                "oscillation_frequencies_hz": list(original.oscillation_frequencies_hz),
                # Gain and phase margins only where the loop is stable (CONVENTIONS).
                "margins": {
                    "reference_impedance_ohm": original.reference_impedance_ohm,
                    "min_distance_to_critical_point": original.margins.modulus_margin,
                    "gain_margin_db": (
                        _finite(_decibels(original.margins.gain_margin)) if stable else None
                    ),
                    "phase_margin_deg": (
                        _degrees(original.margins.phase_margin_rad) if stable else None
                    ),
                },
            },
            "suggestions": [s.to_dict() for s in self.suggestions],
            "families_without_solution": [u.to_dict() for u in self.unsolved],
            "candidates_judged": self.candidates_judged,
            "warnings": [w.to_dict() for w in self.warnings],
            "cautions": list(self.cautions),
            "inputs": [record.to_dict() for record in original.inputs],
            "frequency_range_hz": list(original.frequency_range_hz),
            "reference_impedance_ohm": self.reference_impedance_ohm,
        }

    def plot(self, ax: Any = None, suggestion: int = 0) -> Any:
        """|L| and the Nyquist curve before and after the ``suggestion``-th network.

        Returns the matplotlib figure; ``ax`` is a pair of axes to draw into (|L|, Nyquist).
        """
        from ...rendering.stabilise_plots import plot_stabilise

        return plot_stabilise(self, ax=ax, suggestion=suggestion)


def _range(value: Range) -> dict[str, Any]:
    return {
        "low": value.low,
        "high": value.high,
        "beyond_low": value.beyond_low,
        "beyond_high": value.beyond_high,
    }


def _decibels(magnitude: float | None) -> float | None:
    """A linear magnitude or margin factor in dB, for the ``_db`` keys (None stays None)."""
    if magnitude is None:
        return None
    return 20.0 * math.log10(magnitude) if magnitude > 0 else -math.inf


def _degrees(angle_rad: float | None) -> float | None:
    """An angle in degrees, for the ``_deg`` keys (None stays None)."""
    return None if angle_rad is None else math.degrees(angle_rad)


def _finite(value: float | None) -> float | None:
    """None for an infinite margin (JSON has no infinity)."""
    return None if value is None or not math.isfinite(value) else float(value)
