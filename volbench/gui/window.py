"""The workbench main window: panes as tabs, controls on the left, the comparison at the bottom,
menus for files, sessions, export and help, and a status bar with progress and Cancel."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import (
    QDockWidget,
    QFileDialog,
    QLabel,
    QMainWindow,
    QMenu,
    QProgressBar,
    QPushButton,
    QTabWidget,
    QWidget,
)

from volbench.data.load import Loaded
from volbench.errors import VolbenchError
from volbench.gui import panes as pane_registry
from volbench.gui.controller import Controller, Results
from volbench.gui.cue import cue_text
from volbench.gui.dialogs import (
    HelpDialog,
    ask_yes_no,
    confirm_overwrite,
    error_text,
    guarded,
    show_error,
)
from volbench.gui.events_menu import add_events_actions
from volbench.gui.import_dialog import ImportDialog
from volbench.gui.jobs import (
    BatchRequest,
    ExportRequest,
    LoadRequest,
    MemoReady,
    MemoRequest,
    jobs_for,
)
from volbench.gui.panes import Pane
from volbench.gui.session import Session, read_session, write_session
from volbench.gui.settings import Settings
from volbench.gui.state import IMPORT_FIELDS, Choices, WorkbenchState
from volbench.gui.wheel import guard_wheel
from volbench.gui.widgets import Plot
from volbench.gui.workers import Dispatcher

EXPORT_FILTERS = "Excel workbook (*.xlsx);;CSV table (*.csv);;JSON document (*.json)"
SESSION_FILTER = "volbench session (*.json)"
PRICE_FILTER = "Price files (*.csv *.txt *.tsv);;All files (*)"
DOCK_AREAS = {"left": Qt.DockWidgetArea.LeftDockWidgetArea, "bottom": Qt.DockWidgetArea.BottomDockWidgetArea}


class MainWindow(QMainWindow):
    """The workbench window.

    Parameters
    ----------
    synchronous
        Run background work in the GUI thread (tests, benchmarks).
    settings
        Remembered settings (default: the user's QSettings).
    choices
        Start-up choices; default: those remembered in ``settings``.

    Signals
    -------
    exported(Path)
        An export was written.
    """

    exported = Signal(object)
    memo_written = Signal(object)
    """Emitted with the path of a vol memo once it is written."""
    files_loaded = Signal(int)
    """Emitted when a background load finished, with the number of series it read."""

    def __init__(self, *, synchronous: bool = False, settings: Settings | None = None,
                 choices: Choices | None = None, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setObjectName("main_window")
        self.setWindowTitle("volbench: volatility workbench")
        self.setAcceptDrops(True)
        self.settings = settings or Settings()
        self.decision = None  # DecisionSettings exports carry (set from File > Decision record)
        self.state = WorkbenchState(choices or self.settings.load_choices() or Choices(), self)
        self._problem_in_change = False  # the controller reported a problem during the change under way
        self.state.changed.connect(self._before_change)  # before the controller recomputes
        self.results = Results(self)
        self.dispatcher = Dispatcher(synchronous=synchronous, parent=self)
        self.controller = Controller(self.state, self.results, self.dispatcher, self)
        self._after_load = None
        self._loaded_count = 0
        self._loaded_options = None  # the ImportOptions the shown histories were read with
        self._quiet_reload = False

        self.tabs = QTabWidget()
        self.tabs.setObjectName("pane_tabs")
        self.tabs.setDocumentMode(False)
        self.setCentralWidget(self.tabs)
        self.panes: dict[str, Pane] = {}
        self.docks: dict[str, QDockWidget] = {}
        for cls in pane_registry.PANES:
            pane = cls(self.state, self.results)
            self.panes[cls.key] = pane
            if cls.place == "tab":
                self.tabs.addTab(pane, cls.title)
            else:
                self.docks[cls.key] = self._dock(f"{cls.key}_dock", cls.title, pane, DOCK_AREAS[cls.place])
            pane.requested.connect(self.perform)
            pane.notice.connect(self.show_status)
        self._build_status_bar()
        self._build_menus()
        guard_wheel(self)  # the wheel scrolls the panels; it edits a control only once it has focus

        self.controller.status.connect(self._on_controller_status)
        self.controller.finished.connect(self._on_job_finished)
        self.controller.failed.connect(self._on_job_failed)
        self.state.changed.connect(self._on_state)
        self.dispatcher.progress.connect(self._on_progress)
        self.dispatcher.busy.connect(self._on_busy)
        self._docks_sized = False
        self.resize(*fitted_size(1360, 900))
        self._restored = self.settings.restore_window(self)
        if not self._restored:  # first start: the plots get most of the height
            self.fit_docks()
        self.controller.recompute()

    # ------------------------------------------------------------------ layout helpers
    def fit_docks(self) -> None:
        """Share the height for the window's size: the bottom dock (the comparison) takes about
        three tenths, the tabs the rest; the user's own sizes are remembered across sessions."""
        bottom = [d for d in self.docks.values()
                  if self.dockWidgetArea(d) == Qt.DockWidgetArea.BottomDockWidgetArea]
        if bottom:
            h = max(int(self.height() * 0.3), 170)
            self.resizeDocks(bottom, [h] * len(bottom), Qt.Orientation.Vertical)

    def resizeEvent(self, event) -> None:
        super().resizeEvent(event)
        if not self._docks_sized and self.isVisible():
            self._docks_sized = True
            if not self._restored:
                self.fit_docks()

    def _dock(self, name: str, title: str, widget: QWidget, area) -> QDockWidget:
        dock = QDockWidget(title, self)
        dock.setObjectName(name)
        dock.setWidget(widget)
        dock.setFeatures(QDockWidget.DockWidgetFeature.DockWidgetMovable
                         | QDockWidget.DockWidgetFeature.DockWidgetFloatable)
        self.addDockWidget(area, dock)
        return dock

    def _build_status_bar(self) -> None:
        bar = self.statusBar()
        bar.setObjectName("status_bar")
        self.status_label = QLabel("Ready.")
        self.status_label.setObjectName("status_label")
        bar.addWidget(self.status_label, 1)
        self.changed_cue = QLabel()
        self.changed_cue.setObjectName("changed_cue")
        self.changed_cue.setProperty("role", "cue")
        self.changed_cue.setVisible(False)
        bar.addPermanentWidget(self.changed_cue)
        self._cue_timer = QTimer(self)
        self._cue_timer.setSingleShot(True)
        self._cue_timer.setInterval(8000)
        self._cue_timer.timeout.connect(lambda: self.changed_cue.setVisible(False))
        self.progress = QProgressBar()
        self.progress.setObjectName("progress_bar")
        self.progress.setRange(0, 0)
        self.progress.setVisible(False)
        bar.addPermanentWidget(self.progress)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setObjectName("cancel_button")
        self.cancel_button.setVisible(False)
        self.cancel_button.clicked.connect(self.cancel_work)
        bar.addPermanentWidget(self.cancel_button)

    def _action(self, menu: QMenu, text: str, slot, shortcut=None, name: str | None = None) -> QAction:
        act = QAction(text, self)
        if name:
            act.setObjectName(name)
        if shortcut is not None:
            act.setShortcut(shortcut)
        act.triggered.connect(slot)
        menu.addAction(act)
        return act

    def _build_menus(self) -> None:
        bar = self.menuBar()
        f = bar.addMenu("&File")
        self._action(f, "&Open price files…", self.ask_open_files, QKeySequence.StandardKey.Open, "open_action")
        self.recent_menu = f.addMenu("Open &recent")
        self.recent_menu.setObjectName("recent_menu")
        self.recent_menu.aboutToShow.connect(self._fill_recent)
        add_events_actions(self, f)
        f.addSeparator()
        self._action(f, "&Export results…", self.ask_export, "Ctrl+E", "export_action")
        self._action(f, "&Decision record…", self.ask_decision, None, "decision_action")
        self._action(f, "Save current &plot as PNG or SVG…", self.save_current_plot, None, "save_plot_action")
        self._action(f, "Write vol &memo (PDF)…", self.ask_memo, "Ctrl+M", "memo_action")
        f.addSeparator()
        self._action(f, "&Save session…", self.ask_save_session, QKeySequence.StandardKey.Save,
                     "save_session_action")
        self._action(f, "Open sess&ion…", self.ask_open_session, "Ctrl+Shift+O", "open_session_action")
        f.addSeparator()
        self._action(f, "&Quit", self.close, QKeySequence.StandardKey.Quit)
        v = bar.addMenu("&View")
        for dock in self.docks.values():
            v.addAction(dock.toggleViewAction())
        self._action(v, "Recompute all", lambda: self.controller.recompute(), "F5")
        h = bar.addMenu("&Help")
        self._action(h, "&About volbench and the estimators…", self.show_help, QKeySequence.StandardKey.HelpContents,
                     "help_action")

    # ------------------------------------------------------------------ actions
    def perform(self, action: str) -> None:
        """What a pane asked for: ``"open"``, ``"recompute"``, ``"export"`` or ``"garch_all"``."""
        actions = {"open": self.ask_open_files, "recompute": lambda: self.controller.recompute(),
                   "export": self.ask_export, "garch_all": self.fit_all_series}
        if action not in actions:
            raise VolbenchError(f"unknown action {action!r}; choose one of: {', '.join(actions)}")
        actions[action]()

    def _before_change(self, names) -> None:
        self._problem_in_change = False

    def _on_controller_status(self, text: str) -> None:
        self._problem_in_change = True
        self.show_status(text)

    def _on_state(self, names) -> None:
        if names & IMPORT_FIELDS:
            self.reload_files()
            return
        text = cue_text(names, jobs_for(frozenset(names)))
        if text and self.state.histories:
            self.changed_cue.setText(text)
            self.changed_cue.setToolTip(text)
            self.changed_cue.setVisible(True)
            self._cue_timer.start()
            if not self._problem_in_change and not self.dispatcher.is_running():
                self.show_status("Ready.")  # an error shown before this change is stale now

    # ------------------------------------------------------------------ status and progress
    def show_status(self, text: str) -> None:
        self.status_label.setText(text)
        self.status_label.setToolTip(text)

    def _on_progress(self, kind: str, done: int, total: int, text: str) -> None:
        if total > 0:
            self.progress.setRange(0, total)
            self.progress.setValue(done)
        if text:
            self.show_status(text)

    def _on_busy(self, busy: bool) -> None:
        self.progress.setVisible(busy)
        self.cancel_button.setVisible(busy)
        if busy:
            self.progress.setRange(0, 0)
        else:
            self.show_status("Ready.")

    def cancel_work(self) -> None:
        """Cancel: every background job stops (the job table's jobs all honour it)."""
        stopped = self.controller.cancel_background()
        if "load" in stopped:
            self._after_load = None
            self.show_status("Stopped reading the files; what was loaded before is unchanged.")
            return
        if "garch_all" in stopped:
            self.results.fail("garch_all", "Stopped before every series was fitted.")
            self.results.announce({"garch_all"})
        self.show_status("Stopped.")

    # ------------------------------------------------------------------ files
    def ask_open_files(self) -> None:
        paths, _ = QFileDialog.getOpenFileNames(self, "Open price files", self._last_folder(), PRICE_FILTER)
        if not paths:
            return
        values = self.ask_import_choices(len(paths))
        if values is None:
            return
        self.open_files(paths, import_choices=values)

    def ask_import_choices(self, files: int = 0) -> dict | None:
        """The import dialog, pre-filled from the current choices; ``None`` when cancelled."""
        dialog = ImportDialog(self.state.choices, files, self)
        if dialog.exec() != ImportDialog.DialogCode.Accepted:
            return None
        return dialog.values()

    def _last_folder(self) -> str:
        recent = self.settings.recent_files()
        return str(Path(recent[0]).parent) if recent else str(Path.cwd())

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        recent = self.settings.recent_files()
        if not recent:
            act = self.recent_menu.addAction("(no recent files)")
            act.setEnabled(False)
            return
        for path in recent:
            act = self.recent_menu.addAction(path)
            act.triggered.connect(lambda _=False, p=path: self.open_files([p]))
        self.recent_menu.addSeparator()
        self.recent_menu.addAction("Clear list", self.settings.clear_recent)

    def open_files(self, paths, *, replace: bool = False, import_choices: dict | None = None) -> int:
        """Load ``paths`` (added to what is loaded unless ``replace``) in the background.

        Files already loaded are not read again (their series stay exactly as shown) unless
        ``replace``, or unless ``import_choices`` change how files are read, in which case every
        file is read again and any that changed on disk since it was loaded is named. A file that
        cannot be read is reported in one dialog naming the file, line and what to do; the other
        files still load. Returns the number of series read (when running synchronously; else 0,
        and :attr:`files_loaded` tells).
        """
        if import_choices:
            before = self.state.choices
            self._quiet_reload = True
            try:
                self.state.update(**import_choices)
            finally:
                self._quiet_reload = False
            if any(getattr(before, k) != getattr(self.state.choices, k) for k in IMPORT_FIELDS) and self.state.files:
                replace = True
                paths = list(self.state.files) + [p for p in paths if str(Path(p)) not in self.state.files]
        keep = [] if replace else list(self.state.files)
        new = [str(Path(p)) for p in dict.fromkeys(str(p) for p in paths) if str(Path(p)) not in keep]
        if not new and not replace:
            self.show_status("Those files are already loaded.")
            return 0
        kept = [h for h in self.state.histories if h.source is not None and str(h.source) in keep]
        before_prints = {str(h.source): (h.sha256, h.source_size) for h in self.state.histories}
        self._loaded_count = 0

        def done(loaded: Loaded) -> None:
            if loaded.errors:
                show_error(self, "could not read a file", "\n\n".join(loaded.errors))
            changed = sorted({str(h.source) for h in loaded.histories if str(h.source) in before_prints
                              and before_prints[str(h.source)] != (h.sha256, h.source_size)})
            if loaded.histories or replace:
                self.state.set_histories(kept + list(loaded.histories), keep + list(loaded.files))
                self.settings.add_recent([f for f in new if f in loaded.files])
                total = len(keep) + len(loaded.files)
                self.show_status(f"{len(kept) + len(loaded.histories)} series loaded from {total} "
                                 f"file{'s' if total != 1 else ''}.")
            if changed:
                show_error(self, "a file changed on disk", "\n".join(
                    f"{Path(f).name} changed on disk since it was loaded (SHA-256 or size differ); "
                    "the new version is now shown." for f in changed))
            self._loaded_count = len(loaded.histories)

        self._start_load(new, done, taken={h.name for h in kept})
        return self._loaded_count

    def _start_load(self, paths, then, *, taken=(), options=None) -> None:
        """Read ``paths`` in the background; ``then(loaded)`` runs in the GUI thread when done."""
        try:
            options = options or self.state.choices.import_options()
        except VolbenchError as exc:
            show_error(self, "how to read the files", exc)
            return

        def finish(loaded: Loaded) -> None:
            self._loaded_options = options
            then(loaded)
            self.files_loaded.emit(len(loaded.histories))

        self._after_load = finish
        self.show_status(f"Reading {len(paths)} file{'s' if len(paths) != 1 else ''}…")
        self.controller.run("load", LoadRequest(tuple(paths), options, frozenset(taken),
                                                self.state.choices.group("intraday").seconds))

    def reload_files(self) -> None:
        """Read every file again when a choice about how to read them changed."""
        if self._quiet_reload or not self.state.files:
            return
        try:
            options = self.state.choices.import_options()
        except VolbenchError as exc:
            show_error(self, "how to read the files", exc)
            return
        if options != self._loaded_options:
            self.open_files(list(self.state.files), replace=True)

    def dragEnterEvent(self, event) -> None:
        if event.mimeData().hasUrls() and any(u.isLocalFile() for u in event.mimeData().urls()):
            event.acceptProposedAction()

    def dropEvent(self, event) -> None:
        paths = [u.toLocalFile() for u in event.mimeData().urls() if u.isLocalFile()]
        if paths:
            event.acceptProposedAction()
            self.open_files(paths)

    # ------------------------------------------------------------------ sessions
    def current_session(self) -> Session:
        prints = {}
        for h in self.state.histories:
            if h.source is not None:
                prints.setdefault(str(h.source), (str(h.source), h.sha256, h.source_size))
        return Session(self.state.files, self.state.selected, self.state.choices, tuple(prints.values()))

    def ask_save_session(self) -> None:
        name, _ = QFileDialog.getSaveFileName(self, "Save session", "volbench-session.json", SESSION_FILTER)
        if name:
            self.save_session(name)

    def save_session(self, path) -> Path | None:
        out = guarded(self, "save session", lambda: write_session(path, self.current_session()))
        if out is not None:
            self.show_status(f"Session saved to {out}.")
        return out

    def ask_open_session(self) -> None:
        name, _ = QFileDialog.getOpenFileName(self, "Open session", self._last_folder(), SESSION_FILTER)
        if name:
            self.open_session(name)

    def open_session(self, path) -> bool:
        """Restore files, selection and every choice from a session file; False (with a dialog) if unreadable."""
        session = guarded(self, "open session", lambda: read_session(path))
        if session is None:
            return False
        files = list(session.files)
        notes = []
        for check in session.checks:
            name = Path(check.path).name
            if check.status == "changed":
                if ask_yes_no(self, "a file changed", f"{name} changed since the session was saved "
                              f"({check.note}).\nLoad the new version? (No leaves it out.)"):
                    notes.append(f"{name}: the new version is loaded ({check.note})")
                else:
                    files.remove(check.path)
                    notes.append(f"{name} left out: it changed since the session was saved")
            elif check.status == "moved":
                notes.append(f"{name} {check.note}")

        def done(loaded: Loaded) -> None:
            if loaded.errors:
                show_error(self, "could not read a file of the session", "\n\n".join(loaded.errors))
            self.state.restore(loaded.histories, loaded.files, session.choices, session.selected)
            self.show_status(f"Session {Path(path).name} opened: {len(loaded.histories)} series."
                             + (" " + "; ".join(notes) + "." if notes else ""))

        self._start_load(files, done, options=session.choices.import_options())
        return True

    # ------------------------------------------------------------------ export
    def ask_export(self) -> None:
        if not self.state.histories:
            show_error(self, "export", "Nothing to export yet: open a price file first.")
            return
        name, flt = QFileDialog.getSaveFileName(self, "Export results", "volbench-export.xlsx", EXPORT_FILTERS,
                                                options=QFileDialog.Option.DontConfirmOverwrite)
        if not name:
            return
        if not Path(name).suffix:
            name += ".csv" if "csv" in flt.lower() else ".json" if "json" in flt.lower() else ".xlsx"
        self.export_to(name)

    def ask_decision(self) -> None:
        """The decision-record dialog, pre-filled; exports made afterwards carry the record."""
        from volbench.gui.decision_dialog import DecisionDialog

        dialog = DecisionDialog(self.decision, self)
        if dialog.exec() == DecisionDialog.DialogCode.Accepted:
            self.set_decision(dialog.decision())

    def set_decision(self, decision) -> None:
        """Record the decision exports carry (``None``: no record)."""
        self.decision = decision
        self.show_status("Decision record cleared." if decision is None else
                         "Exports now carry the decision record.")

    def export_to(self, path) -> None:
        """Build the export bundle in the background and write ``path`` atomically.

        An existing file is replaced only after the user agrees.
        """
        path = Path(path)
        overwrite = False
        if path.exists():
            if not confirm_overwrite(self, path):
                self.show_status("Export cancelled; the existing file is unchanged.")
                return
            overwrite = True
        try:
            views = self.state.views()
            view = self.controller.current_view()
        except VolbenchError as exc:
            show_error(self, "export", exc)
            return
        given: dict[str, dict] = {}
        if view is not None:
            for section in ("cone", "scaling", "garch", "comparison"):
                value = self.controller.fresh(section)
                if value is not None:
                    given.setdefault(section, {})[view.name] = value
        self.show_status(f"Exporting to {path.name}…")
        self.controller.run("export", ExportRequest(path, tuple(views), overwrite, given, decision=self.decision))

    def ask_memo(self) -> None:
        if not self.state.histories:
            show_error(self, "vol memo", "Nothing to write a memo about yet: open a price file first.")
            return
        name, _ = QFileDialog.getSaveFileName(self, "Write vol memo", f"{self.state.selected or 'volbench'}-memo.pdf",
                                              "PDF document (*.pdf)", options=QFileDialog.Option.DontConfirmOverwrite)
        if name:
            self.write_memo(name if Path(name).suffix else name + ".pdf")

    def write_memo(self, path) -> None:
        """Build the vol memo of the series shown (background) and draw it to ``path`` as PDF.

        The memo uses the settings on screen (its one window is the Window while the comparison is
        linked to it); an existing file is replaced only after the user agrees.
        """
        path = Path(path)
        if path.suffix.lower() != ".pdf":
            show_error(self, "vol memo", f"{path.name}: a memo is written as PDF; choose a name ending in .pdf")
            return
        overwrite = False
        if path.exists():
            if not confirm_overwrite(self, path):
                self.show_status("Memo cancelled; the existing file is unchanged.")
                return
            overwrite = True
        try:
            self.controller.current_view()
        except VolbenchError as exc:
            show_error(self, "vol memo", exc)
            return
        self.show_status(f"Building the vol memo for {path.name}…")
        self.controller.run("memo", MemoRequest(path, overwrite))

    def _draw_memo(self, ready: MemoReady) -> None:
        from volbench.gui.memo_pdf import write_memo_pdf

        out = guarded(self, "vol memo", lambda: write_memo_pdf(ready.path, ready.memo, overwrite=ready.overwrite))
        if out is not None:
            self.show_status(f"Vol memo written to {out}.")
            self.memo_written.emit(out)

    def fit_all_series(self) -> None:
        views = self.state.views()
        if not views:
            show_error(self, "fit every series", "Nothing to fit yet: open a price file first.")
            return
        processes = 1 if self.dispatcher.synchronous else None
        self.results.wait_for("garch_all", f"Fitting {len(views)} series…")
        self.results.announce({"garch_all"})
        self.controller.run("garch_all", BatchRequest(tuple(views), processes))

    def _on_job_finished(self, kind: str, value) -> None:
        if kind == "load":
            then, self._after_load = self._after_load, None
            if then is not None:
                then(value)
        elif kind == "export":
            self.show_status(f"Exported to {value}.")
            self.exported.emit(value)
        elif kind == "memo":
            self._draw_memo(value)
        elif kind == "garch_all":
            self.results.put("garch_all", value)
            self.results.announce({"garch_all"})

    def _on_job_failed(self, kind: str, exc) -> None:
        if kind == "load":
            self._after_load = None
            show_error(self, "could not read the files", exc)
            self.show_status("Reading the files failed; see the message.")
        elif kind in ("export", "memo"):
            show_error(self, "export" if kind == "export" else "vol memo", exc)
            self.show_status(("Export" if kind == "export" else "The memo") + " failed; see the message.")
        elif kind == "garch_all":
            self.results.fail("garch_all", error_text(exc))
            self.results.announce({"garch_all"})

    # ------------------------------------------------------------------ plots, help
    def current_plot(self) -> Plot | None:
        pane = self.tabs.currentWidget()
        plots = pane.findChildren(Plot) if pane is not None else []
        return plots[0] if plots else None

    def save_current_plot(self) -> None:
        plot = self.current_plot()
        if plot is None:
            show_error(self, "save plot", "This tab has no plot; choose a tab with a plot first.")
            return
        plot.ask_save()

    def show_help(self) -> None:
        HelpDialog(self).exec()

    # ------------------------------------------------------------------ closing
    def closeEvent(self, event) -> None:
        self.dispatcher.cancel()
        self.settings.save_window(self)
        self.settings.save_choices(self.state.choices)
        self.settings.sync()
        for pane in self.panes.values():
            pane.unbind()
        super().closeEvent(event)


def fitted_size(width: int, height: int) -> tuple[int, int]:
    """``width`` x ``height``, shrunk to the primary screen's available area (a 1366x768 laptop
    must show the status bar and the comparison's last row without moving the window)."""
    from PySide6.QtGui import QGuiApplication

    screen = QGuiApplication.primaryScreen()
    if screen is None:
        return width, height
    area = screen.availableGeometry()
    return min(width, area.width()), min(height, area.height())
