"""For one placement: scan, find the stable ranges, choose the recommended values, verify.

Single-resistor placements scan the resistance over a logarithmic grid. The two-element
families (``shunt-rc``, ``series-rl``) scan a grid of resistance × corner frequency first,
since where the loss starts matters as much as how much loss there is; the best grid point's
capacitor or inductor is rounded to a preferred value, the resistance is scanned along a line
with it held, and the second element along a line with the chosen resistance held. Each line's
stable ranges are refined by bisection; the recommended value is the preferred value (E24
resistor, E12 capacitor or inductor) inside them that reaches the goal and margin at the least
cost, and it is verified by the full check (the next candidates are tried if it falls short).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ...units import format_frequency
from . import families, scan, verify
from .families import RESISTANCE
from .placements import Placement
from .result import BiasFigures, Suggestion, ToleranceRun, Unsolved
from .scan import E12, E24, Evaluation, Line, Range, Scanner
from .wording import format_value

#: Candidates on a single-resistor line (the scan of the issue: 1,000 per family).
LINE_POINTS = 1000
#: Resistance × corner-frequency grid of the two-element families (1,000 candidates).
GRID_RESISTANCES, GRID_CORNERS = 40, 25
#: Candidates on the lines through the chosen point of a two-element family.
CORNER_LINE_POINTS = 250
#: How many of the best candidates the full check is asked about before giving up on the margin.
VERIFY_ATTEMPTS = 3


@dataclass(frozen=True)
class SearchOptions:
    """Spans and extras of the search (SI units)."""

    resistance_span_ohm: tuple[float, float]
    grid_resistance_span_ohm: tuple[float, float]
    corner_span_hz: tuple[float, float]
    element_tolerance: float | None = None
    parameter_tolerances: tuple[tuple[str, float], ...] = ()
    samples: int = 1000
    seed: int = 1
    distribution: str = "uniform"
    bias_current_a: float | None = None
    bias_voltage_v: float | None = None
    load_dc_resistance_ohm: float | None = None
    device_dc_resistance_ohm: float | None = None
    load_parameters: dict[str, float] = field(default_factory=dict)


@dataclass(frozen=True)
class Outcome:
    """A suggestion or the reason there is none, and how many candidates were judged."""

    found: Suggestion | Unsolved
    judged: int


def search(scanner: Scanner, placement: Placement, options: SearchOptions) -> Outcome:
    """Scan ``placement``, choose and verify its values."""
    if placement.family.corner:
        return _search_corner(scanner, placement, options)
    return _search_single(scanner, placement, options)


def _search_single(scanner: Scanner, placement: Placement, options: SearchOptions) -> Outcome:
    grid = np.geomspace(*options.resistance_span_ohm, LINE_POINTS)
    line = scanner.line(placement, RESISTANCE, grid, {})
    judged = line.grid.size
    if not line.ranges:
        return Outcome(_unsolved(scanner, placement, line), judged)
    candidates, count = _candidates(scanner, placement, line, {}, options)
    judged += count
    if not candidates:
        return Outcome(_only_limits(placement), judged)
    values, verified = _verify_first(scanner, placement, candidates, options)
    chosen = values[RESISTANCE]
    stable = {RESISTANCE: _holding(line.ranges, chosen)}
    others = {RESISTANCE: tuple(r for r in line.ranges if r is not stable[RESISTANCE])}
    return Outcome(
        _suggestion(scanner, placement, values, verified, stable, others, (line,), options),
        judged,
    )


def _search_corner(scanner: Scanner, placement: Placement, options: SearchOptions) -> Outcome:
    selected = placement.family
    second = selected.elements[1]
    low, high = options.resistance_span_ohm
    resistances = np.geomspace(*options.grid_resistance_span_ohm, GRID_RESISTANCES)
    corners = np.geomspace(*options.corner_span_hz, GRID_CORNERS)
    resistance, corner = (a.ravel() for a in np.meshgrid(resistances, corners, indexing="ij"))
    grid = {
        RESISTANCE: resistance,
        second: families.second_element_for_corner(selected, resistance, corner),
    }
    evaluation = scanner.evaluate(placement, grid)
    judged = resistance.size
    order = scan.choice_order(evaluation, connection=placement.family.connection)
    if order.size == 0:
        return Outcome(_unsolved_grid(scanner, placement, evaluation), judged)
    best = scan.as_dict(evaluation.take(order[:1]).values)
    held = scan.nearest_preferred(best[second], E12)
    r_grid = np.geomspace(low, high, CORNER_LINE_POINTS)
    r_line = scanner.line(placement, RESISTANCE, r_grid, {second: held})
    judged += r_line.grid.size
    if not r_line.ranges:
        held = best[second]
        r_line = scanner.line(placement, RESISTANCE, r_grid, {second: held})
        judged += r_line.grid.size
    if not r_line.ranges:
        return Outcome(_unsolved_grid(scanner, placement, evaluation), judged)
    candidates, count = _candidates(scanner, placement, r_line, {second: held}, options)
    judged += count
    if not candidates:
        return Outcome(_only_limits(placement), judged)
    values, verified = _verify_first(scanner, placement, candidates, options)
    chosen = values[RESISTANCE]
    x_grid = np.geomspace(held / 1e3, held * 1e3, CORNER_LINE_POINTS)
    x_line = scanner.line(placement, second, x_grid, {RESISTANCE: chosen})
    judged += x_line.grid.size
    stable = {
        RESISTANCE: _holding(r_line.ranges, chosen),
        second: _holding(x_line.ranges, values[second]),
    }
    others = {
        RESISTANCE: tuple(r for r in r_line.ranges if r is not stable[RESISTANCE]),
        second: tuple(r for r in x_line.ranges if r is not stable[second]),
    }
    suggestion = _suggestion(
        scanner, placement, values, verified, stable, others, (r_line, x_line), options
    )
    return Outcome(suggestion, judged)


# -- choosing -------------------------------------------------------------------------------


def _candidates(
    scanner: Scanner,
    placement: Placement,
    line: Line,
    fixed: dict[str, float],
    options: SearchOptions,
) -> tuple[list[dict[str, float]], int]:
    """The resistances to verify, best first: preferred values inside the line's ranges, or the
    line's own values when no preferred value reaches the goal; and how many were judged."""
    connection = placement.family.connection
    tolerance = options.element_tolerance
    preferred = _preferred_in(line, E24)
    candidates: list[dict[str, float]] = []
    if preferred.size:
        values = {
            RESISTANCE: preferred,
            **{k: np.full(preferred.size, v) for k, v in fixed.items()},
        }
        evaluation = scanner.evaluate(placement, values)
        candidates = _ordered(evaluation, line, tolerance, RESISTANCE, connection)
    if not candidates:
        candidates = _ordered(_inner(line), line, tolerance, RESISTANCE, connection)
    return candidates, int(preferred.size)


