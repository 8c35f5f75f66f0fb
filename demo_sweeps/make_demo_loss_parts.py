"""Make the invented parts with frequency-dependent losses in demo_sweeps/.

Scenario: the incoming-inspection bench of the invented lab "Larkspur Yard
power electronics" characterises three sample parts for the input filter
of a new converter, parts whose losses no constant R describes. Every part,
value, instrument setting and file here is invented.

* L-0455: a 33 uH air-cored coil of round copper wire whose winding
  resistance rises with the skin effect, ``Z_w = R_dc sqrt(1 + j f/f_c) + j
  omega L`` (Wheeler 1942, exact at DC and in the sqrt(f) limit for a round
  wire), R_dc = 0.12 ohm, f_c = 40 kHz, with C_p = 6 pF across the winding.
  Measured on an impedance analyser, |Z| and phase, 40 Hz - 30 MHz.
* C-0520: a 220 uF aluminium electrolytic: the oxide's constant loss
  tangent D = 0.09 (``1/(j omega C (1 - j D))``, Jonscher 1983), so its
  ESR falls as D/(omega C) to the plateau of the electrolyte and foil,
  ESR_0 = 35 mohm, with ESL = 12 nH in series. Measured shunt-thru on a
  low-frequency network analyser, 20 Hz - 20 MHz.
* L-0731: a 220 uH inductor on a ferrite drum core whose permeability
  relaxes with one time constant (Debye 1929; Snoek 1948),
  ``L(f) = L_i (mu_inf/mu_i + (1 - mu_inf/mu_i)/(1 + j f/f_r))`` with
  mu_inf/mu_i = 0.03 and f_r = 600 kHz, winding R_dc = 80 mohm and C_p =
  3.5 pF. Measured on the impedance analyser, 100 Hz - 40 MHz.

The instrument errors are written out here (values of this script in the
form instrument specifications state them, common practice, from memory;
not any instrument's figures):

* impedance analyser: a relative error of |Z| of 0.08 % and a phase error of
  0.05 degree in mid band, each growing as ``1 + u^2`` (twice at the edges) towards the band
  edges (u = -1 .. 1 across the band in log f: the source level and the
  bridge's range degrade at the ends), plus a complex floor of 0.2 mohm;
  printed to 7 significant digits;
* network analyser: the one-port error box on S11, ``e00 + e10e01 S/(1 -
  e11 S)`` with residual directivity e00, source match e11 and tracking
  e10e01 after calibration, and a transmission tracking t and crosstalk x on
  S21, ``t S21 + x`` (Marks, "Formulations of the basic vector network
  analyzer error model including switch terms", ARFTG 50, 1997), then trace
  noise of 0.004 dB and 0.03 degree with a -90 dB floor; printed to 9
  significant digits.

Shunt-thru (the part from the line to ground): ``S21 = 2 Z/(2 Z + Z0)``,
``S11 = -Z0/(2 Z + Z0)`` (Pozar, Microwave Engineering, 4th ed., 2012,
Table 4.2).

Run from anywhere:  python demo_sweeps/make_demo_loss_parts.py
(Seeded: it remakes its three files byte for byte and touches no others.)
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
SEED = 20261202
Z0 = 50.0
TWO_PI = 2 * math.pi


def skin_effect_coil(f, L=33e-6, r_dc=0.12, f_c=40e3, c_p=6e-12):
    """L-0455: ``(R_dc sqrt(1 + j f/f_c) + j omega L) || C_p``."""
    s = 1j * TWO_PI * f
    return 1 / (1 / (r_dc * np.sqrt(1 + 1j * f / f_c) + s * L) + s * c_p)


def electrolytic(f, c=220e-6, d=0.09, esr0=0.035, esl=12e-9):
    """C-0520: ``ESR_0 + j omega ESL + 1/(j omega C (1 - j D))``."""
    s = 1j * TWO_PI * f
    return esr0 + s * esl + 1 / (s * c * (1 - 1j * d))


def ferrite_core_inductor(f, l_i=220e-6, ratio=0.03, f_r=600e3, r_dc=0.08, c_p=3.5e-12):
    """L-0731: ``(R_dc + j omega L_i (ratio + (1 - ratio)/(1 + j f/f_r))) || C_p``."""
    s = 1j * TWO_PI * f
    zw = r_dc + s * l_i * (ratio + (1 - ratio) / (1 + 1j * f / f_r))
    return 1 / (1 / zw + s * c_p)


def edge_growth(f):
    """1 in mid band, 2 at either edge: ``1 + u^2`` with u = -1 .. 1 across the band in log f."""
    lf = np.log10(f)
    u = (2 * lf - lf[0] - lf[-1]) / (lf[-1] - lf[0])
    return 1 + u**2


def analyser_reading(f, z, rng, rel=8e-4, phase_deg=0.05, floor=2e-4):
    """The impedance analyser's reading of `z`: magnitude and phase errors growing at the edges, and a floor."""
    g = edge_growth(f)
    zm = z * (1 + rel * g * rng.standard_normal(f.size)) * np.exp(1j * math.radians(phase_deg) * g
                                                                    * rng.standard_normal(f.size))
    return zm + floor / math.sqrt(2) * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size))


