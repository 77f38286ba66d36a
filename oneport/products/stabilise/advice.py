"""The stabilise product: a device and its load, as the user names them, to ranked networks.

Flow: prepare and align the pair and check it as given (through :mod:`.adapter`); decide what
the networks must reach (:mod:`.goal`); for each placement scan, refine, choose and verify
(:mod:`.search`); rank the suggestions and give the verdict. It never prints, plots or exits.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import replace
from typing import Any

import numpy as np

from ...cautions import CAUTIONS, STABILISER_CAUTIONS
from ...errors import InputError
from ...units import format_frequency, parse_quantity, to_decibels
from .. import options as read_options
from ..options import pair_arguments, port_setup
from . import adapter, goal, placements, search, verify
from .families import FAMILIES
from .goal import KEEP_WINDOW, Requirement
from .result import GainCost, StabiliseResult, Suggestion, Unsolved, WantedMode
from .scan import Scanner
from .wording import lower_first, topology_words


def stabilise(
    device: Any,
    load: Any,
    *,
    margin: Any = None,
    band: Any = None,
    keep: Any = None,
    families: Sequence[str] | None = None,
    at_node: Sequence[str] = (),
    tolerance: Any = None,
    samples: int = 1000,
    seed: int = 1,
    distribution: str = "uniform",
    bias_current: Any = None,
    bias_voltage: Any = None,
    measurement_impedance_ohm: float | str | None = None,
    device_dc_resistance_ohm: float | str | None = None,
    load_dc_resistance_ohm: float | str | None = None,
    gamma_uncertainty: float | tuple[float, float] | str | None = None,
    frequency_hz: Any = None,
    terminate: Any = None,
    terminate_impedance_ohm: float | str | None = None,
    terminated_port: int = 2,
    differential_ports: Any = None,
    device_fixture: Any = None,
    device_delay_s: float | str | None = None,
    load_fixture: Any = None,
    load_delay_s: float | str | None = None,
) -> StabiliseResult:
    """Which network at the device's port (or in a load netlist) makes the pair stable, and how
    much of it? Small-signal advice, every suggestion verified by the full check.

    Parameters
    ----------
    device, load : path, OnePort, PreparedPort, Circuit or skrf.Network
        As for :func:`oneport.check`.
    margin : float, str or list of them, optional
        Minimum |1 − L| (``0.2``) and/or gain margin (``"6dB"``); default |1 − L| ≥ 0.3.
    band : str or (float, float), optional
        Where the cost is counted (``"2GHz:3GHz"`` or Hz): the gain lost there. Default: where
        the device has gain (|Γd| > 1).
    keep : float or str, optional
        A wanted oscillation (``"2.1GHz"``): the goal becomes "exactly this mode remains" and
        the cost whether it still starts.
    families : sequence of str, optional
        Which port families to try (default all: ``series-resistor``, ``shunt-resistor``,
        ``shunt-rc``, ``series-rl``); an empty sequence tries only ``at_node`` placements.
    at_node : sequence of str
        For a netlist load: a node (a resistor to ground) or a two-terminal element (a resistor
        in series with it); ``node:NAME`` or ``element:NAME`` when both exist.
    tolerance : float, str or list, optional
        ``0.05`` or ``"5%"`` for the added elements, ``"NAME=10%"`` for load netlist parameters:
        a seeded Monte Carlo of each suggestion.
    samples, seed, distribution
        The Monte Carlo's size, seed and distribution (``uniform`` or ``normal``).
    bias_current, bias_voltage : float or str, optional
        The device's DC bias (A, V; ``"20mA"``) for the resistors' drop and dissipation.
    measurement_impedance_ohm, device_dc_resistance_ohm, load_dc_resistance_ohm : optional
    gamma_uncertainty, frequency_hz : optional
    terminate, terminate_impedance_ohm, terminated_port, differential_ports : optional
    device_fixture, device_delay_s, load_fixture, load_delay_s : optional
        As for :func:`oneport.check` (numbers in SI units or text with a unit).

    Returns
    -------
    StabiliseResult

    Examples
    --------
    The shipped example that oscillates (demo diode D1 into 10 ohm + 3 nH), from the
    repository's root:

    >>> result = stabilise(
    ...     "touchstone_examples/oscillates/device.s1p",
    ...     load="touchstone_examples/oscillates/load.s1p",
    ...     families=["series-resistor"],
    ... )
    >>> result.verdict, result.suggestions[0].elements
    ('stabilised', {'resistance_ohm': 24.0})
    >>> edges = result.suggestions[0].stable_range["resistance_ohm"]
    >>> round(edges.low, 1), round(edges.high, 1)
    (8.6, 66.0)
    """
    minimum, decibels = goal.parse_margins(margin)
    keep_hz = goal.parse_frequency(keep, "--keep")
    band_hz = goal.parse_band(band)
    if keep_hz is not None and band_hz is not None:
        raise InputError("--band and --keep: give one (a band's gain, or a mode to keep)")
    element_tolerance, parameter_tolerances = _tolerances(tolerance)
    samples = read_options.samples(samples, "--samples")
    seed = read_options.seed(seed, "--seed")
    if distribution not in ("uniform", "normal"):
        raise InputError(f"--distribution {distribution!r}: accepted: uniform, normal")
    names = tuple(FAMILIES) if families is None else tuple(families)
    for name in names:
        if name not in FAMILIES:
            raise InputError(f"--family {name!r}: accepted: {', '.join(FAMILIES)}")
    if not names and not at_node:
        raise InputError("--family: give at least one family, or --at-node for a netlist load")
    current = _quantity(bias_current, "current", "--bias-current")
    voltage = _quantity(bias_voltage, "voltage", "--bias-voltage")

    sides = pair_arguments(
        measurement_impedance_ohm=measurement_impedance_ohm,
        device_dc_resistance_ohm=device_dc_resistance_ohm,
        load_dc_resistance_ohm=load_dc_resistance_ohm,
        gamma_uncertainty=gamma_uncertainty,
        frequency_hz=frequency_hz,
        load_fixture=load_fixture,
        load_delay_s=load_delay_s,
    )
    device_setup = port_setup(
        "device",
        terminate=terminate,
        terminate_impedance_ohm=terminate_impedance_ohm,
        terminated_port=terminated_port,
        differential_ports=differential_ports,
        fixture=device_fixture,
        delay_s=device_delay_s,
    )
    pair = adapter.prepare_pair(device, load, device_setup=device_setup, **sides)
    chosen = [
        *placements.port_placements(pair, names),
        *(placements.node_placement(pair, name) for name in at_node),
    ]
    original = adapter.check_pair(pair, pair.load_source, sides["load_dc_resistance_ohm"])
    band_stated = band_hz is not None
    if band_hz is None and keep_hz is None:
        band_hz = _gain_band(pair)
    requirement = Requirement(minimum, decibels, keep_hz, band_hz, band_stated)
    base = _base(original, requirement)
    if original.verdict == "inconclusive" or pair.known_poles:
        return _cannot_judge(base, original, pair.known_poles)
    if keep_hz is not None:
        _require_wanted_mode(original, keep_hz)
    if verify.goal_met_by_check(original, requirement):
        margins = verify.margins_after(original, requirement)
        met = goal.margin_met(
            requirement,
            np.array([margins.min_distance]),
            np.array([np.inf if margins.gain_margin is None else margins.gain_margin]),
        )
        if bool(met[0]):
            return replace(
                base,
                verdict="no-change-needed",
                reasons=(
                    "The pair as given already reaches the goal with the margin asked"
                    f" ({_margin_words(requirement)}); nothing need be added.",
                ),
            )

    device_dc, load_dc = sides["device_dc_resistance_ohm"], sides["load_dc_resistance_ohm"]
    scanner = Scanner(pair, requirement, device_dc, load_dc, original.latch_up)
    options = search.SearchOptions(
        resistance_span_ohm=_resistance_span(pair, 1e3),
        grid_resistance_span_ohm=_resistance_span(pair, 30.0),
        corner_span_hz=_corner_span(pair),
        element_tolerance=element_tolerance,
        parameter_tolerances=parameter_tolerances,
        samples=samples,
        seed=seed,
        distribution=distribution,
        bias_current_a=current,
        bias_voltage_v=voltage,
        load_dc_resistance_ohm=load_dc,
        device_dc_resistance_ohm=device_dc,
        load_parameters=dict(pair.load_circuit.parameters) if pair.load_circuit else {},
    )
    if parameter_tolerances and pair.load_circuit is None:
        raise InputError(
            "--tolerance NAME=…: the load is not a netlist, so it has no parameters to vary;"
            " give the added elements' tolerance alone (e.g. --tolerance 5%)"
        )
    found: list[Suggestion] = []
    unsolved: list[Unsolved] = []
    judged = 0
    for placement in chosen:
        outcome = search.search(scanner, placement, options)
        judged += outcome.judged
        if isinstance(outcome.found, Suggestion):
            found.append(outcome.found)
        else:
            unsolved.append(outcome.found)
    ranked = tuple(sorted(found, key=_rank))
    verdict = "stabilised" if any(s.reaches_margin for s in ranked) else "not-stabilised"
    reasons, next_steps = _explain(verdict, original, requirement, ranked, unsolved, pair)
    return replace(
        base,
        verdict=verdict,
        reasons=tuple(reasons),
        next_steps=tuple(next_steps),
        suggestions=ranked,
        unsolved=tuple(unsolved),
        candidates_judged=judged,
    )


# -- inputs ---------------------------------------------------------------------------------


def _tolerances(tolerance: Any) -> tuple[float | None, tuple[tuple[str, float], ...]]:
    """The added elements' tolerance (a fraction) and netlist parameters' (name, fraction)."""
    from ..sweep.plan import parse_tolerance

    if tolerance is None:
        return None, ()
    items = tolerance if isinstance(tolerance, list | tuple) else [tolerance]
    added: float | None = None
    parameters: list[tuple[str, float]] = []
    for item in items:
        if isinstance(item, int | float):
            if not 0.0 < float(item) < 1.0:
                raise InputError(f"tolerance {item!r}: a fraction between 0 and 1 (0.05 is 5 %)")
            added = float(item)
        elif "=" in str(item):
            parameters.append(parse_tolerance(str(item)))
        else:
            match = re.match(r"^\s*([0-9.]+(?:[eE][+-]?\d+)?)\s*%\s*$", str(item))
            percent = float(match.group(1)) if match else float("nan")
            if not 0.0 < percent < 100.0:
                raise InputError(
                    f"--tolerance {item!r}: give PERCENT% for the added elements (e.g. 5%), or"
                    " NAME=PERCENT% for a load netlist parameter (e.g. Lb=10%)"
                )
            added = percent / 100.0
    return added, tuple(parameters)


def _quantity(value: Any, kind: str, option: str) -> float | None:
    if value is None:
        return None
    number = parse_quantity(value, kind, option=option) if isinstance(value, str) else value
    if not (np.isfinite(number) and number > 0):
        raise InputError(f"{option} {value!r}: a positive {kind} is needed (e.g. 20mA, 1.2V)")
    return float(number)


# -- spans ----------------------------------------------------------------------------------


def _negative_resistance_ohm(pair: adapter.PreparedPair) -> float:
    """The device's typical |negative resistance| where it has one (median), else Z0."""
    z0 = pair.reference_impedance_ohm
    with np.errstate(divide="ignore", invalid="ignore"):
        resistance = (z0 * (1 + pair.gamma_device) / (1 - pair.gamma_device)).real
    negative = -resistance[np.isfinite(resistance) & (resistance < 0)]
    return float(np.median(negative)) if negative.size else z0


