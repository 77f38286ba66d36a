"""Pole–zero identification: the natural frequencies a rational fit of F = 1 − Γd·ΓL implies.

A rational model of F over the measured band gives the unstable modes directly, as its zeros in
the right half plane (RHP), with growth rate and frequency; it cross-checks the Nyquist count
(METHODS §5). The fit is :mod:`oneport.analysis.rational`'s vector fitting, which never flips poles
into the left half plane (unlike scikit-rf's), so the same engine also serves for functions whose
poles are wanted (Γd of a device that may be unstable in Z0, see :mod:`oneport.analysis.character`).

Trust rules: a root is trusted only if it persists when the model order changes and when the band
is trimmed, is not nearly cancelled by a pole, lies within reach of the fitted band, and is
farther from the jω axis than the data's noise can move it. This room computes; it never reads
files, prints, plots or exits.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..display import Displayed
from ..findings import Finding
from ..reading.records import InputRecord
from ..units import format_count, format_frequency, format_plain, format_rate
from .rational import DEFAULT_MAX_ORDER, FitSet, RationalModel, fit_with_variants, validated_samples

POLES_SCHEMA = "oneport.poles/2"
#: Two roots of different fits match when closer than this times the root's scale,
#: max(|s|, ω_low), ω_low = 2π times the band's lowest frequency (at least 1e-4 of its highest).
DEFAULT_MATCH_TOLERANCE = 0.03
#: A root closer than this times its scale to a pole (or zero) is nearly cancelled. The scale is
#: the root's own: a real root at 0.3e9 /s is not "near" a pole 3e8 /s away because the band
#: happens to reach 100 GHz.
DEFAULT_CANCELLATION_TOLERANCE = 0.01
#: Roots whose frequency lies beyond the band by more than this fraction of its width, or whose
#: |σ|/2π exceeds the width, are extrapolations.
DEFAULT_EXTRAPOLATION_MARGIN = 0.25


@dataclass(frozen=True)
class NaturalFrequency:
    """One root s = σ + jω of a fitted function (a conjugate pair reported once, ω ≥ 0).

    Attributes
    ----------
    frequency_hz : float
        ω/2π ≥ 0, Hz; 0 for a real root (latch-up, no oscillation frequency).
    sigma_per_s : float
        Growth (> 0) or decay (< 0) rate, 1/s.
    real : bool
        True for a real root (counted once); otherwise a conjugate pair (counted twice).
    rhp : bool
        σ > 0.
    trusted : bool
        Every trust rule passed (the flags below).
    persists_across_order, persists_across_band, near_cancellation, extrapolated,
    within_noise_of_axis : bool
        The individual trust rules.
    reasons : tuple of str
        Plain sentences saying which rules failed.
    """

    frequency_hz: float
    sigma_per_s: float
    real: bool
    rhp: bool
    trusted: bool
    persists_across_order: bool
    persists_across_band: bool
    near_cancellation: bool
    extrapolated: bool
    within_noise_of_axis: bool
    reasons: tuple[str, ...]

    @property
    def multiplicity(self) -> int:
        """How many roots this entry stands for: 1 (real) or 2 (a conjugate pair)."""
        return 1 if self.real else 2

    @property
    def s_per_s(self) -> complex:
        """The root with ω ≥ 0, rad/s."""
        return complex(self.sigma_per_s, 2.0 * np.pi * self.frequency_hz)

    def to_dict(self) -> dict[str, Any]:
        """JSON form (natural frequencies are the same in every reference impedance)."""
        return {
            "frequency_hz": self.frequency_hz,
            "sigma_per_s": self.sigma_per_s,
            "rhp": self.rhp,
            "trusted": self.trusted,
            "latch_up": self.real and self.rhp,
            "real": self.real,
            "multiplicity": self.multiplicity,
            "checks": {
                "persists_across_order": self.persists_across_order,
                "persists_across_band": self.persists_across_band,
                "near_cancellation": self.near_cancellation,
                "extrapolated": self.extrapolated,
                "within_noise_of_axis": self.within_noise_of_axis,
            },
            "reasons": list(self.reasons),
        }


@dataclass(frozen=True, repr=False)
class PoleZeroResult(Displayed):
    """What a rational fit of F = 1 − Γd·ΓL says about the closed circuit's natural frequencies.

    Attributes
    ----------
    verdict : str
        ``"stable"`` (no trusted RHP mode and nothing unconfirmed in reach), ``"unstable"``
        (a trusted RHP mode) or ``"inconclusive"`` (only unconfirmed RHP modes, or a poor fit).
    natural_frequencies : tuple of NaturalFrequency
        Zeros of the fit, pairs once, sorted by frequency.
    characteristic_poles : tuple of NaturalFrequency
        Poles of the fit: the natural frequencies of each side terminated in Z0.
    fit_rms_error : float
        RMS of |F − model| over the data (F is dimensionless).
    nyquist_encirclements : int or None
        The Nyquist count it was compared with (:func:`with_count_check`), if any.
    fit_verdict : str or None
        The fit's own verdict when :func:`with_count_check` was given the check: ``verdict`` is
        then the one judgement's (the count's), and the reasons say whether the fit agrees, and
        if not which to believe and why.
    device_character : DeviceCharacter or None
        The device's character, when asked for.
    frequency_hz, characteristic : ndarray
        The fitted data; ``model`` the fitted rational function.
    """

    verdict: str
    reasons: tuple[str, ...]
    natural_frequencies: tuple[NaturalFrequency, ...]
    characteristic_poles: tuple[NaturalFrequency, ...]
    model_order: int
    fit_rms_error: float
    data_rms: float
    noise_estimate: float
    fit_adequate: bool
    orders_tried: tuple[tuple[int, float], ...]
    variants: tuple[tuple[str, int, float], ...]
    premise: str
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    inputs: tuple[InputRecord, ...]
    reference_impedance_ohm: float | None
    frequency_hz: np.ndarray = field(repr=False)
    characteristic: np.ndarray = field(repr=False)
    model: RationalModel = field(repr=False)
    nyquist_encirclements: int | None = None
    fit_verdict: str | None = None
    device_character: Any = None

    @property
    def trusted_rhp_count(self) -> int:
        """Trusted RHP zeros, counted with multiplicity (a pair counts 2)."""
        return sum(m.multiplicity for m in self.natural_frequencies if m.rhp and m.trusted)

    @property
    def frequency_range_hz(self) -> tuple[float, float]:
        """The fitted band, Hz."""
        return float(self.frequency_hz[0]), float(self.frequency_hz[-1])

    def plot(self, ax: Any = None) -> Any:
        """The natural frequencies and the fit's poles, frequency against growth rate.

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ..rendering.poles_plot import plot_poles

        return plot_poles(self, ax)

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.poles/1`` JSON object (docs/json-poles.md)."""
        data: dict[str, Any] = {
            "schema": POLES_SCHEMA,
            "verdict": self.verdict,
            "reasons": list(self.reasons),
            "premise": self.premise,
            "small_signal": True,
            "natural_frequencies": [m.to_dict() for m in self.natural_frequencies],
            "trusted_rhp_count": self.trusted_rhp_count,
            "oscillation_frequencies_hz": [
                m.frequency_hz
                for m in self.natural_frequencies
                if m.rhp and m.trusted and not m.real
            ],
            "characteristic_poles": [p.to_dict() for p in self.characteristic_poles],
            "fit_rms_error": self.fit_rms_error,
            "fit": {
                "reference_impedance_ohm": self.reference_impedance_ohm,
                "model_order": self.model_order,
                "rms_error": self.fit_rms_error,
                "relative_rms_error": self.fit_rms_error / self.data_rms if self.data_rms else 0.0,
                "noise_estimate": self.noise_estimate,
                "adequate": self.fit_adequate,
                "orders_tried": [{"order": o, "rms_error": e} for o, e in self.orders_tried],
                "variants": [
                    {"variant": name, "order": order, "rms_error": error}
                    for name, order, error in self.variants
                ],
            },
            "nyquist_encirclements": self.nyquist_encirclements,
            "fit_verdict": self.verdict if self.fit_verdict is None else self.fit_verdict,
            "warnings": [w.to_dict() for w in self.warnings],
            "cautions": list(self.cautions),
            "inputs": _inputs_json(self.inputs, self.frequency_hz),
            "frequency_range_hz": list(self.frequency_range_hz),
            "reference_impedance_ohm": self.reference_impedance_ohm,
        }
        if include_arrays:
            data["arrays"] = {
                "reference_impedance_ohm": self.reference_impedance_ohm,
                "frequency_hz": self.frequency_hz.tolist(),
                "characteristic": _complex_list(self.characteristic),
                "model": _complex_list(self.model.evaluate(2j * np.pi * self.frequency_hz)),
            }
        if self.device_character is not None:
            data["device_character"] = self.device_character.to_dict()
        return data


# --------------------------------------------------------------------------------------------
# Trust rules


@dataclass(frozen=True)
class TrustRules:
    """Tolerances of the trust rules (see the module constants for their meaning)."""

    match_tolerance: float = DEFAULT_MATCH_TOLERANCE
    cancellation_tolerance: float = DEFAULT_CANCELLATION_TOLERANCE
    extrapolation_margin: float = DEFAULT_EXTRAPOLATION_MARGIN


RootFinder = Callable[[RationalModel], np.ndarray]


def assess_roots(
    fits: FitSet,
    roots_of: RootFinder,
    opposite_of: RootFinder,
    rules: TrustRules | None = None,
    slope_at: Callable[[np.ndarray], np.ndarray] | None = None,
) -> tuple[NaturalFrequency, ...]:
    """Apply the trust rules to the roots ``roots_of`` finds in each fit.

    Parameters
    ----------
    fits : FitSet
        The primary fit and its variants.
    roots_of, opposite_of : callable
        Model → roots (rad/s) to assess, and the roots that would cancel them (the model's poles
        when zeros are assessed, and the other way round).
    rules : TrustRules, optional
    slope_at : callable, optional
        |d(function)/ds| at given roots, for the noise test; omitted for poles.
    """
    rules = rules or TrustRules()
    low, high = fits.frequency_range_hz
    scale = 2.0 * np.pi * max(low, 1e-4 * high)
    primary = _upper_half(roots_of(fits.primary), high)
    opposite = opposite_of(fits.primary)
    variant_roots = [(variant.kind, roots_of(variant.model)) for variant in fits.variants]
    slopes = slope_at(primary) if slope_at is not None and primary.size else None
    modes = []
    for index, root in enumerate(primary):
        size = max(abs(root), scale)
        near = opposite.size > 0 and np.min(np.abs(opposite - root)) < (
            rules.cancellation_tolerance * size
        )
        # Without a trimmed-band refit (too few points) the band rule cannot pass.
        order_ok, band_ok = True, any(kind == "band" for kind, _ in variant_roots)
        for kind, roots in variant_roots:
            found = _matches(root, roots, rules.match_tolerance * size)
            if kind == "order":
                order_ok &= found
            else:
                band_ok &= found
        spread = fits.noise_estimate / abs(slopes[index]) if slopes is not None else 0.0
        modes.append(
            _mode(
                root, order_ok, band_ok, bool(near), _extrapolated(root, low, high, rules), spread
            )
        )
    return tuple(sorted(modes, key=lambda m: (m.frequency_hz, m.sigma_per_s)))


def _upper_half(roots: np.ndarray, high_hz: float) -> np.ndarray:
    """Each conjugate pair once (ω ≥ 0); real roots as they are (imaginary part dropped)."""
    tolerance = 1e-7 * 2.0 * np.pi * high_hz
    real = np.abs(roots.imag) <= tolerance
    kept = np.concatenate([roots[real].real.astype(complex), roots[roots.imag > tolerance]])
    return kept


def _matches(root: complex, roots: np.ndarray, tolerance: float) -> bool:
    """A root of another fit within ``tolerance``, on the same side of the jω axis."""
    candidates = np.concatenate([roots, np.conj(roots)])
    if candidates.size == 0:
        return False
    nearest = candidates[np.argmin(np.abs(candidates - root))]
    same_side = (nearest.real > 0) == (root.real > 0)
    return bool(abs(nearest - root) <= tolerance and same_side)


def _extrapolated(root: complex, low_hz: float, high_hz: float, rules: TrustRules) -> bool:
    """True when the root lies beyond the band's reach: an extrapolation."""
    width = high_hz - low_hz
    frequency = abs(root.imag) / (2.0 * np.pi)
    margin = rules.extrapolation_margin * width
    outside = frequency < low_hz - margin or frequency > high_hz + margin
    return bool(outside or abs(root.real) / (2.0 * np.pi) > width)


