"""The one preparation: a device and a load, as the user names them, to the analysed pair.

Every command that judges a device against a load (``check``, each ``sweep`` row, ``watch``,
``poles``, ``amplifier`` with a port file) starts here, so they read, align and evaluate alike:

- each side is a Touchstone path (prepared with its termination, fixture and delay setup), a
  :class:`~oneport.reading.touchstone.OnePort` or
  :class:`~oneport.reading.preparation.PreparedPort`, a scikit-rf ``Network``, or a netlist
  (``.cir`` path or :class:`~oneport.circuit.Circuit`);
- the analysis runs in the device's measurement impedance; a measured load is renormalised and
  interpolated onto the device's grid (never extrapolated), a netlist side is evaluated on the
  other side's grid, and two netlists on a grid chosen from their natural frequencies, from DC
  to beyond the last of them (:func:`netlist_grid`);
- a netlist side's own right-half-plane natural frequencies terminated in that impedance are P
  (Z = N + P); its DC value can supply its half of the DC facts; two lumped netlists also give
  the joined circuit's natural frequencies exactly.

The result, :class:`PreparedPair`, holds the arrays, the judgement's
:class:`~oneport.analysis.judgement.Facts`, the records and premise notes, and the circuits, so a
sweep can evaluate them per variant. It decides nothing.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from ..analysis.judgement import (
    Facts,
    LoadSamples,
    characteristic_sign_at_dc,
    dc_sign_of_resistances,
    gamma_of_resistance,
)
from ..analysis.reasons import PairContext
from ..errors import InputError
from ..findings import Finding
from ..reading.alignment import AlignedPair, align, renormalise
from ..reading.files import is_netlist_path
from ..reading.preparation import PortSetup, PreparedPort, load_one_port, prepare
from ..reading.records import InputRecord
from ..reading.touchstone import OnePort

#: The analysis impedance of a netlist device when none is stated, Ω.
DEFAULT_NETLIST_IMPEDANCE_OHM = 50.0


@dataclass(frozen=True)
class Side:
    """One side as prepared: its one-port (own grid for data; the analysis grid for a netlist),
    the circuit when it is a netlist, what was done to it, and its netlist facts.

    ``poles`` is P of a netlist side at its nominal values (0 for data: the premise);
    ``poles_known`` False when the netlist has elements without a polynomial. ``dc_gamma`` is
    Γ(0) of a netlist side in the analysis impedance (None for data, or where the circuit has no
    DC solution).
    """

    role: str
    port: OnePort
    circuit: Any = None
    steps: tuple[str, ...] = ()
    findings: tuple[Finding, ...] = ()
    poles: int = 0
    poles_known: bool = True
    note: str | None = None
    dc_gamma: float | None = None

    @property
    def is_netlist(self) -> bool:
        """True for a netlist side."""
        return self.circuit is not None

    @property
    def lumped(self) -> bool:
        """A netlist whose natural frequencies are computable (no lines, blocks, q= loss)."""
        return self.circuit is not None and all(e.rational for e in self.circuit.elements)


@dataclass(frozen=True)
class PreparedPair:
    """Device and load on one grid in the analysis impedance, with everything the judgement and
    its description need (see the module docstring)."""

    frequency_hz: np.ndarray = field(repr=False)
    gamma_device: np.ndarray = field(repr=False)
    gamma_load: np.ndarray = field(repr=False)
    reference_impedance_ohm: float
    device: Side
    load: Side
    facts: Facts
    context: PairContext
    alignment: AlignedPair | None = None
    dc_facts: tuple[float | None, float | None] = (None, None)

    @property
    def inputs(self) -> tuple[InputRecord, InputRecord]:
        """What was read, per side."""
        return self.context.inputs

    @property
    def loop_gain(self) -> np.ndarray:
        """L = Γd·ΓL on the grid."""
        return self.gamma_device * self.gamma_load


def prepare_pair(
    device: Any,
    load: Any,
    *,
    measurement_impedance_ohm: float | None = None,
    device_dc_resistance_ohm: float | None = None,
    load_dc_resistance_ohm: float | None = None,
    gamma_uncertainty: float | tuple[float, float] | None = None,
    device_setup: PortSetup | None = None,
    load_setup: PortSetup | None = None,
    frequency_hz: Any = None,
) -> PreparedPair:
    """Read, prepare, align and evaluate a device and a load into the analysed pair.

    Parameters
    ----------
    device, load : path, OnePort, PreparedPort, skrf.Network or Circuit
        The two sides (see the module docstring).
    measurement_impedance_ohm : float, optional
        The impedance the device was measured in, if its file was renormalised later; for a
        netlist device, the analysis impedance (default 50 Ω).
    device_dc_resistance_ohm, load_dc_resistance_ohm : float, optional
        DC facts, Ω; one may be left out when the other side is a netlist (its own DC value is
        used).
    gamma_uncertainty : float or (float, float), optional
        Worst-case absolute error of |Γ| for both sides, or (device, load).
    device_setup, load_setup : PortSetup, optional
        Termination, mixed mode, fixture and delay of a Touchstone side.
    frequency_hz : array_like, optional
        The grid when both sides are netlists; default: chosen by :func:`netlist_grid`.
    """
    device_errors, load_errors = _uncertainties(gamma_uncertainty)
    from .options import positive_resistance

    measurement_impedance_ohm = positive_resistance(
        measurement_impedance_ohm, "--measurement-impedance"
    )
    device_circuit, load_circuit = as_circuit(device), as_circuit(load)
    for circuit, setup, role in (
        (device_circuit, device_setup, "device"),
        (load_circuit, load_setup, "load"),
    ):
        if (
            circuit is not None
            and setup is not None
            and setup != PortSetup(terminated_port=setup.terminated_port)
        ):
            raise InputError(
                f"{circuit.source}: termination, fixture and delay options apply to Touchstone"
                f" files; describe them in the {role} netlist instead"
            )
    grid_chosen = False
    netlist_limit = False
    natural = None
    exact_rhp = None
    alignment = None
    if device_circuit is None and load_circuit is None:
        device_side = _data_side(device, device_setup, "device")
        load_side = _data_side(load, load_setup, "load")
        alignment = align(device_side.port, load_side.port, measurement_impedance_ohm)
        z0 = alignment.reference_impedance_ohm
    elif device_circuit is not None and load_circuit is None:
        load_side = _data_side(load, load_setup, "load")
        z0 = measurement_impedance_ohm or DEFAULT_NETLIST_IMPEDANCE_OHM
        device_side = netlist_side(
            device, device_circuit, load_side.port.frequency_hz, z0, "device"
        )
        alignment = align(device_side.port, load_side.port)
    elif device_circuit is None:
        device_side = _data_side(device, device_setup, "device")
        z0 = measurement_impedance_ohm or device_side.port.reference_impedance_ohm
        load_side = netlist_side(load, load_circuit, device_side.port.frequency_hz, z0, "load")
        alignment = align(device_side.port, load_side.port, measurement_impedance_ohm)
    else:
        z0 = measurement_impedance_ohm or DEFAULT_NETLIST_IMPEDANCE_OHM
        lumped = all(e.rational for c in (device_circuit, load_circuit) for e in c.elements)
        if lumped:
            from ..circuit.natural import joined_natural_frequencies

            try:
                natural = joined_natural_frequencies(device_circuit, load_circuit)
            except InputError:
                natural = None  # equations too ill-scaled for the eigenproblem: no exact roots
        if frequency_hz is None:
            _refuse_blocks(device_circuit, load_circuit)
            grid = netlist_grid(device_circuit, load_circuit, z0)
            grid_chosen = True
        else:
            grid = _given_grid(frequency_hz)
        if lumped:
            from ..circuit.natural import lumped_pair_facts

            exact, beyond = lumped_pair_facts(
                device_circuit, load_circuit, z0, {}, {}, 1, float(grid[-1])
            )
            netlist_limit = bool(beyond[0])
            exact_rhp = int(exact[0])
        device_side = netlist_side(device, device_circuit, grid, z0, "device")
        load_side = netlist_side(load, load_circuit, grid, z0, "load")
    if alignment is not None:
        frequency = alignment.frequency_hz
        gamma_device, gamma_load = alignment.gamma_device, alignment.gamma_load
    else:
        frequency = device_side.port.frequency_hz
        gamma_device, gamma_load = device_side.port.gamma, load_side.port.gamma
    dc_sign, dc_words, dc_facts = _dc_facts(
        device_side,
        load_side,
        device_dc_resistance_ohm,
        load_dc_resistance_ohm,
        z0,
        include_netlists=not (grid_chosen and frequency[0] == 0.0),
    )
    load_samples = None
    if not load_side.is_netlist:
        own = load_side.port
        load_samples = LoadSamples(
            own.frequency_hz,
            renormalise(own.gamma, own.reference_impedance_ohm, z0),
            own.source,
        )
    facts = Facts(
        known_poles=device_side.poles + load_side.poles,
        dc_sign=dc_sign,
        device_uncertainty=device_errors,
        load_uncertainty=load_errors,
        load_is_netlist=load_side.is_netlist,
        load_samples=load_samples,
        exact_rhp=exact_rhp,
        netlist_limit=netlist_limit,
        features_on_grid=not grid_chosen,
        load_probe=NetlistProbe(load_side.circuit, z0) if load_side.is_netlist else None,
    )
    inputs = (
        replace(InputRecord.of("device", device_side.port, z0), preparation=device_side.steps),
        replace(InputRecord.of("load", load_side.port, z0), preparation=load_side.steps),
    )
    notes = tuple(side.note for side in (device_side, load_side) if side.note)
    if dc_words and dc_words != "stated":
        notes += (f"The DC facts came from {dc_words}.",)
    context = PairContext(
        inputs=inputs,
        device_grid=None if device_side.is_netlist else device_side.port.frequency_hz,
        load_grid=None if load_side.is_netlist else load_side.port.frequency_hz,
        device_points_dropped=(
            (alignment.device_points_dropped_below, alignment.device_points_dropped_above)
            if alignment is not None
            else (0, 0)
        ),
        load_points_in_band=alignment.load_points_in_band if alignment is not None else 0,
        device_renormalised_from_ohm=(
            alignment.device_renormalised_from_ohm if alignment is not None else None
        ),
        premise_notes=notes,
        dc_facts=dc_words,
        natural_frequencies=natural,
        findings=device_side.findings + load_side.findings,
        grid_chosen=grid_chosen,
        dc_resistances_ohm=dc_facts,
    )
    return PreparedPair(
        frequency_hz=frequency,
        gamma_device=gamma_device,
        gamma_load=gamma_load,
        reference_impedance_ohm=float(z0),
        device=device_side,
        load=load_side,
        facts=facts,
        context=context,
        alignment=alignment,
        dc_facts=dc_facts,
    )


@dataclass(frozen=True)
class PreparedDevice:
    """A measured device alone, in its measurement impedance (for a class of loads)."""

    port: OnePort
    record: InputRecord
    findings: tuple[Finding, ...]


def prepare_device(
    device: Any,
    *,
    measurement_impedance_ohm: float | None = None,
    device_setup: PortSetup | None = None,
) -> PreparedDevice:
    """The device side of :func:`prepare_pair` without a load: read and prepared the same way
    (termination, fixture, delay) and referred to its measurement impedance; for the return-loss
    bound of ``check --load-return-loss`` and ``amplifier --port-return-loss`` alike. A netlist
    device is refused: a class of loads needs the device's data."""
    if as_circuit(device) is not None:
        raise InputError(
            "a bound over a class of loads needs a measured device file, not a netlist"
        )
    side = _data_side(device, device_setup, "device")
    port = side.port
    findings = side.findings
    z0 = port.reference_impedance_ohm
    if measurement_impedance_ohm is not None:
        if not measurement_impedance_ohm > 0:
            raise InputError(
                f"measurement impedance {measurement_impedance_ohm!r} ohm: a positive number of"
                " ohms is needed"
            )
        if measurement_impedance_ohm != z0:
            findings += (
                Finding(
                    "device-renormalised",
                    f"The device file is referred to {z0:g} ohm but was stated to be measured"
                    f" in {measurement_impedance_ohm:g} ohm; it was brought back to its"
                    " measurement impedance.",
                    {"file_reference_impedance_ohm": z0},
                ),
            )
            port = replace(
                port,
                gamma=renormalise(port.gamma, z0, measurement_impedance_ohm),
                reference_impedance_ohm=float(measurement_impedance_ohm),
            )
    record = replace(
        InputRecord.of("device", side.port, port.reference_impedance_ohm),
        preparation=side.steps,
    )
    return PreparedDevice(port, record, findings)


