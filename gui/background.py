"""Short computations off the window's thread, the newest request winning.

A drift curve over supply with a steering diode, or a calibration fit over
several builds, can take longer than a frame (30 ms); they run here so the
window never stalls. Each request gets a generation number; a request
superseded before it starts is skipped and a late answer is dropped. A
``TickbinError`` comes back as its message; anything else is logged first
(``core.storage.locations.append_error_log``) and reported in one line.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from PySide6.QtCore import QObject, QRunnable, QThreadPool, Signal

from core.errors import TickbinError


class _Signals(QObject):
    done = Signal(int, object)
    failed = Signal(int, str)


class _Job(QRunnable):
    def __init__(self, owner: LatestJob, generation: int, work: Callable[[], Any]):
        super().__init__()
        self.owner, self.generation, self.work = owner, generation, work
        self.signals = owner._signals

    def run(self) -> None:
        if self.owner.generation != self.generation:
            return
        try:
            result = self.work()
        except TickbinError as e:
            self.signals.failed.emit(self.generation, str(e))
        except Exception as e:
            from core.storage.locations import append_error_log

            where = append_error_log(e)
            self.signals.failed.emit(self.generation, f"{type(e).__name__}: {e} ({where})")
        else:
            self.signals.done.emit(self.generation, result)


class LatestJob(QObject):
    """One worker thread; ``submit(work)`` supersedes any older request.

    Signals: ``sigDone(result)`` and ``sigFailed(message)``, for the newest
    request only, on the window's thread.
    """

    sigDone = Signal(object)  # noqa: N815
    sigFailed = Signal(str)  # noqa: N815

    def __init__(self, parent: QObject | None = None):
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self.generation = 0
        self._signals = _Signals(self)
        self._signals.done.connect(self._done)
        self._signals.failed.connect(self._failed)

    def submit(self, work: Callable[[], Any]) -> int:
        """Run ``work()`` (no Qt inside) in the worker thread; returns its generation."""
        self.generation += 1
        self.pool.clear()
        self.pool.start(_Job(self, self.generation, work))
        return self.generation

    def cancel(self) -> None:
        """Drop whatever is queued or running (its answer is ignored)."""
        self.generation += 1
        self.pool.clear()

    def wait(self, msecs: int = -1) -> bool:
        return self.pool.waitForDone(msecs)

    def _done(self, generation: int, result: object) -> None:
        if generation == self.generation:
            self.sigDone.emit(result)

    def _failed(self, generation: int, message: str) -> None:
        if generation == self.generation:
            self.sigFailed.emit(message)
