"""File actions of the window: new, open, save, save as, recent files, samples, exports
(iteration log and roots as CSV, the PDF calculation sheet) and recovery of unsaved work.

:class:`FileActions` works on the window's :class:`~app.window.document.WorksheetDocument`
and asks the window only for what is on screen (``worksheet()``, the inputs' problems).
The calculation sheet is written in the runner's "report" lane, off the UI thread; the
CSV files are small and written at once.
"""

from __future__ import annotations

import time
from pathlib import Path
from typing import TYPE_CHECKING, Any

from PySide6.QtCore import QObject
from PySide6.QtWidgets import QFileDialog, QMessageBox

import app
from app.documents import worksheet
from app.documents.worksheet import WorksheetError
from app.window.document import BLANK
from app.window.recovery import Recovered

if TYPE_CHECKING:
    from app.window.main_window import MainWindow

FILE_FILTER = "zerotrace worksheets (*.json);;All files (*)"
CSV_FILTER = "CSV files (*.csv);;All files (*)"
PDF_FILTER = "PDF files (*.pdf)"
MAX_RECENT = 8
DEFAULT_SAMPLE = "cooling-water-friction.json"
Button = QMessageBox.StandardButton


def write_problem(path: Path, exc: BaseException) -> str:
    """Why ``path`` could not be written, in words about the file the user chose.

    Files are written through a temporary file beside the target; its name in the
    system's message ('.log.csv.d7zhy582.tmp') means nothing to the user.
    """
    folder = path.parent
    if not folder.exists():
        return f"the folder {folder} does not exist"
    if not folder.is_dir():
        return f"{folder} is a file, not a folder"
    if isinstance(exc, OSError) and exc.strerror:
        return f"{exc.strerror} (in the folder {folder})"
    return str(exc)


