"""The main window: the drawer on the left; target, candidates and plots on the right.

The window wires views to core objects and to the search worker; it computes
nothing itself. Dialogs go through ``ask``/``ask_path`` so tests can answer
them.
"""

from __future__ import annotations

import contextlib
import html
import json
import time
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from PySide6.QtCore import (
    QByteArray,
    QElapsedTimer,
    QEvent,
    QItemSelectionModel,
    QObject,
    QSortFilterProxyModel,
    Qt,
    QTimer,
    Signal,
)
from PySide6.QtGui import QAction, QCloseEvent, QKeySequence
from PySide6.QtWidgets import (
    QAbstractItemView,
    QFileDialog,
    QFrame,
    QHeaderView,
    QLabel,
    QMainWindow,
    QMenu,
    QMessageBox,
    QProgressBar,
    QSplitter,
    QTableView,
    QVBoxLayout,
    QWidget,
)

from core.errors import DrawerFileError, TickbinError
from core.parts.drawer import (
    Drawer,
    DrawerChangedError,
    Row,
    drawer_csv_text,
    read_drawer,
    write_drawer,
)
from core.storage.atomic import write_text_atomically
from core.storage.locations import demo_drawer_path
from gui import settings as keys
from gui.autosave import INTERVAL_MS, Autosave
from gui.candidates_model import SORT_ROLE, CandidatesModel, parts_list, used_rows
from gui.drawer_model import DrawerTableModel
from gui.drawer_panel import DrawerPanel
from gui.search_worker import Outcome, SearchRunner
from gui.target_form import Target, TargetForm

DEBOUNCE_MS = 250
"""Quiet time after the last keystroke before a search starts."""

CSV_FILTER = "Drawer files (*.csv *.txt);;All files (*)"

FIRST_PAINT_WAIT_MS = 300
"""Longest wait for the window's first paint before the warm-up starts anyway."""


class _FirstPaint(QObject):
    """Knows when the window has first painted and runs work queued for after that.

    The worker's imports hold the interpreter, and a zero-delay timer fires
    before the first paint, so they would delay the first picture.
    """

    def __init__(self, window: QWidget):
        super().__init__(window)
        self._painted = False
        self._waiting: list[Any] = []
        window.installEventFilter(self)

    def eventFilter(self, watched: QObject, event: QEvent) -> bool:  # noqa: N802 - Qt's name
        if event.type() == QEvent.Type.Paint and not self._painted:
            self._painted = True
            watched.removeEventFilter(self)
            QTimer.singleShot(0, self, self._run)  # after the rest of this paint
        return False

    def then(self, work: Any) -> None:
        """Run ``work`` after the first paint (at once if it is done; at the latest after
        ``FIRST_PAINT_WAIT_MS``)."""
        self._waiting.append(work)
        QTimer.singleShot(0 if self._painted else FIRST_PAINT_WAIT_MS, self, self._run)

    def _run(self) -> None:
        waiting, self._waiting = self._waiting, []
        for work in waiting:
            work()


def _unique(keys: list[QKeySequence]) -> list[QKeySequence]:
    """Key sequences without repeats, first one first."""
    seen: list[QKeySequence] = []
    for key in keys:
        if not key.isEmpty() and key not in seen:
            seen.append(key)
    return seen


def _section(title: str, body: QWidget, name: str) -> QFrame:
    """A titled panel; the title doubles as the accessible name of its area."""
    frame = QFrame()
    frame.setObjectName("panel")
    frame.setAccessibleName(name)
    heading = QLabel(title)
    heading.setObjectName("heading")
    layout = QVBoxLayout(frame)
    layout.setContentsMargins(10, 8, 10, 10)
    layout.setSpacing(6)
    layout.addWidget(heading)
    layout.addWidget(body, 1)
    return frame


