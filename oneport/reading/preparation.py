"""From the files a user names to the one-port at the plane where device and load meet.

Two-port devices are terminated (``--terminate``, ``--terminate-impedance``), balanced devices
measured single-ended become a differential one-port (``--differential-ports``), and measured
fixtures and line lengths between the measured plane and the connection plane are removed or
added (``--device-fixture``, ``--device-delay`` and the load-side twins). This room reads the
extra files and calls the array functions of ``planes.py``; it decides nothing.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np

from ..errors import InputError
from ..findings import Finding
from .alignment import interpolate, renormalise
from .touchstone import Multiport, OnePort, one_port_from_network, read_one_port, read_touchstone


@dataclass(frozen=True)
class PortSetup:
    """How to turn one side's file into its one-port (every field optional)."""

    terminate_path: str | None = None
    terminate_impedance_ohm: float | None = None
    terminated_port: int = 2
    differential_pairs: tuple[tuple[int, int], ...] = ()
    fixture_path: str | None = None
    delay_s: float = 0.0


@dataclass(frozen=True)
class PreparedPort:
    """A one-port ready for the check, with what was done to it and what was found on the way."""

    one_port: OnePort
    steps: tuple[str, ...] = ()
    findings: tuple[Finding, ...] = field(default=())


def prepare(path: str | Path, setup: PortSetup, role: str) -> PreparedPort:
    """Read ``path`` and apply ``setup``: termination or mixed mode, fixture, delay."""
    from . import planes

    steps: list[str] = []
    findings: list[Finding] = []
    if setup.terminate_path is not None and setup.terminate_impedance_ohm is not None:
        raise InputError("give --terminate FILE or --terminate-impedance OHMS, not both")
    if setup.differential_pairs and (setup.terminate_path or setup.terminate_impedance_ohm):
        raise InputError("--differential-ports and --terminate exclude each other")
    if setup.terminate_path is not None or setup.terminate_impedance_ohm is not None:
        port, described = _terminated(path, setup, findings)
        steps.append(described)
    elif setup.differential_pairs:
        port = _differential(path, setup.differential_pairs)
        steps.append(f"differential one-port of ports {setup.differential_pairs[0]}")
    else:
        port = read_one_port(path)
    if setup.fixture_path is not None:
        port = _deembedded(port, setup.fixture_path, findings)
        steps.append(f"fixture {setup.fixture_path} de-embedded")
        findings.append(
            Finding(
                "premise-through-fixture",
                f"The {role} was de-embedded from {setup.fixture_path}: the premise that the"
                " device is stable applies to it as measured, through the fixture.",
            )
        )
    if setup.delay_s:
        port = replace(port, gamma=planes.shift_plane(port.gamma, port.frequency_hz, setup.delay_s))
        verb = "added" if setup.delay_s > 0 else "removed"
        steps.append(f"{abs(setup.delay_s) * 1e12:g} ps of line {verb}")
    return PreparedPort(port, tuple(steps), tuple(findings))


def _terminated(path: str | Path, setup: PortSetup, findings: list[Finding]) -> tuple[OnePort, str]:
    from . import planes

    two_port = _two_port(path)
    frequency_hz = two_port.frequency_hz
    if setup.terminate_impedance_ohm is not None:
        reference = float(two_port.reference_impedance_ohm[setup.terminated_port - 1])
        gamma = np.full(
            frequency_hz.shape,
            planes.gamma_from_impedance(setup.terminate_impedance_ohm, reference),
        )
        described = (
            f"port {setup.terminated_port} terminated in {setup.terminate_impedance_ohm:g} ohm"
        )
    else:
        assert setup.terminate_path is not None
        termination = read_one_port(setup.terminate_path)
        findings.extend(termination.warnings)
        inside = _inside(frequency_hz, termination.frequency_hz, setup.terminate_path)
        two_port = _restricted(two_port, inside)
        frequency_hz = two_port.frequency_hz
        gamma = planes.refer_termination(
            interpolate(termination.frequency_hz, termination.gamma, frequency_hz),
            termination.reference_impedance_ohm,
            two_port.reference_impedance_ohm,
            setup.terminated_port,
        )
        described = f"port {setup.terminated_port} terminated in {setup.terminate_path}"
    result = planes.terminate_two_port(two_port.s, gamma, setup.terminated_port)
    findings.extend(planes.termination_findings(result, frequency_hz, two_port.source))
    open_port = 2 if setup.terminated_port == 1 else 1
    reference = float(two_port.reference_impedance_ohm[open_port - 1])
    port = planes.terminated_one_port(result, frequency_hz, reference, two_port.source)
    return _with_record(port, two_port), described


