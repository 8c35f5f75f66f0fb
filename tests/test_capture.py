"""Reading oscilloscope captures: layouts, time bases, and clear errors.

References for the checks: Python's own ``float()`` parser (the numbers in
the file), numpy's ``savetxt``/``save``/``savez`` (the binary layouts), and
the layout of delimited scope exports (common practice: metadata lines, a
header, a time column or the sample interval in the header).
"""

import warnings

import numpy as np
import pytest

from zfit import MeasurementWarning, ZfitInputError
from zfit.io._capture import clipped_fraction, make_capture, read_capture


def _scope_text(t, chans, *, meta=(), header="Time,CH1,CH2", units=None, fmt="{:.7E}", sep=","):
    lines = list(meta)
    if header:
        lines.append(header)
    if units:
        lines.append(units)
    cols = ([t] if t is not None else []) + list(chans)
    for row in zip(*cols):
        lines.append(sep.join(fmt.format(v) if i == 0 and t is not None else f"{v:.5f}" for i, v in enumerate(row)))
    return "\n".join(lines) + "\n"


@pytest.fixture
def two_channel(rng):
    n = 500
    dt = 4e-8
    t = 1.0e-6 + dt * np.arange(n)
    a = np.round(rng.normal(size=n), 5)
    b = np.round(rng.normal(size=n), 5)
    return t, dt, a, b


@pytest.mark.parametrize("accelerate", [True, False])
def test_metadata_header_units_time_column(tmp_path, two_channel, accelerate):
    t, dt, a, b = two_channel
    p = tmp_path / "scope.csv"
    p.write_text(_scope_text(t, [a, b], meta=["Instrument,invented bench scope", "Record length,500", ""],
                             units="(s),(V),(V)"))
    cap = read_capture(p, accelerate=accelerate)
    assert cap.names == ("CH1", "CH2")
    assert cap.file_columns == (2, 3)
    # Reference: Python's float() of the printed text (exact decimal rounding).
    np.testing.assert_array_equal(cap.channel("CH1"), [float(f"{v:.5f}") for v in a])
    np.testing.assert_array_equal(cap.channel(3), [float(f"{v:.5f}") for v in b])
    np.testing.assert_array_equal(cap.channel("ch2"), cap.channels["CH2"])
    assert cap.dt == pytest.approx(dt, rel=1e-9)
    assert cap.t0 == pytest.approx(1.0e-6, rel=1e-9)
    assert cap.n_samples == 500


def test_numpy_and_pandas_paths_agree_bit_for_bit(tmp_path, rng):
    n = 3000
    t = np.arange(n) * 1e-7
    x = rng.normal(size=(n, 2))
    p = tmp_path / "a.csv"
    # numpy's own writer, 17 significant digits: the parse must round-trip exactly.
    np.savetxt(p, np.column_stack([t, x]), delimiter=",", fmt="%.17g", header="t,v1,v2", comments="")
    c1 = read_capture(p, accelerate=True)
    c2 = read_capture(p, accelerate=False)
    np.testing.assert_array_equal(c1.channel("v1"), x[:, 0])
    np.testing.assert_array_equal(c2.channel("v2"), x[:, 1])


def test_sample_interval_in_header_semicolons_decimal_comma(tmp_path, two_channel):
    _, dt, a, b = two_channel
    text = "# Sample rate: 25 MSa/s\n# Start time = -2e-6\nCH1;CH2\n"
    text += "".join(f"{u:.5f};{v:.5f}\n".replace(".", ",") for u, v in zip(a, b))
    p = tmp_path / "eu.txt"
    p.write_text(text)
    for acc in (True, False):
        cap = read_capture(p, accelerate=acc)
        assert cap.dt == pytest.approx(1 / 25e6, rel=1e-12)
        assert cap.t0 == pytest.approx(-2e-6)
        assert cap.file_columns == (1, 2)
        np.testing.assert_array_equal(cap.channel("CH2"), [float(f"{v:.5f}") for v in b])


def test_interval_key_with_unit_and_no_header(tmp_path, two_channel):
    _, _, a, b = two_channel
    p = tmp_path / "w.txt"
    p.write_text("Sample interval: 40 ns\n" + "".join(f"{u:.5f}\t{v:.5f}\n" for u, v in zip(a, b)))
    cap = read_capture(p)
    assert cap.dt == pytest.approx(40e-9)
    assert cap.names == ("col1", "col2")


