"""Damaged or mislabelled Touchstone files met on the bench: cut off by a
full disk, saved as UTF-16 by Windows software, a table or a two-port file
under a one-port extension.  Each reads right or is one line naming the file
and the line, with exit status 2."""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from typer.testing import CliRunner

from zfit import read_sweep
from zfit.cli._app import app

HEADER = "! invented test part\n# MHz S RI R 50\n"
ROWS = "".join(f"{f:.6f} {0.1 + 0.001 * k:.9e} {0.2 + 0.001 * k:.9e}\n"
               for k, f in enumerate(np.linspace(1.0, 20.0, 20)))


def run(*args):
    return CliRunner().invoke(app, ["info", *map(str, args)])


def one_line_error(res, text):
    assert res.exit_code == 2, res.output
    assert "Traceback" not in res.output
    assert res.stderr == f"zfit: error: {text}\n"


def test_truncated_last_line_is_refused(tmp_path):
    p = tmp_path / "cut.s1p"
    text = HEADER + ROWS
    p.write_text(text[: text.rstrip().rfind(" ") + 4])  # the last number cut to 3 characters
    line = (HEADER + ROWS).count("\n")  # the last data line
    one_line_error(run(p), f"{p}:{line}: the file ends in the middle of this line (no line break after it, and it "
                           "is shorter than the line before): the file looks truncated; copy it again from the instrument")
    # The same file, whole but without the final line break, reads.
    whole = tmp_path / "whole.s1p"
    whole.write_text((HEADER + ROWS).rstrip("\n"))
    assert read_sweep(whole).n_points == 20


@pytest.mark.parametrize("newline", ["\r\n", "\n"])
def test_utf16_touchstone_reads_like_the_original(tmp_path, newline):
    plain, wide = tmp_path / "plain.s1p", tmp_path / "wide.s1p"
    plain.write_text(HEADER + ROWS)
    wide.write_bytes((HEADER + ROWS).replace("\n", newline).encode("utf-16"))
    a, b = read_sweep(plain), read_sweep(wide)
    # Reference: scikit-rf's own reader of the plain file, to 1e-12.
    ref = skrf.Network(str(plain))
    np.testing.assert_allclose(b.f_hz, ref.f, rtol=1e-12)
    np.testing.assert_allclose(b.z_ohm, ref.z[:, 0, 0], rtol=1e-12)
    np.testing.assert_allclose(b.z_ohm, a.z_ohm, rtol=1e-12)


def test_table_named_s1p_is_called_a_table(tmp_path):
    p = tmp_path / "table.s1p"
    p.write_text("# invented bench, analyser export\nFrequency (Hz),|Z| (Ohm),Phase (deg)\n"
                 + "".join(f"{f:g},{1 + f * 1e-3:g},45\n" for f in range(100, 2100, 100)))
    one_line_error(run(p), f"{p}:2: is not a Touchstone file although its extension says so: it reads as a "
                           "delimited table with '#' comments (rename the file .csv)")


def test_port_count_mismatch_says_which_extension(tmp_path):
    two = tmp_path / "two.s1p"
    two.write_text(HEADER + "".join(f"{f} 0.1 0.2 0.9 0.1 0.9 0.1 0.1 0.2\n" for f in range(1, 21)))
    one_line_error(run(two), f"{two}:3: expected 3 numbers per frequency (frequency and 1 complex value (S11)), "
                             "found 9 on this line; every line has 9, as a two-port file: rename it .s2p")
    one = tmp_path / "one.s2p"
    one.write_text(HEADER + ROWS)
    one_line_error(run(one, "-c", "series-thru"),
                   f"{one}:3: expected 9 numbers per frequency (frequency and 4 complex values (S11 S21 S12 S22)), "
                   "found 3 on this line; every line has 3, as a one-port file: rename it .s1p")
