"""Reflection-amplifier screening: a negative-resistance device behind a circulator.

The gain is |Γd|² (Γd = (R + Z0)/(R − Z0) for a pure −R). Whatever faces the device — the
circulator port — must keep |Γd·ΓL| < 1 at every frequency for the small-gain bound to
guarantee no encirclement of +1 (given the device is stable in Z0), so the port's return loss
must exceed 20·log10|Γd| dB wherever |Γd| > 1. With a finite match the voltage gain lies between
|Γd|/(1 + |Γd·ΓL|) and |Γd|/(1 − |Γd·ΓL|), the power gain between their squares (METHODS §6).
With the port's own file, the Nyquist check with the actual load decides. Whether the bound
holds is :func:`oneport.analysis.small_gain.small_gain_bound`'s answer, the one rule ``check
--load-return-loss`` uses too, in the same words (``guaranteed``, ``not-guaranteed``,
``inconclusive``).

Computation only: arrays in, a frozen :class:`AmplifierResult` out. The product that reads files
is :func:`oneport.products.amplifier.amplifier`; the pictures are in
:mod:`oneport.rendering.amplifier_plot`.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..cautions import CAUTIONS
from ..display import Displayed
from ..errors import InputError
from ..findings import Finding
from ..reading.records import InputRecord
from ..units import format_frequency, to_decibels
from .result import CheckResult
from .small_gain import EdgeBound, SmallGainBound, bound_premise, bound_words, small_gain_bound

AMPLIFIER_SCHEMA = "oneport.amplifier/3"
VERDICTS = ("guaranteed", "not-guaranteed", "stable", "unstable", "inconclusive")
DEFAULT_GAIN_THRESHOLD_DB = 10.0
#: The bandwidth is where the gain stays within this many dB of its peak.
BANDWIDTH_DROP_DB = 3.0


@dataclass(frozen=True)
class GainBand:
    """A stretch where the gain is at least the threshold (edges interpolated); ``peak_gain`` is
    the largest power gain |Γd|² in it (linear)."""

    start_hz: float
    stop_hz: float
    peak_gain: float
    peak_frequency_hz: float
    starts_at_sweep_edge: bool
    stops_at_sweep_edge: bool

    def to_dict(self, z0: float) -> dict[str, Any]:
        """JSON form."""
        return {
            "start_hz": self.start_hz,
            "stop_hz": self.stop_hz,
            "peak_gain_db": _power_db(self.peak_gain),
            "peak_frequency_hz": self.peak_frequency_hz,
            "starts_at_sweep_edge": self.starts_at_sweep_edge,
            "stops_at_sweep_edge": self.stops_at_sweep_edge,
            "reference_impedance_ohm": z0,
        }


@dataclass(frozen=True, repr=False)
class AmplifierResult(Displayed):
    """Everything the screening found, frozen.

    Attributes
    ----------
    verdict : str
        With a stated port match (or none needed: no gain), the small-gain rule's
        ``guaranteed``, ``not-guaranteed`` or ``inconclusive``; with the port's file, the
        Nyquist check's ``stable``, ``unstable`` or ``inconclusive``; with neither,
        ``inconclusive``.
    basis : str
        ``small-gain``, ``nyquist`` or ``none`` (no port stated).
    gain_threshold, peak_gain : float
        Power gains |Γd|² (linear): the threshold a listed band reaches, and the peak.
    smallest_allowed_reflection : float
        The smallest of ``allowed_reflection`` (the port match stability needs most), at
        ``worst_frequency_hz``.
    port_reflection_bound : float or None
        The port's largest |ΓL|: from the stated return loss, or the worst of the port file.
    port_margin : float or None
        The factor by which the small-gain bound holds beyond scatter and error (> 1: it holds).
    gain, allowed_reflection : ndarray
        |Γd|² per frequency (linear power gain), and min(1, 1/|Γd|): the largest port |ΓL| the
        small-gain bound allows (its return loss is the gain in dB where there is gain).
    port_reflection : ndarray or None
        |ΓL| of the port per frequency (from the stated return loss or the load).
    gain_bounds : (ndarray, ndarray) or None
        Lower and upper power-gain bounds (linear); the upper is +inf where |Γd·ΓL| ≥ 1.
    gain_with_load : ndarray or None
        |Γd/(1 − Γd·ΓL)|² (linear) when the load's complex reflection is known.
    nyquist : CheckResult or None
        The check with the actual load.

    dB appear only in the JSON's ``_db`` keys and in the reports.
    """

    verdict: str
    basis: str
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    premise: str
    reference_impedance_ohm: float
    gain_threshold: float
    peak_gain: float
    peak_frequency_hz: float
    bands: tuple[GainBand, ...]
    bandwidth: GainBand
    smallest_allowed_reflection: float
    worst_frequency_hz: float
    port_source: str | None
    port_reflection_bound: float | None
    port_margin: float | None
    port_margin_frequency_hz: float | None
    edges: tuple[EdgeBound, ...]
    nyquist: CheckResult | None
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    inputs: tuple[InputRecord, ...]
    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)
    gain: np.ndarray = field(repr=False)
    allowed_reflection: np.ndarray = field(repr=False)
    port_reflection: np.ndarray | None = field(repr=False, default=None)
    gain_bounds: tuple[np.ndarray, np.ndarray] | None = field(repr=False, default=None)
    gain_with_load: np.ndarray | None = field(repr=False, default=None)
    bound: SmallGainBound | None = None

    @property
    def ripple_at_peak(self) -> tuple[float, float] | None:
        """Lower and upper power-gain bounds (linear) at the gain peak; upper +inf if unbounded."""
        if self.gain_bounds is None:
            return None
        peak = int(np.argmax(self.gain))
        return float(self.gain_bounds[0][peak]), float(self.gain_bounds[1][peak])

    @property
    def guaranteed(self) -> bool | None:
        """Whether the small-gain bound holds in band and beyond both edges (None: no port)."""
        if self.bound is None:
            return None
        return self.bound.guaranteed

    def plot(self, ax: Any = None) -> Any:
        """Gain and the return loss stability needs against frequency (with the port's).

        Returns the matplotlib figure (headless); ``ax`` draws into existing axes.
        """
        from ..rendering.amplifier_plot import plot_amplifier

        return plot_amplifier(self, ax)

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.amplifier/3`` JSON object (docs/json-amplifier.md)."""
        z0 = self.reference_impedance_ohm
        data: dict[str, Any] = {
            "schema": AMPLIFIER_SCHEMA,
            "verdict": self.verdict,
            "basis": self.basis,
            "reasons": list(self.reasons),
            "next_steps": list(self.next_steps),
            "premise": self.premise,
            "small_signal": True,
            "gain": {
                "reference_impedance_ohm": z0,
                "peak_gain_db": _power_db(self.peak_gain),
                "peak_frequency_hz": self.peak_frequency_hz,
                "threshold_db": _power_db(self.gain_threshold),
                "bands_above_threshold": [band.to_dict(z0) for band in self.bands],
                "bandwidth_3db": {
                    **self.bandwidth.to_dict(z0),
                    "bandwidth_hz": self.bandwidth.stop_hz - self.bandwidth.start_hz,
                },
            },
            "stability_requirement": {
                "reference_impedance_ohm": z0,
                "worst_required_return_loss_db": _return_loss_db(self.smallest_allowed_reflection),
                "worst_frequency_hz": self.worst_frequency_hz,
            },
            "port": self._port_dict(),
            "nyquist": _nyquist_dict(self.nyquist),
            "warnings": [w.to_dict() for w in self.warnings],
            "cautions": list(self.cautions),
            "inputs": [record.to_dict() for record in self.inputs],
            "frequency_range_hz": [float(self.frequency_hz[0]), float(self.frequency_hz[-1])],
            "reference_impedance_ohm": z0,
        }
        if include_arrays:
            data["arrays"] = self._arrays()
        return data

    def _port_dict(self) -> dict[str, Any] | None:
        if self.port_source is None:
            return None
        assert self.port_reflection is not None and self.gain_bounds is not None
        lower, upper = self.gain_bounds
        at_peak = self.ripple_at_peak
        assert at_peak is not None
        return {
            "reference_impedance_ohm": self.reference_impedance_ohm,
            "source": self.port_source,
            "return_loss_db": _return_loss_db(self.port_reflection_bound),
            "small_gain_guaranteed": self.guaranteed,
            "margin_db": _magnitude_db(self.port_margin),
            "margin_frequency_hz": self.port_margin_frequency_hz,
            "ripple_at_peak": {
                "frequency_hz": self.peak_frequency_hz,
                "gain_lower_db": _power_db(at_peak[0]),
                "gain_upper_db": _finite_or_none(_power_db(at_peak[1])),
            },
            # Each bound in dB first: a gain that underflows to 0 in both gives 0 dB, not 0/0.
            "worst_ripple_db": _finite_or_none(
                float(np.max(_power_db_array(upper) - _power_db_array(lower)))
            ),
            "small_gain_verdict": None if self.bound is None else self.bound.verdict,
            "at_stake_ranges_hz": (
                [] if self.bound is None else [list(r) for r in self.bound.at_stake_ranges_hz]
            ),
            "edges": [
                {
                    "side": edge.side,
                    "founded": edge.founded,
                    "margin_db": _magnitude_db(edge.margin),
                    "note": edge.note,
                }
                for edge in self.edges
            ],
        }

    def _arrays(self) -> dict[str, Any]:
        arrays: dict[str, Any] = {
            "reference_impedance_ohm": self.reference_impedance_ohm,
            "frequency_hz": self.frequency_hz.tolist(),
            "gamma_device": [{"re": v.real, "im": v.imag} for v in self.gamma_device.tolist()],
            "gain_db": _power_db_array(self.gain).tolist(),
            "required_return_loss_db": (0.0 - 20.0 * np.log10(self.allowed_reflection)).tolist(),
        }
        if self.gain_bounds is not None:
            arrays["gain_lower_db"] = _power_db_array(self.gain_bounds[0]).tolist()
            arrays["gain_upper_db"] = [
                _finite_or_none(v) for v in _power_db_array(self.gain_bounds[1]).tolist()
            ]
        if self.gain_with_load is not None:
            # +inf where the loaded gain has a pole: null in JSON (docs/json-amplifier.md).
            arrays["gain_with_load_db"] = [
                _finite_or_none(v) for v in _power_db_array(self.gain_with_load).tolist()
            ]
        return arrays


def analyse_amplifier(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    reference_impedance_ohm: float,
    *,
    gain_threshold_db: float = DEFAULT_GAIN_THRESHOLD_DB,
    port_return_loss_db: float | None = None,
    gamma_port: np.ndarray | None = None,
    nyquist: CheckResult | None = None,
    inputs: tuple[InputRecord, ...] = (),
) -> AmplifierResult:
    """Gain, bandwidth, ripple bounds and the port match stability needs, from arrays.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        Strictly increasing, Hz.
    gamma_device : ndarray of complex, shape (n,)
        The device's reflection in ``reference_impedance_ohm``.
    reference_impedance_ohm : float
        Z0, Ω.
    gain_threshold_db : float
        Threshold for the listed gain bands, dB.
    port_return_loss_db : float, optional
        A stated port return loss, dB (constant over frequency).
    gamma_port : ndarray of complex, shape (n,), optional
        The port's reflection on the same grid (from its file); exclusive with the above.
    nyquist : CheckResult, optional
        The Nyquist check with that port, which then decides the verdict.
    inputs : tuple of InputRecord

    Returns
    -------
    AmplifierResult

    Examples
    --------
    A pure −75 Ω in 50 Ω gains ((75 + 50)/(75 − 50))² = 25, 13.98 dB:

    >>> import math
    >>> f = np.linspace(0.0, 1e9, 11)
    >>> result = analyse_amplifier(f, np.full(11, 5.0 + 0j), 50.0, port_return_loss_db=20.0)
    >>> round(result.peak_gain, 6), round(10 * math.log10(result.peak_gain), 2), result.verdict
    (25.0, 13.98, 'guaranteed')
    """
    frequency_hz, gamma_device, port = _validated(
        frequency_hz, gamma_device, port_return_loss_db, gamma_port
    )
    z0 = float(reference_impedance_ohm)
    magnitude = np.maximum(np.abs(gamma_device), 1e-300)
    gain = magnitude**2
    gain_db = 20.0 * np.log10(magnitude)  # the bands' edges are interpolated in dB
    allowed = np.minimum(1.0 / magnitude, 1.0)
    required = np.maximum(gain_db, 0.0)
    peak = int(np.argmax(gain_db))
    worst = int(np.argmax(required))
    source = None if port is None else ("load" if gamma_port is not None else "return-loss")
    if port is None and gain_db[peak] < 0.0:
        # No gain anywhere: the bound holds for any passive port, |gamma_port| <= 1.
        port, source = np.ones(frequency_hz.size), "any-passive-port"
    bounds = None if port is None else _gain_bounds(gamma_device, port)
    margin: float | None = None
    margin_frequency: float | None = None
    edges: tuple[EdgeBound, ...] = ()
    bound = None
    if port is not None:
        bound = small_gain_bound(frequency_hz, gamma_device, port)
        margin, margin_frequency = bound.margin, bound.margin_frequency_hz
        edges = bound.edges
    with_load = None
    if gamma_port is not None:
        # Where Γd·Γport = 1 the loaded gain has a pole: unbounded (+inf; null in JSON).
        with np.errstate(divide="ignore", invalid="ignore"):
            effective = np.abs(gamma_device) / np.abs(1.0 - gamma_device * gamma_port)
        effective = np.where(np.isnan(effective), np.inf, effective)
        with_load = np.maximum(effective, 1e-300) ** 2
    partial = _Partial(frequency_hz, gain_db, allowed, z0, bound, source, nyquist)
    verdict, basis, reasons, steps = _decide(partial)
    return AmplifierResult(
        verdict=verdict,
        basis=basis,
        reasons=tuple(reasons),
        next_steps=tuple(steps),
        premise=bound_premise(z0, frequency_hz) if nyquist is None else nyquist.premise,
        reference_impedance_ohm=z0,
        gain_threshold=float(10.0 ** (gain_threshold_db / 10.0)),
        peak_gain=float(gain[peak]),
        peak_frequency_hz=float(frequency_hz[peak]),
        bands=tuple(_bands(frequency_hz, gain_db, float(gain_threshold_db))),
        bandwidth=_bandwidth(frequency_hz, gain_db, peak),
        smallest_allowed_reflection=float(allowed[worst]),
        worst_frequency_hz=float(frequency_hz[worst]),
        port_source=source,
        port_reflection_bound=None if port is None else float(np.max(port)),
        port_margin=margin,
        port_margin_frequency_hz=margin_frequency,
        edges=edges,
        nyquist=nyquist,
        warnings=tuple(_findings(frequency_hz, gain_db, nyquist)),
        cautions=CAUTIONS,
        inputs=inputs,
        frequency_hz=frequency_hz,
        gamma_device=gamma_device,
        gain=gain,
        allowed_reflection=allowed,
        port_reflection=port,
        gain_bounds=bounds,
        gain_with_load=with_load,
        bound=bound,
    )


def _validated(
    frequency_hz: Any, gamma_device: Any, port_return_loss_db: float | None, gamma_port: Any
) -> tuple[np.ndarray, np.ndarray, np.ndarray | None]:
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    gamma_device = np.asarray(gamma_device, dtype=complex)
    if frequency_hz.ndim != 1 or gamma_device.shape != frequency_hz.shape or frequency_hz.size < 2:
        raise InputError(
            "frequency_hz and gamma_device must be 1-D arrays of one length (at least 2 points)"
        )
    if np.any(np.diff(frequency_hz) <= 0):
        raise InputError("frequency_hz must be strictly increasing")
    if port_return_loss_db is not None and gamma_port is not None:
        raise InputError("give either a port return loss or the port's reflection, not both")
    if port_return_loss_db is not None:
        if not (np.isfinite(port_return_loss_db) and port_return_loss_db >= 0):
            raise InputError(
                f"port return loss {port_return_loss_db!r} dB: a number of dB, 0 or more, is"
                " needed (e.g. 20dB)"
            )
        return (
            frequency_hz,
            gamma_device,
            np.full(frequency_hz.size, 10 ** (-port_return_loss_db / 20)),
        )
    if gamma_port is not None:
        gamma_port = np.asarray(gamma_port, dtype=complex)
        if gamma_port.shape != frequency_hz.shape:
            raise InputError("gamma_port must be on the device's frequency grid")
        return frequency_hz, gamma_device, np.abs(gamma_port)
    return frequency_hz, gamma_device, None


def _gain_bounds(gamma_device: np.ndarray, port: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Power-gain bounds (linear): (|Γd|/(1 ± |Γd·ΓL|))²; +inf where |Γd·ΓL| ≥ 1."""
    magnitude = np.abs(gamma_device)
    loop = magnitude * port
    lower = np.maximum(magnitude / (1.0 + loop), 1e-300) ** 2
    with np.errstate(divide="ignore"):
        upper = np.where(
            loop < 1.0, (np.maximum(magnitude, 1e-300) / np.abs(1.0 - loop)) ** 2, np.inf
        )
    return lower, upper


def _power_db(ratio: float) -> float:
    """A power ratio in dB, for the ``_db`` keys (+inf stays +inf)."""
    return float(10.0 * np.log10(max(ratio, 1e-300))) if np.isfinite(ratio) else float(ratio)


def _power_db_array(ratio: np.ndarray) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.asarray(10.0 * np.log10(np.maximum(ratio, 1e-300)))


def _magnitude_db(factor: float | None) -> float | None:
    """A magnitude or margin factor in dB (20·log10), for the ``_db`` keys."""
    return None if factor is None else float(20.0 * np.log10(max(factor, 1e-300)))


def _return_loss_db(reflection: float | None) -> float | None:
    """A reflection bound as a return loss, dB (0.0, never −0.0, for |Γ| = 1)."""
    if reflection is None:
        return None
    return float(0.0 - 20.0 * np.log10(max(reflection, 1e-300)))


@dataclass(frozen=True)
class _Partial:
    frequency_hz: np.ndarray
    gain_db: np.ndarray
    allowed_reflection: np.ndarray
    z0: float
    bound: SmallGainBound | None
    source: str | None
    nyquist: CheckResult | None


def _decide(partial: _Partial) -> tuple[str, str, list[str], list[str]]:
    f, gain_db = partial.frequency_hz, partial.gain_db
    peak = float(np.max(gain_db))
    worst = format_frequency(float(f[np.argmax(gain_db)]))
    if partial.nyquist is not None:
        return _decide_with_load(partial, peak, worst)
    if partial.bound is None:
        return (
            "inconclusive",
            "none",
            [
                f"No port match was stated. For guaranteed stability the port must have at least"
                f" {peak:.1f} dB return loss at {worst} (and the gain in dB at every frequency)."
            ],
            ["State the port's return loss (--port-return-loss) or give its file (--load)."],
        )
    what = (
        "any passive port (the device has no gain)"
        if partial.source == "any-passive-port"
        else "the stated port match"
    )
    reasons, steps = bound_words(partial.bound, partial.allowed_reflection, f, partial.z0, what)
    return partial.bound.verdict, "small-gain", reasons, steps


def _decide_with_load(
    partial: _Partial, peak: float, worst: str
) -> tuple[str, str, list[str], list[str]]:
    nyquist = partial.nyquist
    assert nyquist is not None
    reasons = list(nyquist.reasons)
    bound = partial.bound
    if bound is not None and bound.guaranteed:
        reasons.append(
            f"The small-gain bound also holds with this port ({to_decibels(bound.margin):.1f} dB"
            " beyond the data's scatter)."
        )
    else:
        reasons.append(
            "The small-gain bound does not hold with this port: the verdict rests on the"
            " Nyquist count with this particular port, whose phase matters; another unit of"
            " the same part may not behave the same."
        )
    steps = list(nyquist.next_steps)
    if bound is None or not bound.guaranteed:
        steps.append(
            f"For a guarantee, the port needs at least {peak:.1f} dB return loss at {worst}."
        )
    return nyquist.verdict, "nyquist", reasons, steps


def _bands(frequency_hz: np.ndarray, gain_db: np.ndarray, threshold: float) -> list[GainBand]:
    above = gain_db >= threshold
    bands = []
    index = 0
    while index < above.size:
        if not above[index]:
            index += 1
            continue
        stop = index
        while stop + 1 < above.size and above[stop + 1]:
            stop += 1
        bands.append(_band(frequency_hz, gain_db, index, stop, threshold))
        index = stop + 1
    return bands


def _band(
    frequency_hz: np.ndarray, gain_db: np.ndarray, first: int, last: int, level: float
) -> GainBand:
    start = _crossing(frequency_hz, gain_db, first - 1, level) if first > 0 else frequency_hz[0]
    stop = (
        _crossing(frequency_hz, gain_db, last, level)
        if last < frequency_hz.size - 1
        else frequency_hz[-1]
    )
    peak = first + int(np.argmax(gain_db[first : last + 1]))
    return GainBand(
        start_hz=float(start),
        stop_hz=float(stop),
        peak_gain=float(10.0 ** (gain_db[peak] / 10.0)),
        peak_frequency_hz=float(frequency_hz[peak]),
        starts_at_sweep_edge=first == 0,
        stops_at_sweep_edge=last == frequency_hz.size - 1,
    )


def _crossing(frequency_hz: np.ndarray, gain_db: np.ndarray, index: int, level: float) -> float:
    """Where the gain passes ``level`` between samples ``index`` and ``index + 1`` (linear)."""
    a, b = gain_db[index], gain_db[index + 1]
    fraction = (level - a) / (b - a) if b != a else 0.5
    return float(frequency_hz[index] + fraction * (frequency_hz[index + 1] - frequency_hz[index]))


def _bandwidth(frequency_hz: np.ndarray, gain_db: np.ndarray, peak: int) -> GainBand:
    """The stretch around the peak where the gain stays within 3 dB of it."""
    level = gain_db[peak] - BANDWIDTH_DROP_DB
    first = peak
    while first > 0 and gain_db[first - 1] >= level:
        first -= 1
    last = peak
    while last < gain_db.size - 1 and gain_db[last + 1] >= level:
        last += 1
    return _band(frequency_hz, gain_db, first, last, level)


def _findings(
    frequency_hz: np.ndarray, gain_db: np.ndarray, nyquist: CheckResult | None
) -> list[Finding]:
    findings = []
    for index, side in ((0, "low"), (-1, "high")):
        if gain_db[index] > 0.0 and not (side == "low" and frequency_hz[0] == 0.0):
            findings.append(
                Finding(
                    "gain-at-sweep-edge",
                    f"The device still has {gain_db[index]:.1f} dB of gain at the {side} edge"
                    f" ({format_frequency(frequency_hz[index])}): the port must stay matched"
                    " beyond the sweep too.",
                    {"frequency_hz": float(frequency_hz[index]), "gain_db": float(gain_db[index])},
                )
            )
    if nyquist is not None:
        findings += list(nyquist.warnings)
    return findings


def _nyquist_dict(nyquist: CheckResult | None) -> dict[str, Any] | None:
    if nyquist is None:
        return None
    data = nyquist.to_dict()
    keys = ("schema", "verdict", "reasons", "encirclements", "latch_up")
    summary = {key: data[key] for key in keys}
    summary["oscillation_frequencies_hz"] = data["oscillation_frequencies_hz"]
    summary["margins"] = data["margins"]
    return summary


def _finite_or_none(value: float) -> float | None:
    return value if np.isfinite(value) else None