def prepare_load(
    load: Any,
    frequency_hz: np.ndarray,
    reference_impedance_ohm: float,
    setup: PortSetup | None = None,
) -> Side:
    """One load as every command takes it, for a product that brings its own device grid (the
    oscillator): a Touchstone path (with ``setup``), ``OnePort``, ``PreparedPort`` or
    scikit-rf ``Network`` is read as it is (align it yourself: ``reading.alignment.align``); a
    netlist is evaluated on ``frequency_hz`` in ``reference_impedance_ohm``, with its own
    right-half-plane natural frequencies counted (``Side.poles``, ``Side.note``)."""
    circuit = as_circuit(load)
    if circuit is None:
        return _data_side(load, setup, "load")
    return netlist_side(load, circuit, _given_grid(frequency_hz), reference_impedance_ohm, "load")


@dataclass(frozen=True)
class NetlistProbe:
    """A netlist load evaluated wherever the judgement asks (``Facts.load_probe``): between the
    analysis grid's samples, where the grid alone would leave a feature of the load unseen.

    ``parameters`` are per-variant values (arrays over the flattened variants) of a sweep's
    chunk; without them the netlist's own values hold.
    """

    circuit: Any
    reference_impedance_ohm: float
    parameters: dict[str, np.ndarray] = field(default_factory=dict)

    def __call__(self, rows: np.ndarray, frequency_hz: np.ndarray) -> np.ndarray:
        """ΓL of variants ``rows`` at ``frequency_hz`` (shape (k, m), one row per variant)."""
        frequency_hz = np.asarray(frequency_hz, dtype=float)
        rows = np.asarray(rows)
        gamma = np.empty(frequency_hz.shape, dtype=complex)
        # One evaluation per variant over every frequency its rows ask for (each interval asks
        # for its own; one call per interval cost seconds on a long ladder).
        variants = np.unique(rows) if self.parameters else rows[:1]
        for variant in variants:
            members = np.flatnonzero(rows == variant) if self.parameters else np.arange(rows.size)
            grid, back = np.unique(frequency_hz[members], return_inverse=True)
            given = {name: values[[variant]] for name, values in self.parameters.items()}
            values = np.asarray(self.circuit.gamma(grid, self.reference_impedance_ohm, **given))
            gamma[members] = values.reshape(-1)[back].reshape(members.size, -1)
        return gamma


