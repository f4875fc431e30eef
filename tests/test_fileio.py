"""Atomic writes (devmodels.fileio): symbolic links, modes, failures, one-line OutputError."""

from __future__ import annotations

import errno
import os
import stat
import subprocess

import numpy as np
import pytest

import devmodels as dm
from devmodels import fileio
from devmodels.fileio import (atomic_write_bytes, atomic_write_chunks, atomic_write_text, atomic_writer,
                              check_destination)


def names(folder):
    return sorted(p.name for p in folder.iterdir())


def one_line(exc_info) -> str:
    msg = str(exc_info.value)
    assert "\n" not in msg
    return msg


@pytest.fixture
def umask_022():
    old = os.umask(0o022)
    yield
    os.umask(old)


def test_new_file_gets_the_usual_mode_not_0600(tmp_path, umask_022):
    p = atomic_write_text(tmp_path / "a.csv", "x,y\n1,2\n")
    assert p.read_text() == "x,y\n1,2\n"
    assert stat.S_IMODE(os.stat(p).st_mode) == 0o644  # 0666 & ~022
    assert names(tmp_path) == ["a.csv"]


def test_other_umask_is_followed(tmp_path):
    old = os.umask(0o077)
    try:
        p = atomic_write_text(tmp_path / "a.csv", "1\n")
    finally:
        os.umask(old)
    assert stat.S_IMODE(os.stat(p).st_mode) == 0o600


@pytest.mark.parametrize("mode", [0o600, 0o640, 0o755])
def test_replaced_file_keeps_its_mode(tmp_path, umask_022, mode):
    target = tmp_path / "keep.s2p"
    target.write_text("old\n")
    os.chmod(target, mode)
    atomic_write_text(target, "new\n")
    assert target.read_text() == "new\n"
    assert stat.S_IMODE(os.stat(target).st_mode) == mode


def test_symlink_is_replaced_never_followed(tmp_path):
    real = tmp_path / "real.txt"
    real.write_text("the link's target stays as it is\n")
    link = tmp_path / "out.s2p"
    link.symlink_to(real)
    atomic_write_text(link, "new result\n")
    assert not link.is_symlink() and link.read_text() == "new result\n"
    assert real.read_text() == "the link's target stays as it is\n"


def test_dangling_symlink_is_replaced(tmp_path):
    link = tmp_path / "out.csv"
    link.symlink_to(tmp_path / "nowhere" / "file")
    atomic_write_text(link, "a\n")
    assert not link.is_symlink() and link.read_text() == "a\n"
    assert not (tmp_path / "nowhere").exists()


def test_directory_at_destination(tmp_path):
    d = tmp_path / "out.s2p"
    d.mkdir()
    (d / "inside").write_text("untouched\n")
    with pytest.raises(dm.OutputError) as e:
        atomic_write_text(d, "x\n")
    assert one_line(e) == f"out: cannot write {str(d)!r}: it is a directory; give the name of a file in it"
    assert (d / "inside").read_text() == "untouched\n" and names(tmp_path) == ["out.s2p"]
    with pytest.raises(dm.OutputError, match="^plot: .*directory"):
        check_destination(d, option="plot")


def test_missing_folder(tmp_path):
    with pytest.raises(dm.OutputError) as e:
        atomic_write_text(tmp_path / "no" / "such" / "x.csv", "x\n")
    assert one_line(e).startswith("out: cannot write ") and "does not exist" in str(e.value)
    with pytest.raises(dm.OutputError, match="does not exist"):
        check_destination(tmp_path / "no" / "x.csv")
    assert names(tmp_path) == []


def test_parent_is_a_file(tmp_path):
    (tmp_path / "plain").write_text("")
    with pytest.raises(dm.OutputError, match="^out: cannot write .*(not a folder|not a directory)"):
        check_destination(tmp_path / "plain" / "x.csv")


def test_full_disk_on_write_leaves_old_file(tmp_path, monkeypatch):
    # A full disk (ENOSPC) is simulated: no loop device or small tmpfs is available here.
    target = tmp_path / "keep.s2p"
    target.write_text("old content\n")

    def full(fd, data):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "write", full)
    with pytest.raises(dm.OutputError) as e:
        atomic_write_text(target, "new content\n" * 1000)
    assert one_line(e) == f"out: cannot write {str(target)!r}: no space left on the device (the disk is full)"
    monkeypatch.undo()
    assert target.read_text() == "old content\n" and names(tmp_path) == ["keep.s2p"]


def test_full_disk_on_fsync_leaves_nothing(tmp_path, monkeypatch):
    def full(fd):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "fsync", full)
    with pytest.raises(dm.OutputError, match="^plot: cannot write .*no space left"):
        atomic_write_bytes(tmp_path / "new.png", b"\x89PNG" + bytes(5000), option="plot")
    monkeypatch.undo()
    assert names(tmp_path) == []


