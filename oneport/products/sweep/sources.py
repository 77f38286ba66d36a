"""Where a sweep's variants come from: netlists with parameters, or lists of measured devices.

A source is a picklable callable (it travels to Dask workers): parameter arrays in, device and
load reflections on the common grid out, both referred to the analysis impedance. Its
:meth:`LoopSource.facts` gives each chunk's variants what the single check knows besides the
reflections — the same preparation (``oneport.products.pair``) made per variant: P of every
netlist side (its own right-half-plane natural frequencies terminated in the analysis impedance,
Z = N + P), the DC facts where a netlist supplies its half, the joined circuit's exact count for
two lumped netlists, the measured load's own grid — so each row is what ``oneport check`` says.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from ...analysis.judgement import Facts, LoadSamples, characteristic_sign_at_dc
from ...errors import InputError

#: The column naming which measured device file a variant uses (a list sweep).
DEVICE_INDEX = "device_index"


@dataclass(frozen=True)
class Side:
    """One side of the loop: fixed reflections (shape (n,) or (D, n)) or a circuit.

    ``samples`` is a measured load's own grid (for its hidden features); ``dc_gamma`` a stated
    Γ(0) of this side (from its DC resistance), which a netlist side otherwise supplies itself
    when ``LoopSource.dc_from_netlists`` asks for it.
    """

    gamma: np.ndarray | None = None
    circuit: Any = None
    parameters: tuple[str, ...] = ()
    samples: LoadSamples | None = field(default=None, repr=False)
    dc_gamma: float | None = None

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
        gamma = self.circuit.gamma(frequency_hz, reference_impedance_ohm, **self.given(values))
        return np.asarray(gamma)

    def given(self, values: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
        """This side's parameters among ``values``."""
        return {name: values[name] for name in self.parameters if name in values}

    def poles(
        self, reference_impedance_ohm: float, values: dict[str, np.ndarray], variants: int
    ) -> np.ndarray:
        """P of this side per variant: 0 for data (the premise) and for a netlist without a
        polynomial (assumed, as the single check states)."""
        if self.circuit is None:
            return np.zeros(variants, dtype=int)
        from ...circuit.natural import right_half_plane_counts

        try:
            counts = right_half_plane_counts(
                self.circuit, reference_impedance_ohm, self.given(values)
            )
        except InputError:
            return np.zeros(variants, dtype=int)
        return np.broadcast_to(counts, (variants,))

    def dc(
        self, reference_impedance_ohm: float, values: dict[str, np.ndarray], variants: int
    ) -> np.ndarray:
        """Γ(0) per variant: stated, or the netlist's own (NaN where there is none)."""
        if self.dc_gamma is not None:
            return np.full(variants, self.dc_gamma)
        if self.circuit is None:
            return np.full(variants, np.nan)
        from ..pair import netlist_dc_gamma

        gamma = netlist_dc_gamma(self.circuit, reference_impedance_ohm, self.given(values))
        if gamma is None:
            return np.full(variants, np.nan)
        return np.broadcast_to(np.asarray(gamma, dtype=float), (variants,))

    @property
    def lumped(self) -> bool:
        """A netlist with polynomial equations."""
        return self.circuit is not None and all(e.rational for e in self.circuit.elements)


@dataclass(frozen=True)
class LoopSource:
    """Device and load sides on one grid; the callable a sweep runner evaluates per chunk.

    ``base`` holds the facts every variant shares (stated |Γ| errors); ``dc_from_netlists``
    makes the DC facts per variant from the stated Γ(0) and the netlist sides' own.
    """

    frequency_hz: np.ndarray
    reference_impedance_ohm: float
    device: Side
    load: Side
    base: Facts = field(default_factory=Facts)
    dc_from_netlists: bool = False

    @property
    def load_poles_known(self) -> bool:
        """A netlist load: an active one does not leave its poles unknown."""
        return self.load.circuit is not None

    def __call__(self, values: dict[str, np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
        """(Γd, ΓL) for the chunk's variants."""
        device = self.device.evaluate(self.frequency_hz, self.reference_impedance_ohm, values)
        load = self.load.evaluate(self.frequency_hz, self.reference_impedance_ohm, values)
        return device, load

    def facts(self, values: dict[str, np.ndarray], dc_sign: int | None = None) -> Facts:
        """What the judgement knows of the chunk's variants besides their reflections."""
        variants = next(iter(values.values())).shape[0] if values else 1
        z0 = self.reference_impedance_ohm
        poles = self.device.poles(z0, values, variants) + self.load.poles(z0, values, variants)
        sign: Any = dc_sign
        if sign is None and (
            self.dc_from_netlists or self.device.dc_gamma is not None or self.load.dc_gamma is not None
        ):
            sign = characteristic_sign_at_dc(
                self.device.dc(z0, values, variants), self.load.dc(z0, values, variants)
            )
        exact = None
        if self.device.lumped and self.load.lumped:
            from ...circuit.natural import joined_right_half_plane_counts

            exact = joined_right_half_plane_counts(
                self.device.circuit,
                self.load.circuit,
                self.device.given(values),
                self.load.given(values),
                variants,
            )
        samples = self.load.samples
        if samples is None and self.load.circuit is None and self.load.gamma is not None:
            # A measured load given only on the analysis grid: that grid is its own.
            samples = LoadSamples(self.frequency_hz, self.load.gamma, "load")
        return replace(
            self.base,
            known_poles=poles,
            dc_sign=sign,
            load_is_netlist=self.load.circuit is not None,
            load_samples=samples,
            exact_rhp=exact,
            netlist_limit=False,
        )
