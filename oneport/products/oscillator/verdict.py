"""The oscillator verdict, its reasons, warnings and the method's stated limits.

Verdict words (docs/oscillator.md), decided in this order:

- ``outside-data``: a mode still grows at the largest level in the data, so an operating point
  lies beyond it (extend the drive levels); exit 4.
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
from ...rendering.formatting import format_amplitude, format_power
from ...units import format_frequency
from .manifest import DeviceDescription, DriveLevelDevice, IVDevice
from .result import OperatingPoint, StartUpEstimate
from .solve import Loop

#: Largest |ΔΓd| between the two lowest drive levels for the lowest to count as small-signal.
COMPRESSION_THRESHOLD = 0.02
#: Loaded Q below which the one-frequency picture is flagged as rough.
LOW_LOADED_Q = 3.0


def decide(
    loop: Loop,
    points: Sequence[OperatingPoint],
    start_up: Sequence[StartUpEstimate],
    at_top: Sequence[StartUpEstimate],
    description: DeviceDescription,
) -> tuple[str, list[str], list[str]]:
    """The verdict word, its reasons and next steps."""
    stable = [p for p in points if p.kurokawa_stable and not p.marginal]
    unstable = [p for p in points if not p.kurokawa_stable and not p.marginal]
    marginal = [p for p in points if p.marginal]
    starts = any(estimate.grows for estimate in start_up)
    escaping = [estimate for estimate in at_top if estimate.grows]
    reasons = [_start_sentence(start_up, loop)]
    reasons += [_point_sentence(point) for point in points]
    steps: list[str] = []
    if escaping:
        verdict = "outside-data"
        reasons.append(
            "At the largest level in the data the loop still gains near "
            + ", ".join(format_frequency(e.frequency_hz) for e in escaping)
            + ": the amplitude keeps growing past the data, so a stable point lies outside it."
        )
        steps.append(_extend_advice(loop, description))
    elif marginal or (starts and not stable):
        verdict = "inconclusive"
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
    elif len(stable) >= 2:
        verdict = "mode-jumping"
        reasons.append(
            f"{len(stable)} stable operating points: the oscillator may settle in either and jump"
            " between them with bias, temperature or load changes (hysteresis)."
        )
        steps.append(
            "Make one mode win: load the unwanted mode more heavily (lower its external Q or"
            " raise its loss) so that the device's gain cannot sustain it."
        )
    elif stable:
        verdict = "settles" if starts else "hard-excitation"
        if not starts:
            kick = [p for p in unstable if p.amplitude < stable[0].amplitude]
            threshold = (
                f" above {format_amplitude(kick[-1].amplitude, kick[-1].amplitude_quantity)}"
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
    else:
        verdict = "no-oscillation"
        reasons.append("No mode grows from noise and no stable operating point lies in the data.")
    steps.append(
        "Confirm start-up with the small-signal Nyquist count (oneport check) on the lowest"
        " level's data; the growth figures here are one-step estimates."
    )
    return verdict, reasons, steps


def _start_sentence(start_up: Sequence[StartUpEstimate], loop: Loop) -> str:
    low = loop.device.parameter_range[0]
    where = f"at the smallest level ({low:.4g} {_unit(loop.device.parameter_quantity)})"
    growing = [e for e in start_up if e.grows]
    if growing:
        listed = ", ".join(
            f"{format_frequency(e.frequency_hz)} (sigma = {e.growth_rate_per_s:.3g} /s)"
            for e in growing
        )
        return f"Starts from noise: {where} a mode grows near {listed} (Newton estimate)."
    if start_up:
        return f"Does not start from noise: {where} every mode near the jw axis decays."
    return f"Does not start from noise: {where} no mode lies near the jw axis in the band."


def _point_sentence(point: OperatingPoint) -> str:
    state = "Kurokawa-stable" if point.kurokawa_stable else "unstable"
    if point.marginal:
        state = "marginal"
    rate = point.decay_rate_per_s
    dynamics = (
        ""
        if rate is None
        else f" (perturbations {'decay' if rate > 0 else 'grow'} at {abs(rate):.3g} /s)"
    )
    return (
        f"Operating point at {format_frequency(point.frequency_hz)},"
        f" {format_amplitude(point.amplitude, point.amplitude_quantity)} at the port,"
        f" {format_power(point.load_power_w)} into the load: {state}{dynamics}."
    )


def _extend_advice(loop: Loop, description: DeviceDescription) -> str:
    high = loop.device.parameter_range[1]
    unit = _unit(loop.device.parameter_quantity)
    if isinstance(description, IVDevice):
        return (
            f"Raise amplitude_max_v above {high:.4g} V (the I-V curve must cover the larger swing)."
        )
    return f"Extend the drive levels above {high:.4g} {unit} and measure again."


def findings(
    loop: Loop,
    points: Sequence[OperatingPoint],
    at_top: Sequence[StartUpEstimate],
    description: DeviceDescription,
    pair: AlignedPair,
) -> list[Finding]:
    """Data-specific warnings (codes are documented in docs/oscillator.md)."""
    result = []
    dropped = pair.device_points_dropped_below + pair.device_points_dropped_above
    if dropped:
        result.append(
            Finding(
                "device-points-outside-load-band",
                f"{dropped} device frequency points lie outside the load's band and were left out.",
                {"points": dropped},
            )
        )
    if isinstance(description, DriveLevelDevice):
        result += _drive_findings(description, pair)
    for point in points:
        where = format_frequency(point.frequency_hz)
        if point.near_data_edge:
            result.append(
                Finding(
                    "point-near-data-edge",
                    f"The operating point at {where} lies within one scan step of the data's edge;"
                    " its figures extrapolate.",
                    {"frequency_hz": point.frequency_hz},
                )
            )
        if point.marginal:
            result.append(
                Finding(
                    "marginal-stability",
                    f"At {where} the device line and the load locus meet almost tangentially.",
                    {"frequency_hz": point.frequency_hz},
                )
            )
        if not point.amplitude_increasing:
            result.append(
                Finding(
                    "amplitude-not-increasing",
                    f"At {where} the {loop.form} form's port amplitude falls as the device's level"
                    " rises, so the form does not suit the device there: stability is judged, and"
                    f" S stated, in the device's level variable ({point.stability_variable}).",
                    {"frequency_hz": point.frequency_hz},
                )
            )
        if point.pulling.loaded_q < LOW_LOADED_Q:
            result.append(
                Finding(
                    "low-loaded-q",
                    f"At {where} the loop's loaded Q is {point.pulling.loaded_q:.3g}: the"
                    " one-frequency picture (Kurokawa's rate, the Newton start-up estimate) is"
                    " rough in so broad a loop.",
                    {"frequency_hz": point.frequency_hz, "loaded_q": point.pulling.loaded_q},
                )
            )
        if point.pulling.locking_coefficient_hz is None:
            result.append(
                Finding(
                    "external-q-not-positive",
                    f"At {where} the load's external Q in the {loop.form} form is"
                    f" {point.pulling.external_q:.3g} (its reactive slope is flat or of the"
                    " other sign); no locking range is given.",
                    {"frequency_hz": point.frequency_hz},
                )
            )
    for estimate in at_top:
        if estimate.grows:
            result.append(
                Finding(
                    "growth-at-largest-level",
                    f"Near {format_frequency(estimate.frequency_hz)} the loop still gains at the"
                    " largest level in the data.",
                    {
                        "frequency_hz": estimate.frequency_hz,
                        "growth_rate_per_s": estimate.growth_rate_per_s,
                    },
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
                f" with order {description.levels.size - 1}, so slopes in amplitude (and S) are"
                " rough; four or more levels give cubic interpolation.",
                {"levels": int(description.levels.size)},
            )
        )
    change = float(np.max(np.abs(description.ports[1].gamma - description.ports[0].gamma)))
    if change > COMPRESSION_THRESHOLD:
        result.append(
            Finding(
                "lowest-level-compressed",
                f"Γd changes by up to {change:.3g} between the two lowest levels: the lowest may"
                " not be small-signal, and the start-up estimate rests on it.",
                {"largest_change": change},
            )
        )
    return result


def limits(loop: Loop, description: DeviceDescription) -> tuple[str, ...]:
    """What the method cannot see, stated in every result."""
    low, high = loop.device.parameter_range
    band = loop.device.frequency_hz
    unit = _unit(loop.device.parameter_quantity)
    stated = [
        f"Solutions are sought only inside the data: {loop.device.parameter_quantity} from"
        f" {low:.4g} to {high:.4g} {unit}, {format_frequency(band[0])} to"
        f" {format_frequency(band[-1])}.",
        "Kurokawa's conditions assume a slowly varying amplitude at one frequency (a"
        " high-Q loop); stability indices and decay rates are local figures near each point, and"
        " single-frequency analysis cannot see competition between modes.",
        "Start-up from noise is a one-step Newton estimate at the smallest level in the data,"
        " not a Nyquist count.",
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
    return tuple(stated)


def _unit(quantity: str) -> str:
    return {"incident_power_dbm": "dBm", "peak_current_a": "A"}.get(quantity, "V")