class FileActions(QObject):
    """Open, save, export and recover the window's worksheet."""

    def __init__(self, window: MainWindow) -> None:
        super().__init__(window)
        self.window = window
        self.document = window.document
        self.report_result: Any = None

    def _status(self, text: str, ms: int = 0) -> None:
        self.window.statusBar().showMessage(text, ms)

    # -- documents
    def maybe_save(self) -> bool:
        """Ask about unsaved changes; True when it is fine to drop the current document."""
        if not self.window.is_modified():
            return True
        answer = QMessageBox.question(
            self.window, "Unsaved changes",
            "The worksheet has changes that are not saved. Save them first?",
            Button.Save | Button.Discard | Button.Cancel, Button.Save)
        if answer == Button.Save:
            return self.save()
        return answer == Button.Discard

    def new_document(self) -> None:
        if self.maybe_save():
            self.window.load_worksheet(BLANK, None)

    def open_file(self) -> bool:
        if not self.maybe_save():
            return False
        path = self.document.path
        start = str(path.parent) if path is not None else str(Path.home())
        name, _ = QFileDialog.getOpenFileName(self.window, "Open worksheet", start, FILE_FILTER)
        return self.open_path(name, ask=False) if name else False

    def open_path(self, path: str | Path, *, ask: bool = True, as_copy: bool = False) -> bool:
        """Open a worksheet file; on any problem say so and keep the open document."""
        if ask and not self.maybe_save():
            return False
        path = Path(path)
        try:
            ws = worksheet.load(path)
        except WorksheetError as exc:  # load turns every failure into one line naming the field
            self.window.last_error = str(exc).splitlines()[0] if str(exc) else "cannot be read"
            QMessageBox.warning(self.window, "Cannot open worksheet",
                                f"{path.name} was not opened:\n{self.window.last_error}\n\n"
                                "The worksheet on screen is unchanged.")
            return False
        if ws.system is not None:  # several unknowns: the system window shows it
            self.window.open_system(ws, None if as_copy else path)
            if not as_copy:
                self.add_recent(path)
            self._status(f"Opened {path.name} in the system window", 5000)
            return True
        self.window.load_worksheet(ws, None if as_copy else path)
        if not as_copy:
            self.add_recent(path)
        self._status(f"Opened {path.name}", 5000)
        return True

    def load_sample(self, name: str = DEFAULT_SAMPLE) -> bool:
        """Open a bundled sample as an untitled copy (Save asks where, never over the sample)."""
        return self.open_path(app.samples_dir() / name, ask=False, as_copy=True)

    def open_sample(self, path: Path) -> None:
        if self.maybe_save():
            self.open_path(path, ask=False, as_copy=True)

    def save(self) -> bool:
        if self.document.path is None:
            return self.save_as()
        return self.write(self.document.path)

    def save_as(self) -> bool:
        path = self.document.path
        start = str(path) if path is not None else str(Path.home() / (
            (self.document.record.title or "worksheet")[:40].replace("/", "-") + ".json"))
        name, _ = QFileDialog.getSaveFileName(self.window, "Save worksheet", start, FILE_FILTER)
        if not name:
            return False
        chosen = Path(name)
        if not chosen.suffix:
            chosen = chosen.with_suffix(".json")
        return self.write(chosen)

    def write(self, path: Path) -> bool:
        ws = self.window.worksheet()
        problems = self.window.inputs.problems()
        try:
            worksheet.save(ws, path)
        except (OSError, ValueError) as exc:
            why = write_problem(path, exc)
            self.window.last_error = why
            # A field past the worksheet's limits is refused before writing (it could not
            # be opened again); anything else is about the folder.
            fix = ("correct that field and save again" if isinstance(exc, WorksheetError)
                   else "try another folder")
            QMessageBox.warning(self.window, "Cannot save worksheet",
                                f"{path} was not written:\n{why}\n\nNothing on screen was lost; "
                                f"{fix}.")
            return False
        self.document.mark_saved(ws, path)
        self.window.recovery.clear()
        self.add_recent(path)
        note = f" (not saved, still wrong: {problems[0]})" if problems else ""
        self._status(f"Saved {path.name}{note}", 8000)
        return True

    # -- recent files and samples
    def add_recent(self, path: Path) -> None:
        recent = [p for p in self.recent_files() if p != str(path)]
        recent.insert(0, str(path))
        self.window.settings.setValue("recent", recent[:MAX_RECENT])
        self.fill_recent()

    def recent_files(self) -> list[str]:
        value = self.window.settings.value("recent", [])
        if isinstance(value, str):
            value = [value]
        return [str(v) for v in (value or [])]

    def fill_recent(self) -> None:
        menu = self.window.recent_menu
        menu.clear()
        recent = self.recent_files()
        for i, p in enumerate(recent):
            action = menu.addAction(f"&{i + 1} {Path(p).name}")
            action.setToolTip(p)
            action.triggered.connect(lambda _c=False, p=p: self.open_path(p))
        menu.setEnabled(bool(recent))

    def fill_samples(self) -> None:
        menu = self.window.samples_menu
        menu.clear()
        try:
            files = sorted(app.samples_dir().glob("*.json"))
        except OSError:
            files = []
        for p in files:
            action = menu.addAction(p.stem.replace("-", " "))
            action.triggered.connect(lambda _c=False, p=p: self.open_sample(p))
        menu.setEnabled(bool(files))

    # -- exports
    def _ask_output(self, title: str, suggestion: str, file_filter: str) -> Path | None:
        """A save dialog plus our own overwrite question (the same on every platform)."""
        current = self.document.path
        folder = current.parent if current is not None else Path.home()
        name, _ = QFileDialog.getSaveFileName(
            self.window, title, str(folder / suggestion), file_filter,
            options=QFileDialog.Option.DontConfirmOverwrite)
        if not name:
            return None
        path = Path(name)
        if path.exists():
            answer = QMessageBox.question(
                self.window, "Replace file?", f"{path.name} already exists in {path.parent}. "
                "Replace it?", Button.Yes | Button.No, Button.No)
            if answer != Button.Yes:
                return None
        return path

    def _stem(self) -> str:
        return self.document.path.stem if self.document.path is not None else "worksheet"

    def _write_csv(self, path: Path, write: Any, what: str) -> bool:
        try:
            write()
        except OSError as exc:
            QMessageBox.warning(self.window, "Cannot export",
                                f"{path} was not written:\n{write_problem(path, exc)}")
            return False
        self._status(f"{what} written to {path}", 8000)
        return True

    def export_runs_csv(self) -> bool:
        solution = self.document.solution
        if solution is None:
            self.window.report_problem("Nothing to export yet: press Solve first")
            return False
        path = self._ask_output("Export iteration log", f"{self._stem()}-iterations.csv",
                                CSV_FILTER)
        if path is None:
            return False
        from app.documents import export

        return self._write_csv(path, lambda: export.runs_csv(
            solution.runs, path, meta=export.solution_meta(solution)), "Iteration log")

    def export_roots_csv(self) -> bool:
        scan, eq = self.document.scan, self.document.scan_equation
        if scan is None:
            self.window.report_problem("Nothing to export yet: run Scan range first")
            return False
        path = self._ask_output("Export roots", f"{self._stem()}-roots.csv", CSV_FILTER)
        if path is None:
            return False
        from app.documents import export

        meta = export.equation_meta(eq)
        return self._write_csv(path, lambda: export.roots_csv(scan, path, meta=meta), "Roots")

    def export_report(self) -> bool:
        """Write the PDF calculation sheet in the background (app.documents.report).

        The sheet is handed results and never solves: the solution and scan on screen
        when they are of exactly this worksheet, else computed in the job (from the
        document's parsed equation when it has it), off the UI thread.
        """
        window = self.window
        problems = window.inputs.problems()
        if problems:
            window.report_problem(f"Cannot write the sheet yet: {problems[0]}")
            return False
        if window.runner.is_busy("report"):
            window.report_problem("A calculation sheet is already being written")
            return False
        path = self._ask_output("Export calculation sheet", f"{self._stem()}.pdf", PDF_FILTER)
        if path is None:
            return False
        from app.documents import report

        ws = window.solve_worksheet()
        doc = self.document
        # The sheet hashes the worksheet file it names: only name it when the file on
        # disk is exactly what is on screen.
        origin = str(doc.path) if doc.path is not None and not window.is_modified() else None
        current, shown_scan = doc.solution_for(ws), doc.scan_for(ws)
        equation = doc.equation_for(ws)
        self._status("Writing the calculation sheet…")
        self.report_result = None

        def work(progress: Any, cancel: Any) -> Any:
            from solvers import pipeline

            solution, scan = pipeline.solve_and_scan(
                ws, equation=equation, solution=current, scan=shown_scan, cancel=cancel,
                progress=lambda p: progress(0.6 * p))
            return report.write_report(ws, path, solution=solution, scan=scan,
                                       worksheet_path=origin, overwrite=True,
                                       progress=lambda p: progress(0.6 + 0.4 * p))

        def done(result: Any) -> None:
            self.report_result = result
            self._status(f"Calculation sheet written to {result.pdf_path}", 10000)

        def failed(message: str) -> None:
            window.last_error = message
            QMessageBox.warning(window, "Cannot write the calculation sheet",
                                f"{path.name} was not written:\n{message}")

        window.runner.submit("report", work, on_done=done, on_error=failed, supersede=False,
                             on_progress=lambda v: self._status(
                                 f"Writing the calculation sheet… {int(100 * v)}%"))
        return True

    # -- recovery
    def autosave_now(self) -> bool:
        """Write the recovery copy if there are unsaved changes (removed once saved)."""
        window, store = self.window, self.window.recovery
        if window.is_modified() and window.strip.text().strip():
            path = self.document.path
            ok = store.write(window.worksheet(), str(path) if path else None)
            if not ok:
                self._status(store.last_error, 8000)
            return ok
        store.clear()
        return False

    def offer_recovery(self) -> bool:
        """Offer the newest worksheet an earlier session left unsaved, and the newest system
        worksheet (it reopens in the system window); True if anything was restored."""
        window = self.window
        left = window.recovery.left_behind()
        if window.recovery.unreadable:  # never dropped silently: say where the copy is kept
            path, why = window.recovery.unreadable[0]
            window.last_error = f"A recovery copy could not be read and was kept: {path} ({why})"
            self._status(window.last_error, 15000)
        newest: dict[bool, Recovered] = {}
        for item in left:  # newest first: the first of each kind
            newest.setdefault(item.worksheet.system is not None, item)
        restored = False
        for item in newest.values():
            restored = self._offer(item) or restored
        return restored

    def _offer(self, item: Recovered) -> bool:
        window = self.window
        when = time.strftime("%Y-%m-%d %H:%M", time.localtime(item.saved_at))
        where = f" (from {item.origin})" if item.origin else ""
        what = "system of equations" if item.worksheet.system is not None else "worksheet"
        answer = QMessageBox.question(
            window, "Recover unsaved work?",
            f"A {what} with unsaved changes was kept from {when}{where}:\n\n"
            f"{item.worksheet.title or item.worksheet.equation[:80]}\n\nOpen it now? "
            "(No discards the recovery copy.)", Button.Yes | Button.No, Button.Yes)
        if answer != Button.Yes:
            item.discard()
            return False
        origin = Path(item.origin) if item.origin else None
        if item.worksheet.system is not None:
            system_window = window.open_system()
            system_window.load_worksheet(item.worksheet, origin, modified=True)
            item.discard()
            system_window.autosave_now()
            system_window.status.setText("Recovered unsaved work: save it to keep it.")
            return True
        window.load_worksheet(item.worksheet, origin, modified=True)
        item.discard()
        self.autosave_now()
        self._status("Recovered unsaved work: save it to keep it.", 10000)
        return True
