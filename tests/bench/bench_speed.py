"""Every speed and size ratio the speed issue asks for, in one run (prints, asserts nothing).

Run: cd <repository> && QT_QPA_PLATFORM=offscreen python tests/bench/bench_speed.py

Whole processes are timed (best of several runs: other work on a shared
machine only ever adds time), so ratios between them are what to compare
from one machine to another; CPU time is steadier than wall time on a busy
machine, so process ratios are given in both. The drawers are written to a temporary folder:

* six parts: three resistors and three capacitors (``bench_search.SIX_PARTS``);
* the kit: E24 resistors 1 Ω–10 MΩ (169 values), E12 capacitors, pots;
* the graded store: the 169 E24 values in six tolerance grades (1,014 resistor lines);
* E192 over five decades, 100 Ω–10 MΩ (961 distinct values);
* 5,000 lines: E96 resistors in six grades and E12 capacitors in several dielectrics;
* 20,000 distinct resistor values (the bound on work and memory, with its note).

The window figures come from child processes: process start to the first paint
of a bare Qt window and of Tickbin's window, to Tickbin's first full result
(search and plots), each window run paired with a bare run just before it and the
ratio taken per pair (a shared machine's speed drifts from minute to minute, by
up to half of a bare window's time); from an edit of a 1,000-line drawer with three-resistor
networks, and from a new target, to the new result in the table and to its plots
drawn (the search is started at once, without the typing pause), as wall time and
as the process's CPU time (both threads: what the edit costs, whatever else the
machine runs).

The timed processes use compiled bytecode, as an installed copy does (pip compiles
on install): with PYTHONDONTWRITEBYTECODE set, a checkout would compile every
module of ours again in every process. The bytecode goes to the temporary folder.
The load average is printed before and after (the machine is shared).
"""

from __future__ import annotations

import csv
import json
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from bench_search import process_time, write_kit, write_six

from core.parts.eseries import kit

GRADES = ("0.1%", "0.25%", "0.5%", "1%", "2%", "5%")
CAPS = [("C", "100n", "5%", 10, "X7R"), ("C", "47n", "5%", 10, "X7R"),
        ("C", "1u", "10%", 10, "X7R")]
HEADER = ["kind", "value", "tolerance", "quantity", "location", "dielectric"]


def _write(path: Path, rows: list[tuple[object, ...]]) -> Path:
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(HEADER)
        for k, (kind, value, tol, qty, dielectric) in enumerate(rows):
            w.writerow([kind, value, tol, qty, f"bin {k // 20 + 1}", dielectric])
    return path


def _resistors(series: str, lo: float, hi: float, grades: tuple[str, ...] = ("1%",)
               ) -> list[tuple[object, ...]]:
    return [("R", f"{v:g}", g, 10, "") for v in kit(series, lo, hi) for g in grades]


def write_drawers(folder: Path) -> dict[str, Path]:
    six, full = folder / "six.csv", folder / "kit.csv"
    write_six(six)
    write_kit(full)
    caps5000 = [("C", f"{v:g}F", tol, 10, d) for v in kit("E12", 10e-12, 1000e-6)
                for tol, d in (("5%", "C0G"), ("10%", "X7R"), ("20%", "X5R"), ("10%", "film"),
                               ("20%", "Y5V"), ("5%", "film"), ("10%", "X5R"),
                               ("20%", "electrolytic"), ("10%", "C0G"), ("20%", "Z5U"))]
    lines5000 = _resistors("E96", 1.0, 10e6, GRADES) + caps5000
    huge = [("R", f"{1.0 * 10 ** (7 * k / 20_000):.6g}", "1%", 5, "") for k in range(20_000)]
    return {
        "six": six, "kit": full,
        "graded": _write(folder / "graded.csv", _resistors("E24", 1.0, 10e6, GRADES) + CAPS),
        "e192": _write(folder / "e192.csv", _resistors("E192", 100.0, 10e6) + CAPS),
        "5000": _write(folder / "lines5000.csv", lines5000[:5000]),
        "20000": _write(folder / "values20000.csv", huge + CAPS),
    }


def numpy_time(n: int = 7) -> tuple[float, float]:
    """Best wall and CPU time [s] of a Python process that only imports numpy."""
    walls, cpus = [], []
    for _ in range(n):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        t = time.perf_counter()
        subprocess.run([sys.executable, "-c", "import numpy"], check=True)
        walls.append(time.perf_counter() - t)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
    return min(walls), min(cpus)


def search_notes(argv: list[str]) -> list[str]:
    p = subprocess.run(["tickbin", *argv], capture_output=True, text=True, check=True)
    return json.loads(p.stdout)["notes"]


BARE = r"""
import time, sys
from PySide6.QtCore import QEvent, QObject, QTimer
from PySide6.QtWidgets import QApplication, QLabel, QMainWindow
app = QApplication(sys.argv)
w = QMainWindow(); w.setCentralWidget(QLabel("bare")); w.resize(1200, 800)
class Paint(QObject):
    def eventFilter(self, o, e):
        if e.type() == QEvent.Type.Paint:
            print("painted", flush=True); QTimer.singleShot(0, app.quit)
        return False
f = Paint(); w.installEventFilter(f); w.show(); app.exec()
"""