def _resistance_span(pair: adapter.PreparedPair, factor: float) -> tuple[float, float]:
    """From Z0 and the device's |Rd|: the smaller of them / ``factor`` to the larger × it."""
    z0 = pair.reference_impedance_ohm
    typical = _negative_resistance_ohm(pair)
    return min(z0, typical) / factor, max(z0, typical) * factor


def _corner_span(pair: adapter.PreparedPair) -> tuple[float, float]:
    """Corners from a decade below the lowest analysed frequency to the highest."""
    frequency = pair.frequency_hz[pair.frequency_hz > 0]
    return float(frequency[0]) / 10.0, float(frequency[-1])


def _gain_band(pair: adapter.PreparedPair) -> tuple[float, float] | None:
    """Where the device has reflection gain (|Γd| > 1) in the analysed band, Hz."""
    gain = np.abs(pair.gamma_device) > 1.0
    if not gain.any():
        return None
    frequency = pair.frequency_hz[gain]
    return float(frequency[0]), float(frequency[-1])


# -- the verdict ----------------------------------------------------------------------------


def _base(original: Any, requirement: Requirement) -> StabiliseResult:
    premise = (
        original.premise
        + " Each candidate network is judged by the check's vectorised judgement (the same"
        " closure and sampling rules; a passive network added to a passive load adds no poles,"
        " so P stays 0), and each suggestion by the full check on the changed pair."
    )
    return StabiliseResult(
        verdict="inconclusive",
        reasons=(),
        next_steps=(),
        premise=premise,
        requirement=requirement,
        original=original,
        suggestions=(),
        unsolved=(),
        candidates_judged=0,
        warnings=tuple(original.warnings),
        cautions=CAUTIONS + STABILISER_CAUTIONS,
        reference_impedance_ohm=original.reference_impedance_ohm,
    )


