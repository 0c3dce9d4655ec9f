"""Searches off the window's thread: one at a time, the newest wins.

Every request gets a generation number. A request that is superseded before
it starts is skipped; one that is running stops at its next progress step
(index building reports progress, see ``core.parts.index_build.build_index``); a
result that arrives late is ignored by the window. Errors come back as a
message (``TickbinError``: the person's input; anything else: logged, then
reported), never lost in the thread.
"""

from __future__ import annotations

import threading
import time
from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal

from core.errors import TickbinError
from core.parts.part import Part
from gui.target_form import Target

TOP = 20
"""Candidates asked for (the table scrolls)."""

INDEX_CACHE = 8
"""Network indexes kept (per kind, network size and electrical content): undo is instant."""


class SupersededError(Exception):
    """A newer request arrived; this one stops quietly."""


@dataclass(frozen=True)
class Outcome:
    """A finished request: the oscillator model used, core's result, how long it took."""

    generation: int
    target: Target
    parts: tuple[Part, ...]
    oscillator: Any
    result: Any
    seconds: float


class _Indexes:
    """Resistor and capacitor indexes, each cached on its kind's electrical content only
    (``core.parts.network_index.electrical_key``): editing a location or note, or the other
    kind, rebuilds nothing. Shared by requests (guarded by a lock)."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._cache: OrderedDict[tuple[Any, ...], Any] = OrderedDict()

    @staticmethod
    def _keys(parts: tuple[Part, ...], max_resistors: int,
              max_capacitors: int) -> dict[str, tuple[Any, ...]]:
        from core.parts.network_index import electrical_key

        return {kind: (kind, size, electrical_key(parts, kind))
                for kind, size in (("R", max_resistors), ("C", max_capacitors))}

    def get(self, parts: tuple[Part, ...], max_resistors: int, max_capacitors: int,
            step: Callable[[str, float], None]) -> Any:
        """The drawer index, building a kind with progress through ``step`` when not cached."""
        from core.parts.index_build import build_index, drawer_pots
        from core.parts.network_index import DrawerIndex

        built = {}
        keys = self._keys(parts, max_resistors, max_capacitors)
        with self._lock:
            missing = [kind for kind, key in keys.items() if key not in self._cache]
        # Progress over what is built: three-resistor layers dominate the work.
        share = {"R": 0.9 if max_resistors >= 3 else 0.5} if len(missing) == 2 else {}
        start = 0.0
        for kind, key in keys.items():
            with self._lock:
                index = self._cache.get(key)
                if index is not None:
                    self._cache.move_to_end(key)
            if index is None:
                width = share.get(kind, 1.0 - start)
                steps = build_index(parts, kind, key[1])  # type: ignore[arg-type]
                while True:
                    try:
                        fraction = next(steps)
                    except StopIteration as done:
                        index = done.value
                        break
                    step("Building the parts index…", start + width * fraction)
                start += width
                with self._lock:
                    self._cache[key] = index
                    while len(self._cache) > INDEX_CACHE:
                        self._cache.popitem(last=False)
            built[kind] = index.over(parts)
        return DrawerIndex(built["R"], built["C"], drawer_pots(parts))

    def cached(self, parts: tuple[Part, ...], max_resistors: int, max_capacitors: int) -> bool:
        keys = self._keys(parts, max_resistors, max_capacitors).values()
        with self._lock:
            return all(key in self._cache for key in keys)


def compute(target: Target, parts: tuple[Part, ...], indexes: _Indexes,
            step: Callable[[str, float], None]) -> tuple[Any, Any]:
    """Oscillator model and core's search or trim result for ``target`` over ``parts``."""
    osc = target.oscillator()
    parts = target.usable(parts)
    index = indexes.get(parts, target.max_resistors, target.max_capacitors, step)
    step("Searching…", 1.0)
    return osc, target.run(parts, osc, index=index, top=TOP)


class _Signals(QObject):
    progress = Signal(int, str, float)
    finished = Signal(object)
    failed = Signal(int, str)
    ready = Signal()


