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
from ..reading.preparation import PortSetup
from .check import judge_prepared
from .pair import prepare_pair


def poles(
    device: Any,
    load: Any,
    *,
    measurement_impedance_ohm: float | None = None,
    max_order: int | None = None,
    character: bool = False,
    device_setup: PortSetup | None = None,
    load_setup: PortSetup | None = None,
    frequency_hz: Any = None,
) -> PoleZeroResult:
    """Fit F = 1 − Γd·ΓL of ``device`` into ``load`` and list the natural frequencies it implies.

    The sides are taken as ``oneport.check`` takes them (paths, one-ports, scikit-rf Networks,
    netlists). The result's ``verdict`` is the check's (the one judgement); the fit's own is
    ``fit_verdict``, and the reasons say whether they agree and, where not, which to believe.
    ``character`` adds the device's character (open-, short- and Z0-stability, the Γ/Z/Y forms).
    """
    pair = prepare_pair(
        device,
        load,
        measurement_impedance_ohm=measurement_impedance_ohm,
        device_setup=device_setup,
        load_setup=load_setup,
        frequency_hz=frequency_hz,
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
