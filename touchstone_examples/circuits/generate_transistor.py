"""Write the invented small-signal FET two-port ``transistor.s2p`` used by the circuit examples.

The model is an invented intrinsic hybrid-pi FET (common source; port 1 gate, port 2 drain,
both referred to the source): gate-source capacitance with its charging resistance, a
gate-drain capacitance, a delayed transconductance, drain-source resistance and capacitance.
Its Y-parameters are written out in closed form and converted to S at 50 ohm. No measurement
is involved. Run from the repository root (the output is deterministic)::

    python touchstone_examples/circuits/generate_transistor.py
"""

from pathlib import Path

import numpy as np

from oneport.circuit import touchstone_text

HERE = Path(__file__).resolve().parent
Z0 = 50.0
CGS, RI, CGD, GM, TAU, RDS, CDS = 0.35e-12, 3.0, 0.04e-12, 0.065, 2.5e-12, 220.0, 0.07e-12
FREQUENCY_HZ = np.linspace(0.1e9, 18e9, 180)  # 0.1 GHz steps


def admittance(frequency_hz):
    """Y-parameters of the hybrid-pi model, shape (2, 2, n), S."""
    s = 2j * np.pi * frequency_hz
    input_branch = s * CGS / (1 + s * CGS * RI)  # Cgs through its charging resistance Ri
    transconductance = GM * np.exp(-s * TAU) / (1 + s * CGS * RI)
    y = np.empty((2, 2, frequency_hz.size), dtype=complex)
    y[0, 0] = input_branch + s * CGD
    y[0, 1] = -s * CGD
    y[1, 0] = transconductance - s * CGD
    y[1, 1] = 1 / RDS + s * (CDS + CGD)
    return y


def scattering(y):
    """S = (I − Z0·Y)(I + Z0·Y)^-1 at every frequency, shape (2, 2, n)."""
    normalised = np.moveaxis(Z0 * y, -1, 0)
    identity = np.eye(2)
    s = (identity - normalised) @ np.linalg.inv(identity + normalised)
    return np.moveaxis(s, 0, -1)


def main():
    text = touchstone_text(
        FREQUENCY_HZ,
        scattering(admittance(FREQUENCY_HZ)),
        Z0,
        comments=[
            "Invented demo FET Q1, small-signal common source (port 1 gate, port 2 drain).",
            "Hybrid-pi model, not a measurement: written by generate_transistor.py.",
            f"Cgs={CGS:g} F Ri={RI:g} ohm Cgd={CGD:g} F gm={GM:g} S tau={TAU:g} s"
            f" Rds={RDS:g} ohm Cds={CDS:g} F",
        ],
    )
    (HERE / "transistor.s2p").write_text(text, encoding="ascii")


if __name__ == "__main__":
    main()
