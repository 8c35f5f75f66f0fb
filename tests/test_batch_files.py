"""What ``zfit batch`` does to the files around it: the user's files in --out
are never replaced without --force, reruns key on content, no stale result
beside an error row, a full disk still gives the summary, and --out may lie
above the inputs.

The sweeps are reflection Touchstone files of a series R-L with a parallel C
(tests/reflection_sweeps.py: the published impedance and reflection formulas).
"""

import csv
import io
import json
import os
from pathlib import Path

import pytest
from reflection_sweeps import reflection_s1p as _reflection_s1p
from typer.testing import CliRunner

from zfit._errors import ZfitInputError
from zfit.cli._app import app
from zfit.lot._inputs import expand_inputs
from zfit.lot._manifest import MANIFEST_NAME
from zfit.lot._run import run_batch
from zfit.lot._tasks import ReadOptions

def _summary(out: Path) -> list[dict]:
    return list(csv.DictReader(io.StringIO((out / "summary.csv").read_text())))


def _cli(args, cwd=None):
    runner = CliRunner()
    old = os.getcwd()
    if cwd is not None:
        os.chdir(cwd)
    try:
        return runner.invoke(app, ["batch", *args, "--quiet", "--jobs", "1"])
    finally:
        os.chdir(old)


def test_files_of_the_user_in_out_are_refused_without_force(tmp_path):
    sweep = _reflection_s1p(tmp_path / "in" / "a.s1p", 2.2e-6)
    out = tmp_path / "u"
    out.mkdir()
    for name in ("summary.csv", "lot.csv", "lot.json", "a.json"):
        mine = out / name
        mine.write_bytes(b"mine\n")
        r = _cli([str(sweep), "--out", str(out)])
        # Exit status 2 and one line naming the file (docs/batch.md; common practice of the CLI).
        assert r.exit_code == 2, r.output
        lines = [ln for ln in r.output.splitlines() if ln.strip()]
        assert lines == [f"zfit: error: {mine}: exists already; give --force to overwrite it"]
        assert mine.read_bytes() == b"mine\n"
        assert sorted(p.name for p in out.iterdir()) == [name]  # nothing else written
        mine.unlink()
    # A folder of its own: written, then rewritten by a rerun without --force.
    (out / "notes.txt").write_bytes(b"kept\n")
    assert _cli([str(sweep), "--out", str(out)]).exit_code == 0
    r = _cli([str(sweep), "--out", str(out)])
    assert r.exit_code == 0 and "1 up to date" in r.output
    owned = json.loads((out / MANIFEST_NAME).read_text())["files"]
    assert sorted(owned) == ["a.json", "lot.csv", "lot.json", "summary.csv"]
    assert (out / "notes.txt").read_bytes() == b"kept\n"
    # A file of the batch's that the user edited is theirs again.
    (out / "lot.csv").write_bytes(b"edited\n")
    r = _cli([str(sweep), "--out", str(out)])
    assert r.exit_code == 2 and (out / "lot.csv").read_bytes() == b"edited\n"
    r = _cli([str(sweep), "--out", str(out), "--force"])
    assert r.exit_code == 0 and (out / "lot.csv").read_bytes().startswith(b"quantity,")
    # The L of the part: 2.2 uH within 1 % (the value written above; its std is far smaller).
    assert float(_summary(out)[0]["L"]) == pytest.approx(2.2e-6, rel=1e-2)


def test_rerun_keys_on_content_and_reading_options(tmp_path):
    sweep = _reflection_s1p(tmp_path / "in" / "a.s1p", 2.2e-6)
    out = tmp_path / "out"
    first = run_batch([sweep], out, jobs=1, progress=False)
    assert (first.identified, first.skipped) == (1, 0)
    assert float(_summary(out)[0]["L"]) == pytest.approx(2.2e-6, rel=1e-2)
    # Other data with an older modification time (cp -p, an archive): redone.
    stamp = os.stat(sweep).st_mtime
    _reflection_s1p(sweep, 3.3e-6, seed=2)
    os.utime(sweep, (stamp - 3600, stamp - 3600))
    second = run_batch([sweep], out, jobs=1, progress=False)
    assert (second.identified, second.skipped) == (1, 0)
    assert float(_summary(out)[0]["L"]) == pytest.approx(3.3e-6, rel=1e-2)
    assert run_batch([sweep], out, jobs=1, progress=False).skipped == 1
    # A changed reading option: redone; the same again: reused.
    noisier = ReadOptions(noise_rel=3e-3)
    assert run_batch([sweep], out, read=noisier, jobs=1, progress=False).identified == 1
    assert run_batch([sweep], out, read=noisier, jobs=1, progress=False).skipped == 1
    # A fixture file's bytes changed under the same name: redone.
    open_std = _reflection_s1p(tmp_path / "cal" / "open.s1p", 1e-3, C=1e-13, seed=3)
    comp = ReadOptions(open_=str(open_std))
    assert run_batch([sweep], out, read=comp, jobs=1, progress=False).identified == 1
    assert run_batch([sweep], out, read=comp, jobs=1, progress=False).skipped == 1
    _reflection_s1p(open_std, 1e-3, C=2e-13, seed=4)
    assert run_batch([sweep], out, read=comp, jobs=1, progress=False).identified == 1


