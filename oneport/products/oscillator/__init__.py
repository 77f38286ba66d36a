"""Large-signal oscillator analysis: where a negative-resistance one-port settles in a load.

From a device measured at several drive levels (Touchstone one-ports listed in a TOML
manifest) or a quasi-static I–V description with lumped parasitics, and a load one-port,
:func:`oscillator` finds every operating point Γd(A, f)·ΓL(f) = 1 inside the data, its
frequency, amplitude and power, Kurokawa's stability and decay rate, whether the circuit
starts from noise (the small-signal Nyquist count, by the check's own judgement), and a verdict
word (docs/oscillator.md).

Rooms: ``manifest`` (reading), ``describing`` (describing functions and I–V curves), ``lines``
(smooth device and load lines), ``solve`` (roots and Kurokawa's figures), ``verdict``,
``analysis`` (the flow), ``result`` (frozen results, JSON), ``wording`` (the quantities' words
and units, shared with the renderers). It may not print, plot or exit: the text and figure are
in :mod:`oneport.rendering`.
"""

from .analysis import choose_form, oscillator
from .describing import (
    TunnelDiodeModel,
    describing_conductance,
    polynomial_current,
    table_current,
)
from .manifest import (
    DriveLevelDevice,
    IVDevice,
    Parasitics,
    read_device_description,
)
from .result import (
    OSCILLATOR_SCHEMA,
    VERDICTS,
    LevelCount,
    OperatingPoint,
    OscillatorResult,
)

__all__ = [
    "OSCILLATOR_SCHEMA",
    "VERDICTS",
    "DriveLevelDevice",
    "IVDevice",
    "LevelCount",
    "OperatingPoint",
    "OscillatorResult",
    "Parasitics",
    "TunnelDiodeModel",
    "choose_form",
    "describing_conductance",
    "oscillator",
    "polynomial_current",
    "read_device_description",
    "table_current",
]