def _mode(
    root: complex, order_ok: bool, band_ok: bool, near: bool, extrapolated: bool, spread: float
) -> NaturalFrequency:
    real = root.imag == 0.0
    noisy = abs(root.real) < spread
    reasons = []
    if not order_ok:
        reasons.append("It does not persist when the model order changes.")
    if not band_ok:
        reasons.append("A fit on the band trimmed at both ends does not confirm it.")
    if near:
        reasons.append(
            "A pole or zero of the fit nearly cancels it (near pole-zero cancellation): doubtful."
        )
    if extrapolated:
        reasons.append(
            "It lies far outside the fitted band: an extrapolation the data cannot confirm."
        )
    if noisy:
        reasons.append(
            f"It is closer to the jω axis (|σ| = {format_rate(abs(root.real))}) than the data's"
            f" noise can move it (about {format_rate(spread)}): its side is uncertain."
        )
    trusted = order_ok and band_ok and not near and not extrapolated and not noisy
    return NaturalFrequency(
        frequency_hz=float(abs(root.imag) / (2.0 * np.pi)),
        sigma_per_s=float(root.real),
        real=bool(real),
        rhp=bool(root.real > 0),
        trusted=bool(trusted),
        persists_across_order=bool(order_ok),
        persists_across_band=bool(band_ok),
        near_cancellation=bool(near),
        extrapolated=bool(extrapolated),
        within_noise_of_axis=bool(noisy),
        reasons=tuple(reasons),
    )


