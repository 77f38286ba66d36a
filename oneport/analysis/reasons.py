"""The single check in words: one pair's judgement described, and its frozen result.

:func:`describe` runs :func:`oneport.analysis.judgement.judge` with one variant and turns its
intermediate values (closures, count, doubts, hidden features, slack) into the verdict's
reasons, next steps, warnings and premise, beside the features a reader wants (crossings,
bands, margins, start-up estimates) that decide nothing. The verdict and the count are the
judgement's: nothing here can make them differ from a sweep row. It reads no file, prints,
plots or exits.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..cautions import CAUTIONS
from ..findings import Finding
from ..reading.records import InputRecord
from ..units import format_frequency, format_plain, format_rate, format_resistance
from . import diagnostics, nyquist
from .judgement import (
    DOUBT_ACTIVE_LOAD,
    DOUBT_EXACT_ROOTS,
    DOUBT_HIDDEN_FEATURE,
    DOUBT_PHASE_STEP,
    DOUBT_UNCERTAINTY,
    DOUBT_UNWRAPPING,
    VERDICT_CODES,
    Facts,
    Judgement,
    judge,
)
from .nyquist import EdgeClosure
from .result import CheckResult, Uncertainty
from .startup import Mode, continued_root, modes_agreeing_with_count, startup_estimates


@dataclass(frozen=True)
class PairContext:
    """What the description needs beyond the arrays and the facts.

    Attributes
    ----------
    inputs : (InputRecord, InputRecord)
        What was read for the device and the load.
    device_grid, load_grid : ndarray or None
        Each measured side's own grid, Hz (None for a netlist side: it has no grid of its own).
    device_points_dropped : (int, int)
        Device points below and above the load's band, left out.
    load_points_in_band : int
        The load's own samples inside the analysed band.
    device_renormalised_from_ohm : float or None
        The device file's reference, when the user stated another measurement impedance.
    premise_notes : tuple of str
        What was checked of the premise (netlist sides' own natural frequencies).
    dc_facts : str or None
        Where the DC facts came from, in words ("stated", "the load netlist", …), if any.
    natural_frequencies : ndarray or None
        The joined circuit's natural frequencies (s, 1/s) when both sides are lumped netlists.
    findings : tuple of Finding
        Warnings from reading and preparing the sides.
    grid_chosen : bool
        True when the tool chose the grid (two netlists).
    dc_resistances_ohm : (float or None, float or None)
        The DC resistances stated for the device and the load, Ω (None where not stated).
    """

    inputs: tuple[InputRecord, InputRecord]
    device_grid: np.ndarray | None = None
    load_grid: np.ndarray | None = None
    device_points_dropped: tuple[int, int] = (0, 0)
    load_points_in_band: int = 0
    device_renormalised_from_ohm: float | None = None
    premise_notes: tuple[str, ...] = ()
    dc_facts: str | None = None
    natural_frequencies: np.ndarray | None = None
    findings: tuple[Finding, ...] = ()
    grid_chosen: bool = False
    dc_resistances_ohm: tuple[float | None, float | None] = (None, None)


def describe(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    gamma_load: np.ndarray,
    reference_impedance_ohm: float,
    facts: Facts,
    context: PairContext,
) -> CheckResult:
    """The single check of one pair: the judgement with one variant, in words."""
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    gamma_device = np.asarray(gamma_device, dtype=complex)
    gamma_load = np.asarray(gamma_load, dtype=complex)
    z0 = float(reference_impedance_ohm)
    loop_gain = gamma_device * gamma_load
    judgement = judge(frequency_hz, gamma_device, gamma_load, facts)
    noise = float(nyquist.estimate_noise(loop_gain))
    low = nyquist.edge_closure(
        frequency_hz,
        loop_gain,
        "low",
        judgement.low,
        (),
        int(judgement.low_code),
        int(judgement.low_sign),
    )
    high = nyquist.edge_closure(
        frequency_hz,
        loop_gain,
        "high",
        judgement.high,
        (),
        int(judgement.high_code),
        int(judgement.high_sign),
    )
    verdict = VERDICT_CODES[int(judgement.verdict_code)]
    count = int(judgement.encirclements) if bool(judgement.count_known) else None
    doubts = int(judgement.doubts)
    crossings = nyquist.find_crossings(frequency_hz, loop_gain, noise)
    bands = nyquist.find_bands(frequency_hz, loop_gain, noise)
    margins = nyquist.find_margins(frequency_hz, loop_gain)
    hidden = judgement.hidden_resonances()
    at_stake = judgement.features_at_stake()
    uncertainty = _uncertainty(frequency_hz, gamma_device, gamma_load, facts, judgement)
    device_noise = float(nyquist.estimate_noise(gamma_device))
    gain_bands = [
        (b.start_hz, b.stop_hz)
        for b in nyquist.find_bands(frequency_hz, gamma_device, device_noise)
    ]

    reasons: list[str] = []
    steps: list[str] = []
    _edges(low, high, frequency_hz, reasons, steps, context)
    step = float(judgement.largest_phase_step_rad)
    if step > nyquist.UNSAFE_PHASE_STEP_RAD:
        index = int(np.argmax(np.abs(nyquist.phase_steps(loop_gain))))
        reasons.append(
            f"The phase of 1 - L jumps by {np.degrees(step):.0f}° between"
            f" {format_frequency(frequency_hz[index])} and"
            f" {format_frequency(frequency_hz[index + 1])}: too coarse a grid to unwrap safely."
        )
        steps.append(
            f"Measure again with a finer step around {format_frequency(frequency_hz[index])}."
        )
    if count is not None:
        doubted = verdict == "inconclusive"
        _count_words(count, int(judgement.known_poles), doubted, reasons, steps)
    carrying = nyquist.net_crossings(crossings) if count and count > 0 else []
    oscillation = tuple(c.frequency_hz for c in carrying if c.direction == "clockwise")
    if count is not None and count > 0 and verdict == "unstable":
        reasons += _describe_modes(
            count,
            int(judgement.known_poles),
            oscillation,
            z0,
            frequency_hz,
            loop_gain,
            context.natural_frequencies,
        )
    _doubt_words(
        doubts, judgement, facts, frequency_hz, uncertainty, hidden, at_stake, reasons, steps
    )
    if verdict == "stable":
        reasons.append(_resolution_sentence(context, gain_bands, facts))
    exact = context.natural_frequencies
    if exact is not None and exact.size:
        reasons.append(_exact_sentence(exact, count, doubts))

    warnings = list(context.findings)
    warnings += _findings(judgement, step, noise, margins, crossings, frequency_hz, context, z0)
    warnings += _passivity_findings(frequency_hz, gamma_load, noise, facts)
    warnings += _diagnostic_findings(hidden, at_stake)
    if low.basis == "dc-resistances":
        data = judgement.low
        if bool(data.founded) and int(data.sign_at_limit) != low.sign_at_limit:
            warnings.append(
                Finding(
                    "dc-facts-disagree-with-data",
                    "The DC facts give F(0) the opposite sign to what the low edge of the"
                    " data suggests: something below the sweep (a bias-network resonance or"
                    " latch-up) changes the loop; the DC facts were used.",
                )
            )
    grids = []
    sides = ((context.device_grid, context.inputs[0]), (context.load_grid, context.inputs[1]))
    for grid, record in sides:
        if grid is not None and gain_bands:
            resolution = diagnostics.grid_resolution(grid, record.source, np.array(gain_bands))
            if resolution is not None:
                grids.append(resolution)
    modes = _established_modes(verdict, count, frequency_hz, loop_gain, z0, exact, oscillation)
    return CheckResult(
        verdict=verdict,
        reasons=tuple(reasons),
        next_steps=tuple(dict.fromkeys(steps)),
        premise=_premise(z0, frequency_hz, low, high, context),
        encirclements=count,
        latch_up=None if count is None else bool(count % 2),
        oscillation_frequencies_hz=oscillation if verdict != "stable" else (),
        crossings=tuple(crossings),
        bands=tuple(bands),
        margins=margins,
        closures=(low, high),
        largest_phase_step_rad=step,
        noise_estimate=noise,
        uncertainty=uncertainty,
        hidden_resonances=tuple(hidden),
        grid_resolution=tuple(grids),
        startup_estimates=tuple(startup_estimates(frequency_hz, gamma_device, gamma_load, z0)),
        warnings=tuple(warnings),
        cautions=CAUTIONS,
        inputs=context.inputs,
        reference_impedance_ohm=z0,
        points_dropped=sum(context.device_points_dropped),
        frequency_hz=frequency_hz,
        gamma_device=gamma_device,
        gamma_load=gamma_load,
        loop_gain=loop_gain,
        natural_frequencies=() if exact is None else tuple(complex(s) for s in exact),
        modes=modes,
        dc_resistances_ohm=context.dc_resistances_ohm,
        dc_facts_source=context.dc_facts if low.basis == "dc-resistances" else None,
    )


def _established_modes(
    verdict: str,
    count: int | None,
    frequency_hz: np.ndarray,
    loop_gain: np.ndarray,
    z0: float,
    exact: np.ndarray | None,
    oscillation_hz: tuple[float, ...],
) -> tuple[Mode, ...] | None:
    """The modes the count establishes, with frequency and growth rate (METHODS §4).

    Only under an unstable verdict, and only when they number the count exactly: the joined
    circuit's exact natural frequencies when both sides are lumped netlists; else Newton's
    iteration on F continued off the jω axis near each clockwise crossing that carries the
    count; else (a real root, or a pair the crossings miss) the trusted right-half-plane zeros
    of a rational fit of F within reach of the band. None when no source accounts for the
    count; one-step estimates are never listed as modes.
    """
    if verdict != "unstable" or not count or count < 0:
        return None
    if exact is not None and exact.size:
        return modes_agreeing_with_count(exact, count, "exact")
    characteristic = 1.0 - loop_gain
    roots = [continued_root(frequency_hz, characteristic, f) for f in oscillation_hz]
    if roots and all(root is not None for root in roots):
        distinct: list[complex] = []
        for root in roots:
            assert root is not None
            if all(abs(root - other) > 0.03 * abs(root) for other in distinct):
                distinct.append(root)
        modes = modes_agreeing_with_count(distinct, count, "continuation")
        if modes is not None:
            return modes
    from .pole_zero import identify_natural_frequencies

    try:
        fitted = identify_natural_frequencies(
            frequency_hz, characteristic, reference_impedance_ohm=z0
        )
    except ValueError:
        return None
    trusted = [
        complex(m.sigma_per_s, 2.0 * np.pi * m.frequency_hz)
        for m in fitted.natural_frequencies
        if m.rhp and m.trusted and not m.extrapolated
    ]
    return modes_agreeing_with_count(trusted, count, "pole-zero-fit")


def _edges(
    low: EdgeClosure,
    high: EdgeClosure,
    frequency_hz: np.ndarray,
    reasons: list[str],
    steps: list[str],
    context: PairContext,
) -> None:
    """Reasons and next steps for the edges that could not be closed."""
    if not low.founded:
        reasons.append(
            f"At the low edge ({format_frequency(frequency_hz[0])}) |L| ="
            f" {format_plain(abs(low.loop_gain_at_edge))} is not below 1 and L is still moving"
            f" (|ΔL| about {format_plain(low.motion, 2)} per octave), so the loop cannot be closed"
            " towards DC from these"
            " data."
        )
        if low.extend_to_hz is not None:
            steps.append(
                f"Extend the sweep down to about {format_frequency(low.extend_to_hz)} (device and"
                " load both) and check again."
            )
        steps.append(
            "Or give the DC facts: bias-network oscillations and latch-up often sit below a"
            " VNA's lowest frequency, and the device's DC resistance (its I-V slope at the"
            " bias point) and the bias network's decide the sign of F(0): pass them as"
            " --device-dc-resistance and --load-dc-resistance (a netlist side supplies its own)."
        )
    if not high.founded:
        reasons.append(
            f"At the top edge ({format_frequency(frequency_hz[-1])}) |L| ="
            f" {format_plain(abs(high.loop_gain_at_edge))} is not below 1 by more than the data's"
            f" scatter and the stated |Γ| errors (|L| would need to stay below"
            f" {format_plain(1.0 - high.margin, 2)} there): above the sweep"
            " the device's parasitics and the load's resonances are unknown, and a band-limited"
            " or truncated file looks settled at its last points, so the loop cannot be closed"
            " towards infinite frequency from these data."
        )
        netlists = all(r.version == "netlist" for r in context.inputs)
        if context.grid_chosen:
            steps.append(
                f"Both netlists were evaluated up to {format_frequency(frequency_hz[-1])} and"
                " |L| is still not below 1 there: the models keep their gain at every"
                " frequency. Add the parasitics that take it away, as a real device's do, or"
                " give losses as esr= rather than q= so the loop's limit can be computed."
            )
        elif high.extend_to_hz is not None:
            target = format_frequency(high.extend_to_hz)
            steps.append(
                f"Extend the sweep up to about {target} (device and load both), to where |L| < 1,"
                " and check again."
            )
        if netlists and not context.grid_chosen:
            steps.append(
                "Both sides are netlists: leave out --start, --stop and --points and the tool"
                " evaluates them wherever the answer needs."
            )


def _count_words(
    count: int, poles: int, doubted: bool, reasons: list[str], steps: list[str]
) -> None:
    """The count in words, with its reading (premise failed, stable, unstable); ``doubted``
    when a doubt leaves it unproven (the doubts' own sentences follow)."""
    poles_words = "pole" if poles == 1 else "poles"
    including = f" (including P = {poles} {poles_words} of F from a netlist side)" if poles else ""
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
        return
    if doubted:
        reasons.append(f"On these samples the count is Z = {count}{including}, but it is unproven:")
        return
    if count == 0:
        reasons.append(
            "No natural frequency in the right half plane: the loop gain makes no net clockwise"
            f" encirclement of +1 (Z = {count}{including})."
        )
        return
    roots = "natural frequency" if count == 1 else "natural frequencies"
    reasons.append(f"Z = {count}{including}: {count} {roots} in the right half plane.")
    if count % 2:
        steps.append(
            "Do not apply full bias into this load. A real root (latch-up) is set by the loop at"
            " DC and low frequency: keep the bias network's DC resistance below the device's"
            " negative resistance |Rd| (or add a low-frequency path that does), then check"
            " again."
        )
    if count >= 2:
        steps.append(
            "Do not apply full bias into this load: change the load where the loop crosses +1"
            " (more loss, or move the resonance) and check again."
        )


def _doubt_words(
    doubts: int,
    judgement: Judgement,
    facts: Facts,
    frequency_hz: np.ndarray,
    uncertainty: Uncertainty,
    hidden: list[diagnostics.HiddenResonance],
    at_stake: list[bool],
    reasons: list[str],
    steps: list[str],
) -> None:
    """Reasons and next steps for each doubt that leaves the count unproven."""
    if doubts & DOUBT_UNCERTAINTY:
        listed = ", ".join(
            f"{format_frequency(a)}-{format_frequency(b)}" if a != b else format_frequency(a)
            for a, b in uncertainty.at_stake_ranges_hz
        )
        reasons.append(
            f"With |Γ| errors of {format_plain(uncertainty.device)} (device) and"
            f" {format_plain(uncertainty.load)} (load) the loop gain may move by up to |ΔL| ="
            f" {format_plain(uncertainty.largest_loop_gain_change)},"
            f" enough to reach +1 at {listed}: the count could change there."
        )
        steps.append(
            "Measure more accurately near those frequencies (calibration, averaging, lower IF"
            " bandwidth) or add margin to the load."
        )
    if doubts & DOUBT_HIDDEN_FEATURE:
        for feature, stake in zip(hidden, at_stake, strict=True):
            if not stake:
                continue
            what = (
                f"a {feature.kind} resonance (Foster's reactance theorem)"
                if feature.kind != "jump"
                else "an isolated jump of ΓL far larger than its neighbours' steps"
            )
            span = f"{format_frequency(feature.start_hz)} and {format_frequency(feature.stop_hz)}"
            finer = format_frequency(_finer_step(feature.step_hz))
            if facts.load_samples is None and facts.load_is_netlist:
                reasons.append(
                    f"Evaluated at the device's samples, the load netlist shows {what} between"
                    f" {span}, where the device has |Γd| ≥ 1: the device's grid is too"
                    " coarse there to follow the load, and an unseen excursion could encircle"
                    " +1."
                )
                steps.append(
                    f"Measure the device between {span} with a step of {finer} or finer, then"
                    " check again."
                )
                continue
            reasons.append(
                f"The load's samples show {what} between {span}, where the device has"
                " |Γd| ≥ 1: something sharp lies between those samples, and an unseen"
                " excursion there could encircle +1."
            )
            steps.append(
                f"Measure the load between {span} with a step of {finer} or finer, then check"
                " again."
            )
    if doubts & DOUBT_PHASE_STEP and not doubts & DOUBT_UNWRAPPING:
        column = int(judgement.large_step_column)
        reasons.append(
            f"The phase of 1 - L moves by {np.degrees(float(judgement.large_step_rad)):.0f}°"
            f" between {format_frequency(frequency_hz[column])} and"
            f" {format_frequency(frequency_hz[column + 1])}, where |L| ≥ 1: the loop could"
            " pass either side of +1 between those samples, so the count is unproven."
        )
        steps.append(
            f"Measure device and load between {format_frequency(frequency_hz[column])} and"
            f" {format_frequency(frequency_hz[column + 1])} with a step of"
            f" {format_frequency(_finer_step(frequency_hz[column + 1] - frequency_hz[column]))}"
            " or finer."
        )
    if doubts & DOUBT_ACTIVE_LOAD:
        reasons.append(
            "The load is not passive (|ΓL| > 1 in the band): whether it has poles of its"
            " own in the right half plane cannot be told from its reflection, so the count"
            " cannot decide."
        )
        steps.append(
            "Check that device and load are not swapped; an active load can be given as a"
            " netlist, whose own natural frequencies are then counted."
        )
    if doubts & DOUBT_EXACT_ROOTS:
        steps.append(
            "The grid does not resolve the loop: leave out --start, --stop and --points and the"
            " tool chooses a grid from the circuits' natural frequencies."
        )


def _finer_step(step_hz: float) -> float:
    """A step that resolves a resonance 50 times sharper than ``step_hz`` hid, to a plain figure."""
    return nyquist.round_frequency(step_hz / 50.0, down=True)


def _resolution_sentence(
    context: PairContext, gain_bands: list[tuple[float, float]], facts: Facts
) -> str:
    """What a 'stable' rests on about sampling: the load grid's resolvable Q where it matters."""
    if context.load_grid is None:
        if context.device_grid is None:
            return (
                "Both sides are netlists, evaluated on a grid the tool chose and refined where"
                " the loop moves fast: nothing lies unseen between samples."
                if context.grid_chosen
                else "Both sides are netlists, evaluated on the grid given."
            )
        return (
            "The load is a netlist (no grid of its own); the device's samples are where the"
            " loop was evaluated."
        )
    if not gain_bands:
        return (
            "The device has no gain (|Γd| < 1) anywhere in the analysed band, so no load"
            " resonance between samples can change the count (with a passive load |L| < 1)."
        )
    resolution = diagnostics.grid_resolution(
        context.load_grid, context.inputs[1].source, np.array(gain_bands)
    )
    if resolution is None:
        return "The load's grid has no interval where the device has gain."
    listed = ", ".join(f"{format_frequency(a)}-{format_frequency(b)}" for a, b in gain_bands)
    finest = _finest_resolved(context.load_grid, gain_bands)
    rising = (
        f", and up to Q = {_plain(finest[0])} near {format_frequency(finest[1])}"
        if finest[0] > 1.5 * resolution.finest_resolvable_q
        else ""
    )
    return (
        f"Where the device has gain ({listed}) the load's grid resolves loaded resonances up"
        f" to Q = {_plain(resolution.finest_resolvable_q)} at its coarsest point there (a step"
        f" of {format_frequency(resolution.largest_step_hz)} near"
        f" {format_frequency(resolution.at_frequency_hz)}){rising}: a sharper resonance"
        " between its samples would be invisible to any test on these data."
    )


def _plain(value: float) -> str:
    """Two significant figures, without an exponent for ordinary sizes (0.28, 62, 270)."""
    return format_plain(value, 2)


def _finest_resolved(grid: np.ndarray, bands: list[tuple[float, float]]) -> tuple[float, float]:
    """The largest f/(2Δf) of the grid's intervals inside ``bands``, and where."""
    centres = 0.5 * (grid[:-1] + grid[1:])
    q = centres / (2.0 * np.diff(grid))
    inside = np.zeros(centres.shape, dtype=bool)
    for low, high in bands:
        inside |= (grid[:-1] <= high) & (grid[1:] >= low)
    q = np.where(inside, q, -np.inf)
    index = int(np.argmax(q))
    return float(q[index]), float(centres[index])


def _exact_sentence(exact: np.ndarray, count: int | None, doubts: int) -> str:
    """The joined circuit's natural frequencies beside the sampled count."""
    rhp = int(np.sum(exact.real > 0))
    listed = "; ".join(_root_words(s) for s in exact if s.real > 0 and s.imag >= 0)
    agreement = (
        "the sampled count agrees"
        if count is not None and count == rhp
        else "the sampled count on this grid does not agree, so it is not trusted"
        if doubts & DOUBT_EXACT_ROOTS
        else "the sampled count is not known"
    )
    where = f": {listed}" if listed else ""
    return (
        f"The joined circuit's natural frequencies (generalized eigenvalues of its nodal"
        f" equations) put {rhp} in the right half plane{where}; {agreement}."
    )


def _root_words(root: complex) -> str:
    if abs(root.imag) <= 1e-9 * abs(root):
        return f"a real root growing at σ = {format_rate(root.real)}"
    return f"{format_frequency(root.imag / (2 * np.pi))} growing at σ = {format_rate(root.real)}"


def _premise(
    z0: float,
    frequency_hz: np.ndarray,
    low: EdgeClosure,
    high: EdgeClosure,
    context: PairContext,
) -> str:
    band = f"{format_frequency(frequency_hz[0])} to {format_frequency(frequency_hz[-1])}"
    text = (
        "The count equals the number of right-half-plane natural frequencies only if the device"
        f" is stable terminated in its measurement impedance ({format_resistance(z0)}), as a"
        " device measured"
        f" on a VNA without oscillating is, and the load is passive. The verdict covers {band}"
        " and assumes the loop gain does not cross the positive real axis beyond +1 outside it."
    )
    if high.basis == "loop-gain-below-unity":
        text += (
            " Towards infinity it rests on |L| < 1 at the top edge and assumes |L| stays below 1"
            " above the sweep; parasitics there can add encirclements."
        )
    elif high.basis == "netlist-limit":
        text += (
            " Towards infinity both lumped netlists were evaluated beyond every natural"
            " frequency of the loop, where L has reached its limit."
        )
    if low.basis == "settled":
        text += (
            " Towards DC it assumes L keeps tending to the value it has settled at below the"
            " sweep, as a lumped circuit does (bias-network resonances below the sweep would"
            " break this; DC facts remove the assumption)."
        )
    elif low.basis == "dc-resistances":
        source = context.dc_facts or "stated"
        text += (
            f" Towards DC it uses the DC facts ({source}) and assumes no encirclement between"
            " 0 Hz and the lowest frequency."
        )
    text += " It is a small-signal result."
    if context.premise_notes:
        text += " " + " ".join(context.premise_notes)
    return text


def _uncertainty(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    gamma_load: np.ndarray,
    facts: Facts,
    judgement: Judgement,
) -> Uncertainty:
    """Worst-case |ΔL| from the stated |Γ| errors, and where it reaches the critical point."""
    device, load = facts.device_uncertainty, facts.load_uncertainty
    worst_change = np.abs(gamma_device) * load + np.abs(gamma_load) * device + device * load
    slack = np.abs(1.0 - gamma_device * gamma_load) - worst_change
    at_stake = slack <= 0.0
    ranges = []
    if device or load:
        edges = np.flatnonzero(np.diff(np.concatenate(([0], at_stake.astype(int), [0]))))
        ranges = [
            (float(frequency_hz[start]), float(frequency_hz[stop - 1]))
            for start, stop in zip(edges[::2], edges[1::2], strict=True)
        ]
    closest = int(np.argmin(slack))
    return Uncertainty(
        device=device,
        load=load,
        largest_loop_gain_change=float(np.max(worst_change)),
        smallest_slack=float(slack[closest]),
        smallest_slack_frequency_hz=float(frequency_hz[closest]),
        count_at_stake=bool(int(judgement.doubts) & DOUBT_UNCERTAINTY),
        at_stake_ranges_hz=tuple(ranges),
    )


def _passivity_findings(
    frequency_hz: np.ndarray, gamma_load: np.ndarray, noise: float, facts: Facts
) -> list[Finding]:
    """A warning when a measured load reflects more than it receives: active, or files swapped."""
    magnitude = np.abs(gamma_load)
    worst = int(np.argmax(magnitude))
    if facts.load_is_netlist or magnitude[worst] <= 1.0 + 3.0 * noise + 1e-9:
        return []
    return [
        Finding(
            "load-not-passive",
            f"The load has |ΓL| = {format_plain(magnitude[worst])} at"
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
    hidden: list[diagnostics.HiddenResonance], at_stake: list[bool]
) -> list[Finding]:
    findings = []
    for resonance, stake in zip(hidden, at_stake, strict=True):
        what = (
            f"a {resonance.kind} resonance lies between {format_frequency(resonance.start_hz)}"
            f" and {format_frequency(resonance.stop_hz)} (its reactance falls through ∞:"
            " Foster's theorem)"
            if resonance.kind != "jump"
            else f"Γ jumps between {format_frequency(resonance.start_hz)} and"
            f" {format_frequency(resonance.stop_hz)} far more than between its neighbouring"
            " samples (a sharp resonance between them)"
        )
        where = (
            "; the device has gain there, so the count is at stake"
            if stake
            else "; the device has no gain there (|Γd| < 1), so it cannot change the count"
        )
        findings.append(
            Finding(
                "resonance-between-samples",
                f"{resonance.source}: {what}; the grid step there is"
                f" {format_frequency(resonance.step_hz)}{where}.",
                {
                    "start_hz": resonance.start_hz,
                    "stop_hz": resonance.stop_hz,
                    "kind": resonance.kind,
                    "count_at_stake": stake,
                },
            )
        )
    return findings


def _times(count: int) -> str:
    """ "once", "twice", "3 times"."""
    return {1: "once", 2: "twice"}.get(count, f"{count} times")


def _describe_modes(
    count: int,
    poles: int,
    oscillation: tuple[float, ...],
    z0: float,
    frequency_hz: np.ndarray,
    loop_gain: np.ndarray,
    exact: np.ndarray | None,
) -> list[str]:
    """What the count says of the modes; the joined circuit's roots, when known, say the rest."""
    sentences = []
    if count % 2:
        why = " (F(0) and F(∞) have opposite signs)" if not poles else ""
        sentences.append(
            f"The count is odd: at least one natural frequency is real{why}, a non-oscillatory"
            " latch-up, often through the bias network."
        )
    if oscillation:
        listed = ", ".join(format_frequency(f) for f in oscillation)
        sentences.append(
            f"Oscillation expected near {listed} (where the loop gain crosses the real axis"
            f" beyond +1 in {format_resistance(z0)}; the actual frequency shifts as the amplitude"
            " grows)."
        )
    elif count >= 2 and exact is None:
        rate = np.abs(np.diff(nyquist.unwrapped_phase(loop_gain)) / np.diff(frequency_hz))
        index = int(np.argmax(rate))
        hint = 0.5 * (frequency_hz[index] + frequency_hz[index + 1])
        sentences.append(
            "Right-half-plane roots without a clockwise crossing in the band: a complex pair,"
            " whose frequency the crossings cannot locate (the phase of 1 - L turns fastest"
            f" near {format_frequency(hint)}, its likely neighbourhood), or real roots; the"
            " pole-zero fit (--poles) tells them apart."
        )
    return sentences


def _findings(
    judgement: Judgement,
    step: float,
    noise: float,
    margins: nyquist.Margins,
    crossings: list[nyquist.Crossing],
    frequency_hz: np.ndarray,
    context: PairContext,
    z0: float,
) -> list[Finding]:
    findings = []
    inside = float(judgement.large_step_rad) > nyquist.COARSE_PHASE_STEP_RAD
    if nyquist.COARSE_PHASE_STEP_RAD < step <= nyquist.UNSAFE_PHASE_STEP_RAD and not inside:
        findings.append(
            Finding(
                "coarse-phase-step",
                f"The phase of 1 - L moves by up to {np.degrees(step):.0f}° between"
                " neighbouring points where |L| < 1; there no encirclement can hide, but a finer"
                " sweep would make the picture clearer.",
                {"largest_phase_step_deg": float(np.degrees(step))},
            )
        )
    if margins.modulus_margin < 3.0 * noise:
        findings.append(
            Finding(
                "margin-within-noise",
                f"The loop passes within |1 - L| = {format_plain(margins.modulus_margin)} of +1 at"
                f" {format_frequency(margins.modulus_margin_frequency_hz)}, inside three times"
                f" the data's estimated scatter of L ({format_plain(noise, 2)}): noise could change"
                " the count.",
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
    below, above = context.device_points_dropped
    if below + above:
        findings.append(
            Finding(
                "device-points-outside-load-band",
                f"{below + above} device {'point lies' if below + above == 1 else 'points lie'}"
                " outside the load's band and were left out"
                f" ({below} below, {above} above); nothing is extrapolated.",
                {"below": below, "above": above},
            )
        )
    if context.load_grid is not None and context.load_points_in_band > frequency_hz.size:
        findings.append(
            Finding(
                "load-finer-than-device",
                f"The load has {context.load_points_in_band} points in the analysed band, the"
                f" device {frequency_hz.size} points: the analysis runs on the device's grid, so"
                " detail in the load between device points is not seen by the count (the load's own"
                " grid is still searched for hidden resonances).",
                {"load_points": context.load_points_in_band, "device_points": frequency_hz.size},
            )
        )
    if context.device_renormalised_from_ohm is not None:
        findings.append(
            Finding(
                "device-renormalised",
                f"The device file is referred to"
                f" {format_resistance(context.device_renormalised_from_ohm)} but was stated to be"
                f" measured in {format_resistance(z0)}; it was brought back to its"
                " measurement impedance for the count.",
                {"file_reference_impedance_ohm": context.device_renormalised_from_ohm},
            )
        )
    return findings
