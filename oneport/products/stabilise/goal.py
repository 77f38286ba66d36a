"""What the advice aims at, and what a candidate must show to reach it.

The goal is "stable" (no natural frequency in the right half plane), or with ``keep`` "exactly
the wanted mode remains": the check's count is two (one complex pair), no latch-up, and the one
crossing of +1 that carries the count lies within ``KEEP_WINDOW`` of the wanted frequency. The
margin is the minimum |1 − L| and/or the gain margin in dB; with ``keep`` both are measured away
from the wanted mode (outside ``KEEP_WINDOW`` of its crossing, where the loop must pass close to
+1), where spurious modes would grow. Everything here reads the judgement's per-variant
records; nothing judges.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from ...errors import InputError
from ...units import parse_decibels, to_decibels
from ..options import frequency, positive_frequency
from . import adapter

#: A wanted mode is "the same mode" when its crossing lies within this fraction of its
#: frequency: crossings move with Z0 and with the added network by a few per cent.
KEEP_WINDOW = 0.1
#: The margin asked for when none is given: |1 − L| ≥ 0.3 means |L| may grow by 3.1 dB, or
#: turn by 17 degrees, before the count can change.
DEFAULT_MIN_DISTANCE = 0.3


@dataclass(frozen=True)
class Requirement:
    """The goal and the margin a suggestion must reach.

    Attributes
    ----------
    min_distance : float or None
        Required minimum |1 − L| (a linear distance from +1).
    gain_margin : float or None
        Required gain margin: the factor |L| may still grow by where L crosses (0, 1)
        (linear; ``"6dB"`` is 2.0).
    keep_hz : float or None
        The wanted mode's frequency, Hz (None: the goal is "stable").
    band_hz : tuple of float or None
        The band where the cost (gain lost) is counted, Hz; None with ``keep``.
    band_stated : bool
        Whether the band was given (else: where the device has gain).
    """

    min_distance: float | None
    gain_margin: float | None
    keep_hz: float | None
    band_hz: tuple[float, float] | None
    band_stated: bool

    @property
    def keep(self) -> bool:
        """True when one wanted mode is to stay."""
        return self.keep_hz is not None

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "goal": "keep-wanted-mode" if self.keep else "stable",
            "keep_frequency_hz": self.keep_hz,
            "keep_window": KEEP_WINDOW if self.keep else None,
            "min_distance_to_critical_point": self.min_distance,
            "gain_margin_db": None if self.gain_margin is None else to_decibels(self.gain_margin),
            "band_hz": list(self.band_hz) if self.band_hz is not None else None,
            "band_stated": self.band_stated,
        }


def parse_margins(margin: Any) -> tuple[float | None, float | None]:
    """``0.2`` (minimum |1 − L|), ``"6dB"`` (gain margin), or several: (distance, gain margin
    as a linear factor).

    Without any, the minimum |1 − L| is :data:`DEFAULT_MIN_DISTANCE`.
    """
    if margin is None:
        return DEFAULT_MIN_DISTANCE, None
    items: Sequence[Any] = margin if isinstance(margin, list | tuple) else [margin]
    distance = decibels = None
    for item in items:
        for text in str(item).split(","):
            if re.search(r"db\s*$", text.strip(), re.IGNORECASE):
                value = parse_decibels(text, option="--margin")
                if not value > 0:
                    raise InputError(f"--margin {text!r}: a gain margin above 0 dB is needed")
                factor = 10.0 ** (value / 20.0)
                decibels = factor if decibels is None else max(decibels, factor)
                continue
            try:
                value = float(text)
            except ValueError:
                value = float("nan")
            if not 0.0 < value < 1.0:
                raise InputError(
                    f"--margin {text!r}: give the minimum |1 - L| as a number between 0 and 1"
                    " (e.g. 0.2), or a gain margin in dB (e.g. 6dB)"
                )
            distance = value if distance is None else max(distance, value)
    return distance, decibels


def parse_band(band: Any) -> tuple[float, float] | None:
    """``"2GHz:3GHz"`` or a pair of numbers (Hz) → (low, high), Hz."""
    if band is None:
        return None
    if isinstance(band, str):
        parts = band.split(":")
        if len(parts) != 2:
            raise InputError(f"--band {band!r}: give LOW:HIGH, e.g. 2GHz:3GHz")
        low, high = (frequency(p, "--band") for p in parts)
    else:
        low, high = (frequency(v, "--band") for v in band)
    if not (np.isfinite(low) and np.isfinite(high) and 0.0 <= low < high):
        raise InputError(f"--band {band!r}: the low end must lie below the high end, both >= 0 Hz")
    return float(low), float(high)


def parse_frequency(value: Any, option: str) -> float | None:
    """A frequency given as a number (Hz) or text with a unit (``2.1GHz``)."""
    if value is None:
        return None
    return positive_frequency(value, option)


def goal_met(requirement: Requirement, variants: adapter.VariantAnalysis) -> np.ndarray:
    """Per variant: does the judgement show the goal (stable, or the wanted mode alone)?"""
    if not requirement.keep:
        return np.asarray(variants.verdict_code == adapter.STABLE)
    assert requirement.keep_hz is not None
    near = np.abs(variants.oscillation_frequency_hz - requirement.keep_hz) <= (
        KEEP_WINDOW * requirement.keep_hz
    )
    return np.asarray(
        (variants.verdict_code == adapter.UNSTABLE)
        & variants.count_known
        & (variants.encirclements == 2)
        & ~variants.latch_up
        & (variants.oscillatory_modes == 1)
        & near
    )


def wanted_region(
    frequency_hz: np.ndarray, loop_gain: np.ndarray, wanted_hz: np.ndarray
) -> np.ndarray:
    """Per row of ``loop_gain`` (V, n): the samples within ``KEEP_WINDOW`` of the wanted
    crossing, and the two samples around it (bool). Rows without one (NaN) get none."""
    wanted = np.asarray(wanted_hz, dtype=float)
    finite = np.isfinite(wanted)
    centre = np.where(finite, wanted, np.nan)[:, None]
    with np.errstate(invalid="ignore"):
        region = np.abs(frequency_hz[None, :] - centre) <= KEEP_WINDOW * centre
    column = np.searchsorted(frequency_hz, np.where(finite, wanted, frequency_hz[0]))
    column = np.clip(column, 1, frequency_hz.size - 1)
    rows = np.flatnonzero(finite)
    region[rows, column[rows] - 1] = True
    region[rows, column[rows]] = True
    return np.broadcast_to(region, loop_gain.shape).copy()


def distance_outside(loop_gain: np.ndarray, region: np.ndarray) -> np.ndarray:
    """min |1 − L| per row over the samples outside ``region`` (inf when none are left)."""
    distance = np.abs(1.0 - loop_gain)
    return np.asarray(np.min(np.where(region, np.inf, distance), axis=-1))


def gain_margin_outside(
    frequency_hz: np.ndarray, loop_gain: np.ndarray, region: np.ndarray | None
) -> float:
    """The check's gain margin (a linear factor) of one loop gain, over the stretches outside
    ``region``.

    ``inf`` when L does not cross the positive real axis inside (0, 1) there.
    """
    keep = np.ones(frequency_hz.size, dtype=bool) if region is None else ~region
    edges = np.flatnonzero(np.diff(np.concatenate(([0], keep.astype(int), [0]))))
    smallest = np.inf
    for start, stop in zip(edges[::2], edges[1::2], strict=True):
        if stop - start < 2:
            continue
        found = adapter.margins(frequency_hz[start:stop], loop_gain[start:stop]).gain_margin
        if found is not None:
            smallest = min(smallest, found)
    return float(smallest)


def margin_met(
    requirement: Requirement, distance: np.ndarray, gain_margin: np.ndarray
) -> np.ndarray:
    """Per variant: both asked-for margins reached."""
    met = np.ones(np.shape(distance), dtype=bool)
    if requirement.min_distance is not None:
        met &= distance >= requirement.min_distance
    if requirement.gain_margin is not None:
        met &= gain_margin >= requirement.gain_margin
    return met