def _only_limits(placement: Placement) -> Unsolved:
    return Unsolved(
        placement.topology,
        placement.position,
        "Only the stand-in for a limit (a short or an open, a million times beyond the values"
        " scanned) reaches the goal: no practical value does.",
    )


def _preferred_in(line: Line, series: tuple[float, ...]) -> np.ndarray:
    """Preferred values inside any of the line's ranges (open ends cut at the scanned grid)."""
    inner = line.grid[1:-1]
    parts = [
        scan.preferred_values(
            inner[0] if r.low is None else r.low, inner[-1] if r.high is None else r.high, series
        )
        for r in line.ranges
    ]
    found = np.unique(np.concatenate(parts)) if parts else np.zeros(0)
    return found if found.size else np.zeros(0)


def _inner(line: Line) -> Evaluation:
    """The line's own candidates without the stand-ins for the limits."""
    return line.evaluation.take(np.arange(1, line.grid.size - 1))


def _ordered(
    evaluation: Evaluation, line: Line, tolerance: float | None, key: str, connection: str
) -> list[dict[str, float]]:
    """Candidates best first; with a tolerance, those that keep the goal and the margin over
    ±tolerance along the line (every scanned value there, and both ends inside a stable range)
    come before the rest."""
    values = evaluation.values[key]
    allowed = None
    if tolerance:
        low, high = values * (1 - tolerance), values * (1 + tolerance)
        scanned = line.grid
        good = line.evaluation.margin_met
        allowed = np.array(
            [
                any(r.contains(a) and r.contains(b) for r in line.ranges)
                and bool(np.all(good[(scanned >= a) & (scanned <= b)]))
                for a, b in zip(low, high, strict=True)
            ],
            dtype=bool,
        )
    order = scan.choice_order(evaluation, allowed, connection)
    return [scan.as_dict(evaluation.take(order[i : i + 1]).values) for i in range(order.size)]


