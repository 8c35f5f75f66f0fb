"""The split-band check of identification/_model_error.py (Hausman 1978).

The parts are written out here from their physical forms: a series R-L with
parallel C (the lumped form exactly) and a round-wire winding whose
resistance rises as ``R_dc sqrt(1 + j f/f_c)`` (Wheeler 1942), with 0.2 %
and 0.15 degree analyser noise (common practice, from memory).
"""

import math
import warnings

import numpy as np
import pytest

import zfit
from zfit._errors import MeasurementWarning

TWO_PI = 2 * math.pi


def _sweep(f, z, seed):
    rng = np.random.default_rng(seed)
    rel, ph = 2e-3, math.radians(0.15)
    zm = z * (1 + rel * rng.standard_normal(f.size)) * np.exp(1j * ph * rng.standard_normal(f.size))
    return zfit.Sweep(f, zm, np.abs(z) * math.hypot(rel, ph), source="generated")


def _identify(sweep, **kw):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", MeasurementWarning)
        r = zfit.identify(sweep, **kw)
    return r, [str(w.message) for w in caught]


def test_a_part_of_the_circuits_form_is_left_alone():
    # The test rejects at 0.1 % per half: among 20 exact parts none (or one by chance) is widened.
    f = np.geomspace(1e3, 3e7, 151)
    w = TWO_PI * f
    widened = 0
    for seed in range(20):
        z = 1 / (1 / (0.3 + 1j * w * 10e-6) + 1j * w * 5e-12)
        r, _ = _identify(_sweep(f, z, seed))
        assert r.fit.split_band.halves == 2
        widened += bool(r.fit.split_band.widened)
    assert widened <= 1


def test_a_constant_r_fitted_to_a_skin_effect_winding_is_widened():
    # R rises from 50 milliohm at DC as sqrt(f) past 20 kHz: the halves of the band see different
    # windings, and the constant-R_s circuit's uncertainties must say so.
    f = np.geomspace(1e3, 3e7, 201)
    w = TWO_PI * f
    zw = 0.05 * np.sqrt(1 + 1j * f / 20e3)
    z = 1 / (1 / (zw + 1j * w * 10e-6) + 1j * w * 5e-12)
    r, texts = _identify(_sweep(f, z, 3), model="series R_s-L with parallel C_p")
    widened = dict(r.fit.split_band.widened)
    assert r.fit.split_band.halves == 2 and max(widened.values()) > 3.0
    note = next(t for t in texts if "fitted over the lower and the upper part of its band" in t)
    assert all(k in note for k in widened)
    # The JSON says what was widened.
    d = r.to_dict()["fit"]["split_band_check"]
    assert d["halves_refitted"] == 2 and d["widened"] == pytest.approx(widened)