WINDOW = r"""
import sys, time
from PySide6.QtCore import QEvent, QEventLoop, QObject, QTimer
from gui.app import make_application
from gui.main_window import MainWindow
app = make_application()
w = MainWindow(sys.argv[1], remember=False)
w.form.max_r.setValue(3)
class Paint(QObject):
    def eventFilter(self, o, e):
        if e.type() == QEvent.Type.Paint:
            print("painted", flush=True); o.removeEventFilter(self)
        return False
f = Paint(); w.installEventFilter(f); w.resize(1200, 800); w.show()
loop = QEventLoop(); w.sigSearchDone.connect(loop.quit)
QTimer.singleShot(0, w.finish_startup); loop.exec()
print("result", flush=True)
if len(sys.argv) > 2:
    settle = QEventLoop()
    shown = []  # after the window's own handler has filled the candidate table
    w.search.runner.sigFinished.connect(
        lambda outcome: shown.append((time.perf_counter(), time.process_time())))
    def edit(change):
        QTimer.singleShot(200, settle.quit); settle.exec()
        t, cpu = time.perf_counter(), time.process_time()
        change(); w.run_search(); loop.exec()
        return (shown[-1][0] - t, time.perf_counter() - t,
                shown[-1][1] - cpu, time.process_time() - cpu)
    rows = w.drawer.rows
    r = next(i for i, row in enumerate(rows) if row.get("kind") == "R")
    c = next(i for i, row in enumerate(rows) if row.get("kind") == "C")
    times = {"location": edit(lambda: w.drawer.set_cell(r, "location", "tray 9")),
             "capacitor quantity": edit(lambda: w.drawer.set_cell(c, "quantity", "7")),
             "resistor quantity": edit(lambda: w.drawer.set_cell(r, "quantity", "9")),
             "target (1 kHz to 1.2 kHz)": edit(lambda: w.form.restore({"target": "1.2k"}))}
    for what, (table, plots, table_cpu, plots_cpu) in times.items():
        print(f"edit {what} {table:.4f}", flush=True)
        print(f"edit {what}, plots drawn {plots:.4f}", flush=True)
        print(f"edit {what} cpu {table_cpu:.4f}", flush=True)
        print(f"edit {what}, plots drawn cpu {plots_cpu:.4f}", flush=True)
w.close()
"""


def child_times(code: str, *args: str) -> dict[str, float]:
    """Seconds from process start to each line a child prints (``painted``, ``result``),
    and the ``edit`` figures it reports itself."""
    env = dict(os.environ, QT_QPA_PLATFORM=os.environ.get("QT_QPA_PLATFORM", "offscreen"))
    start = time.perf_counter()
    child = subprocess.Popen([sys.executable, "-c", code, *args], stdout=subprocess.PIPE,
                             stderr=subprocess.DEVNULL, text=True, env=env)
    assert child.stdout is not None
    out: dict[str, float] = {}
    for line in child.stdout:
        word = line.split()
        if word[0] == "edit":
            out[" ".join(word[1:-1])] = float(word[-1])
        else:
            out[word[0]] = time.perf_counter() - start
    child.wait()
    return out


WINDOW_PAIRS = 9
SETTLE_S = 0.3


def settled(code: str, *args: str) -> dict[str, float]:
    """``child_times`` after a pause, so no run starts while the last one is still exiting."""
    time.sleep(SETTLE_S)
    return child_times(code, *args)


def compiled_children(folder: Path) -> None:
    """Child processes keep their bytecode in ``folder`` (see the module's docstring)."""
    os.environ.pop("PYTHONDONTWRITEBYTECODE", None)
    os.environ["PYTHONPYCACHEPREFIX"] = str(folder / "bytecode")


def load_average() -> str:
    with open("/proc/loadavg", encoding="ascii") as f:
        return " ".join(f.read().split()[:3])


def median(runs: list[dict[str, float]], key: str) -> float:
    return statistics.median(r[key] for r in runs if key in r)


DEMO = Path(__file__).resolve().parents[2] / "resources" / "demo_drawer.csv"