def in_reach(modes: Sequence[NaturalFrequency]) -> list[NaturalFrequency]:
    """The modes that are not extrapolations."""
    return [m for m in modes if not m.extrapolated]


# --------------------------------------------------------------------------------------------
# The identification


def identify_natural_frequencies(
    frequency_hz: np.ndarray,
    characteristic: np.ndarray,
    *,
    reference_impedance_ohm: float | None = None,
    max_order: int = DEFAULT_MAX_ORDER,
    noise_estimate: float | None = None,
    rules: TrustRules | None = None,
    inputs: tuple[InputRecord, ...] = (),
) -> PoleZeroResult:
    """Fit F = 1 − Γd·ΓL and report the natural frequencies its zeros imply.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        Non-negative, strictly increasing, Hz.
    characteristic : ndarray of complex, shape (n,)
        F on that grid.
    reference_impedance_ohm : float, optional
        The Z0 F is referred to, Ω, for the record (F depends on it; its zeros do not).
    max_order : int
        Highest model order tried.
    noise_estimate : float, optional
        Standard deviation of the noise on F; default: estimated from the data's scatter.
    rules : TrustRules, optional
        Tolerances of the trust rules.
    inputs : tuple of InputRecord
        What was read, for the record.

    Returns
    -------
    PoleZeroResult

    Examples
    --------
    The series loop of METHODS §7 (Zd = −60 Ω into 50 Ω + 10 nH + 2.533 pF, Z0 = 50 Ω):

    >>> f = np.linspace(10e6, 3e9, 401)
    >>> s = 2j * np.pi * f
    >>> z_load = 50 + s * 10e-9 + 1 / (s * 2.533e-12)
    >>> F = 1 - 11.0 * (z_load - 50) / (z_load + 50)
    >>> result = identify_natural_frequencies(f, F, reference_impedance_ohm=50.0)
    >>> mode = result.natural_frequencies[0]
    >>> result.verdict, round(mode.frequency_hz / 1e6, 1), f"{mode.sigma_per_s:.3g}"
    ('unstable', 996.8, '5e+08')
    """
    frequency_hz, characteristic = validated_samples(frequency_hz, characteristic)
    fits = fit_with_variants(
        frequency_hz, characteristic, max_order=max_order, noise_estimate=noise_estimate
    )
    zeros = assess_roots(
        fits,
        lambda m: m.zeros(),
        lambda m: m.pole_frequencies(),
        rules,
        lambda roots: np.abs(fits.primary.derivative(roots)),
    )
    poles = assess_roots(
        fits, lambda m: m.pole_frequencies(), lambda m: m.zeros(), rules, slope_at=None
    )
    verdict, reasons = _decide(zeros, fits)
    band = f"{format_frequency(frequency_hz[0])} to {format_frequency(frequency_hz[-1])}"
    premise = (
        "The natural frequencies are the zeros of a rational model of F fitted over"
        f" {band}; unlike the Nyquist count they do not assume the device stable in Z0, but"
        " modes far outside the band are beyond what the data can show, and parasitics above"
        " the sweep can add modes. It is a small-signal result."
    )
    return PoleZeroResult(
        verdict=verdict,
        reasons=tuple(reasons),
        natural_frequencies=zeros,
        characteristic_poles=poles,
        model_order=fits.primary.order,
        fit_rms_error=fits.rms_error,
        data_rms=fits.data_rms,
        noise_estimate=fits.noise_estimate,
        fit_adequate=fits.adequate,
        orders_tried=fits.orders_tried,
        variants=tuple((v.name, v.model.order, v.rms_error) for v in fits.variants),
        premise=premise,
        warnings=tuple(_findings(zeros, poles, fits)),
        cautions=CAUTIONS,
        inputs=inputs,
        reference_impedance_ohm=reference_impedance_ohm,
        frequency_hz=frequency_hz,
        characteristic=characteristic,
        model=fits.primary,
    )


