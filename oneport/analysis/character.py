"""Device character: from the device alone, is it stable open-circuited, short-circuited, in Z0?

Terminated in an open, the device's natural frequencies are the poles of Zd (the zeros of Yd);
short-circuited, the zeros of Zd (the poles of Yd); terminated in Z0, the poles of Γd (the zeros
of Zd + Z0). With Zd = Z0(1 + Γd)/(1 − Γd) these are the roots of Γd = 1, of Γd = −1 and the
poles of Γd, so one rational fit of the measured Γd — where the noise is, and bounded, unlike Zd
near an open-circuit resonance — gives the fitted Zd and Yd and all three sets (METHODS §3, §5).

A device stable open-circuited (S-type, current-controlled) oscillates or amplifies with
low-impedance, series-resonant loads; one stable short-circuited (N-type, voltage-controlled,
like a tunnel diode) with high-impedance, parallel-resonant ones. With a load, the Nyquist test
runs in all three forms: 1 − Γd·ΓL (premise: stable in Z0), Zd + ZL (open-circuit-stable) and
Yd + YL (short-circuit-stable); each count equals the right-half-plane roots only when its own
premise holds, so a disagreement points at the premise that fails. The Z and Y forms can have
poles at 0 and ∞ (DC blocks, chokes): the contour is indented around them, using the power law
the data show at each edge. This room computes; it never reads files, prints or exits.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..errors import InputError
from ..findings import Finding
from ..reading.touchstone import OnePort
from ..units import format_count, format_frequency, format_plain
from .nyquist import UNSAFE_PHASE_STEP_RAD, estimate_noise, find_bands
from .pole_zero import NaturalFrequency, TrustRules, assess_roots, in_reach
from .rational import FitSet, fit_with_variants

CHARACTER_SCHEMA = "oneport.character/1"
#: An edge's power law |G| ∝ ω^k is accepted when the measured exponent is this close to k.
EXPONENT_TOLERANCE = 0.35
#: The local power law at an edge is measured over samples within this frequency ratio of it.
EDGE_WINDOW_RATIO = 1.1
#: ... and the phase at the edge this close (rad) to that of K·(jω)^k with K real.
PHASE_TOLERANCE_RAD = np.deg2rad(30.0)

_TERMINATIONS = {
    "open": "open-circuited: poles of Zd, zeros of Yd (roots of Γd = 1)",
    "short": "short-circuited: zeros of Zd, poles of Yd (roots of Γd = -1)",
    "reference": "terminated in the reference impedance: poles of Γd",
}
_KIND_ADVICE = {
    "open-circuit-stable": (
        "The device is stable open-circuited but not short-circuited (S-type, current-controlled"
        " negative resistance): it oscillates or amplifies with low-impedance loads, such as a"
        " series-resonant circuit whose resistance is below the device's |R|. High-impedance"
        " loads keep it stable."
    ),
    "short-circuit-stable": (
        "The device is stable short-circuited but not open-circuited (N-type, voltage-controlled"
        " negative resistance, like a tunnel diode): it oscillates or amplifies with"
        " high-impedance loads, such as a parallel-resonant tank whose conductance is below the"
        " device's |G|. Low-impedance loads keep it stable."
    ),
    "open-and-short-circuit-stable": (
        "The device is stable both open- and short-circuited: any negative resistance shows"
        " only with loads of intermediate impedance; check each load."
    ),
    "neither": (
        "The device is unstable both open- and short-circuited: only a load in a window of"
        " impedance over the whole band keeps it stable."
    ),
    "undetermined": (
        "The fit cannot confirm whether the device is stable open- or short-circuited (see the"
        " natural frequencies' reasons), so the kind of load it oscillates with is not known."
    ),
}


@dataclass(frozen=True)
class TerminationModes:
    """The device's natural frequencies with one termination (open, short or reference)."""

    termination: str
    description: str
    natural_frequencies: tuple[NaturalFrequency, ...]

    @property
    def rhp_count(self) -> int | None:
        """Trusted right-half-plane modes (with multiplicity); None if any is unconfirmed."""
        rhp = [m for m in in_reach(self.natural_frequencies) if m.rhp]
        if any(not m.trusted for m in rhp):
            return None
        return sum(m.multiplicity for m in rhp)

    @property
    def stable(self) -> bool | None:
        """True with no RHP mode in reach; False with a trusted one; None otherwise."""
        rhp = [m for m in in_reach(self.natural_frequencies) if m.rhp]
        if any(m.trusted for m in rhp):
            return False
        return None if rhp else True

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "termination": self.termination,
            "description": self.description,
            "stable": self.stable,
            "rhp_count": self.rhp_count,
            "natural_frequencies": [m.to_dict() for m in self.natural_frequencies],
        }


