"""Screenshots of the window on the demo drawer, for the README (not a test).

Run: cd /work/main && QT_QPA_PLATFORM=offscreen python tests/window/shoot_window.py [FOLDER]
Writes window-search.png (1 kHz from a 74HC14, at the smallest size the window
supports: 1024 x 700), window-trim.png (a 400..480 Hz band with a trimmer, on a large
screen: 1600 x 1000), window-555.png (a 555 at 60 % duty) and window-drift.png (the
1 kHz search's temperature tab, a garden shed's −20…50 °C) into FOLDER
(default resources/screenshots). Each picture is taken in a fresh process, so the
window starts as a person would see it.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

SHOTS = {  # name: (target form fields, picture size)
    "window-search.png": ({}, (1024, 700)),
    "window-trim.png": ({"mode": "band", "target": "400..480"}, (1600, 1000)),
    "window-555.png": ({"circuit": "555", "family": "NE555", "target": "1kHz", "duty": "60%"},
                       (1280, 800)),
}

DRIFT = ("window-drift.png", "temperature", "-20..50", (1280, 800))
"""A drift tab's picture: name, tab, range typed, size (a window then a tab, so its own
child)."""

CHILD = """
import json, sys
from core.storage.locations import demo_drawer_path
from gui.app import run_window
sys.exit(run_window(str(demo_drawer_path()), sys.argv[1], json.loads(sys.argv[2]),
                    tuple(json.loads(sys.argv[3]))))
"""

DRIFT_CHILD = """
import json, sys
from PySide6.QtCore import QEventLoop, QTimer
from core.storage.locations import demo_drawer_path
from gui.app import make_application
from gui.main_window import MainWindow
app = make_application()
window = MainWindow(str(demo_drawer_path()), remember=False)
window.resize(*json.loads(sys.argv[4]))
window.show()
for signal, start in ((window.sigSearchDone, window.finish_startup), (None, None)):
    loop = QEventLoop()
    if signal is None:
        drift = window.plots.drift
        signal = drift.sigDrawn
        def start():
            drift.tabs.setCurrentWidget(drift.pages[sys.argv[2]])
            drift.set_range(sys.argv[2], sys.argv[3])
    signal.connect(loop.quit)
    QTimer.singleShot(60_000, loop.quit)
    start()
    loop.exec()
app.processEvents()
window.grab().save(sys.argv[1])
"""


def main() -> None:
    folder = Path(sys.argv[1] if len(sys.argv) > 1 else "resources/screenshots")
    folder.mkdir(parents=True, exist_ok=True)
    env = dict(os.environ, QT_QPA_PLATFORM=os.environ.get("QT_QPA_PLATFORM", "offscreen"))
    for name, (target, size) in SHOTS.items():
        subprocess.run([sys.executable, "-c", CHILD, str(folder / name), json.dumps(target),
                        json.dumps(size)], env=env, check=True, stderr=subprocess.DEVNULL)
        print(folder / name)
    name, tab, text, size = DRIFT
    subprocess.run([sys.executable, "-c", DRIFT_CHILD, str(folder / name), tab, text,
                    json.dumps(size)], env=env, check=True, stderr=subprocess.DEVNULL)
    print(folder / name)


if __name__ == "__main__":
    main()
