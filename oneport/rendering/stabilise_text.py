"""Plain-text report of stabilising advice, verdict first, cautions last.

Rendering only: it formats what a :class:`~oneport.products.stabilise.StabiliseResult` holds
(ranked suggestions with their ranges, the check after, the margins, the cost) and computes
nothing. dB, GHz and component prefixes appear here and in the product's reasons only.
"""

from __future__ import annotations

import math

from ..products.stabilise.result import (
    GainCost,
    MarginsAfter,
    StabiliseResult,
    Suggestion,
    WantedMode,
)
from ..products.stabilise.scan import Range
from ..products.stabilise.wording import LETTERS, format_element, format_value, topology_words
from ..units import format_frequency, format_plain, format_rate, format_resistance, to_decibels
from .check_text import closing_sections, wrap

_HEADLINE = {
    "stabilised": "STABILISED",
    "no-change-needed": "NO CHANGE NEEDED",
    "not-stabilised": "NOT STABILISED",
    "inconclusive": "INCONCLUSIVE: no sound advice from these data",
}
_BEYOND = {
    "stable": "stable",
    "unstable": "unstable",
    "inconclusive": "inconclusive",
    "acts-below-sweep": "the network acts below the sweep",
}


def verdict_line(result: StabiliseResult) -> str:
    """One line: the verdict and the first suggestion."""
    head = _HEADLINE[result.verdict]
    reaching = [s for s in result.suggestions if s.reaches_margin]
    if result.verdict == "stabilised":
        tried = len(result.suggestions) + len(result.unsolved)
        verb = "networks reaches" if len(reaching) == 1 else "networks reach"  # 1 of 4 …
        return (
            f"{head}: {len(reaching)} of {tried} {verb} {_margin(result)};"
            f" best: {_short(reaching[0])}"
        )
    if result.verdict == "not-stabilised":
        return f"{head}: no network tried reaches {_goal(result)} with {_margin(result)}"
    if result.verdict == "no-change-needed":
        return f"{head}: the pair is already {_goal(result)} with {_margin(result)}"
    return head


def render(result: StabiliseResult) -> str:
    """The full text report."""
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += ["", *_goal_section(result)]
    if result.suggestions:
        parts += ["", "Suggestions (ranked; each verified by the full check on the changed pair)"]
        for rank, suggestion in enumerate(result.suggestions, start=1):
            parts += _suggestion(rank, suggestion)
    if result.unsolved:
        parts += ["", "Networks with no value that reaches the goal"]
        for unsolved in result.unsolved:
            where = unsolved.position.describe()
            parts.append(wrap(f"{topology_words(unsolved.topology)} {where}:", "  "))
            parts.append(wrap(unsolved.reason, "      "))
    parts += ["", *_before(result)]
    parts += closing_sections(result.warnings, result.next_steps, result.premise, result.cautions)
    return "\n".join(parts) + "\n"


def _goal_section(result: StabiliseResult) -> list[str]:
    requirement = result.requirement
    rows = ["Goal"]
    rows.append(f"  {_goal(result)}, with {_margin(result)} (Z0 = {_z0(result)})")
    if requirement.keep_hz is not None:
        rows.append(
            "  cost: how far the wanted mode moves, and whether it still starts (its growth"
            " rate, the ratio of negative to load resistance)"
        )
    elif requirement.band_hz is not None:
        low, high = requirement.band_hz
        where = "as asked" if requirement.band_stated else "where the device has gain"
        rows.append(
            f"  cost: gain lost in {format_frequency(low)}-{format_frequency(high)} ({where})"
        )
    if result.candidates_judged:
        rows.append(f"  {result.candidates_judged} candidate values judged")
    return rows