@pytest.mark.parametrize("code, words", [(errno.EACCES, "permission denied"), (errno.EPERM, "permission denied"),
                                         (errno.EROFS, "read-only"), (errno.EDQUOT, "quota")])
def test_refused_creation(tmp_path, monkeypatch, code, words):
    # The folder refuses a new file (simulated: as root, chmod does not stop a write).
    real_open = os.open

    def refusing(path, flags, *args, **kw):
        if str(path).startswith(str(tmp_path)) and flags & os.O_CREAT:
            raise OSError(code, os.strerror(code), str(path))
        return real_open(path, flags, *args, **kw)

    target = tmp_path / "x.ts"
    target.write_text("old\n")
    monkeypatch.setattr(os, "open", refusing)
    with pytest.raises(dm.OutputError, match=f"^out: cannot write .*{words}"):
        check_destination(target)
    with pytest.raises(dm.OutputError, match=f"^out: cannot write .*{words}"):
        atomic_write_text(target, "new\n")
    monkeypatch.undo()
    assert target.read_text() == "old\n" and names(tmp_path) == ["x.ts"]


@pytest.fixture
def immutable_folder(tmp_path, monkeypatch):
    """A folder no one may add files to, not even root: the ext4 'immutable' attribute.

    Where ``chattr +i`` is not available or not permitted, the refusal is simulated the way
    the kernel gives it (EPERM on creating a file there).
    """
    folder = tmp_path / "locked"
    folder.mkdir()
    (folder / "old.csv").write_text("old\n")
    try:
        real = subprocess.run(["chattr", "+i", str(folder)], capture_output=True).returncode == 0
    except OSError:
        real = False
    if not real:
        real_open = os.open

        def refusing(path, flags, *args, **kw):
            if str(path).startswith(str(folder)) and flags & os.O_CREAT:
                raise OSError(errno.EPERM, os.strerror(errno.EPERM), str(path))
            return real_open(path, flags, *args, **kw)

        monkeypatch.setattr(os, "open", refusing)
    yield folder
    if real:
        subprocess.run(["chattr", "-i", str(folder)], check=True)


def test_real_refusal_by_the_file_system(immutable_folder):
    with pytest.raises(dm.OutputError, match="^out: cannot write .*permission denied"):
        check_destination(immutable_folder / "new.csv")
    with pytest.raises(dm.OutputError, match="^out: cannot write .*permission denied"):
        atomic_write_text(immutable_folder / "old.csv", "new\n")
    assert (immutable_folder / "old.csv").read_text() == "old\n"
    assert names(immutable_folder) == ["old.csv"]


@pytest.mark.parametrize("path", ["/proc/devmodels-test.s2p", "/sys/devmodels-test.csv", "/dev/null",
                                  "/dev/stdout"])
def test_device_and_kernel_folders_are_refused(path):
    before = os.lstat(path) if os.path.lexists(path) else None
    with pytest.raises(dm.OutputError, match="^out: cannot write .*devices or kernel files"):
        check_destination(path)
    with pytest.raises(dm.OutputError, match="^out: cannot write "):
        atomic_write_text(path, "x\n")
    after = os.lstat(path) if os.path.lexists(path) else None
    assert (before is None) == (after is None)
    if before is not None:
        assert (before.st_ino, before.st_mode) == (after.st_ino, after.st_mode)


def test_shared_memory_folder_is_an_ordinary_place():
    if not os.path.isdir("/dev/shm"):
        assert not fileio._inside_special_folder(fileio.Path("/dev/shm/x.csv"))
        return
    p = atomic_write_text(f"/dev/shm/devmodels-test-{os.getpid()}.csv", "ok\n")
    try:
        assert p.read_text() == "ok\n"
    finally:
        p.unlink()


def test_fifo_at_destination_is_never_replaced(tmp_path):
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)
    with pytest.raises(dm.OutputError, match="not a regular file"):
        atomic_write_text(fifo, "x\n")
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode) and names(tmp_path) == ["pipe.csv"]


def test_name_too_long_and_message_shortened(tmp_path):
    long_name = "n" * 300 + ".csv"
    with pytest.raises(dm.OutputError) as e:
        atomic_write_text(tmp_path / long_name, "x\n")
    msg = one_line(e)
    assert msg.startswith("out: cannot write ") and msg.endswith("the name is too long")
    assert "..." in msg and len(msg) < 200
    with pytest.raises(dm.OutputError, match="name is too long"):
        check_destination(tmp_path / long_name)
    assert names(tmp_path) == []


