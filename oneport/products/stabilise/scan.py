"""Scanning a placement's candidate values at once, the stable ranges, and their edges.

For each candidate the changed load goes to the check's vectorised judgement (through
:mod:`.adapter`); the goal, the margins and the cost are read from it and from the changed
loop gain. A stable range is a run of consecutive candidates that reach the goal; each edge is
refined by bisection (on a logarithmic scale) with the same judgement, all edges of a scan at
once. Nothing here prints, and no verdict is formed except by the judgement.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from . import adapter, families, goal
from .adapter import PreparedPair
from .goal import Requirement
from .placements import Placement

#: Candidates beyond either end of a scan stand in for its limit (0 or infinity) at this ratio.
LIMIT_RATIO = 1e6
#: Bisection stops when an edge is bracketed to within this ratio.
EDGE_PRECISION = 1e-4
#: A two-element network whose corner lies below this multiple of the lowest analysed
#: frequency would still be changing the loop below the sweep, where no data show it (an RC
#: snubber's capacitor can resonate with a bias choke there). Such candidates are not judged.
CORNER_FLOOR = 10.0
#: The code of those candidates beside the judgement's (stable, unstable, inconclusive).
ACTS_BELOW_SWEEP = 3
VERDICT_WORDS = ("stable", "unstable", "inconclusive", "acts-below-sweep")


@dataclass(frozen=True)
class Evaluation:
    """Per-candidate figures of one scan (arrays of the candidates' shape (V,)).

    ``cost`` is lower for better candidates: the largest reflection-gain (or loop-gain) loss
    in the band, dB; with ``keep``, how far the wanted crossing moved, as a fraction of the
    wanted frequency (the network should not pull the oscillator off its resonator).
    ``gain_margin`` (a linear factor) is ``inf`` where L does not cross (0, 1) and NaN where
    not computed.
    """

    values: dict[str, np.ndarray]
    verdict_code: np.ndarray
    goal_met: np.ndarray
    distance: np.ndarray
    gain_margin: np.ndarray
    margin_met: np.ndarray
    cost: np.ndarray
    wanted_hz: np.ndarray

    def take(self, index: np.ndarray) -> Evaluation:
        """The candidates at ``index``."""
        return Evaluation(
            values={key: value[index] for key, value in self.values.items()},
            **{
                name: getattr(self, name)[index]
                for name in (
                    "verdict_code",
                    "goal_met",
                    "distance",
                    "gain_margin",
                    "margin_met",
                    "cost",
                    "wanted_hz",
                )
            },
        )


@dataclass(frozen=True)
class Range:
    """A run of candidates reaching the goal along one element, refined at both ends.

    ``low``/``high`` are None for an open end (the candidate standing in for the limit reaches
    the goal too); ``beyond_low``/``beyond_high`` are the judgement's verdicts at the next value
    scanned outside.
    """

    low: float | None
    high: float | None
    beyond_low: str | None
    beyond_high: str | None

    def contains(self, value: float) -> bool:
        """Whether ``value`` lies inside (open ends included)."""
        return (self.low is None or value >= self.low) and (self.high is None or value <= self.high)


@dataclass(frozen=True)
class Line:
    """One element scanned with the others held: the grid, each candidate's figures, ranges."""

    key: str
    fixed: dict[str, float]
    grid: np.ndarray = field(repr=False)
    evaluation: Evaluation = field(repr=False)
    ranges: tuple[Range, ...]


class Scanner:
    """Evaluates candidates of any placement against one requirement, on one prepared pair."""

    def __init__(
        self,
        pair: PreparedPair,
        requirement: Requirement,
        device_dc_resistance_ohm: float | None,
        load_dc_resistance_ohm: float | None,
        original_latch_up: bool | None = False,
    ) -> None:
        self.pair = pair
        self.original_latch_up = bool(original_latch_up)
        self.requirement = requirement
        self.device_dc = device_dc_resistance_ohm
        self.load_dc = load_dc_resistance_ohm
        frequency = pair.frequency_hz
        if requirement.band_hz is not None:
            low, high = requirement.band_hz
            self.band_columns = np.flatnonzero((frequency >= low) & (frequency <= high))
        else:
            self.band_columns = np.zeros(0, dtype=np.intp)
        with np.errstate(divide="ignore"):
            self.gain_before_db = 20.0 * np.log10(np.abs(pair.gamma_device[self.band_columns]))
            self.load_before_db = 20.0 * np.log10(np.abs(pair.gamma_load[self.band_columns]))

    # -- one batch of candidates --------------------------------------------------------------

    def evaluate(
        self,
        placement: Placement,
        values: dict[str, np.ndarray],
        parameters: dict[str, np.ndarray] | None = None,
        costs: bool = True,
    ) -> Evaluation:
        """Goal, margins and cost of every candidate in ``values`` (arrays of shape (V,)).

        The cost is computed for candidates that reach the goal only (``inf`` elsewhere), and
        not at all without ``costs`` (the bisection of edges needs the goal alone).
        """
        values = {key: np.atleast_1d(np.asarray(v, dtype=float)) for key, v in values.items()}
        pair = self.pair
        loads = placement.changed_loads(values, parameters)
        count = next(iter(values.values())).size
        loads = np.broadcast_to(loads, (count, pair.frequency_hz.size))
        signs = None
        if self.device_dc is not None:
            dc = placement.load_dc_resistance(values, self.load_dc, parameters)
            if dc is not None:
                signs = adapter.dc_signs(self.device_dc, dc, pair.reference_impedance_ohm)
        judged = adapter.judge_variants(pair, loads, signs, placement.probe(values, parameters))
        codes = np.asarray(judged.verdict_code)
        met = goal.goal_met(self.requirement, judged)
        unseen = self._corner_below_data(placement, values, judged, signs is not None)
        if unseen is not None:
            met = met & ~unseen
            codes = np.where(unseen, ACTS_BELOW_SWEEP, codes)
        wanted = np.where(met, judged.oscillation_frequency_hz, np.nan)
        region = None
        loop_gain = None
        if self.requirement.keep:
            loop_gain = pair.gamma_device * loads
            region = goal.wanted_region(pair.frequency_hz, loop_gain, wanted)
            distance = goal.distance_outside(loop_gain, region)
        else:
            distance = np.asarray(judged.min_distance, dtype=float)
        gain_margin = np.full(count, np.nan)
        if self.requirement.gain_margin is not None:
            for row in np.flatnonzero(met):
                trace = (pair.gamma_device * loads[row]) if loop_gain is None else loop_gain[row]
                gain_margin[row] = goal.gain_margin_outside(
                    pair.frequency_hz, trace, None if region is None else region[row]
                )
        margin_met = met & goal.margin_met(self.requirement, distance, gain_margin)
        if self.requirement.keep:
            assert loop_gain is not None
            assert self.requirement.keep_hz is not None
            keep = self.requirement.keep_hz
            cost = np.where(np.isfinite(wanted), np.abs(wanted - keep) / keep, np.inf)
        elif costs:
            cost = self._band_cost(placement, values, loads, met)
        else:
            cost = np.full(count, np.inf)
        return Evaluation(
            values=values,
            verdict_code=codes,
            goal_met=met,
            distance=distance,
            gain_margin=gain_margin,
            margin_met=margin_met,
            cost=cost,
            wanted_hz=wanted,
        )

    def _corner_below_data(
        self,
        placement: Placement,
        values: dict[str, np.ndarray],
        judged: adapter.VariantAnalysis,
        dc_facts: bool,
    ) -> np.ndarray | None:
        """Candidates of a two-element family whose action below the sweep the data miss.

        Its corner must lie :data:`CORNER_FLOOR` times above the lowest frequency. And such a
        network adds nothing at DC, so F(0) is the original pair's: without DC facts, a
        candidate whose count has the other parity (its data-based closure towards DC gives
        F(0) the other sign) is one whose network still acts below the sweep.
        """
        lowest = float(self.pair.frequency_hz[0])
        if not placement.family.corner or lowest <= 0.0:
            return None
        corner = np.asarray(families.corner_frequency_hz(placement.family, values))
        unseen = corner < CORNER_FLOOR * lowest
        if not dc_facts:
            flipped = np.asarray(judged.count_known) & (
                np.asarray(judged.latch_up) != self.original_latch_up
            )
            unseen = unseen | flipped
        return unseen

    def _band_cost(
        self,
        placement: Placement,
        values: dict[str, np.ndarray],
        loads: np.ndarray,
        rows: np.ndarray,
    ) -> np.ndarray:
        """Largest loss in the band, dB: of reflection gain for a port network, else of |ΓL|;
        for the candidates in ``rows`` (``inf`` for the others)."""
        cost = np.full(loads.shape[0], np.inf)
        columns = self.band_columns
        chosen = np.flatnonzero(rows)
        if columns.size == 0:
            cost[chosen] = 0.0
            return cost
        if chosen.size == 0:
            return cost
        some = {key: value[chosen] for key, value in values.items()}
        with np.errstate(divide="ignore", invalid="ignore"):
            amplifier = placement.amplifier_gamma(some, columns)
            if amplifier is not None:
                after = 10.0 * np.log10(amplifier.real**2 + amplifier.imag**2)
                loss = self.gain_before_db - after
            else:
                after = 20.0 * np.log10(np.abs(loads[np.ix_(chosen, columns)]))
                loss = self.load_before_db - after
        loss = np.where(np.isnan(loss), 0.0, loss)
        cost[chosen] = np.max(loss, axis=-1)
        return cost

    # -- one element along a grid -------------------------------------------------------------

    def line(
        self, placement: Placement, key: str, grid: np.ndarray, fixed: dict[str, float]
    ) -> Line:
        """Scan ``key`` over ``grid`` (ascending, positive) with the other elements ``fixed``;
        the stand-ins for 0 and infinity sit :data:`LIMIT_RATIO` beyond the ends."""
        extended = np.concatenate(([grid[0] / LIMIT_RATIO], grid, [grid[-1] * LIMIT_RATIO]))
        evaluation = self.evaluate(placement, self._values(key, extended, fixed))
        ranges = self._ranges(placement, key, extended, evaluation, fixed)
        return Line(key, dict(fixed), extended, evaluation, ranges)

    def _values(
        self, key: str, candidates: np.ndarray, fixed: dict[str, float]
    ) -> dict[str, np.ndarray]:
        values = {name: np.full(candidates.size, value) for name, value in fixed.items()}
        values[key] = candidates
        return values

    def _ranges(
        self,
        placement: Placement,
        key: str,
        grid: np.ndarray,
        evaluation: Evaluation,
        fixed: dict[str, float],
    ) -> tuple[Range, ...]:
        met = evaluation.goal_met
        edges = np.flatnonzero(np.diff(np.concatenate(([0], met.astype(int), [0]))))
        runs = list(zip(edges[::2], edges[1::2] - 1, strict=True))
        if not runs:
            return ()
        last = grid.size - 1
        # Brackets (inside, outside) of every finite edge, refined together.
        inside: list[float] = []
        outside: list[int] = []
        outward: list[int] = []
        for first, final in runs:
            if first > 0:
                inside.append(grid[first])
                outside.append(first - 1)
                outward.append(-1)
            if final < last:
                inside.append(grid[final])
                outside.append(final + 1)
                outward.append(+1)
        refined = self._bisect(placement, key, np.array(inside), grid[outside], fixed)
        beyond = [
            _beyond(evaluation.verdict_code, index, step)
            for index, step in zip(outside, outward, strict=True)
        ]
        words = VERDICT_WORDS
        ranges = []
        index = 0
        for first, final in runs:
            low = high = None
            beyond_low = beyond_high = None
            if first > 0:
                low, beyond_low = float(refined[index]), words[beyond[index]]
                index += 1
            if final < last:
                high, beyond_high = float(refined[index]), words[beyond[index]]
                index += 1
            ranges.append(Range(low, high, beyond_low, beyond_high))
        return tuple(ranges)

    def _bisect(
        self,
        placement: Placement,
        key: str,
        inside: np.ndarray,
        outside: np.ndarray,
        fixed: dict[str, float],
    ) -> np.ndarray:
        """Edges to within :data:`EDGE_PRECISION`: the last value inside (reaching the goal),
        per bracket."""
        if inside.size == 0:
            return inside
        widest = float(np.max(np.abs(np.log(outside / inside))))
        steps = max(0, math.ceil(math.log2(widest / math.log1p(EDGE_PRECISION))))
        for _ in range(steps):
            middle = np.sqrt(inside * outside)
            evaluation = self.evaluate(placement, self._values(key, middle, fixed), costs=False)
            met = evaluation.goal_met
            inside = np.where(met, middle, inside)
            outside = np.where(met, outside, middle)
        return inside


def _beyond(codes: np.ndarray, index: int, step: int) -> int:
    """The verdict beyond a range's edge: the first decisive one among the values scanned
    from ``index`` (the value next to the edge) outward by ``step``. At a stability edge the
    loop passes through +1, so the values nearest it are inconclusive whatever lies beyond;
    inconclusive only when every value out to the scan's end is."""
    undecided = VERDICT_WORDS.index("inconclusive")
    while 0 <= index < codes.size:
        if codes[index] != undecided:
            return int(codes[index])
        index += step
    return undecided


def preferred_values(low: float, high: float, series: tuple[float, ...]) -> np.ndarray:
    """Values of a preferred-number series (per decade) between ``low`` and ``high``."""
    if not (low > 0 and high >= low):
        return np.zeros(0)
    decades = np.arange(math.floor(math.log10(low)) - 1, math.ceil(math.log10(high)) + 1)
    values = (np.asarray(series)[None, :] * (10.0**decades)[:, None]).ravel()
    values = np.array([float(f"{value:.12g}") for value in values])  # 2.7e-12, not 2.7…02e-12
    return np.asarray(values[(values >= low * (1 - 1e-12)) & (values <= high * (1 + 1e-12))])


def nearest_preferred(value: float, series: tuple[float, ...]) -> float:
    """The member of the series nearest ``value`` on a logarithmic scale."""
    candidates = preferred_values(value / 10.0, value * 10.0, series)
    return float(candidates[np.argmin(np.abs(np.log(candidates / value)))])


#: IEC 60063 preferred numbers: E24 for resistors (5 %), E12 for capacitors and inductors.
E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
       3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)  # fmt: skip
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)


