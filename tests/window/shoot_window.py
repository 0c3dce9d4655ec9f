"""Screenshots of the window on the demo drawer, for the README (not a test).

Run: cd /work/main && QT_QPA_PLATFORM=offscreen python tests/window/shoot_window.py [FOLDER]
Writes window-search.png (1 kHz from a 74HC14, at the smallest size the window
supports: 1024 x 700), window-trim.png (a 400..480 Hz band with a trimmer, on a large
screen: 1600 x 1000) and window-555.png (a 555 at 60 % duty) into FOLDER
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

CHILD = """
import json, sys
from core.storage.locations import demo_drawer_path
from gui.app import run_window
sys.exit(run_window(str(demo_drawer_path()), sys.argv[1], json.loads(sys.argv[2]),
                    tuple(json.loads(sys.argv[3]))))
"""


def main() -> None:
    folder = Path(sys.argv[1] if len(sys.argv) > 1 else "resources/screenshots")
    folder.mkdir(parents=True, exist_ok=True)
    env = dict(os.environ, QT_QPA_PLATFORM=os.environ.get("QT_QPA_PLATFORM", "offscreen"))
    for name, (target, size) in SHOTS.items():
        subprocess.run([sys.executable, "-c", CHILD, str(folder / name), json.dumps(target),
                        json.dumps(size)], env=env, check=True, stderr=subprocess.DEVNULL)
        print(folder / name)


if __name__ == "__main__":
    main()
