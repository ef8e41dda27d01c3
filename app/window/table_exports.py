"""The tables window's exports: the table of results as CSV, and the worksheet's
calculation sheet with the table's section (written in the "report" lane)."""

from __future__ import annotations

from typing import Any

from PySide6.QtWidgets import QFileDialog


def export_csv(window: Any) -> bool:
    from app.documents import tables

    if window.done is None:
        return False
    path, _ = QFileDialog.getSaveFileName(window, "Export the table of results", "",
                                          "CSV files (*.csv)")
    if not path:
        return False
    done = window.done
    meta = tables.table_metadata(window.equation_edit.text(), done.equation, done.batch,
                                 done.constants)
    try:
        tables.results_csv(done.batch, window.headers, window.cells, path, meta=meta,
                           overwrite=True)  # the file dialog asked before replacing
    except OSError as exc:
        window.refuse(f"{path}: cannot write ({exc.strerror or exc})")
        return False
    window.say(f"results written to {path}")
    return True

def results(window: Any) -> Any:
    """The solved table as documents are handed it."""
    from app.documents.tables import TableResults

    return TableResults(tuple(window.model.names), tuple(window.model.columns),
                        tuple(window.headers), tuple(window.cells), window.done, window.kind,
                        max(0, window.against_box.currentIndex()))

def export_sheet(window: Any) -> bool:
    """The worksheet's calculation sheet with this table's section, in the "report"
    lane (the worksheet is solved and scanned there, as for File > Export)."""
    from app.documents.report import write_report
    from solvers import pipeline

    ws = window.worksheet
    if window.done is None or ws is None:
        return False
    if window.equation_edit.text().strip() != ws.equation.strip():
        window.refuse("the calculation sheet is the worksheet's: solve the table with the "
                    "worksheet's equation first")
        return False
    path, _ = QFileDialog.getSaveFileName(window, "Export the calculation sheet", "",
                                          "PDF files (*.pdf)")
    if not path:
        return False
    table = window.results()

    def work(progress: Any, _cancel: Any) -> Any:
        solution, scan = pipeline.solve_and_scan(ws)
        return write_report(ws, path, solution=solution, scan=scan, table=table,
                            overwrite=True, progress=progress)  # the dialog asked

    def done(result: Any) -> None:
        window.sheet_path = str(result.pdf_path)
        window.say(f"calculation sheet written to {result.pdf_path} ({result.pages} pages)")

    window.say("writing the calculation sheet…")
    return window.runner.submit("report", work, on_done=done, on_error=window.refuse)