#: Costs closer than this count as equal when choosing (dB of gain, or a fraction of the
#: wanted frequency with ``keep``): a measured gain is not known better than this.
COST_RESOLUTION = 0.1


def choice_order(
    evaluation: Evaluation, allowed: np.ndarray | None = None, connection: str = "series"
) -> np.ndarray:
    """Candidate indices, best first: those reaching goal and margin by cost, then the least
    invasive resistor (the smallest in series, the largest across: least DC drop or current);
    then those reaching the goal only, by margin. Others are left out."""
    allowed = np.ones(evaluation.goal_met.shape, dtype=bool) if allowed is None else allowed
    qualifying = np.flatnonzero(evaluation.margin_met & allowed)
    cost = np.round(evaluation.cost / COST_RESOLUTION)
    resistance = np.log(evaluation.values["resistance_ohm"])
    invasive = resistance if connection == "series" else -resistance
    first = qualifying[np.lexsort((invasive[qualifying], cost[qualifying]))]
    rest = np.flatnonzero(evaluation.goal_met & ~(evaluation.margin_met & allowed))
    second = rest[np.argsort(-evaluation.distance[rest], kind="stable")]
    return np.concatenate((first, second)).astype(np.intp)


def as_dict(value: Any) -> dict[str, float]:
    """One candidate's values as plain floats."""
    return {key: float(np.asarray(v).ravel()[0]) for key, v in value.items()}