def _cannot_judge(base: StabiliseResult, original: Any, known_poles: int) -> StabiliseResult:
    if original.verdict == "inconclusive":
        reasons = (
            "The pair as given cannot be judged, so there is no sound starting point to"
            " stabilise from:",
            *original.reasons,
        )
        return replace(base, reasons=reasons, next_steps=tuple(original.next_steps))
    return replace(
        base,
        reasons=(
            f"A netlist side has {known_poles} natural"
            f" {'frequency' if known_poles == 1 else 'frequencies'} of its own in the right half"
            f" plane terminated in {original.reference_impedance_ohm:g} ohm; the scan judges"
            " candidates with P = 0 and cannot count them.",
        ),
        next_steps=(
            "Analyse in an impedance where the netlist device is stable (--measurement-impedance),"
            " or check single variants with oneport check.",
        ),
    )


def _require_wanted_mode(original: Any, keep_hz: float) -> None:
    modes = original.oscillation_frequencies_hz
    if original.verdict == "unstable" and any(
        abs(mode - keep_hz) <= KEEP_WINDOW * keep_hz for mode in modes
    ):
        return
    found = ", ".join(format_frequency(m) for m in modes) or "none"
    raise InputError(
        f"--keep {format_frequency(keep_hz)}: the pair as given has no oscillation within"
        f" {KEEP_WINDOW:.0%} of it to keep (its modes: {found}; verdict {original.verdict})"
    )


