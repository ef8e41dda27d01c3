"""The window's document: one worksheet, its parsed equation, its results and their staleness.

:class:`WorksheetDocument` is a plain ``QObject`` the panels observe. The window writes
the user's edits into it (:meth:`WorksheetDocument.edited`) and the background jobs'
answers (:meth:`set_analysis`, :meth:`set_solution`, :meth:`set_scan`); the document
decides what that means (modified? a result stale?) and says so through its signals;
``modifiedChanged`` and ``staleChanged`` only when the verdict changes. Panels are
filled with their own signals blocked (QSignalBlocker), so no guard flags are needed
against the echo of a load.

The parsed equation is kept here and handed to Solve, Scan, Polish and the sheet
(:meth:`equation_for`): the text is parsed in the preview lane while the user types,
once per text and unknown where the equation can bind new values late, else once per
text, unknown and values, and never again by the job that uses it.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import Any

from PySide6.QtCore import QObject, Signal

from app.documents import worksheet
from app.documents.worksheet import Selection, Settings, Worksheet
from app.window.equation_strip import Analysis, rebind
from solvers.pipeline import compiled_for

BLANK = Worksheet(equation="")


@dataclass(frozen=True)
class Staleness:
    """Which shown results no longer match the worksheet on screen."""

    plot: bool = False
    solution: bool = False
    scan: bool = False


def as_saved(ws: Worksheet) -> str:
    """The worksheet as text for "is it modified?": parameters in name order, since the
    table lists them in the equation's order, which need not be the file's."""
    ordered = tuple(sorted(ws.parameters, key=lambda p: p.name))
    text = worksheet.dumps(ws.with_changes(parameters=ordered, table=None))
    # A table of inputs (up to 10^5 numbers) is compared by its hash, not written out as
    # JSON at every keystroke.
    return text if ws.table is None else f"{text}table {hash(ws.table)}"


def result_key(ws: Worksheet) -> str:
    """What a solution depends on (everything except the notes and title block)."""
    return worksheet.dumps(ws.with_changes(title="", notes="", calc=BLANK.calc, selection=None,
                                           table=None))


def scan_key(ws: Worksheet) -> str:
    """What a scan depends on: the equation, parameters and range, not the start values."""
    return result_key(ws.with_changes(settings=Settings()))


class WorksheetDocument(QObject):
    """The worksheet on screen, its file, its parsed equation and its latest results.

    Signals
    -------
    worksheetChanged(Worksheet)
        A different worksheet was loaded: panels refill from it; results are cleared.
    equationChanged(Analysis)
        A new reading of the equation text (parsed equation, or the error and column).
    resultsChanged()
        The solution or the scan (or both) was replaced or cleared.
    staleChanged(Staleness)
        A shown result started or stopped matching the worksheet.
    modifiedChanged(bool), pathChanged(object)
        For the title bar.
    selectionChanged(object)
        The design value (a :class:`Selection` or None).
    """

    worksheetChanged = Signal(object)  # noqa: N815 (Qt signal names)
    equationChanged = Signal(object)  # noqa: N815
    resultsChanged = Signal()  # noqa: N815
    staleChanged = Signal(object)  # noqa: N815
    modifiedChanged = Signal(bool)  # noqa: N815
    pathChanged = Signal(object)  # noqa: N815
    selectionChanged = Signal(object)  # noqa: N815

    def __init__(self, parent: QObject | None = None) -> None:
        super().__init__(parent)
        self.record: Worksheet = BLANK  # title block, notes, design value; fields as loaded
        self.path: Path | None = None
        self.saved_text = as_saved(BLANK)
        self.touched = False  # the user edited something since load or save
        self.analysis: Analysis | None = None
        self.solution: Any = None
        self.solve_key: str | None = None
        # the inputs on screen the solution answers (a polish runs from start values of
        # its own and leaves the typed ones alone: it is current until they change)
        self.solve_basis: str | None = None
        self.scan: Any = None
        self.scan_equation: Any = None
        self.scan_key: str | None = None
        self.plot_key: tuple[str, str] | None = None  # what the plot was drawn from
        self._stale = Staleness()
        self._modified = False

    # -- loading and saving
    def load(self, ws: Worksheet, path: Path | None) -> None:
        """Take a new worksheet; every result of the previous one is dropped."""
        self.record = ws
        self.set_path(path)
        self.solution = self.scan = self.scan_equation = None
        self.solve_key = self.solve_basis = self.scan_key = self.plot_key = None
        self._stale = Staleness()
        self.worksheetChanged.emit(ws)
        self.resultsChanged.emit()
        self.staleChanged.emit(self._stale)
        self.selectionChanged.emit(ws.selection)

    def mark_loaded(self, shown: Worksheet, *, modified: bool) -> None:
        """Remember what the panels show after a load as the saved state."""
        self.saved_text = "" if modified else as_saved(shown)
        self.touched = modified
        self._set_modified(modified)

    def mark_saved(self, ws: Worksheet, path: Path) -> None:
        self.record = ws
        self.saved_text = as_saved(ws)
        self.touched = False
        self.set_path(path)
        self._set_modified(False)

    def set_path(self, path: Path | None) -> None:
        if path != self.path:
            self.path = path
            self.pathChanged.emit(path)

    # -- edits
    def is_modified(self, shown: Worksheet, bad_inputs: bool) -> bool:
        """Whether ``shown`` (the worksheet on screen) differs from the file."""
        try:
            current = as_saved(shown)
        except ValueError:
            return True
        return current != self.saved_text or (bad_inputs and self.touched)

    def edited(self, shown: Worksheet, bad_inputs: bool,
               solved: Worksheet | None = None) -> bool:
        """The user changed something on screen: re-judge modified and stale.

        ``shown`` is the worksheet as on screen (what a save writes), ``solved`` the same
        with the unknown the strip inferred (what the results were computed from; default
        ``shown``). Returns whether the worksheet is now modified.
        """
        self.touched = True
        modified = self.judge_modified(shown, bad_inputs)
        self.refresh_stale(shown if solved is None else solved)
        return modified

    def judge_modified(self, shown: Worksheet, bad_inputs: bool) -> bool:
        """:meth:`is_modified`, announced through ``modifiedChanged`` when it changed."""
        modified = self.is_modified(shown, bad_inputs)
        self._set_modified(modified)
        return modified

    def change_record(self, ws: Worksheet) -> None:
        """Title block, notes or design value changed (not shown in the panels)."""
        old = self.record.selection
        self.record = ws
        self.touched = True
        if ws.selection != old:
            self.selectionChanged.emit(ws.selection)

    def set_selection(self, selection: Selection) -> None:
        self.change_record(self.record.with_changes(selection=selection))

    def _set_modified(self, modified: bool) -> None:
        if modified != self._modified:
            self._modified = modified
            self.modifiedChanged.emit(modified)

    # -- the equation
    def set_analysis(self, analysis: Analysis) -> None:
        self.analysis = analysis
        self.equationChanged.emit(analysis)

    def equation_for(self, ws: Worksheet) -> Any:
        """The parsed equation of ``ws`` if the latest reading is of exactly it, else None
        (the job then parses: the user pressed Solve before the reading caught up)."""
        a = self.analysis
        if a is None or not a.ok or a.text != ws.equation or a.unknown != ws.unknown:
            return None
        if not compiled_for(a.equation, ws.unknown_unit, ws.dimension_check):
            return None  # the unknown's unit or the check switch changed: the job parses
        values = ws.parameter_values()
        if all(values.get(n) == v for n, v in a.equation.parameters.items()):
            return a.equation
        try:
            return rebind(a.equation, values)
        except ValueError:  # no finite value for these values: the job parses and says where
            return None

    # -- results
    def set_solution(self, solution: Any, key: str, basis: str | None = None) -> None:
        """Show ``solution``, computed from the worksheet whose :func:`result_key` is
        ``key``; ``basis`` is the key of the inputs on screen it answers when they differ
        (a polish: its own start values, the typed ones kept), else ``key``."""
        basis = key if basis is None else basis
        self.solution, self.solve_key, self.solve_basis = solution, key, basis
        self.plot_key = ("solve", basis)
        self.resultsChanged.emit()

    def set_scan(self, scan: Any, equation: Any, key: str) -> None:
        self.scan, self.scan_equation, self.scan_key = scan, equation, key
        self.plot_key = ("scan", key)
        self.resultsChanged.emit()

    def solution_for(self, ws: Worksheet) -> Any:
        """The solution if it was computed from exactly ``ws``, else None."""
        return self.solution if self.solve_key == result_key(ws) else None

    def shown_solution_for(self, ws: Worksheet) -> Any:
        """The solution on screen if it answers the inputs ``ws`` (a Solve of exactly
        them, or a polish made while they stood), else None."""
        return self.solution if self.solve_basis == result_key(ws) else None

    def scan_for(self, ws: Worksheet) -> Any:
        """The scan if it was computed from exactly ``ws``'s equation and range, else None."""
        return self.scan if self.scan_key == scan_key(ws) else None

    @property
    def stale(self) -> Staleness:
        return self._stale

    def refresh_stale(self, ws: Worksheet) -> None:
        """Compare every shown result with ``ws``; say so when that changes."""
        plot = False
        if self.plot_key is not None:
            kind, key = self.plot_key
            plot = (result_key(ws) if kind == "solve" else scan_key(ws)) != key
        solution = self.solution is not None and result_key(ws) != self.solve_basis
        scan = self.scan is not None and scan_key(ws) != self.scan_key
        stale = Staleness(plot, solution, scan)
        if stale != self._stale:
            self._stale = stale
            self.staleChanged.emit(stale)
