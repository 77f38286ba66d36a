"""The one judgement: a pair's reflections and the facts beside them to a stability verdict.

Every stability verdict of the tool — ``check``, each ``sweep`` row, ``watch``, ``poles``,
``amplifier`` with a port file — comes from :func:`judge`, vectorised over leading axes
(variants), so a sweep row cannot differ from the single check: the single check runs it with
one variant and describes the same intermediate values in words (``reasons.py``). The rules
(METHODS §1–2):

- the count: N_cw of clockwise encirclements of +1 by L on the sampled band, closed towards DC
  and infinity (``nyquist.close_edges``), plus P, the right-half-plane poles of F known from
  netlist sides (Z = N + P);
- the closures: towards infinity founded only where |L| < 1 at the top edge by more than the
  data's scatter and the stated |Γ| errors (or, for two lumped netlists evaluated beyond every
  natural frequency, by the rational function's limit); towards DC also by settling, an
  assumption stated; DC facts (stated, or a netlist side's own DC value) fix F(0);
- the unwrapping limit: a phase step of F above 120° between samples leaves the count unknown;
- doubts that leave a count unproven: a phase step above 45° inside |L| ≥ 1; a hidden feature
  of the load (Foster violation or isolated jump on its own grid) where the device has gain
  (|Γd| ≥ 1 − its stated error); stated |Γ| errors that let L reach +1; a measured load that is
  not passive; a count that disagrees with the exact natural frequencies of a lumped pair;
- a negative count means the premise failed: inconclusive.

Arrays and facts in, per-variant arrays out: it reads no file, prints, plots or exits.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..errors import InputError
from . import nyquist
from .diagnostics import HiddenResonance, hidden_features, jump_indices
from .nyquist import DC_RESISTANCES, NETLIST_LIMIT, NOT_FOUNDED
from .variants import (
    FEATURE_KINDS,
    INCONCLUSIVE,
    STABLE,
    UNSTABLE,
    VERDICT_CODES,
    VariantAnalysis,
    carrying_crossings,
    flatten_variants,
    sample_pass,
)

__all__ = [
    "INCONCLUSIVE",
    "STABLE",
    "UNSTABLE",
    "VERDICT_CODES",
    "Facts",
    "Judgement",
    "LoadSamples",
    "judge",
]

#: Bit flags of what left a verdict inconclusive (``Judgement.doubts``).
DOUBT_LOW_EDGE = 1
DOUBT_HIGH_EDGE = 2
DOUBT_UNWRAPPING = 4
DOUBT_PREMISE = 8  # a negative count
DOUBT_UNCERTAINTY = 16
DOUBT_HIDDEN_FEATURE = 32
DOUBT_PHASE_STEP = 64
DOUBT_ACTIVE_LOAD = 128
DOUBT_EXACT_ROOTS = 256

#: A phase step of F above this inside |L| ≥ 1 leaves the count unproven (rad).
STAKE_PHASE_STEP_RAD = nyquist.COARSE_PHASE_STEP_RAD


@dataclass(frozen=True)
class LoadSamples:
    """A measured load on its own grid, referred to the analysis impedance: where its hidden
    features are looked for (before interpolation: a coarse load on a fine grid looks smooth)."""

    frequency_hz: np.ndarray
    gamma: np.ndarray
    source: str


@dataclass(frozen=True)
class Facts:
    """What the judgement knows besides the two reflections (SI units; per variant where an
    array of the variants' leading shape is given).

    Attributes
    ----------
    known_poles : int or ndarray of int
        P: right-half-plane poles of F known from netlist sides (their natural frequencies
        terminated in the analysis impedance); the count is Z = N + P.
    dc_sign : int, ndarray of int, or None
        The sign of F(0) from DC facts (stated resistances, or a netlist side's DC value);
        0 where a variant has none. None: no DC facts.
    device_uncertainty, load_uncertainty : float
        Worst-case absolute errors of the measured |Γd| and |ΓL|.
    load_is_netlist : bool
        A netlist load: its own poles are counted (an active one does not leave them unknown)
        and it has no noise.
    load_samples : LoadSamples or None
        A measured load's own grid; None for a netlist load (or a measured one given only on
        the analysis grid), whose hidden features are then looked for on the analysis grid.
    exact_rhp : int, ndarray of int, or None
        Right-half-plane natural frequencies of the joined circuit when both sides are lumped
        netlists (−1 where unknown): a count that disagrees is not trusted.
    netlist_limit : bool or ndarray of bool
        Both sides are lumped netlists and the grid reaches beyond every natural frequency of
        L and F (``circuit.natural.lumped_pair_facts``): towards infinity F takes the sign of
        F at the top edge.
    features_on_grid : bool
        Look for a netlist load's hidden features on the analysis grid (False when the grid was
        chosen to resolve the netlists: nothing lies unseen between its samples).
    load_probe : callable or None
        For a netlist load: ``load_probe(rows, frequency_hz)`` evaluates the load of the
        (flattened) variants ``rows`` at ``frequency_hz`` (shape (k, m), Hz, one row of
        frequencies per variant row) and returns ΓL there, shape (k, m). A feature the analysis
        grid shows is then looked into (:func:`resolved_by_probing`) instead of being left at
        stake: a netlist is defined between the samples.
    """

    known_poles: Any = 0
    dc_sign: Any = None
    device_uncertainty: float = 0.0
    load_uncertainty: float = 0.0
    load_is_netlist: bool = False
    load_samples: LoadSamples | None = None
    exact_rhp: Any = None
    netlist_limit: Any = False
    features_on_grid: bool = True
    load_probe: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = field(
        default=None, repr=False, compare=False
    )

    def __post_init__(self) -> None:
        for name in ("device_uncertainty", "load_uncertainty"):
            value = getattr(self, name)
            if not (np.isfinite(value) and 0.0 <= value < 1.0):
                raise InputError(f"{name} {value!r}: an absolute |Γ| error in [0, 1) is needed")


@dataclass(frozen=True)
class Features:
    """Hidden load features, one row per (variant, feature): ``rows`` index the flattened
    variants; ``at_stake`` where the device has gain there."""

    rows: np.ndarray
    start_hz: np.ndarray
    stop_hz: np.ndarray
    kind: np.ndarray  # index into FEATURE_KINDS
    at_stake: np.ndarray
    source: str


@dataclass(frozen=True)
class Judgement:
    """The judgement of every variant: arrays of the variants' leading shape.

    ``verdict_code`` indexes :data:`VERDICT_CODES`; ``encirclements`` (Z = N + P) is meaningful
    only where ``count_known``; ``doubts`` holds the ``DOUBT_*`` flags of what left a verdict
    inconclusive (or would have, for a count already unknown). ``low`` and ``high`` are the
    data's own closures; ``low_code``/``low_sign`` and ``high_code``/``high_sign`` the ones
    used (DC facts, the netlist limit). ``features`` are the load's hidden features.
    """

    verdict_code: np.ndarray
    encirclements: np.ndarray
    count_known: np.ndarray
    latch_up: np.ndarray
    doubts: np.ndarray
    known_poles: np.ndarray
    low: nyquist.EdgeClosures
    high: nyquist.EdgeClosures
    low_code: np.ndarray
    low_sign: np.ndarray
    high_code: np.ndarray
    high_sign: np.ndarray
    largest_phase_step_rad: np.ndarray
    large_step_rad: np.ndarray
    large_step_column: np.ndarray
    oscillation_frequency_hz: np.ndarray
    oscillatory_modes: np.ndarray
    min_distance: np.ndarray
    min_distance_frequency_hz: np.ndarray
    worst_loop_gain: np.ndarray
    worst_loop_gain_frequency_hz: np.ndarray
    uncertainty_slack: np.ndarray
    uncertainty_slack_frequency_hz: np.ndarray
    largest_load_reflection: np.ndarray
    loop_gain_scatter: np.ndarray
    hidden_at_stake: np.ndarray
    features: Features = field(repr=False)

    def verdicts(self) -> np.ndarray:
        """The verdict words, as an array of str."""
        return np.asarray(VERDICT_CODES, dtype=object)[self.verdict_code]

    def variant_analysis(self) -> VariantAnalysis:
        """The columns a sweep table takes (:class:`~oneport.analysis.variants.VariantAnalysis`)."""
        return VariantAnalysis(
            verdict_code=self.verdict_code,
            encirclements=np.where(self.count_known, self.encirclements, 0),
            count_known=self.count_known,
            latch_up=self.latch_up,
            oscillation_frequency_hz=self.oscillation_frequency_hz,
            oscillatory_modes=self.oscillatory_modes,
            min_distance=self.min_distance,
            min_distance_frequency_hz=self.min_distance_frequency_hz,
            worst_loop_gain=self.worst_loop_gain,
            worst_loop_gain_frequency_hz=self.worst_loop_gain_frequency_hz,
            largest_phase_step_rad=self.largest_phase_step_rad,
            low_closure_code=self.low_code,
            high_closure_code=self.high_code,
            hidden_resonance=self.hidden_at_stake,
        )

    def hidden_resonances(self, variant: int = 0) -> list[HiddenResonance]:
        """One variant's hidden load features (flattened index), in frequency order."""
        features = self.features
        chosen = np.flatnonzero(features.rows == variant)
        return [
            HiddenResonance(
                features.source,
                FEATURE_KINDS[int(features.kind[i])],
                float(features.start_hz[i]),
                float(features.stop_hz[i]),
            )
            for i in chosen
        ]

    def features_at_stake(self, variant: int = 0) -> list[bool]:
        """Whether each of :meth:`hidden_resonances` puts the count at stake."""
        chosen = np.flatnonzero(self.features.rows == variant)
        return [bool(self.features.at_stake[i]) for i in chosen]


