"""gui.plot_library: pyqtgraph without its copy of every Qt class, and nothing else changed.

Each check runs in a fresh interpreter: the test process may have imported pyqtgraph already.
"""

from __future__ import annotations

import ast
import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

PROBE = r"""
import json, sys
import PySide6.QtCore, PySide6.QtGui, PySide6.QtWidgets
from PySide6.QtWidgets import QApplication
app = QApplication([])
from gui.plot_library import pg, _MirrorFinder
mirrors = (pg.Qt.QtCore, pg.Qt.QtGui, pg.Qt.QtWidgets)
kept_before = [len(vars(m)) for m in mirrors]
listed = [len(dir(q)) for q in (PySide6.QtCore, PySide6.QtGui, PySide6.QtWidgets)]
same = all(getattr(m, name) is getattr(q, name)
           for m, q in zip(mirrors, (PySide6.QtCore, PySide6.QtGui, PySide6.QtWidgets))
           for name in ("QTimer", "QColor", "QWidget", "Qt", "QPointF", "QPen")
           if hasattr(q, name))
plot = pg.PlotWidget()
curve = plot.plot([0.0, 1.0, 2.0], [3.0, 1.0, 2.0])
x, y = curve.getData()
print(json.dumps({
    "kept": kept_before, "listed": listed, "same": same,
    "data": [list(map(float, x)), list(map(float, y))],
    "finder_left": any(isinstance(f, _MirrorFinder) for f in sys.meta_path),
    "own_attribute": pg.Qt.QtWidgets.QOpenGLWidget is not None,
}))
"""


def _probe(code: str) -> dict:
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=ROOT, env=env, timeout=120, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def test_mirrors_fetch_qt_names_on_use_and_plots_still_draw() -> None:
    seen = _probe(PROBE)
    # Without the look-up, each mirror holds every name PySide6 lists (pyqtgraph 0.14's
    # Qt/__init__.py copies them all); with it, only what pyqtgraph itself set or used.
    for kept, listed in zip(seen["kept"], seen["listed"], strict=True):
        assert kept < listed / 3
    assert seen["same"]  # a name fetched later is PySide6's own object
    assert seen["data"] == [[0.0, 1.0, 2.0], [3.0, 1.0, 2.0]]
    assert not seen["finder_left"]
    assert seen["own_attribute"]  # what pyqtgraph sets on a mirror stays there


def test_an_already_imported_pyqtgraph_is_used_as_it_is() -> None:
    code = ("import json, pyqtgraph, PySide6.QtCore\n"
            "from gui.plot_library import pg\n"
            "print(json.dumps({'same': pg is pyqtgraph,\n"
            "  'full': len(vars(pg.Qt.QtCore)) >= len(dir(PySide6.QtCore))}))\n")
    seen = _probe(code)
    assert seen == {"same": True, "full": True}


def test_only_plot_library_imports_pyqtgraph() -> None:
    """Another module importing pyqtgraph first would skip the look-up (and its saving)."""
    direct = []
    for path in sorted((ROOT / "gui").glob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            names = ([a.name for a in node.names] if isinstance(node, ast.Import)
                     else [node.module or ""] if isinstance(node, ast.ImportFrom) else [])
            if any(n.split(".")[0] == "pyqtgraph" for n in names):
                direct.append(path.name)
    assert direct == ["plot_library.py"]
