"""Oscilloscope CSV layouts whose first column is a sample index (issue 16)."""

import numpy as np
import pytest

from zfit import ZfitInputError
from zfit.io._capture import read_capture


def _step(n=2000):
    # A 1 V step at sample 500 on CH1 and half of it on CH2 (invented record).
    k = np.arange(n)
    return k, np.where(k > 500, 1.0, 0.0), np.where(k > 500, 0.5, 0.0)


def test_index_column_with_start_and_increment_header(tmp_path):
    k, a, b = _step()
    rows = ["X,CH1,CH2,Start,Increment,", "Sequence,Volt,Volt,-2e-05,4e-08"]
    rows += [f"{i},{x:.4e},{y:.4e}," for i, x, y in zip(k, a, b)]
    path = tmp_path / "scope.csv"
    path.write_text("\n".join(rows) + "\n")
    cap = read_capture(path)
    # The increment of the header is the sample interval, exactly (the file's own number).
    assert cap.dt == 4e-08
    assert cap.t0 == pytest.approx(-2e-05, rel=1e-12)
    assert list(cap.channels) == ["CH1", "CH2"] and cap.n_samples == 2000
    np.testing.assert_array_equal(cap.channel("CH2"), b)
    assert any("sample index" in n and "'Increment'" in n for n in cap.notes)


def test_index_column_without_increment_is_refused_in_one_line(tmp_path):
    k, a, b = _step()
    path = tmp_path / "idx.csv"
    path.write_text("\n".join(["X,CH1,CH2"] + [f"{i},{x:.4e},{y:.4e}" for i, x, y in zip(k, a, b)]) + "\n")
    with pytest.raises(ZfitInputError, match=r"idx\.csv:2: column 1 \('X'\) counts samples .* give the sample interval") as err:
        read_capture(path)
    assert "\n" not in str(err.value)
    # Given the interval, the same file reads (dt from the caller, exactly).
    assert read_capture(path, dt=1e-7).dt == 1e-7


def test_time_column_in_seconds_stepping_by_one_second_is_time(tmp_path):
    k, a, b = _step(64)
    path = tmp_path / "slow.csv"
    path.write_text("\n".join(["Time (s),CH1"] + [f"{i},{x:.4e}" for i, x in zip(k, a)]) + "\n")
    assert read_capture(path).dt == 1.0  # a 1 Hz logger: the unit says seconds
