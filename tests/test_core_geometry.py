"""The core constant of a toroid (zfit.identification._core_geometry) and the core description (zfit.io._core_spec)."""

import math

import pytest
from scipy.integrate import quad

from zfit._errors import ZfitInputError
from zfit.identification._core_geometry import MU0, core_constant
from zfit.io._core_spec import core_spec, length_m


@pytest.mark.parametrize("od,id_,h", [(25e-3, 15e-3, 10e-3), (9.5e-3, 4.75e-3, 3.2e-3), (102e-3, 66e-3, 15e-3)])
def test_toroid_constant_closed_form_and_integral(od, id_, h):
    c = core_constant(core_spec(10, od * 1e3, id_ * 1e3, h * 1e3))
    # Closed form of a rectangular section, C1 = 2 pi/(h ln(OD/ID)) (IEC 60205, ring cores; from memory).
    assert c.c1_per_m == pytest.approx(2 * math.pi / (h * math.log(od / id_)), rel=1e-12)
    # Numerical integration: the ring is thin rings of width dr in parallel, each of l/A = 2 pi r/(h dr),
    # so 1/C1 = integral of h/(2 pi r) dr, i.e. C1 = 1/integral(1/(2 pi r/h)) over r1..r2 (Ampere's law, H ~ 1/r).
    perm, _ = quad(lambda r: 1.0 / (2 * math.pi * r / h), id_ / 2, od / 2, epsabs=0, epsrel=1e-13)
    assert c.c1_per_m == pytest.approx(1.0 / perm, rel=1e-10)
    # Effective length of a ring, l_e = 2 pi ln(r2/r1)/(1/r1 - 1/r2) (ferrite handbooks; IEC 60205, from memory),
    # and the inductance of the air core L_0 = mu_0 N^2/C1 (definition).
    r1, r2 = id_ / 2, od / 2
    assert c.le_m == pytest.approx(2 * math.pi * math.log(r2 / r1) / (1 / r1 - 1 / r2), rel=1e-12)
    assert c.ae_m2 * c.le_m == pytest.approx(c.ve_m3, rel=1e-12)
    assert c.le_m / c.ae_m2 == pytest.approx(c.c1_per_m, rel=1e-12)
    assert c.l0_h == pytest.approx(MU0 * 100 / c.c1_per_m, rel=1e-15)


def test_thin_ring_tends_to_the_mean_path():
    # A thin ring: l_e -> pi (OD + ID)/2 and A_e -> h (OD - ID)/2 (geometry; limit of the formulas above).
    c = core_constant(core_spec(1, 100.0, 99.0, 2.0))
    assert c.le_m == pytest.approx(math.pi * 99.5e-3, rel=1e-4)
    assert c.ae_m2 == pytest.approx(2e-3 * 0.5e-3, rel=1e-4)


def test_given_constant_and_effective_parameters():
    # C1 = l_e/A_e (definition): 60 mm over 50 mm^2 is 1200 1/m.
    c = core_constant(core_spec(3, le="60", ae="50"))
    assert c.c1_per_m == pytest.approx(1200.0, rel=1e-12)
    c2 = core_constant(core_spec(3, core_constant="1200", geometry_tol="1%"))
    assert c2.c1_per_m == 1200.0 and c2.rel_std == pytest.approx(0.01 / math.sqrt(3), rel=1e-12)


def test_lengths_are_millimetres_unless_prefixed():
    # docs/cores.md: a bare number is mm, a prefixed one is metres in engineering notation.
    assert length_m("25", "--od") == pytest.approx(25e-3, rel=1e-15)
    assert length_m("25mm", "--od") == pytest.approx(25e-3, rel=1e-15)
    assert length_m("25m", "--od") == pytest.approx(25e-3, rel=1e-15)
    assert length_m(12.5, "--od") == pytest.approx(12.5e-3, rel=1e-15)
    assert length_m("800u", "--od") == pytest.approx(0.8e-3, rel=1e-15)


@pytest.mark.parametrize("kwargs,message", [
    ({"turns": 0, "od": 25, "id_": 15, "height": 10}, "whole number of turns"),
    ({"turns": 2.5, "od": 25, "id_": 15, "height": 10}, "whole number of turns"),
    ({"turns": 5, "od": 15, "id_": 15, "height": 10}, "must be below"),
    ({"turns": 5, "od": 10, "id_": 15, "height": 10}, "must be below"),
    ({"turns": 5, "od": 25, "id_": 15}, "missing height"),
    ({"turns": 5}, "give the core"),
    ({"turns": 5, "od": 25, "id_": 15, "height": 10, "core_constant": 1200}, "one description"),
    ({"turns": 5, "od": -25, "id_": 15, "height": 10}, "positive"),
])
def test_bad_core_descriptions(kwargs, message):
    with pytest.raises(ZfitInputError, match=message):
        core_spec(**kwargs)