@dataclass(frozen=True)
class FormCount:
    """The Nyquist count in one form and what it implies once its premise is accounted for.

    ``encirclements`` is N_cw of the form's function around the origin (None when the contour
    cannot be closed from the data); ``premise_poles`` the device's right-half-plane natural
    frequencies with that form's termination (P); ``implied_rhp_roots`` N + P.
    """

    form: str
    function: str
    premise: str
    encirclements: int | None
    premise_poles: int | None
    notes: tuple[str, ...]

    @property
    def premise_holds(self) -> bool | None:
        """Whether the device is stable with this form's termination (None: not known)."""
        return None if self.premise_poles is None else self.premise_poles == 0

    @property
    def implied_rhp_roots(self) -> int | None:
        """N + P: the closed circuit's right-half-plane natural frequencies by this form."""
        if self.encirclements is None or self.premise_poles is None:
            return None
        return self.encirclements + self.premise_poles

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "form": self.form,
            "function": self.function,
            "premise": self.premise,
            "premise_holds": self.premise_holds,
            "encirclements": self.encirclements,
            "premise_rhp_poles": self.premise_poles,
            "implied_rhp_roots": self.implied_rhp_roots,
            "notes": list(self.notes),
        }


@dataclass(frozen=True)
class DeviceCharacter:
    """What the device's own reflection says about the loads it oscillates with.

    Attributes
    ----------
    kind : str
        ``open-circuit-stable``, ``short-circuit-stable``, ``open-and-short-circuit-stable``,
        ``neither`` or ``undetermined``.
    terminations : tuple of TerminationModes
        Open, short and reference (Z0) natural frequencies.
    summary : tuple of str
        Plain sentences: the kind, the loads to fear, the measurement premise.
    negative_resistance_bands_hz : tuple of (float, float)
        Where Re Zd < 0 on the sweep, Hz.
    forms : tuple of FormCount
        The three Nyquist forms with the load (empty without one).
    agreement : tuple of str
        Whether the forms agree, and which failing premise explains a disagreement.
    """

    reference_impedance_ohm: float
    kind: str
    terminations: tuple[TerminationModes, ...]
    summary: tuple[str, ...]
    negative_resistance_bands_hz: tuple[tuple[float, float], ...]
    forms: tuple[FormCount, ...]
    agreement: tuple[str, ...]
    model_order: int
    fit_rms_error: float
    noise_estimate: float
    fit_adequate: bool
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)

    def termination(self, name: str) -> TerminationModes:
        """The modes for ``"open"``, ``"short"`` or ``"reference"``."""
        return next(t for t in self.terminations if t.termination == name)

    def form(self, name: str) -> FormCount:
        """The count for ``"reflection"``, ``"impedance"`` or ``"admittance"``."""
        return next(f for f in self.forms if f.form == name)

    def to_dict(self) -> dict[str, Any]:
        """The ``oneport.character/1`` JSON object."""
        return {
            "schema": CHARACTER_SCHEMA,
            "kind": self.kind,
            "summary": list(self.summary),
            "terminations": {t.termination: t.to_dict() for t in self.terminations},
            "negative_resistance_bands": [
                {"start_hz": low, "stop_hz": high}
                for low, high in self.negative_resistance_bands_hz
            ],
            "forms": [f.to_dict() for f in self.forms],
            "agreement": list(self.agreement),
            "fit": {
                "reference_impedance_ohm": self.reference_impedance_ohm,
                "fitted": "gamma_device",
                "model_order": self.model_order,
                "rms_error": self.fit_rms_error,
                "noise_estimate": self.noise_estimate,
                "adequate": self.fit_adequate,
            },
            "warnings": [w.to_dict() for w in self.warnings],
            "cautions": list(self.cautions),
            "frequency_range_hz": [float(self.frequency_hz[0]), float(self.frequency_hz[-1])],
            "reference_impedance_ohm": self.reference_impedance_ohm,
        }