def judge(
    frequency_hz: np.ndarray,
    gamma_device: np.ndarray,
    gamma_load: np.ndarray,
    facts: Facts | None = None,
) -> Judgement:
    """The verdict of every variant, by the rules in this module's docstring.

    Parameters
    ----------
    frequency_hz : ndarray, shape (n,)
        The common grid, Hz, increasing.
    gamma_device, gamma_load : ndarray of complex, shapes broadcasting to (..., n)
        Both referred to the analysis impedance (the device's measurement impedance).
    facts : Facts, optional

    Returns
    -------
    Judgement
        Arrays of the leading shape (0-d for one pair).

    Examples
    --------
    A loop that stays well inside the unit circle is stable:

    >>> f = np.linspace(1e6, 1e9, 50)
    >>> str(judge(f, np.full(50, 0.5 + 0j), 0.5 * np.exp(-2j * np.pi * f / 1e9)).verdicts())
    'stable'
    """
    facts = facts or Facts()
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    device, load, leading = flatten_variants(gamma_device, gamma_load)
    variants = device.shape[0]
    errors = (facts.device_uncertainty, facts.load_uncertainty)
    measured_load = not facts.load_is_netlist
    features_here = facts.load_samples is None and facts.features_on_grid
    sample = sample_pass(device, load, measured_load, features_here, errors)

    # The closures read L at a few columns near each edge only (nyquist.closure_columns).
    edge_columns = nyquist.closure_columns(frequency_hz)
    edge_frequency_hz = frequency_hz[edge_columns]
    edge_loop_gain = device[:, edge_columns] * load[:, edge_columns]
    low = nyquist.close_edges(
        edge_frequency_hz, edge_loop_gain, "low", _error_effect(device, load, 0, errors)
    )
    high = nyquist.close_edges(
        edge_frequency_hz, edge_loop_gain, "high", _error_effect(device, load, -1, errors)
    )
    low_code, low_sign = low.basis_code, low.sign_at_limit
    if facts.dc_sign is not None:
        dc_sign = _per_variant(facts.dc_sign, leading, int)
        low_code = np.where(dc_sign != 0, DC_RESISTANCES, low_code)
        low_sign = np.where(dc_sign != 0, dc_sign, low_sign)
    high_code, high_sign = high.basis_code, high.sign_at_limit
    limit = _per_variant(facts.netlist_limit, leading, bool)
    if limit.any():
        # Beyond every natural frequency a rational F is a0 + a1/s + …: real a0 where it is not
        # zero; where it is (L → +1, both sides inductive at infinity), a1/(jω), which the big
        # arc of the contour turns to the sign of a1 = −sign(Im F).
        top = 1.0 - edge_loop_gain[:, -1]
        limit_sign = np.where(
            np.abs(top.real) >= np.abs(top.imag),
            np.where(top.real > 0, 1, -1),
            np.where(top.imag < 0, 1, -1),
        )
        unfounded = limit & (high_code == NOT_FOUNDED)
        high_code = np.where(unfounded, NETLIST_LIMIT, high_code)
        high_sign = np.where(unfounded, limit_sign, high_sign)

    step = sample.largest_step
    low_founded, high_founded = low_code != NOT_FOUNDED, high_code != NOT_FOUNDED
    unwraps = step <= nyquist.UNSAFE_PHASE_STEP_RAD
    known = low_founded & high_founded & unwraps
    poles = _per_variant(facts.known_poles, leading, int)
    count = poles + nyquist.count_from_phase_change(
        sample.in_band_phase,
        edge_loop_gain[:, 0],
        edge_loop_gain[:, -1],
        np.where(low_sign == 0, 1, low_sign),
        np.where(high_sign == 0, 1, high_sign),
    )

    features = _features(frequency_hz, device, load, sample, facts)
    hidden = np.zeros(variants, dtype=bool)
    hidden[features.rows[features.at_stake]] = True
    doubts = np.zeros(variants, dtype=int)
    doubts |= np.where(low_founded, 0, DOUBT_LOW_EDGE)
    doubts |= np.where(high_founded, 0, DOUBT_HIGH_EDGE)
    doubts |= np.where(unwraps, 0, DOUBT_UNWRAPPING)
    doubts |= np.where(known & (count < 0), DOUBT_PREMISE, 0)
    if facts.device_uncertainty or facts.load_uncertainty:
        doubts |= np.where(sample.slack <= 0.0, DOUBT_UNCERTAINTY, 0)
    doubts |= np.where(hidden, DOUBT_HIDDEN_FEATURE, 0)
    doubts |= np.where(sample.large_step > STAKE_PHASE_STEP_RAD, DOUBT_PHASE_STEP, 0)
    if measured_load:
        active = sample.largest_load > 1.0 + 3.0 * sample.scatter + 1e-9
        doubts |= np.where(active, DOUBT_ACTIVE_LOAD, 0)
    if facts.exact_rhp is not None:
        exact = _per_variant(facts.exact_rhp, leading, int)
        doubts |= np.where(known & (exact >= 0) & (exact != count), DOUBT_EXACT_ROOTS, 0)
    verdict = np.where(doubts != 0, INCONCLUSIVE, np.where(count == 0, STABLE, UNSTABLE))
    verdict = np.where(known, verdict, INCONCLUSIVE)

    frequency, modes = carrying_crossings(frequency_hz, variants, sample.crossings)
    unstable = known & (count > 0)
    columns: dict[str, Any] = {
        "verdict_code": verdict,
        "encirclements": count,
        "count_known": known,
        "latch_up": known & (count % 2 == 1),
        "doubts": doubts,
        "known_poles": np.broadcast_to(poles, (variants,)),
        "low_code": low_code,
        "low_sign": low_sign,
        "high_code": high_code,
        "high_sign": high_sign,
        "largest_phase_step_rad": step,
        "large_step_rad": sample.large_step,
        "large_step_column": sample.large_step_column,
        "oscillation_frequency_hz": np.where(unstable, frequency, np.nan),
        "oscillatory_modes": np.where(unstable, modes, 0),
        "min_distance": sample.min_distance,
        "min_distance_frequency_hz": frequency_hz[sample.closest],
        "worst_loop_gain": sample.worst_loop_gain,
        "worst_loop_gain_frequency_hz": frequency_hz[sample.loudest],
        "uncertainty_slack": sample.slack,
        "uncertainty_slack_frequency_hz": frequency_hz[sample.slack_column],
        "largest_load_reflection": sample.largest_load,
        "loop_gain_scatter": sample.scatter,
        "hidden_at_stake": hidden,
    }
    shaped = {name: np.asarray(value).reshape(leading) for name, value in columns.items()}
    return Judgement(
        **shaped,
        low=_shaped_closures(low, leading),
        high=_shaped_closures(high, leading),
        features=features,
    )


