"""Reading swept-sine gain/phase tables (`read_response_table`) and the one-line errors of bad ones.

Reference values: the numbers written into each file here; unit factors by
the SI prefixes (1 kHz = 1000 Hz) and 20 log10 for dB (definitions).
"""

import math

import numpy as np
import pytest

from zfit._errors import ZfitInputError
from zfit.capture._swept_sine import DEFAULT_GAIN_ACCURACY_DB, DEFAULT_PHASE_ACCURACY_DEG, gain_phase_points
from zfit.io._response_table import read_response_table


def write(tmp_path, text, name="t.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_gain_in_db_and_phase_in_degrees_with_units_from_the_header(tmp_path):
    p = write(tmp_path, "# bench notes\nFreq (kHz),Gain (dB),Phase (deg)\n1,-3.0103,-45\n2,-6.99,-63.43\n10,-20.04,-84.29\n")
    t = read_response_table(p)
    assert t.f_hz == pytest.approx([1e3, 2e3, 10e3])
    # -3.0103 dB is a ratio of 10^(-3.0103/20) = 0.70711 (definition of the decibel).
    assert t.gain[0] == pytest.approx(0.70711, rel=1e-4)
    assert t.phase_rad[0] == pytest.approx(-math.pi / 4, rel=1e-12)
    assert list(t.lines) == [3, 4, 5]


def test_ratio_and_radians(tmp_path):
    p = write(tmp_path, "f_hz\tgain\tphase_rad\n100\t0.5\t-1.0\n200\t0.25\t-1.2\n400\t0.125\t-1.4\n")
    t = read_response_table(p)
    assert t.gain == pytest.approx([0.5, 0.25, 0.125])
    assert t.phase_rad == pytest.approx([-1.0, -1.2, -1.4])


def test_amplitudes_and_phases_of_both_channels(tmp_path):
    # H = V_out/V_in = 0.5 V / 2 V = 0.25 and phase_out - phase_in = -30 - 10 = -40 degrees.
    p = write(tmp_path, "f (Hz),Vin (Vpp),Vout (mVpp),phase_in (deg),phase_out (deg)\n"
                        "100,2,500,10,-30\n200,2,400,10,-40\n300,2,300,10,-50\n")
    t = read_response_table(p)
    assert t.gain[0] == pytest.approx(0.25)
    assert math.degrees(t.phase_rad[0]) == pytest.approx(-40.0)


def test_columns_option_for_a_table_without_header(tmp_path):
    p = write(tmp_path, "1e3 -1.0 -20\n2e3 -3.0 -45\n4e3 -7.0 -63\n")
    t = read_response_table(p, columns="f[Hz],gain[dB],phase[deg]")
    assert t.gain[1] == pytest.approx(10 ** (-3.0 / 20))
    t2 = read_response_table(p, columns="f=1,gain[dB]=2,phase[deg]=3")
    assert t2.phase_rad == pytest.approx(t.phase_rad)


def test_the_csv_of_zfit_step_response_is_read_with_its_uncertainties(tmp_path):
    # The header zfit step --response writes (zfit.outputs._views.response_csv); rows with usable = 0 left out.
    p = write(tmp_path, "# zfit step response of cap.csv: H = V_out/V_in (H1 = G_xy/G_xx over 9 segment(s) of 100 samples)\n"
                        "# usable band 1k Hz to 3k Hz; uncertainties are standard (k=1)\n"
                        "f_hz,mag_db,phase_deg,mag_db_std,phase_std_deg,coherence,usable\n"
                        "1000,-1,-10,0.1,0.5,0.99,1\n2000,-3,-45,0.1,0.5,0.98,1\n3000,-5,-60,0.2,1,0.97,1\n"
                        "4000,-40,20,inf,inf,0.2,0\n")
    t = read_response_table(p)
    assert t.f_hz.size == 3
    assert t.gain_std_db == pytest.approx([0.1, 0.1, 0.2])
    assert t.phase_std_rad[2] == pytest.approx(math.radians(1.0))
    assert t.method == "H1 = G_xy/G_xx over 9 segment(s) of 100 samples"
    pts = gain_phase_points(t)
    assert pts.gain_db_std == pytest.approx([0.1, 0.1, 0.2], rel=1e-9)
    assert pts.coherence_min == pytest.approx(0.97)


def test_default_accuracy_is_a_rectangular_bound(tmp_path):
    p = write(tmp_path, "f,gain (dB),phase (deg)\n1,0,-1\n2,-1,-10\n3,-2,-20\n")
    pts = gain_phase_points(read_response_table(p))
    # u = a / sqrt(3) for a bound a (GUM 4.3.7).
    assert pts.gain_db_std[0] == pytest.approx(DEFAULT_GAIN_ACCURACY_DB / math.sqrt(3), rel=1e-9)
    assert math.degrees(pts.sigma_phase_rad[0]) == pytest.approx(DEFAULT_PHASE_ACCURACY_DEG / math.sqrt(3), rel=1e-9)
    assert "common-practice defaults" in pts.uncertainty_source


def test_phases_of_repeats_average_across_180_degrees(tmp_path):
    # 179 and -179 degrees are 2 degrees apart: their mean is 180 (not 0).
    p = write(tmp_path, "f,gain,phase (deg)\n1,0.5,179\n1,0.5,-179\n2,0.4,170\n2,0.4,172\n3,0.3,160\n3,0.3,161\n")
    pts = gain_phase_points(read_response_table(p))
    assert abs(math.degrees(pts.phase_rad[0])) == pytest.approx(180.0, abs=1e-9)


@pytest.mark.parametrize("text, message, line", [
    ("f (Hz),gain (dB),phase (deg)\n1,0,-10\n2,-1,-1000\n3,-2,-30\n", "out of range", 3),
    ("f (Hz),gain (dB),phase (rad)\n1,0,-0.1\n2,-1,-45\n3,-2,-0.3\n", "out of range", 3),
    ("f (Hz),gain (dB),phase\n1,0,-0.1\n2,-1,-0.2\n3,-2,-0.3\n", "could be degrees or radians", 1),
    ("f (Hz),gain,phase (deg)\n1,0.9,-10\n2,-0.5,-20\n3,0.3,-30\n", "not a positive ratio", 3),
    ("f (Hz),gain (dB),phase (deg)\n1,0,-10\n2,x,-20\n3,-2,-30\n", "'x' is not a number", 3),
    ("1,0,-10\n2,-1,-20\n3,-2,-30\n", "no header line", 1),
    ("f (Hz),gain (dB),phase (deg)\n1,0,-10\n2,-1,-20\n", "at least 3", None),
    ("f (Hz),gain (dB),phase (deg)\n1,0,-10\n1,-1,-20\n1,-2,-30\n", "at least 3", None),
    ("f (Hz),gain (dB),phase (deg)\n1,0,-10\n-2,-1,-20\n3,-2,-30\n", "not a positive number", 3),
    ("f (Hz),gain (dB)\n1,0\n2,-1\n3,-2\n", "no phase column", 1),
    ("f (Hz),Vin (Vpp),Vout (Vrms),phase (deg)\n1,1,0.3,-10\n2,1,0.3,-20\n3,1,0.3,-30\n", "both peak-to-peak", 1),
    ("f (Hz),gain (dB),phase (deg)\n1,0,-10\n1,0,-10\n2,-1,-20\n3,-2,-30\n", "identical", 2),
    ("f (Hz),gain (furlong),phase (deg)\n1,0,-10\n2,-1,-20\n3,-2,-30\n", "unknown unit", 1),
])
def test_bad_tables_name_the_file_and_line(tmp_path, text, message, line):
    p = write(tmp_path, text)
    with pytest.raises(ZfitInputError) as exc:
        gain_phase_points(read_response_table(p))
    assert message in exc.value.message
    assert exc.value.path == str(p)
    if line is not None:
        assert exc.value.line == line
    assert "\n" not in str(exc.value)


def test_binary_file_is_refused(tmp_path):
    p = tmp_path / "t.csv"
    p.write_bytes(b"\x00\x01\x02" * 10)
    with pytest.raises(ZfitInputError, match="binary"):
        read_response_table(p)
    assert np.isfinite(1.0)
