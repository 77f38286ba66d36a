"""Plain-text report of ``oneport oscillator``: verdict first, cautions last.

Rendering only: it formats what the result holds and computes nothing beyond unit scaling.
"""

from __future__ import annotations

from ..products.oscillator.result import OperatingPoint, OscillatorResult, StartUpEstimate
from ..units import format_frequency
from .check_text import closing_sections, wrap
from .formatting import format_amplitude, format_power

_HEADLINE = {
    "settles": "SETTLES at one stable operating point",
    "hard-excitation": "HARD EXCITATION: no start from noise, but a kick reaches a stable point",
    "mode-jumping": "MODE JUMPING: several stable operating points",
    "outside-data": "OUTSIDE THE DATA: the stable point lies beyond the drive levels",
    "no-oscillation": "NO OSCILLATION in the data",
    "inconclusive": "INCONCLUSIVE: the data cannot decide",
}


def verdict_line(result: OscillatorResult) -> str:
    """One line: the verdict and the stable points."""
    stable = [p for p in result.operating_points if p.kurokawa_stable]
    listed = "; ".join(
        f"{format_frequency(p.frequency_hz)}, {_amplitude(p)}, {format_power(p.load_power_w)}"
        for p in stable
    )
    return _HEADLINE[result.verdict] + (f" ({listed})" if listed else "")


def render(result: OscillatorResult) -> str:
    """The full text report."""
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += ["", wrap(f"Form: {result.form} ({result.form_reason}).", "")]
    parts += ["", *_points(result), "", *_start(result)]
    parts += ["", "Inputs", *_inputs(result)]
    parts += closing_sections(
        result.warnings, result.next_steps, None, result.cautions, result.limits
    )
    return "\n".join(parts) + "\n"


def _points(result: OscillatorResult) -> list[str]:
    title = f"Operating points (Z0 = {result.reference_impedance_ohm:g} ohm for reflections)"
    if not result.operating_points:
        return [title, "  none inside the data"]
    rows = [
        title,
        f"  {'frequency':>12}  {'amplitude':>15}  {'into load':>20}  {'Kurokawa':>9}"
        f"  {'decay rate':>11}  {'Q_ext':>7}  {'lock range':>11}",
    ]
    for point in result.operating_points:
        state = "marginal" if point.marginal else "stable" if point.kurokawa_stable else "unstable"
        rate = "-" if point.decay_rate_per_s is None else f"{point.decay_rate_per_s:.3g}/s"
        lock = point.pulling.locking_half_range_hz
        rows.append(
            f"  {format_frequency(point.frequency_hz):>12}  {_amplitude(point):>15}"
            f"  {format_power(point.load_power_w):>20}  {state:>9}  {rate:>11}"
            f"  {point.pulling.external_q:>7.3g}"
            f"  {'-' if lock is None else format_frequency(lock):>11}"
        )
    ratio = result.operating_points[0].pulling.injection_ratio_db
    rows.append(
        f"  lock range: one-sided injection-locking range at P_inj/P_osc = {ratio:g} dB;"
        f" amplitudes are {result.amplitude_quantity}"
    )
    return rows


def _start(result: OscillatorResult) -> list[str]:
    rows = [f"Start-up (Newton estimates, {result.drive_quantity})"]
    rows += _estimates("smallest level", result.drive_range[0], result.start_up)
    rows += _estimates("largest level", result.drive_range[1], result.growth_at_largest_level)
    rows.append(f"  starts from noise: {'yes' if result.starts_from_noise else 'no'}")
    return rows


def _estimates(label: str, level: float, estimates: tuple[StartUpEstimate, ...]) -> list[str]:
    head = f"  {label} ({level:.4g}):"
    if not estimates:
        return [f"{head} no mode near the jw axis in the band"]
    return [
        f"{head} {format_frequency(e.frequency_hz)}, sigma = {e.growth_rate_per_s:.3g} /s"
        f" ({'grows' if e.grows else 'decays'})"
        for e in estimates
    ]


def _inputs(result: OscillatorResult) -> list[str]:
    device = result.device_input
    rows = [f"  device  {device['path']} ({device['kind']})"]
    if device.get("curve_summary"):
        rows.append(f"          {device['curve_summary']}")
    if device.get("levels") is not None:
        rows.append(f"          {len(device['levels'])} levels of {device['level_quantity']}")
    load = result.load_input
    reference = load.file_reference_impedance_ohm
    rows.append(f"  load    {load.source}, {load.points} points, R = {reference:g} ohm")
    low, high = result.frequency_range_hz
    rows.append(f"  analysed {format_frequency(low)}-{format_frequency(high)}")
    return rows


def _amplitude(point: OperatingPoint) -> str:
    return format_amplitude(point.amplitude, point.amplitude_quantity)