def _per_variant(value: Any, leading: tuple[int, ...], kind: type) -> np.ndarray:
    """A scalar or leading-shaped fact as a flat per-variant array."""
    array: np.ndarray = np.asarray(value, dtype=kind)
    return np.broadcast_to(array, leading).reshape(-1)


def _error_effect(
    device: np.ndarray, load: np.ndarray, column: int, errors: tuple[float, float]
) -> np.ndarray | float:
    """The worst change of L at one sample that the stated |Γ| errors allow, per variant:
    |Γd|·δL + |ΓL|·δd + δd·δL."""
    device_error, load_error = errors
    if not (device_error or load_error):
        return 0.0
    return (
        np.abs(device[:, column]) * load_error
        + np.abs(load[:, column]) * device_error
        + device_error * load_error
    )


def _shaped_closures(closures: nyquist.EdgeClosures, leading: tuple[int, ...]) -> Any:
    return nyquist.EdgeClosures(
        *(np.asarray(getattr(closures, name)).reshape(leading) for name in _CLOSURE_FIELDS)
    )


_CLOSURE_FIELDS = ("basis_code", "sign_at_limit", "motion", "margin", "edge_loop_gain")


def _features(
    frequency_hz: np.ndarray, device: np.ndarray, load: np.ndarray, sample: Any, facts: Facts
) -> Features:
    """The load's hidden features, and where the device has gain (|Γd| ≥ 1 − its stated error)
    in the interval or at the analysis sample either side of it. A netlist load's features are
    looked into where it can be evaluated between the samples (``facts.load_probe``)."""
    threshold = 1.0 - facts.device_uncertainty
    magnitude_at = np.abs
    if facts.load_samples is None:
        rows, columns = sample.feature_rows, sample.feature_columns
        last = frequency_hz.size - 1
        at_stake = np.zeros(rows.size, dtype=bool)
        for offset in (-1, 0, 1, 2):
            nearby = np.clip(columns + offset, 0, last)
            at_stake |= magnitude_at(device[rows, nearby]) >= threshold
        kinds = sample.feature_kinds
        if facts.load_probe is not None and rows.size:
            # A netlist is defined between the samples: what it shows there, looked into, is
            # no hidden feature at all and is dropped; only what stays unresolved is kept.
            seen = ~resolved_by_probing(frequency_hz, device, load, rows, columns, facts.load_probe)
            rows, columns, kinds, at_stake = rows[seen], columns[seen], kinds[seen], at_stake[seen]
        return Features(
            rows,
            frequency_hz[columns],
            frequency_hz[np.minimum(columns + 1, last)],
            kinds,
            at_stake,
            "load",
        )
    own = facts.load_samples
    noise = 0.0 if facts.load_is_netlist else float(nyquist.estimate_noise(own.gamma))
    found = hidden_features(own.frequency_hz, own.gamma, 1.0, own.source, noise)
    variants = device.shape[0]
    kinds = np.array([FEATURE_KINDS.index(r.kind) for r in found], dtype=np.intp)
    gain = np.zeros((variants, len(found)))
    for k, feature in enumerate(found):
        lower = max(int(np.searchsorted(frequency_hz, feature.start_hz)) - 1, 0)
        upper = int(np.searchsorted(frequency_hz, feature.stop_hz, side="right")) + 1
        window = device[:, lower:upper]
        if window.shape[1]:
            gain[:, k] = np.max(magnitude_at(window), axis=-1)
    return Features(
        np.repeat(np.arange(variants), len(found)),
        np.tile([r.start_hz for r in found], variants).astype(float),
        np.tile([r.stop_hz for r in found], variants).astype(float),
        np.tile(kinds, variants),
        (gain >= threshold).reshape(-1),
        own.source,
    )