def _decide(modes: tuple[NaturalFrequency, ...], fits: FitSet) -> tuple[str, list[str]]:
    rhp = [m for m in in_reach(modes) if m.rhp]
    trusted = [m for m in rhp if m.trusted]
    if not fits.adequate:
        return "inconclusive", [
            f"The rational fit misses the data by {format_plain(fits.rms_error)} RMS, well above"
            f" their noise ({format_plain(fits.noise_estimate)}): the model is too poor to"
            " locate the natural"
            " frequencies. A finer or cleaner sweep, or a narrower band, may help."
        ]
    if trusted:
        listed = "; ".join(_describe(m) for m in trusted)
        count = sum(m.multiplicity for m in trusted)
        return "unstable", [
            f"{format_count(count, 'natural frequency', 'natural frequencies')} in the right half"
            " plane, confirmed across model"
            f" order and band: {listed}."
        ]
    if rhp:
        listed = "; ".join(_describe(m) for m in rhp)
        return "inconclusive", [
            f"The fit has right-half-plane zeros it cannot confirm: {listed}. See each"
            " mode's reasons; a finer, cleaner or wider sweep would decide."
        ]
    return "stable", [
        "No natural frequency of the fitted model lies in the right half plane within reach of"
        " the band: small-signal stable into this load."
    ]


