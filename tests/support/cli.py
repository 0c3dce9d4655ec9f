"""``tickbin`` run in this process: the console script's own entry point with an argument
list, its output captured. A fresh process per command costs about a second; the
contract tests run a few commands through the installed script as well and check that
both print the same."""

from __future__ import annotations

import contextlib
import io
import subprocess
from pathlib import Path

from gui.entry import main


def run_tickbin(cwd: Path, *argv: str) -> subprocess.CompletedProcess[str]:
    """``tickbin ARGV`` from folder ``cwd``: exit status, stdout and stderr, as a process
    would give them (``gui`` opens a window; run that one through the script)."""
    out, err = io.StringIO(), io.StringIO()
    status: object = None
    with contextlib.chdir(cwd), contextlib.redirect_stdout(out), \
            contextlib.redirect_stderr(err):
        try:
            main(list(argv))
        except SystemExit as e:  # main always ends this way, as the script does
            status = e.code
    assert isinstance(status, int), status
    return subprocess.CompletedProcess(["tickbin", *argv], status, out.getvalue(),
                                       err.getvalue())
