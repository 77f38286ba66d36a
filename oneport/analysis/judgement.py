"""The check's judgement: an aligned pair and the facts beside it to one verdict.

Counts the encirclements (``nyquist``), closes the contour at both edges, weighs the sampling
and measurement doubts (``diagnostics``, stated |Γ| errors, passivity) and decides the verdict,
its reasons and next steps, returning the frozen :class:`~oneport.analysis.result.CheckResult`.
Arrays and records in, a result out: it reads no file, prints, plots or exits.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..cautions import CAUTIONS
from ..errors import InputError
from ..findings import Finding
from ..reading.alignment import AlignedPair, renormalise
from ..reading.records import InputRecord
from ..reading.touchstone import OnePort
from ..units import format_frequency
from . import diagnostics, nyquist
from .nyquist import EdgeClosure
from .result import CheckResult, Uncertainty
from .startup import startup_estimates


@dataclass(frozen=True)
class CheckOptions:
    """What the user knows beyond the two files (all optional; SI units).

    Attributes
    ----------
    measurement_impedance_ohm : float or None
        The impedance the device was really measured in, if its file was renormalised later.
    device_dc_resistance_ohm, load_dc_resistance_ohm : float or None
        The device's small-signal resistance at DC (its I–V slope at the bias point; negative
        for a negative-resistance device) and the load's (bias network's) resistance at DC.
        Given together, they fix F(0) and close the contour towards DC.
    device_uncertainty, load_uncertainty : float
        Worst-case absolute error of each measured |Γ| (e.g. 0.01).
    known_poles : int
        Right-half-plane poles of F known from a netlist side (its natural frequencies
        terminated in the analysis impedance): the count becomes Z = N + P.
    premise_notes : tuple of str
        What was checked of the premise, for the result's premise text.
    load_poles_known : bool
        True when the load is a netlist whose own natural frequencies were counted, so an
        active load does not leave its poles unknown.
    """

    measurement_impedance_ohm: float | None = None
    device_dc_resistance_ohm: float | None = None
    load_dc_resistance_ohm: float | None = None
    device_uncertainty: float = 0.0
    load_uncertainty: float = 0.0
    known_poles: int = 0
    premise_notes: tuple[str, ...] = ()
    load_poles_known: bool = False

    def __post_init__(self) -> None:
        given = (self.device_dc_resistance_ohm is None, self.load_dc_resistance_ohm is None)
        if given[0] != given[1]:
            raise InputError(
                "DC resistances: give both the device's and the load's (they fix F(0)"
                " together), or neither"
            )
        for name in ("device_uncertainty", "load_uncertainty"):
            value = getattr(self, name)
            if not (np.isfinite(value) and 0.0 <= value < 1.0):
                raise InputError(f"{name} {value!r}: an absolute |Γ| error in [0, 1) is needed")


def analyse_pair(
    pair: AlignedPair, device: OnePort, load: OnePort, options: CheckOptions | None = None
) -> CheckResult:
    """Run the Nyquist analysis on an aligned pair and decide the verdict."""
    options = options or CheckOptions()
    frequency_hz = pair.frequency_hz
    loop_gain = pair.gamma_device * pair.gamma_load
    z0 = pair.reference_impedance_ohm
    noise = nyquist.estimate_noise(loop_gain)
    data_low = nyquist.close_edge(frequency_hz, loop_gain, "low")
    low = _dc_closure(options, z0, loop_gain) or data_low
    high = nyquist.close_edge(frequency_hz, loop_gain, "high")
    step = float(nyquist.largest_phase_step(loop_gain))
    crossings = nyquist.find_crossings(frequency_hz, loop_gain, noise)
    bands = nyquist.find_bands(frequency_hz, loop_gain, noise)
    margins = nyquist.find_margins(frequency_hz, loop_gain)
    uncertainty = _uncertainty(pair, loop_gain, options)
    # Foster's test on the load's own grid, normalised to the analysis impedance so that the
    # answer does not depend on the reference the load's file happens to use.
    hidden = diagnostics.foster_violations(
        load.frequency_hz,
        renormalise(load.gamma, load.reference_impedance_ohm, z0),
        z0,
        load.source,
    )
    hidden_at_stake = [r for r in hidden if _device_gain_near(pair, r) >= 1.0]

    count: int | None = None
    if low.founded and high.founded and step <= nyquist.UNSAFE_PHASE_STEP_RAD:
        # Z = N + P: P is 0 for measured sides (the premise), known for netlist sides.
        count = options.known_poles + int(
            nyquist.count_encirclements(
                loop_gain, np.array(low.sign_at_limit), np.array(high.sign_at_limit)
            )
        )
    verdict, reasons, next_steps = _decide(count, low, high, step, frequency_hz, loop_gain)
    if count is not None and count >= 0:
        verdict = _doubts(verdict, uncertainty, hidden_at_stake, reasons, next_steps)
    carrying = nyquist.net_crossings(crossings) if count and count > 0 else []
    oscillation = tuple(c.frequency_hz for c in carrying if c.direction == "clockwise")
    if count and count > 0:
        reasons += _describe_modes(count, oscillation, z0, frequency_hz, loop_gain)

    warnings = _findings(pair, step, noise, margins, crossings, frequency_hz, loop_gain)
    passivity = _passivity_findings(frequency_hz, pair.gamma_load, noise)
    warnings += passivity
    if passivity and not options.load_poles_known and verdict != "inconclusive":
        verdict = "inconclusive"
        reasons.append(
            "The load is not passive (|gamma_load| > 1 in the band): whether it has poles of its"
            " own in the right half plane cannot be told from its reflection, so the count"
            " cannot decide."
        )
        next_steps.append(
            "Check that device and load are not swapped; an active load can be given as a"
            " netlist, whose own natural frequencies are then counted."
        )
    # Where the device has gain within the analysed band: there a hidden resonance matters.
    gain_bands = np.array(
        [
            (b.start_hz, b.stop_hz)
            for b in nyquist.find_bands(frequency_hz, pair.gamma_device, noise)
        ]
        or [(frequency_hz[0], frequency_hz[-1])]
    )
    warnings += _diagnostic_findings(hidden, hidden_at_stake)
    disagree = data_low.founded and data_low.sign_at_limit != low.sign_at_limit
    if low.basis == "dc-resistances" and disagree:
        warnings.append(
            Finding(
                "dc-facts-disagree-with-data",
                "The DC resistances give F(0) the opposite sign to what the low edge of the"
                " data suggests: something below the sweep (a bias-network resonance or"
                " latch-up) changes the loop; the DC facts were used.",
            )
        )
    band = f"{format_frequency(frequency_hz[0])} to {format_frequency(frequency_hz[-1])}"
    premise = (
        f"The count equals the number of right-half-plane natural frequencies only if the device"
        f" is stable terminated in its measurement impedance ({z0:g} ohm), as a device measured"
        f" on a VNA without oscillating is. The verdict covers {band} and assumes the loop gain"
        f" does not cross the positive real axis beyond +1 outside it; parasitics above the sweep"
        f" can add encirclements. It is a small-signal result."
    )
    if options.premise_notes:
        premise += " " + " ".join(options.premise_notes)
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
        uncertainty=uncertainty,
        hidden_resonances=tuple(hidden),
        grid_resolution=(
            diagnostics.grid_resolution(device.frequency_hz, device.source, gain_bands),
            diagnostics.grid_resolution(load.frequency_hz, load.source, gain_bands),
        ),
        startup_estimates=tuple(
            startup_estimates(frequency_hz, pair.gamma_device, pair.gamma_load, z0)
        ),
        warnings=tuple(warnings),
        cautions=CAUTIONS,
        inputs=(InputRecord.of("device", device, z0), InputRecord.of("load", load, z0)),
        reference_impedance_ohm=z0,
        points_dropped=pair.device_points_dropped_below + pair.device_points_dropped_above,
        frequency_hz=frequency_hz,
        gamma_device=pair.gamma_device,
        gamma_load=pair.gamma_load,
        loop_gain=loop_gain,
    )


def _dc_closure(options: CheckOptions, z0: float, loop_gain: np.ndarray) -> EdgeClosure | None:
    """The low-edge closure from the DC resistances, when both are given."""
    if options.device_dc_resistance_ohm is None or options.load_dc_resistance_ohm is None:
        return None
    gamma_device = _gamma_of_resistance(options.device_dc_resistance_ohm, z0)
    gamma_load = _gamma_of_resistance(options.load_dc_resistance_ohm, z0)
    characteristic_at_dc = 1.0 - gamma_device * gamma_load
    if characteristic_at_dc == 0.0:
        raise InputError(
            "DC resistances: device and load resistances sum to zero at DC (a root at s = 0);"
            " the count is undefined"
        )
    sign = 1 if characteristic_at_dc > 0 else -1
    return EdgeClosure("low", "dc-resistances", sign, complex(loop_gain[0]), 0.0, None)


def _gamma_of_resistance(resistance_ohm: float, z0: float) -> float:
    if resistance_ohm == -z0:
        return float("inf")
    return (resistance_ohm - z0) / (resistance_ohm + z0)


def _uncertainty(pair: AlignedPair, loop_gain: np.ndarray, options: CheckOptions) -> Uncertainty:
    """Worst-case |ΔL| from the stated |Γ| errors, and where it reaches the critical point."""
    device, load = options.device_uncertainty, options.load_uncertainty
    worst_change = (
        np.abs(pair.gamma_device) * load + np.abs(pair.gamma_load) * device + device * load
    )
    slack = np.abs(1.0 - loop_gain) - worst_change
    at_stake = slack <= 0.0
    ranges = []
    if device or load:
        edges = np.flatnonzero(np.diff(np.concatenate(([0], at_stake.astype(int), [0]))))
        frequency_hz = pair.frequency_hz
        ranges = [
            (float(frequency_hz[start]), float(frequency_hz[stop - 1]))
            for start, stop in zip(edges[::2], edges[1::2], strict=True)
        ]
    closest = int(np.argmin(slack))
    return Uncertainty(
        device=device,
        load=load,
        largest_loop_gain_change=float(worst_change.max()),
        smallest_slack=float(slack[closest]),
        smallest_slack_frequency_hz=float(pair.frequency_hz[closest]),
        count_at_stake=bool((device or load) and at_stake.any()),
        at_stake_ranges_hz=tuple(ranges),
    )


def _device_gain_near(pair: AlignedPair, resonance: diagnostics.HiddenResonance) -> float:
    """Largest |Γd| in and next to a sample interval of the load (0 outside the analysed band)."""
    frequency_hz = pair.frequency_hz
    lower = max(int(np.searchsorted(frequency_hz, resonance.start_hz)) - 1, 0)
    upper = int(np.searchsorted(frequency_hz, resonance.stop_hz, side="right")) + 1
    window = np.abs(pair.gamma_device[lower:upper])
    return float(window.max()) if window.size else 0.0


def _doubts(
    verdict: str,
    uncertainty: Uncertainty,
    hidden_at_stake: list[diagnostics.HiddenResonance],
    reasons: list[str],
    next_steps: list[str],
) -> str:
    """Turn a definite verdict inconclusive when measurement error or sampling puts it at stake."""
    if uncertainty.count_at_stake:
        listed = ", ".join(
            f"{format_frequency(a)}-{format_frequency(b)}" if a != b else format_frequency(a)
            for a, b in uncertainty.at_stake_ranges_hz
        )
        reasons.append(
            f"With |Γ| errors of {uncertainty.device:g} (device) and {uncertainty.load:g} (load)"
            f" the loop gain may move by up to {uncertainty.largest_loop_gain_change:.3g}, enough"
            f" to reach +1 at {listed}: the count could change there."
        )
        next_steps.append(
            "Measure more accurately near those frequencies (calibration, averaging, lower IF"
            " bandwidth) or add margin to the load."
        )
        verdict = "inconclusive"
    for resonance in hidden_at_stake:
        reasons.append(
            f"The load's data hide a {resonance.kind} resonance between"
            f" {format_frequency(resonance.start_hz)} and {format_frequency(resonance.stop_hz)}"
            " (Foster's reactance theorem), where the device has |Γd| >= 1: an unseen"
            " excursion there could encircle +1."
        )
        next_steps.append(
            f"Measure the load again between {format_frequency(resonance.start_hz)} and"
            f" {format_frequency(resonance.stop_hz)} with a step of"
            f" {format_frequency(resonance.step_hz / 50)} or finer."
        )
        verdict = "inconclusive"
    return verdict


def _passivity_findings(
    frequency_hz: np.ndarray, gamma_load: np.ndarray, noise: float
) -> list[Finding]:
    """A warning when the load reflects more than it receives: active, or files swapped."""
    magnitude = np.abs(gamma_load)
    worst = int(np.argmax(magnitude))
    if magnitude[worst] <= 1.0 + 3.0 * noise + 1e-9:
        return []
    return [
        Finding(
            "load-not-passive",
            f"The load has |gamma| = {magnitude[worst]:.3g} at"
            f" {format_frequency(frequency_hz[worst])}: it returns more power than it receives."
            " The count assumes a passive load (no poles of its own in the right half plane);"
            " check that device and load are not swapped, or describe an active load as a"
            " netlist so its own natural frequencies are counted.",
            {
                "largest_load_reflection": float(magnitude[worst]),
                "frequency_hz": float(frequency_hz[worst]),
            },
        )
    ]


def _diagnostic_findings(
    hidden: list[diagnostics.HiddenResonance],
    hidden_at_stake: list[diagnostics.HiddenResonance],
) -> list[Finding]:
    findings = []
    for resonance in hidden:
        findings.append(
            Finding(
                "resonance-between-samples",
                f"{resonance.source}: a {resonance.kind} resonance lies between"
                f" {format_frequency(resonance.start_hz)} and"
                f" {format_frequency(resonance.stop_hz)} (its reactance falls through infinity:"
                " Foster's theorem); the grid step there is"
                f" {format_frequency(resonance.step_hz)}. A step of"
                f" {format_frequency(resonance.step_hz / 50)} would resolve a resonance 50 times"
                " sharper than this grid can.",
                {
                    "start_hz": resonance.start_hz,
                    "stop_hz": resonance.stop_hz,
                    "kind": resonance.kind,
                    "count_at_stake": resonance in hidden_at_stake,
                },
            )
        )
    return findings


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
                "Or give the DC facts: bias-network oscillations and latch-up often sit below a"
                " VNA's lowest frequency, and the device's DC resistance (its I-V slope at the"
                " bias point) and the bias network's decide the sign of F(0): pass them as"
                " --device-dc-resistance and --load-dc-resistance."
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
            f"The loop encircles +1 counterclockwise {_times(-count)} (N = {count}). With a"
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
    roots = "natural frequency" if count == 1 else "natural frequencies"
    reasons.append(
        f"The loop gain encircles +1 clockwise {_times(count)} (N = {count}): {count} {roots}"
        " in the right half plane."
    )
    if count % 2:
        steps.append(
            "Do not apply full bias into this load. A real root (latch-up) is set by the loop at"
            " DC and low frequency: keep the bias network's DC resistance below the device's"
            " negative resistance |R_d| (or add a low-frequency path that does), then check"
            " again."
        )
    if count >= 2:
        steps.append(
            "Do not apply full bias into this load: change the load where the loop crosses +1"
            " (more loss, or move the resonance) and check again."
        )
    return "unstable", reasons, steps


def _times(count: int) -> str:
    """ "once", "twice", "3 times"."""
    return {1: "once", 2: "twice"}.get(count, f"{count} times")


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
