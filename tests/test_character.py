"""Device character: stability open-circuited, short-circuited and in Z0; the three forms."""

from __future__ import annotations

import json

import numpy as np
import pytest

from oneport.analysis.character import DeviceCharacter, characterise_device, winding_count
from oneport.errors import InputError

from helpers import Z0, gamma_of


def trusted_rhp(character: DeviceCharacter, termination: str) -> list[complex]:
    modes = character.termination(termination).natural_frequencies
    return [m.s_per_s for m in modes if m.rhp and m.trusted and not m.extrapolated]


F_WIDE = np.linspace(10e6, 10e9, 301)


@pytest.mark.parametrize("resistance", [40.0, 100.0])
def test_negative_resistance_parallel_capacitance(resistance):
    # -R || C: Yd = -G + sC has no pole (short-circuit-stable); Zd has a pole at s = G/C; the
    # gamma pole is s = (Z0 G - 1)/(Z0 C), in the RHP whenever Z0 > 1/G (METHODS section 3).
    conductance, capacitance = 1 / resistance, 1e-12
    s = 2j * np.pi * F_WIDE
    character = characterise_device(F_WIDE, gamma_of(1 / (-conductance + s * capacitance)), Z0)
    assert character.kind == "short-circuit-stable"
    assert character.termination("short").stable is True
    (open_mode,) = trusted_rhp(character, "open")
    assert open_mode == pytest.approx(conductance / capacitance, rel=1e-3)
    pole = (Z0 * conductance - 1) / (Z0 * capacitance)
    reference = [m for m in character.termination("reference").natural_frequencies if m.trusted]
    assert [m.sigma_per_s for m in reference] == pytest.approx([pole], rel=1e-3)
    assert character.termination("reference").stable is (1 / conductance >= Z0)
    assert "parallel-resonant" in character.summary[0]


def test_negative_resistance_series_inductance():
    # -R + sL: no finite pole of Zd (open-circuit-stable); Zd = 0 at s = R/L (unstable shorted);
    # gamma pole at s = (R - Z0)/L, stable in Z0 for R < Z0 (worked by hand).
    resistance, inductance = 30.0, 10e-9
    s = 2j * np.pi * F_WIDE
    character = characterise_device(F_WIDE, gamma_of(-resistance + s * inductance), Z0)
    assert character.kind == "open-circuit-stable"
    assert character.termination("open").stable is True
    (short_mode,) = trusted_rhp(character, "short")
    assert short_mode == pytest.approx(resistance / inductance, rel=1e-3)
    assert character.termination("reference").stable is True
    (pole,) = character.termination("reference").natural_frequencies
    assert pole.sigma_per_s == pytest.approx((resistance - Z0) / inductance, rel=1e-3)
    assert "series-resonant" in character.summary[0]


class NegativeImpedanceConverter:
    """Op-amp NIC: R1 output -> +in, R2 output -> -in, R3 -in -> ground; port at +in.

    Derived here: with beta = R3/(R2 + R3), Vo = A (V - beta Vo) and I = (V - Vo)/R1, so
    Z_in = R1 (1 + A beta)/(1 - A (1 - beta)); with A(s) = a0/(1 + s tau), tau = a0/wt,
    Z_in(s) = R1 (1 + a0 beta + s tau)/(1 - a0 (1 - beta) + s tau), which tends to -R1 R3/R2 as
    a0 grows (METHODS section 7).
    """

    r1, r2, r3 = 100.0, 100.0, 100.0
    a0, unity_gain_rad_s = 1e5, 2 * np.pi * 100e6

    @property
    def tau(self) -> float:
        return self.a0 / self.unity_gain_rad_s

    @property
    def beta(self) -> float:
        return self.r3 / (self.r2 + self.r3)

    def numerator(self) -> np.ndarray:
        return self.r1 * np.array([self.tau, 1 + self.a0 * self.beta])

    def denominator(self) -> np.ndarray:
        return np.array([self.tau, 1 - self.a0 * (1 - self.beta)])

    def impedance(self, f: np.ndarray) -> np.ndarray:
        s = 2j * np.pi * f
        return np.polyval(self.numerator(), s) / np.polyval(self.denominator(), s)

    def closed_loop_roots(self, source_ohm: float) -> np.ndarray:
        """numpy.roots of n_d + Rs d_d: the NIC driven from a source resistance Rs."""
        return np.roots(np.polyadd(self.numerator(), source_ohm * self.denominator()))


NIC = NegativeImpedanceConverter()
F_NIC = np.geomspace(100e3, 2e9, 401)


def test_nic_reference_values():
    # METHODS section 7: Z_in = -R1 R3/R2 for an ideal op-amp; the single-pole NIC is stable
    # only when the source resistance is below R1 R3/R2 (numpy.roots of the derived polynomial).
    assert NIC.impedance(np.array([1.0]))[0].real == pytest.approx(-100.0, rel=1e-3)
    assert np.all(NIC.closed_loop_roots(80.0).real < 0)
    assert np.all(NIC.closed_loop_roots(120.0).real > 0)


