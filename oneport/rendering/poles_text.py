"""Plain-text report of a pole–zero identification (and of the device's character).

Rendering only: it formats what a :class:`~oneport.analysis.pole_zero.PoleZeroResult` and a
:class:`~oneport.analysis.character.DeviceCharacter` hold, and computes nothing.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ..units import format_frequency, format_plain, format_rate, format_resistance
from .check_text import closing_sections, wrap
from .formatting import format_table

if TYPE_CHECKING:
    from ..analysis.character import DeviceCharacter, FormCount
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
    ohm = "" if z0 is None else f", Z0 = {format_resistance(z0)}"
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
    z0 = format_resistance(character.reference_impedance_ohm)
    rows = [f"Device character ({character.kind}; fitted in Z0 = {z0})"]
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
        rows.append(f"  negative resistance (|Γd| ≥ 1): {listed}")
    if character.forms:
        rows += ["", "Nyquist count in three forms (with the load)"]
        rows += format_table(
            ("form", "function", "count", "premise", "roots"),
            [
                [
                    form.form,
                    form.function,
                    f"N = {_number(form.encirclements)}",
                    f"P = {_number(form.premise_poles)}",
                    f"N + P = {_number(form.implied_rhp_roots)}",
                ]
                for form in character.forms
            ],
        )
        for form in character.forms:
            if form.encirclements is None or form.premise_poles is None:
                rows.append(wrap(_not_counted(form), "  - "))
        rows += [wrap(sentence, "  ") for sentence in character.agreement]
    return rows


def _not_counted(form: FormCount) -> str:
    """Why a form's row holds a '?': the count or P could not be had, in words."""
    parts = []
    if form.encirclements is None:
        failing = [note for note in form.notes if not note.startswith("Closed ")]
        why = " ".join(failing) if failing else "Its contour could not be closed."
        parts.append(f"N is not known: {why[:1].lower()}{why[1:]}")
    if form.premise_poles is None:
        parts.append(
            "P is not known: the fit cannot confirm whether the device is stable with this"
            " form's termination"
        )
    return f"A ? in the {form.form} form ({form.function}): " + "; ".join(parts)


def _table(modes: tuple[NaturalFrequency, ...]) -> list[str]:
    if not modes:
        return ["  none"]
    rows = [
        [
            "real root" if mode.real else format_frequency(mode.frequency_hz),
            format_rate(mode.sigma_per_s),
            "right" if mode.rhp else "left",
            "yes" if mode.trusted else "no",
            _notes(mode),
        ]
        for mode in modes
    ]
    return format_table(("frequency", "σ", "half plane", "trusted", "notes"), rows, right=(0, 1))


def _notes(mode: NaturalFrequency) -> str:
    notes = []
    if mode.extrapolated:
        notes.append("far outside the fitted band")
    if not mode.persists_across_order:
        notes.append("moves with the model order")
    if not mode.persists_across_band:
        notes.append("not confirmed on the trimmed band")
    if mode.near_cancellation:
        notes.append("nearly cancelled by a pole")
    if mode.within_noise_of_axis:
        notes.append("within the noise of the jω axis")
    if mode.rhp and mode.real and mode.trusted and not mode.extrapolated:
        notes.append("latch-up")
    text = "; ".join(notes)
    if mode.rhp and (not mode.trusted or mode.extrapolated):
        # A right-half-plane row the verdict does not count says why.
        return f"not counted: {text}" if text else "not counted"
    return text


def _fit(result: PoleZeroResult) -> list[str]:
    quality = "adequate" if result.fit_adequate else "TOO POOR to judge"
    rows = [
        "Fit",
        f"  model order {result.model_order}, RMS error of F {format_plain(result.fit_rms_error)}"
        f" (data noise about {format_plain(result.noise_estimate)}): {quality}",
    ]
    for name, _order, error in result.variants:
        rows.append(f"  variant {name}: RMS error of F {format_plain(error)}")
    count = result.nyquist_encirclements
    if count is not None:
        zeros = "zero" if result.trusted_rhp_count == 1 else "zeros"
        rows.append(
            f"  Nyquist count N = {count}; the fit has {result.trusted_rhp_count} trusted"
            f" right-half-plane {zeros}"
        )
    return rows


def _short(mode: NaturalFrequency) -> str:
    if mode.real:
        return f"latch-up (real root, σ = {format_rate(mode.sigma_per_s)})"
    return f"{format_frequency(mode.frequency_hz)} (σ = {format_rate(mode.sigma_per_s)})"


def _number(value: int | None) -> str:
    return "?" if value is None else str(value)
