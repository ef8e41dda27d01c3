"""Writing the sheet: the output checks made before any work, the worksheet's identity
(file name and SHA-256), and the all-or-nothing write of the PDF with its CSV files."""

from __future__ import annotations

import hashlib
import io
import os
from collections.abc import Callable, Sequence
from datetime import datetime, timezone
from pathlib import Path
from typing import Any

from app.documents import export, tables
from app.documents.files import FileRefused, check_writable, read_limited, write_group
from app.documents.report.layout import (
    ReportError,
    ReportResult,
    _register_fonts,
    _styles,
)
from app.documents.report.pages import (
    _render,
)
from app.documents.report.sections import (
    _calc_number,
    _Context,
)
from app.documents.worksheet import MAX_FILE_BYTES, Worksheet, dumps


def _worksheet_identity(
    ws: Worksheet, worksheet_path: str | os.PathLike[str] | None
) -> tuple[str, str, str]:
    """(file name, SHA-256 hex, what the hash covers)."""
    if worksheet_path is not None:
        path = Path(worksheet_path)
        try:
            data = read_limited(path, MAX_FILE_BYTES, what="worksheet")
        except FileRefused as exc:
            raise ReportError(f"cannot hash the worksheet file: {exc}") from None
        except OSError as exc:
            raise ReportError(
                f"{path}: cannot read the worksheet file to hash it ({exc.strerror or exc})"
            ) from None
        # A name that is not UTF-8 (bytes from another system) is shown with U+FFFD in
        # the sheet and CSV: the text must be encodable; the hash still covers the file.
        shown = os.fsencode(path.name).decode("utf-8", "replace")
        return shown, hashlib.sha256(data).hexdigest(), "SHA-256 of the worksheet file's bytes"
    try:
        text = dumps(ws)
    except ValueError as exc:
        raise ReportError(f"worksheet: cannot be written as JSON to hash it ({exc})") from None
    return (
        "(not saved to a file)",
        hashlib.sha256(text.encode("utf-8")).hexdigest(),
        "SHA-256 of the canonical worksheet JSON (the worksheet was not read from a file)",
    )


# --------------------------------------------------------------- output paths


def _check_target(path: Path, overwrite: bool) -> Path:
    """Refuse a target we could not write, before any work is done."""
    folder = path.parent if str(path.parent) else Path(".")
    if path.is_dir():
        raise ReportError(f"{path}: is a folder, not a file name")
    if not folder.exists():
        raise ReportError(f"{path}: folder {folder} does not exist")
    if not folder.is_dir():
        raise ReportError(f"{path}: {folder} is not a folder")
    if path.exists() and not overwrite:
        raise ReportError(f"{path}: already exists (use --force to replace it)")
    try:  # the only reliable writability test is to write (os.access lies for root)
        check_writable(folder)
    except OSError as exc:
        raise ReportError(f"{path}: cannot write in {folder} ({exc.strerror or exc})") from None
    return path


def _prepare_csv_dir(csv_dir: Path) -> list[Path]:
    """Create the CSV folder (and missing parents); the folders created, deepest last."""
    if csv_dir.exists() and not csv_dir.is_dir():
        raise ReportError(f"{csv_dir}: exists and is not a folder (CSV folder)")
    created = [p for p in (csv_dir, *csv_dir.parents) if not p.exists()][::-1]
    try:
        csv_dir.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ReportError(
            f"{csv_dir}: cannot create the CSV folder ({exc.strerror or exc})"
        ) from None
    return created


def _remove_empty(folders: Sequence[Path]) -> None:
    """Remove folders this run created, deepest first, if they are still empty."""
    for folder in reversed(folders):
        try:
            folder.rmdir()
        except OSError:
            return


# ----------------------------------------------------------------------- entry