def as_circuit(source: Any) -> Any:
    """The :class:`~oneport.circuit.Circuit` a source describes, or None for data."""
    if isinstance(source, str | Path):
        if not is_netlist_path(source):
            return None  # a Touchstone file: the circuit package is not even imported
        from ..circuit import read_circuit

        return read_circuit(source)
    if isinstance(source, OnePort | PreparedPort):
        return None
    from ..circuit import Circuit

    return source if isinstance(source, Circuit) else None


def _data_side(source: Any, setup: PortSetup | None, role: str) -> Side:
    if setup is not None and setup != PortSetup(terminated_port=setup.terminated_port):
        if not isinstance(source, str | Path):
            raise InputError(
                f"the {role}'s termination, fixture and delay options apply to a Touchstone file"
                f" given by its path; apply them to the {role} before handing it in"
            )
        source = prepare(source, setup, role)
    # What the reader could not confirm (no option line, ignored port-impedance comments)
    # travels on the port's record and joins the side's findings.
    if isinstance(source, PreparedPort):
        port = source.one_port
        return Side(role, port, steps=source.steps, findings=source.findings + port.warnings)
    port = load_one_port(source, role)
    return Side(role, port, findings=port.warnings)


def netlist_side(source: Any, circuit: Any, frequency_hz: np.ndarray, z0: float, role: str) -> Side:
    """A netlist side evaluated on ``frequency_hz`` in ``z0``, with its P, note and Γ(0)."""
    from ..circuit import one_port_from_circuit

    # Evaluate from the path where there is one, so the record carries the netlist's checksum.
    port = one_port_from_circuit(
        source if isinstance(source, str | Path) else circuit, frequency_hz, z0
    )
    poles, known, note = netlist_poles(circuit, role, z0)
    return Side(
        role,
        port,
        circuit=circuit,
        poles=poles,
        poles_known=known,
        note=note,
        dc_gamma=netlist_dc_gamma(circuit, z0),
    )


