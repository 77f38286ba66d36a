"""The poles product: a device and a load, as the user names them, to the natural frequencies a
rational fit of F = 1 − Γd·ΓL implies, beside the one judgement's count.

Data flow: the one preparation (``products.pair``) → the check's judgement (the verdict) and the
fit (``analysis.pole_zero``, the second opinion that agrees or explains) → a frozen
:class:`~oneport.analysis.pole_zero.PoleZeroResult`. It never prints, plots or exits.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Any

from ..analysis.pole_zero import (
    DEFAULT_MAX_ORDER,
    PoleZeroResult,
    identify_natural_frequencies,
    with_count_check,
)
from .check import judge_prepared
from .options import model_order, optional, pair_arguments, port_setup
from .pair import prepare_pair


def poles(
    device: Any,
    load: Any,
    *,
    measurement_impedance_ohm: float | str | None = None,
    max_order: int | None = None,
    character: bool = False,
    frequency_hz: Any = None,
    terminate: Any = None,
    terminate_impedance_ohm: float | str | None = None,
    terminated_port: int = 2,
    differential_ports: Any = None,
    device_fixture: Any = None,
    device_delay_s: float | str | None = None,
    load_fixture: Any = None,
    load_delay_s: float | str | None = None,
) -> PoleZeroResult:
    """Fit F = 1 − Γd·ΓL of ``device`` into ``load`` and list the natural frequencies it implies.

    Parameters
    ----------
    device, load : path, OnePort, skrf.Network or Circuit
        As :func:`oneport.check` takes them.
    measurement_impedance_ohm : float or str, optional
        The impedance the device was measured in (Ω or ``"50ohm"``), as for the check.
    max_order : int, optional
        The highest model order (number of poles) tried; default 24.
    character : bool
        Add the device's character (open-, short- and Z0-stability, the Γ/Z/Y forms).
    frequency_hz, terminate, terminate_impedance_ohm, terminated_port, differential_ports : optional
    device_fixture, device_delay_s, load_fixture, load_delay_s : optional
        As for :func:`oneport.check`.

    Returns
    -------
    PoleZeroResult
        Its ``verdict`` is the check's (the one judgement); the fit's own is ``fit_verdict``,
        and the reasons say whether they agree and, where not, which to believe.
    """
    max_order = optional(model_order, max_order, "--max-order")
    pair = prepare_pair(
        device,
        load,
        device_setup=port_setup(
            "device",
            terminate=terminate,
            terminate_impedance_ohm=terminate_impedance_ohm,
            terminated_port=terminated_port,
            differential_ports=differential_ports,
            fixture=device_fixture,
            delay_s=device_delay_s,
        ),
        **pair_arguments(
            measurement_impedance_ohm=measurement_impedance_ohm,
            frequency_hz=frequency_hz,
            load_fixture=load_fixture,
            load_delay_s=load_delay_s,
        ),
    )
    check = judge_prepared(pair)
    fitted = identify_natural_frequencies(
        pair.frequency_hz,
        1.0 - pair.loop_gain,
        reference_impedance_ohm=pair.reference_impedance_ohm,
        max_order=max_order or DEFAULT_MAX_ORDER,
        inputs=check.inputs,
    )
    result = with_count_check(fitted, check)
    if character:
        from ..analysis.character import characterise_device

        result = replace(
            result,
            device_character=characterise_device(
                pair.frequency_hz,
                pair.gamma_device,
                pair.reference_impedance_ohm,
                load_gamma=pair.gamma_load,
            ),
        )
    return result