def trace_noise(s, rng, db=0.004, phase_deg=0.03, floor=3.2e-5):
    """0.004 dB and 0.03 degree of trace noise, and a -90 dB complex-circular floor."""
    mag = 10 ** (db * rng.standard_normal(s.shape) / 20)
    ph = np.exp(1j * math.radians(phase_deg) * rng.standard_normal(s.shape))
    return s * mag * ph + floor / math.sqrt(2) * (rng.standard_normal(s.shape) + 1j * rng.standard_normal(s.shape))


def calibrated_two_port(s11, s21, e00=4e-4 - 3e-4j, e11=2e-3 + 1e-3j, e10e01=1.0005 - 4e-4j,
                        t=0.9996 + 3e-4j, x=2e-6):
    """The S11, S21 an analyser reports with its calibration residuals (one-port box, tracking, crosstalk)."""
    return e00 + e10e01 * s11 / (1 - e11 * s11), t * s21 + x


def zphase_table(f, z, header):
    rows = [f"# {h}" for h in header] + ["Frequency (Hz),|Z| (Ohm),Phase (deg)"]
    rows += [f"{a:.7e},{abs(b):.7e},{math.degrees(np.angle(b)):.5f}" for a, b in zip(f, z)]
    return "\n".join(rows) + "\n"


def touchstone_two_port(f, s11, s21, header):
    out = [f"! {h}" for h in header] + ["# Hz S RI R 50"]
    for i in range(f.size):
        out.append(f"{f[i]:.10g} " + " ".join(f"{c[i].real: .9e} {c[i].imag: .9e}" for c in (s11, s21, s21, s11)))
    return "\n".join(out) + "\n"


def analyser_file(f, z, rng, part):
    """The impedance analyser bench's |Z|-phase export of `z`, `part` the header line naming the sample."""
    return zphase_table(f, analyser_reading(f, z, rng), [
        "Larkspur Yard power electronics, impedance analyser bench (invented)",
        f"Part: {part}; open/short compensated",
    ])


def main():
    rng = np.random.default_rng(SEED)
    written = []

    f = np.geomspace(40, 30e6, 241)
    written.append(("ind_33u_skin_analyser.csv", analyser_file(
        f, skin_effect_coil(f), rng,
        "sample L-0455, 33 uH air-cored filter coil, 0.5 mm copper (invented); OSC level 0.5 V")))

    f = np.geomspace(20, 20e6, 241)
    z = electrolytic(f)
    s11, s21 = calibrated_two_port(-Z0 / (2 * z + Z0), 2 * z / (2 * z + Z0))
    written.append(("cap_220u_electrolytic_shunt_thru.s2p", touchstone_two_port(
        f, trace_noise(s11, rng), trace_noise(s21, rng), [
            "Larkspur Yard power electronics, low-frequency network analyser, EMI filter bench (invented)",
            "Part: sample C-0520, 220 uF 35 V aluminium electrolytic, radial (invented); no DC bias",
            "Fixture: shunt-thru, part from the through line to ground; full two-port calibration at the fixture",
            "Discharge capacitors before connecting them to the analyser.",
        ])))

    f = np.geomspace(100, 40e6, 241)
    written.append(("ind_220u_ferrite_analyser.csv", analyser_file(
        f, ferrite_core_inductor(f), rng,
        "sample L-0731, 220 uH ferrite drum-core inductor (invented); OSC level 0.2 V")))

    for name, text in written:
        (HERE / name).write_text(text, encoding="utf-8", newline="\n")
        print(HERE / name)


if __name__ == "__main__":
    main()
