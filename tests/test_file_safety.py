"""Nothing a person owns is lost (issue 10): outputs never replace the drawer or a system
file, saves go through links and keep the mode, kills never leave a cut file, special
files are refused without hanging.

The kill tests start a real process and SIGKILL it at a random moment while it
saves over and over (seeded, so a failure can be replayed); the file on disk must
always be one complete version. Expectations are common practice for atomic saves
(POSIX rename(2) replaces a name in one step), no published source beyond POSIX.
"""

from __future__ import annotations

import errno
import json
import os
import random
import shutil
import signal
import stat
import subprocess
import sys
import time
from pathlib import Path

import pytest

import core.cli
import core.storage.atomic as atomic
from core.errors import TickbinError
from core.parts.drawer_file import read_drawer, write_drawer
from core.storage.atomic import clean_stale_temporaries, read_regular_file, write_text_atomically
from core.storage.locations import demo_drawer_path

ROOT = Path(__file__).resolve().parents[1]
KILLS = 20


def _tickbin(capsys, *argv: str) -> tuple[int, str, str]:
    from gui.entry import render_sheet

    try:
        code = core.cli.main(list(argv), render_sheet=render_sheet)
    except SystemExit as e:
        code = int(e.code or 0)
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def drawer_file(tmp_path: Path) -> Path:
    path = tmp_path / "drawer.csv"
    shutil.copy(demo_drawer_path(), path)
    return path


# ---------------------------------------------------------------- outputs

@pytest.mark.parametrize("command", ["netlist", "sheet"])
@pytest.mark.parametrize("through_link", [False, True])
def test_out_naming_the_drawer_is_refused(qapp, capsys, drawer_file, tmp_path, command,
                                          through_link):
    before = drawer_file.read_bytes()
    out = drawer_file
    if through_link:
        out = tmp_path / "link.pdf"
        out.symlink_to(drawer_file)
    extra = ["--take"] if command == "sheet" else []
    code, _, err = _tickbin(capsys, command, "--stock", str(drawer_file), "--target", "1kHz",
                            "--out", str(out), *extra)
    assert code == 2
    assert err.count("\n") == 1 and "is the drawer file itself" in err and str(out) in err
    assert drawer_file.read_bytes() == before
    assert not (tmp_path / "drawer.csv.bak").exists()


@pytest.mark.parametrize("special", ["/dev/stdout", "/dev/null", "fifo", "folder"])
def test_out_to_a_special_file_is_refused(qapp, capsys, drawer_file, tmp_path, special):
    if special == "fifo":
        special = str(tmp_path / "pipe")
        os.mkfifo(special)
    elif special == "folder":
        special = str(tmp_path)
    for command, extra in (("netlist", []), ("sheet", ["--take"])):
        code, out, err = _tickbin(capsys, command, "--stock", str(drawer_file), "--target",
                                  "1kHz", "--out", special, *extra)
        assert code == 2 and not out
        assert err.count("\n") == 1 and special in err and "ordinary file" in err
    assert stat.S_ISCHR(os.stat("/dev/null").st_mode)  # still the device, not replaced
    assert read_drawer(drawer_file).rows  # nothing taken


