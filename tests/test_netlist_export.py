"""Touchstone export: scikit-rf reads back what zfit wrote."""

import numpy as np
import pytest

from zfit._errors import MeasurementWarning, OutputExistsError, ZfitInputError
from zfit.io._touchstone_export import parse_grid, touchstone_text, write_touchstone


def _coil(f):
    s = 2j * np.pi * f
    return 1 / (1 / (0.08 + s * 10e-6) + s * 4e-12)


@pytest.mark.parametrize(
    "text,n,first,last",
    [("1k:1G", 801, 1e3, 1e9), ("1k:1G:13", 13, 1e3, 1e9), ("100k:1G:10/dec", 41, 1e5, 1e9), ("0:1G:11lin", 10, 1e8, 1e9)],
)
def test_parse_grid(text, n, first, last):
    f = parse_grid(text)
    assert f.size == n
    assert f[0] == pytest.approx(first, rel=1e-12) and f[-1] == pytest.approx(last, rel=1e-12)


@pytest.mark.parametrize("bad", ["1G:1k", "abc", "1k:1G:1", "-1:1k"])
def test_parse_grid_rejects(bad):
    with pytest.raises(ZfitInputError, match="--touchstone-grid"):
        parse_grid(bad)


@pytest.mark.parametrize("text, n", [("40:30M:100000000", 100000000), ("1k:1G:200000/dec", 1200001)])
def test_parse_grid_refuses_a_grid_too_large_to_write(text, n):
    # 1e8 points used to run for minutes and fill the memory before any message.
    with pytest.raises(ZfitInputError) as info:
        parse_grid(text)
    assert str(info.value) == f"--touchstone-grid: {text!r} asks for {n} points; at most 1000001 are written"


@pytest.mark.parametrize("r0", [50.0, 75.0])
def test_touchstone_round_trip_through_skrf(tmp_path, r0):
    import skrf

    f = parse_grid("1k:1G:201")
    path = write_touchstone(tmp_path / "coil.s1p", _coil, f, reference_ohm=r0, comments=["source: demo", "model: inductor"])
    net = skrf.Network(str(path))
    np.testing.assert_allclose(net.f, f, rtol=1e-11)
    np.testing.assert_allclose(net.z0[:, 0], r0)
    # Z = R0 (1 + S11) / (1 - S11): the inverse of the reflection coefficient (Pozar, eq. 2.35).
    np.testing.assert_allclose(net.z[:, 0, 0], _coil(f), rtol=1e-9)
    text = path.read_text()
    assert text.startswith("!source: demo\n!model: inductor\n")
    assert "http" not in text


def test_touchstone_warns_on_extrapolation_and_respects_force(tmp_path):
    f = parse_grid("1k:10G:11")
    with pytest.warns(MeasurementWarning, match="extrapolation"):
        path = write_touchstone(tmp_path / "x.s1p", _coil, f, valid_band_hz=(1e3, 1e9))
    assert "!WARNING: Touchstone grid" in path.read_text()
    with pytest.raises(OutputExistsError):
        write_touchstone(path, _coil, parse_grid("1k:1G:11"))
    write_touchstone(path, _coil, parse_grid("1k:1G:11"), force=True)
    assert touchstone_text([1e3], [50.0]).splitlines()[-1].split() == ["1000", "0", "0"]
