import os
import stat

import pytest

from zfit._atomic import write_atomic
from zfit._errors import OutputExistsError


def test_write_atomic_refuses_existing_file_without_force(tmp_path):
    target = tmp_path / "result.json"
    target.write_text("the user's file")
    with pytest.raises(OutputExistsError, match=r"result\.json: exists already; give --force"):
        write_atomic(target, "new")
    assert target.read_text() == "the user's file"
    write_atomic(target, "new", force=True)
    assert target.read_text() == "new"
    assert [p.name for p in tmp_path.iterdir()] == ["result.json"]  # no temporary left behind


def test_write_atomic_follows_umask(tmp_path):
    # POSIX: a new file's mode is 0666 & ~umask (common practice for result files).
    old = os.umask(0o022)
    try:
        path = write_atomic(tmp_path / "summary.csv", "a,b\n")
    finally:
        os.umask(old)
    assert stat.S_IMODE(path.stat().st_mode) == 0o644


def test_write_atomic_names_a_folder_given_as_file(tmp_path):
    from zfit._errors import ZfitInputError

    (tmp_path / "plots").mkdir()
    with pytest.raises(ZfitInputError, match=r"plots: is a folder; give the name of a file to write"):
        write_atomic(tmp_path / "plots", "x")
    (tmp_path / "notes.txt").write_text("mine")
    with pytest.raises(ZfitInputError, match=r"notes\.txt is a file, not a folder"):
        write_atomic(tmp_path / "notes.txt" / "out.json", "x")