def _verify_first(
    scanner: Scanner,
    placement: Placement,
    candidates: list[dict[str, float]],
    options: SearchOptions,
) -> tuple[dict[str, float], verify.Verified]:
    """The first candidate whose full check reaches goal and margin (else the best tried)."""
    tried: list[tuple[dict[str, float], verify.Verified]] = []
    for values in candidates[:VERIFY_ATTEMPTS]:
        verified = verify.verify(
            placement,
            values,
            scanner.requirement,
            options.load_dc_resistance_ohm,
            scanner.original_latch_up if options.device_dc_resistance_ohm is None else None,
        )
        if verified.margin_met:
            return values, verified
        tried.append((values, verified))
    ranked = sorted(tried, key=lambda item: (not item[1].goal_met, -item[1].margins.min_distance))
    return ranked[0]


def _holding(ranges: tuple[Range, ...], value: float) -> Range:
    for candidate in ranges:
        if candidate.contains(value):
            return candidate
    # A value verified outside every scanned run lies between grid points: a range of its own.
    return Range(value, value, None, None)


# -- what is reported -----------------------------------------------------------------------


def _suggestion(
    scanner: Scanner,
    placement: Placement,
    values: dict[str, float],
    verified: verify.Verified,
    stable: dict[str, Range],
    others: dict[str, tuple[Range, ...]],
    lines: tuple[Line, ...],
    options: SearchOptions,
) -> Suggestion:
    requirement = scanner.requirement
    check = verified.check
    cost: Any
    if requirement.keep:
        cost = verify.wanted_mode(check, requirement, verified.goal_met)
    else:
        cost = verify.gain_cost(placement, values, requirement, scanner.band_columns)
    tolerance = _monte_carlo(scanner, placement, values, options)
    notes = _notes(placement, stable)
    return Suggestion(
        topology=placement.topology,
        position=placement.position,
        description=placement.family.description
        if placement.at_port
        else f"a resistor {placement.position.describe()} in the load netlist",
        elements={key: float(values[key]) for key in placement.elements},
        corner_frequency_hz=families.corner_frequency_hz(placement.family, values),
        stable_range=stable,
        other_ranges={key: ranges for key, ranges in others.items() if ranges},
        reaches_margin=verified.margin_met,
        goal_met_after=verified.goal_met,
        verdict_after=check.verdict,
        encirclements_after=check.encirclements,
        margins_after=verified.margins,
        cost=cost,
        tolerance=tolerance,
        bias=_bias(placement, values, options),
        notes=notes,
        check_after=check,
        lines=lines,
    )


