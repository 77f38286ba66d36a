"""The frozen result of a stability check, and its JSON form.

Results carry the arrays they were computed from; ``to_dict()`` gives the JSON object of the
``oneport.check/3`` schema (docs/json-check.md) with arrays only on request. Nothing here
computes an analysis or renders text.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from ..display import Displayed
from ..findings import Finding, complex_json
from ..reading.records import InputRecord
from .diagnostics import GridResolution, HiddenResonance
from .nyquist import Band, Crossing, EdgeClosure, Margins
from .startup import Mode, StartupEstimate

if TYPE_CHECKING:
    from matplotlib.figure import Figure

    from .pole_zero import PoleZeroResult

CHECK_SCHEMA = "oneport.check/3"
VERDICTS = ("stable", "unstable", "inconclusive")


@dataclass(frozen=True)
class Uncertainty:
    """What stated |Γ| errors do to the verdict.

    The worst-case change of L is |Γd|·δL + |ΓL|·δd + δd·δL; the count is robust only where
    |1 − L| exceeds it (``smallest_slack`` > 0).
    """

    device: float
    load: float
    largest_loop_gain_change: float
    smallest_slack: float
    smallest_slack_frequency_hz: float
    count_at_stake: bool
    at_stake_ranges_hz: tuple[tuple[float, float], ...]

    def to_dict(self) -> dict[str, Any]:
        """JSON form."""
        return {
            "device_gamma_uncertainty": self.device,
            "load_gamma_uncertainty": self.load,
            "largest_loop_gain_change": self.largest_loop_gain_change,
            "smallest_slack": self.smallest_slack,
            "smallest_slack_frequency_hz": self.smallest_slack_frequency_hz,
            "count_at_stake": self.count_at_stake,
            "at_stake_ranges_hz": [list(r) for r in self.at_stake_ranges_hz],
        }


@dataclass(frozen=True, repr=False)
class CheckResult(Displayed):
    """Everything one stability check found, frozen.

    Attributes
    ----------
    verdict : str
        ``"stable"``, ``"unstable"`` or ``"inconclusive"``.
    reasons, next_steps : tuple of str
        Plain sentences: why, and what to do.
    encirclements : int or None
        N_cw: clockwise encirclements of +1 by L = right-half-plane natural frequencies under
        the premise; None when inconclusive for lack of a founded closure or safe unwrapping.
    latch_up : bool or None
        True when the count is odd: a real right-half-plane root (exponential run-away).
    oscillation_frequencies_hz : tuple of float
        Crossing frequencies that carry the net count (Z0-dependent estimates of the modes).
    crossings, bands, margins
        Loop-gain features, all referred to ``reference_impedance_ohm``.
    closures : tuple of EdgeClosure
        How the band was closed towards DC and towards infinity.
    frequency_hz, gamma_device, gamma_load, loop_gain : ndarray
        The analysed arrays (Hz; complex, referred to ``reference_impedance_ohm``).
    natural_frequencies : tuple of complex
        When both sides are lumped netlists: the joined circuit's natural frequencies s (1/s),
        exact (generalized eigenvalues of its nodal equations); empty otherwise.
    startup_estimates : tuple of StartupEstimate
        Raw one-step Kurokawa estimates at every zero of the loop reactance or susceptance:
        figures for scripts, never modes (METHODS §4); reports do not list them.
    modes : tuple of Mode or None
        Under an unstable verdict, the right-half-plane natural frequencies the count
        establishes, with frequency and growth rate (exact, or a trusted pole–zero fit that
        accounts for the count); None when the verdict is not unstable or no source locates
        them.
    dc_resistances_ohm : (float or None, float or None)
        The DC resistances stated for the device and the load, Ω.
    dc_facts_source : str or None
        Where the DC facts that closed the contour towards DC came from, in words; None when
        the low edge was not closed by DC facts.
    second_opinion : PoleZeroResult or None
        With ``check(…, poles=True)``: the rational fit of 1 − L and its natural frequencies,
        cross-checked with the count (the JSON's ``poles``).
    """

    verdict: str
    reasons: tuple[str, ...]
    next_steps: tuple[str, ...]
    premise: str
    encirclements: int | None
    latch_up: bool | None
    oscillation_frequencies_hz: tuple[float, ...]
    crossings: tuple[Crossing, ...]
    bands: tuple[Band, ...]
    margins: Margins
    closures: tuple[EdgeClosure, EdgeClosure]
    largest_phase_step_rad: float
    noise_estimate: float
    uncertainty: Uncertainty
    hidden_resonances: tuple[HiddenResonance, ...]
    grid_resolution: tuple[GridResolution, ...]
    startup_estimates: tuple[StartupEstimate, ...]
    warnings: tuple[Finding, ...]
    cautions: tuple[str, ...]
    inputs: tuple[InputRecord, InputRecord]
    reference_impedance_ohm: float
    points_dropped: int
    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)
    gamma_load: np.ndarray = field(repr=False)
    loop_gain: np.ndarray = field(repr=False)
    natural_frequencies: tuple[complex, ...] = ()
    modes: tuple[Mode, ...] | None = None
    dc_resistances_ohm: tuple[float | None, float | None] = (None, None)
    dc_facts_source: str | None = None
    second_opinion: PoleZeroResult | None = None

    @property
    def frequency_range_hz(self) -> tuple[float, float]:
        """The analysed band, Hz."""
        return float(self.frequency_hz[0]), float(self.frequency_hz[-1])

    def plot(self, ax: Any = None, kind: str = "nyquist", **options: Any) -> Figure:
        """Draw the result: ``kind`` is ``"nyquist"``, ``"loop-gain"`` or ``"smith"``.

        Returns the matplotlib figure (headless; a notebook shows it when it is the cell's
        value); ``ax`` draws into existing axes. Options go to
        :func:`oneport.rendering.check_plots.plot_nyquist` (``compress_radius``), ``plot_loop_gain``
        (``log_frequency``) or ``plot_smith`` (``max_radius``).
        """
        from ..rendering import check_plots as plots

        drawers = {
            "nyquist": plots.plot_nyquist,
            "loop-gain": plots.plot_loop_gain,
            "smith": plots.plot_smith,
        }
        if kind not in drawers:
            from ..errors import InputError

            raise InputError(f"plot kind {kind!r}: accepted: {', '.join(drawers)}")
        figure: Figure = drawers[kind](self, ax=ax, **options)
        return figure

    def to_dict(self, include_arrays: bool = False) -> dict[str, Any]:
        """The ``oneport.check/3`` JSON object (plain Python types only)."""
        z0 = self.reference_impedance_ohm
        device_dc, load_dc = self.dc_resistances_ohm
        data: dict[str, Any] = {
            "schema": CHECK_SCHEMA,
            "verdict": self.verdict,
            "reasons": list(self.reasons),
            "next_steps": list(self.next_steps),
            "premise": self.premise,
            "small_signal": True,
            "encirclements": self.encirclements,
            "latch_up": self.latch_up,
            "oscillation_frequencies_hz": list(self.oscillation_frequencies_hz),
            "crossings": [_crossing(c, z0) for c in self.crossings],
            "bands": [_band(b, z0) for b in self.bands],
            "margins": _margins(self.margins, z0, self.verdict == "stable"),
            "closure": {c.side: _closure(c) for c in self.closures},
            "sampling": {
                "largest_phase_step_deg": float(np.degrees(self.largest_phase_step_rad)),
                "loop_gain_noise_estimate": self.noise_estimate,
                "points_analysed": int(self.frequency_hz.size),
                "device_points_dropped": self.points_dropped,
                "grid_resolution": [
                    {
                        "path": g.source,
                        "largest_resolved_loaded_q": g.finest_resolvable_q,
                        "coarsest_step_hz": g.largest_step_hz,
                        "coarsest_step_at_hz": g.at_frequency_hz,
                    }
                    for g in self.grid_resolution
                ],
                "hidden_resonances": [
                    {
                        "path": r.source,
                        "kind": r.kind,
                        "start_hz": r.start_hz,
                        "stop_hz": r.stop_hz,
                    }
                    for r in self.hidden_resonances
                ],
            },
            "uncertainty": self.uncertainty.to_dict(),
            "natural_frequencies": [
                _natural(s) for s in self.natural_frequencies if s.imag >= -1e-9 * abs(s)
            ],
            "modes": None if self.modes is None else [_mode(m) for m in self.modes],
            "raw_startup_estimates": [_startup(e, z0) for e in self.startup_estimates],
            "dc_facts": (
                None
                if device_dc is None and load_dc is None and self.dc_facts_source is None
                else {
                    "device_resistance_ohm": device_dc,
                    "load_resistance_ohm": load_dc,
                    "source": self.dc_facts_source,
                }
            ),
            "warnings": [w.to_dict() for w in self.warnings],
            "cautions": list(self.cautions),
            "inputs": [record.to_dict() for record in self.inputs],
            "frequency_range_hz": list(self.frequency_range_hz),
            "reference_impedance_ohm": z0,
        }
        if include_arrays:
            data["arrays"] = {
                "reference_impedance_ohm": z0,
                "frequency_hz": self.frequency_hz.tolist(),
                "gamma_device": _complex_list(self.gamma_device),
                "gamma_load": _complex_list(self.gamma_load),
                "loop_gain": _complex_list(self.loop_gain),
            }
        if self.second_opinion is not None:
            data["poles"] = self.second_opinion.to_dict()
        return data


def _complex_list(values: np.ndarray) -> list[dict[str, float]]:
    return [complex_json(v) for v in values.tolist()]


def _db(magnitude: float) -> float:
    return float(20.0 * np.log10(magnitude))


def _optional_db(factor: float | None) -> float | None:
    """A linear margin factor in dB for a ``_db`` key (None stays None)."""
    return None if factor is None else _db(factor)


def _optional_deg(angle_rad: float | None) -> float | None:
    """An angle in degrees for a ``_deg`` key (None stays None)."""
    return None if angle_rad is None else float(np.degrees(angle_rad))


def _crossing(crossing: Crossing, z0: float) -> dict[str, Any]:
    return {
        "frequency_hz": crossing.frequency_hz,
        "direction": crossing.direction,
        "contribution": crossing.contribution,
        "loop_gain_db": _db(abs(crossing.loop_gain)),
        "loop_gain": complex_json(crossing.loop_gain),
        "within_noise": crossing.within_noise,
        "reference_impedance_ohm": z0,
    }


def _band(band: Band, z0: float) -> dict[str, Any]:
    return {
        "start_hz": band.start_hz,
        "stop_hz": band.stop_hz,
        "peak_loop_gain_db": _db(band.peak_loop_gain),
        "peak_frequency_hz": band.peak_frequency_hz,
        "starts_at_sweep_edge": band.starts_at_sweep_edge,
        "stops_at_sweep_edge": band.stops_at_sweep_edge,
        "reference_impedance_ohm": z0,
    }


def _margins(margins: Margins, z0: float, stable: bool) -> dict[str, Any]:
    """Gain and phase margins measure how far a stable loop is from instability: under any
    other verdict they are null (the distance of L from +1 always means something)."""
    return {
        "reference_impedance_ohm": z0,
        "gain_margin_db": _optional_db(margins.gain_margin) if stable else None,
        "gain_margin_frequency_hz": margins.gain_margin_frequency_hz if stable else None,
        "phase_margin_deg": _optional_deg(margins.phase_margin_rad) if stable else None,
        "phase_margin_frequency_hz": margins.phase_margin_frequency_hz if stable else None,
        "min_distance_to_critical_point": margins.modulus_margin,
        "min_distance_frequency_hz": margins.modulus_margin_frequency_hz,
    }


def _startup(estimate: StartupEstimate, z0: float) -> dict[str, Any]:
    """One raw one-step estimate; the real part's unit follows the form (Ω or S)."""
    impedance = estimate.form == "impedance"
    return {
        "form": estimate.form,
        "crossing_frequency_hz": estimate.crossing_frequency_hz,
        "estimated_frequency_hz": estimate.estimated_frequency_hz,
        "sigma_per_s": estimate.sigma_per_s,
        "growing": estimate.grows,
        "total_resistance_ohm": estimate.total_real_part if impedance else None,
        "total_conductance_siemens": None if impedance else estimate.total_real_part,
        "negative_to_load_resistance_ratio": estimate.resistance_ratio,
        "external_q": estimate.external_q,
        "reference_impedance_ohm": z0,
    }


def _mode(mode: Mode) -> dict[str, Any]:
    return {
        "frequency_hz": mode.frequency_hz,
        "sigma_per_s": mode.sigma_per_s,
        "real": mode.real,
        "latch_up": mode.real,
        "multiplicity": 1 if mode.real else 2,
        "source": mode.source,
    }


def _natural(root: complex) -> dict[str, Any]:
    real = abs(root.imag) <= 1e-9 * abs(root)
    return {
        "frequency_hz": 0.0 if real else root.imag / (2.0 * np.pi),
        "sigma_per_s": root.real,
        "rhp": root.real > 0,
        "trusted": True,
        "real": real,
        "multiplicity": 1 if real else 2,
        "latch_up": real and root.real > 0,
    }


def _closure(closure: EdgeClosure) -> dict[str, Any]:
    return {
        "basis": closure.basis,
        "founded": closure.founded,
        "sign_of_characteristic_at_limit": closure.sign_at_limit or None,
        "loop_gain_at_edge": complex_json(closure.loop_gain_at_edge),
        "motion_per_octave": closure.motion,
        "extend_to_hz": closure.extend_to_hz,
        "margin": closure.margin,
    }
