"""The band rules of identification on log-frequency span (issue 11: linear sweeps)."""

import numpy as np
import pytest

from zfit.identification._criteria import log_cells, longest_run, valid_mask


@pytest.mark.parametrize("n", [201, 801, 1601])
def test_on_a_log_sweep_the_span_rules_count_points(rng, n):
    # Evenly log-spaced: every cell the same, so the windows and runs are those of the point counts.
    f = np.geomspace(1e4, 5e8, n)
    e = rng.exponential(1.0, n) * np.where(np.arange(n) > 0.7 * n, 4.0, 1.0)
    np.testing.assert_array_equal(valid_mask(e, None, f), valid_mask(e))
    ok = rng.random(n) > 0.05
    assert longest_run(ok, log_cells(f)) == longest_run(ok)
    np.testing.assert_allclose(log_cells(f), np.log(f[1] / f[0]), rtol=1e-9)  # the definition of the cell


def test_on_a_linear_sweep_the_low_decades_outweigh_the_top_one():
    # 100 kHz .. 100 MHz linear, 801 points: 100 kHz .. 9 MHz is 1.95 decades in 9 % of the points.
    f = np.linspace(1e5, 1e8, 801)
    top = f >= 1e7
    ok = (f < 9e6) | top
    ok[np.searchsorted(f, 9.5e6)] = False
    i0, i1 = longest_run(ok, log_cells(f))
    assert f[i0] == pytest.approx(1e5) and f[i1 - 1] < 9e6  # by span: 1.95 decades against 1
    j0, j1 = longest_run(ok)
    assert f[j0] >= 9.5e6  # by points the top decade would win (common practice: count points)


def test_windows_keep_at_least_nine_points_where_a_linear_sweep_is_sparse(rng):
    # A circuit wrong by 3x in the noise over the bottom decade of a linear sweep (a handful of points):
    # the window of at least 9 points still sees it.
    f = np.linspace(1e5, 1e8, 801)
    e = np.ones(f.size)
    e[:9] = 9.0
    assert not valid_mask(e, None, f)[:4].any()
