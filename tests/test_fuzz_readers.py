"""Seeded fuzz of the readers: every demo file mutated ~20 ways, `zfit info` on each.

Mutations (issue 16): byte flips, truncation, duplicated and deleted lines,
numbers replaced by extreme values (overflowing, denormal, overrange codes,
NaN).  The only outcomes allowed are the clean ones: exit 0, or exit 2 with
one ``zfit: error:`` line naming the file; never a traceback or a numpy
warning (pyproject turns warnings into errors, so one shows as exit 1).
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pytest
from typer.testing import CliRunner

from zfit.cli._app import app

DEMO = Path(__file__).parent.parent / "demo_sweeps"
FILES = sorted(p for p in DEMO.iterdir() if p.suffix in (".s1p", ".s2p", ".ts", ".csv", ".txt"))
PER_FILE = 20
EXTREMES = ("1e308", "-1e308", "1e-320", "9.9E37", "nan", "inf", "0", "-0", "1e38", "-1e-300", "1_0", "1e999")
NUMBER = re.compile(rb"[-+]?\d+\.?\d*(?:[eE][-+]?\d+)?")


def mutated(raw: bytes, rng: np.random.Generator) -> tuple[str, bytes]:
    """One random mutation of a file's bytes, and its name (for the failure message)."""
    kind = int(rng.integers(6))
    lines = raw.split(b"\n")
    if kind == 0:  # flip a few bytes
        b = bytearray(raw)
        for _ in range(int(rng.integers(1, 4))):
            b[int(rng.integers(len(b)))] = int(rng.integers(256))
        return "byte flips", bytes(b)
    if kind == 1:  # truncated anywhere
        return "truncation", raw[: int(rng.integers(len(raw)))]
    if kind == 2:  # a line duplicated
        i = int(rng.integers(len(lines)))
        return f"line {i + 1} duplicated", b"\n".join(lines[: i + 1] + lines[i:])
    if kind == 3:  # a line deleted
        i = int(rng.integers(len(lines)))
        return f"line {i + 1} deleted", b"\n".join(lines[:i] + lines[i + 1:])
    # numbers replaced by extremes, in one line (kind 4) or across the file (kind 5)
    value = EXTREMES[int(rng.integers(len(EXTREMES)))].encode()
    spans = [m.span() for m in NUMBER.finditer(raw)]
    if not spans:
        return "no numbers", raw
    picks = rng.choice(len(spans), size=1 if kind == 4 else min(len(spans), 25), replace=False)
    b = bytearray(raw)
    for j in sorted(picks, reverse=True):
        s, e = spans[int(j)]
        b[s:e] = value
    return f"{len(picks)} number(s) -> {value.decode()}", bytes(b)


@pytest.mark.parametrize("name", [p.name for p in FILES])
def test_mutated_demo_file_gives_a_clean_outcome(tmp_path, name):
    # Seeded per file (crc of the name), so that a failure is repeatable.
    import zlib

    rng = np.random.default_rng(zlib.crc32(name.encode()))
    raw = (DEMO / name).read_bytes()
    runner = CliRunner()
    for k in range(PER_FILE):
        what, data = mutated(raw, rng)
        p = tmp_path / f"m{k}{Path(name).suffix}"
        p.write_bytes(data)
        args = ["info", str(p)]
        r = runner.invoke(app, args)
        context = f"{name}, mutation {k}: {what}\n{r.output}"
        assert "Traceback" not in r.output, context
        assert r.exit_code in (0, 2), context + repr(r.exception)
        if r.exit_code == 2:
            assert r.stderr.startswith(f"zfit: error: {p}"), context
            assert r.stderr.count("\n") == 1, context
        assert "RuntimeWarning" not in r.output and "overflow" not in r.output, context


CAPTURES = sorted(DEMO.glob("coil_*.csv"))


@pytest.mark.parametrize("name", [p.name for p in CAPTURES])
def test_mutated_demo_capture_reads_or_is_refused(tmp_path, name):
    # The capture reader alone (the step analysis is not under test here):
    # a Capture, or a ZfitInputError naming the file; nothing else.
    import warnings
    import zlib

    from zfit._errors import ZfitInputError
    from zfit.io._capture import read_capture

    rng = np.random.default_rng(zlib.crc32(name.encode()))
    raw = (DEMO / name).read_bytes()
    for k in range(PER_FILE):
        what, data = mutated(raw, rng)
        p = tmp_path / f"m{k}.csv"
        p.write_bytes(data)
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)  # measurement warnings (jitter) are allowed
            try:
                cap = read_capture(p)
            except ZfitInputError as exc:
                assert exc.path == str(p), f"{name}, mutation {k}: {what}: {exc}"
                continue
        assert cap.n_samples >= 16, f"{name}, mutation {k}: {what}"
