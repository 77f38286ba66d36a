"""Where a sweep's variants come from: netlists with parameters, or lists of measured devices.

A source is a picklable callable (it travels to Dask workers): parameter arrays in, device and
load reflections on the common grid out, both referred to the analysis impedance. Its
:meth:`LoopSource.facts` gives each chunk's variants what the single check knows besides the
reflections — the same preparation (``oneport.products.pair``) made per variant: P of every
netlist side (its own right-half-plane natural frequencies terminated in the analysis impedance,
Z = N + P), the DC facts where a netlist supplies its half, the joined circuit's exact count for
two lumped netlists and whether the grid reaches beyond their natural frequencies, the measured
load's own grid — so each row is what ``oneport check`` says.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from pathlib import Path
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
            self.dc_from_netlists
            or self.device.dc_gamma is not None
            or self.load.dc_gamma is not None
        ):
            sign = characteristic_sign_at_dc(
                self.device.dc(z0, values, variants), self.load.dc(z0, values, variants)
            )
        exact: Any = None
        limit: Any = False
        if self.device.lumped and self.load.lumped:
            from ...circuit.natural import lumped_pair_facts

            exact, limit = lumped_pair_facts(
                self.device.circuit,
                self.load.circuit,
                z0,
                self.device.given(values),
                self.load.given(values),
                variants,
                float(self.frequency_hz[-1]),
            )
        samples = self.load.samples
        if samples is None and self.load.circuit is None and self.load.gamma is not None:
            # A measured load given only on the analysis grid: that grid is its own.
            samples = LoadSamples(self.frequency_hz, self.load.gamma, "load")
        probe = None
        if self.load.circuit is not None:
            from ..pair import NetlistProbe

            given = {
                name: np.broadcast_to(np.asarray(value, dtype=float), (variants,))
                for name, value in self.load.given(values).items()
            }
            probe = NetlistProbe(self.load.circuit, z0, given)
        return replace(
            self.base,
            known_poles=poles,
            dc_sign=sign,
            load_is_netlist=self.load.circuit is not None,
            load_samples=samples,
            exact_rhp=exact,
            netlist_limit=limit,
            load_probe=probe,
        )


@dataclass(frozen=True)
class SweepSetup:
    """What ``oneport sweep`` runs: the source, how many device files, what was read, warnings,
    and the netlist parameters that may vary."""

    source: LoopSource
    devices: int
    inputs: list[dict[str, Any]]
    warnings: tuple[Any, ...]
    parameters: dict[str, float]


def prepare_sweep(
    devices: list[Any],
    load: Any,
    *,
    measurement_impedance_ohm: float | None = None,
    device_dc_resistance_ohm: float | None = None,
    load_dc_resistance_ohm: float | None = None,
    gamma_uncertainty: float | tuple[float, float] | None = None,
    frequency_hz: Any = None,
) -> SweepSetup:
    """The sweep's source, built by the one preparation the single check uses
    (:func:`oneport.products.pair.prepare_pair`, once per device file): same reading,
    alignment, netlist evaluation, DC facts and guards, so each row is what ``oneport check``
    says of that variant. Several device files share the first one's grid (the others are
    interpolated onto it) and reference impedance; one device may be a netlist."""
    from ...analysis.judgement import gamma_of_resistance
    from ...findings import Finding
    from ...reading.alignment import interpolate
    from ..pair import prepare_pair

    paths = [str(path) if isinstance(path, Path) else path for path in devices]
    if len(paths) > 1 and any(pair_source_is_netlist(path) for path in paths):
        raise InputError("sweep: give one device netlist, or one or more Touchstone files")
    options: dict[str, Any] = {
        "measurement_impedance_ohm": measurement_impedance_ohm,
        "device_dc_resistance_ohm": device_dc_resistance_ohm,
        "load_dc_resistance_ohm": load_dc_resistance_ohm,
        "gamma_uncertainty": gamma_uncertainty,
        "frequency_hz": frequency_hz,
    }
    pairs = [prepare_pair(path, load, **options) for path in paths]
    first = pairs[0]
    grid, z0 = first.frequency_hz, first.reference_impedance_ohm
    device_circuit, load_circuit = first.device.circuit, first.load.circuit
    device_gamma = (
        None
        if device_dc_resistance_ohm is None
        else gamma_of_resistance(device_dc_resistance_ohm, z0)
    )
    load_gamma = (
        None if load_dc_resistance_ohm is None else gamma_of_resistance(load_dc_resistance_ohm, z0)
    )
    if device_circuit is None:
        gammas = []
        for pair in pairs:
            if pair.reference_impedance_ohm != z0:
                raise InputError(
                    f"{pair.device.port.source}: analysed in {pair.reference_impedance_ohm:g}"
                    f" ohm, the first device in {z0:g} ohm; give device files of one reference"
                    " impedance"
                )
            here = pair.frequency_hz
            if here[0] > grid[0] or here[-1] < grid[-1]:
                raise InputError(
                    f"{pair.device.port.source}: does not cover {first.device.port.source}'s"
                    " band; device files must cover the same frequencies"
                )
            gammas.append(interpolate(here, pair.gamma_device, grid))
        device_side = Side(
            gamma=np.stack(gammas) if len(gammas) > 1 else gammas[0], dc_gamma=device_gamma
        )
    else:
        device_side = Side(
            circuit=device_circuit,
            parameters=tuple(device_circuit.parameters),
            dc_gamma=device_gamma,
        )
    if load_circuit is None:
        load_side = Side(
            gamma=first.gamma_load, samples=first.facts.load_samples, dc_gamma=load_gamma
        )
    else:
        load_side = Side(
            circuit=load_circuit, parameters=tuple(load_circuit.parameters), dc_gamma=load_gamma
        )
    source = LoopSource(
        grid,
        z0,
        device_side,
        load_side,
        base=replace(first.facts, known_poles=0, dc_sign=None, exact_rhp=None, netlist_limit=False),
        dc_from_netlists=first.context.dc_facts not in (None, "stated"),
    )
    warnings = list(first.context.findings)
    for side in (first.device, first.load):
        if side.is_netlist and not side.poles_known and side.note:
            warnings.append(Finding("netlist-poles-assumed", side.note))
    return SweepSetup(
        source=source,
        devices=len(paths) if device_circuit is None else 1,
        inputs=[pair.inputs[0].to_dict() for pair in pairs] + [first.inputs[1].to_dict()],
        warnings=tuple(warnings),
        parameters={
            **(device_circuit.parameters if device_circuit is not None else {}),
            **(load_circuit.parameters if load_circuit is not None else {}),
        },
    )


def pair_source_is_netlist(source: Any) -> bool:
    """Whether a side names a netlist (a ``.cir`` path or a Circuit)."""
    from ..pair import as_circuit

    if isinstance(source, str | Path):
        from ...circuit import is_circuit_path

        return is_circuit_path(source)
    return as_circuit(source) is not None