def test_nic_is_short_circuit_stable():
    character = characterise_device(F_NIC, gamma_of(NIC.impedance(F_NIC)), Z0)
    assert character.kind == "short-circuit-stable"
    (open_mode,) = trusted_rhp(character, "open")
    (pole,) = np.roots(NIC.denominator())  # numpy.roots: the open-circuit natural frequency
    assert open_mode == pytest.approx(pole, rel=0.01)
    assert character.termination("reference").stable is True  # 50 ohm < R1 R3/R2


@pytest.mark.parametrize(("source_ohm", "roots"), [(80.0, 0), (120.0, 1)])
def test_nic_three_forms(source_ohm, roots):
    assert np.count_nonzero(NIC.closed_loop_roots(source_ohm).real > 0) == roots  # numpy.roots
    gamma_load = gamma_of(np.full(F_NIC.size, source_ohm + 0j))
    character = characterise_device(F_NIC, gamma_of(NIC.impedance(F_NIC)), Z0, gamma_load)
    reflection = character.form("reflection")
    impedance = character.form("impedance")
    admittance = character.form("admittance")
    # Premises that hold (stable in Z0, stable short-circuited): the count is the truth.
    assert reflection.encirclements == roots and reflection.premise_holds
    assert admittance.encirclements == roots and admittance.premise_holds
    # The impedance form's premise fails (unstable open-circuited): it counts one too few.
    assert impedance.premise_holds is False
    assert impedance.encirclements == roots - 1
    assert impedance.implied_rhp_roots == roots
    assert any("unstable open-circuited" in sentence for sentence in character.agreement)
    assert f"every form gives {roots}" in character.agreement[-1]


def test_disagreement_explained_for_a_device_unstable_in_z0():
    # -40 ohm || 1 pF into 30 ohm: Yd + YL = 1/30 - 1/40 + sC has its root at s < 0 (worked by
    # hand), but the device is unstable both open-circuited and in 50 ohm.
    s = 2j * np.pi * F_WIDE
    gamma_device = gamma_of(1 / (-1 / 40 + s * 1e-12))
    character = characterise_device(F_WIDE, gamma_device, Z0, gamma_of(30.0 + 0 * s))
    counts = {f.form: (f.encirclements, f.premise_poles) for f in character.forms}
    assert counts == {"reflection": (-1, 1), "impedance": (-1, 1), "admittance": (0, 0)}
    assert {f.implied_rhp_roots for f in character.forms} == {0}
    assert any("suspect" in sentence for sentence in character.summary)


def test_winding_count_indents_poles_at_zero_and_infinity():
    f = np.linspace(10e6, 5e9, 2001)
    s = 2j * np.pi * f
    inductance, capacitance = 10e-9, 2.533e-12
    for resistance in (-10.0, 10.0):
        # numpy.roots of L s^2 + R s + 1/C: the zeros of R + sL + 1/(sC).
        expected = np.count_nonzero(np.roots([inductance, resistance, 1 / capacitance]).real > 0)
        values = resistance + s * inductance + 1 / (s * capacitance)
        count, notes = winding_count(f, values)
        assert count == expected
        assert notes[0].startswith("Closed towards DC as 1/s")
    # (s - a)/s with a > 0: one RHP zero, the pole at 0 passed on the right (by definition).
    count, _ = winding_count(f, (s - 2 * np.pi * 1e9) / s)
    assert count == 1


def test_winding_count_refuses_an_unsettled_edge():
    f = np.linspace(0.5e9, 1.5e9, 201)  # stops in the middle of a resonance's skirt
    s = 2j * np.pi * f
    count, notes = winding_count(f, 1 / (s * 2.5e-12) + s * 10e-9 + 1.0)
    assert count is None
    assert "extend the sweep" in notes[-1]


def test_json_form_and_bad_input():
    s = 2j * np.pi * F_WIDE
    character = characterise_device(F_WIDE, gamma_of(-30 + s * 10e-9), Z0, gamma_of(200.0 + 0 * s))
    data = json.loads(json.dumps(character.to_dict(), allow_nan=False))
    assert data["schema"] == "oneport.character/1"
    assert set(data["terminations"]) == {"open", "short", "reference"}
    assert [form["form"] for form in data["forms"]] == ["reflection", "impedance", "admittance"]
    with pytest.raises(InputError, match="must match frequency_hz"):
        characterise_device(F_WIDE, gamma_of(-30 + s * 10e-9), Z0, np.zeros(3))
    with pytest.raises(InputError, match="positive number of ohms"):
        characterise_device(F_WIDE, gamma_of(-30 + s * 10e-9), -50.0)
