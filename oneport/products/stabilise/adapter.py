"""The one place where stabilising advice touches the check: preparation, judgement, margins.

Every verdict the advice gives comes from the project's own judgement, never from a second one:
the scan hands many changed loads at once to the vectorised per-variant judgement
(:func:`oneport.analysis.variants.analyse_variants`), and every suggestion is verified by the
full single check (:func:`oneport.products.check.check`) on the changed pair. This module is the
only one in ``products/stabilise/`` that imports the check's modules, so that when the check's
preparation or judgement moves, only the calls below change:

- :func:`prepare_pair`: ``products.pair.prepare_pair``, the check's one preparation (both sides
  on one grid in the device's measurement impedance, netlists evaluated, their right-half-plane
  poles P);
- :func:`judge_variants`: ``analysis.variants.analyse_variants``;
- :func:`dc_signs`: the sign of F(0) from DC resistances, the rule of the check's DC closure
  (``analysis.judgement._dc_closure``) written for arrays, as the sweep command does;
- :func:`check_pair`: ``products.check.check``;
- :func:`margins`: ``analysis.nyquist.find_margins``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ...analysis.variants import INCONCLUSIVE, STABLE, UNSTABLE, VariantAnalysis
from ...reading.touchstone import OnePort

__all__ = [
    "INCONCLUSIVE",
    "STABLE",
    "UNSTABLE",
    "PreparedPair",
    "VariantAnalysis",
    "check_pair",
    "dc_signs",
    "judge_variants",
    "margins",
    "prepare_pair",
]


@dataclass(frozen=True)
class PreparedPair:
    """Device and load as the check sees them, once, for the scan and for the verifications.

    Attributes
    ----------
    device_source, load_source : object
        What the check is handed for each side of the original pair: a one-port record, a
        prepared port, or a netlist (path or :class:`~oneport.circuit.Circuit`) as given.
    load_port : OnePort
        The load at the connection plane on its own grid (a netlist load: evaluated on the
        analysis grid), before alignment.
    load_circuit, device_circuit : Circuit or None
        The netlist of a side, when it is one.
    known_poles : int
        Right-half-plane poles of F known from netlist sides (P).
    frequency_hz, gamma_device, gamma_load : ndarray
        The aligned pair (Hz; complex reflections in ``reference_impedance_ohm``).
    reference_impedance_ohm : float
        The analysis impedance (the device's measurement impedance), Ω.
    check_options : dict
        The keyword arguments of the check other than the two sides.
    """

    device_source: Any
    load_source: Any
    load_port: OnePort
    load_circuit: Any
    device_circuit: Any
    known_poles: int
    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)
    gamma_load: np.ndarray = field(repr=False)
    reference_impedance_ohm: float
    check_options: dict[str, Any] = field(default_factory=dict)
    prepared: Any = field(default=None, repr=False)

    @property
    def load_poles_known(self) -> bool:
        """A netlist load: its own natural frequencies are counted, as the check does."""
        return self.load_circuit is not None


def prepare_pair(
    device: Any,
    load: Any,
    *,
    measurement_impedance_ohm: float | None = None,
    device_dc_resistance_ohm: float | None = None,
    load_dc_resistance_ohm: float | None = None,
    gamma_uncertainty: float | tuple[float, float] | None = None,
    frequency_hz: np.ndarray | None = None,
    device_setup: Any = None,
    load_setup: Any = None,
) -> PreparedPair:
    """Both sides prepared and aligned by the check's own preparation."""
    from ...reading.preparation import PreparedPort
    from ..pair import prepare_pair as prepare

    prepared = prepare(
        device,
        load,
        measurement_impedance_ohm=measurement_impedance_ohm,
        device_dc_resistance_ohm=device_dc_resistance_ohm,
        load_dc_resistance_ohm=load_dc_resistance_ohm,
        gamma_uncertainty=gamma_uncertainty,
        device_setup=device_setup,
        load_setup=load_setup,
        frequency_hz=frequency_hz,
    )
    device_side, load_side = prepared.device, prepared.load
    # Files are read once, not again for every verification: a data side goes to the
    # verifications as prepared (at the connection plane); a netlist goes as given, so its
    # record keeps its path and checksum.
    device_source = device if device_side.is_netlist else _prepared(device_side, PreparedPort)
    load_source = load if load_side.is_netlist else _prepared(load_side, PreparedPort)
    return PreparedPair(
        device_source=device_source,
        load_source=load_source,
        load_port=load_side.port,
        load_circuit=load_side.circuit,
        device_circuit=device_side.circuit,
        known_poles=int(device_side.poles + load_side.poles),
        frequency_hz=prepared.frequency_hz,
        gamma_device=prepared.gamma_device,
        gamma_load=prepared.gamma_load,
        reference_impedance_ohm=prepared.reference_impedance_ohm,
        check_options={
            "measurement_impedance_ohm": measurement_impedance_ohm,
            "device_dc_resistance_ohm": device_dc_resistance_ohm,
            "load_dc_resistance_ohm": load_dc_resistance_ohm,
            "gamma_uncertainty": gamma_uncertainty,
            "frequency_hz": frequency_hz,
        },
        prepared=prepared,
    )


def _prepared(side: Any, prepared_port: Any) -> Any:
    """A data side as a prepared port: its one-port, the steps taken and what was found."""
    return prepared_port(side.port, side.steps, side.findings)


def judge_variants(
    pair: PreparedPair,
    gamma_load: np.ndarray,
    dc_sign: np.ndarray | None = None,
    probe: Any = None,
) -> VariantAnalysis:
    """The check's judgement for every changed load at once (variants on the leading axis).

    ``dc_sign`` holds each variant's sign of F(0) from the DC resistances (or None when they
    are not given); variants are judged in one call per distinct sign. ``probe`` evaluates a
    changed netlist load between the grid's samples (``Facts.load_probe``).
    """
    gamma_load = np.asarray(gamma_load, dtype=complex)
    if dc_sign is None:
        return _judged(pair, gamma_load, None, probe)
    signs = np.asarray(dc_sign, dtype=int)
    distinct = np.unique(signs)
    if distinct.size == 1:
        return _judged(pair, gamma_load, int(distinct[0]), probe)
    parts = {}
    for sign in distinct:
        chosen = np.flatnonzero(signs == sign)
        part_probe = None
        if probe is not None:
            part_probe = _rows_of(probe, chosen)
        parts[int(sign)] = _judged(pair, gamma_load[chosen], int(sign), part_probe)
    columns: dict[str, np.ndarray] = {}
    for name in VariantAnalysis.__dataclass_fields__:
        sample = getattr(parts[int(distinct[0])], name)
        column = np.empty(signs.shape, dtype=sample.dtype)
        for sign, part in parts.items():
            column[signs == sign] = getattr(part, name)
        columns[name] = column
    return VariantAnalysis(**columns)


def _judged(pair: PreparedPair, gamma_load: np.ndarray, sign: int | None, probe: Any) -> Any:
    from ...analysis.judgement import Facts
    from ...analysis.variants import analyse_variants

    facts = Facts(dc_sign=sign, load_is_netlist=pair.load_poles_known, load_probe=probe)
    return analyse_variants(
        pair.frequency_hz, pair.gamma_device, gamma_load, pair.reference_impedance_ohm, facts=facts
    )


def _rows_of(probe: Any, chosen: np.ndarray) -> Any:
    """``probe`` for a subset of the variants: its rows are positions in ``chosen``."""
    return lambda rows, frequency_hz: probe(chosen[rows], frequency_hz)


def dc_signs(
    device_dc_resistance_ohm: float, load_dc_resistance_ohm: np.ndarray, z0: float
) -> np.ndarray:
    """Sign of F(0) = 1 − Γd(0)·ΓL(0) for each load DC resistance (Ω; ``inf`` for an open).

    The rule of the check's DC closure; a sum of zero (a root at s = 0) is left as +1 here and
    refused by the check itself when the suggestion is verified.
    """
    load = np.asarray(load_dc_resistance_ohm, dtype=float)
    gamma_device = _gamma_of_resistance(np.array(device_dc_resistance_ohm), z0)
    gamma_load = _gamma_of_resistance(load, z0)
    return np.where(1.0 - gamma_device * gamma_load >= 0.0, 1, -1)


def _gamma_of_resistance(resistance_ohm: np.ndarray, z0: float) -> np.ndarray:
    with np.errstate(divide="ignore", invalid="ignore"):
        gamma = (resistance_ohm - z0) / (resistance_ohm + z0)
    return np.where(np.isinf(resistance_ohm), 1.0, gamma)


def check_pair(
    pair: PreparedPair, load: Any, load_dc_resistance_ohm: float | None, probe: Any = None
) -> Any:
    """The full single check of the device against ``load`` (the original or a changed load),
    as the user asked for the original: same options, the load's DC resistance replaced by the
    changed one.

    A netlist load (changed: the netlist with the elements added) goes to
    :func:`oneport.check` as it is. A measured load with a network at the device's port is the
    pair as prepared with the changed reflection on the analysis grid: the judgement keeps the
    load's own grid for its hidden features (an exact lumped network adds none) and sees what
    the network does between samples through ``probe``.
    """
    from ...products.check import check, judge_prepared

    options = dict(pair.check_options)
    options["load_dc_resistance_ohm"] = load_dc_resistance_ohm
    prepared = pair.prepared
    if pair.load_circuit is not None or prepared is None:
        return check(pair.device_source, load, **options)
    if load is pair.load_source:
        return judge_prepared(prepared)
    from dataclasses import replace

    from ...analysis.judgement import dc_sign_of_resistances

    facts = replace(prepared.facts, load_probe=probe)
    device_ohm = options.get("device_dc_resistance_ohm")
    if device_ohm is not None and load_dc_resistance_ohm is not None:
        facts = replace(
            facts,
            dc_sign=dc_sign_of_resistances(
                device_ohm, load_dc_resistance_ohm, pair.reference_impedance_ohm
            ),
        )
    record = prepared.context.inputs[1]
    steps = tuple(getattr(load, "steps", ()))
    context = replace(
        prepared.context, inputs=(prepared.context.inputs[0], replace(record, preparation=steps))
    )
    gamma = np.asarray(load.one_port.gamma, dtype=complex)
    return judge_prepared(replace(prepared, gamma_load=gamma, facts=facts, context=context))


def margins(frequency_hz: np.ndarray, loop_gain: np.ndarray) -> Any:
    """Gain, phase and modulus margins of one loop gain, as the check reports them."""
    from ...analysis.nyquist import find_margins

    return find_margins(frequency_hz, loop_gain)
