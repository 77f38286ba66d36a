"""Write the invented small-signal FET two-port ``transistor.s2p`` used by the circuit examples.

The model is an invented intrinsic hybrid-pi FET (common source; port 1 gate, port 2 drain,
both referred to the source): gate-source capacitance with its charging resistance, a
gate-drain capacitance, a delayed transconductance, drain-source resistance and capacitance.
Its Y-parameters are written out in closed form and converted to S at 50 ohm. No measurement
is involved. Run from the repository root::

    python touchstone_examples/circuits/generate_transistor.py

The output is the same bytes on every machine: frequencies are whole multiples of 100 MHz,
written exactly; the 2x2 conversion to S is written out element by element (no LAPACK call,
whose rounding differs between builds); and every S value is written with nine decimals in a
fixed format, far coarser than the last-digit noise of exp, sin and cos between platforms
(tests/test_examples_deterministic.py writes it again and compares the bytes).
"""

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
Z0 = 50.0
CGS, RI, CGD, GM, TAU, RDS, CDS = 0.35e-12, 3.0, 0.04e-12, 0.065, 2.5e-12, 220.0, 0.07e-12
#: 0.1 GHz to 18 GHz in 0.1 GHz steps, as whole multiples of 100 MHz (exact in floating point).
FREQUENCY_HZ = np.arange(1, 181, dtype=np.int64) * 100_000_000
#: Decimals of every written S value (real and imaginary parts).
DECIMALS = 9


def admittance(frequency_hz):
    """Y-parameters of the hybrid-pi model, shape (2, 2, n), S."""
    s = 2j * np.pi * np.asarray(frequency_hz, dtype=float)
    input_branch = s * CGS / (1 + s * CGS * RI)  # Cgs through its charging resistance Ri
    transconductance = GM * np.exp(-s * TAU) / (1 + s * CGS * RI)
    y = np.empty((2, 2, s.size), dtype=complex)
    y[0, 0] = input_branch + s * CGD
    y[0, 1] = -s * CGD
    y[1, 0] = transconductance - s * CGD
    y[1, 1] = 1 / RDS + s * (CDS + CGD)
    return y


def scattering(y):
    """S = (I − Z0·Y)(I + Z0·Y)^-1 at every frequency, shape (2, 2, n), written out for 2x2
    (element-wise arithmetic only, so every platform rounds alike)."""
    a, b, c, d = Z0 * y[0, 0], Z0 * y[0, 1], Z0 * y[1, 0], Z0 * y[1, 1]
    determinant = (1 + a) * (1 + d) - b * c
    s = np.empty_like(y)
    s[0, 0] = ((1 - a) * (1 + d) + b * c) / determinant
    s[0, 1] = -2 * b / determinant
    s[1, 0] = -2 * c / determinant
    s[1, 1] = ((1 + a) * (1 - d) + b * c) / determinant
    return s


def touchstone_lines(frequency_hz, s):
    """The file's lines: comments, the option line, then one line per frequency in Touchstone
    1.x two-port order (S11 S21 S12 S22, Touchstone specification), fixed decimals."""
    lines = [
        "! Invented demo FET Q1, small-signal common source (port 1 gate, port 2 drain).",
        "! Hybrid-pi model, not a measurement: written by generate_transistor.py.",
        f"! Cgs={CGS:g} F Ri={RI:g} ohm Cgd={CGD:g} F gm={GM:g} S tau={TAU:g} s"
        f" Rds={RDS:g} ohm Cds={CDS:g} F",
        "# Hz S RI R 50",
    ]
    for index, frequency in enumerate(frequency_hz.tolist()):
        numbers = [str(int(frequency))]
        for row, column in ((0, 0), (1, 0), (0, 1), (1, 1)):
            value = complex(s[row, column, index])
            numbers += [_fixed(value.real), _fixed(value.imag)]
        lines.append(" ".join(numbers))
    return lines


def _fixed(value):
    text = f"{value:.{DECIMALS}f}"
    return "0." + "0" * DECIMALS if text == "-0." + "0" * DECIMALS else text


def main(path=None):
    """Write the file (default: ``transistor.s2p`` beside this script); return its path."""
    target = Path(path) if path is not None else HERE / "transistor.s2p"
    lines = touchstone_lines(FREQUENCY_HZ, scattering(admittance(FREQUENCY_HZ)))
    target.write_bytes(("\n".join(lines) + "\n").encode("ascii"))
    return target


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else None)
