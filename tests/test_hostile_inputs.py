"""Hostile and unusual inputs to the readers and their options (issues 15 and 16).

Each case asserts the clean outcome a bench engineer is owed: exit status 2
and one ``zfit: error:`` line saying what is wrong (the message by its
text), no traceback, and the bytes of every file that was there unchanged;
or a read with a stated note.  Files are made from the demo sweeps by small
edits written out here.
"""

from __future__ import annotations

import hashlib
import re
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app

ROOT = Path(__file__).parent.parent
DEMO = ROOT / "demo_sweeps"
S1P = DEMO / "ind_2u2_reflection.s1p"


def run(*args):
    return CliRunner().invoke(app, [str(a) for a in args])


def folder_bytes(folder: Path) -> dict:
    """Digest of every file under `folder`, to show that nothing was changed."""
    return {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(Path(folder).rglob("*")) if p.is_file()}


def assert_refused(result, message: str, before: dict | None = None, folder: Path | None = None):
    """Exit status 2, one ``zfit: error:`` line matching `message`, no traceback, files unchanged."""
    assert result.exit_code == 2, (result.exit_code, result.output)
    assert "Traceback" not in result.output
    assert result.stderr.startswith("zfit: error: "), result.stderr
    assert result.stderr.count("\n") == 1, result.stderr  # one line, no usage block
    assert re.search(message, result.stderr), result.stderr
    if before is not None:
        assert folder_bytes(folder) == before


def assert_read(result):
    assert result.exit_code == 0, result.output
    assert "Traceback" not in result.output


# ------------------------------------------------------------------ options


@pytest.mark.parametrize("args, message", [
    # Engineering notation everywhere, bounds stated (issue 15; ranges from
    # zfit.io._prepared.READING_OPTION_RANGES, common practice).
    (("--noise-rel", "abc"), r"--noise-rel: cannot read 'abc' as a number"),
    (("--port-delay", "1"), r"--port-delay 1 s is out of range: give a value between -100n s and 100n s"),
    (("--port-loss", "1k"), r"--port-loss 1k dB is out of range: give a value between 0 dB and 100 dB"),
    (("--noise-floor", "-1"), r"--noise-floor -1 is out of range"),
    (("--noise-rel", "1e300"), r"--noise-rel 1e\+300 is out of range"),
])
def test_reading_options_are_bounded_with_one_line(tmp_path, args, message):
    before = folder_bytes(DEMO)
    assert_refused(run("info", S1P, *args), message, before, DEMO)


def test_engineering_notation_in_noise_rel():
    # 1m is 1e-3 (SI prefix milli): the noise model given is 0.001 * |S|.
    r = run("info", S1P, "--noise-rel", "1m", "--noise-floor", "10u")
    assert_read(r)
    assert re.search(r"sigma\(S\) = 0\.001 \* \|S\| \+ 1e-05", r.output), r.output


def test_bad_value_of_a_parsed_option_is_one_line():
    # click's own refusal (an integer option given text) is one zfit line, not a usage block.
    r = run("plan", "inductor", "--L", "10u", "--R_s", "50m", "--C_p", "5p", "--points", "abc")
    assert_refused(r, r"Invalid value for '--points'")


def test_table_floor_names_itself():
    r = run("plan", "inductor", "--L", "10u", "--R_s", "50m", "--C_p", "5p", "--table-floor", "-1")
    assert_refused(r, r"--table-floor -1 ohm is out of range: give a value between 0 ohm and 1G ohm")


def test_shunt_range_helper():
    # The bound each command applies to --shunt (zfit.cli._common.SHUNT_RANGE_OHM).
    from zfit._errors import ZfitInputError
    from zfit.cli._common import SHUNT_RANGE_OHM, quantity

    assert quantity("2.2k", "--shunt", *SHUNT_RANGE_OHM, unit="ohm") == pytest.approx(2200.0, rel=1e-15)
    for text in ("1e-300", "1e300"):
        with pytest.raises(ZfitInputError, match=r"--shunt .* is out of range: give a value between 1m ohm and 1G ohm"):
            quantity(text, "--shunt", *SHUNT_RANGE_OHM, unit="ohm")