def write_report(
    ws: Worksheet,
    pdf_path: str | os.PathLike[str],
    *,
    solution: Any,
    scan: Any = None,
    csv_dir: str | os.PathLike[str] | None = None,
    worksheet_path: str | os.PathLike[str] | None = None,
    overwrite: bool = False,
    progress: Callable[[float], None] | None = None,
    table: Any = None,
) -> ReportResult:
    """Write the calculation sheet of ``ws`` to ``pdf_path`` (and its CSVs to ``csv_dir``).

    The sheet is handed its results and never solves: ``solution`` is the
    :class:`solvers.pipeline.Solution` of ``ws`` and ``scan`` its
    :class:`solvers.scan.Scan` (``None`` when the worksheet has no scan range; a
    worksheet with a range and no scan gets a sheet that says the scan was not run).
    ``worksheet_path`` names the file in the title block and is
    hashed (SHA-256 of its bytes); without it the canonical worksheet JSON is
    hashed and the sheet says so. ``progress(fraction)`` is called with values
    from 0 to 1 from the calling thread. ``table`` (an
    :class:`app.documents.tables.TableResults` of the same equation, solved by its caller)
    adds a section with the table of results and the design chart, and
    ``<pdf stem>-table.csv`` with every row beside the sheet.

    Raises :class:`ReportError` for an output path that cannot be written or that
    exists while ``overwrite`` is False (checked before any work). A method that did
    not converge is reported on the sheet, never raised.
    """
    _register_fonts()

    def report(fraction: float) -> None:
        if progress is not None:
            progress(fraction)

    pdf = _check_target(Path(pdf_path), overwrite)
    created: list[Path] = []
    try:
        result = _write_report(ws, pdf, csv_dir, worksheet_path, overwrite, solution, scan,
                               report, created, table)
    except BaseException:
        _remove_empty(created)  # all or nothing: not even an empty CSV folder is left
        raise
    return result


def _write_report(ws: Worksheet, pdf: Path, csv_dir: Any, worksheet_path: Any,
                  overwrite: bool, solution: Any, scan: Any,
                  report: Callable[[float], None], created: list[Path],
                  table: Any = None) -> ReportResult:
    csv_targets: list[Path] = []
    if csv_dir is not None:
        folder = Path(csv_dir)
        created += _prepare_csv_dir(folder)
        names = [f"{pdf.stem}-runs.csv"]
        if scan is not None:
            names.append(f"{pdf.stem}-roots.csv")
        if table is not None:
            names.append(f"{pdf.stem}-table.csv")
        csv_targets = [_check_target(folder / name, overwrite) for name in names]
    file_name, sha, basis = _worksheet_identity(ws, worksheet_path)
    report(0.0)

    context = _Context(
        ws=ws, solution=solution, scan=scan, file_name=file_name, sha256=sha,
        hash_basis=basis, when=datetime.now(timezone.utc), version=export.tool_version(),
        st=_styles(), table=table,
    )
    data, pages = _render(context)
    report(0.9)

    meta = export.solution_meta(
        solution,
        extra={"calc number": _calc_number(ws), "worksheet": file_name, "worksheet sha256": sha},
    )
    files: list[tuple[Path, bytes]] = []
    for target in csv_targets:
        text = io.StringIO()
        if target.name.endswith("-runs.csv"):
            export.runs_csv(solution.runs, text, meta=meta)
        elif target.name.endswith("-table.csv"):
            # the table's own lines, as `zerotrace batch` writes them: its constants only
            # (a column's parameter is not a constant: the worksheet's single value for it
            # was not used) and the table's method settings
            tables.results_csv(table.done.batch, table.headers, table.cells, text,
                               meta=tables.table_metadata(
                                   ws.equation, table.done.equation, table.done.batch,
                                   table.done.constants, extra={
                                       "calc number": _calc_number(ws),
                                       "worksheet": file_name, "worksheet sha256": sha,
                                       "columns": "; ".join(table.headers)}))
        else:
            export.roots_csv(scan, text, meta=meta)
        files.append((target, text.getvalue().encode("utf-8")))
    files.append((pdf, data))  # renamed last: when it is there, its CSV files are too
    try:  # all or nothing: a full disk leaves neither the sheet nor its CSV files
        write_group(files, overwrite=overwrite)
    except OSError as exc:
        raise ReportError(f"cannot write the report: {exc}") from None
    report(1.0)
    return ReportResult(pdf_path=pdf, csv_paths=tuple(csv_targets), pages=pages, sha256=sha)
