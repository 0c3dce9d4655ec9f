"""How fast the drawer index builds and a search answers on a full kit (prints figures only).

Run: cd /work/main && python tests/bench/bench_search.py

The kit: every E24 resistor from 1 Ω to 10 MΩ (169 values), every E12
capacitor from 10 pF to 1000 µF (97 values) and a dozen pots; networks of up
to three resistors and two capacitors. The issue's targets: index build
≤ 1 s, one search ≤ 10 ms once the index exists, peak memory ≤ 300 MB, and
the whole ``tickbin search`` process on the kit ≤ 1.5 × the same command on a
six-part drawer. Nothing is asserted: the figures are for the README.
"""

from __future__ import annotations

import csv
import resource
import statistics
import subprocess
import sys
import tempfile
import time
import tracemalloc
from collections.abc import Callable
from pathlib import Path

from core.design.search import search
from core.design.trim import trim
from core.model.timing import make_oscillator
from core.parts.drawer_file import read_drawer
from core.parts.eseries import kit
from core.parts.index_build import drawer_index

POTS = (100, 500, 1e3, 2e3, 5e3, 10e3, 20e3, 50e3, 100e3, 200e3, 500e3, 1e6)
SIX_PARTS = [("R", "10k", 5), ("R", "22k", 5), ("R", "4k7", 5), ("C", "100n", 5),
             ("C", "47n", 5), ("C", "1u", 5)]


def _dielectric(farads: float) -> str:
    return "C0G" if farads < 1e-9 else "X7R" if farads <= 1e-6 else "electrolytic"


def write_kit(path: Path) -> None:
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["kind", "value", "tolerance", "quantity", "location", "dielectric"])
        for i, v in enumerate(kit("E24", 1.0, 10e6)):
            w.writerow(["R", f"{v:g}", "5%", 10, f"R-{i // 24 + 1:02d}", ""])
        for i, v in enumerate(kit("E12", 10e-12, 1000e-6)):
            w.writerow(["C", f"{v:g}F", "10%", 10, f"C-{i // 12 + 1:02d}", _dielectric(v)])
        for v in POTS:
            w.writerow(["P", f"{v:g}", "20%", 2, "P-01", ""])


def write_six(path: Path) -> None:
    with path.open("w", newline="", encoding="utf-8") as f:
        w = csv.writer(f)
        w.writerow(["kind", "value", "quantity"])
        w.writerows(SIX_PARTS)


def best_of(fn: Callable[[], object], n: int) -> tuple[float, float]:
    """(best, median) wall time [s] of ``n`` runs."""
    times = []
    for _ in range(n):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times), statistics.median(times)


def process_time(argv: list[str], n: int = 7) -> tuple[float, float, int]:
    """Best wall time [s] and CPU time [s] of the whole ``tickbin`` process, peak RSS [kB].

    The best of ``n`` runs, since other work on the machine only ever adds time;
    CPU time (user + system) is steadier than wall time on a busy machine. Peak
    RSS is read from /proc/self/status (VmHWM): getrusage's ru_maxrss would carry
    over this benchmark's own size through fork and exec.
    """
    walls, cpus = [], []
    code = ("import sys\nfrom core.cli import main\nrc = main(sys.argv[1:])\n"
            "hwm = [ln for ln in open('/proc/self/status') if ln.startswith('VmHWM')]\n"
            "sys.stderr.write(hwm[0].split()[1] + '\\n')\nsys.exit(rc)")
    for _ in range(n):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        t = time.perf_counter()
        p = subprocess.run(["tickbin", *argv], capture_output=True, text=True, check=True)
        walls.append(time.perf_counter() - t)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpus.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
        assert p.stdout.startswith("{")
    p = subprocess.run([sys.executable, "-c", code, *argv], capture_output=True, text=True,
                       check=True)
    peak = int(p.stderr.strip().splitlines()[-1])
    return min(walls), min(cpus), peak


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        kit_csv, six_csv = Path(tmp) / "kit.csv", Path(tmp) / "six.csv"
        write_kit(kit_csv)
        write_six(six_csv)
        parts = read_drawer(kit_csv).parts()
        counts = {k: sum(p.kind == k for p in parts) for k in "RCP"}
        print(f"kit: {counts['R']} resistor values, {counts['C']} capacitor values, "
              f"{counts['P']} pots")

        for max_r in (2, 3):
            best, median = best_of(lambda max_r=max_r: drawer_index(parts, max_r, 2), 5)
            tracemalloc.start()
            index = drawer_index(parts, max_r, 2)
            peak = tracemalloc.get_traced_memory()[1]
            tracemalloc.stop()
            r, c = index.resistors, index.capacitors
            print(f"index, up to {max_r} resistors and 2 capacitors: build {best * 1e3:.0f} ms "
                  f"(median {median * 1e3:.0f} ms); {len(r):,} resistor and {len(c):,} "
                  f"capacitor networks, {(r.nbytes + c.nbytes) / 1e6:.1f} MB of arrays, "
                  f"build peak {peak / 1e6:.0f} MB (tracemalloc)")

        index = drawer_index(parts, 3, 2)
        hc14 = make_oscillator("schmitt", "74HC14", 5.0)
        ne555 = make_oscillator("555", "NE555", 9.0)
        cases = [
            ("schmitt 1 kHz", lambda: search(parts, hc14, 1e3, max_resistors=3, index=index)),
            ("schmitt 63.3 Hz", lambda: search(parts, hc14, 63.3, max_resistors=3,
                                               index=index)),
            ("schmitt 38 kHz", lambda: search(parts, hc14, 38e3, max_resistors=3,
                                              index=index)),
            ("schmitt 1 kHz, 2-resistor networks",
             lambda: search(parts, hc14, 1e3, max_resistors=2, index=index)),
            ("555 1 kHz natural duty", lambda: search(parts, ne555, 1e3, max_resistors=3,
                                                      index=index)),
            ("555 1 kHz duty 70 %", lambda: search(parts, ne555, 1e3, duty_pct=70,
                                                   max_resistors=3, index=index)),
            ("555 1 kHz duty 30 %", lambda: search(parts, ne555, 1e3, duty_pct=30,
                                                   max_resistors=3, index=index)),
            ("trim 900 Hz … 1.1 kHz", lambda: trim(parts, hc14, (900.0, 1100.0),
                                                   max_resistors=3, index=index)),
        ]
        for name, fn in cases:
            fn()
            best, median = best_of(fn, 7)
            print(f"{name}: best {best * 1e3:.1f} ms, median {median * 1e3:.1f} ms")

        for extra in ([], ["--max-resistors", "3"]):
            args = ["--target", "1k", "--json", *extra]
            t_kit, cpu_kit, rss_kit = process_time(["search", "--stock", str(kit_csv), *args])
            t_six, cpu_six, rss_six = process_time(["search", "--stock", str(six_csv), *args])
            label = " ".join(extra) or "default networks"
            print(f"tickbin search process ({label}): kit {t_kit * 1e3:.0f} ms wall, "
                  f"{cpu_kit * 1e3:.0f} ms CPU, {rss_kit / 1024:.0f} MB peak RSS; six parts "
                  f"{t_six * 1e3:.0f} ms wall, {cpu_six * 1e3:.0f} ms CPU, "
                  f"{rss_six / 1024:.0f} MB; ratio {t_kit / t_six:.2f} wall, "
                  f"{cpu_kit / cpu_six:.2f} CPU")


if __name__ == "__main__":
    main()