def test_npy_and_npz(tmp_path, two_channel):
    t, dt, a, b = two_channel
    np.save(tmp_path / "c.npy", np.column_stack([t, a, b]))
    cap = read_capture(tmp_path / "c.npy")
    assert cap.dt == pytest.approx(dt, rel=1e-9) and cap.file_columns == (2, 3)
    np.testing.assert_array_equal(cap.channel(2), a)
    np.savez(tmp_path / "c.npz", dt=dt, drive=a, sense=b)
    cap = read_capture(tmp_path / "c.npz")
    assert cap.names == ("drive", "sense") and cap.dt == dt
    np.testing.assert_array_equal(cap.channel("sense"), b)
    np.save(tmp_path / "one.npy", a)
    with pytest.raises(ZfitInputError, match="sample interval"):
        read_capture(tmp_path / "one.npy")
    assert read_capture(tmp_path / "one.npy", dt=1e-6).dt == 1e-6


@pytest.mark.parametrize("accelerate", [True, False])
def test_bad_row_names_its_line(tmp_path, two_channel, accelerate):
    t, _, a, b = two_channel
    text = _scope_text(t, [a, b], meta=["Model,invented"]).splitlines()
    # Line 1 metadata, line 2 header, data from line 3: corrupt line 103.
    text[102] = text[102].split(",")[0] + ",0.1,oops"
    p = tmp_path / "bad.csv"
    p.write_text("\n".join(text) + "\n")
    with pytest.raises(ZfitInputError) as e:
        read_capture(p, accelerate=accelerate)
    assert e.value.line == 103 and e.value.path == str(p)


def test_missing_sample_is_an_error(tmp_path, two_channel):
    t, _, a, b = two_channel
    keep = np.ones(t.size, bool)
    keep[250] = False
    p = tmp_path / "gap.csv"
    p.write_text(_scope_text(t[keep], [a[keep], b[keep]]))
    with pytest.raises(ZfitInputError, match="non-uniform") as e:
        read_capture(p)
    # Header on line 1, row r on line r + 2: row 250 (sample 251) comes a step too late.
    assert e.value.line == 252


def test_jittered_time_steps_warn(tmp_path, two_channel, rng):
    t, dt, a, b = two_channel
    tj = t + rng.uniform(-0.2, 0.2, t.size) * dt
    p = tmp_path / "jit.csv"
    p.write_text(_scope_text(tj, [a, b], fmt="{:.10E}"))
    with pytest.warns(MeasurementWarning, match="jitter"):
        cap = read_capture(p)
    assert cap.dt == pytest.approx(dt, rel=1e-3)


def test_coarsely_printed_time_column_is_accepted(tmp_path, rng):
    # 20 000 samples at 10 ns printed with 3 decimals of microseconds... in
    # seconds with 4 significant digits: consecutive times repeat.
    n, dt = 20000, 1e-8
    t = 1e-3 + dt * np.arange(n)
    a, b = rng.normal(size=n), rng.normal(size=n)
    p = tmp_path / "coarse.csv"
    p.write_text(_scope_text(t, [a, b], fmt="{:.4E}"))
    cap = read_capture(p)
    assert cap.dt == pytest.approx(dt, rel=2e-3)
    assert any("resolution" in n for n in cap.notes)


def test_too_few_samples_no_time_base_nonfinite(tmp_path):
    p = tmp_path / "short.csv"
    p.write_text("t,a\n0,1\n1,2\n2,3\n")
    with pytest.raises(ZfitInputError, match="at least"):
        read_capture(p)
    p = tmp_path / "notime.csv"
    p.write_text("a,b\n" + "".join(f"{i % 3},{i % 5}\n" for i in range(100)))
    with pytest.raises(ZfitInputError, match="sample interval"):
        read_capture(p)
    p = tmp_path / "nan.csv"
    p.write_text("t,a\n" + "".join(f"{i * 1e-6},{'nan' if i == 40 else 1.0}\n" for i in range(100)))
    with pytest.raises(ZfitInputError, match="finite") as e:
        read_capture(p)
    assert e.value.line == 42


def test_channel_choice_errors(two_channel):
    _, dt, a, b = two_channel
    cap = make_capture({"in": a, "out": b}, dt)
    with pytest.raises(ZfitInputError, match="no channel named"):
        cap.channel("CH9")
    with pytest.raises(ZfitInputError, match="not a voltage channel"):
        cap.channel(5)