def _describe(mode: NaturalFrequency) -> str:
    if mode.real:
        return f"a real root at σ = {format_rate(mode.sigma_per_s)} (latch-up)"
    return f"{format_frequency(mode.frequency_hz)} growing at σ = {format_rate(mode.sigma_per_s)}"


def _findings(
    zeros: tuple[NaturalFrequency, ...], poles: tuple[NaturalFrequency, ...], fits: FitSet
) -> list[Finding]:
    findings = []
    # Far zeros that come and go with the model order are its stand-ins for roots at infinity;
    # only those every fit agrees on deserve a warning.
    far = [m for m in zeros if m.rhp and m.extrapolated and m.persists_across_order]
    if far:
        findings.append(
            Finding(
                "extrapolated-rhp-zero",
                f"{format_count(len(far), 'right-half-plane zero')} of the model"
                f" {'lies' if len(far) == 1 else 'lie'} far outside the fitted band; the data"
                " cannot confirm or exclude them, and they do not enter the verdict.",
                {"natural_frequencies": [m.to_dict() for m in far]},
            )
        )
    unstable_poles = [p for p in in_reach(poles) if p.rhp and p.trusted]
    if unstable_poles:
        findings.append(
            Finding(
                "rhp-pole-of-characteristic",
                "The fitted F has poles in the right half plane: a side is unstable terminated in"
                " the reference impedance, so the Nyquist count's premise fails (N = zeros -"
                " poles in the right half plane). The zeros found here do not rely on it.",
                {"poles": [p.to_dict() for p in unstable_poles]},
            )
        )
    if not fits.adequate:
        findings.append(
            Finding(
                "poor-fit",
                f"RMS fit error {format_plain(fits.rms_error)} against estimated noise"
                f" {format_plain(fits.noise_estimate)}.",
                {"fit_rms_error": fits.rms_error, "noise_estimate": fits.noise_estimate},
            )
        )
    return findings