#: Points a netlist load is evaluated at inside an interval where the analysis grid shows a
#: feature, and how many times a part of it that still shows one is looked into again: the
#: finest look is PROBE_POINTS + 1 to the power PROBE_DEPTH (some 5,000) times the grid's.
PROBE_POINTS = 16
PROBE_DEPTH = 3
#: The path of F through the probed points may turn by this much more than the two samples
#: show before the interval counts as hiding a turn around +1 (rad).
PROBE_TURN_TOLERANCE_RAD = np.pi / 2


def resolved_by_probing(
    frequency_hz: np.ndarray,
    device: np.ndarray,
    load: np.ndarray,
    rows: np.ndarray,
    columns: np.ndarray,
    probe: Callable[[np.ndarray, np.ndarray], np.ndarray],
) -> np.ndarray:
    """Which flagged intervals of a netlist load hide nothing that could change the count.

    Each interval (variant ``rows``, sample ``columns`` to ``columns + 1``) is evaluated at
    ``PROBE_POINTS`` inner frequencies, the device taken linearly between its two samples (the
    analysis assumes no more of a measured device anywhere). The interval is resolved when the
    path of F = 1 − Γd·ΓL through those points turns about 0 as the two samples say it does
    (within ``PROBE_TURN_TOLERANCE_RAD``) and the load moves smoothly along it (no isolated
    jump among the finer steps); a finer part that still jumps is looked into again, up to
    ``PROBE_DEPTH`` times. What is still unresolved stays at stake.

    Returns
    -------
    ndarray of bool, shape (len(rows),)
    """
    resolved = np.zeros(rows.size, dtype=bool)
    # Open intervals: owner (index into rows), variant row, ends (Hz) and values at the ends.
    owner = np.arange(rows.size)
    start_hz, stop_hz = frequency_hz[columns], frequency_hz[columns + 1]
    device_ends = (device[rows, columns], device[rows, columns + 1])
    load_ends = (load[rows, columns], load[rows, columns + 1])
    variant = rows
    fractions = np.arange(1, PROBE_POINTS + 1) / (PROBE_POINTS + 1)
    unresolved_owners = np.zeros(rows.size, dtype=bool)
    for _ in range(PROBE_DEPTH):
        if owner.size == 0:
            break
        inner_hz = start_hz[:, None] + (stop_hz - start_hz)[:, None] * fractions
        inner_load = np.asarray(probe(variant, inner_hz), dtype=complex)
        inner_device = (
            device_ends[0][:, None] + (device_ends[1] - device_ends[0])[:, None] * fractions
        )
        path_load = np.concatenate(
            (load_ends[0][:, None], inner_load, load_ends[1][:, None]), axis=-1
        )
        path_device = np.concatenate(
            (device_ends[0][:, None], inner_device, device_ends[1][:, None]), axis=-1
        )
        steps = nyquist.phase_steps(path_device * path_load)
        direct = nyquist.phase_steps(
            np.stack(
                (path_device[:, 0] * path_load[:, 0], path_device[:, -1] * path_load[:, -1]), -1
            )
        )[:, 0]
        turned = np.abs(np.sum(steps, axis=-1) - direct) > PROBE_TURN_TOLERANCE_RAD
        unresolved_owners[owner[turned]] = True
        jumping = jump_indices(path_load)
        again = np.zeros(owner.size, dtype=bool)
        again[jumping[0]] = True
        again &= ~turned
        # The finer intervals that still jump are looked into at the next depth.
        which, at = jumping
        keep = again[which]
        which, at = which[keep], at[keep]
        hz = np.concatenate((start_hz[:, None], inner_hz, stop_hz[:, None]), axis=-1)
        owner_next = owner[which]
        start_hz, stop_hz = hz[which, at], hz[which, at + 1]
        device_ends = (path_device[which, at], path_device[which, at + 1])
        load_ends = (path_load[which, at], path_load[which, at + 1])
        variant = variant[which]
        finished = ~turned & ~again
        resolved[owner[finished]] = True
        owner = owner_next
    resolved[unresolved_owners] = False
    resolved[owner] = False  # still jumping at the finest look
    return resolved