def netlist_poles(circuit: Any, role: str, z0: float) -> tuple[int, bool, str]:
    """Right-half-plane natural frequencies of a netlist side terminated in ``z0`` (P), whether
    they could be computed, and the premise note that says so."""
    from ..circuit.natural import right_half_plane_counts

    try:
        unstable = int(right_half_plane_counts(circuit, z0, {})[0])
    except InputError:
        return (
            0,
            False,
            (
                f"The {role} netlist ({circuit.source}) has elements without a polynomial (lines,"
                f" blocks, constant Q): its stability terminated in {z0:g} ohm was not checked and"
                " is assumed (P = 0)."
            ),
        )
    if unstable:
        return (
            unstable,
            True,
            (
                f"The {role} netlist ({circuit.source}) terminated in {z0:g} ohm has {unstable}"
                " natural frequencies in the right half plane (P); they are poles of F and are"
                " added to the count (Z = N + P)."
            ),
        )
    return (
        0,
        True,
        (
            f"The {role} netlist ({circuit.source}) was checked: terminated in {z0:g} ohm all its"
            " natural frequencies lie in the left half plane (P = 0)."
        ),
    )


def netlist_dc_gamma(circuit: Any, z0: float, params: dict[str, Any] | None = None) -> Any:
    """Γ(0) of a netlist in ``z0`` (an array over parameter sets when ``params`` holds arrays);
    None where the circuit has no unique DC solution."""
    try:
        gamma = np.asarray(circuit.gamma(np.array([0.0]), z0, **(params or {})))[..., 0]
    except InputError:
        return None
    if not np.all(np.isfinite(gamma)):
        return None
    return gamma.real if gamma.ndim else float(gamma.real)


