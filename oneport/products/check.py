"""The check product: device and load, as the user names them, to a stability verdict.

Data flow: the one preparation (``products.pair``: read, prepare, align, evaluate netlists) →
the one judgement (``analysis.judgement``), described in words (``analysis.reasons``) → frozen
:class:`~oneport.analysis.result.CheckResult`. It never prints, plots or exits.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np

from ..analysis.reasons import describe
from ..analysis.result import CheckResult
from ..analysis.small_gain import BoundResult, check_return_loss
from ..reading.preparation import PortSetup, PreparedPort
from ..reading.touchstone import OnePort
from .pair import PreparedPair, prepare_device, prepare_pair

OneportSource = str | Path | OnePort | PreparedPort | Any


def check(
    device: OneportSource,
    load: OneportSource,
    *,
    measurement_impedance_ohm: float | None = None,
    device_dc_resistance_ohm: float | None = None,
    load_dc_resistance_ohm: float | None = None,
    gamma_uncertainty: float | tuple[float, float] | None = None,
    frequency_hz: np.ndarray | None = None,
    device_setup: PortSetup | None = None,
    load_setup: PortSetup | None = None,
) -> CheckResult:
    """Will ``device`` oscillate (or latch up) when connected to ``load``? Small-signal check.

    Parameters
    ----------
    device, load : path, OnePort, PreparedPort, Circuit or skrf.Network
        The negative-resistance device and the network it faces, as one-ports. A netlist
        (``.cir`` path or :class:`oneport.circuit.Circuit`) is evaluated on the other side's
        grid in the analysis impedance, and its own natural frequencies terminated there are
        checked (the premise) and counted if any lie in the right half plane.
    measurement_impedance_ohm : float, optional
        The impedance the device was really measured in (VNA port impedance), Ω, if its file
        was renormalised afterwards; default: the device file's reference. The load is brought
        to this impedance, never the device to the load's.
    device_dc_resistance_ohm, load_dc_resistance_ohm : float, optional
        DC facts that close the contour towards DC: the device's I–V slope at the bias point
        and the bias network's DC resistance, Ω (give both, or one when the other side is a
        netlist, whose own DC value is then used).
    gamma_uncertainty : float or (float, float), optional
        Worst-case absolute error of |Γ|, for both sides or (device, load).
    frequency_hz : ndarray, optional
        The grid, Hz, when both sides are netlists; default: chosen from their natural
        frequencies, from DC to beyond the last of them.
    device_setup, load_setup : PortSetup, optional
        Termination, fixture and delay of a Touchstone side given as a path.

    Returns
    -------
    CheckResult
        Verdict, Nyquist count, crossings, bands, margins, warnings and cautions, with arrays.

    Examples
    --------
    A bare −30 Ω (no dynamics) in series with 0.5 nH, into 100 Ω: the device keeps its gain
    to the top of a 5 GHz sweep, so nothing founds the closure towards infinity there; swept
    to 200 GHz, where the inductance has taken the gain away, it is stable.

    >>> import skrf
    >>> def sides(top_ghz):
    ...     frequency = skrf.Frequency(0.1, top_ghz, 2001, unit="GHz")
    ...     media = skrf.media.DefinedGammaZ0(frequency, z0=50)
    ...     device = media.resistor(-30) ** media.inductor(0.5e-9) ** media.short()
    ...     return device, media.resistor(100) ** media.short()
    >>> check(*sides(5)).verdict
    'inconclusive'
    >>> result = check(*sides(200))
    >>> result.verdict, result.encirclements
    ('stable', 0)
    """
    return judge_prepared(
        prepare_pair(
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
    )


def judge_prepared(pair: PreparedPair) -> CheckResult:
    """The single check of a prepared pair: the one judgement, described in words."""
    return describe(
        pair.frequency_hz,
        pair.gamma_device,
        pair.gamma_load,
        pair.reference_impedance_ohm,
        pair.facts,
        pair.context,
    )


def check_load_class(
    device: OneportSource,
    load_return_loss_db: float,
    *,
    measurement_impedance_ohm: float | None = None,
    device_uncertainty: float = 0.0,
    device_setup: PortSetup | None = None,
) -> BoundResult:
    """Is ``device`` stable into *every* passive load with at least ``load_return_loss_db`` of
    return loss? The one small-gain rule (:mod:`oneport.analysis.small_gain`), on the device as
    the one preparation reads it; ``amplifier --port-return-loss`` asks the same."""
    prepared = prepare_device(
        device, measurement_impedance_ohm=measurement_impedance_ohm, device_setup=device_setup
    )
    result = check_return_loss(
        prepared.port, load_return_loss_db, prepared.record, device_uncertainty
    )
    return replace(result, warnings=result.warnings + prepared.findings)
