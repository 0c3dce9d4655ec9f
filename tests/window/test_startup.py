"""gui.startup gives PySide6's import check the same answers, from the loader.

The reference is PySide6's own check (``shibokensupport.feature._mod_uses_pyside``), run in
a fresh interpreter before it is replaced.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

MODULES = ["gui.main_window", "gui.drawer_model", "gui.startup", "core.units",
           "core.model.timing", "json", "sys", "numpy", "numpy._core._multiarray_umath",
           "pyqtgraph.Qt", "pyqtgraph.graphicsItems.PlotItem.PlotItem"]

PROBE = r"""
import importlib, json, sys
import PySide6.QtCore
feature = sys.modules["shibokensupport.feature"]
theirs = feature._mod_uses_pyside
modules = [importlib.import_module(name) for name in sys.argv[1:]]
from gui.startup import mentions_pyside, quicken_import_check
before = [theirs(m) for m in modules]
quicken_import_check()
print(json.dumps({"theirs": before, "ours": [mentions_pyside(m) for m in modules],
                  "replaced": feature._mod_uses_pyside is mentions_pyside}))
"""


def test_the_check_answers_as_pyside6_does() -> None:
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    out = subprocess.run([sys.executable, "-c", PROBE, *MODULES], capture_output=True,
                         text=True, cwd=ROOT, env=env, timeout=120, check=True)
    seen = json.loads(out.stdout.strip().splitlines()[-1])
    assert seen["ours"] == seen["theirs"]
    assert True in seen["ours"] and False in seen["ours"]  # both answers were asked for
    assert seen["replaced"]


def test_the_window_module_applies_it() -> None:
    code = ("import sys, gui.app\n"
            "from gui.startup import mentions_pyside\n"
            "print(sys.modules['shibokensupport.feature']._mod_uses_pyside is mentions_pyside)")
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=ROOT, env=env, timeout=120, check=True)
    assert out.stdout.split()[-1] == "True"


def test_the_collector_waits_for_the_first_result_then_resumes() -> None:
    """Paused from gui.app's import to the window's first result; the objects made by then
    are frozen out of later collections (Python's gc.freeze), and collection resumes."""
    code = r"""
import gc, json, sys
from PySide6.QtCore import QEventLoop, QTimer
from gui.app import make_application
from gui.main_window import MainWindow
paused = not gc.isenabled()
app = make_application()
w = MainWindow(None, remember=False)
w.show()
loop = QEventLoop(); w.sigSearchDone.connect(loop.quit)
QTimer.singleShot(0, w.finish_startup); loop.exec()
print(json.dumps({"paused": paused, "resumed": gc.isenabled(),
                  "frozen": gc.get_freeze_count()}))
"""
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=ROOT, env=env, timeout=120, check=True)
    seen = json.loads(out.stdout.strip().splitlines()[-1])
    assert seen["paused"] and seen["resumed"]
    assert seen["frozen"] > 10_000


def test_resuming_undoes_only_a_pause() -> None:
    import gc

    from gui import startup

    startup.resume_collection()  # whatever an import of gui.app paused in this process
    assert gc.isenabled()
    frozen = gc.get_freeze_count()
    startup.resume_collection()  # nothing paused now: nothing changes
    assert gc.isenabled() and gc.get_freeze_count() == frozen
    startup.pause_collection()
    try:
        assert not gc.isenabled()
    finally:
        startup.resume_collection()
    assert gc.isenabled()