def _dc_facts(
    device: Side,
    load: Side,
    device_ohm: float | None,
    load_ohm: float | None,
    z0: float,
    include_netlists: bool,
) -> tuple[int | None, str | None, tuple[float | None, float | None]]:
    """The sign of F(0) from DC facts, where they came from, and the stated resistances."""
    stated = (device_ohm, load_ohm)
    if device_ohm is not None and load_ohm is not None:
        return dc_sign_of_resistances(device_ohm, load_ohm, z0), "stated", stated
    if device_ohm is None and load_ohm is None:
        both = device.is_netlist and load.is_netlist and include_netlists
        if both and device.dc_gamma is not None and load.dc_gamma is not None:
            sign = int(characteristic_sign_at_dc(device.dc_gamma, load.dc_gamma))
            if sign:
                return sign, "both netlists' DC values", stated
        return None, None, stated
    given_role, given_ohm, other = (
        ("device", device_ohm, load) if device_ohm is not None else ("load", load_ohm, device)
    )
    if not other.is_netlist:
        raise InputError(
            "DC resistances: give both the device's and the load's (they fix F(0) together),"
            " or neither; only a netlist side supplies its own"
        )
    assert given_ohm is not None
    if given_ohm == -z0:
        dc_sign_of_resistances(given_ohm, 1.0, z0)  # raises the one line
    if other.dc_gamma is None:
        raise InputError(
            f"{other.circuit.source}: the {other.role} netlist has no unique DC solution, so it"
            f" cannot supply its DC value: give --{other.role}-dc-resistance as well"
        )
    given_gamma = gamma_of_resistance(given_ohm, z0)
    pair = (
        (given_gamma, other.dc_gamma) if given_role == "device" else (other.dc_gamma, given_gamma)
    )
    sign = int(characteristic_sign_at_dc(*pair))
    if not sign:
        raise InputError(
            "DC facts: the stated resistance and the netlist's DC value put a root at s = 0;"
            " the count is undefined"
        )
    return sign, f"--{given_role}-dc-resistance and the {other.role} netlist's own DC value", stated