def test_long_destination_name_that_fits_is_written(tmp_path):
    # A name of 250 characters is valid; the temporary name must not overflow NAME_MAX.
    p = tmp_path / ("m" * 246 + ".csv")
    atomic_write_text(p, "ok\n")
    assert p.read_text() == "ok\n"


def test_newline_in_name_stays_one_line(tmp_path):
    with pytest.raises(dm.OutputError) as e:
        atomic_write_text(tmp_path / "no\nsuch" / "x.csv", "x\n")
    one_line(e)
    with pytest.raises(dm.OutputError, match="^out: expected a file name"):
        atomic_write_text("", "x\n")


def test_check_destination_touches_nothing(tmp_path):
    target = tmp_path / "x.s2p"
    target.write_text("old\n")
    os.chmod(target, 0o600)
    st = os.stat(target)
    assert check_destination(target) == target
    assert check_destination(tmp_path / "new.s2p", option="plot") == tmp_path / "new.s2p"
    assert names(tmp_path) == ["x.s2p"] and os.stat(target).st_mtime_ns == st.st_mtime_ns


def test_error_in_the_producer_removes_the_temporary_file(tmp_path):
    target = tmp_path / "a.csv"
    target.write_text("old\n")

    def chunks():
        yield "first block\n" * 100_000  # larger than the write buffer: already on disk
        raise RuntimeError("the computation failed")

    with pytest.raises(RuntimeError, match="computation failed"):
        atomic_write_chunks(target, chunks())
    assert target.read_text() == "old\n" and names(tmp_path) == ["a.csv"]
    with pytest.raises(KeyError):
        with atomic_writer(target) as fh:
            fh.write("partial")
            raise KeyError("x")
    assert target.read_text() == "old\n" and names(tmp_path) == ["a.csv"]


def test_streaming_writes_every_chunk_in_order(tmp_path):
    rng = np.random.default_rng(3)
    parts = ["".join(map(chr, rng.integers(32, 0x3000, int(n)))) for n in rng.integers(0, 400_000, 25)]
    atomic_write_chunks(tmp_path / "s.txt", iter(parts))
    assert (tmp_path / "s.txt").read_text(encoding="utf-8") == "".join(parts)
    with atomic_writer(tmp_path / "b.bin") as fh:
        fh.write(b"\x00\x01")
        fh.writelines([b"\x02", "é"])
    assert (tmp_path / "b.bin").read_bytes() == b"\x00\x01\x02" + "é".encode()


def test_output_error_is_a_devmodels_error():
    assert issubclass(dm.OutputError, dm.DevModelsError) and issubclass(dm.OutputError, ValueError)


def test_short_path():
    assert fileio.short_path("abc") == "abc"
    s = fileio.short_path("/a" * 200, 120)
    assert len(s) == 120 and "..." in s and s.startswith("/a/a") and s.endswith("/a")


# --- plots go through the same writer ---------------------------------------------------
def small_figure():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(2, 2))
    ax.plot([1, 2, 3], [1, 4, 9])
    return fig


def test_save_figure_replaces_symlink_and_writes_a_real_image(tmp_path):
    from devmodels.plotting import save_figure

    real = tmp_path / "real.png"
    real.write_bytes(b"keep me")
    link = tmp_path / "plot.png"
    link.symlink_to(real)
    fig = small_figure()
    save_figure(fig, link)
    save_figure(fig, tmp_path / "plot.svg")
    assert not link.is_symlink() and link.read_bytes().startswith(b"\x89PNG\r\n\x1a\n")
    assert real.read_bytes() == b"keep me"
    assert b"<svg" in (tmp_path / "plot.svg").read_bytes()
    with pytest.raises(dm.InputError, match="^plot: "):
        save_figure(fig, tmp_path / "plot.xyz")


def test_save_figure_on_a_full_disk_leaves_no_empty_file(tmp_path, monkeypatch):
    from devmodels.plotting import save_figure

    old = tmp_path / "old.png"
    old.write_bytes(b"old image")
    fig = small_figure()

    def full(fd, data):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "write", full)
    with pytest.raises(dm.OutputError, match="^plot: cannot write .*no space left"):
        save_figure(fig, old)
    with pytest.raises(dm.OutputError, match="^plot: cannot write .*no space left"):
        save_figure(fig, tmp_path / "new.png")
    monkeypatch.undo()
    assert old.read_bytes() == b"old image" and names(tmp_path) == ["old.png"]


def test_plot_report_checks_the_destination_first(tmp_path):
    from devmodels.plotting import plot_report

    (tmp_path / "d.png").mkdir()
    with pytest.raises(dm.OutputError, match="^plot: cannot write .*directory"):
        plot_report(tmp_path / "d.png", gains={})
    with pytest.raises(dm.InputError, match="^plot: expected a .png or .svg"):
        plot_report(tmp_path / "x.pdf", gains={})
