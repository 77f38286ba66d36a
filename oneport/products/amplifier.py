"""The amplifier product: a device (and what faces it) as the user names them, screened as a
reflection amplifier (:mod:`oneport.analysis.amplifier` does the arithmetic)."""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from ..analysis.amplifier import DEFAULT_GAIN_THRESHOLD_DB, AmplifierResult, analyse_amplifier
from ..errors import InputError
from .check import judge_prepared
from .pair import prepare_device, prepare_pair


def amplifier(
    device: Any,
    load: Any = None,
    *,
    port_return_loss_db: float | str | None = None,
    gain_threshold_db: float | str = DEFAULT_GAIN_THRESHOLD_DB,
    measurement_impedance_ohm: float | str | None = None,
) -> AmplifierResult:
    """Screen a device as a reflection amplifier, with a circulator file or a stated port match.

    Parameters
    ----------
    device : path, OnePort or skrf.Network
        The negative-resistance device.
    load : path, OnePort, skrf.Network or netlist, optional
        What faces the device (the circulator port): the Nyquist check with it decides, through
        the same preparation and judgement as ``oneport.check``.
    port_return_loss_db : float or str, optional
        The port's guaranteed return loss, dB (≥ 0, ``"20dB"``), when no file is given: the
        small-gain rule of ``check --load-return-loss`` decides.
    gain_threshold_db : float or str
        Gain (dB, ``"10dB"``) a band must reach to be listed.
    measurement_impedance_ohm : float or str, optional
        The impedance the device was measured in, if its file was renormalised afterwards.

    Returns
    -------
    AmplifierResult
    """
    from .options import gain, optional, positive_resistance, return_loss

    port_loss: float | None = optional(return_loss, port_return_loss_db, "--port-return-loss")
    threshold: float = gain(gain_threshold_db, "--gain-threshold")
    measurement_impedance_ohm = positive_resistance(
        measurement_impedance_ohm, "--measurement-impedance"
    )
    if load is not None and port_return_loss_db is not None:
        raise InputError("give either a load (circulator file) or a port return loss, not both")
    if load is None:
        prepared = prepare_device(device, measurement_impedance_ohm=measurement_impedance_ohm)
        port = prepared.port
        result = analyse_amplifier(
            port.frequency_hz,
            port.gamma,
            port.reference_impedance_ohm,
            gain_threshold_db=threshold,
            port_return_loss_db=port_loss,
            inputs=(prepared.record,),
        )
        return replace(result, warnings=result.warnings + prepared.findings)
    pair = prepare_pair(device, load, measurement_impedance_ohm=measurement_impedance_ohm)
    nyquist = judge_prepared(pair)
    return analyse_amplifier(
        pair.frequency_hz,
        pair.gamma_device,
        pair.reference_impedance_ohm,
        gain_threshold_db=threshold,
        gamma_port=pair.gamma_load,
        nyquist=nyquist,
        inputs=nyquist.inputs,
    )
