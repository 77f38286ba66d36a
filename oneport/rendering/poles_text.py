"""Plain-text report of a pole–zero identification (and of the device's character).

Rendering only: it formats what a :class:`~oneport.analysis.pole_zero.PoleZeroResult` and a
:class:`~oneport.analysis.character.DeviceCharacter` hold, and computes nothing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..units import format_frequency
from .check_text import closing_sections, wrap

if TYPE_CHECKING:
    from ..analysis.character import DeviceCharacter
    from ..analysis.pole_zero import NaturalFrequency, PoleZeroResult

_HEADLINE = {
    "stable": "STABLE (small-signal): no natural frequency in the right half plane",
    "unstable": "UNSTABLE",
    "inconclusive": "INCONCLUSIVE: the fit cannot decide",
}


def verdict_line(result: PoleZeroResult) -> str:
    """One line: verdict, trusted RHP modes, band and Z0."""
    low, high = result.frequency_range_hz
    band = f"{format_frequency(low)}-{format_frequency(high)}"
    rhp = [m for m in result.natural_frequencies if m.rhp and m.trusted and not m.extrapolated]
    extra = ""
    if rhp:
        extra = ": " + ", ".join(_short(m) for m in rhp)
    z0 = result.reference_impedance_ohm
    ohm = "" if z0 is None else f", Z0 = {z0:g} ohm"
    return f"{_HEADLINE[result.verdict]}{extra}; {band}{ohm}"


def render(result: PoleZeroResult) -> str:
    """The full text report: verdict first, the modes, the fit, the device's character when the
    result carries it, cautions last."""
    character = result.device_character
    parts = [verdict_line(result), ""]
    parts += [wrap(reason, "  ") for reason in result.reasons]
    parts += [
        "",
        "Natural frequencies (zeros of the fitted F)",
        *_table(result.natural_frequencies),
    ]
    parts += ["", "Poles of the fitted F (each side terminated in Z0)"]
    parts += _table(result.characteristic_poles)
    parts += ["", *_fit(result)]
    if character is not None:
        parts += ["", *render_character(character)]
    parts += closing_sections(result.warnings, (), result.premise, result.cautions)
    return "\n".join(parts) + "\n"


def second_opinion_lines(result: PoleZeroResult) -> list[str]:
    """The fit's section in ``oneport check --poles``: verdict, modes, fit (a disagreement with
    the count is among the check's own warnings)."""
    rows = ["Second opinion: pole-zero fit of 1 - L", "  " + verdict_line(result)]
    rows += _table(result.natural_frequencies)
    rows += _fit(result)
    return rows


def render_character(character: DeviceCharacter) -> list[str]:
    """The device-character section."""
    z0 = character.reference_impedance_ohm
    rows = [f"Device character ({character.kind}; fitted in Z0 = {z0:g} ohm)"]
    rows += [wrap(sentence, "  ") for sentence in character.summary]
    words = {True: "stable", False: "UNSTABLE", None: "not confirmed"}
    for termination in character.terminations:
        rows.append(f"  {termination.description}: {words[termination.stable]}")
        rows += ["  " + row for row in _table(termination.natural_frequencies)[1:]]
    if character.negative_resistance_bands_hz:
        listed = ", ".join(
            f"{format_frequency(a)}-{format_frequency(b)}"
            for a, b in character.negative_resistance_bands_hz
        )
        rows.append(f"  negative resistance (|gamma_device| >= 1): {listed}")
    if character.forms:
        rows += ["", "Nyquist count in three forms (with the load)"]
        rows.append(f"  {'form':<11} {'function':<30} {'N':>4} {'P':>4} {'N + P':>6}")
        for form in character.forms:
            rows.append(
                f"  {form.form:<11} {form.function:<30} {_number(form.encirclements):>4}"
                f" {_number(form.premise_poles):>4} {_number(form.implied_rhp_roots):>6}"
            )
        rows += [wrap(sentence, "  ") for sentence in character.agreement]
    return rows


def _table(modes: tuple[NaturalFrequency, ...]) -> list[str]:
    if not modes:
        return ["  none"]
    rows = [f"  {'frequency':>12}  {'sigma (1/s)':>12}  {'half plane':<10}  {'trusted':<7}  notes"]
    for mode in modes:
        frequency = "real root" if mode.real else format_frequency(mode.frequency_hz)
        notes = _notes(mode)
        rows.append(
            f"  {frequency:>12}  {mode.sigma_per_s:>+12.4g}  {'right' if mode.rhp else 'left':<10}"
            f"  {'yes' if mode.trusted else 'no':<7}  {notes}"
        )
    return rows


def _notes(mode: NaturalFrequency) -> str:
    notes = []
    if mode.extrapolated:
        notes.append("far outside the band")
    if not mode.persists_across_order:
        notes.append("moves with model order")
    if not mode.persists_across_band:
        notes.append("not confirmed on trimmed band")
    if mode.near_cancellation:
        notes.append("near pole-zero cancellation")
    if mode.within_noise_of_axis:
        notes.append("within noise of the axis")
    if mode.rhp and mode.real and mode.trusted:
        notes.append("latch-up")
    return "; ".join(notes)


def _fit(result: PoleZeroResult) -> list[str]:
    quality = "adequate" if result.fit_adequate else "TOO POOR to judge"
    rows = [
        "Fit",
        f"  model order {result.model_order}, RMS error {result.fit_rms_error:.3g}"
        f" (data noise about {result.noise_estimate:.3g}): {quality}",
    ]
    for name, _order, error in result.variants:
        rows.append(f"  variant {name}: RMS error {error:.3g}")
    count = result.nyquist_encirclements
    if count is not None:
        rows.append(
            f"  Nyquist count N = {count}; trusted right-half-plane zeros:"
            f" {result.trusted_rhp_count}"
        )
    return rows


def _short(mode: NaturalFrequency) -> str:
    if mode.real:
        return f"latch-up (real root, sigma = {mode.sigma_per_s:.3g} /s)"
    return f"{format_frequency(mode.frequency_hz)} (sigma = {mode.sigma_per_s:+.3g} /s)"


def _number(value: int | None) -> str:
    return "?" if value is None else str(value)
