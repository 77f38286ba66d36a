"""The stabilising networks placed at the device's port, as arrays: what each adds, and how.

A network is added to the load side (Z_L' = Z_L + Z_s for a series network, Y_L' = Y_L + Y_s
for a shunt one), so the loop Zd + Z_s + Z_L is the changed circuit while the device, whose
stability in its measurement impedance is the premise of the count, stays as measured. A
passive network added to a passive load leaves it passive. The same network seen from the
circulator of a reflection amplifier belongs to the device: its gain is |Γ|² of the device with
the network absorbed, computed by the same function.

Pure array functions; values in SI units (Ω, F, H) with the candidates on the leading axis.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

#: Unit-named keys of the added elements' values (JSON and Python alike).
RESISTANCE = "resistance_ohm"
CAPACITANCE = "capacitance_f"
INDUCTANCE = "inductance_h"


@dataclass(frozen=True)
class Family:
    """A topology of stabilising network.

    Attributes
    ----------
    name : str
        ``series-resistor``, ``shunt-resistor``, ``shunt-rc`` or ``series-rl``.
    connection : str
        ``"series"`` (adds an impedance) or ``"shunt"`` (adds an admittance).
    elements : tuple of str
        The elements' value keys, resistance first.
    description : str
        What it is, for people.
    """

    name: str
    connection: str
    elements: tuple[str, ...]
    description: str

    @property
    def corner(self) -> bool:
        """True for the two-element families, whose loss starts above a corner frequency."""
        return len(self.elements) == 2


FAMILIES: dict[str, Family] = {
    family.name: family
    for family in (
        Family(
            "series-resistor",
            "series",
            (RESISTANCE,),
            "a resistor in series between the device and the load",
        ),
        Family(
            "shunt-resistor",
            "shunt",
            (RESISTANCE,),
            "a resistor across the device's port",
        ),
        Family(
            "shunt-rc",
            "shunt",
            (RESISTANCE, CAPACITANCE),
            "a resistor in series with a capacitor, across the device's port: loss above the"
            " corner 1/(2π·R·C), none at DC",
        ),
        Family(
            "series-rl",
            "series",
            (RESISTANCE, INDUCTANCE),
            "a resistor in parallel with an inductor, in series between the device and the"
            " load: loss above the corner R/(2π·L), none at DC",
        ),
    )
}


def family(name: str) -> Family:
    """The family called ``name``."""
    return FAMILIES[name]


def immittance(selected: Family, frequency_hz: np.ndarray, values: dict[str, Any]) -> np.ndarray:
    """The added impedance Z_s (Ω, series families) or admittance Y_s (S, shunt families).

    ``values`` maps element keys to arrays of candidates, shape (V,); the result broadcasts to
    (V, n) for the n frequencies (a resistor's is real and of shape (V, 1)).
    """
    real, imaginary = _parts(selected, 2.0 * np.pi * np.asarray(frequency_hz, float), values)
    if imaginary is None:
        return np.asarray(real, dtype=float)
    return np.asarray(real + 1j * imaginary)


def _parts(selected: Family, omega: np.ndarray, values: dict[str, Any]) -> tuple[Any, Any]:
    """Real and imaginary parts of :func:`immittance` (None for a resistor's imaginary part),
    in real arithmetic: shunt R–C, Y = (ω²RC² + jωC) / (1 + (ωRC)²); series R∥L,
    Z = (ω²L²R + jωLR²) / (R² + (ωL)²)."""
    resistance = _column(values[RESISTANCE])
    if selected.name == "series-resistor":
        return resistance, None
    if selected.name == "shunt-resistor":
        return 1.0 / resistance, None
    if selected.name == "shunt-rc":
        capacitance = _column(values[CAPACITANCE])
        wc = omega * capacitance
        wrc = wc * resistance
        denominator = 1.0 + wrc * wrc
        return wrc * wc / denominator, wc / denominator
    if selected.name == "series-rl":
        inductance = _column(values[INDUCTANCE])
        wl = omega * inductance
        denominator = resistance * resistance + wl * wl
        return wl * wl * resistance / denominator, wl * resistance * resistance / denominator
    raise ValueError(f"unknown family {selected.name!r}")


#: Samples (candidates × frequencies) per block of :func:`add_network`: its temporaries then
#: stay in the processor's caches (as in the check's vectorised judgement).
BLOCK_SAMPLES = 1 << 15


def add_network(
    gamma: np.ndarray,
    selected: Family,
    frequency_hz: np.ndarray,
    values: dict[str, Any],
    reference_impedance_ohm: float,
) -> np.ndarray:
    """Γ of the one-port ``gamma`` with the network added (in series or across its port).

    Written in reflection form, so an open or a short (Γ = ±1) needs no infinite immittance:
    series Γ' = 1 − 2 / (2/(1 − Γ) + z) with z = Z_s/Z0, the same as
    (2Γ + z(1 − Γ)) / (2 + z(1 − Γ)); shunt Γ' = −1 + 2 / (2/(1 + Γ) + y) with y = Y_s·Z0.
    Computed in real arithmetic (numpy's complex division is several times slower), in blocks
    of candidates. ``gamma`` has shape (n,) or (V, n); the result (V, n), or (n,) for scalars.
    """
    gamma = np.asarray(gamma, dtype=complex)
    omega = 2.0 * np.pi * np.asarray(frequency_hz, dtype=float)
    series = selected.connection == "series"
    factor = 1.0 / reference_impedance_ohm if series else reference_impedance_ohm
    sign = 1.0 if series else -1.0
    # An open (series) or a short (shunt) gives an infinite base: handled below, no warning.
    with np.errstate(divide="ignore", invalid="ignore"):
        base = 2.0 / (1.0 - gamma) if series else 2.0 / (1.0 + gamma)
    arrays = {key: np.asarray(value, dtype=float) for key, value in values.items()}
    count = max((a.size for a in arrays.values() if a.ndim), default=0)
    leading = (count,) if count else ()
    if gamma.ndim == 2:
        leading = (gamma.shape[0],)
    shape = (*leading, omega.size)
    result = np.empty(shape, dtype=complex)
    rows = shape[0] if leading else 1
    block = max(1, BLOCK_SAMPLES // max(omega.size, 1))
    for start in range(0, rows, block):
        part = slice(start, min(start + block, rows)) if leading else slice(None)
        chosen = {k: (a[part] if a.ndim else a) for k, a in arrays.items()}
        real_part, imaginary_part = _parts(selected, omega, chosen)
        base_block = base[part] if base.ndim == 2 else base
        target = result[part]
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            real = base_block.real + factor * real_part
            imaginary = base_block.imag + (
                0.0 if imaginary_part is None else factor * imaginary_part
            )
            imaginary = np.broadcast_to(imaginary, real.shape)
            scale = 2.0 / (real * real + imaginary * imaginary)
            target.real = sign * (1.0 - real * scale)
            target.imag = sign * imaginary * scale
        # Γ = 1 (series) or −1 (shunt): the network changes nothing on an open or a short.
        unchanged = ~np.isfinite(scale) | ~np.isfinite(real)
        if np.any(unchanged):
            target[unchanged] = np.broadcast_to(
                np.asarray(gamma)[part] if gamma.ndim == 2 else gamma, target.shape
            )[unchanged]
    return result


def dc_resistance_after(
    selected: Family, values: dict[str, Any], load_dc_resistance_ohm: float
) -> np.ndarray:
    """The load's DC resistance with the network added, Ω (``inf`` for an open), per candidate.

    At DC a capacitor is open and an inductor a short: the two-element families leave it as it
    was, a series resistor adds to it, a shunt resistor lies in parallel with it.
    """
    resistance = np.asarray(values[RESISTANCE], dtype=float)
    original = np.full(resistance.shape, float(load_dc_resistance_ohm))
    if selected.name == "series-resistor":
        return original + resistance
    if selected.name == "shunt-resistor":
        with np.errstate(divide="ignore"):
            return 1.0 / (1.0 / original + 1.0 / resistance)
    return original


def corner_frequency_hz(selected: Family, values: dict[str, Any]) -> Any:
    """Where the loss of a two-element family starts, Hz (None for a single resistor); arrays
    of candidates give an array."""
    if selected.name == "shunt-rc":
        return 1.0 / (2.0 * np.pi * values[RESISTANCE] * values[CAPACITANCE])
    if selected.name == "series-rl":
        return values[RESISTANCE] / (2.0 * np.pi * values[INDUCTANCE])
    return None


def second_element_for_corner(
    selected: Family, resistance_ohm: np.ndarray, corner_hz: np.ndarray
) -> np.ndarray:
    """The capacitance (F) or inductance (H) that puts the corner at ``corner_hz`` with R."""
    if selected.name == "shunt-rc":
        return 1.0 / (2.0 * np.pi * resistance_ohm * corner_hz)
    return resistance_ohm / (2.0 * np.pi * corner_hz)


def _column(value: Any) -> Any:
    array = np.asarray(value, dtype=float)
    return array[..., None] if array.ndim else float(array)