def characterise_device(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    reference_impedance_ohm: float,
    load_gamma: np.ndarray | None = None,
    *,
    rules: TrustRules | None = None,
) -> DeviceCharacter:
    """Stability of the device open-circuited, short-circuited and in Z0; the three Nyquist forms.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        Non-negative, strictly increasing, Hz.
    gamma_device : ndarray of complex, shape (n,)
        The device's reflection, referred to ``reference_impedance_ohm``.
    reference_impedance_ohm : float
        Z0, Ω (the device's measurement impedance).
    load_gamma : ndarray of complex, shape (n,), optional
        A load's reflection on the same grid and Z0: adds the three-form Nyquist test.
    rules : TrustRules, optional
        Tolerances of the trust rules.

    Returns
    -------
    DeviceCharacter

    Examples
    --------
    A −40 Ω ∥ 1 pF device (N-type) is stable short-circuited only:

    >>> f = np.linspace(10e6, 10e9, 301)
    >>> y = -1 / 40 + 2j * np.pi * f * 1e-12
    >>> gamma = (1 - 50 * y) / (1 + 50 * y)
    >>> character = characterise_device(f, gamma, 50.0)
    >>> character.kind, character.termination("reference").stable
    ('short-circuit-stable', False)
    """
    frequency_hz, gamma_device, load_gamma = _validated(
        frequency_hz, gamma_device, reference_impedance_ohm, load_gamma
    )
    fits = fit_with_variants(frequency_hz, gamma_device)
    terminations = _terminations(fits, rules)
    kind = _kind(terminations)
    z0 = float(reference_impedance_ohm)
    forms: tuple[FormCount, ...] = ()
    agreement: tuple[str, ...] = ()
    if load_gamma is not None:
        forms = _forms(frequency_hz, gamma_device, load_gamma, z0, terminations)
        agreement = tuple(_agreement(forms))
    return DeviceCharacter(
        reference_impedance_ohm=z0,
        kind=kind,
        terminations=terminations,
        summary=tuple(_summary(kind, terminations, z0)),
        negative_resistance_bands_hz=_negative_bands(frequency_hz, gamma_device),
        forms=forms,
        agreement=agreement,
        model_order=fits.primary.order,
        fit_rms_error=fits.rms_error,
        noise_estimate=fits.noise_estimate,
        fit_adequate=fits.adequate,
        warnings=tuple(_findings(fits)),
        cautions=CAUTIONS,
        frequency_hz=frequency_hz,
        gamma_device=gamma_device,
    )