def _uncertainties(value: float | tuple[float, float] | None) -> tuple[float, float]:
    if isinstance(value, tuple):
        return float(value[0]), float(value[1])
    return float(value or 0.0), float(value or 0.0)


def _refuse_blocks(*circuits: Any) -> None:
    """Two netlists and no grid: a Touchstone block is known only inside its band, so the tool
    cannot choose the grid; say which band to give."""
    from ..circuit.elements import Block

    for circuit in circuits:
        for element in circuit.elements:
            if isinstance(element, Block):
                band = element.data.frequency_hz
                raise InputError(
                    f"{circuit.source}: {element.where()} is a Touchstone block, known only"
                    f" from {band[0]:.6g} Hz to {band[-1]:.6g} Hz: give the grid (--start,"
                    " --stop, --points) inside that band"
                )


def _given_grid(frequency_hz: Any) -> np.ndarray:
    grid = np.asarray(frequency_hz, dtype=float)
    if grid.ndim != 1 or grid.size < 2 or np.any(np.diff(grid) <= 0) or grid[0] < 0:
        raise InputError("the frequency grid must be increasing, non-negative frequencies in Hz")
    return grid


# --------------------------------------------------------------------------------------------
# Two netlists: where to evaluate them

#: Points per decade of the base grid between the lowest and highest natural frequencies.
GRID_POINTS_PER_DECADE = 100
#: The base grid reaches this factor below the lowest and above the highest natural frequency.
GRID_REACH_DOWN = 1e3
GRID_REACH_UP = 1e2
#: Around each resonance, samples at σ/2 steps out to this many |σ| either side.
PATCH_HALF_WIDTH = 20.0
#: Refinement: an interval is halved while F's phase, or either Γ, moves by more than this.
REFINE_PHASE_RAD = np.deg2rad(10.0)
REFINE_GAMMA_STEP = 0.05
#: At most this many points.
GRID_POINT_LIMIT = 200_000
#: Without natural frequencies (lines, q= loss): the probe grid's span, Hz, its points per
#: decade, and the |L| it must stay below above the chosen top's tenth.
PROBE_SPAN_HZ = (1e3, 1e12)
PROBE_POINTS_PER_DECADE = 200
PROBE_LOOP_GAIN = 0.5


