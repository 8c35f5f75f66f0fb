"""Make the invented DC-bias set in demo_sweeps/bias_ind_22u/ (``zfit bias``).

Scenario: the power-magnetics bench of the invented lab "Larkspur Yard power
electronics" measures a 22 uH shielded power inductor (invented part
L-0522) with an impedance analyser and a DC-bias current source, at nine
currents from 0 to 8 A.  Every value is invented.

Physics, written out here (not zfit's):

* L(I) = L0 / (1 + (I/I_s)^n), the roll-off form that powder-core makers
  publish for permeability against DC magnetising force (from memory);
  L0 = 22 uH, I_s = 6.5 A (L halved), n = 2.8;
* winding resistance R_dc = 18 mohm at 25 degC, rising with the copper's
  temperature coefficient 0.00393 /K (IEC 60028) as I^2 R heats the
  part by 6 K/W x I^2 R_dc (invented thermal resistance), and with
  sqrt(f) above its skin-effect corner at 400 kHz;
* inter-winding capacitance C_p = 6.8 pF (constant: it is geometry);
* core loss as a parallel resistance R_p = 18 kohm, falling 30 % at full
  bias (the minor-loop losses of a biased core).

Instrument error model (an impedance analyser's stated accuracy, common
practice for such data sheets): the standard deviation of |Z|, relative,
is A = 0.05 % + Z_s/|Z| + Y_o*|Z| with short residual Z_s = 2 mohm and open
residual Y_o = 20 nS, and the phase standard deviation in radians equals A.
Readings are printed to 6 significant digits (|Z|) and 0.001 deg (phase).
Drawn from a seeded generator.

Run from anywhere:  python demo_sweeps/make_demo_bias.py
(It overwrites only the files it makes.)
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
FOLDER = HERE / "bias_ind_22u"
SEED = 20261202
BIASES_A = (0, 1, 2, 3, 4, 5, 6, 7, 8)


def inductance(i_a, L0=22e-6, I_s=6.5, n=2.8):
    """L0 / (1 + (I/I_s)^n)."""
    return L0 / (1 + (i_a / I_s) ** n)


def winding_resistance(f, i_a, R_dc=0.018, f_skin=400e3):
    """Copper resistance warmed by its own I^2 R, and rising as sqrt(f) above the skin corner."""
    delta_t = 6.0 * i_a ** 2 * R_dc
    return R_dc * (1 + 0.00393 * delta_t) * np.sqrt(1 + f / f_skin)


def impedance(f, i_a):
    """(R_s + jwL) || 1/(jwC_p) || R_p."""
    s = 2j * np.pi * f
    r_p = 18e3 * (1 - 0.3 * i_a / max(BIASES_A))
    y = 1 / (winding_resistance(f, i_a) + s * inductance(i_a)) + s * 6.8e-12 + 1 / r_p
    return 1 / y


def measured(rng, z):
    """|Z| and phase (deg) with the analyser's error model, as printed."""
    mag = np.abs(z)
    a = 5e-4 + 2e-3 / mag + 20e-9 * mag
    mag_m = mag * (1 + a * rng.standard_normal(mag.shape))
    ph_m = np.degrees(np.angle(z) + a * rng.standard_normal(mag.shape))
    return mag_m, ph_m


def main():
    rng = np.random.default_rng(SEED)
    FOLDER.mkdir(exist_ok=True)
    f = np.geomspace(1e3, 30e6, 201)
    for i_a in BIASES_A:
        mag, ph = measured(rng, impedance(f, float(i_a)))
        rows = ["# Larkspur Yard power electronics, power-magnetics bench (invented)",
                f"# Part: sample L-0522, 22 uH shielded power inductor (invented); DC bias {i_a} A from the bias source",
                "# OSC level 0.1 V; open/short compensated at the bias fixture",
                "Frequency (Hz),|Z| (Ohm),Phase (deg)"]
        rows += [f"{a:.6e},{float(f'{b:.5e}'):.6e},{c:.3f}" for a, b, c in zip(f, mag, ph)]
        path = FOLDER / f"ind_22u_dc_{i_a}A.csv"
        path.write_text("\n".join(rows) + "\n", encoding="utf-8", newline="\n")
        print(path)


if __name__ == "__main__":
    main()
