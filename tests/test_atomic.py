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


def test_force_onto_a_device_writes_in_place_and_keeps_the_node(tmp_path):
    # Issue 16 (item 4): `--json /dev/null --force` as root must not replace
    # /dev/null by a regular file. POSIX: /dev/null is a character device.
    write_atomic("/dev/null", "discarded\n", force=True)
    assert stat.S_ISCHR(os.stat("/dev/null").st_mode)


def test_force_onto_a_fifo_writes_into_it(tmp_path):
    import threading

    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    got = []

    def read():
        with open(fifo, "rb") as fh:
            got.append(fh.read())

    reader = threading.Thread(target=read)
    reader.start()
    write_atomic(fifo, b"through the pipe", force=True)
    reader.join(timeout=10)
    assert got == [b"through the pipe"]
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)


def test_force_onto_a_symlink_replaces_its_target_and_keeps_the_link(tmp_path):
    real = tmp_path / "real.json"
    real.write_text("old")
    link = tmp_path / "link.json"
    link.symlink_to(real)
    write_atomic(link, "new", force=True)
    assert link.is_symlink() and real.read_text() == "new"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["link.json", "real.json"]


def test_a_write_that_fails_names_the_file_not_the_temporary(tmp_path):
    from zfit._errors import ZfitInputError

    folder = tmp_path / "locked"
    folder.mkdir()
    folder.chmod(0o500)
    try:
        if os.access(folder, os.W_OK):  # root ignores permissions: use a full device instead
            with pytest.raises(ZfitInputError, match=r"^/dev/full: cannot write: No space left on device$"):
                write_atomic("/dev/full", "x", force=True)
        else:
            with pytest.raises(ZfitInputError, match=r"out\.json: cannot write: Permission denied$"):
                write_atomic(folder / "out.json", "x")
    finally:
        folder.chmod(0o700)


def test_write_all_atomic_writes_all_or_none(tmp_path, monkeypatch):
    # Issue 16 (item 5): a failure after the first output must not leave a partial set.
    import zfit._atomic as atomic
    from zfit._atomic import write_all_atomic
    from zfit._errors import ZfitInputError

    (tmp_path / "old.json").write_text("old result")
    (tmp_path / "plot.png").mkdir()
    with pytest.raises(ZfitInputError, match=r"plot\.png: is a folder"):
        write_all_atomic([(tmp_path / "old.json", "new"), (tmp_path / "part.cir", "x"), (tmp_path / "plot.png", b"")],
                         force=True)
    assert (tmp_path / "old.json").read_text() == "old result" and not (tmp_path / "part.cir").exists()
    # A disk that fills while the third file is staged: nothing is renamed into place, no temporary stays.
    real = atomic.os.fsync
    calls = []

    def fsync(fd):
        calls.append(fd)
        if len(calls) == 3:
            raise OSError(28, "No space left on device")
        return real(fd)

    monkeypatch.setattr(atomic.os, "fsync", fsync)
    with pytest.raises(ZfitInputError, match=r"c\.html: cannot write: No space left on device$"):
        write_all_atomic([(tmp_path / "old.json", "new"), (tmp_path / "part.cir", "x"), (tmp_path / "c.html", "y")],
                         force=True)
    monkeypatch.setattr(atomic.os, "fsync", real)
    assert (tmp_path / "old.json").read_text() == "old result"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["old.json", "plot.png"]  # no temporaries left
    paths = write_all_atomic([(tmp_path / "old.json", "new result"), (tmp_path / "part.cir", "* netlist\n")], force=True)
    assert [p.name for p in paths] == ["old.json", "part.cir"] and (tmp_path / "old.json").read_text() == "new result"
