"""Calibration of the reported uncertainties by Monte Carlo.

Three parts simulated once by ngspice (an independent simulator), then 200
noisy analyser measurements of each (noise drawn on S with the analyser
noise model, `InstrumentNoise(1e-3, 1e-5)`, common practice).  For honest
standard uncertainties the truth lies within +-2 reported sigma in 95.4 % of
realisations (the two-sided normal coverage, JCGM 100:2008 G.1.3 and table
G.1); issue 3 asks for 90-98 % for each parameter.  With 200 realisations
the binomial standard deviation of a 95.4 % coverage is 1.5 %, so the band
is more than three of those wide on each side.
"""

import warnings

import numpy as np
import pytest

from ngspice import run_ac
from zfit._errors import MeasurementWarning
from zfit.identification._pipeline import identify

from test_identify_ngspice import noisy_sweep

pytestmark = pytest.mark.ngspice

N_REAL = 200

CASES = [
    # An RF inductor measured in reflection: SRF in band.
    ("inductor", {"L": 2.2e-6, "R_s": 0.8, "C_p": 1.5e-12},
     "L1 n1 a 2.2e-6\nR1 a 0 0.8\nC1 n1 0 1.5e-12", (1e6, 2e8), "reflection"),
    # A ceramic capacitor measured in shunt-thru (the low-impedance connection).
    ("capacitor", {"C": 1e-6, "ESR": 0.015, "ESL": 0.8e-9},
     "R1 n1 a 0.015\nL1 a b 0.8e-9\nC1 b 0 1e-6", (1e4, 1e8), "shunt-thru"),
    # A ferrite-cored inductor with core loss, measured series-thru.
    ("inductor", {"L": 100e-6, "R_s": 2.0, "C_p": 4.7e-12, "R_p": 30e3},
     "L1 n1 a 100e-6\nR1 a 0 2.0\nC1 n1 0 4.7e-12\nR2 n1 0 30e3", (1e4, 2e7), "series-thru"),
]


@pytest.fixture(scope="module")
def coverage():
    rng = np.random.default_rng(77)
    out = []
    for kind, truth, netlist, band, conn in CASES:
        f, z = run_ac(netlist, band[0], band[1], 60)
        inside = {k: 0 for k in truth}
        topo_ok = 0
        for i in range(N_REAL):
            sweep = noisy_sweep(f, z, conn, rng, f"mc-{kind}-{i}")
            with warnings.catch_warnings():
                warnings.simplefilter("ignore", MeasurementWarning)
                r = identify(sweep, kind)
            topo_ok += set(r.parameters) == set(truth)
            for k, t in truth.items():
                if k in r.parameters:
                    e = r.parameters[k]
                    inside[k] += abs(e.value - t) <= 2 * e.std
        out.append((kind, conn, truth, inside, topo_ok))
    return out


def test_two_sigma_coverage_between_90_and_98_percent(coverage):
    report = []
    for kind, conn, truth, inside, topo_ok in coverage:
        assert topo_ok == N_REAL, (kind, conn, topo_ok)
        for k, n in inside.items():
            report.append((kind, conn, k, n / N_REAL))
    bad = [r for r in report if not 0.90 <= r[3] <= 0.98]
    assert not bad, report