# --------------------------------------------------------------------------------------------
# Cross-check with the Nyquist count


def compare_with_count(pole_result: PoleZeroResult, encirclements: int | None) -> list[Finding]:
    """Warnings when the Nyquist count and the trusted RHP zeros of the fit disagree.

    Parameters
    ----------
    pole_result : PoleZeroResult
    encirclements : int or None
        N_cw from ``oneport.check(...).encirclements``; None (inconclusive count) compares
        nothing.

    Returns
    -------
    list of Finding
        Empty when they agree; otherwise one ``pole-count-disagrees`` warning whose
        ``likely_reasons`` name what probably went wrong (unresolved resonance, band edge,
        noise, an unstable side in Z0).
    """
    if encirclements is None:
        return []
    trusted = pole_result.trusted_rhp_count
    if trusted == encirclements:
        return []
    reasons = _likely_reasons(pole_result, encirclements)
    message = (
        f"The Nyquist count (N = {encirclements}) and the fit's trusted right-half-plane zeros"
        f" ({trusted}) disagree. Likely: " + " ".join(reasons)
    )
    return [
        Finding(
            "pole-count-disagrees",
            message,
            {
                "encirclements": encirclements,
                "trusted_rhp_zeros": trusted,
                "untrusted_rhp_zeros": sum(
                    m.multiplicity
                    for m in pole_result.natural_frequencies
                    if m.rhp and not m.trusted
                ),
                "likely_reasons": reasons,
            },
        )
    ]


def with_count_check(pole_result: PoleZeroResult, count: Any) -> PoleZeroResult:
    """The fit beside the count: the Nyquist count recorded, with :func:`compare_with_count`'s
    warnings.

    ``count`` is the check (:class:`~oneport.analysis.result.CheckResult`) of the same pair, or
    only its ``encirclements`` (int or None). Given the check, the result's ``verdict`` becomes
    the check's — one judgement behind every command — with the fit's own kept as
    ``fit_verdict``, and the reasons open with the count and say whether the fit agrees, and
    where it does not, which to believe and why: the count, with its stated assumptions, unless
    it is inconclusive.
    """
    check = None if count is None or isinstance(count, int | np.integer) else count
    encirclements = count if check is None else check.encirclements
    extra = tuple(compare_with_count(pole_result, encirclements))
    result = replace(
        pole_result,
        nyquist_encirclements=encirclements,
        warnings=pole_result.warnings + extra,
    )
    if check is None:
        return result
    return replace(
        result,
        verdict=check.verdict,
        fit_verdict=pole_result.verdict,
        reasons=(*_count_and_fit(pole_result, check, extra), *pole_result.reasons),
    )


