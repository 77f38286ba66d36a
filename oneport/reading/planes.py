"""From measured data to the device one-port, and moving its reference plane.

The check needs the device as a one-port at the plane where it meets the load. Bench data often
are not that: a two-port whose other port is terminated in the circuit, a balanced device
measured single-ended, a device behind a length of line or a fixture. This room turns such data
into the one-port and moves reference planes. Pure array functions: frequency on the last axis,
leading axes allowed (a sweep of variants), SI units (Hz, s, Ω), real reference impedances,
phasors e^{jωt}. Nothing here reads files, prints or decides a verdict.

Reference impedances: every S-matrix here is referred to one real reference per port (a
Touchstone file's ``[Reference]``); a reflection connected to port k must be referred to port k's
reference first (:func:`refer_termination` does that, with
:func:`oneport.reading.alignment.renormalise`). The results are referred to the remaining port's
reference, or to the differential reference for :func:`mixed_mode_differential`.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..findings import Finding
from .alignment import renormalise
from .touchstone import OnePort

#: |1 − S22·ΓT| below this marks a sample where the two-port and its termination are close to
#: a loop resonance of their own (an oscillation of the terminated side when it is active):
#: Γin is then very sensitive to errors in ΓT. 0.1 means a loop gain within 10 % of 1.
NEAR_LOOP_THRESHOLD = 0.1


@dataclass(frozen=True)
class TerminatedTwoPort:
    """A two-port with one port terminated: the one-port left at the other port.

    Attributes
    ----------
    gamma_in : ndarray of complex, shape (..., n)
        Γin at the open port, referred to that port's reference impedance; NaN where
        ``singular`` (never infinite).
    denominator : ndarray of complex, shape (..., n)
        1 − S_kk·ΓT, k the terminated port: F of the loop between the two-port and ΓT.
    near_loop : ndarray of bool, shape (..., n)
        |denominator| < ``threshold``.
    singular : ndarray of bool, shape (..., n)
        denominator exactly 0: Γin has a pole on the jω axis there and no one-port exists.
    terminated_port : int
        1 or 2.
    threshold : float
        The ``near_loop`` threshold used.
    """

    gamma_in: np.ndarray
    denominator: np.ndarray
    near_loop: np.ndarray
    singular: np.ndarray
    terminated_port: int
    threshold: float

    @property
    def formed(self) -> bool:
        """True when a one-port exists at every sample (no exactly singular denominator)."""
        return not bool(self.singular.any())


def renormalise_s(s: np.ndarray, from_ohm: np.ndarray, to_ohm: np.ndarray) -> np.ndarray:
    """Refer an S-matrix to new real port references.

    S' = K (S − R)(I − R S)⁻¹ K⁻¹ with R = diag(r_i), r_i = (Z'_i − Z_i)/(Z'_i + Z_i) and
    K = diag((Z_i + Z'_i) / (2 √(Z_i Z'_i))); for one port it is Γ' = (Γ − r)/(1 − rΓ).

    Parameters
    ----------
    s : ndarray of complex, shape (..., p, p, n)
        S-parameters referred to ``from_ohm``.
    from_ohm, to_ohm : array_like of float, shape (p,) or scalar
        Old and new references per port, Ω, real and positive.

    Examples
    --------
    >>> s = np.zeros((2, 2, 1), complex)  # both ports matched to 50 ohm
    >>> renormalise_s(s, 50.0, [75.0, 50.0])[:, :, 0].round(3).tolist()
    [[(-0.2+0j), 0j], [0j, 0j]]
    """
    s = np.asarray(s, dtype=complex)
    ports = s.shape[-2]
    old = np.broadcast_to(np.asarray(from_ohm, dtype=float), (ports,))
    new = np.broadcast_to(np.asarray(to_ohm, dtype=float), (ports,))
    r = (new - old) / (new + old)
    k = (old + new) / (2.0 * np.sqrt(old * new))
    matrices = np.moveaxis(s, -1, -3)  # (..., n, p, p) for the linear algebra
    identity = np.eye(ports)
    # X = (S − R)(I − RS)⁻¹ solves Xᵀ from (I − RS)ᵀ Xᵀ = (S − R)ᵀ.
    left = np.swapaxes(identity - r[:, None] * matrices, -1, -2)
    right = np.swapaxes(matrices - np.diag(r), -1, -2)
    x = np.swapaxes(np.linalg.solve(left, right), -1, -2)
    return np.moveaxis(k[:, None] * x / k[None, :], -3, -1)


def refer_termination(
    gamma_termination: np.ndarray,
    termination_reference_ohm: float,
    two_port_reference_ohm: Sequence[float] | np.ndarray,
    terminated_port: int = 2,
) -> np.ndarray:
    """Refer a termination's Γ to the reference of the two-port port it is connected to.

    Γ' = (Γ − r)/(1 − rΓ), r = (Z_k − Z_T)/(Z_k + Z_T)
    (:func:`oneport.reading.alignment.renormalise`).

    Parameters
    ----------
    gamma_termination : array_like of complex, shape (..., n)
        The termination's reflection, referred to ``termination_reference_ohm`` (Ω).
    two_port_reference_ohm : sequence of 2 floats
        The two-port's port references, Ω.
    terminated_port : {1, 2}
        Where the termination is connected.
    """
    port = _port_index(terminated_port, "terminated port")
    target = float(np.asarray(two_port_reference_ohm, dtype=float)[port])
    return renormalise(gamma_termination, float(termination_reference_ohm), target)


def gamma_from_impedance(impedance_ohm: complex, reference_impedance_ohm: float) -> complex:
    """Γ = (Z − Z0)/(Z + Z0) of a frequency-independent impedance (``--terminate-impedance``).

    Examples
    --------
    >>> gamma_from_impedance(150.0, 50.0)
    (0.5+0j)
    """
    total = complex(impedance_ohm) + reference_impedance_ohm
    if total == 0:
        raise InputError(
            f"termination impedance {impedance_ohm!r} ohm is minus the reference"
            f" ({reference_impedance_ohm:g} ohm): its reflection is infinite; give another value"
        )
    return (complex(impedance_ohm) - reference_impedance_ohm) / total


def terminate_two_port(
    s: np.ndarray, gamma_termination: np.ndarray, terminated_port: int = 2
) -> TerminatedTwoPort:
    """The one-port left when one port of a two-port is terminated in ΓT.

    For ``terminated_port=2``: Γin = S11 + S12·S21·ΓT / (1 − S22·ΓT), referred to port 1's
    reference; for ``terminated_port=1`` the indices swap (Γin = S22 + S21·S12·ΓT/(1 − S11·ΓT)).
    ΓT must already be referred to the terminated port's reference (:func:`refer_termination`).

    The denominator 1 − S_kk·ΓT is the return difference of the loop the terminated side forms
    with the two-port (the open port matched). Samples where its modulus is below
    ``NEAR_LOOP_THRESHOLD`` are marked ``near_loop``: the terminated side is close to a
    resonance (close to oscillating, if active) and Γin there hangs on small errors in ΓT. Where
    it is exactly 0, Γin has a pole on the jω axis: those samples are marked ``singular`` and
    Γin is NaN there (never infinite); :func:`terminated_one_port` refuses to form a one-port
    from such a result.

    Parameters
    ----------
    s : array_like of complex, shape (..., 2, 2, n)
        The two-port's S-parameters.
    gamma_termination : array_like of complex, shape (..., n) or scalar
        ΓT, referred to the terminated port's reference.
    terminated_port : {1, 2}
        The port that is terminated (1-based, as in Touchstone files).

    Examples
    --------
    A matched 6 dB attenuator terminated in a short: Γin = −S12·S21 = −0.2512.

    >>> a = 10 ** (-6 / 20)
    >>> s = np.array([[0, a], [a, 0]], complex)[:, :, None]
    >>> round(complex(terminate_two_port(s, -1.0).gamma_in[0]).real, 4)
    -0.2512
    """
    s = _two_port(s)
    terminated = _port_index(terminated_port, "terminated port")
    other = 1 - terminated
    gamma_termination = np.asarray(gamma_termination, dtype=complex)
    reflected = s[..., terminated, terminated, :] * gamma_termination
    denominator = 1.0 - reflected
    singular = denominator == 0
    through = s[..., other, terminated, :] * s[..., terminated, other, :] * gamma_termination
    undefined = np.full(denominator.shape, np.nan, dtype=complex)
    quotient = np.divide(through, denominator, out=undefined, where=~singular)
    return TerminatedTwoPort(
        gamma_in=s[..., other, other, :] + quotient,
        denominator=denominator,
        near_loop=np.abs(denominator) < NEAR_LOOP_THRESHOLD,
        singular=singular,
        terminated_port=int(terminated_port),
        threshold=NEAR_LOOP_THRESHOLD,
    )


def termination_findings(
    result: TerminatedTwoPort, frequency_hz: np.ndarray, source: str
) -> tuple[Finding, ...]:
    """Findings for the near-loop and singular samples of a termination (frequency in Hz).

    Codes: ``termination-near-loop-resonance`` (one per run of adjacent near-loop samples, with
    ``start_hz``, ``stop_hz``, ``minimum_frequency_hz`` and ``minimum_return_difference``) and
    ``termination-singular`` (``frequencies_hz``). Leading axes are reduced: a sample counts
    when any variant has it.
    """
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    modulus = np.abs(result.denominator).reshape(-1, frequency_hz.size).min(axis=0)
    side = f"port {result.terminated_port} of {source}"
    findings = []
    for start, stop in _runs(modulus < result.threshold):
        lowest = start + int(np.argmin(modulus[start : stop + 1]))
        findings.append(
            Finding(
                "termination-near-loop-resonance",
                f"|1 - S{result.terminated_port}{result.terminated_port}·ΓT| falls to"
                f" {modulus[lowest]:.3g} at {frequency_hz[lowest]:.6g} Hz: the termination on"
                f" {side} is close to a loop resonance with the two-port (close to oscillating"
                " on its own, if that side is active); the one-port there hangs on small errors"
                " in the termination.",
                {
                    "start_hz": float(frequency_hz[start]),
                    "stop_hz": float(frequency_hz[stop]),
                    "minimum_frequency_hz": float(frequency_hz[lowest]),
                    "minimum_return_difference": float(modulus[lowest]),
                },
            )
        )
    singular = result.singular.reshape(-1, frequency_hz.size).any(axis=0)
    if singular.any():
        findings.append(
            Finding(
                "termination-singular",
                f"1 - S·ΓT is exactly 0 on {side} at {int(singular.sum())} frequency point(s):"
                " the terminated two-port has a pole on the frequency axis there.",
                {"frequencies_hz": [float(f) for f in frequency_hz[singular]]},
            )
        )
    return tuple(findings)


def terminated_one_port(
    result: TerminatedTwoPort,
    frequency_hz: np.ndarray,
    reference_impedance_ohm: float,
    source: str,
) -> OnePort:
    """A :class:`OnePort` from a one-variant termination (Γin referred to the open port's Z0).

    Raises
    ------
    InputError
        Where the denominator is exactly 0 (no one-port exists there), naming the frequencies.
    """
    frequency_hz = np.asarray(frequency_hz, dtype=float)
    if not result.formed:
        where = ", ".join(f"{f:.6g} Hz" for f in frequency_hz[result.singular][:5])
        raise InputError(
            f"{source}: terminating port {result.terminated_port} makes 1 - S·ΓT exactly 0 at"
            f" {where}; no one-port exists there (the terminated side has a pole on the"
            " frequency axis): check the termination file, or leave those points out"
        )
    return OnePort(
        frequency_hz=frequency_hz,
        gamma=np.asarray(result.gamma_in).reshape(frequency_hz.shape),
        reference_impedance_ohm=float(reference_impedance_ohm),
        source=f"{source} with port {result.terminated_port} terminated",
    )


def mixed_mode_differential(
    s: np.ndarray,
    pairs: Sequence[tuple[int, int]],
    reference_impedance_ohm: float | Sequence[float] | np.ndarray = 50.0,
) -> np.ndarray:
    """Sdd11 of the differential port formed by the first pair of ``pairs``.

    Sdd11 = (S_PP − S_PN − S_NP + S_NN) / 2, referred to the differential reference
    Z_P + Z_N (2·Z0 when both are Z0; :func:`differential_reference_impedance`). The common
    mode of the pair is terminated in its own reference (Z0/2), as a two-port measurement of a
    balanced one-port does. Further pairs are terminated in their mixed-mode references (2·Z0
    differential, Z0/2 common); ports in no pair stay terminated in their own references. Both
    amount to each single-ended port terminated in Z0, so this is the Sdd11 entry of the
    mixed-mode matrix. A pair whose two ports have different references is first referred to
    their mean (the generalised mixed-mode convention).

    Parameters
    ----------
    s : array_like of complex, shape (..., p, p, n)
        Single-ended S-parameters (p = 2 for a balanced one-port measured on two ports).
    pairs : sequence of (int, int)
        (positive, negative) port numbers, 1-based as in Touchstone files; the first pair is
        the differential port of interest.
    reference_impedance_ohm : float or sequence of p floats
        Single-ended port references, Ω.

    Examples
    --------
    Two ports each loaded by 100 ohm to ground (matched 50 ohm ports see 0.333): the
    differential one-port is 200 ohm against 100 ohm, Γ = 1/3.

    >>> s = np.array([[1 / 3, 0], [0, 1 / 3]], complex)[:, :, None]
    >>> round(complex(mixed_mode_differential(s, [(1, 2)])[0]).real, 4)
    0.3333
    """
    s = np.asarray(s, dtype=complex)
    ports = s.shape[-2]
    pair_indices = _pairs(pairs, ports)
    old = np.broadcast_to(np.asarray(reference_impedance_ohm, dtype=float), (ports,)).copy()
    new = old.copy()
    for positive, negative in pair_indices:
        new[[positive, negative]] = 0.5 * (old[positive] + old[negative])
    if not np.array_equal(old, new):
        s = renormalise_s(s, old, new)
    p, n = pair_indices[0]
    return 0.5 * (s[..., p, p, :] - s[..., p, n, :] - s[..., n, p, :] + s[..., n, n, :])


def differential_reference_impedance(
    reference_impedance_ohm: float | Sequence[float] | np.ndarray,
    pair: tuple[int, int],
    ports: int = 2,
) -> float:
    """The reference of :func:`mixed_mode_differential`'s result: Z_P + Z_N, Ω (2·Z0)."""
    (positive, negative), *_ = _pairs([pair], ports)
    references = np.broadcast_to(np.asarray(reference_impedance_ohm, dtype=float), (ports,))
    return float(references[positive] + references[negative])


def parse_port_pairs(text: str, *, option: str = "--differential-ports") -> list[tuple[int, int]]:
    """Read ``"P,N"`` or ``"P,N:P,N"`` (1-based port numbers) into a list of pairs.

    Examples
    --------
    >>> parse_port_pairs("1,3:2,4")
    [(1, 3), (2, 4)]
    """
    pairs = []
    for part in text.split(":"):
        fields = [field.strip() for field in part.split(",")]
        if len(fields) != 2 or not all(field.isdigit() for field in fields):
            raise InputError(
                f"{option}: cannot read {part!r} in {text!r} as a port pair; give P,N (positive"
                " and negative port numbers, e.g. 1,2), or two pairs as P,N:P,N (e.g. 1,3:2,4)"
            )
        pairs.append((int(fields[0]), int(fields[1])))
    return pairs


def shift_plane(gamma: np.ndarray, frequency_hz: np.ndarray, delay_s: float) -> np.ndarray:
    """Move a reflection's plane through a lossless matched line of one-way delay τ.

    Γ' = Γ·exp(−j·2ωτ), ω = 2πf. Positive ``delay_s`` adds line between the measured plane
    and the new plane (the device seen from farther away); negative removes it (a measured
    device referred back to its own terminals). The line is matched to Γ's reference.

    Parameters
    ----------
    gamma : array_like of complex, shape (..., n)
    frequency_hz : array_like of float, shape (n,)
        Hz.
    delay_s : float
        One-way delay τ, s.

    Examples
    --------
    At 10 GHz, 10 ps of line turns Γ by 2·360°·f·τ = 72° clockwise:

    >>> round(float(np.degrees(np.angle(shift_plane(1.0, 10e9, 10e-12)))), 6)
    -72.0
    """
    omega = 2.0 * np.pi * np.asarray(frequency_hz, dtype=float)
    return np.asarray(gamma, dtype=complex) * np.exp(-2j * omega * delay_s)


def embed_fixture(
    gamma: np.ndarray,
    fixture_s: np.ndarray,
    device_side_port: int = 2,
    *,
    frequency_hz: np.ndarray | None = None,
) -> np.ndarray:
    """Γm seen at the instrument side of a fixture whose other side holds Γ.

    Γm = S11 + S12·S21·Γ/(1 − S22·Γ) for ``device_side_port=2`` (ports swapped for 1); Γ is
    referred to the device-side port's reference, Γm to the instrument-side port's.
    ``frequency_hz`` (Hz) only names the frequencies in the error message.

    Raises
    ------
    InputError
        Where 1 − S22·Γ is exactly 0 (the result would be infinite).
    """
    result = terminate_two_port(fixture_s, gamma, terminated_port=device_side_port)
    if not result.formed:
        _refuse("embedding through the fixture", "1 - S22·Γ", result.singular, frequency_hz)
    return result.gamma_in


def deembed_fixture(
    gamma_measured: np.ndarray,
    fixture_s: np.ndarray,
    device_side_port: int = 2,
    *,
    frequency_hz: np.ndarray | None = None,
) -> np.ndarray:
    """Γ of what sits behind a fixture, from Γm measured at its instrument side.

    Solving Γm = S11 + S12·S21·Γ/(1 − S22·Γ) for Γ: (Γm − S11)(1 − S22·Γ) = S12·S21·Γ, so

        Γ = (Γm − S11) / (S12·S21 + S22·(Γm − S11))

    for ``device_side_port=2`` (1 and 2 swapped for ``device_side_port=1``). Γm is referred to
    the instrument-side port's reference, Γ to the device-side port's.

    Parameters
    ----------
    gamma_measured : array_like of complex, shape (..., n)
    fixture_s : array_like of complex, shape (..., 2, 2, n)
    device_side_port : {1, 2}
        The fixture port the device is connected to.
    frequency_hz : array_like of float, optional
        Hz, only to name frequencies in the error message.

    Raises
    ------
    InputError
        Where the denominator is exactly 0 (the fixture does not transmit there).

    Examples
    --------
    Behind a matched 3 dB attenuator (S12·S21 = 0.501), Γm = 0.25 comes from Γ = 0.499:

    >>> a = 10 ** (-3 / 20)
    >>> s = np.array([[0, a], [a, 0]], complex)[:, :, None]
    >>> round(complex(deembed_fixture(0.25, s)[0]).real, 3)
    0.499
    """
    s = _two_port(fixture_s)
    device = _port_index(device_side_port, "device-side port")
    instrument = 1 - device
    excess = np.asarray(gamma_measured, dtype=complex) - s[..., instrument, instrument, :]
    transmission = s[..., instrument, device, :] * s[..., device, instrument, :]
    denominator = transmission + s[..., device, device, :] * excess
    singular = denominator == 0
    if singular.any():
        _refuse("de-embedding the fixture", "S12·S21 + S22·(Γm - S11)", singular, frequency_hz)
    return excess / denominator


def _two_port(s: np.ndarray) -> np.ndarray:
    s = np.asarray(s, dtype=complex)
    if s.ndim < 3 or s.shape[-3:-1] != (2, 2):
        raise InputError(
            f"a two-port S-matrix of shape (..., 2, 2, n) is needed, got shape {s.shape}"
        )
    return s


def _port_index(port: int, what: str) -> int:
    if port not in (1, 2):
        raise InputError(f"{what} {port!r}: accepted 1 or 2")
    return int(port) - 1


def _pairs(pairs: Sequence[tuple[int, int]], ports: int) -> list[tuple[int, int]]:
    """0-based pair indices, checked: ports in range, none used twice, at least one pair."""
    flat = [port for pair in pairs for port in pair]
    if not pairs or any(len(pair) != 2 for pair in pairs):
        raise InputError(f"differential ports {pairs!r}: give (positive, negative) pairs")
    if any(not 1 <= port <= ports for port in flat) or len(set(flat)) != len(flat):
        raise InputError(
            f"differential ports {pairs!r}: each port number must be between 1 and {ports}"
            " and used once"
        )
    return [(positive - 1, negative - 1) for positive, negative in pairs]


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(first, last) indices of each run of True in a 1-D mask."""
    padded = np.concatenate(([False], mask, [False])).astype(int)
    edges = np.diff(padded)
    return list(zip(np.flatnonzero(edges == 1), np.flatnonzero(edges == -1) - 1, strict=True))


def _refuse(
    action: str, expression: str, singular: np.ndarray, frequency_hz: np.ndarray | None
) -> None:
    size = singular.shape[-1]
    where = np.flatnonzero(singular.reshape(-1, size).any(axis=0))
    if frequency_hz is not None:
        named = ", ".join(f"{np.asarray(frequency_hz)[i]:.6g} Hz" for i in where[:5])
    else:
        named = "sample(s) " + ", ".join(str(int(i)) for i in where[:5])
    raise InputError(
        f"{action}: {expression} is exactly 0 at {named}; the result would be infinite there:"
        " check the fixture file and its port order (device-side port)"
    )
