"""Where a sweep's variants come from: netlists with parameters, or lists of measured devices.

A source is a picklable callable (it travels to Dask workers): parameter arrays in, device and
load reflections on the common grid out, both referred to the analysis impedance.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

#: The column naming which measured device file a variant uses (a list sweep).
DEVICE_INDEX = "device_index"


@dataclass(frozen=True)
class Side:
    """One side of the loop: fixed reflections (shape (n,) or (D, n)) or a circuit."""

    gamma: np.ndarray | None = None
    circuit: Any = None
    parameters: tuple[str, ...] = ()

    def evaluate(
        self,
        frequency_hz: np.ndarray,
        reference_impedance_ohm: float,
        values: dict[str, np.ndarray],
    ) -> np.ndarray:
        """Reflections for the variants in ``values`` (broadcastable to (V, n))."""
        if self.circuit is None:
            assert self.gamma is not None
            if self.gamma.ndim == 2:
                return self.gamma[values[DEVICE_INDEX].astype(int)]
            return self.gamma
        given = {name: values[name] for name in self.parameters if name in values}
        gamma = self.circuit.gamma(frequency_hz, reference_impedance_ohm, **given)
        return np.asarray(gamma)


@dataclass(frozen=True)
class LoopSource:
    """Device and load sides on one grid; the callable a sweep runner evaluates per chunk."""

    frequency_hz: np.ndarray
    reference_impedance_ohm: float
    device: Side
    load: Side

    @property
    def load_poles_known(self) -> bool:
        """A netlist load: an active one does not leave its poles unknown."""
        return self.load.circuit is not None

    def __call__(self, values: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
        """(Γd, ΓL) for the chunk's variants."""
        device = self.device.evaluate(self.frequency_hz, self.reference_impedance_ohm, values)
        load = self.load.evaluate(self.frequency_hz, self.reference_impedance_ohm, values)
        return device, load