def _validated(
    frequency_hz: Any, gamma_device: Any, reference_impedance_ohm: float, load_gamma: Any
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    if not (np.isfinite(reference_impedance_ohm) and reference_impedance_ohm > 0):
        raise InputError(
            f"reference_impedance_ohm {reference_impedance_ohm!r}: a positive number of ohms"
            " is needed"
        )
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    gamma_device = np.asarray(gamma_device, dtype=complex)
    if load_gamma is not None:
        load_gamma = np.asarray(load_gamma, dtype=complex)
        if load_gamma.shape != frequency_hz.shape:
            raise InputError(
                f"load_gamma has shape {load_gamma.shape}; it must match frequency_hz"
                f" {frequency_hz.shape} (put the load on the device's grid first)"
            )
    return frequency_hz, gamma_device, load_gamma


def _terminations(fits: FitSet, rules: TrustRules | None) -> tuple[TerminationModes, ...]:
    finders = {
        "open": (lambda m: m.zeros(1.0), lambda m: m.pole_frequencies()),
        "short": (lambda m: m.zeros(-1.0), lambda m: m.pole_frequencies()),
        "reference": (lambda m: m.pole_frequencies(), lambda m: m.zeros()),
    }
    modes = []
    for name, (roots_of, opposite_of) in finders.items():
        found = assess_roots(fits, roots_of, opposite_of, rules)
        modes.append(TerminationModes(name, _TERMINATIONS[name], found))
    return tuple(modes)


def _kind(terminations: tuple[TerminationModes, ...]) -> str:
    open_stable = terminations[0].stable
    short_stable = terminations[1].stable
    if open_stable is None or short_stable is None:
        return "undetermined"
    return {
        (True, True): "open-and-short-circuit-stable",
        (True, False): "open-circuit-stable",
        (False, True): "short-circuit-stable",
        (False, False): "neither",
    }[(open_stable, short_stable)]


def _summary(kind: str, terminations: tuple[TerminationModes, ...], z0: float) -> list[str]:
    sentences = [_KIND_ADVICE[kind]]
    reference = terminations[2]
    if reference.stable is False:
        sentences.append(
            f"The fitted device is unstable terminated in {z0:g} ohm (poles of Γd in the right"
            " half plane). A device cannot be measured without oscillating in the"
            " impedance that makes it unstable: if these data are a measurement in"
            f" {z0:g} ohm they are suspect; if they were renormalised to {z0:g} ohm, analyse"
            " them in the impedance they were measured in. The reflection-form Nyquist count's"
            " premise fails here."
        )
    elif reference.stable is None:
        sentences.append(
            f"Whether the device is stable in {z0:g} ohm cannot be confirmed from the fit."
        )
    else:
        sentences.append(
            f"The device is stable terminated in {z0:g} ohm, as the premise of the"
            " reflection-form count requires."
        )
    return sentences


def _negative_bands(
    frequency_hz: np.ndarray, gamma_device: np.ndarray
) -> tuple[tuple[float, float], ...]:
    """Stretches where Re Zd < 0, i.e. |Γd| ≥ 1 (the same in every real reference).

    :func:`oneport.analysis.nyquist.find_bands` on Γd: edges interpolated, and stretches split only
    by measurement scatter around |Γd| = 1 merged.
    """
    bands = find_bands(frequency_hz, gamma_device, estimate_noise(gamma_device))
    return tuple((band.start_hz, band.stop_hz) for band in bands)


def _findings(fits: FitSet) -> list[Finding]:
    if fits.adequate:
        return []
    return [
        Finding(
            "poor-fit",
            f"The rational fit of Γd misses the data by {format_plain(fits.rms_error)} RMS,"
            f" above their noise ({format_plain(fits.noise_estimate)}): the natural frequencies"
            " are"
            " uncertain.",
            {"fit_rms_error": fits.rms_error, "noise_estimate": fits.noise_estimate},
        )
    ]


# --------------------------------------------------------------------------------------------
# The three Nyquist forms


def _forms(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    gamma_load: np.ndarray,
    z0: float,
    terminations: tuple[TerminationModes, ...],
) -> tuple[FormCount, ...]:
    from ..reading.alignment import align
    from .judgement import analyse_pair

    device = OnePort(frequency_hz, gamma_device, z0, source="device (arrays)")
    load = OnePort(frequency_hz, gamma_load, z0, source="load (arrays)")
    reflection = analyse_pair(align(device, load), device, load)
    with np.errstate(divide="ignore", invalid="ignore"):
        z_device = z0 * (1 + gamma_device) / (1 - gamma_device)
        z_load = z0 * (1 + gamma_load) / (1 - gamma_load)
        y_device = (1 - gamma_device) / (z0 * (1 + gamma_device))
        y_load = (1 - gamma_load) / (z0 * (1 + gamma_load))
    impedance, impedance_notes = winding_count(frequency_hz, z_device + z_load)
    admittance, admittance_notes = winding_count(frequency_hz, y_device + y_load)
    open_, short, reference = terminations
    return (
        FormCount(
            "reflection",
            "1 - Γd·ΓL",
            f"the device is stable terminated in {z0:g} ohm (no poles of Γd in the"
            " right half plane)",
            reflection.encirclements,
            reference.rhp_count,
            tuple(reflection.reasons),
        ),
        FormCount(
            "impedance",
            "Zd + ZL",
            "the device is stable open-circuited (open-circuit-stable: no poles of Zd in the"
            " right half plane)",
            impedance,
            open_.rhp_count,
            tuple(impedance_notes),
        ),
        FormCount(
            "admittance",
            "Yd + YL",
            "the device is stable short-circuited (short-circuit-stable: no poles of Yd in the"
            " right half plane)",
            admittance,
            short.rhp_count,
            tuple(admittance_notes),
        ),
    )


def winding_count(frequency_hz: np.ndarray, values: np.ndarray) -> tuple[int | None, list[str]]:
    """N_cw of a real network's function around the origin over the whole jω axis.

    The band is closed with the power law K·(jω)^k (K real, k an integer) the data show at
    each edge; a pole or zero at s = 0 is passed by a small detour into the right half plane
    (so it counts as a left-half-plane root) and the large semicircle carries the order k at
    infinity: N_cw = −[2·(φ(∞) − φ(0)) + k₀π − k∞π] / 2π.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
    values : ndarray of complex, shape (n,)
        E.g. Zd + ZL or Yd + YL; non-finite samples are left out.

    Returns
    -------
    (int or None, list of str)
        The count (None when an edge shows no clean power law or the grid is too coarse) and
        notes on how each edge was closed.

    Examples
    --------
    −10 Ω + s·10 nH + 1/(s·2.533 pF) has two right-half-plane zeros (METHODS §7 series loop):

    >>> f = np.linspace(10e6, 5e9, 2001)
    >>> s = 2j * np.pi * f
    >>> winding_count(f, -10 + s * 10e-9 + 1 / (s * 2.533e-12))[0]
    2
    """
    finite = np.isfinite(values)
    frequency_hz, values = frequency_hz[finite], values[finite]
    notes = []
    if not finite.all():
        left = int((~finite).sum())
        notes.append(
            f"{format_count(left, 'sample')} with an infinite value"
            f" {'was' if left == 1 else 'were'} left out."
        )
    if values.size < 3:
        notes.append("Fewer than three usable samples: nothing to count.")
        return None, notes
    phase = np.unwrap(np.angle(values))
    step = float(np.max(np.abs(np.diff(phase)))) if phase.size > 1 else 0.0
    if step > UNSAFE_PHASE_STEP_RAD:
        notes.append(
            f"The phase moves by {np.degrees(step):.0f}° between neighbouring samples:"
            " too coarse a grid to count."
        )
        return None, notes
    edges = [_edge_law(frequency_hz, values, phase, side) for side in ("low", "high")]
    for exponent, _, note in edges:
        notes.append(note)
        if exponent is None:
            return None, notes
    (k_low, phase_low, _), (k_high, phase_high, _) = edges
    assert k_low is not None and k_high is not None
    total = 2.0 * (phase_high - phase_low) + k_low * np.pi - k_high * np.pi
    return int(np.rint(-total / (2.0 * np.pi))), notes


def _edge_law(
    frequency_hz: np.ndarray, values: np.ndarray, phase: np.ndarray, side: str
) -> tuple[int | None, float, str]:
    """Exponent k and the limiting phase (on the unwrapped branch) beyond one edge."""
    last = frequency_hz.size - 1
    edge = 0 if side == "low" else last
    where = "towards DC" if side == "low" else "towards infinite frequency"
    if side == "low" and frequency_hz[0] == 0.0:
        exponent = 0.0
    else:
        exponent = _edge_exponent(frequency_hz, values, side)
    if not math.isfinite(exponent):
        return (
            None,
            0.0,
            f"{where[0].upper() + where[1:]} the data reach zero or infinity (at"
            f" {format_frequency(frequency_hz[edge])}): the contour cannot be closed; extend"
            " the sweep.",
        )
    k = int(np.rint(exponent))
    offset = k * np.pi / 2.0
    limit = offset + np.pi * np.rint((phase[edge] - offset) / np.pi)
    if abs(exponent - k) > EXPONENT_TOLERANCE or abs(phase[edge] - limit) > PHASE_TOLERANCE_RAD:
        return (
            None,
            0.0,
            f"{where[0].upper() + where[1:]} the data follow no clean power law (they go as"
            f" f^{exponent:.2f}, phase {np.degrees(phase[edge]):.0f}° at"
            f" {format_frequency(frequency_hz[edge])}): the contour cannot be closed; extend"
            " the sweep.",
        )
    law = {0: "a constant", -1: "1/s (a series capacitor or a pole at 0)", 1: "s"}
    behaviour = law.get(k, f"s^{k}")
    return k, float(limit), f"Closed {where} as {behaviour}."


def _edge_exponent(frequency_hz: np.ndarray, values: np.ndarray, side: str) -> float:
    """Local slope of log|G| against log f at an edge: over the samples within a factor
    ``EDGE_WINDOW_RATIO`` of the edge frequency, at least three."""
    last = frequency_hz.size - 1
    if side == "low":
        inner = int(np.searchsorted(frequency_hz, EDGE_WINDOW_RATIO * frequency_hz[0]))
        chosen = slice(0, min(max(inner, 2), last) + 1)
    else:
        inner = int(np.searchsorted(frequency_hz, frequency_hz[-1] / EDGE_WINDOW_RATIO))
        chosen = slice(max(min(inner, last - 2), 0), last + 1)
    magnitude = np.abs(values[chosen])
    if not (np.all(np.isfinite(magnitude)) and np.all(magnitude > 0)):
        return math.nan  # zero or unbounded at the edge: no power law to read
    x = np.log(frequency_hz[chosen])
    y = np.log(magnitude)
    return float(np.polyfit(x, y, 1)[0])


_FAILURES = {
    "reflection": "the device is unstable terminated in the reference impedance",
    "impedance": "the device is unstable open-circuited",
    "admittance": "the device is unstable short-circuited",
}


def _roots(count: int | None) -> str:
    if count is None:
        return "an unknown number of right-half-plane natural frequencies"
    return format_count(
        count, "right-half-plane natural frequency", "right-half-plane natural frequencies"
    )


def _agreement(forms: tuple[FormCount, ...]) -> list[str]:
    counted = [f for f in forms if f.encirclements is not None]
    if len(counted) < 2:
        return ["Fewer than two forms could be counted, so they cannot be compared."]
    raw = {f.encirclements for f in counted}
    if len(raw) == 1:
        return [f"The counted forms agree: N = {counted[0].encirclements}."]
    sentences = []
    for form in counted:
        if form.premise_poles:
            sentences.append(
                f"The {form.form} form ({form.function}) counts N = {form.encirclements}, but"
                f" its premise fails: {_FAILURES[form.form]} ({_roots(form.premise_poles)}"
                " there), so the roots number"
                f" N + P = {form.implied_rhp_roots}."
            )
        elif form.premise_poles is None:
            sentences.append(
                f"The {form.form} form counts N = {form.encirclements}; whether its premise"
                " holds cannot be confirmed from the fit."
            )
    implied = {f.implied_rhp_roots for f in counted}
    if None not in implied and len(implied) == 1:
        roots = implied.pop() or 0
        sentences.append(
            "Corrected for the premises that fail, every form gives"
            f" {format_count(roots, 'natural frequency', 'natural frequencies')} in the"
            " right half plane."
        )
    else:
        sentences.append(
            "The forms still disagree after accounting for the premises: a mode may lie beyond"
            " the fit's reach, or a Z or Y form was closed wrongly at a pole at 0 or infinity"
            " (DC block, choke). Trust the reflection form in the measurement impedance."
        )
    return sentences
