import numpy as np

from ngspice import run_ac, run_tran


def test_ac_impedance_of_series_rl_matches_formula():
    # Z = R + j w L for a series R-L (circuit theory, common practice).
    f, z = run_ac("R1 n1 n2 10\nL1 n2 0 1u", 1e3, 1e8, 10)
    expected = 10 + 2j * np.pi * f * 1e-6
    np.testing.assert_allclose(z, expected, rtol=1e-8)


def test_tran_rc_step_matches_exponential():
    # v(t) = 1 - exp(-t/RC) for an R-C charged from a step (textbook first-order response).
    t, v = run_tran("V1 in 0 PWL(0 0 1n 1)\nR1 in out 1k\nC1 out 0 1n", 1e-8, 5e-6, ["out"], 1e-9)
    sel = t > 1e-7
    np.testing.assert_allclose(v["out"][sel], 1 - np.exp(-(t[sel] - 0.5e-9) / 1e-6), atol=2e-3)