#: F(0) within this of 0 (relative to the product Γd(0)·ΓL(0)) has no sign: a root at s = 0.
DC_SIGN_TOLERANCE = 1e-9


def characteristic_sign_at_dc(gamma_device: Any, gamma_load: Any) -> np.ndarray:
    """Sign of the real F(0) = 1 − Γd(0)·ΓL(0); 0 where it has none: F(0) within rounding of 0
    (a natural frequency at s = 0), or NaN."""
    device = np.asarray(gamma_device, dtype=float)
    load = np.asarray(gamma_load, dtype=float)
    with np.errstate(invalid="ignore", over="ignore"):
        product = device * load
    value = 1.0 - product
    tiny = np.abs(value) <= DC_SIGN_TOLERANCE * np.maximum(1.0, np.abs(product))
    return np.where(np.isnan(value) | tiny, 0.0, np.sign(value)).astype(int)


def gamma_of_resistance(resistance_ohm: float, reference_impedance_ohm: float) -> float:
    """Γ of a resistance in Z0 (1 for an open circuit, ``inf``); the value −Z0 is refused by the
    caller (the side would have a natural frequency at s = 0 terminated in Z0)."""
    if np.isinf(resistance_ohm):
        return 1.0
    return (resistance_ohm - reference_impedance_ohm) / (resistance_ohm + reference_impedance_ohm)