def _count_and_fit(fit: PoleZeroResult, check: Any, disagreement: tuple[Finding, ...]) -> list[str]:
    """The count's answer, and the fit's against it in one plain sentence."""
    count = check.encirclements
    trusted = fit.trusted_rhp_count
    modes = [m for m in in_reach(fit.natural_frequencies) if m.rhp and m.trusted]
    listed = "; ".join(_describe(m) for m in modes)
    if count is None:
        first = (
            "The Nyquist count cannot decide on these data (see oneport check's reasons: "
            + " ".join(check.reasons[:1])
            + ")"
        )
        if modes:
            return [
                first + ".",
                f"The fit finds {trusted} trusted right-half-plane"
                f" {'natural frequency' if trusted == 1 else 'natural frequencies'}"
                f" ({listed}): treat the circuit as unstable until a wider or finer sweep lets"
                " the count decide. The fit cannot show stability beyond its band either.",
            ]
        return [
            first + ".",
            "The fit finds no trusted right-half-plane natural frequency within reach of the"
            " band, which shows nothing about what lies outside it: the verdict stays open.",
        ]
    first = f"The Nyquist count gives Z = {count} ({check.verdict})."
    if not disagreement:
        noun = "natural frequency" if trusted == 1 else "natural frequencies"
        agree = f"The fit agrees: {trusted} trusted right-half-plane {noun}" + (
            f" ({listed})." if listed else "."
        )
        return [first, agree]
    return [
        first,
        f"The fit's trusted right-half-plane zeros ({trusted}) disagree with it. Believe the"
        " count: it rests only on the premise and the closures it states, while the fit can"
        " miss or invent roots (order, band edges, noise, near cancellations); see the"
        " warning for the likely cause.",
    ]


def _likely_reasons(result: PoleZeroResult, encirclements: int) -> list[str]:
    f = result.frequency_hz
    reasons = []
    unstable_poles = sum(p.multiplicity for p in result.characteristic_poles if p.rhp and p.trusted)
    if unstable_poles and encirclements + unstable_poles == result.trusted_rhp_count:
        reasons.append(
            f"the fit shows {format_count(unstable_poles, 'right-half-plane pole')} of F (a side"
            " unstable in"
            " Z0), and the count N = zeros - poles then agrees (premise of the count fails)."
        )
    width = f[-1] - f[0]
    edge = [
        m
        for m in result.natural_frequencies
        if m.rhp and (m.frequency_hz < f[0] + 0.1 * width or m.frequency_hz > f[-1] - 0.1 * width)
    ]
    if edge:
        reasons.append(
            "a right-half-plane zero sits near a band edge, where both the fit and the contour"
            " closure are least certain (band edge); extend the sweep."
        )
    unconfirmed = [m for m in result.natural_frequencies if m.rhp and not m.trusted]
    if unconfirmed:
        reasons.append(
            f"{format_count(len(unconfirmed), 'right-half-plane candidate')} failed the trust"
            " rules (order or"
            " band sensitivity, cancellation, noise): see each mode's reasons."
        )
    finest_q = float(np.min(f[1:] / (2.0 * np.diff(f))))
    reasons.append(
        f"a resonance sharper than the grid resolves (loaded Q above about"
        f" {format_plain(finest_q, 2)}) would"
        " escape both (unresolved resonance); measure with a finer step."
    )
    if result.noise_estimate > 0.0 and float(np.min(np.abs(result.characteristic))) < (
        5.0 * result.noise_estimate
    ):
        reasons.append(
            "|F| comes within the data's noise of zero, so noise can move a root across the"
            " jω axis or flip a crossing (noise)."
        )
    return reasons


def _inputs_json(inputs: tuple[InputRecord, ...], frequency_hz: np.ndarray) -> list[dict[str, Any]]:
    if inputs:
        return [record.to_dict() for record in inputs]
    return [
        {
            "role": "arrays",
            "path": None,
            "points": int(frequency_hz.size),
            "frequency_range_hz": [float(frequency_hz[0]), float(frequency_hz[-1])],
        }
    ]


def _complex_list(values: np.ndarray) -> list[dict[str, float]]:
    return [{"re": float(v.real), "im": float(v.imag)} for v in np.asarray(values).tolist()]