def steered_rows(n: int = 3) -> list[tuple[str, str, str]]:
    """The searches with steering diodes on the demo drawer, against the plain 555 search
    on it: CPU and wall ratios and peak memory."""
    plain = ["search", "--stock", str(DEMO), "--target", "1kHz", "--json", "--circuit", "555",
             "--family", "NE555", "--supply", "9V"]
    wall0, cpu0, _ = process_time(plain, n)
    rows = []
    for label, argv in (
            ("555 `--duty 30`, demo drawer ÷ the same search without `--duty`",
             [*plain, "--duty", "30"]),
            ("Schmitt `--duty 30` (two steering diodes, 74HC14 at 5 V), demo drawer ÷ the "
             "plain 555 search", [*plain[:6], "--circuit", "schmitt", "--family", "74HC14",
                                 "--supply", "5V", "--duty", "30"])):
        wall, cpu, rss = process_time(argv, n)
        rows.append((label, "≤ 2× CPU, ≤ 200 MB",
                     f"{cpu / cpu0:.2f}× CPU, {wall / wall0:.2f}× wall ({wall:.2f} / "
                     f"{wall0:.2f} s), {rss / 1024:.0f} MB"))
    return rows


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        d = write_drawers(Path(tmp))
        base = ["--target", "1k", "--json"]
        compiled_children(Path(tmp))
        print(f"load average (1, 5, 15 min) before: {load_average()}")
        child_times(WINDOW, str(d["six"]))  # compiles everything the timed runs import
        np_s, np_cpu = numpy_time()
        six, six_cpu, six_rss = process_time(["search", "--stock", str(d["six"]), *base])
        rows = [("`tickbin search`, six parts ÷ `python -c \"import numpy\"`", "≤ 2.5×",
                 f"{six_cpu / np_cpu:.2f}× CPU, {six / np_s:.2f}× wall "
                 f"({six * 1e3:.0f} / {np_s * 1e3:.0f} ms)")]
        cases = [
            ("three-resistor search, graded store (1,014 lines) ÷ six parts", "≤ 2×",
             ["search", "--stock", str(d["graded"]), *base, "--max-resistors", "3"]),
            ("555 `--duty 60`, full E24/E12 kit ÷ six parts", "≤ 2×",
             ["search", "--stock", str(d["kit"]), "--circuit", "555", "--family", "NE555",
              "--supply", "9V", "--duty", "60", *base]),
            ("trim 900 Hz…1.1 kHz, full kit ÷ six parts", "≤ 2×",
             ["trim", "--stock", str(d["kit"]), "--band", "900..1100", "--json"]),
        ]
        for label, target, argv in cases:
            wall, cpu, _ = process_time(argv)
            rows.append((label, target, f"{cpu / six_cpu:.2f}× CPU, {wall / six:.2f}× wall "
                                        f"({wall * 1e3:.0f} ms)"))
        rows += steered_rows()
        for label, target, key, extra in (
                ("three-resistor search, E192 over five decades (961 values)", "a few s",
                 "e192", ["--max-resistors", "3"]),
                ("three-resistor search, 5,000 lines: wall, peak memory", "≤ 300 MB", "5000",
                 ["--max-resistors", "3"]),
                ("three-resistor search, 20,000 distinct values", "bounded, noted", "20000",
                 ["--max-resistors", "3"]),
                ("555 `--duty 60`, 20,000 distinct values", "bounded, noted", "20000",
                 ["--circuit", "555", "--family", "NE555", "--supply", "9V", "--duty", "60"])):
            argv = ["search", "--stock", str(d[key]), *base, *extra]
            wall, _, rss = process_time(argv, n=3)
            rows.append((label, target, f"{wall:.2f} s, {rss / 1024:.0f} MB"))
            if key == "20000":
                for note in search_notes(argv)[1:2]:
                    print(f"  note: {note}")

        pairs = [(settled(BARE), settled(WINDOW, str(d["six"]))) for _ in range(WINDOW_PAIRS)]
        edits = [child_times(WINDOW, str(d["graded"]), "edit") for _ in range(3)]
        for label, target, key in (("window first paint ÷ bare Qt window", "≤ 3×", "painted"),
                                   ("window first full result ÷ bare Qt window", "≤ 5×",
                                    "result")):
            ratios = [w[key] / b["painted"] for b, w in pairs]
            rows.append((label, target, f"{statistics.median(ratios):.2f}× median of "
                         f"{len(pairs)} pairs (range {min(ratios):.2f}–{max(ratios):.2f}×; "
                         f"{median([w for _, w in pairs], key) * 1e3:.0f} / "
                         f"{median([b for b, _ in pairs], 'painted') * 1e3:.0f} ms)"))
        for what in ("location", "capacitor quantity", "resistor quantity",
                     "target (1 kHz to 1.2 kHz)"):
            for stage in ("", ", plots drawn"):
                ms = [r[what + stage] * 1e3 for r in edits if what + stage in r]
                cpu = [r[what + stage + " cpu"] * 1e3 for r in edits]
                rows.append((f"window, 1,014-line drawer, three-resistor networks: edit a "
                             f"{what} → new result in the table{stage}", "≤ 100 ms",
                             f"{min(ms):.0f} ms (median {statistics.median(ms):.0f}); "
                             f"CPU {statistics.median(cpu):.0f} ms"))
        print(f"load average after: {load_average()}")
        print(f"\n(six-part search process: {six_rss / 1024:.0f} MB peak)\n")
        print("| what | target | measured |\n|---|---|---|")
        for label, target, measured in rows:
            print(f"| {label} | {target} | {measured} |")


if __name__ == "__main__":
    main()