def _rank(suggestion: Suggestion) -> tuple[Any, ...]:
    cost = suggestion.cost
    if isinstance(cost, GainCost):
        value = cost.largest_loss
    elif isinstance(cost, WantedMode):
        crossing = cost.crossing_frequency_hz
        value = abs(crossing - cost.keep_hz) / cost.keep_hz if crossing else np.inf
    else:
        value = 0.0
    return (
        not suggestion.reaches_margin,
        not suggestion.goal_met_after,
        value if suggestion.reaches_margin else -suggestion.margins_after.min_distance,
    )


def _margin_words(requirement: Requirement) -> str:
    parts = []
    if requirement.min_distance is not None:
        parts.append(f"|1 - L| ≥ {requirement.min_distance:g}")
    if requirement.gain_margin is not None:
        parts.append(f"gain margin ≥ {to_decibels(requirement.gain_margin):g} dB")
    return " and ".join(parts)


def _goal_words(requirement: Requirement) -> str:
    if requirement.keep_hz is None:
        return "stable"
    return f"only the wanted mode near {format_frequency(requirement.keep_hz)} left"


def _explain(
    verdict: str,
    original: Any,
    requirement: Requirement,
    ranked: tuple[Suggestion, ...],
    unsolved: list[Unsolved],
    pair: adapter.PreparedPair,
) -> tuple[list[str], list[str]]:
    tried = len(ranked) + len(unsolved)
    reaching = [s for s in ranked if s.reaches_margin]
    goal_words, margin_words = _goal_words(requirement), _margin_words(requirement)
    first = original.reasons[0]
    reasons = [f"As given the pair is {original.verdict}: {lower_first(first)}"]
    next_steps: list[str] = []
    if verdict == "stabilised":
        best = reaching[0]
        verb = "leaves" if len(reaching) == 1 else "leave"
        reasons.append(
            f"{len(reaching)} of the {tried} networks tried {verb} it {goal_words} with"
            f" {margin_words}, each verified by the full check on the changed pair; ranked by"
            " what they cost."
        )
        next_steps.append(
            f"Fit the first suggestion ({topology_words(best.topology)},"
            f" {best.position.describe()}), then"
            " measure the pair again and check it before raising the bias fully."
        )
        return reasons, next_steps
    if not ranked:
        reasons.append(
            f"No value of any of the {tried} networks tried leaves the pair {goal_words}."
        )
    else:
        closest = max(ranked, key=lambda s: (s.goal_met_after, s.margins_after.min_distance))
        reasons.append(
            f"{len(ranked)} {'network reaches' if len(ranked) == 1 else 'networks reach'} the"
            f" goal ({goal_words}) but {'not' if len(ranked) == 1 else 'none'} with"
            f" {margin_words}: the best, {topology_words(closest.topology)}"
            f" {closest.position.describe()},"
            f" reaches |1 - L| = {closest.margins_after.min_distance:.3g}."
        )
    gain = np.abs(pair.gamma_device)
    peak = int(np.argmax(gain))
    if gain[peak] > 1.0:
        reasons.append(
            f"The device has up to {20 * np.log10(gain[peak]):.1f} dB of reflection gain (at"
            f" {format_frequency(pair.frequency_hz[peak])}, Z0 ="
            f" {pair.reference_impedance_ohm:g} ohm): more than these networks absorb without"
            " taking the loop too close to +1 elsewhere or killing the band."
        )
    next_steps.append(
        "Relax the margin (--margin), try a network inside the load netlist (--at-node), or"
        " change the load itself (its loss or its resonance) where the loop passes closest to"
        " +1."
    )
    return reasons, next_steps