def test_no_stale_result_beside_an_error_row(tmp_path):
    a = _reflection_s1p(tmp_path / "in" / "a.s1p", 2.2e-6)
    b = _reflection_s1p(tmp_path / "in" / "b.s1p", 4.7e-6, seed=5)
    out = tmp_path / "out"
    assert run_batch([a.parent], out, jobs=1, progress=False).errors == 0
    assert (out / "b.json").is_file()
    b.write_text("a delivery note, not a sweep\n")
    res = run_batch([a.parent], out, jobs=1, progress=False)
    assert (res.identified, res.skipped, res.errors) == (0, 1, 1)
    rows = {r["file"]: r for r in _summary(out)}
    assert rows[str(b)]["verdict"] == "error"
    assert not (out / "b.json").exists()
    assert "b.json" not in json.loads((out / MANIFEST_NAME).read_text())["files"]
    assert float(rows[str(a)]["L"]) == pytest.approx(2.2e-6, rel=1e-2)


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="needs /dev/full (Linux)")
def test_a_full_disk_still_gives_the_summary_and_names_the_file(tmp_path):
    sweep = _reflection_s1p(tmp_path / "in" / "a.s1p", 2.2e-6)
    out = tmp_path / "out"
    out.mkdir()
    # Every write to /dev/full fails with ENOSPC: the disk is full for summary.csv.
    (out / "summary.csv").symlink_to("/dev/full")
    r = _cli([str(sweep), "--out", str(out)])
    assert r.exit_code == 2  # a link to a file of the user's: refused
    r = _cli([str(sweep), "--out", str(out), "--force"])
    assert r.exit_code == 2, r.output
    errors = [ln for ln in r.output.splitlines() if ln.startswith("zfit: error:")]
    assert errors == [f"zfit: error: {out / 'summary.csv'}: cannot write: No space left on device"]
    assert "lot: 1 parts: 1 identified, 0 error" in r.output
    # The other files were written: the lot statistics of the one part, L = 2.2 uH within 1 %.
    lot = list(csv.DictReader(io.StringIO((out / "lot.csv").read_text())))
    assert float({q["quantity"]: q for q in lot}["L"]["mean"]) == pytest.approx(2.2e-6, rel=1e-2)
    assert (out / "a.json").is_file() and (out / "summary.csv").is_symlink()


def test_out_above_the_inputs(tmp_path):
    _reflection_s1p(tmp_path / "lot" / "sweeps" / "a.s1p", 2.2e-6)
    _reflection_s1p(tmp_path / "lot" / "sweeps" / "b.s1p", 4.7e-6, seed=7)
    r = _cli(["lot/sweeps", "--out", "lot"], cwd=tmp_path)
    assert r.exit_code == 0, r.output
    assert [row["file"] for row in _summary(tmp_path / "lot")] == ["lot/sweeps/a.s1p", "lot/sweeps/b.s1p"]
    # The folder itself as input: its summary.csv and lot.csv (tables) are the batch's, not sweeps.
    r = _cli(["lot", "--out", "lot"], cwd=tmp_path)
    assert r.exit_code == 0, r.output
    assert "0 identified, 2 up to date" in r.output
    assert len(_summary(tmp_path / "lot")) == 2
    # A folder holding only a batch's files says so.
    with pytest.raises(ZfitInputError, match=r"summary\.csv, .*lot\.csv are written by zfit batch, not sweeps"):
        expand_inputs([tmp_path / "lot" / "summary.csv", tmp_path / "lot" / "lot.csv"])

