"""The oscillator verdict, its reasons, warnings and the method's stated limits.

Whether the circuit starts from noise is the small-signal Nyquist count with the device at its
smallest level (the check's own judgement, METHODS §2); where the oscillation settles is
Kurokawa's (METHODS §4). Verdict words (docs/oscillator.md), decided in this order:

- ``inconclusive``: the small-signal count cannot decide whether it starts; exit 4.
- ``latch-up``: the count is odd: a real right-half-plane root runs the bias point away before
  any oscillation settles; exit 3.
- ``outside-data``: the count is still positive at the largest level in the data, so the
  amplitude runs past it (extend the drive levels); exit 4.
- ``inconclusive``: a point where the device line meets the load locus almost tangentially
  (the sign of S cannot be trusted), or growth from noise with no stable point found; exit 4.
- ``mode-jumping``: several Kurokawa-stable points; exit 3.
- ``settles``: it starts from noise and has exactly one stable point; exit 0.
- ``hard-excitation``: it does not start from noise but has one stable point that a kick
  reaches (hysteresis); exit 3.
- ``no-oscillation``: no growth from noise and no stable point; exit 3.

This room decides; it never prints, plots or exits.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from ...findings import Finding
from ...reading.alignment import AlignedPair
from ...units import format_engineering, format_frequency, format_power
from .lines import COUNT_GRID_POINTS, COUNT_GRID_SPAN, NETLIST_GRID_POINTS
from .manifest import DeviceDescription, DriveLevelDevice, IVDevice
from .result import LevelCount, OperatingPoint
from .solve import Loop
from .wording import format_level, format_plain, format_rate, quantity_words

#: Largest |ΔΓd| between the two lowest drive levels for the lowest to count as small-signal.
COMPRESSION_THRESHOLD = 0.02
#: Loaded Q below which the one-frequency picture is flagged as rough.
LOW_LOADED_Q = 3.0


def decide(
    loop: Loop,
    points: Sequence[OperatingPoint],
    start_up: LevelCount,
    at_top: LevelCount,
    description: DeviceDescription,
) -> tuple[str, list[str], list[str]]:
    """The verdict word, its reasons and next steps."""
    stable = [p for p in points if p.kurokawa_stable and not p.marginal]
    unstable = [p for p in points if not p.kurokawa_stable and not p.marginal]
    marginal = [p for p in points if p.marginal]
    starts = start_up.grows
    reasons = [start_sentence(start_up), *(_point_sentence(point) for point in points)]
    steps: list[str] = []
    if starts is None:
        reasons += list(start_up.reasons)
        steps += list(start_up.next_steps)
        return "inconclusive", reasons, steps
    if start_up.latch_up:
        reasons.append(
            "The count is odd: one natural frequency is real, so the bias point runs away"
            " (latch-up) before any oscillation can settle"
            + ("; the operating points above assume a bias that holds." if points else ".")
        )
        steps.append(
            "Do not apply full bias into this load: keep the bias network's DC resistance below"
            " the device's negative resistance (or add a low-frequency path that does), then"
            " analyse again."
        )
        return "latch-up", reasons, steps
    if at_top.grows:
        top = format_level(at_top.drive_level, at_top.drive_quantity)
        reasons.append(
            f"At the largest level in the data ({top})"
            f" the small-signal count is still N = {at_top.encirclements}: the amplitude keeps"
            " growing past the data, so a stable point lies outside it."
        )
        steps.append(_extend_advice(loop, description))
        return "outside-data", reasons, steps
    if marginal or (starts and not stable):
        if marginal:
            reasons.append(
                "The device line meets the load locus almost tangentially at "
                + ", ".join(format_frequency(p.frequency_hz) for p in marginal)
                + ": the sign of Kurokawa's index is not trustworthy there."
            )
            steps.append("Measure more drive levels near that amplitude, or change the load.")
        else:
            reasons.append("It grows from noise, but no stable operating point lies in the data.")
            steps.append(_extend_advice(loop, description))
        return "inconclusive", reasons, steps
    if len(stable) >= 2:
        reasons.append(
            f"{len(stable)} stable operating points: the oscillator may settle in either and jump"
            " between them with bias, temperature or load changes (hysteresis)."
        )
        steps.append(
            "Make one mode win: load the unwanted mode more heavily (lower its external Q or"
            " raise its loss) so that the device's gain cannot sustain it."
        )
        return "mode-jumping", reasons, steps
    if stable and starts:
        return "settles", reasons, steps
    if stable:
        kick = [p for p in unstable if p.amplitude < stable[0].amplitude]
        threshold = (
            f" above {format_level(kick[-1].amplitude, kick[-1].amplitude_quantity)}"
            if kick
            else ""
        )
        reasons.append(
            "It does not start from noise, but a kick" + threshold + " reaches the stable"
            " point, and once there it stays (hard excitation, hysteresis)."
        )
        steps.append(
            "For self-starting, lower the load's loss at small signal (or raise the device's"
            " small-signal gain); to keep it quiet, keep transients below the threshold."
        )
        return "hard-excitation", reasons, steps
    reasons.append("No mode grows from noise and no stable operating point lies in the data.")
    return "no-oscillation", reasons, steps


def start_sentence(count: LevelCount) -> str:
    """What the small-signal count at the smallest level says about start-up."""
    where = (
        "with the device at its smallest level"
        f" ({format_level(count.drive_level, count.drive_quantity)})"
    )
    if count.grows is None:
        return (
            f"Whether it starts from noise cannot be told: {where} the small-signal Nyquist count"
            " is undecided."
        )
    if not count.grows:
        return (
            f"Does not start from noise: {where} the small-signal Nyquist count is N = 0, no"
            " natural frequency in the right half plane."
        )
    return (
        f"Starts from noise: {where} the small-signal Nyquist count is N ="
        f" {count.encirclements}: {modes_phrase(count)}."
    )


def modes_phrase(count: LevelCount) -> str:
    """The modes a positive count establishes, with frequency and growth rate where a rational
    fit located them."""
    if count.natural_frequencies:
        parts = []
        for mode in count.natural_frequencies:
            growth = f"growing at {format_rate(mode.sigma_per_s)}"
            if mode.real:
                parts.append(f"a real root (latch-up, no oscillation frequency) {growth}")
            else:
                parts.append(f"a pair at {format_frequency(mode.frequency_hz)} {growth}")
        return "; ".join(parts)
    near = ", ".join(format_frequency(f) for f in count.oscillation_frequencies_hz)
    where = f" near {near}" if near else ""
    return (
        f"{count.encirclements} right-half-plane natural frequencies{where} (a rational fit did"
        " not locate them, so no growth rate is stated)"
    )


def _point_sentence(point: OperatingPoint) -> str:
    state = "Kurokawa-stable" if point.kurokawa_stable else "unstable"
    if point.marginal:
        state = "marginal"
    rate = point.decay_rate_per_s
    dynamics = (
        ""
        if rate is None
        else f" (perturbations {'decay' if rate > 0 else 'grow'} at {format_rate(abs(rate))})"
    )
    return (
        f"Operating point at {format_frequency(point.frequency_hz)},"
        f" {format_level(point.amplitude, point.amplitude_quantity)},"
        f" {format_power(point.load_power_w)} into the load: {state}{dynamics}."
    )


def _extend_advice(loop: Loop, description: DeviceDescription) -> str:
    high = loop.device.parameter_range[1]
    if isinstance(description, IVDevice):
        return (
            f"Raise amplitude_max_v in the manifest above {format_plain(high)} V (the I-V curve"
            " must cover the larger swing)."
        )
    unit = {"incident_power_dbm": "dBm", "peak_current_a": "A"}.get(description.quantity, "V")
    return f"Extend the drive levels above {format_plain(high)} {unit} and measure again."


def findings(
    loop: Loop,
    points: Sequence[OperatingPoint],
    start_up: LevelCount,
    at_top: LevelCount,
    description: DeviceDescription,
    pair: AlignedPair,
) -> list[Finding]:
    """Data-specific warnings (codes are documented in docs/oscillator.md)."""
    result = list(start_up.warnings)  # the small-signal count's doubts about the data
    dropped = pair.device_points_dropped_below + pair.device_points_dropped_above
    if dropped and not any(w.code == "device-points-outside-load-band" for w in result):
        result.append(
            Finding(
                "device-points-outside-load-band",
                f"{dropped} device frequency points lie outside the load's band and were left out.",
                {"points": dropped},
            )
        )
    if isinstance(description, DriveLevelDevice):
        result += _drive_findings(description, pair)
    if start_up.modes_located is False:
        result.append(
            Finding(
                "modes-not-located",
                f"The small-signal count is N = {start_up.encirclements}, but a rational fit of"
                " the loop did not find the same right-half-plane modes: their frequencies and"
                " growth rates are not stated (oneport poles shows the fit).",
                {"encirclements": start_up.encirclements},
            )
        )
    if at_top.grows is None and start_up.grows is not None:
        result.append(
            Finding(
                "largest-level-count-undecided",
                "At the largest level in the data the small-signal count is undecided, so it is"
                " not known whether some mode still grows there: " + " ".join(at_top.reasons),
            )
        )
    for point in points:
        result += _point_findings(loop, point)
    return result


def _point_findings(loop: Loop, point: OperatingPoint) -> list[Finding]:
    where = format_frequency(point.frequency_hz)
    context = {"frequency_hz": point.frequency_hz}
    result = []
    if point.near_data_edge:
        result.append(
            Finding(
                "point-near-data-edge",
                f"The operating point at {where} lies within one scan step of the data's edge;"
                " its figures extrapolate.",
                context,
            )
        )
    if point.marginal:
        result.append(
            Finding(
                "marginal-stability",
                f"At {where} the device line and the load locus meet almost tangentially.",
                context,
            )
        )
    if not point.amplitude_increasing:
        result.append(
            Finding(
                "amplitude-not-increasing",
                f"At {where} the {loop.form} form's port amplitude falls as the device's level"
                " rises, so the form does not suit the device there: stability is judged, and"
                f" Kurokawa's index stated, in the device's own level variable (the"
                f" {quantity_words(point.stability_variable)}).",
                context,
            )
        )
    if point.pulling.loaded_q < LOW_LOADED_Q:
        result.append(
            Finding(
                "low-loaded-q",
                f"At {where} the loop's loaded Q is {format_plain(point.pulling.loaded_q)}: the"
                " one-frequency picture (Kurokawa's decay rate, the locking range) is rough in so"
                " broad a loop.",
                {**context, "loaded_q": point.pulling.loaded_q},
            )
        )
    if point.pulling.locking_coefficient_hz is None:
        result.append(
            Finding(
                "external-q-not-positive",
                f"At {where} the load's external Q in the {loop.form} form is"
                f" Q = {format_plain(point.pulling.external_q)} (its reactive slope is flat or of"
                " the other sign); no locking range is given.",
                context,
            )
        )
    return result


def _drive_findings(description: DriveLevelDevice, pair: AlignedPair) -> list[Finding]:
    result = []
    if description.levels.size < 4:
        result.append(
            Finding(
                "few-drive-levels",
                f"Only {description.levels.size} drive levels: the device is interpolated in level"
                f" with order {description.levels.size - 1}, so slopes in amplitude (and"
                " Kurokawa's index) are rough; four or more levels give cubic interpolation.",
                {"levels": int(description.levels.size)},
            )
        )
    change = float(np.max(np.abs(description.ports[1].gamma - description.ports[0].gamma)))
    if change > COMPRESSION_THRESHOLD:
        result.append(
            Finding(
                "lowest-level-compressed",
                f"The device's reflection changes by up to |ΔΓ| = {format_plain(change)} between"
                " the two"
                " lowest levels: the lowest may not be small-signal, and the start-up count"
                " rests on it.",
                {"largest_change": change},
            )
        )
    return result


def limits(loop: Loop, description: DeviceDescription, *, netlist_load: bool) -> tuple[str, ...]:
    """What the method cannot see, stated in every result."""
    low, high = loop.device.parameter_range
    band = loop.device.frequency_hz
    quantity, unit = {
        "incident_power_dbm": ("incident power", "dBm"),
        "peak_voltage_v": ("peak voltage at the port", "V"),
        "peak_current_a": ("peak current into the port", "A"),
        "junction_peak_voltage_v": ("peak voltage across the junction", "V"),
    }[loop.device.parameter_quantity]
    if unit == "dBm":
        span = f"{format_plain(low)} dBm to {format_plain(high)} dBm"
    else:
        span = f"{format_engineering(low, unit)} to {format_engineering(high, unit)}"
    stated = [
        f"Solutions are sought only inside the data: {quantity} from {span},"
        f" {format_frequency(band[0])} to {format_frequency(band[-1])}.",
        "Kurokawa's conditions assume a slowly varying amplitude at one frequency (a"
        " high-Q loop); stability indices and decay rates are local figures near each point, and"
        " single-frequency analysis cannot see competition between modes.",
        "Start-up from noise is the small-signal Nyquist count (as oneport check gives it) with"
        " the device held at its smallest level, under the check's premise and closing"
        " assumption; the growth rates of its modes come from a rational fit of the loop.",
        "The injection-locking range is Kurokawa's 1973 estimate for a single-tuned load"
        " (recalled from memory).",
    ]
    if isinstance(description, DriveLevelDevice):
        stated.append(
            "During a drive-level measurement the VNA terminates the device's harmonics in its"
            " reference impedance; the oscillator's load does not, so harmonic loading can move"
            " the real operating point."
        )
    else:
        stated.append(
            "The describing function assumes a stiff DC bias (the bias voltage does not move"
            " when the swing rectifies) and a sinusoidal junction voltage (harmonics shorted);"
            " its integral runs over a full period."
        )
        stated.append(
            "Parasitics are the manifest's lumped Rs, Ls and Cj; parasitics from a netlist are"
            " not read yet."
        )
        if netlist_load:
            below, above = COUNT_GRID_SPAN
            stated.append(
                f"With a netlist load the operating points are sought on {NETLIST_GRID_POINTS}"
                " evenly spaced frequencies of the manifest's band, and the small-signal count"
                f" runs on {COUNT_GRID_POINTS} geometrically spaced ones from"
                f" {format_frequency(band[-1] * below)} to {format_frequency(band[-1] * above)}."
            )
    return tuple(stated)
