"""The core check: device and load one-ports to a stability verdict.

Data flow: read (``touchstone``) → align (``alignment``) → Nyquist analysis (``nyquist``) →
verdict and findings (here) → frozen :class:`~oneport.result.CheckResult`. This room decides the
verdict from the analysis; it never prints, plots or exits.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import numpy as np

from . import nyquist
from .alignment import AlignedPair, align
from .cautions import CAUTIONS
from .nyquist import EdgeClosure
from .result import CheckResult, Finding, InputRecord
from .touchstone import OnePort, one_port_from_network, read_one_port
from .units import format_frequency

OneportSource = str | Path | OnePort | Any


def load_one_port(source: OneportSource, role: str) -> OnePort:
    """A :class:`OnePort` from a path, a ``OnePort`` or a scikit-rf ``Network``."""
    if isinstance(source, OnePort):
        return source
    if isinstance(source, str | Path):
        return read_one_port(source)
    if hasattr(source, "s") and hasattr(source, "f") and hasattr(source, "z0"):
        return one_port_from_network(source, description=f"{role} network")
    raise TypeError(f"{role}: expected a path, a OnePort or a scikit-rf Network, got {source!r}")


def check(
    device: OneportSource,
    load: OneportSource,
    *,
    measurement_impedance_ohm: float | None = None,
) -> CheckResult:
    """Will ``device`` oscillate (or latch up) when connected to ``load``? Small-signal check.

    Parameters
    ----------
    device, load : path, OnePort or skrf.Network
        The negative-resistance device and the network it faces, as one-ports.
    measurement_impedance_ohm : float, optional
        The impedance the device was really measured in (VNA port impedance), Ω, if its file
        was renormalised afterwards; default: the device file's reference. The load is brought
        to this impedance, never the device to the load's.

    Returns
    -------
    CheckResult
        Verdict, Nyquist count, crossings, bands, margins, warnings and cautions, with arrays.

    Examples
    --------
    >>> import skrf
    >>> frequency = skrf.Frequency(0.1, 5, 201, unit="GHz")
    >>> media = skrf.media.DefinedGammaZ0(frequency, z0=50)
    >>> device = media.resistor(-30) ** media.short()  # a bare -30 ohm: no dynamics
    >>> result = check(device, media.resistor(100) ** media.short())
    >>> result.verdict, result.encirclements
    ('stable', 0)
    """
    device_port = load_one_port(device, "device")
    load_port = load_one_port(load, "load")
    pair = align(device_port, load_port, measurement_impedance_ohm)
    return analyse_pair(pair, device_port, load_port)


def analyse_pair(pair: AlignedPair, device: OnePort, load: OnePort) -> CheckResult:
    """Run the Nyquist analysis on an aligned pair and decide the verdict."""
    frequency_hz = pair.frequency_hz
    loop_gain = pair.gamma_device * pair.gamma_load
    noise = nyquist.estimate_noise(loop_gain)
    low = nyquist.close_edge(frequency_hz, loop_gain, "low")
    high = nyquist.close_edge(frequency_hz, loop_gain, "high")
    step = float(nyquist.largest_phase_step(loop_gain))
    crossings = nyquist.find_crossings(frequency_hz, loop_gain, noise)
    bands = nyquist.find_bands(frequency_hz, loop_gain, noise)
    margins = nyquist.find_margins(frequency_hz, loop_gain)
    z0 = pair.reference_impedance_ohm

    count: int | None = None
    if low.founded and high.founded and step <= nyquist.UNSAFE_PHASE_STEP_RAD:
        count = int(
            nyquist.count_encirclements(
                loop_gain, np.array(low.sign_at_limit), np.array(high.sign_at_limit)
            )
        )
    verdict, reasons, next_steps = _decide(count, low, high, step, frequency_hz, loop_gain)
    carrying = nyquist.net_crossings(crossings) if count and count > 0 else []
    oscillation = tuple(c.frequency_hz for c in carrying if c.direction == "clockwise")
    if verdict == "unstable":
        reasons += _describe_modes(count or 0, oscillation, z0, frequency_hz, loop_gain)

    warnings = _findings(pair, step, noise, margins, crossings, frequency_hz, loop_gain)
    band = f"{format_frequency(frequency_hz[0])} to {format_frequency(frequency_hz[-1])}"
    premise = (
        f"The count equals the number of right-half-plane natural frequencies only if the device"
        f" is stable terminated in its measurement impedance ({z0:g} ohm), as a device measured"
        f" on a VNA without oscillating is. The verdict covers {band} and assumes the loop gain"
        f" does not cross the positive real axis beyond +1 outside it; parasitics above the sweep"
        f" can add encirclements. It is a small-signal result."
    )
    return CheckResult(
        verdict=verdict,
        reasons=tuple(reasons),
        next_steps=tuple(next_steps),
        premise=premise,
        encirclements=count,
        latch_up=None if count is None else bool(count % 2),
        oscillation_frequencies_hz=oscillation,
        crossings=tuple(crossings),
        bands=tuple(bands),
        margins=margins,
        closures=(low, high),
        largest_phase_step_rad=step,
        noise_estimate=noise,
        warnings=tuple(warnings),
        cautions=CAUTIONS,
        inputs=(
            _record("device", device, z0),
            _record("load", load, z0),
        ),
        reference_impedance_ohm=z0,
        points_dropped=pair.device_points_dropped_below + pair.device_points_dropped_above,
        frequency_hz=frequency_hz,
        gamma_device=pair.gamma_device,
        gamma_load=pair.gamma_load,
        loop_gain=loop_gain,
    )


def _decide(
    count: int | None,
    low: EdgeClosure,
    high: EdgeClosure,
    step: float,
    frequency_hz: np.ndarray,
    loop_gain: np.ndarray,
) -> tuple[str, list[str], list[str]]:
    """Verdict, reasons and next steps from the count and what limits it."""
    reasons: list[str] = []
    steps: list[str] = []
    for closure, limit in ((low, "DC"), (high, "infinite frequency")):
        if closure.founded:
            continue
        edge = frequency_hz[0] if closure.side == "low" else frequency_hz[-1]
        reasons.append(
            f"At the {closure.side} edge ({format_frequency(edge)}) |L| ="
            f" {abs(closure.loop_gain_at_edge):.3g} is not below 1 and L is still moving"
            f" (about {closure.motion:.2g} beyond the edge), so the loop cannot be closed"
            f" towards {limit} from these data."
        )
        if closure.extend_to_hz is not None:
            direction = "down" if closure.side == "low" else "up"
            steps.append(
                f"Extend the sweep {direction} to about {format_frequency(closure.extend_to_hz)}"
                f" (device and load both) and check again."
            )
        if closure.side == "low":
            steps.append(
                "Bias-network oscillations and latch-up often sit below a VNA's lowest"
                " frequency: the DC resistances of the device (its I-V slope at the bias point)"
                " and of the bias network decide the sign of F(0)."
            )
    if step > nyquist.UNSAFE_PHASE_STEP_RAD:
        index = int(np.argmax(np.abs(np.diff(nyquist.unwrapped_phase(loop_gain)))))
        reasons.append(
            f"The phase of 1 - L jumps by {np.degrees(step):.0f} degrees between"
            f" {format_frequency(frequency_hz[index])} and"
            f" {format_frequency(frequency_hz[index + 1])}: too coarse a grid to unwrap safely."
        )
        steps.append(
            f"Measure again with a finer step around {format_frequency(frequency_hz[index])}."
        )
    if count is None:
        return "inconclusive", reasons, steps
    if count < 0:
        reasons.append(
            f"The loop encircles +1 {-count} time(s) counterclockwise (N = {count}). With a"
            " passive load that means the device itself is unstable in its measurement"
            " impedance (the premise fails), or the data are not what they claim."
        )
        steps.append(
            "Check the device file's reference impedance and its plane, and that the device did"
            " not oscillate while it was measured (watch a spectrum analyser during the sweep)."
        )
        return "inconclusive", reasons, steps
    if count == 0:
        reasons.append(
            "No natural frequency in the right half plane: the loop gain makes no net clockwise"
            " encirclement of +1 (N = 0). Small-signal stable into this load."
        )
        return "stable", reasons, steps
    reasons.append(
        f"The loop gain encircles +1 {count} time(s) clockwise (N = {count}): {count} natural"
        " frequency(ies) in the right half plane."
    )
    steps.append(
        "Do not apply full bias into this load: change the load (more loss or a different"
        " resonance) and check again."
    )
    return "unstable", reasons, steps


def _describe_modes(
    count: int,
    oscillation: tuple[float, ...],
    z0: float,
    frequency_hz: np.ndarray,
    loop_gain: np.ndarray,
) -> list[str]:
    sentences = []
    if count % 2:
        sentences.append(
            "The count is odd: one natural frequency is real (F(0) and F(infinity) have"
            " opposite signs), a non-oscillatory latch-up, often through the bias network."
        )
    if oscillation:
        listed = ", ".join(format_frequency(f) for f in oscillation)
        sentences.append(
            f"Oscillation expected near {listed} (where the loop gain crosses the real axis"
            f" beyond +1 in {z0:g} ohm; the actual frequency shifts as the amplitude grows)."
        )
    elif count >= 2:
        rate = np.abs(np.diff(nyquist.unwrapped_phase(loop_gain)) / np.diff(frequency_hz))
        index = int(np.argmax(rate))
        hint = 0.5 * (frequency_hz[index] + frequency_hz[index + 1])
        sentences.append(
            "A complex pair of right-half-plane roots without a clockwise crossing in the band"
            " (F(0) and F(infinity) are both negative): the crossings cannot locate its"
            f" frequency; the phase of 1 - L turns fastest near {format_frequency(hint)}, the"
            " likely neighbourhood of the mode."
        )
    return sentences


def _findings(
    pair: AlignedPair,
    step: float,
    noise: float,
    margins: nyquist.Margins,
    crossings: list[nyquist.Crossing],
    frequency_hz: np.ndarray,
    loop_gain: np.ndarray,
) -> list[Finding]:
    findings = []
    if nyquist.COARSE_PHASE_STEP_RAD < step <= nyquist.UNSAFE_PHASE_STEP_RAD:
        findings.append(
            Finding(
                "coarse-phase-step",
                f"The phase of 1 - L moves by up to {np.degrees(step):.0f} degrees between"
                " neighbouring points; unwrapping still holds, but a sharp resonance could hide"
                " between samples. A finer sweep would make the count safer.",
                {"largest_phase_step_deg": float(np.degrees(step))},
            )
        )
    if margins.modulus_margin < 3.0 * noise:
        findings.append(
            Finding(
                "margin-within-noise",
                f"The loop passes within {margins.modulus_margin:.3g} of +1 at"
                f" {format_frequency(margins.modulus_margin_frequency_hz)}, inside three times"
                f" the data's estimated scatter ({noise:.2g}): noise could change the count.",
                {
                    "min_distance_to_critical_point": margins.modulus_margin,
                    "frequency_hz": margins.modulus_margin_frequency_hz,
                    "loop_gain_noise_estimate": noise,
                },
            )
        )
    for crossing in crossings:
        if crossing.within_noise:
            findings.append(
                Finding(
                    "crossing-within-noise",
                    f"The crossing at {format_frequency(crossing.frequency_hz)} lies within the"
                    " data's scatter of +1 and may be an artefact of noise.",
                    {"frequency_hz": crossing.frequency_hz},
                )
            )
    dropped = pair.device_points_dropped_below + pair.device_points_dropped_above
    if dropped:
        findings.append(
            Finding(
                "device-points-outside-load-band",
                f"{dropped} device point(s) lie outside the load's band and were left out"
                f" ({pair.device_points_dropped_below} below, {pair.device_points_dropped_above}"
                " above); nothing is extrapolated.",
                {
                    "below": pair.device_points_dropped_below,
                    "above": pair.device_points_dropped_above,
                },
            )
        )
    if pair.load_points_in_band > frequency_hz.size:
        findings.append(
            Finding(
                "load-finer-than-device",
                f"The load has {pair.load_points_in_band} points in the analysed band, the device"
                f" {frequency_hz.size}: the analysis runs on the device's grid, so detail in the"
                " load between device points is not seen.",
                {"load_points": pair.load_points_in_band, "device_points": frequency_hz.size},
            )
        )
    if pair.device_renormalised_from_ohm is not None:
        findings.append(
            Finding(
                "device-renormalised",
                f"The device file is referred to {pair.device_renormalised_from_ohm:g} ohm but"
                f" was stated to be measured in {pair.reference_impedance_ohm:g} ohm; it was"
                " brought back to its measurement impedance for the count.",
                {"file_reference_impedance_ohm": pair.device_renormalised_from_ohm},
            )
        )
    return findings


def _record(role: str, port: OnePort, analysed_ohm: float) -> InputRecord:
    return InputRecord(
        role=role,
        source=port.source,
        sha256=port.sha256,
        points=port.points,
        frequency_range_hz=(float(port.frequency_hz[0]), float(port.frequency_hz[-1])),
        parameter=port.parameter,
        number_format=port.number_format,
        version=port.version,
        file_reference_impedance_ohm=port.reference_impedance_ohm,
        analysed_reference_impedance_ohm=analysed_ohm,
    )