@pytest.mark.parametrize("command", ["netlist", "sheet"])
def test_unwritable_out_names_the_file(qapp, capsys, drawer_file, tmp_path, monkeypatch,
                                       command):
    out = tmp_path / f"result.{'cir' if command == 'netlist' else 'pdf'}"
    out.write_bytes(b"older result")

    def refuse(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    # The tests run as root, so permissions cannot make a folder read-only: the
    # operating system's refusal is simulated where the temporary file is made.
    monkeypatch.setattr(atomic.tempfile, "mkstemp", refuse)
    code, _, err = _tickbin(capsys, command, "--stock", str(drawer_file), "--target", "1kHz",
                            "--out", str(out))
    assert code == 2 and err.count("\n") == 1
    assert str(out) in err and "Permission denied" in err
    assert out.read_bytes() == b"older result"
    code, _, err = _tickbin(capsys, command, "--stock", str(drawer_file), "--target", "1kHz",
                            "--out", str(tmp_path / "no such folder" / out.name))
    assert code == 2 and "no such folder" in err and err.count("\n") == 1


def test_symlinked_drawer_is_written_through_the_link_and_keeps_its_mode(drawer_file,
                                                                          tmp_path):
    real = drawer_file
    os.chmod(real, 0o644)
    link = tmp_path / "linked.csv"
    link.symlink_to(real)
    drawer = read_drawer(link)
    drawer.set_cell(0, "note", "saved through the link")
    write_drawer(drawer)
    assert link.is_symlink() and os.readlink(link) == str(real)
    assert "saved through the link" in real.read_text(encoding="utf-8")
    assert stat.S_IMODE(os.stat(real).st_mode) == 0o644
    assert (tmp_path / "drawer.csv.bak").exists()


@pytest.mark.parametrize("umask", [0o022, 0o027])
def test_new_file_gets_the_umask_mode(tmp_path, umask):
    old = os.umask(umask)
    try:
        path = write_text_atomically(tmp_path / "new.cir", "* netlist\n", backup=False)
    finally:
        os.umask(old)
    assert stat.S_IMODE(os.stat(path).st_mode) == 0o666 & ~umask  # POSIX open(2) with 0666


def test_stale_temporaries_are_removed_and_fresh_ones_kept(tmp_path):
    stale = tmp_path / f".drawer.csv{atomic.TEMP_MARK}dead{atomic.TEMP_SUFFIX}"
    fresh = tmp_path / f".drawer.csv{atomic.TEMP_MARK}busy{atomic.TEMP_SUFFIX}"
    mine = tmp_path / ".drawer.csv.tmp"  # not ours: never touched
    for p in (stale, fresh, mine):
        p.write_bytes(b"x" * 1000)
    old = time.time() - atomic.STALE_AFTER_S - 60
    os.utime(stale, (old, old))
    os.utime(mine, (old, old))
    write_text_atomically(tmp_path / "drawer.csv", "kind,value,quantity\n")
    assert not stale.exists() and fresh.exists() and mine.exists()
    clean_stale_temporaries(tmp_path, now=time.time() + atomic.STALE_AFTER_S + 1)
    assert not fresh.exists() and mine.exists()


# ---------------------------------------------------------------- kills

_SAVER = """
import sys
from core.parts.drawer_file import read_drawer, write_drawer

read_drawer(sys.argv[1])  # a first read before the forks: what is imported stays

def work(path):
    drawer = read_drawer(path)
    n = 0
    while True:
        n += 1
        drawer.set_cell(0, "note", f"save {n}")
        write_drawer(drawer)
"""

_RENDERER = """
import os, sys
import core.cli, gui.entry

def work(path):
    sys.stdout = open(os.devnull, "w")  # its "wrote ..." lines must not reach the parent's pipe
    while True:
        core.cli.main(["sheet", "--target", "1kHz", "--out", path],
                      render_sheet=gui.entry.render_sheet)
"""

_FORKER = """
import os, sys
from core.parts.drawer_file import read_drawer
from core.storage.locations import demo_drawer_path
read_drawer(demo_drawer_path())  # the unit registry is built once, before the forks
for line in sys.stdin:
    pid = os.fork()
    if pid == 0:
        try:
            work(sys.argv[1])
        finally:
            os._exit(0)
    print(pid, flush=True)
    os.waitpid(pid, 0)
    print("reaped", flush=True)
"""


def _kill_at_random(script: str, target: Path, delay: tuple[float, float], check,
                    kills: int = KILLS) -> None:
    """Start ``work(target)`` of ``script`` ``kills`` times, SIGKILL it after a random delay and
    call ``check()`` after each kill. The modules are imported once; each worker is a
    fork of that process, so the kills land in the work, not in start-up."""
    rng = random.Random(10)
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen")
    with subprocess.Popen([sys.executable, "-c", script + _FORKER, str(target)],
                          stdin=subprocess.PIPE, stdout=subprocess.PIPE, env=env,
                          cwd=target.parent) as server:
        assert server.stdin is not None and server.stdout is not None
        try:
            for _ in range(kills):
                server.stdin.write(b"go\n")
                server.stdin.flush()
                pid = int(server.stdout.readline())
                time.sleep(rng.uniform(*delay))
                os.kill(pid, signal.SIGKILL)
                assert server.stdout.readline() == b"reaped\n"
                check()
        finally:
            server.stdin.close()
            server.wait(60)


def test_kills_during_saves_never_cut_the_drawer_or_its_backup(tmp_path):
    path = tmp_path / "big.csv"
    # About 4 MB in long lines, so writing and copying take a while.
    note = "n" * 9000
    rows = "".join(f"R,{k}k,{k % 40},A{k},{note}\n" for k in range(1, 450))
    path.write_text("kind,value,quantity,location,note\n" + rows, encoding="utf-8")
    count = len(read_drawer(path).rows)

    def check() -> None:
        assert len(read_drawer(path).rows) == count  # a whole file, never a cut one
        bak = tmp_path / "big.csv.bak"
        if bak.exists():
            assert len(read_drawer(bak).rows) == count

    _kill_at_random(_SAVER, path, (0.2, 2.0), check)
    # A killed save leaves its temporary file; the next save after a while removes it.
    old = time.time() - atomic.STALE_AFTER_S - 1
    for p in tmp_path.iterdir():
        os.utime(p, (old, old))
    drawer = read_drawer(path)
    drawer.set_cell(0, "note", "after the kills")
    write_drawer(drawer)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["big.csv", "big.csv.bak"]


def test_kills_during_pdf_writes_leave_the_old_pdf_whole(qapp, tmp_path):
    out = tmp_path / "sheet.pdf"
    old = b"%PDF-1.4\n% the older sheet\n%%EOF\n"
    out.write_bytes(old)

    def check() -> None:
        data = out.read_bytes()
        assert data == old or (data.startswith(b"%PDF") and data.rstrip().endswith(b"%%EOF"))

    _kill_at_random(_RENDERER, out, (0.2, 2.5), check, kills=12)


# ---------------------------------------------------------------- special files as input

def _run(*argv: str) -> subprocess.CompletedProcess[str]:
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen")
    script = "import sys, core.cli; sys.exit(core.cli.main(sys.argv[1:]))"
    return subprocess.run([sys.executable, "-c", script, *argv], capture_output=True,
                          text=True, timeout=60, env=env)


@pytest.mark.parametrize("special", ["fifo", "/dev/zero", "folder"])
def test_special_file_as_stock_is_refused_without_hanging(tmp_path, special):
    if special == "fifo":
        special = str(tmp_path / "pipe")
        os.mkfifo(special)  # nobody writes to it: opening it for reading would wait forever
    elif special == "folder":
        special = str(tmp_path)
    for argv in (["search", "--stock", special, "--target", "1kHz"],
                 ["stock", "check", special, "--json"]):
        done = _run(*argv)  # the timeout fails the test if it hangs
        assert done.returncode == 2, done.stderr
        assert done.stderr.count("\n") == 1 and special in done.stderr
        assert "ordinary file" in done.stderr and "Traceback" not in done.stderr


def test_size_limit_is_checked_while_reading(tmp_path):
    p = tmp_path / "big.csv"
    p.write_bytes(b"x" * 1001)
    with pytest.raises(atomic.FileTooLargeError):
        read_regular_file(p, 1000)
    assert read_regular_file(p, 1001) == b"x" * 1001
    with pytest.raises(TickbinError, match="ordinary file"):
        read_regular_file("/dev/zero", 1000)  # a device of endless zeros: never read


def test_json_result_still_names_the_out_file(qapp, capsys, drawer_file, tmp_path):
    out = tmp_path / "n.cir"
    code, result, err = _tickbin(capsys, "netlist", "--stock", str(drawer_file), "--target",
                                 "1kHz", "--out", str(out), "--json")
    assert code == 0, err
    assert json.loads(result)["out"] == str(out)


# ---------------------------------------------------------------- lost updates

def test_six_parallel_takes_lose_no_update(drawer_file, tmp_path):
    before = {p.stock_line: p.quantity for p in read_drawer(drawer_file).parts()}
    env = dict(os.environ, PYTHONPATH=str(ROOT), QT_QPA_PLATFORM="offscreen")
    script = ("import sys, core.cli, gui.entry; sys.exit(core.cli.main(sys.argv[1:], "
              "render_sheet=gui.entry.render_sheet))")
    procs = [subprocess.Popen([sys.executable, "-c", script, "sheet", "--stock",
                               str(drawer_file), "--target", "1kHz", "--out",
                               str(tmp_path / f"s{i}.pdf"), "--take", "--json"],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
             for i in range(6)]
    taken: dict[int, int] = {}
    landed = 0
    for proc in procs:
        out, err = proc.communicate(timeout=600)
        if proc.returncode == 0:
            landed += 1
            for t in json.loads(out)["taken"]:
                taken[t["line"]] = taken.get(t["line"], 0) + t["count"]
        else:  # refused, with one line saying why; never a silent loss
            assert err.count("\n") == 1 and ("another Tickbin run" in err
                                             or "changed on disk" in err), err
    assert landed >= 1
    after = {p.stock_line: p.quantity for p in read_drawer(drawer_file).parts()}
    assert after == {line: q - taken.get(line, 0) for line, q in before.items()}
    assert not list(tmp_path.glob(".drawer.csv*"))  # no lock or temporary left behind


def test_a_line_added_by_another_program_is_never_dropped(drawer_file):
    from core.parts.drawer_file import DrawerChangedError

    drawer = read_drawer(drawer_file)
    added = b"R,3k3,7,added by another program\n"
    with drawer_file.open("ab") as f:  # between our read and our write
        f.write(added)
    drawer.set_cell(0, "quantity", "0")
    with pytest.raises(DrawerChangedError, match="changed on disk since it was read"):
        write_drawer(drawer)
    assert drawer_file.read_bytes().endswith(added) and drawer.dirty
    write_drawer(drawer, overwrite=True)  # the person chose to keep their version
    assert not drawer_file.read_bytes().endswith(added)
    assert (drawer_file.parent / "drawer.csv.bak").read_bytes().endswith(added)