def _suggestion(rank: int, suggestion: Suggestion) -> list[str]:
    marker = "" if suggestion.reaches_margin else "  (short of the margin)"
    rows = [f"  {rank}. {_short(suggestion)}{marker}"]
    rows.append(wrap(suggestion.description, "       "))
    for key, found in suggestion.stable_range.items():
        rows.append(wrap(_range(key, found), f"       {LETTERS[key]} range   "))
        for other in suggestion.other_ranges.get(key, ()):
            rows.append(wrap(_range(key, other), "         also    "))
    check = suggestion.check_after
    count = "N = ?" if check.encirclements is None else f"N = {check.encirclements}"
    after = f"{check.verdict}, {count}"
    if check.oscillation_frequencies_hz:
        listed = ", ".join(format_frequency(f) for f in check.oscillation_frequencies_hz)
        after += f", oscillation near {listed}"
    rows.append(f"       after     {after}")
    rows.append(wrap(_margins(suggestion.margins_after, check.verdict), "       margins   ", 17))
    cost = suggestion.cost
    if isinstance(cost, GainCost):
        rows.append(wrap(_gain_cost(cost), "       cost      "))
    elif isinstance(cost, WantedMode):
        rows.append(wrap(_wanted(cost), "       wanted    "))
    if suggestion.tolerance is not None:
        run = suggestion.tolerance
        listed = ", ".join(f"{_tolerance_name(k)} ±{v:.0%}" for k, v in run.tolerances.items())
        rows.append(
            wrap(
                f"{listed}: {run.fraction_goal_met:.1%} reach the goal,"
                f" {run.fraction_margin_met:.1%} also the margin ({run.samples} samples,"
                f" {run.distribution}, seed {run.seed})",
                "       tolerance ",
            )
        )
    if suggestion.bias is not None:
        rows.append(wrap(_bias(suggestion), "       bias      "))
    for note in suggestion.notes:
        rows.append(wrap(note, "       note      "))
    if check.verdict != "stable" and check.reasons and not suggestion.goal_met_after:
        rows.append(wrap(" ".join(check.reasons), "       why       ", 17))
    return rows


def _short(suggestion: Suggestion) -> str:
    values = " + ".join(format_element(k, v) for k, v in suggestion.elements.items())
    corner = (
        f" (corner {format_frequency(suggestion.corner_frequency_hz)})"
        if suggestion.corner_frequency_hz is not None
        else ""
    )
    where = suggestion.position.describe()
    return f"{topology_words(suggestion.topology)} {values} {where}{corner}"


def _range(key: str, found: Range) -> str:
    """The stable range in words: where the scan's own end holds, the range runs on to 0 or
    without limit; beyond each stated end, what the values there give."""
    if found.low is None and found.high is None:
        text = "any value (the goal holds at both ends of the scan)"
    elif found.low is None:
        assert found.high is not None
        text = (
            f"any value up to {format_element(key, found.high)} (the goal holds down to the"
            f" scan's lowest value, standing in for {format_element(key, 0.0)})"
        )
    elif found.high is None:
        text = (
            f"any value from {format_element(key, found.low)} up (the goal holds at the scan's"
            " highest value, standing in for no limit)"
        )
    else:
        text = f"{format_element(key, found.low)} to {format_element(key, found.high)}"
    beyond = [
        f"{side} {format_element(key, value)}: {_BEYOND[word]}"
        for word, side, value in (
            (found.beyond_low, "below", found.low),
            (found.beyond_high, "above", found.high),
        )
        if word is not None and value is not None
    ]
    return text + (f"; {'; '.join(beyond)}" if beyond else "")


def _margins(margins: MarginsAfter, verdict: str) -> str:
    """The distance from +1 always; gain and phase margins only for a stable pair."""
    where = " away from the wanted mode" if margins.outside_wanted_mode else ""
    text = f"|1 - L| = {format_plain(margins.min_distance)}"
    if margins.min_distance_frequency_hz is not None:
        text += f" at {format_frequency(margins.min_distance_frequency_hz)}"
    if verdict != "stable":
        return text + where + " (no gain or phase margin: the changed pair is not stable)"
    gain = margins.gain_margin
    text += (
        "; gain margin none: L does not cross the real axis between 0 and +1"
        if gain is None or not math.isfinite(gain)
        else f"; gain margin {to_decibels(gain):.1f} dB"
    )
    if margins.phase_margin_rad is not None:
        text += f"; phase margin {math.degrees(margins.phase_margin_rad):.0f}°"
    return text + where


