"""The main window: the drawer on the left; target, candidates and plots on the right.

The window lays out and wires the pieces it composes: the drawer panel, the target form,
the file actions (gui.file_actions), the search presenter (gui.search_presenter) and the
build actions (gui.sheet_actions); it computes nothing itself. Dialogs go through
``ask``/``ask_path``/``tell`` so tests can answer them.
"""

from __future__ import annotations

import contextlib
import json
from typing import Any

from PySide6.QtCore import QByteArray, QEvent, QObject, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QCloseEvent, QKeySequence
from PySide6.QtWidgets import (
    QFileDialog,
    QFrame,
    QLabel,
    QMainWindow,
    QMessageBox,
    QProgressBar,
    QScrollArea,
    QSplitter,
    QVBoxLayout,
    QWidget,
)

from core.parts.drawer import Drawer
from gui import settings as keys
from gui import startup
from gui.drawer_model import DrawerTableModel
from gui.drawer_panel import DrawerPanel
from gui.file_actions import FileActions, initial_drawer
from gui.search_presenter import SearchPresenter
from gui.target_form import Target, TargetForm

CSV_FILTER = "Drawer files (*.csv *.txt);;All files (*)"

FIRST_PAINT_WAIT_MS = 300
"""Longest wait for the window's first paint before the warm-up starts anyway."""
COLLECTION_PAUSE_MS = 10_000
"""Longest start-up pause of the garbage collector (``gui.startup``), should the first
result take longer (a very large drawer's index)."""


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
        self.closed = False
        self._help: Any = None

        drawer, note = initial_drawer(stock, remember)
        self.drawer_model = DrawerTableModel(drawer, self, checking=False)
        self.drawer_panel = DrawerPanel(self.drawer_model)
        self.form = TargetForm()
        self.files = FileActions(self)
        self.search = SearchPresenter(self)
        s = self.search  # the views it feeds, by the names build actions and tests use
        self.candidates, self.candidate_view = s.candidates, s.view
        self.details, self.notes, self.spread_note = s.details, s.notes, s.spread_note
        self.plot_area = s.plot_area
        self._first_paint = _FirstPaint(self)
        self._build_layout()
        self._build_actions()
        self._build_status_bar()

        s.sigDone.connect(self.sigSearchDone)
        s.sigReady.connect(self._became_ready)
        self.spread_note.linkActivated.connect(self._advice_link)
        self.form.sigNewCalibration.connect(self.new_calibration)
        self.drawer_panel.sigMessage.connect(self.say)
        self.drawer_panel.sigPin.connect(self.toggle_pin)
        self.form.unpin.clicked.connect(lambda: self._set_pins({}, "Unpin every part"))
        self._attach(drawer)
        self.resize(1280, 800)
        if self.remember:
            self._restore_settings()
        if note:
            self.say(note)

    # ------------------------------------------------------------ building
    def _parts_text(self) -> QScrollArea:
        """The selected candidate's parts and the notes, scrolling when space is short:
        their wrapped lines never push the table under them (a 555 trim at 700 px)."""
        text = QWidget()
        column = QVBoxLayout(text)
        column.setContentsMargins(0, 0, 0, 0)
        column.addWidget(self.details)
        column.addWidget(self.notes)
        column.addStretch(1)
        scroll = QScrollArea()
        scroll.setWidget(text)
        text.setAutoFillBackground(False)  # the section's own background, as before
        scroll.viewport().setAutoFillBackground(False)
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QFrame.Shape.NoFrame)
        scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        scroll.setMinimumHeight(2 * self.fontMetrics().lineSpacing())
        return scroll

    def _build_layout(self) -> None:
        candidates_box = QWidget()
        layout = QVBoxLayout(candidates_box)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.candidate_view, 1)
        layout.addWidget(self._parts_text())
        self.right_split = QSplitter(Qt.Orientation.Vertical)
        self.right_split.addWidget(_section("Target", self.form, "target form"))
        self.right_split.addWidget(_section("Candidates from your drawer", candidates_box,
                                            "candidates"))
        self.right_split.addWidget(_section("How the selected candidate behaves",
                                            self.plot_area, "plots"))
        self.right_split.setStretchFactor(0, 0)
        self.right_split.setStretchFactor(1, 2)
        self.right_split.setStretchFactor(2, 2)
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
        f = self.files
        self.quit_action = self._action("&Quit", self.close, std.Quit, "Close Tickbin")
        file_menu = self.menuBar().addMenu("&File")
        for action in (f.new_action, f.open_action, f.demo_action, None, f.save_action,
                       f.save_as_action, None, f.import_action, f.export_action, None,
                       self.quit_action):
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
                       panel.paste_action, panel.sort_action, None, panel.pin_action, None,
                       self.find_action):
            edit_menu.addSeparator() if action is None else edit_menu.addAction(action)

        self.search_action = self._action("Search &now", self.run_search, std.Refresh,
                                          "Run the search without waiting")
        self.calibrate_action = self._action("&Calibrations…", self.new_calibration, None,
                                             "Fit the thresholds to frequencies you measured; "
                                             "rename or delete saved calibrations")
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
        for action in (f.open_action, f.save_action, None, self.undo_action,
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
            self.files.begin()
        self.search.warm_up(self._first_paint.then)
        self.search.sigDone.connect(startup.resume_collection,
                                    Qt.ConnectionType.SingleShotConnection)
        QTimer.singleShot(COLLECTION_PAUSE_MS, startup.resume_collection)

    def _became_ready(self) -> None:
        """The worker has imported the slow modules: offer every circuit and add the build
        actions (PDF, print, netlist, take parts) before the first search; mark the drawer's
        bad cells once its result is shown (that redraws the whole drawer table)."""
        from core.model.circuits import CIRCUITS
        from gui.sheet_actions import install

        self.form.offer_circuits(CIRCUITS.values())
        install(self)
        self.search.sigDone.connect(self.drawer_model.start_checking,
                                    Qt.ConnectionType.SingleShotConnection)

    # -- the search, for build actions and tests (gui.search_presenter does the work)
    @property
    def plots(self) -> Any:
        """The plot panel (created after the window is first shown)."""
        return self.search.plots

    def run_search(self) -> None:
        self.search.run()

    def current_target(self) -> Target | None:
        return self.form.target_value()

    def selected_candidate(self) -> Any:
        """The chosen core Design, or None."""
        return self.search.selected()

    def select_candidate(self, row: int) -> None:
        """Select the candidate of rank ``row`` (0: the best)."""
        self.search.select(row)

    def current_oscillator(self) -> Any:
        """The oscillator model behind the candidates shown."""
        return self.search.oscillator()

    # ------------------------------------------------------------ drawer
    @property
    def drawer(self) -> Drawer:
        return self.drawer_model.drawer

    def _attach(self, drawer: Drawer, previous: Drawer | None = None) -> None:
        if previous is not None:
            for event in (previous.changed, previous.inserted, previous.removed, previous.reset):
                event.disconnect(self._drawer_edited)
            previous.history_changed.disconnect(self.history_changed)
        for event in (drawer.changed, drawer.inserted, drawer.removed, drawer.reset):
            event.connect(self._drawer_edited)
        drawer.history_changed.connect(self.history_changed)
        self.history_changed()

    def set_drawer(self, drawer: Drawer) -> None:
        """Show ``drawer`` (open, new, restore) and search it."""
        previous = self.drawer
        self.form.set_pins({})  # pins name lines of the drawer that goes
        self.drawer_model.set_drawer(drawer)
        self._attach(drawer, previous)
        self.search.schedule()

    def _drawer_edited(self, *args: object) -> None:
        self.search.schedule()

    def history_changed(self) -> None:
        drawer = self.drawer
        self.undo_action.setEnabled(drawer.can_undo())
        self.redo_action.setEnabled(drawer.can_redo())
        # Fixed labels keep the tool bar still; what would be undone goes in the tooltip.
        self.undo_action.setToolTip(f"Undo {drawer.undo_text()}".rstrip())
        self.redo_action.setToolTip(f"Redo {drawer.redo_text()}".rstrip())
        name = drawer.path.name if drawer.path else self.files.untitled
        self.setWindowTitle(f"{name}[*] — Tickbin")
        self.setWindowModified(drawer.dirty)

    def toggle_pin(self, line: int, words: str) -> None:
        """Pin the part on stock ``line`` in the search, or unpin it (one undo step)."""
        pins = self.form.pin_map()
        if pins.pop(line, None) is None:
            pins[line] = words
            self._set_pins(pins, f"Pin line {line}")
            self.say(f"Pinned {words} (line {line}): every candidate uses it.")
        else:
            self._set_pins(pins, f"Unpin line {line}")
            self.say(f"Unpinned {words} (line {line}).")

    def _set_pins(self, pins: dict[int, str], description: str) -> None:
        before = self.form.pin_map()
        if pins != before:
            self.drawer.record_setting(description, lambda: self.form.set_pins(before),
                                       lambda: self.form.set_pins(pins))

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
        saved = dialog.exec() and dialog.saved_name
        self.form.reload_calibrations(select=dialog.saved_name)  # renamed or deleted ones too
        if saved:
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
        if self.remember and not self.files.maybe_save():
            event.ignore()
            return
        self.search.stop()
        self.files.end(remember=self.remember)
        self.save_settings()
        self.closed = True
        event.accept()

    def quitting(self) -> None:
        """The application quits without a close (logout): keep unsaved edits for next time."""
        if self.remember and not self.closed and self.drawer.dirty:
            self.files.autosave_now()