def _monte_carlo(
    scanner: Scanner, placement: Placement, values: dict[str, float], options: SearchOptions
) -> ToleranceRun | None:
    """The fraction of a seeded Monte Carlo that still reaches the goal (and the margin)."""
    if not options.element_tolerance and not options.parameter_tolerances:
        return None
    from ..sweep.plan import monte_carlo_plan

    added = options.element_tolerance
    tolerances = [(key, added) for key in placement.elements] if added else []
    tolerances += list(options.parameter_tolerances)
    nominal = {**values, **options.load_parameters}
    from ..sweep.runner import CHUNK_SAMPLES

    plan = monte_carlo_plan(
        tolerances, nominal, options.samples, options.seed, options.distribution
    )
    # Chunk by chunk, as a sweep runs, so memory stays that of one chunk whatever --samples.
    step = max(1, CHUNK_SAMPLES // max(scanner.pair.frequency_hz.size, 1))
    goal_met = margin_met = 0
    for start in range(0, options.samples, step):
        chunk = plan.chunk(start, start + step)
        size = next(iter(chunk.values())).size
        drawn = {key: chunk.get(key, np.full(size, values[key])) for key in placement.elements}
        parameters = {name: chunk[name] for name, _ in options.parameter_tolerances}
        evaluation = scanner.evaluate(placement, drawn, parameters or None)
        goal_met += int(np.count_nonzero(evaluation.goal_met))
        margin_met += int(np.count_nonzero(evaluation.margin_met))
    return ToleranceRun(
        samples=options.samples,
        seed=options.seed,
        distribution=options.distribution,
        tolerances=dict(tolerances),
        fraction_goal_met=goal_met / options.samples,
        fraction_margin_met=margin_met / options.samples,
    )


def _bias(
    placement: Placement, values: dict[str, float], options: SearchOptions
) -> BiasFigures | None:
    """DC drop, current and dissipation of the added resistor at the stated bias."""
    if not placement.at_port:
        return None
    resistance = values[RESISTANCE]
    current, voltage = options.bias_current_a, options.bias_voltage_v
    if placement.topology == "series-resistor" and current is not None:
        return BiasFigures(current * resistance, current, current**2 * resistance)
    if placement.topology == "shunt-resistor" and voltage is not None:
        return BiasFigures(voltage, voltage / resistance, voltage**2 / resistance)
    if placement.topology in ("series-rl", "shunt-rc") and (current or voltage) is not None:
        return BiasFigures(0.0, 0.0, 0.0)
    return None


def _notes(placement: Placement, stable: dict[str, Range]) -> tuple[str, ...]:
    notes = []
    for found in stable.values():
        if found.low is None or found.high is None:
            notes.append(
                "An open end: the goal holds at the last value scanned and at a million times"
                " beyond it (standing in for a short or an open); values between were not all"
                " judged."
            )
            break
    if placement.topology == "series-resistor" and placement.at_port:
        notes.append(
            "It carries the device's bias current if the bias is fed through the load: the DC"
            " drop moves the bias point and the upper end of the range is where the DC load"
            " line stops holding the device."
        )
    return tuple(notes)


def _unsolved(scanner: Scanner, placement: Placement, line: Line) -> Unsolved:
    inner = _inner(line)
    return Unsolved(
        placement.topology,
        placement.position,
        _why_none(scanner, placement, inner, line.grid[1:-1]),
    )


def _unsolved_grid(scanner: Scanner, placement: Placement, evaluation: Evaluation) -> Unsolved:
    resistance = evaluation.values[RESISTANCE]
    return Unsolved(
        placement.topology,
        placement.position,
        _why_none(scanner, placement, evaluation, np.sort(resistance)),
    )


def _why_none(
    scanner: Scanner, placement: Placement, evaluation: Evaluation, grid: np.ndarray
) -> str:
    codes = evaluation.verdict_code
    words = scan.VERDICT_WORDS
    counted = ", ".join(
        f"{int(np.sum(codes == code))} {words[code].replace('-', ' ')}"
        for code in range(len(words))
        if np.any(codes == code)
    )
    span = f"{format_value(grid[0], 'ohm')} to {format_value(grid[-1], 'ohm')}"
    reason = f"No value reaches the goal ({span}; the judgement says {counted})."
    if scanner.original_latch_up and placement.family.corner and placement.at_port:
        return reason + (
            " The pair latches up (a real root set at DC), and this network adds nothing at DC:"
            " it cannot remove a latch-up."
        )
    if np.any(codes == scan.ACTS_BELOW_SWEEP):
        lowest = float(scanner.pair.frequency_hz[0])
        reason += (
            " Values whose network still acts below the sweep were not judged (a corner below"
            f" {format_frequency(scan.CORNER_FLOOR * lowest)}, ten times the lowest frequency, or a"
            " count whose parity says F(0) changed, which a network open or shorted at DC"
            " cannot do): measure lower, or give the DC resistances (--device-dc-resistance,"
            " --load-dc-resistance)."
        )
    return reason