def _gain_cost(cost: GainCost) -> str:
    """Before and after with as many decimals as it takes for a loss to show in them."""
    what = "reflection gain |Γ|²" if cost.kind == "reflection-gain" else "loop gain |L|"
    low, high = cost.band_hz
    before = (to_decibels(cost.before[0]), to_decibels(cost.before[1]))
    after = (to_decibels(cost.after[0]), to_decibels(cost.after[1]))
    largest_loss_db = to_decibels(cost.largest_loss)
    decimals = 1
    while decimals < 3 and _span(before, decimals) == _span(after, decimals):
        decimals += 1
    band = f"{what} in {format_frequency(low)}-{format_frequency(high)}"
    if round(largest_loss_db, decimals) <= 0:
        return (
            f"{band}: {_span(before, decimals)} dB before and after; no loss larger"
            f" than {0.5 * 10.0**-decimals:g} dB"
        )
    return (
        f"{band}: {_span(before, decimals)} dB before,"
        f" {_span(after, decimals)} dB after; at most"
        f" {largest_loss_db:.{max(decimals, 2)}f} dB lost"
        f" (at {format_frequency(cost.largest_loss_frequency_hz)})"
    )


def _span(values: tuple[float, float], decimals: int) -> str:
    return f"{values[0]:.{decimals}f} to {values[1]:.{decimals}f}"


def _wanted(mode: WantedMode) -> str:
    if not mode.starts:
        return f"the mode near {format_frequency(mode.keep_hz)} does not start on this pair"
    crossing = mode.crossing_frequency_hz or 0.0
    shift = (crossing - mode.keep_hz) / mode.keep_hz
    parts = [f"starts: crossing at {format_frequency(crossing)} ({shift:+.1%} from the wanted)"]
    if mode.loop_gain_at_crossing is not None:
        parts[0] += f" with |L| = {to_decibels(mode.loop_gain_at_crossing):.2f} dB"
    if mode.sigma_per_s is not None and mode.natural_frequency_hz is not None:
        parts.append(
            f"natural frequency {format_frequency(mode.natural_frequency_hz)}, growth rate"
            f" {format_rate(mode.sigma_per_s)} (pole-zero fit)"
        )
    else:
        parts.append("the pole-zero fit does not confirm its growth rate")
    if mode.resistance_ratio is not None:
        parts.append(
            f"negative to load resistance {mode.resistance_ratio:.2g}:1"
            f" ({mode.resistance_ratio_form} form; about 3:1 is common practice for a sure start)"
        )
    return "; ".join(parts)


def _bias(suggestion: Suggestion) -> str:
    bias = suggestion.bias
    assert bias is not None
    if not bias.power_w:
        return "no DC through its resistor (a capacitor blocks it or an inductor bypasses it)"
    parts = []
    if bias.voltage_drop_v is not None and suggestion.topology == "series-resistor":
        parts.append(f"{format_value(bias.voltage_drop_v, 'V')} DC drop")
    if bias.current_a is not None and suggestion.topology == "shunt-resistor":
        parts.append(f"draws {format_value(bias.current_a, 'A')} from the bias")
    parts.append(f"dissipates {format_value(bias.power_w, 'W')} at DC")
    return ", ".join(parts) + "; rate it for at least twice that"


def _before(result: StabiliseResult) -> list[str]:
    original = result.original
    count = "N = ?" if original.encirclements is None else f"N = {original.encirclements}"
    text = f"{original.verdict}, {count}"
    if original.latch_up:
        text += ", latch-up (real root)"
    if original.oscillation_frequencies_hz:
        listed = ", ".join(format_frequency(f) for f in original.oscillation_frequencies_hz)
        text += f", oscillation near {listed}"
    margins = original.margins
    text += f"; |1 - L| = {format_plain(margins.modulus_margin)}"
    return [f"Before (the pair as given, Z0 = {_z0(result)})", f"  {text}"]


def _goal(result: StabiliseResult) -> str:
    keep = result.requirement.keep_hz
    if keep is None:
        return "stable"
    return f"only the wanted mode near {format_frequency(keep)} left"


def _margin(result: StabiliseResult) -> str:
    requirement = result.requirement
    parts = []
    if requirement.min_distance is not None:
        parts.append(f"|1 - L| ≥ {requirement.min_distance:g}")
    if requirement.gain_margin is not None:
        parts.append(f"gain margin ≥ {to_decibels(requirement.gain_margin):g} dB")
    where = " away from the wanted mode" if requirement.keep_hz is not None else ""
    return " and ".join(parts) + where


def _tolerance_name(key: str) -> str:
    return LETTERS.get(key, key) if key in LETTERS else key


def _z0(result: StabiliseResult) -> str:
    return format_resistance(result.reference_impedance_ohm)


def quiet(result: StabiliseResult) -> str:
    """The verdict line only."""
    return verdict_line(result)