class _WarmUp(QRunnable):
    """Import the search and plot modules off the window's thread, once the window has
    painted (imports hold the interpreter; the plot widgets are made on the window's
    thread). The sheet's renderer waits for its first use: the first result comes first."""

    def __init__(self, signals: _Signals):
        super().__init__()
        self.signals = signals

    def run(self) -> None:
        from core.design import search, trim  # noqa: F401 - imported for later
        from core.model import spread, timing  # noqa: F401
        from gui import plots  # noqa: F401 - pyqtgraph's import is the slow part

        self.signals.ready.emit()


class _Job(QRunnable):
    def __init__(self, runner: SearchRunner, generation: int, target: Target,
                 parts: tuple[Part, ...]):
        super().__init__()
        self.runner, self.generation, self.target, self.parts = runner, generation, target, parts
        self.signals = runner._signals

    def _step(self, text: str, fraction: float) -> None:
        if self.runner.generation != self.generation:
            raise SupersededError
        self.signals.progress.emit(self.generation, text, fraction)

    def run(self) -> None:
        if self.runner.generation != self.generation:
            return
        started = time.perf_counter()
        try:
            osc, result = compute(self.target, self.parts, self.runner._indexes, self._step)
        except SupersededError:
            return
        except TickbinError as e:
            self.signals.failed.emit(self.generation, str(e))
            return
        except Exception as e:
            from core.storage.locations import append_error_log

            where = append_error_log(e)
            self.signals.failed.emit(self.generation, f"The search failed: "
                                     f"{type(e).__name__}: {e} ({where})")
            return
        self.signals.finished.emit(Outcome(self.generation, self.target, self.parts, osc,
                                           result, time.perf_counter() - started))


class SearchRunner(QObject):
    """Runs searches in a one-thread pool; the newest request supersedes older ones.

    Signals: ``sigProgress(generation, text, fraction)``, ``sigFinished(Outcome)``,
    ``sigFailed(generation, message)``, ``sigReady()`` after ``warm_up``. Only the
    current generation's signals are passed on.
    """

    sigProgress = Signal(int, str, float)  # noqa: N815
    sigFinished = Signal(object)  # noqa: N815
    sigFailed = Signal(int, str)  # noqa: N815
    sigReady = Signal()  # noqa: N815

    def __init__(self, parent: QObject | None = None):
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self.generation = 0
        self._indexes = _Indexes()
        self._signals = _Signals(self)
        self._signals.progress.connect(self._on_progress)
        self._signals.finished.connect(self._on_finished)
        self._signals.failed.connect(self._on_failed)
        self._signals.ready.connect(self.sigReady)

    def warm_up(self) -> None:
        """Prepare the slow first-use work in the pool; ``sigReady`` when done."""
        self.pool.start(_WarmUp(self._signals))

    def submit(self, target: Target, parts: tuple[Part, ...]) -> int:
        """Start a search; any older request still queued or running is superseded."""
        self.generation += 1
        self.pool.clear()
        self.pool.start(_Job(self, self.generation, target, parts))
        return self.generation

    def cancel(self) -> None:
        """Supersede whatever is running (the window shows nothing from it)."""
        self.generation += 1
        self.pool.clear()

    def needs_index(self, target: Target, parts: tuple[Part, ...]) -> bool:
        """Whether this request must build a network index first (slow on big drawers)."""
        return not self._indexes.cached(target.usable(parts), target.max_resistors,
                                        target.max_capacitors)

    def wait(self, msecs: int = -1) -> bool:
        return self.pool.waitForDone(msecs)

    def _on_progress(self, generation: int, text: str, fraction: float) -> None:
        if generation == self.generation:
            self.sigProgress.emit(generation, text, fraction)

    def _on_finished(self, outcome: Outcome) -> None:
        if outcome.generation == self.generation:
            self.sigFinished.emit(outcome)

    def _on_failed(self, generation: int, message: str) -> None:
        if generation == self.generation:
            self.sigFailed.emit(generation, message)