class MainWindow(QMainWindow):
    """One window over one drawer.

    Signals: ``sigSearchDone()`` after a search result (or failure) is shown.

    Hooks for build actions (the build sheet, printing, netlist, taking parts):
    ``selected_candidate()``, ``current_oscillator()``, ``current_target()``,
    ``drawer``, ``build_menu`` and ``add_build_action(action)``.
    """

    sigSearchDone = Signal()  # noqa: N815

    def __init__(self, stock: str | None = None, *, remember: bool = True):
        super().__init__()
        self.remember = remember
        self.autosave = Autosave()
        self._outcome: Outcome | None = None
        self._plots: Any = None
        self._slowest_ms = 0.0
        self.last_search_ms: float | None = None
        self._closed = False
        self._help: Any = None

        drawer, note = self._initial_drawer(stock)
        self.untitled = "demo drawer (a copy)"
        """Title shown while the drawer has no file."""
        self._ready = False  # the worker imports the search and plots after the first paint
        self._pending = False
        self.drawer_model = DrawerTableModel(drawer, self, checking=False)
        self.drawer_panel = DrawerPanel(self.drawer_model)
        self.form = TargetForm()
        self.candidates = CandidatesModel(self)
        self.candidate_order = QSortFilterProxyModel(self)
        """The candidates as the view shows them: ranked, or sorted by a clicked header."""
        self.candidate_order.setSourceModel(self.candidates)
        self.candidate_order.setSortRole(SORT_ROLE)
        self.candidate_view = self._candidate_view()
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
        self.spread_note.linkActivated.connect(self._advice_link)
        self.spread_note.hide()
        self.plot_area = QWidget()
        self.plot_area.setMinimumHeight(190)
        plot_layout = QVBoxLayout(self.plot_area)
        plot_layout.setContentsMargins(0, 0, 0, 0)
        plot_layout.addWidget(self.spread_note)
        self._drawing = 0
        """Generation of the plot drawing in progress (a newer selection supersedes it)."""
        self._announce = False
        """Emit sigSearchDone once the plots of the new result are drawn."""
        self.runner = SearchRunner(self)
        self._first_paint = _FirstPaint(self)
        self._build_layout()
        self._build_actions()
        self._build_status_bar()

        self.debounce = QTimer(self)
        self.debounce.setSingleShot(True)
        self.debounce.setInterval(DEBOUNCE_MS)
        self.debounce.timeout.connect(self.run_search)
        self.autosave_timer = QTimer(self)
        self.autosave_timer.setInterval(INTERVAL_MS)
        self.autosave_timer.timeout.connect(self.autosave_now)

        self.form.sigChanged.connect(self.schedule_search)
        self.form.sigNewCalibration.connect(self.new_calibration)
        self.runner.sigFinished.connect(self._search_finished)
        self.runner.sigFailed.connect(self._search_failed)
        self.runner.sigProgress.connect(self._search_progress)
        self.candidate_view.selectionModel().currentRowChanged.connect(self._candidate_chosen)
        self.drawer_panel.sigMessage.connect(self.say)
        self._attach(drawer)
        self.resize(1280, 800)
        if self.remember:
            self._restore_settings()
        if note:
            self.say(note)

    # ------------------------------------------------------------ building
    def _candidate_view(self) -> QTableView:
        view = QTableView()
        view.setModel(self.candidate_order)
        view.setAccessibleName("candidates")
        view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        view.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        view.setAlternatingRowColors(True)
        view.setWordWrap(False)
        view.setTabKeyNavigation(False)
        view.setContextMenuPolicy(Qt.ContextMenuPolicy.CustomContextMenu)
        view.customContextMenuRequested.connect(self._candidate_menu)
        view.verticalHeader().setDefaultSectionSize(view.fontMetrics().height() + 8)
        header = view.horizontalHeader()
        header.setStretchLastSection(True)
        header.setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        header.setSortIndicator(-1, Qt.SortOrder.AscendingOrder)  # ranked until a click
        view.setSortingEnabled(True)
        self._fitted_for: list[str] = []
        self.candidates.modelReset.connect(lambda: self._fit_columns(view))
        # Room for the header and four candidates however small the window.
        view.setMinimumHeight(view.horizontalHeader().sizeHint().height()
                              + 4 * view.verticalHeader().defaultSectionSize() + 4)
        return view

    def _fit_columns(self, view: QTableView) -> None:
        """Size the columns of each new kind of result (search, band, 555) to their headings
        and first rows, then leave them to the person; a new kind also goes back to ranked."""
        headings = self.candidates.headings()
        if headings == self._fitted_for or not self.candidates.rowCount():
            return
        self._fitted_for = headings
        view.horizontalHeader().setSortIndicator(-1, Qt.SortOrder.AscendingOrder)
        self.candidate_order.sort(-1)
        view.resizeColumnsToContents()
        last = len(headings) - 1  # the places: long, and whole in its tooltip
        view.setColumnWidth(last, min(view.columnWidth(last),
                                      view.fontMetrics().horizontalAdvance("M") * 18))

    def _candidate_menu(self, where: Any) -> None:
        """Right-click on a candidate: compare it with the selected one."""
        clicked = self.candidate_order.mapToSource(self.candidate_view.indexAt(where))
        chosen = self.candidate_order.mapToSource(
            self.candidate_view.selectionModel().currentIndex())
        if not clicked.isValid() or not chosen.isValid() or clicked.row() == chosen.row():
            return
        menu = QMenu(self)
        menu.addAction(f"Compare with candidate {chosen.row() + 1} (selected)",
                       lambda: self.compare_candidates(chosen.row(), clicked.row()))
        menu.popup(self.candidate_view.viewport().mapToGlobal(where))

    def compare_candidates(self, first: int, second: int) -> Any:
        """Candidates of rank ``first`` and ``second`` (0: the best) side by side."""
        from gui.compare_dialog import compare

        return compare(self, self.candidates, (first, second))

    def _build_layout(self) -> None:
        candidates_box = QWidget()
        layout = QVBoxLayout(candidates_box)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.candidate_view, 1)
        layout.addWidget(self.details)
        layout.addWidget(self.notes)
        self.right_split = QSplitter(Qt.Orientation.Vertical)
        self.right_split.addWidget(_section("Target", self.form, "target form"))
        self.right_split.addWidget(_section("Candidates from your drawer", candidates_box,
                                            "candidates"))
        self.right_split.addWidget(_section("How the selected candidate behaves",
                                            self.plot_area, "plots"))
        self.right_split.setStretchFactor(0, 0)
        self.right_split.setStretchFactor(1, 2)
        self.right_split.setStretchFactor(2, 3)
        self.right_split.setChildrenCollapsible(False)
        self.main_split = QSplitter(Qt.Orientation.Horizontal)
        self.main_split.addWidget(_section("Your drawer", self.drawer_panel, "drawer"))
        self.main_split.addWidget(self.right_split)
        self.main_split.setStretchFactor(0, 2)
        self.main_split.setStretchFactor(1, 3)
        self.main_split.setChildrenCollapsible(False)
        self.main_split.setSizes([470, 810])
        self.right_split.setSizes([150, 300, 320])
        outer = QWidget()
        box = QVBoxLayout(outer)
        box.setContentsMargins(8, 8, 8, 4)
        box.addWidget(self.main_split)
        self.setCentralWidget(outer)

    def _action(self, text: str, slot: Any, shortcut: Any = None, tip: str = "") -> QAction:
        action = QAction(text, self)
        if shortcut is not None:
            action.setShortcut(shortcut)
        if tip:
            action.setStatusTip(tip)
            action.setToolTip(tip)
        action.triggered.connect(slot)
        return action

    def _build_actions(self) -> None:
        std = QKeySequence.StandardKey
        self.new_action = self._action("&New drawer", self.new_drawer, std.New,
                                       "Start an empty drawer")
        self.open_action = self._action("&Open drawer…", self.open_drawer, std.Open,
                                        "Open a drawer file (CSV)")
        self.demo_action = self._action("Open the &demo drawer", self.open_demo, None,
                                        "A makerspace parts cabinet to try things on")
        self.save_action = self._action("&Save", self.save, std.Save, "Save the drawer file")
        self.save_as_action = self._action("Save &as…", self.save_as, std.SaveAs,
                                           "Save the drawer under a new name")
        self.import_action = self._action("&Import CSV…", self.import_csv, None,
                                          "Add the rows of another drawer file to this one")
        self.export_action = self._action("&Export CSV…", self.export_csv, None,
                                          "Write a copy of this drawer; keep working on "
                                          "this file")
        self.quit_action = self._action("&Quit", self.close, std.Quit, "Close Tickbin")
        file_menu = self.menuBar().addMenu("&File")
        for action in (self.new_action, self.open_action, self.demo_action, None,
                       self.save_action, self.save_as_action, None, self.import_action,
                       self.export_action, None, self.quit_action):
            file_menu.addSeparator() if action is None else file_menu.addAction(action)

        self.undo_action = self._action("&Undo", self.undo, std.Undo)
        self.redo_action = self._action("&Redo", self.redo)
        # Ctrl+Shift+Z and Ctrl+Y both redo, whatever the platform's own default is.
        self.redo_action.setShortcuts(_unique([*QKeySequence.keyBindings(std.Redo),
                                               QKeySequence("Ctrl+Shift+Z"),
                                               QKeySequence("Ctrl+Y")]))
        self.find_action = self._action("&Find in drawer", self._focus_filter, std.Find,
                                        "Filter the drawer by text")
        panel = self.drawer_panel
        edit_menu = self.menuBar().addMenu("&Edit")
        for action in (self.undo_action, self.redo_action, None, panel.add_action,
                       panel.duplicate_action, panel.delete_action, None, panel.kit_action,
                       panel.paste_action, panel.sort_action, None, self.find_action):
            edit_menu.addSeparator() if action is None else edit_menu.addAction(action)

        self.search_action = self._action("Search &now", self.run_search, std.Refresh,
                                          "Run the search without waiting")
        self.calibrate_action = self._action("&Calibration from a measurement…",
                                             self.new_calibration, None,
                                             "Fit the thresholds to a frequency you measured")
        self.build_menu = self.menuBar().addMenu("&Build")
        self.build_menu.addAction(self.search_action)
        self.build_menu.addAction(self.calibrate_action)
        self.build_menu.addSeparator()

        help_menu = self.menuBar().addMenu("&Help")
        self.help_action = self._action("Tickbin &help", self.show_help, std.HelpContents,
                                        "How to use the window, the words it uses, safety")
        help_menu.addAction(self.help_action)
        help_menu.addAction(self._action("&Safety notes", self.show_safety))
        help_menu.addAction(self._action("&About Tickbin", self.show_about))

        self.toolbar = self.addToolBar("Main")
        self.toolbar.setObjectName("main toolbar")
        self.toolbar.setMovable(False)
        self.toolbar.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextOnly)
        for action in (self.open_action, self.save_action, None, self.undo_action,
                       self.redo_action, None, self.search_action):
            self.toolbar.addSeparator() if action is None else self.toolbar.addAction(action)
        self.toolbar.addSeparator()

    def add_build_action(self, action: QAction, *, toolbar: bool = True) -> None:
        """Put a build action (sheet, print, netlist, take parts) in the Build menu and bar."""
        self.build_menu.addAction(action)
        if toolbar:
            self.toolbar.addAction(action)

    def _build_status_bar(self) -> None:
        bar = self.statusBar()
        self.status_text = QLabel()
        self.progress = QProgressBar()
        self.progress.setRange(0, 100)
        self.progress.setMaximumWidth(160)
        self.progress.setTextVisible(False)
        self.progress.setAccessibleName("search progress")
        self.progress.hide()
        self.timing = QLabel()
        self.timing.setObjectName("hint")
        bar.addWidget(self.status_text, 1)
        bar.addPermanentWidget(self.progress)
        bar.addPermanentWidget(self.timing)

    def say(self, text: str) -> None:
        """A short message in the status bar (kept until the next one)."""
        self.status_text.setText(text)

    # ------------------------------------------------------------ start-up and settings
    def _initial_drawer(self, stock: str | None) -> tuple[Drawer, str]:
        """The drawer to show: ``stock``, else the remembered one, else the demo."""
        if stock and Path(stock).resolve() == demo_drawer_path().resolve():
            return self._demo(), "Showing the demo drawer (a copy: Save asks for a name)."
        if stock:
            return read_drawer(stock, strict=False), ""  # errors: the CLI reports and exits
        if self.remember:
            last = keys.settings().value(keys.LAST_DRAWER, "")
            if last and Path(str(last)).is_file():
                try:
                    return read_drawer(str(last), strict=False), ""
                except TickbinError as e:
                    return self._demo(), f"Last drawer could not be opened ({e}); showing the demo."
        return self._demo(), "Showing the demo drawer; File ▸ Open loads your own."

    @staticmethod
    def _demo() -> Drawer:
        drawer = read_drawer(demo_drawer_path(), strict=False)
        drawer.path = None  # a copy: saving asks for a name, the bundled file stays intact
        return drawer

    def _restore_settings(self) -> None:
        store = keys.settings()
        geometry = store.value(keys.GEOMETRY)
        if isinstance(geometry, QByteArray):
            self.restoreGeometry(geometry)
        state = store.value(keys.WINDOW_STATE)
        if isinstance(state, QByteArray):
            self.restoreState(state)
        splitters = store.value(keys.SPLITTERS)
        if isinstance(splitters, str):
            try:
                main, right = json.loads(splitters)
                self.main_split.setSizes([int(x) for x in main])
                self.right_split.setSizes([int(x) for x in right])
            except (ValueError, TypeError):
                pass
        hidden = store.value(keys.HIDDEN_COLUMNS)
        if isinstance(hidden, str):
            with contextlib.suppress(ValueError, TypeError):
                self.drawer_panel.set_hidden({str(n) for n in json.loads(hidden)})
        fields = store.value(keys.TARGET)
        if isinstance(fields, str):
            with contextlib.suppress(ValueError, TypeError, AttributeError):
                self.form.restore(json.loads(fields))

    def save_settings(self) -> None:
        if not self.remember:
            return
        store = keys.settings()
        store.setValue(keys.GEOMETRY, self.saveGeometry())
        store.setValue(keys.WINDOW_STATE, self.saveState())
        store.setValue(keys.SPLITTERS, json.dumps([self.main_split.sizes(),
                                                    self.right_split.sizes()]))
        store.setValue(keys.TARGET, json.dumps(self.form.state()))
        store.setValue(keys.HIDDEN_COLUMNS, json.dumps(sorted(self.drawer_panel.hidden)))
        path = self.drawer.path
        store.setValue(keys.LAST_DRAWER, str(path) if path else "")
        store.sync()

    def finish_startup(self) -> None:
        """What can wait until the window is on screen: plots, crash recovery, first search."""
        if self.remember:
            self._offer_restore()
            self.autosave.begin_session()
            self.autosave_timer.start()
        if self._ready:
            self.run_search()
        else:
            self._pending = True
            self.say("Getting ready…")
            self.runner.sigReady.connect(self._became_ready)
            self._first_paint.then(self.runner.warm_up)

    def _became_ready(self) -> None:
        """The worker has imported the slow modules: search, then make the plots in steps."""
        self._install_build_actions()
        self._ready = True
        self.drawer_model.start_checking()
        if self._pending:
            self.run_search()
        QTimer.singleShot(1, self, self._make_plots)  # after this much has been painted

    def _make_plots(self) -> None:
        from gui.plots import PlotPanel

        panel = PlotPanel()
        self.plot_area.layout().addWidget(panel, 1)
        self._in_steps(panel.build_steps(), lambda: self._plots_built(panel))

    def _plots_built(self, panel: Any) -> None:
        self._plots = panel
        if self.selected_candidate() is not None:
            self._candidate_chosen()

    def _in_steps(self, steps: Any, done: Any, generation: int | None = None) -> None:
        """Run one step of ``steps`` now and the next after the window has painted.

        A timer of 1 ms (not 0) lets Qt's low-priority paint request go first, so
        every step shows before the next one starts. ``done()`` follows the last
        step unless a newer drawing (``self._drawing``) has started meanwhile.
        """
        if self._closed or (generation is not None and generation != self._drawing):
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

    def _install_build_actions(self) -> None:
        """Add the build actions (PDF, print, netlist, take parts) once the window is shown."""
        from gui.sheet_actions import install

        install(self)

    @property
    def plots(self) -> Any:
        """The plot panel (created after the window is first shown)."""
        return self._plots

    # ------------------------------------------------------------ drawer
    @property
    def drawer(self) -> Drawer:
        return self.drawer_model.drawer

    def _attach(self, drawer: Drawer, previous: Drawer | None = None) -> None:
        if previous is not None:
            for event in (previous.changed, previous.inserted, previous.removed, previous.reset):
                event.disconnect(self._drawer_edited)
            previous.history_changed.disconnect(self._history_changed)
        for event in (drawer.changed, drawer.inserted, drawer.removed, drawer.reset):
            event.connect(self._drawer_edited)
        drawer.history_changed.connect(self._history_changed)
        self._history_changed()

    def set_drawer(self, drawer: Drawer) -> None:
        """Show ``drawer`` (open, new, restore) and search it."""
        previous = self.drawer
        self.drawer_model.set_drawer(drawer)
        self._attach(drawer, previous)
        self.schedule_search()

    def _drawer_edited(self, *args: object) -> None:
        self.schedule_search()

    def _history_changed(self) -> None:
        drawer = self.drawer
        self.undo_action.setEnabled(drawer.can_undo())
        self.redo_action.setEnabled(drawer.can_redo())
        # Fixed labels keep the tool bar still; what would be undone goes in the tooltip.
        self.undo_action.setToolTip(f"Undo {drawer.undo_text()}".rstrip())
        self.redo_action.setToolTip(f"Redo {drawer.redo_text()}".rstrip())
        name = drawer.path.name if drawer.path else self.untitled
        self.setWindowTitle(f"{name}[*] — Tickbin")
        self.setWindowModified(drawer.dirty)

    def undo(self) -> None:
        self.drawer.undo()

    def redo(self) -> None:
        self.drawer.redo()

    def _focus_filter(self) -> None:
        self.drawer_panel.text_filter.setFocus()
        self.drawer_panel.text_filter.selectAll()

    # -- asking the person (tests replace these two)
    @classmethod
    def ask(cls, parent: QWidget, title: str, text: str,
            buttons: QMessageBox.StandardButton,
            default: QMessageBox.StandardButton) -> QMessageBox.StandardButton:
        box = QMessageBox(QMessageBox.Icon.Question, title, text, buttons, parent)
        box.setDefaultButton(default)
        return QMessageBox.StandardButton(box.exec())

    @classmethod
    def ask_path(cls, parent: QWidget, title: str, *, save: bool,
                 start: str = "") -> str | None:
        if save:
            path, _ = QFileDialog.getSaveFileName(parent, title, start, CSV_FILTER)
        else:
            path, _ = QFileDialog.getOpenFileName(parent, title, start, CSV_FILTER)
        return path or None

    def tell(self, title: str, text: str) -> None:
        """An error the person must see (the status bar would be too easy to miss)."""
        QMessageBox.warning(self, title, text)

    def maybe_save(self) -> bool:
        """Before the drawer goes away: True when it is saved, discarded or unchanged."""
        if not self.drawer.dirty:
            return True
        b = QMessageBox.StandardButton
        answer = self.ask(self, "Unsaved changes",
                          "The drawer has changes that are not saved. Save them?",
                          b.Save | b.Discard | b.Cancel, b.Save)
        if answer == b.Save:
            return self.save()
        return answer == b.Discard

    def _start_folder(self) -> str:
        return str(self.drawer.path.parent) if self.drawer.path else str(Path.home())

    def _read(self, path: str) -> Drawer | None:
        try:
            return read_drawer(path, strict=False)
        except DrawerFileError as e:
            shown = "\n".join(str(p) for p in e.problems[:12])
            self.tell("Cannot open the drawer", f"{path} cannot be read as a drawer:\n\n{shown}")
        except TickbinError as e:
            self.tell("Cannot open the drawer", str(e))
        return None

    def new_drawer(self) -> None:
        if self.maybe_save():
            self.autosave.discard()
            self.untitled = "new drawer"
            self.set_drawer(Drawer())
            self.say("New empty drawer: add parts, a kit or paste a list of values.")

    def open_drawer(self, path: str | None = None) -> None:
        if not self.maybe_save():
            return
        path = path or self.ask_path(self, "Open a drawer", save=False,
                                     start=self._start_folder())
        if not path:
            return
        drawer = self._read(path)
        if drawer is not None:
            self.autosave.discard()
            self.set_drawer(drawer)
            bad = len(drawer.problems())
            self.say(f"Opened {path}" + (f"; {bad} row(s) need fixing (marked ⚠)." if bad
                                         else "."))
            self.save_settings()

    def open_demo(self) -> None:
        if self.maybe_save():
            self.autosave.discard()
            self.untitled = "demo drawer (a copy)"
            self.set_drawer(self._demo())
            self.say("Demo drawer opened (a copy: Save asks for a file name).")

    def save(self) -> bool:
        if self.drawer.path is None:
            return self.save_as()
        return self._unreadable_cells_ok() and self._write(self.drawer.path)

    def save_as(self) -> bool:
        if not self._unreadable_cells_ok():
            return False
        path = self.ask_path(self, "Save the drawer as", save=True, start=self._start_folder())
        return bool(path) and self._write(Path(path))

    def _unreadable_cells_ok(self) -> bool:
        """Cells the command line cannot read: name them and ask before saving them.

        The window reads a drawer leniently; ``tickbin search`` and the other commands
        refuse a file with any bad cell, so the person should know before it is written.
        """
        problems = self.drawer.problems()
        if not problems:
            return True
        rows = self.drawer.rows
        cells = [f"{f'line {rows[r].line}' if rows[r].line is not None else f'new row {r + 1}'}"
                 f", {column}: “{rows[r].get(column)}” ({why})"
                 for r, columns in sorted(problems.items()) for column, why in columns.items()]
        more = f"\n… and {len(cells) - 12} more" if len(cells) > 12 else ""
        b = QMessageBox.StandardButton
        answer = self.ask(self, "Save unreadable cells?",
                          f"{len(cells)} cell{'s' if len(cells) != 1 else ''} cannot be read "
                          "as a part:\n\n" + "\n".join(cells[:12]) + more + "\n\nThe window "
                          "keeps them marked, but the command line (tickbin search, sheet, …) "
                          "refuses a drawer file with any of them.\nSave: save anyway. "
                          "Cancel: fix them first.", b.Save | b.Cancel, b.Cancel)
        if answer == b.Save:
            return True
        self.say("Not saved: fix the marked cells (⚠) or save anyway.")
        return False

    def _write(self, path: Path, *, overwrite: bool = False) -> bool:
        try:
            write_drawer(self.drawer, path, overwrite=overwrite)
        except DrawerChangedError:
            return self._changed_on_disk(path)
        except TickbinError as e:
            # The edits stay in the window (still marked unsaved) and in the autosave.
            self.autosave_now()
            self.tell("Not saved", f"{e}.\n\nYour edits are still here, not lost: try "
                      "Save as… to another folder or drive, or free some space and save "
                      "again.")
            self.say("Not saved: the edits are kept; see the message.")
            return False
        self.drawer_model.refresh_lines()
        self.autosave.discard()
        self._history_changed()
        bad = len(self.drawer.problems())
        self.say(f"Saved {path}" + (f"; {bad} row(s) still need fixing." if bad else "."))
        self.save_settings()
        return True

    def _changed_on_disk(self, path: Path) -> bool:
        """Another program saved the drawer since it was read: reload it, or keep ours."""
        b = QMessageBox.StandardButton
        answer = self.ask(self, "Drawer changed on disk",
                          f"{path} was changed on disk after Tickbin read it (another program "
                          "or window saved it).\n\nYes: reload it from disk (Undo brings "
                          "your edits back).\nNo: keep this window's version and save it "
                          f"(the version on disk is kept as {path.name}.bak).\nCancel: "
                          "neither, for now.", b.Yes | b.No | b.Cancel, b.Cancel)
        if answer == b.No:
            return self._write(path, overwrite=True)
        if answer == b.Yes:
            self._reload(path)
        else:
            self.say("Not saved: the drawer changed on disk; your edits are kept here.")
        return False

    def _reload(self, path: Path) -> None:
        """The file as it is on disk now, as one undoable step over the window's edits."""
        disk = self._read(str(path))
        if disk is None:
            return
        drawer = self.drawer
        for column in disk.columns:
            if column not in drawer.columns:
                drawer.columns.append(column)
        self.drawer_model.refresh_columns()
        drawer.replace_rows(disk.rows, "Reload from disk")
        drawer.layout, drawer.disk = disk.layout, disk.disk
        drawer.mark_clean()
        self.drawer_model.refresh_lines()
        self.say(f"Reloaded {path} from disk; Undo brings your edits back.")

    def import_csv(self) -> None:
        path = self.ask_path(self, "Import rows from a drawer file", save=False,
                             start=self._start_folder())
        if not path:
            return
        other = self._read(path)
        if other is None:
            return
        for column in other.columns:
            if column not in self.drawer.columns:
                self.drawer.columns.append(column)
        self.drawer_model.refresh_columns()
        rows = [Row(dict(r.cells)) for r in other.rows]
        self.drawer_panel.add_rows(rows, f"Import {Path(path).name}")

    def export_csv(self) -> None:
        path = self.ask_path(self, "Export a copy of the drawer", save=True,
                             start=self._start_folder())
        if not path:
            return
        try:
            write_text_atomically(path, drawer_csv_text(self.drawer))
        except TickbinError as e:
            self.tell("Not exported", str(e))
            return
        self.say(f"Exported a copy to {path}.")

    def autosave_now(self) -> None:
        """Snapshot unsaved edits (the timer calls this every minute)."""
        if not self.drawer.dirty:
            return
        try:
            self.autosave.save(self.drawer)
        except TickbinError as e:
            self.say(f"Autosave failed: {e}")

    def _offer_restore(self) -> None:
        snapshot = self.autosave.crashed_snapshot()
        if snapshot is None:
            return
        when = time.strftime("%Y-%m-%d %H:%M", time.localtime(snapshot.saved_at))
        name = snapshot.original.name if snapshot.original else "an unsaved drawer"
        b = QMessageBox.StandardButton
        answer = self.ask(self, "Restore unsaved edits?",
                          f"Tickbin did not close normally last time. Unsaved edits to "
                          f"{name} were kept at {when}. Restore them?",
                          b.Yes | b.No, b.Yes)
        if answer != b.Yes:
            self.autosave.forget_crashed()
            return
        base = None
        if snapshot.original and snapshot.original.is_file():
            base = self._read(str(snapshot.original))
        if base is None:
            base = Drawer(columns=snapshot.drawer.columns)
            self.untitled = "restored drawer (not saved)"
        for column in snapshot.drawer.columns:
            if column not in base.columns:
                base.columns.append(column)
        base.replace_rows(snapshot.drawer.rows, "Restore unsaved edits")
        self.set_drawer(base)
        self.autosave_now()  # the edits live in this window's own slot from now on
        self.autosave.forget_crashed()
        self.say("Unsaved edits restored; Undo goes back to the file as saved.")

    # ------------------------------------------------------------ searching
    def schedule_search(self) -> None:
        """Search after the person stops typing for a moment."""
        self.debounce.start()

    def current_target(self) -> Target | None:
        return self.form.target_value()

    def run_search(self) -> None:
        self.debounce.stop()
        if not self._ready:
            self._pending = True
            return
        target = self.form.target_value()
        if target is None:
            self.runner.cancel()
            self.progress.hide()
            self._show_result_none("Fix the marked target fields to search.")
            self.say("Fix the marked target fields to search.")
            self.sigSearchDone.emit()
            return
        parts = tuple(self.drawer.parts())
        slow = self.runner.needs_index(target, parts)
        self.runner.submit(target, parts)
        self.progress.setValue(0)
        self.progress.setVisible(True)
        self.say("Building the parts index…" if slow else "Searching…")

    def _search_progress(self, generation: int, text: str, fraction: float) -> None:
        self.progress.setValue(round(100 * fraction))
        self.say(text)

    def _show_result_none(self, why: str) -> None:
        """No candidates: empty table and plots, and ``why`` under the table (if given)."""
        self._announce = False
        self._drawing += 1
        if why:
            self._outcome = None
            self.candidates.set_result([], trim=False)
            self.notes.setText(why)
            self.notes.show()
        self.details.clear()
        self.spread_note.hide()
        self.drawer_model.set_used({})
        if self._plots is not None:
            self._plots.clear("No candidate to show")

    def _search_failed(self, generation: int, message: str) -> None:
        self.progress.hide()
        self.form.show_error(message)
        self._show_result_none(message)
        self.say("No search result: see the message under the target form.")
        self.sigSearchDone.emit()

    def _search_finished(self, outcome: Outcome) -> None:
        clock = QElapsedTimer()
        clock.start()
        self.progress.hide()
        self.form.show_error("")
        previous = self.selected_candidate()
        self._outcome = outcome
        result = outcome.result
        target = outcome.target
        self.candidates.set_result(result.candidates, trim=target.trim)
        notes = list(result.notes)  # core's notes already say what to buy, if anything
        self.notes.setText("\n".join(notes))
        self.notes.setVisible(bool(notes))
        self.last_search_ms = outcome.seconds * 1000
        count = len(result.candidates)
        self.timing.setText(f"search {self.last_search_ms:.0f} ms")
        text = f"{count} candidate{'s' if count != 1 else ''} for {target.describe()}"
        if count and not target.trim:
            hits = sum(c.hit for c in result.candidates)
            text += f" ({hits} within ±{target.accept_pct:g} %)" if hits else (
                f" (none within ±{target.accept_pct:g} %: see the notes)")
        self.say(text if count else "No candidate from this drawer; see the notes.")
        row = 0
        if previous is not None and previous in result.candidates:
            row = result.candidates.index(previous)
        self._announce = bool(count)  # sigSearchDone once the plots are drawn
        if count:
            self.select_candidate(row)
        else:
            self._show_result_none("")
        self._note_time(clock)
        if not self._announce:
            self.sigSearchDone.emit()

    def _note_time(self, clock: QElapsedTimer) -> None:
        self._slowest_ms = max(self._slowest_ms, clock.nsecsElapsed() / 1e6)

    @property
    def slowest_handler_ms(self) -> float:
        """Longest time a search result took to show (window thread), in ms."""
        return self._slowest_ms

    def select_candidate(self, row: int) -> None:
        """Select the candidate of rank ``row`` (0: the best), wherever the sort shows it."""
        index = self.candidate_order.mapFromSource(self.candidates.index(row, 0))
        self.candidate_view.selectionModel().setCurrentIndex(
            index, QItemSelectionModel.SelectionFlag.ClearAndSelect
            | QItemSelectionModel.SelectionFlag.Rows)
        self.candidate_view.scrollTo(index)

    def selected_candidate(self) -> Any:
        """The chosen core Candidate or TrimCandidate, or None."""
        index = self.candidate_order.mapToSource(
            self.candidate_view.selectionModel().currentIndex())
        return self.candidates.candidate(index.row()) if index.isValid() else None

    def current_oscillator(self) -> Any:
        """The oscillator model behind the candidates shown (core.model.timing.Oscillator)."""
        return self._outcome.oscillator if self._outcome else None

    def _candidate_chosen(self, *args: object) -> None:
        """Show the chosen candidate: its parts in words and in the drawer, its plots."""
        candidate = self.selected_candidate()
        self._drawing += 1
        if candidate is None or self._outcome is None:
            self.details.clear()
            self.drawer_model.set_used({})
            return
        lines = [html.escape(line) for line in parts_list(candidate)]
        self.details.setText("<br>".join(lines) + ' &nbsp; <a href="used">only these in the '
                             "drawer</a>")
        used = used_rows(candidate)
        self.drawer_model.set_used(used)
        if self.candidate_view.hasFocus():  # the person picked it: bring its bins into view
            self.drawer_panel.scroll_to_row(min(used))
        if self._plots is None:
            return  # drawn once the plots exist (see _plots_built)
        self._in_steps(self._drawing_steps(self._outcome, candidate), self._plots_drawn,
                       self._drawing)

    def _drawing_steps(self, outcome: Outcome, candidate: Any) -> Iterator[None]:
        """Plots one at a time, then the advice on the spread; a model error (a candidate
        that cannot be drawn) clears the plots instead."""
        from gui.plot_data import chip_spread_advice, draw_steps

        try:
            yield from draw_steps(self._plots, outcome, candidate)
            yield
            advice = chip_spread_advice(outcome, candidate)
        except TickbinError as e:
            self._plots.clear("This candidate cannot be drawn")
            advice = f"⚠ {e}"
        self.spread_note.setText(advice)
        self.spread_note.setVisible(bool(advice))

    def _plots_drawn(self) -> None:
        if self._announce:
            self._announce = False
            self.sigSearchDone.emit()

    def _show_used_rows(self, link: str) -> None:
        panel = self.drawer_panel
        panel.kind_filter.setCurrentIndex(panel.kind_filter.findData("used"))
        panel.text_filter.clear()

    def _advice_link(self, link: str) -> None:
        """The spread advice's links: make a calibration, or search a band to trim."""
        if link == "calibrate":
            self.new_calibration()
        elif link == "trim":
            target = self.form.target_value()
            if target is not None and target.target_hz:
                self.form.trim_around(target.target_hz)

    # ------------------------------------------------------------ calibration and help
    def new_calibration(self) -> None:
        from gui.calibration_dialog import CalibrationDialog

        dialog = CalibrationDialog(self, self.form.target_value(), self.selected_candidate())
        if dialog.exec() and dialog.saved_name:
            self.form.reload_calibrations(select=dialog.saved_name)
            self.say(f"Calibration “{dialog.saved_name}” saved and selected: "
                     f"{dialog.fitted_text()}")

    def show_help(self) -> None:
        from gui.help_dialog import HelpDialog

        if self._help is None:
            self._help = HelpDialog(self)
        self._help.show()
        self._help.activateWindow()

    def show_safety(self) -> None:
        from gui.help_dialog import SAFETY

        QMessageBox.information(self, "Safety notes", SAFETY)

    def show_about(self) -> None:
        from core import __version__

        QMessageBox.about(self, "About Tickbin",
                          f"<p><b>Tickbin {__version__}</b></p><p>Picks resistors, pots and "
                          "capacitors from your own drawer for an RC oscillator, with honest "
                          "tolerance spread.</p>")

    # ------------------------------------------------------------ closing
    def closeEvent(self, event: QCloseEvent) -> None:  # noqa: N802
        if self.remember and not self.maybe_save():
            event.ignore()
            return
        self.runner.cancel()
        self.runner.wait(3000)
        self.autosave_timer.stop()
        self.save_settings()
        if self.remember:
            self.autosave.end_session()
        else:
            self.autosave.release()
        self._closed = True
        event.accept()

    def quitting(self) -> None:
        """The application quits without a close (logout): keep unsaved edits for next time."""
        if self.remember and not self._closed and self.drawer.dirty:
            self.autosave_now()

