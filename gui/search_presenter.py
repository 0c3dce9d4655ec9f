"""The search as the window shows it: from the target form's request to the candidates and plots.

The presenter owns the candidates table, the lines under it and the plot area; the window
only lays them out. It speaks to the worker through four calls (``warm_up``, ``submit``,
``needs_index``, ``cancel``) and its result signals, and clears a stale result as soon as the
request can no longer be searched.
"""

from __future__ import annotations

import html
from collections.abc import Iterator
from typing import Any

from PySide6.QtCore import (
    QElapsedTimer,
    QItemSelectionModel,
    QObject,
    QSortFilterProxyModel,
    Qt,
    QTimer,
    Signal,
)
from PySide6.QtWidgets import (
    QAbstractItemView,
    QHeaderView,
    QLabel,
    QMenu,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from core.errors import TickbinError
from gui.candidates_model import SORT_ROLE, CandidatesModel, parts_list, used_rows
from gui.search_worker import Outcome, SearchRunner

DEBOUNCE_MS = 250
"""Quiet time after the last keystroke before a search starts."""


def _plotted(outcome: Outcome, candidate: Any) -> tuple[Any, ...]:
    """All the plots of ``candidate`` depend on: the model, the request, its values and its
    networks' electrical content (not its parts' places, counts or lines)."""
    return (outcome.oscillator, outcome.target, type(candidate),
            tuple(sorted(candidate.values.items())),
            tuple((role, node.electrical) for role, node in candidate.networks.items()))


class SearchPresenter(QObject):
    """Runs the window's searches and shows their results.

    Signals: ``sigReady()`` once the worker has imported the search (before the first
    search runs); ``sigDone()`` after a result (or failure) is shown, plots included.

    ``window`` gives the target form (``form``), the drawer (``drawer``, ``drawer_model``,
    ``drawer_panel``), the status bar (``say``, ``progress``, ``timing``) and ``closed``.
    """

    sigReady = Signal()  # noqa: N815
    sigDone = Signal()  # noqa: N815

    def __init__(self, window: Any):
        super().__init__(window)
        self.window = window
        self.form = window.form
        self.outcome: Outcome | None = None
        """The result shown (its target and oscillator), or None."""
        self.plots: Any = None
        """The plot panel (created after the window is first shown)."""
        self.ready = False  # the worker imports the search and plots after the first paint
        self._pending = False
        self.slowest_ms = 0.0
        """Longest time a search result took to show (window thread), in ms."""
        self.last_search_ms: float | None = None
        self._drawing = 0
        """Generation of the plot drawing in progress (a newer selection supersedes it)."""
        self._announce = False
        """Emit sigDone once the plots of the new result are drawn."""
        self._plotted: tuple[Any, ...] | None = None
        """What the plots show (``_plotted``), None while they show nothing or are drawing."""

        self.candidates = CandidatesModel(self)
        self.order = QSortFilterProxyModel(self)
        """The candidates as the view shows them: ranked, or sorted by a clicked header."""
        self.order.setSourceModel(self.candidates)
        self.order.setSortRole(SORT_ROLE)
        self.view = self._candidate_view()
        self.details = QLabel()
        self.details.setWordWrap(True)
        self.details.setAccessibleName("parts of the selected candidate")
        self.details.setTextFormat(Qt.TextFormat.RichText)
        self.details.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse
                                             | Qt.TextInteractionFlag.LinksAccessibleByMouse)
        self.details.linkActivated.connect(self._show_used_rows)
        self.notes = QLabel()
        self.notes.setObjectName("hint")
        self.notes.setWordWrap(True)
        self.notes.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        self.spread_note = QLabel()
        self.spread_note.setObjectName("advice")
        self.spread_note.setWordWrap(True)
        self.spread_note.setTextFormat(Qt.TextFormat.RichText)
        self.spread_note.setAccessibleName("advice on the spread")
        self.spread_note.hide()
        self.plot_area = QWidget()
        # The least that keeps the plots legible and, beside a three-part trim's four
        # parts and notes, the window within 1024 × 700.
        self.plot_area.setMinimumHeight(176)
        plot_layout = QVBoxLayout(self.plot_area)
        plot_layout.setContentsMargins(0, 0, 0, 0)
        plot_layout.addWidget(self.spread_note)

        self.runner = SearchRunner(self)
        self.debounce = QTimer(self)
        self.debounce.setSingleShot(True)
        self.debounce.setInterval(DEBOUNCE_MS)
        self.debounce.timeout.connect(self.run)
        self.form.sigChanged.connect(self.schedule)
        self.runner.sigFinished.connect(self._finished)
        self.runner.sigFailed.connect(self._failed)
        self.runner.sigProgress.connect(self._progress)
        self.view.selectionModel().currentRowChanged.connect(self._candidate_chosen)

    # ------------------------------------------------------------ the candidates table
    def _candidate_view(self) -> QTableView:
        view = QTableView()
        view.setModel(self.order)
        view.setAccessibleName("candidates")
        view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        view.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        view.setAlternatingRowColors(True)
        view.setWordWrap(False)
        view.setTabKeyNavigation(False)
        view.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        view.customContextMenuRequested.connect(self.candidate_menu)
        view.verticalHeader().setDefaultSectionSize(view.fontMetrics().height() + 8)
        header = view.horizontalHeader()
        header.setStretchLastSection(True)
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setSortIndicator(-1, Qt.SortOrder.AscendingOrder)  # ranked until a click
        view.setSortingEnabled(True)
        self._fitted_for: list[str] = []
        self.candidates.modelReset.connect(lambda: self._fit_columns(view))
        # Room for the header, three whole candidates and the scroll bar however small the
        # window (a three-part circuit's parts take a line more below the table).
        view.setMinimumHeight(view.horizontalHeader().sizeHint().height()
                              + 3 * view.verticalHeader().defaultSectionSize()
                              + view.horizontalScrollBar().sizeHint().height() + 4)
        return view

    def _fit_columns(self, view: QTableView) -> None:
        """Size the columns of each new kind of result (search, band, 555) to their headings
        and first rows, then leave them to the person; a new kind also goes back to ranked."""
        headings = self.candidates.headings()
        if headings == self._fitted_for or not self.candidates.rowCount():
            return
        self._fitted_for = headings
        view.horizontalHeader().setSortIndicator(-1, Qt.SortOrder.AscendingOrder)
        self.order.sort(-1)
        view.resizeColumnsToContents()
        last = len(headings) - 1  # the places: long, and whole in its tooltip
        view.setColumnWidth(last, min(view.columnWidth(last),
                                      view.fontMetrics().horizontalAdvance("M") * 18))

    def candidate_menu(self, where: Any) -> None:
        """Right-click on a candidate: compare it with the selected one."""
        clicked = self.order.mapToSource(self.view.indexAt(where))
        chosen = self.order.mapToSource(self.view.selectionModel().currentIndex())
        if not clicked.isValid() or not chosen.isValid() or clicked.row() == chosen.row():
            return
        menu = QMenu(self.window)
        menu.addAction(f"Compare with candidate {chosen.row() + 1} (selected)",
                       lambda: self.compare(chosen.row(), clicked.row()))
        menu.popup(self.view.viewport().mapToGlobal(where))

    def compare(self, first: int, second: int) -> Any:
        """Candidates of rank ``first`` and ``second`` (0: the best) side by side."""
        from gui.compare_dialog import compare

        return compare(self.window, self.candidates, (first, second))

    def select(self, row: int) -> None:
        """Select the candidate of rank ``row`` (0: the best), wherever the sort shows it."""
        index = self.order.mapFromSource(self.candidates.index(row, 0))
        self.view.selectionModel().setCurrentIndex(
            index, QItemSelectionModel.SelectionFlag.ClearAndSelect
            | QItemSelectionModel.SelectionFlag.Rows)
        self.view.scrollTo(index)

    def selected(self) -> Any:
        """The chosen core Design (search or trim candidate), or None."""
        index = self.order.mapToSource(self.view.selectionModel().currentIndex())
        return self.candidates.candidate(index.row()) if index.isValid() else None

    def oscillator(self) -> Any:
        """The oscillator of the selected candidate as built (its counter stage, if any),
        else of the result shown; None without a result."""
        from gui.plot_data import stage_of

        if self.outcome is None:
            return None
        chosen = self.selected()
        return self.outcome.oscillator if chosen is None else stage_of(self.outcome, chosen)

    # ------------------------------------------------------------ starting searches
    def warm_up(self, after_first_paint: Any) -> None:
        """Search now if the worker is ready; else import the search after the first paint
        (``after_first_paint(work)`` queues work), then search and make the plots."""
        if self.ready:
            self.run()
            return
        self._pending = True
        self.window.say("Getting ready…")
        self.runner.sigReady.connect(self._became_ready)
        after_first_paint(self.runner.warm_up)

    def _became_ready(self) -> None:
        self.ready = True
        self.sigReady.emit()
        if self._pending:
            self.run()
        QTimer.singleShot(1, self, self._make_plots)  # after this much has been painted

    def schedule(self) -> None:
        """Search after the person stops typing for a moment."""
        self.debounce.start()

    def run(self) -> None:
        """Search the form's request over the drawer's parts now (the newest request wins)."""
        self.debounce.stop()
        if not self.ready:
            self._pending = True
            return
        target = self.form.target_value()
        w = self.window
        if target is None:
            self.runner.cancel()
            w.progress.hide()
            self._show_none("Fix the marked target fields to search.")
            w.say("Fix the marked target fields to search.")
            self.sigDone.emit()
            return
        parts = tuple(w.drawer.parts())
        slow = self.runner.needs_index(target, parts)
        self.runner.submit(target, parts)
        w.progress.setValue(0)
        w.progress.setVisible(True)
        w.say("Building the parts index…" if slow else "Searching…")

    def stop(self) -> None:
        """The window closes: cancel the search and wait for the worker (at most 3 s)."""
        self.runner.cancel()
        self.runner.wait(3000)

    # ------------------------------------------------------------ receiving results
    def _progress(self, generation: int, text: str, fraction: float) -> None:
        self.window.progress.setValue(round(100 * fraction))
        self.window.say(text)

    def _show_none(self, why: str) -> None:
        """No candidates: empty table and plots, and ``why`` under the table (if given)."""
        self._announce = False
        self._drawing += 1
        if why:
            self.outcome = None
            self.candidates.set_result([], trim=False)
            self.notes.setText(why)
            self.notes.show()
        self.details.clear()
        self.spread_note.hide()
        self.window.drawer_model.set_used({})
        self._plotted = None
        if self.plots is not None:
            self.plots.clear("No candidate to show")

    def _failed(self, generation: int, message: str) -> None:
        self.window.progress.hide()
        self.form.show_error(message)
        self._show_none(message)
        self.window.say("No search result: see the message under the target form.")
        self.sigDone.emit()

    def _finished(self, outcome: Outcome) -> None:
        clock = QElapsedTimer()
        clock.start()
        w = self.window
        w.progress.hide()
        self.form.show_error("")
        previous = self.selected()
        self.outcome = outcome
        result = outcome.result
        target = outcome.target
        self.candidates.set_result(result.candidates, trim=target.trim)
        notes = list(result.notes)  # core's notes already say what to buy, if anything
        self.notes.setText("\n".join(notes))
        self.notes.setVisible(bool(notes))
        self.last_search_ms = outcome.seconds * 1000
        count = len(result.candidates)
        w.timing.setText(f"search {self.last_search_ms:.0f} ms")
        text = f"{count} candidate{'s' if count != 1 else ''} for {target.describe()}"
        if count and not target.trim:
            hits = sum(c.hit for c in result.candidates)
            text += f" ({hits} within ±{target.accept_pct:g} %)" if hits else (
                f" (none within ±{target.accept_pct:g} %: see the notes)")
        w.say(text if count else "No candidate from this drawer; see the notes.")
        row = 0
        if previous is not None and previous in result.candidates:
            row = result.candidates.index(previous)
        self._announce = bool(count)  # sigDone once the plots are drawn
        if count:
            self.select(row)
        else:
            self._show_none("")
        self._note_time(clock)
        if not self._announce:
            self.sigDone.emit()

    def _note_time(self, clock: QElapsedTimer) -> None:
        self.slowest_ms = max(self.slowest_ms, clock.nsecsElapsed() / 1e6)

    # ------------------------------------------------------------ the chosen candidate
    def _candidate_chosen(self, *args: object) -> None:
        """Show the chosen candidate: its parts in words and in the drawer, its plots."""
        candidate = self.selected()
        self._drawing += 1
        w = self.window
        if candidate is None or self.outcome is None:
            self.details.clear()
            w.drawer_model.set_used({})
            return
        lines = [html.escape(line) for line in parts_list(candidate)]
        self.details.setText("<br>".join(lines) + ' &nbsp; <a href="used">only these in the '
                             "drawer</a>")
        used = used_rows(candidate)
        w.drawer_model.set_used(used)
        if self.view.hasFocus():  # the person picked it: bring its bins into view
            w.drawer_panel.scroll_to_row(min(used))
        if self.plots is None:
            return  # drawn once the plots exist (see _plots_built)
        shows = _plotted(self.outcome, candidate)
        if shows == self._plotted:  # e.g. a location or quantity edit: the same plots
            self._plots_drawn()
            return
        self._plotted = None
        self._in_steps(self._drawing_steps(self.outcome, candidate),
                       lambda: self._plots_drawn(shows), self._drawing)

    def _drawing_steps(self, outcome: Outcome, candidate: Any) -> Iterator[None]:
        """Plots one at a time, then the advice on the spread; a model error (a candidate
        that cannot be drawn) clears the plots instead."""
        from gui.plot_data import chip_spread_advice, draw_steps

        try:
            yield from draw_steps(self.plots, outcome, candidate)
            yield
            advice = chip_spread_advice(outcome, candidate)
        except TickbinError as e:
            self.plots.clear("This candidate cannot be drawn")
            advice = f"⚠ {e}"
        self.spread_note.setText(advice)
        self.spread_note.setVisible(bool(advice))

    def _plots_drawn(self, shows: tuple[Any, ...] | None = None) -> None:
        """The plots are drawn (``shows``: what they show, when it is new)."""
        if shows is not None:
            self._plotted = shows
        if self._announce:
            self._announce = False
            self.sigDone.emit()

    def _show_used_rows(self, link: str) -> None:
        panel = self.window.drawer_panel
        panel.kind_filter.setCurrentIndex(panel.kind_filter.findData("used"))
        panel.text_filter.clear()

    # ------------------------------------------------------------ plots, in steps
    def _make_plots(self) -> None:
        from gui.plots import PlotPanel

        panel = PlotPanel(remember=self.window.remember)
        self._in_steps(panel.build_steps(), lambda: self._plots_built(panel))

    def _plots_built(self, panel: Any) -> None:
        """Show the plots; a result already here is drawn into them first, so each plot is
        painted once, with its data (not empty, then again after every step)."""
        self.plots = panel
        candidate = self.selected()
        if candidate is not None and self.outcome is not None:
            self._drawing += 1
            for _ in self._drawing_steps(self.outcome, candidate):
                pass
            self._plotted = _plotted(self.outcome, candidate)
        self.plot_area.layout().addWidget(panel, 1)
        if candidate is not None:
            if self.plot_area.isVisible():
                panel.show()  # (a layout shows a new child only later, by a queued call)
                self.plot_area.layout().activate()
                panel.repaint()  # now, so the result counts as shown once it is painted
            self._plots_drawn()

    def _in_steps(self, steps: Any, done: Any, generation: int | None = None) -> None:
        """Run one step of ``steps`` now and the next after the window has painted.

        A timer of 1 ms (not 0) lets Qt's low-priority paint request go first, so
        every step shows before the next one starts. ``done()`` follows the last
        step unless a newer drawing (``self._drawing``) has started meanwhile.
        """
        if self.window.closed or (generation is not None and generation != self._drawing):
            return
        clock = QElapsedTimer()
        clock.start()
        try:
            next(steps)
        except StopIteration:
            done()
            return
        finally:
            self._note_time(clock)
        QTimer.singleShot(1, self, lambda: self._in_steps(steps, done, generation))
