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
            " corner 1/(2 pi R C), none at DC",
        ),
        Family(
            "series-rl",
            "series",
            (RESISTANCE, INDUCTANCE),
            "a resistor in parallel with an inductor, in series between the device and the"
            " load: loss above the corner R/(2 pi L), none at DC",
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
    resistance = _column(values[RESISTANCE])
    if selected.name == "series-resistor":
        return np.asarray(resistance, dtype=float)
    if selected.name == "shunt-resistor":
        return np.asarray(1.0 / resistance, dtype=float)
    s = 2j * np.pi * np.asarray(frequency_hz, dtype=float)
    if selected.name == "shunt-rc":
        capacitance = _column(values[CAPACITANCE])
        return np.asarray(s * capacitance / (1.0 + s * resistance * capacitance))
    if selected.name == "series-rl":
        inductance = _column(values[INDUCTANCE])
        return np.asarray(s * inductance * resistance / (resistance + s * inductance))
    raise ValueError(f"unknown family {selected.name!r}")


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
    (2Γ + z(1 − Γ)) / (2 + z(1 − Γ)); shunt Γ' = −1 + 2 / (2/(1 + Γ) + y) with y = Y_s·Z0. The
    one division per candidate and frequency is done in real arithmetic (numpy's complex
    division is several times slower).
    """
    gamma = np.asarray(gamma, dtype=complex)
    added = immittance(selected, frequency_hz, values)
    series = selected.connection == "series"
    scaled = added / reference_impedance_ohm if series else added * reference_impedance_ohm
    # An open (series) or a short (shunt) gives an infinite base: handled below, no warning.
    with np.errstate(divide="ignore", invalid="ignore"):
        base = 2.0 / (1.0 - gamma) if series else 2.0 / (1.0 + gamma)
        real = base.real + np.real(scaled)
        imaginary = base.imag + (np.imag(scaled) if np.iscomplexobj(scaled) else 0.0 * real)
        scale = 2.0 / (real * real + imaginary * imaginary)
        sign = 1.0 if series else -1.0
        result = np.empty(real.shape, dtype=complex)
        result.real = sign * (1.0 - real * scale)
        result.imag = sign * imaginary * scale
    # Γ = 1 (series) or −1 (shunt): the network changes nothing on an open or a short.
    unchanged = ~np.isfinite(scale) | ~np.isfinite(real)
    if np.any(unchanged):
        result[unchanged] = np.broadcast_to(gamma, result.shape)[unchanged]
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