def test_clipped_fraction_sees_a_pile_up_at_the_rail(rng):
    n = 20000
    t = np.arange(n)
    x = np.where((t // 1000) % 2, 1.0, 0.0) + rng.normal(0, 0.02, n)
    lsb = 1.2 / 256
    q = np.round(x / lsb) * lsb
    assert clipped_fraction(q) == (0.0, 0.0)
    # A nearly noiseless record (a twentieth of a code) sits on one code per level: not clipped.
    quiet = np.round((np.where((t // 1000) % 2, 1.0, 0.0) + rng.normal(0, 0.05 * lsb, n)) / lsb) * lsb
    assert clipped_fraction(quiet) == (0.0, 0.0)
    clipped = np.minimum(q, 1.0)  # the top rail cuts the upper half of the noise
    lo, hi = clipped_fraction(clipped)
    # About half of the high-state samples (a quarter of all) sit at the rail.
    assert lo == 0.0 and hi == pytest.approx(0.25, abs=0.03)


def test_no_warning_for_a_clean_file(tmp_path, two_channel):
    t, _, a, b = two_channel
    p = tmp_path / "ok.csv"
    p.write_text(_scope_text(t, [a, b]))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        read_capture(p)


def test_interval_in_header_and_an_unnamed_time_column(tmp_path, two_channel):
    t, dt, a, _ = two_channel
    p = tmp_path / "both.csv"
    p.write_text(f"Sample interval,{dt:.4E}\n" + "".join(f"{u:.9E},{v:.5f}\n" for u, v in zip(t, a)))
    cap = read_capture(p)
    # The first column steps by the interval: it is the time, not a channel.
    assert cap.names == ("col2",) and cap.file_columns == (2,)
    assert cap.t0 == pytest.approx(t[0]) and cap.dt == pytest.approx(dt, rel=1e-9)


def test_absurd_magnitudes_and_utf16_are_one_line_errors(tmp_path, two_channel):
    t, dt, a, b = two_channel
    b = b.copy()
    b[7] = 1e300  # a wrong column or unit: its square overflows the spectra
    p = tmp_path / "huge.csv"
    p.write_text(_scope_text(t, [a, b]))
    with pytest.raises(ZfitInputError) as info:
        read_capture(p)
    # Header on line 1, sample 7 on line 9.
    assert str(info.value) == (f"{p}:9: channel CH2: sample 1e+300 is beyond 1e+12 in magnitude, not a voltage "
                               "(a wrong column or unit?)")
    w = tmp_path / "wide.csv"
    w.write_bytes(_scope_text(t, [a, a]).encode("utf-16"))
    with pytest.raises(ZfitInputError) as info:
        read_capture(w)
    assert str(info.value) == f"{w}: is UTF-16 text; save it as ASCII or UTF-8 (for example: iconv -f UTF-16 -t UTF-8 IN > OUT.csv)"


def test_time_base_messages_use_engineering_notation(tmp_path, two_channel):
    t, dt, a, b = two_channel
    p = tmp_path / "c.csv"
    p.write_text(_scope_text(t, [a, b]))
    with pytest.raises(ZfitInputError) as info:
        read_capture(p, dt=1e-7)
    # The file steps by 40 ns (two_channel); 100 ns was given.
    assert "the time column steps by 40 ns but a sample interval of 100 ns was given" in str(info.value)


def test_npy_of_text_is_a_one_line_error(tmp_path):
    # A text array used to end in a ValueError traceback from numpy.
    p = tmp_path / "names.npy"
    np.save(p, np.array(["CH1", "CH2"] * 20))
    with pytest.raises(ZfitInputError) as info:
        read_capture(p, dt=1e-9)
    assert str(info.value) == f"{p}: the array holds <U3 values, not real numbers (voltages or times)"
    q = tmp_path / "dt_text.npz"
    np.savez(q, CH1=np.zeros(100), dt=np.array(["1n"]))
    with pytest.raises(ZfitInputError) as info:
        read_capture(q)
    assert str(info.value) == f"{q}: array 'dt' holds <U2 values, not real numbers (voltages or times)"


def test_sweeps_given_to_the_capture_reader_say_which_command(tmp_path):
    from pathlib import Path

    demo = Path(__file__).resolve().parent.parent / "demo_sweeps"
    with pytest.raises(ZfitInputError) as info:
        read_capture(demo / "ind_2u2_reflection.s1p")
    assert str(info.value).endswith("ind_2u2_reflection.s1p: is a Touchstone sweep, not an oscilloscope capture: "
                                    "analyse it with 'zfit identify' (or look at it with 'zfit info')")
    with pytest.raises(ZfitInputError) as info:
        read_capture(demo / "cap_4u7_lcr_cp_d.csv")
    assert str(info.value).endswith("cap_4u7_lcr_cp_d.csv:4: the header starts with a frequency column ('Freq (kHz)'): "
                                    "this is an analyser sweep, not an oscilloscope capture; analyse it with 'zfit identify'")
    with pytest.raises(ZfitInputError) as info:
        read_capture(tmp_path)
    assert str(info.value) == f"{tmp_path}: is not a file"
    with pytest.raises(ZfitInputError) as info:
        read_capture(tmp_path / "none.csv")
    assert str(info.value) == f"{tmp_path / 'none.csv'}: no such file"
