"""How fast the window appears and how quickly it answers (prints figures, asserts nothing).

Run: cd /work/main && QT_QPA_PLATFORM=offscreen python tests/bench/bench_gui_startup.py
The issue asks for the window on screen within 1.5 s and no stall over ~50 ms.
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time

CHILD = r"""
import sys, time
from gui.app import make_application
from gui.main_window import MainWindow
app = make_application()
w = MainWindow(None, remember=False)
w.show()
app.processEvents()
print("shown", flush=True)
t = time.perf_counter()
from PySide6.QtCore import QEventLoop, QTimer
gaps = [time.perf_counter(), 0.0]
def beat():
    now = time.perf_counter()
    gaps[1] = max(gaps[1], now - gaps[0])
    gaps[0] = now
heart = QTimer(); heart.setInterval(5); heart.timeout.connect(beat); heart.start()
loop = QEventLoop(); w.sigSearchDone.connect(loop.quit)
QTimer.singleShot(0, w.finish_startup); loop.exec()
print(f"first {time.perf_counter() - t:.3f}", flush=True)
settle = QEventLoop(); QTimer.singleShot(300, settle.quit); settle.exec()
print(f"stall {gaps[1]:.3f}", flush=True)
gaps[1] = 0.0
latencies = []
for text in ("1.2kHz", "1.5kHz", "2kHz", "440Hz", "38k", "2ms", "1kHz"):
    w.form.target.setText(text)
    t = time.perf_counter()
    w.run_search(); loop.exec()
    latencies.append(time.perf_counter() - t)
    QTimer.singleShot(100, settle.quit)
    settle.exec()
print("typing " + " ".join(f"{x:.4f}" for x in latencies), flush=True)
print(f"typingstall {gaps[1]:.3f}", flush=True)
print(f"slowest {w.search.slowest_ms:.1f}", flush=True)
w.close()
"""


def main() -> None:
    env = dict(os.environ, QT_QPA_PLATFORM=os.environ.get("QT_QPA_PLATFORM", "offscreen"))
    shown, first, typing, slowest, stalls, typing_stalls = [], [], [], [], [], []
    for _ in range(5):
        start = time.perf_counter()
        child = subprocess.Popen([sys.executable, "-c", CHILD], stdout=subprocess.PIPE,
                                 stderr=subprocess.DEVNULL, text=True, env=env)
        assert child.stdout is not None
        for line in child.stdout:
            if line.startswith("shown"):
                shown.append(time.perf_counter() - start)
            elif line.startswith("first"):
                first.append(float(line.split()[1]))
            elif line.startswith("typing "):
                typing.extend(float(x) for x in line.split()[1:])
            elif line.startswith("stall"):
                stalls.append(float(line.split()[1]))
            elif line.startswith("typingstall"):
                typing_stalls.append(float(line.split()[1]))
            elif line.startswith("slowest"):
                slowest.append(float(line.split()[1]))
        child.wait()
    print(f"window on screen after start (process launch to first paint): "
          f"median {statistics.median(shown):.2f} s, worst {max(shown):.2f} s")
    print(f"plots + index + first search after that: median {statistics.median(first):.2f} s")
    print(f"search after a target edit (request to result shown): "
          f"median {1000 * statistics.median(typing):.0f} ms, worst {1000 * max(typing):.0f} ms")
    print(f"longest result handling on the window thread: {max(slowest):.0f} ms")
    print(f"longest stall of the window thread from first paint until the first result "
          f"is drawn and painted: median {1000 * statistics.median(stalls):.0f} ms, "
          f"worst {1000 * max(stalls):.0f} ms")
    print(f"longest stall while the target is edited (7 searches, results painted): "
          f"median {1000 * statistics.median(typing_stalls):.0f} ms, "
          f"worst {1000 * max(typing_stalls):.0f} ms")


if __name__ == "__main__":
    main()
