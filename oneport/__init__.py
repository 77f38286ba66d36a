"""oneport: will this negative-resistance one-port oscillate into that load?

Every command has a function of the same name. Each takes paths, scikit-rf ``Network``\\s,
netlists (``.cir`` paths or :class:`~oneport.circuit.Circuit`) and quantities as numbers in SI
units or text with a unit (``"50ohm"``, ``"2.4GHz"``, ``"12ps"``, ``"15dB"``), and returns a
frozen result whose ``to_dict()`` is the command's JSON, whose ``plot(ax=None)`` returns a
matplotlib figure, and which shows itself in a notebook. Bad input raises :class:`InputError`
(a ``ValueError``) with the command's one line.

Products
========

   check         -- small-signal stability of a device into a load (Nyquist count); or, with
                    ``load_return_loss_db``, into every load of a return loss (small-gain bound)
   poles         -- natural frequencies from a rational fit of 1 − L, beside the count
   amplifier     -- reflection-amplifier gain, bandwidth and the port match stability needs
   oscillator    -- where an oscillator settles: operating points and Kurokawa stability
   sweep         -- the check over parameter grids, tolerances or several devices
   terminations  -- terminations of a two-port's port that make the other port negative
   export        -- a netlist evaluated on a grid and written as a Touchstone file
   stabilise     -- which network, where and how much makes a pair stable with margin
   watch         -- check the device files in a folder, once or as they arrive

Helpers
=======

   frequency_grid  -- a grid from ``start``, ``stop``, ``points``, ``spacing`` (``"1MHz"``…)
   read_one_port   -- read a Touchstone one-port safely (never through pickle)
   OnePort         -- a one-port's reflection on its own grid, Hz, with its reference

Results
=======

   CheckResult, BoundResult, PoleZeroResult, AmplifierResult, OscillatorResult, SweepResult,
   TerminationsResult, ExportResult, StabiliseResult, WatchResult

Errors
======

   OneportError     -- the base of every error the package raises for bad input
   InputError       -- a bad value, option or argument (also a ``ValueError``)
   FileFormatError  -- a file that cannot be read as what it claims to be
   NoOverlapError   -- device and load share too little of their frequency band

Importing ``oneport`` is cheap: each name is imported on first use.

Examples
--------
>>> import oneport
>>> result = oneport.check("touchstone_examples/oscillates/device.s1p",
...                        load="touchstone_examples/oscillates/load.s1p")
>>> result.verdict, result.encirclements
('unstable', 2)
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

__version__ = "0.2.0"

if TYPE_CHECKING:
    from .analysis.amplifier import AmplifierResult
    from .analysis.pole_zero import PoleZeroResult
    from .analysis.result import CheckResult
    from .analysis.small_gain import BoundResult
    from .analysis.terminations import TerminationsResult
    from .errors import FileFormatError, InputError, NoOverlapError, OneportError
    from .products.amplifier import amplifier
    from .products.check import check
    from .products.export import ExportResult, export
    from .products.options import frequency_grid
    from .products.oscillator import OscillatorResult, oscillator
    from .products.poles import poles
    from .products.stabilise import StabiliseResult, stabilise
    from .products.sweep import SweepResult, sweep
    from .products.terminations import terminations
    from .products.watch import WatchResult, watch
    from .reading.touchstone import OnePort, read_one_port

#: Where each public name lives; imported on first use (``import oneport`` loads none of them).
_HOMES = {
    "check": "products.check",
    "poles": "products.poles",
    "amplifier": "products.amplifier",
    "oscillator": "products.oscillator",
    "sweep": "products.sweep",
    "terminations": "products.terminations",
    "export": "products.export",
    "stabilise": "products.stabilise",
    "watch": "products.watch",
    "frequency_grid": "products.options",
    "read_one_port": "reading.touchstone",
    "OnePort": "reading.touchstone",
    "CheckResult": "analysis.result",
    "BoundResult": "analysis.small_gain",
    "PoleZeroResult": "analysis.pole_zero",
    "AmplifierResult": "analysis.amplifier",
    "OscillatorResult": "products.oscillator",
    "SweepResult": "products.sweep",
    "TerminationsResult": "analysis.terminations",
    "ExportResult": "products.export",
    "StabiliseResult": "products.stabilise",
    "WatchResult": "products.watch",
    "OneportError": "errors",
    "InputError": "errors",
    "FileFormatError": "errors",
    "NoOverlapError": "errors",
}

__all__ = [
    "AmplifierResult",
    "BoundResult",
    "CheckResult",
    "ExportResult",
    "FileFormatError",
    "InputError",
    "NoOverlapError",
    "OnePort",
    "OneportError",
    "OscillatorResult",
    "PoleZeroResult",
    "StabiliseResult",
    "SweepResult",
    "TerminationsResult",
    "WatchResult",
    "amplifier",
    "check",
    "export",
    "frequency_grid",
    "oscillator",
    "poles",
    "read_one_port",
    "stabilise",
    "sweep",
    "terminations",
    "watch",
]


def __getattr__(name: str) -> Any:
    if name not in _HOMES:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    import importlib

    value = getattr(importlib.import_module(f".{_HOMES[name]}", __name__), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_HOMES))