def _differential(path: str | Path, pairs: tuple[tuple[int, int], ...]) -> OnePort:
    from . import planes

    multiport = read_touchstone(path)
    gamma = planes.mixed_mode_differential(
        multiport.s, list(pairs), multiport.reference_impedance_ohm
    )
    reference = planes.differential_reference_impedance(
        multiport.reference_impedance_ohm, pairs[0], multiport.ports
    )
    port = OnePort(
        frequency_hz=multiport.frequency_hz,
        gamma=gamma,
        reference_impedance_ohm=reference,
        source=f"{multiport.source} (differential, ports {pairs[0][0]},{pairs[0][1]})",
    )
    return _with_record(port, multiport)


def _deembedded(port: OnePort, fixture_path: str, findings: list[Finding]) -> OnePort:
    from . import planes

    fixture = _two_port(fixture_path)
    findings.extend(fixture.warnings)
    inside = _inside(port.frequency_hz, fixture.frequency_hz, fixture_path)
    if not inside.all():
        findings.append(
            Finding(
                "points-outside-fixture-band",
                f"{int((~inside).sum())} point(s) of {port.source} lie outside the band of"
                f" {fixture_path} and were left out; nothing is extrapolated.",
                {"dropped": int((~inside).sum())},
            )
        )
    gain = float(np.linalg.svd(np.moveaxis(fixture.s, -1, 0), compute_uv=False).max())
    if gain > 1.0 + 1e-3:
        findings.append(
            Finding(
                "fixture-not-passive",
                f"{fixture_path} has gain (largest singular value of S {gain:.3g} > 1): a"
                " fixture is passive, so this is probably not the fixture's file, or its ports"
                " or references are wrong.",
                {"largest_singular_value": gain},
            )
        )
    frequency_hz = port.frequency_hz[inside]
    s = np.stack(
        [
            [interpolate(fixture.frequency_hz, fixture.s[i, j], frequency_hz) for j in range(2)]
            for i in range(2)
        ]
    )
    measured = renormalise(
        port.gamma[inside], port.reference_impedance_ohm, float(fixture.reference_impedance_ohm[0])
    )
    gamma = planes.deembed_fixture(measured, s, 2, frequency_hz=frequency_hz)
    return replace(
        port,
        frequency_hz=frequency_hz,
        gamma=gamma,
        reference_impedance_ohm=float(fixture.reference_impedance_ohm[1]),
    )


def _two_port(path: str | Path) -> Multiport:
    multiport = read_touchstone(path)
    if multiport.ports != 2:
        raise InputError(f"{path}: a two-port file is needed here, it has {multiport.ports} ports")
    return multiport


def _inside(grid: np.ndarray, other: np.ndarray, other_path: str) -> np.ndarray:
    inside = (grid >= other[0]) & (grid <= other[-1])
    if inside.sum() < 2:
        raise InputError(
            f"{other_path}: its band ({other[0]:.6g}-{other[-1]:.6g} Hz) does not cover the"
            " device's frequencies; nothing is extrapolated: measure it over the same band"
        )
    return inside


def _restricted(multiport: Multiport, inside: np.ndarray) -> Multiport:
    return replace(
        multiport, frequency_hz=multiport.frequency_hz[inside], s=multiport.s[..., inside]
    )


def _with_record(port: OnePort, multiport: Multiport) -> OnePort:
    """Carry the file's checksum, format and reader warnings over to a derived one-port."""
    return replace(
        port,
        sha256=multiport.sha256,
        parameter=multiport.parameter,
        number_format=multiport.number_format,
        version=multiport.version,
        warnings=multiport.warnings,
        declared_frequencies=multiport.declared_frequencies,
    )


def load_one_port(source: Any, role: str) -> OnePort:
    """A :class:`OnePort` from a path, ``OnePort``, ``PreparedPort`` or scikit-rf ``Network``."""
    if isinstance(source, PreparedPort):
        return source.one_port
    if isinstance(source, OnePort):
        return source
    if isinstance(source, str | Path):
        return read_one_port(source)
    if hasattr(source, "s") and hasattr(source, "f") and hasattr(source, "z0"):
        return one_port_from_network(source, description=f"{role} network")
    raise TypeError(f"{role}: expected a path, a OnePort or a scikit-rf Network, got {source!r}")
