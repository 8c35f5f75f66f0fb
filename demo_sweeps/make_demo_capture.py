"""Make the invented oscilloscope captures of demo_sweeps/ (seeded: byte for byte).

The bench (invented, Larkspur Yard's incoming inspection): a function
generator with a 50 ohm output drives a square wave through the coil
L-0233 (an invented 4.7 mH bobbin choke: 12 ohm winding resistance, 38 pF
stray capacitance) in series with a sense resistor to ground.  A two-channel
8-bit bench oscilloscope samples the drive at the coil (CH1) and the voltage
across the sense resistor (CH2).

* ``coil_4m7_square_1k.csv``   sense resistor 1 kohm: the coil's impedance
  (``zfit step ... --input CH1 --output CH2 --shunt 1k``).
* ``coil_4m7_ring_100k.csv``   sense resistor 100 kohm: the coil's own
  resonance rings after each edge (``--inductance 4.7m``).
* ``coil_4m7_ring_100k_plus_100p.csv``   the same with a 100 pF capacitor
  across the coil, for the two-resonance method
  (``--added-capture ... --added-capacitance 100p``).

How the samples are computed (own model formulas, no simulator): the
coil's impedance ``Z = (R_w + sL) || 1/(sC_p)`` (with the added capacitor in
parallel), the load ``Z + R_sense``, and the divider with the generator's
50 ohm give ``V_in/V_g = (Z + R)/(Z + R + 50)`` and ``V_out/V_g = R/(Z + R + 50)``
as ratios of polynomials in s.  The generator's open-circuit square wave has
edges shaped by a second-order output stage (edge time set to about 300 ns); the scope's
front end is a 4th-order Bessel-like low pass at 20 MHz on both channels.
`scipy.signal.lsim` evaluates the responses on the scope's time grid; white
noise of half a code and rounding to 256 codes over the vertical range make
the bench-like samples.  The files are written the way a bench scope exports
(a few metadata lines, a header, a time column).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from scipy import signal

HERE = Path(__file__).resolve().parent
SEED = 20261201

L_H = 4.7e-3       # coil L-0233 (invented)
RW_OHM = 12.0
CP_F = 38e-12
RG_OHM = 50.0      # generator output resistance
VG_PP = 5.0        # open-circuit square wave, 0 to 5 V


def _poly_responses(r_sense, c_added=0.0):
    """Return (num_in, num_out, den) of V_in/V_g and V_out/V_g as polynomials in s."""
    c = CP_F + c_added
    # Z = (Rw + sL) / (1 + sC(Rw + sL)) = N/D
    zn = np.array([L_H, RW_OHM])
    zd = np.array([L_H * c, RW_OHM * c, 1.0])
    # V_in/V_g = (N + R D) / (N + (R + Rg) D); V_out/V_g = R D / (N + (R + Rg) D)
    num_in = np.polyadd(zn, r_sense * zd)
    num_out = r_sense * zd
    den = np.polyadd(zn, (r_sense + RG_OHM) * zd)
    return num_in, num_out, den


def _capture(r_sense, c_added, dt, half_period, n, v_range, rng):
    t = np.arange(n) * dt
    # Open-circuit drive: the generator's edge time set to about 300 ns (a
    # second-order output stage), so that a 25 MSa/s record does not alias.
    square = np.where(((t + 0.25 * half_period) // half_period) % 2 == 1, VG_PP, 0.0)
    w = 2 * np.pi * 1.2e6
    gen = signal.lti([w * w], [1.0, 1.6 * w, w * w])
    _, vg, _ = signal.lsim(gen, square, t)
    num_in, num_out, den = _poly_responses(r_sense, c_added)
    _, v_in, _ = signal.lsim(signal.lti(num_in, den), vg, t)
    _, v_out, _ = signal.lsim(signal.lti(num_out, den), vg, t)
    # The scope's front end, the same on both channels.
    b, a = signal.bessel(4, 2 * np.pi * 20e6, analog=True, norm="mag")
    scope = signal.lti(b, a)
    _, v_in, _ = signal.lsim(scope, v_in, t)
    _, v_out, _ = signal.lsim(scope, v_out, t)

    def adc(v, lo, hi):
        lsb = (hi - lo) / 256.0
        codes = np.clip(np.round((v + rng.normal(0.0, 0.5 * lsb, v.size) - lo) / lsb), 0, 255)
        return lo + codes * lsb

    return t, adc(v_in, *v_range[0]), adc(v_out, *v_range[1])


def _write(path, t, ch1, ch2, dt, note):
    lines = [
        "Instrument,Larkspur Yard bench scope 2 (invented)",
        f"Note,{note}",
        f"Record length,{t.size}",
        f"Sample interval,{dt:.4E}",
        "Trigger point,0",
        "Vertical units,V",
        "",
        "Time,CH1,CH2",
    ]
    rows = "\n".join(f"{a:.7E},{b:.5f},{c:.5f}" for a, b, c in zip(t, ch1, ch2))
    path.write_text("\n".join(lines) + "\n" + rows + "\n")


def main():
    rng = np.random.default_rng(SEED)
    dt = 40e-9  # 25 MSa/s
    # 1 kohm sense: tau = L/(R + Rw) = 4.6 us; 10 kHz square wave, 1 ms record.
    t, a, b = _capture(1e3, 0.0, dt, 50e-6, 25000, ((-0.5, 5.5), (-0.5, 5.5)), rng)
    _write(HERE / "coil_4m7_square_1k.csv", t, a, b, dt, "L-0233 with 1 kohm sense resistor; CH1 drive at coil; CH2 across sense")
    # 100 kohm sense: the coil's resonance (about 376 kHz) rings after each edge.
    t, a, b = _capture(100e3, 0.0, dt, 40e-6, 10000, ((-0.5, 5.5), (-2.0, 8.0)), rng)
    _write(HERE / "coil_4m7_ring_100k.csv", t, a, b, dt, "L-0233 with 100 kohm sense resistor")
    t, a, b = _capture(100e3, 100e-12, dt, 40e-6, 10000, ((-0.5, 5.5), (-2.0, 8.0)), rng)
    _write(HERE / "coil_4m7_ring_100k_plus_100p.csv", t, a, b, dt,
           "L-0233 with 100 pF across it and 100 kohm sense resistor")


if __name__ == "__main__":
    main()