# --------------------------------------------------------------------------------------------
# The single check's legacy entry point (arrays already aligned)


@dataclass(frozen=True)
class CheckOptions:
    """What the user knows beyond the two files (all optional; SI units).

    Kept for callers that align a pair themselves (:func:`analyse_pair`); the products build
    :class:`Facts` through ``oneport.products.pair``.
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


def analyse_pair(pair: Any, device: Any, load: Any, options: CheckOptions | None = None) -> Any:
    """The single check of an aligned pair (:class:`~oneport.reading.alignment.AlignedPair`)
    and the two one-ports it came from: :func:`judge` with one variant, described in words."""
    from ..reading.alignment import renormalise
    from ..reading.records import InputRecord
    from .reasons import PairContext, describe

    options = options or CheckOptions()
    z0 = pair.reference_impedance_ohm
    dc_sign = None
    if options.device_dc_resistance_ohm is not None:
        assert options.load_dc_resistance_ohm is not None
        dc_sign = int(
            dc_sign_of_resistances(
                options.device_dc_resistance_ohm, options.load_dc_resistance_ohm, z0
            )
        )
    facts = Facts(
        known_poles=options.known_poles,
        dc_sign=dc_sign,
        device_uncertainty=options.device_uncertainty,
        load_uncertainty=options.load_uncertainty,
        load_is_netlist=options.load_poles_known,
        load_samples=LoadSamples(
            load.frequency_hz,
            renormalise(load.gamma, load.reference_impedance_ohm, z0),
            load.source,
        ),
    )
    context = PairContext(
        inputs=(InputRecord.of("device", device, z0), InputRecord.of("load", load, z0)),
        device_grid=device.frequency_hz,
        load_grid=load.frequency_hz,
        device_points_dropped=(pair.device_points_dropped_below, pair.device_points_dropped_above),
        load_points_in_band=pair.load_points_in_band,
        device_renormalised_from_ohm=pair.device_renormalised_from_ohm,
        premise_notes=options.premise_notes,
        dc_facts="stated" if dc_sign is not None else None,
    )
    return describe(pair.frequency_hz, pair.gamma_device, pair.gamma_load, z0, facts, context)


def dc_sign_of_resistances(device_ohm: float, load_ohm: float, z0: float) -> int:
    """The sign of F(0) from the two DC resistances (one line on the impossible cases)."""
    for name, value in (("device", device_ohm), ("load", load_ohm)):
        if value == -z0:
            raise InputError(
                f"--{name}-dc-resistance {value:g} ohm equals minus the analysis impedance"
                f" ({z0:g} ohm): the {name} would have a natural frequency at s = 0 terminated"
                " in it, and F(0) is undefined; give the measured value"
            )
    if device_ohm + load_ohm == 0.0:
        raise InputError(
            "DC resistances: device and load resistances sum to zero at DC (a root at s = 0);"
            " the count is undefined"
        )
    sign = characteristic_sign_at_dc(
        gamma_of_resistance(device_ohm, z0), gamma_of_resistance(load_ohm, z0)
    )
    return int(sign)
