"""Make the invented bench files in demo_sweeps/ (readers' part).

Scenario: the incoming-inspection bench of an invented lab, "Larkspur Yard
power electronics", characterises sample parts of a new converter design.
Every part, value and file is invented; the impedances come from the
equivalent-circuit formulas below, the noise from zfit's own instrument-noise
model (complex-circular noise of standard deviation ``rel * |X| + floor`` on
the measured S-parameter or impedance), drawn from a seeded generator, and
the numbers are rounded as an instrument would print them.

Run from anywhere:  python demo_sweeps/make_demo_sweeps.py
(It overwrites only the files it makes, listed in `FILES`.)
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from zfit.data._connection import s_from_impedance  # noqa: E402

SEED = 20261201
Z0 = 50.0
FILES = []


# ----------------------------------------------------------------- models


def inductor(f, L, R_s, C_p, R_p=np.inf):
    """(R_s + sL) || 1/(sC_p) || R_p."""
    s = 2j * np.pi * f
    y = 1 / (R_s + s * L) + s * C_p + (0 if np.isinf(R_p) else 1 / R_p)
    return 1 / y


def capacitor(f, C, ESR, ESL, R_leak=np.inf):
    """ESR + sESL + (1/(sC) || R_leak)."""
    s = 2j * np.pi * f
    zc = 1 / (s * C) if np.isinf(R_leak) else 1 / (s * C + 1 / R_leak)
    return ESR + s * ESL + zc


def skin_resistance(f, R_dc, f_skin):
    """Winding resistance rising as sqrt(f) above the skin-effect corner f_skin."""
    return R_dc * np.sqrt(1 + f / f_skin)


def choke_with_winding_resonance(f):
    """A 470 uH choke whose winding acts as a distributed line.

    The main section (L, R, stray C, core loss) resonates near 2.1 MHz; a
    second, parallel-resonant section (the part of the winding that rings as
    a line segment, L2 || C2 || R2) sits in series with it and resonates near
    59 MHz.  Between them the main stray C and L2 make a series resonance
    (a dip near 31 MHz): one simple circuit cannot describe the whole band.
    """
    s = 2j * np.pi * f
    main = inductor(f, 470e-6, skin_resistance(f, 0.35, 200e3), 12e-12, 60e3)
    section = 1 / (1 / (s * 2.2e-6) + s * 3.3e-12 + 1 / 8e3)
    return main + section


# ----------------------------------------------------------------- noise


def noisy(rng, x, rel, floor):
    """x plus complex-circular noise of standard deviation rel*|x| + floor."""
    sigma = rel * np.abs(x) + floor
    return x + sigma / np.sqrt(2) * (rng.standard_normal(x.shape) + 1j * rng.standard_normal(x.shape))


def s_noise(rng, s):
    # Common practice for a calibrated analyser (see zfit/_readers.py S_NOISE_DEFAULT).
    return noisy(rng, s, 1e-3, 1e-5)


def z_noise(rng, z, rel=1e-3, floor=1e-4):
    return noisy(rng, z, rel, floor)


def sig(x, digits):
    """Round to `digits` significant digits, as the instrument prints."""
    return np.array([float(f"{v:.{digits - 1}e}") for v in np.asarray(x, dtype=float)])


# ----------------------------------------------------------------- writers


def write(name, text):
    path = HERE / name
    path.write_text(text, encoding="utf-8", newline="\n")
    FILES.append(name)
    return path


def touchstone_two_port(f, s11, s21, s22, *, fmt, unit, header, version="1.x", matrix="full"):
    """A two-port Touchstone file of a reciprocal fixture (S12 = S21)."""
    scale = {"Hz": 1, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}[unit]

    def pair(x):
        if fmt == "RI":
            return f"{x.real: .9e} {x.imag: .9e}"
        ang = np.degrees(np.angle(x))
        if fmt == "MA":
            return f"{abs(x):.9e} {ang: .6f}"
        return f"{20 * np.log10(abs(x)): .6f} {ang: .6f}"

    out = [f"! {h}" for h in header]
    if version == "2.0":
        out += ["[Version] 2.0", f"# {unit} S {fmt} R {Z0:g}", "[Number of Ports] 2",
                "[Two-Port Data Order] " + ("21_12" if matrix == "full" else "12_21")]
        out += [f"[Number of Frequencies] {f.size}", f"[Reference] {Z0:g} {Z0:g}", f"[Matrix Format] {matrix.capitalize()}",
                "[Network Data]"]
    else:
        out.append(f"# {unit} S {fmt} R {Z0:g}")
    cols = {"full": "S11 S21 S12 S22", "upper": "S11 S12 S22", "lower": "S11 S21 S22"}[matrix]
    out.append(f"! freq/{unit} {cols}")
    for i in range(f.size):
        vals = {"full": (s11[i], s21[i], s21[i], s22[i]), "upper": (s11[i], s21[i], s22[i]),
                "lower": (s11[i], s21[i], s22[i])}[matrix]
        out.append(f"{f[i] / scale:.10g} " + " ".join(pair(v) for v in vals))
    if version == "2.0":
        out.append("[End]")
    return "\n".join(out) + "\n"


def two_port_of(z, connection):
    """S11, S21, S22 of a one-port part in the fixture (Pozar 2012, Tables 4.1-4.2)."""
    s21 = s_from_impedance(z, connection, Z0)
    # Series: S11 = Z/(Z + 2 Z0) = 1 - S21; shunt: S11 = -Z0/(2Z + Z0) = S21 - 1.
    s11 = 1 - s21 if connection == "series-thru" else s21 - 1
    return s11, s21, s11


def log_grid(f0, f1, n):
    return np.geomspace(f0, f1, n)


# ----------------------------------------------------------------- the files


def main():
    rng = np.random.default_rng(SEED)

    # 1. A 10 uH power inductor, series-thru, 100 kHz .. 200 MHz (SRF ~ 23 MHz).
    f = log_grid(100e3, 200e6, 801)
    z = inductor(f, 10.0e-6, skin_resistance(f, 0.045, 1e6), 4.7e-12, 20e3)
    s11, s21, s22 = two_port_of(z, "series-thru")
    write("ind_10u_series_thru.s2p", touchstone_two_port(
        f, s_noise(rng, s11), s_noise(rng, s21), s_noise(rng, s22), fmt="MA", unit="MHz",
        header=["Larkspur Yard power electronics, incoming inspection bench 2 (invented)",
                "Part: sample L-0117, 10 uH shielded power inductor (invented)",
                "Fixture: series-thru, part soldered across the gap of a 50 ohm line; SOLT calibration at the gap",
                "IF bandwidth 300 Hz, source -10 dBm"]))

    # 2. A 100 nF ceramic capacitor, shunt-thru, 10 kHz .. 500 MHz (SRF ~ 17 MHz).
    f = log_grid(10e3, 500e6, 801)
    z = capacitor(f, 100e-9, 0.008, 0.9e-9, 2e9)
    s11, s21, s22 = two_port_of(z, "shunt-thru")
    write("cap_100n_shunt_thru.s2p", touchstone_two_port(
        f, s_noise(rng, s11), s_noise(rng, s21), s_noise(rng, s22), fmt="DB", unit="kHz",
        header=["Larkspur Yard power electronics, incoming inspection bench 2 (invented)",
                "Part: sample C-0342, 100 nF 0603 X7R decoupling capacitor (invented)",
                "Fixture: shunt-thru, part from the line to the ground plane; calibration at the pads",
                "IF bandwidth 100 Hz, source 0 dBm"]))

    # 3. A 470 uH choke with a winding resonance, series-thru, Touchstone 2.0, upper matrix.
    f = log_grid(10e3, 200e6, 1001)
    z = choke_with_winding_resonance(f)
    s11, s21, s22 = two_port_of(z, "series-thru")
    write("choke_470u_winding_resonance.ts", touchstone_two_port(
        f, s_noise(rng, s11), s_noise(rng, s21), s_noise(rng, s22), fmt="RI", unit="Hz", version="2.0",
        matrix="upper",
        header=["Larkspur Yard power electronics, EMI filter bench (invented)",
                "Part: sample CH-0021, 470 uH single-winding filter choke (invented)",
                "Fixture: series-thru; the winding rings as a line above the first resonance"]))

    # 4. A 2.2 uH RF inductor by reflection, 300 kHz .. 1 GHz (SRF ~ 80 MHz).
    f = log_grid(300e3, 1e9, 601)
    z = inductor(f, 2.2e-6, skin_resistance(f, 0.02, 2e6), 1.8e-12, 40e3)
    s = s_noise(rng, s_from_impedance(z, "reflection", Z0))
    lines = ["! Larkspur Yard power electronics, RF bench (invented)",
             "! Part: sample L-0388, 2.2 uH wire-wound RF inductor (invented)",
             "! Fixture: reflection, part at the end of a calibrated 50 ohm probe",
             "# GHz S RI R 50", "! freq/GHz re(S11) im(S11)"]
    lines += [f"{fi / 1e9:.10g} {si.real: .9e} {si.imag: .9e}" for fi, si in zip(f, s)]
    write("ind_2u2_reflection.s1p", "\n".join(lines) + "\n")

    # 5. Impedance analyser export, |Z| and phase in degrees: a 100 uH inductor, 40 Hz .. 30 MHz.
    f = log_grid(40, 30e6, 401)
    z = z_noise(rng, inductor(f, 100e-6, skin_resistance(f, 0.12, 300e3), 8e-12, 30e3))
    rows = ["# Larkspur Yard power electronics, impedance analyser bench (invented)",
            "# Part: sample L-0204, 100 uH toroidal inductor (invented); OSC level 0.5 V; open/short compensated",
            "Frequency (Hz),|Z| (Ohm),Phase (deg)"]
    rows += [f"{a:.6e},{b:.6e},{c:.4f}" for a, b, c in zip(f, sig(np.abs(z), 6), np.degrees(np.angle(z)))]
    write("ind_100u_analyser_zphase.csv", "\n".join(rows) + "\n")

    # 6. LCR meter, Ls + Rs (series mode), tab separated: a 47 uH inductor, 100 Hz .. 1 MHz.
    f = sig(log_grid(100, 1e6, 41), 3)
    z = z_noise(rng, inductor(f, 47e-6, skin_resistance(f, 0.085, 150e3), 3e-12, 80e3), 5e-4, 2e-4)
    w = 2 * np.pi * f
    rows = ["! Larkspur Yard power electronics, LCR meter at goods-in (invented)",
            "! Part: sample L-0151, 47 uH drum-core inductor (invented); 1 V, series mode",
            "Freq [kHz]\tLs [uH]\tRs [mOhm]"]
    rows += [f"{a / 1e3:.5g}\t{b:.6g}\t{c:.5g}" for a, b, c in zip(f, sig(z.imag / w * 1e6, 6), sig(z.real * 1e3, 5))]
    write("ind_47u_lcr_ls_rs.txt", "\n".join(rows) + "\n")

    # 7. LCR meter, Cp + D (parallel mode), semicolon separated: a 4.7 uF capacitor, 100 Hz .. 1 MHz.
    f = sig(log_grid(100, 1e6, 41), 3)
    z = z_noise(rng, capacitor(f, 4.7e-6, 0.006, 1.2e-9, 50e6), 5e-4, 2e-4)
    y = 1 / z
    w = 2 * np.pi * f
    cp, d = y.imag / w, y.real / y.imag
    rows = ["# Larkspur Yard power electronics, LCR meter at goods-in (invented)",
            "# Part: sample C-0410, 4.7 uF 1206 X5R capacitor (invented); 0.5 V, parallel mode, no DC bias",
            "# Discharge capacitors before connecting them to the meter.",
            "Freq (kHz);Cp (uF);D"]
    rows += [f"{a / 1e3:.5g};{b:.6g};{c:.5g}" for a, b, c in zip(f, sig(cp * 1e6, 6), sig(d, 5))]
    write("cap_4u7_lcr_cp_d.csv", "\n".join(rows) + "\n")

    for name in FILES:
        print(HERE / name)


if __name__ == "__main__":
    main()
