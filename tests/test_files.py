"""Output files (symcluster.export.files) and the command line's use of them.

Issue "Reliability", finding 1: writing an output through a temporary file and a rename
replaced whatever was at the path (a device such as /dev/null, a FIFO, a symbolic link, the
run's own input file).  Now only a regular file or a new path is written; a link is written
through to its target.  The devices here are made with mknod in a temporary directory (with
the numbers of /dev/null and /dev/full), so a regression can never replace the machine's own.
"""

import os
import stat

import pytest

from symcluster.cli import main
from symcluster.errors import InputError
from symcluster.export import check_writable, write_texts_atomic
from helpers_cli import error_line

CLUSTER = 'format = "symcluster-cluster"\nsites = 2\nbonds = [[0, 1]]\n'


def _error_line(capsys):
    return error_line(capsys, quiet_stdout=True)


def _device(tmp_path, name, numbers):
    path = tmp_path / name
    try:
        os.mknod(path, 0o666 | stat.S_IFCHR, os.makedev(*numbers))
    except OSError:
        pytest.skip("cannot make a device node here (needs root)")
    return path


@pytest.mark.parametrize("name, numbers", [("null", (1, 3)), ("full", (1, 7))])
def test_a_device_is_refused_and_left_alone(tmp_path, capsys, name, numbers):
    dev = _device(tmp_path, name, numbers)
    tex = tmp_path / "a.tex"
    assert main(["levels", "chain", "2", "--latex", str(tex), "--json", str(dev)]) == 2
    assert "device" in _error_line(capsys)
    assert stat.S_ISCHR(os.lstat(dev).st_mode)            # still the device
    assert sorted(p.name for p in tmp_path.iterdir()) == [name]   # a.tex not written


def test_a_fifo_is_refused_and_left_alone(tmp_path, capsys):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    assert main(["levels", "chain", "2", "--json", str(fifo)]) == 2
    assert "FIFO" in _error_line(capsys)
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)
    with pytest.raises(InputError, match="FIFO"):
        check_writable(fifo)


def test_the_writer_itself_refuses_a_special_file_and_writes_nothing(tmp_path):
    # all or none: the first output must not appear when the second target is a FIFO
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    with pytest.raises(InputError, match="FIFO"):
        write_texts_atomic([(tmp_path / "first.txt", "x\n"), (fifo, "y\n")])
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pipe"]
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


def test_a_symbolic_link_is_written_through_and_kept(tmp_path, capsys):
    target = tmp_path / "data" / "spectrum.json"
    target.parent.mkdir()
    target.write_text("old\n")
    target.chmod(0o640)
    link = tmp_path / "link.json"
    link.symlink_to(target)
    assert main(["levels", "chain", "2", "--json", str(link)]) == 0
    capsys.readouterr()
    assert link.is_symlink() and os.readlink(link) == str(target)
    assert target.read_text().lstrip().startswith("{")
    assert stat.S_IMODE(os.stat(target).st_mode) == 0o640   # a replaced file keeps its mode


def test_a_dangling_link_creates_its_target(tmp_path):
    link = tmp_path / "link.txt"
    link.symlink_to("made.txt")
    write_texts_atomic([(link, "made\n")])
    assert link.is_symlink() and (tmp_path / "made.txt").read_text() == "made\n"


def test_the_input_cluster_file_is_never_an_output(tmp_path, capsys):
    src = tmp_path / "dimer.toml"
    src.write_text(CLUSTER)
    (tmp_path / "sym.json").symlink_to(src)
    os.link(src, tmp_path / "hard.json")
    for out in (src, tmp_path / "sym.json", tmp_path / "hard.json"):
        for option in ("--json", "--latex"):
            assert main(["levels", "--cluster-file", str(src), option, str(out)]) == 2
            assert "also an input" in _error_line(capsys)
            assert src.read_text() == CLUSTER
    assert main(["gaps", "--cluster-file", str(src), "--sector", "2", "--latex", str(src)]) == 2
    assert "also an input" in _error_line(capsys)
    assert src.read_text() == CLUSTER


def test_two_outputs_at_one_file_are_refused(tmp_path, capsys):
    a = tmp_path / "a.out"
    (tmp_path / "b.out").symlink_to(a)
    assert main(["levels", "chain", "2", "--latex", str(a), "--json", str(tmp_path / "b.out")]) == 2
    assert "same file" in _error_line(capsys)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["b.out"]
    with pytest.raises(InputError, match="same file"):
        write_texts_atomic([(a, "1"), (tmp_path / "b.out", "2")])


def test_plot_writes_both_files_or_none(tmp_path, capsys):
    pytest.importorskip("matplotlib")
    (tmp_path / "lv.pdf").mkdir()                  # the second file cannot be written
    assert main(["plot", "chain", "2", "--output", str(tmp_path / "lv")]) == 2
    assert "directory" in _error_line(capsys)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["lv.pdf"]
