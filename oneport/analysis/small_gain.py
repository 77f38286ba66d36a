"""Worst-case loads: is the device stable into *every* passive load matched at least this well?

The small-gain bound (METHODS §6): with no right-half-plane poles on either side, a load with
|ΓL| ≤ ρ cannot make the loop encircle +1 if |Γd|·ρ < 1 at every frequency. So the load's
required return loss at each frequency is 20·log10 |Γd| (0 dB, any passive load, where
|Γd| ≤ 1), and the class "return loss ≥ RL" (ρ = 10^(−RL/20)) is guaranteed when the largest
required return loss stays below RL. "Not guaranteed" is not "unstable": some load of the class
might oscillate, not necessarily the one you will build.

The bound must hold outside the sweep as well; it is taken as founded at an edge where
|Γd|·ρ ≤ 1/2 (half the bound), or where Γd has settled (|Γd|·ρ plus four octaves' worth of
its motion there stays below 1); otherwise the answer is inconclusive.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..errors import InputError
from ..findings import Finding
from ..reading.alignment import MINIMUM_OVERLAP_POINTS
from ..reading.records import InputRecord
from ..reading.touchstone import OnePort
from ..units import format_frequency
from . import nyquist
from .result import CHECK_SCHEMA, _band

#: |Γd|·ρ at or below this at a sweep edge founds the bound beyond it.
EDGE_FRACTION = 0.5
#: Or Γd has settled: |Γd|·ρ plus this many octaves' worth of its edge motion stays below 1.
SETTLED_MOTION_FACTOR = 4.0


@dataclass(frozen=True)
class BoundResult:
    """The answer for a class of loads (every passive load with return loss ≥ the stated one)."""

    verdict: str
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    premise: str
    load_return_loss_db: float
    worst_required_return_loss_db: float
    worst_frequency_hz: float
    failing_bands: tuple[nyquist.Band, ...]
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    inputs: tuple[InputRecord, ...]
    reference_impedance_ohm: float
    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)
    required_return_loss_db: np.ndarray = field(repr=False)

    @property
    def guaranteed(self) -> bool:
        """True when every load of the class is stable with this device."""
        return self.verdict == "stable"

    @property
    def frequency_range_hz(self) -> tuple[float, float]:
        """The analysed band, Hz."""
        return float(self.frequency_hz[0]), float(self.frequency_hz[-1])

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.check/1`` object in its ``return-loss-bound`` mode."""
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
                "return_loss_db": self.load_return_loss_db,
                "reflection_bound": 10 ** (-self.load_return_loss_db / 20),
            },
            "required_return_loss": {
                "reference_impedance_ohm": z0,
                "worst_db": self.worst_required_return_loss_db,
                "worst_frequency_hz": self.worst_frequency_hz,
            },
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
                "required_return_loss_db": self.required_return_loss_db.tolist(),
            }
        return data


def required_return_loss_db(gamma_device: np.ndarray) -> np.ndarray:
    """Return loss a load needs for the small-gain bound: 20·log10 |Γd|, at least 0 dB.

    Examples
    --------
    A pure −100 Ω in 50 Ω has |Γd| = (100 + 50)/(100 − 50) = 3, so the load needs 9.54 dB:

    >>> round(float(required_return_loss_db(np.array([(-100 - 50) / (-100 + 50)]))[0]), 2)
    9.54
    """
    return np.maximum(20.0 * np.log10(np.abs(gamma_device)), 0.0)


def check_return_loss(device: OnePort, return_loss_db: float, record: InputRecord) -> BoundResult:
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
    required = required_return_loss_db(gamma)
    worst = int(np.argmax(required))
    worst_loop = np.abs(gamma) * rho
    failing = nyquist.find_bands(frequency_hz, worst_loop.astype(complex))
    z0 = device.reference_impedance_ohm
    reasons: list[str] = []
    steps: list[str] = []
    warnings: list[Finding] = []
    edges_founded = True
    for index, side in ((0, "low"), (-1, "high")):
        motion = nyquist.motion_per_octave(frequency_hz, gamma, side) * rho
        settled = worst_loop[index] + SETTLED_MOTION_FACTOR * motion < 1.0
        if worst_loop[index] > EDGE_FRACTION and not settled:
            edges_founded = False
            reasons.append(
                f"At the {side} edge ({format_frequency(frequency_hz[index])}) |Γd|·ρ ="
                f" {worst_loop[index]:.2f}: the device may exceed the bound just outside the"
                " sweep, so the guarantee cannot be extended beyond it."
            )
            steps.append(
                f"Measure the device {'lower' if side == 'low' else 'higher'} in frequency,"
                " until |Γd| falls well below the bound."
            )
    if worst_loop.max() >= 1.0:
        verdict = "unstable"
        reasons.insert(
            0,
            f"NOT GUARANTEED: some passive load with {return_loss_db:g} dB return loss could"
            f" make this device oscillate. At {format_frequency(frequency_hz[worst])} the device"
            f" has |Γd| = {abs(gamma[worst]):.3g}, so the load needs at least"
            f" {required[worst]:.2f} dB return loss there (in {z0:g} ohm).",
        )
        steps.append(
            f"Specify the load's return loss above {required[worst]:.1f} dB (plus margin) across"
            " the failing bands, or check the actual load with --load."
        )
    elif not edges_founded:
        verdict = "inconclusive"
    else:
        verdict = "stable"
        reasons.insert(
            0,
            f"GUARANTEED: every passive load with at least {return_loss_db:g} dB return loss"
            f" keeps the loop gain below 1 (worst |Γd|·ρ = {worst_loop.max():.3g} at"
            f" {format_frequency(frequency_hz[worst])}); small-signal stable into all of them.",
        )
    premise = (
        f"The bound assumes the device is stable terminated in {z0:g} ohm (its measurement"
        " impedance) and that |Γd|·ρ stays below 1 outside the sweep as well. A class verdict:"
        " 'not guaranteed' does not mean a particular load will oscillate."
    )
    return BoundResult(
        verdict=verdict,
        reasons=tuple(reasons),
        next_steps=tuple(steps),
        premise=premise,
        load_return_loss_db=float(return_loss_db),
        worst_required_return_loss_db=float(required[worst]),
        worst_frequency_hz=float(frequency_hz[worst]),
        failing_bands=tuple(failing),
        warnings=tuple(warnings),
        cautions=CAUTIONS,
        inputs=(record,),
        reference_impedance_ohm=z0,
        frequency_hz=frequency_hz,
        gamma_device=gamma,
        required_return_loss_db=required,
    )