def netlist_grid(device: Any, load: Any, z0: float) -> np.ndarray:
    """A grid on which two netlists' loop is resolved, from DC to where the answer is settled.

    For two lumped netlists: a log grid from ``GRID_REACH_DOWN`` below the lowest to
    ``GRID_REACH_UP`` above the highest natural frequency of every pole and zero of Γd, ΓL (each
    side terminated in ±Z0) and of F (the joined circuit), with patches of samples across each
    resonance, then halved where F's phase or either Γ still moves too much between samples;
    0 Hz first when the circuits have a DC solution and F(0) ≠ 0. Beyond the last natural
    frequency a rational L has reached its limit. With lines or constant-Q elements (no natural
    frequencies) the span is probed from 1 kHz to 1 THz and cut a decade above where |L| last
    reaches 0.5.
    """
    from ..circuit.natural import finite_eigenvalues, joined_natural_frequencies, pencils

    lumped = all(e.rational for c in (device, load) for e in c.elements)
    roots: list[np.ndarray] = []
    if lumped:
        try:
            roots.append(joined_natural_frequencies(device, load))
            for circuit in (device, load):
                for termination in (z0, -z0):
                    constant, slope = pencils(circuit, termination, {})
                    roots.append(finite_eigenvalues(constant[0], slope[0], circuit.source))
        except InputError:  # equations too ill-scaled for the eigenproblem: probe instead
            lumped, roots = False, []
    critical = np.concatenate(roots) if roots else np.zeros(0, dtype=complex)
    sizes = np.abs(critical)
    sizes = sizes[sizes > 0]

    def loop(grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        return device.gamma(grid, z0), load.gamma(grid, z0)

    if sizes.size:
        low = sizes.min() / GRID_REACH_DOWN / (2 * math.pi)
        high = GRID_REACH_UP * sizes.max() / (2 * math.pi)
    else:
        low, high = PROBE_SPAN_HZ
        if not lumped:
            decades = math.log10(high / low)
            probe = np.geomspace(low, high, int(decades * PROBE_POINTS_PER_DECADE) + 1)
            gamma_device, gamma_load = loop(probe)
            loud = np.flatnonzero(np.abs(gamma_device * gamma_load) >= PROBE_LOOP_GAIN)
            if loud.size and loud[-1] < probe.size - 1:
                high = min(10.0 * probe[loud[-1]], PROBE_SPAN_HZ[1])
    decades = max(math.log10(high / low), 1.0)
    grid = np.geomspace(low, high, int(decades * GRID_POINTS_PER_DECADE) + 1)
    patches = [grid]
    for root in critical:
        if root.imag <= 0:
            continue
        width = max(abs(root.real), 1e-9 * abs(root))
        offsets = np.linspace(-PATCH_HALF_WIDTH, PATCH_HALF_WIDTH, 81) * width
        patch = (root.imag + offsets) / (2 * math.pi)
        patches.append(patch[(patch > low) & (patch < high)])
    grid = np.unique(np.concatenate(patches))
    for _ in range(12):
        gamma_device, gamma_load = loop(grid)
        characteristic = 1.0 - gamma_device * gamma_load
        phase = np.abs(np.angle(characteristic[1:] / characteristic[:-1]))
        moves = (
            (phase > REFINE_PHASE_RAD)
            | (np.abs(np.diff(gamma_device)) > REFINE_GAMMA_STEP)
            | (np.abs(np.diff(gamma_load)) > REFINE_GAMMA_STEP)
        )
        if not moves.any() or grid.size + int(moves.sum()) > GRID_POINT_LIMIT:
            break
        middles = np.sqrt(grid[:-1][moves] * grid[1:][moves])
        grid = np.unique(np.concatenate([grid, middles]))
    if _dc_point(device, load, z0):
        grid = np.concatenate([[0.0], grid])
    return grid


def _dc_point(device: Any, load: Any, z0: float) -> bool:
    """Whether 0 Hz can start the grid: both circuits solve there and F(0) is clearly not 0."""
    device_dc, load_dc = netlist_dc_gamma(device, z0), netlist_dc_gamma(load, z0)
    if device_dc is None or load_dc is None:
        return False
    return abs(1.0 - device_dc * load_dc) > 1e-9
