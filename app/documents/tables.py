"""Tables of inputs: a CSV table of parameter values read in, a table of results written out.

Input (IN.csv): UTF-8 text; optional ``#`` lines first (comments, or the metadata of a
zerotrace file); one header row of names, each optionally followed by a unit in square
brackets (``D [mm]``); then one row of plain numbers per case. Cells are separated by
commas, or by tabs or semicolons throughout (recognised from the header and first rows).
Blank lines and ``#`` lines between rows are skipped. Anything else is refused with one line
naming the row, the file line and the column: a missing value, a cell that is not a plain
number (``1,5``, ``1_000``, ``nan``), a row with more or fewer cells than the header, a
header only, an empty file, a file over :data:`MAX_TABLE_BYTES` or :data:`MAX_TABLE_ROWS`
rows.

Output (OUT.csv): the ``#`` metadata lines of :mod:`app.documents.export` (equation,
unknown, parameters, settings, tool, time, the caution) plus the summary and the notes of
the rows, then the header: every input column as given, then
``root, converged, reason, iterations, residual``; one row per case, input cells as they
were read, floats written with ``repr`` (round-trip exact), an empty cell where a row has
no root. ``--json`` gives the same as one document.
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import IO, Any

import numpy as np

from app.documents.export import (
    _emit,
    _json_float,
    _write_metadata,
    number,
)
from app.documents.files import read_limited
from app.documents.words import (
    CAUTION,
    batch_note_text,
    batch_summary,
    counted,
    reason_text,
)
from solvers.equation.lexer import comma_hint

MAX_TABLE_BYTES = 256 * 1024 * 1024
MAX_TABLE_ROWS = 10_000_000
RESULT_COLUMNS = ("root", "converged", "reason", "iterations", "residual")

_OTHER_BRACKETS = re.compile(r"\s*([A-Za-z][A-Za-z0-9_]*)\s*[({<]([^(){}<>]+)[)}>]\s*")
_HEADER = re.compile(r"\s*([A-Za-z][A-Za-z0-9_]*)\s*(?:\[([^\[\]]*)\])?\s*")
_NUMBER = r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?"
_ONE_NUMBER = re.compile(rf"[ \t]*{_NUMBER}[ \t]*")
_MANY_NUMBERS = re.compile(rf"(?:{_NUMBER}\n)*")  # cells are stripped, one per line
_PLAIN = re.compile(_NUMBER)


def parse_number(text: str) -> float | None:
    """A finite float from text typed as a number on a calc sheet (ASCII digits, optional
    sign, point and exponent; the typographic minus taken as '-'), or None. The one rule
    of the window's fields, the table cells and the command line's numbers: Python's
    float() also takes '1_000' (a slip for 1.000 or 1,000 read as 1000), non-ASCII digits
    and 'nan'/'inf'; none is a number on a calc sheet."""
    if not isinstance(text, str):
        return None
    stripped = text.strip().replace("\u2212", "-")
    if not _PLAIN.fullmatch(stripped):
        return None
    value = float(stripped)
    return value if math.isfinite(value) else None


class TableError(ValueError):
    """A table that cannot be used: one line naming the row, the file line and the column."""


@dataclass(frozen=True)
class Column:
    """One column of a table of inputs: its header as written, name, unit ('' if none)."""

    header: str
    name: str
    unit: str


@dataclass(frozen=True)
class Table:
    """A table of inputs: columns, their cells as text and as numbers, file lines of rows."""

    path: str
    columns: tuple[Column, ...]
    cells: tuple[tuple[str, ...], ...]  # per column, the cells as read (stripped)
    values: Mapping[str, np.ndarray]  # per column name, float64
    lines: tuple[int, ...]  # file line of each row

    @property
    def rows(self) -> int:
        return len(self.lines)

    def where(self, row: int) -> str:
        """'row N (line L)' for the 0-based row index ``row``."""
        return f"row {row + 1} (line {self.lines[row]})"


def read_table(path: str | os.PathLike[str]) -> Table:
    """Read and check a table of inputs (see the module notes); :class:`TableError` if bad.

    ``OSError`` for a missing or unreadable file; :class:`app.documents.files.FileRefused`
    for a folder, a device or a file over :data:`MAX_TABLE_BYTES`.
    """
    shown = os.fspath(path)
    data = read_limited(path, MAX_TABLE_BYTES, what="table")
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise TableError(f"{shown}: not UTF-8 text (byte {exc.start})") from None
    return parse_table(text, shown)


def parse_table(text: str, shown: str = "pasted table", *, pasted: bool = False) -> Table:
    """A table of inputs from text (a file's, or cells pasted from a spreadsheet: a first
    line holding a tab makes the table tab-separated, else comma-separated); ``shown``
    names it in messages. :class:`TableError` as for :func:`read_table`; ``pasted`` when
    the text is the clipboard's, whose lack of a table is the clipboard's, not a file's."""
    if len(text) > MAX_TABLE_BYTES:
        raise TableError(f"{shown}: more than {MAX_TABLE_BYTES} characters")
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=_delimiter(text))
    header: list[str] | None = None
    header_line = 0
    rows: list[list[str]] = []
    lines: list[int] = []
    ended = 0  # the file line the previous record ended on
    try:
        for record in reader:
            # a record's line is the one it starts on (a quoted cell may span lines)
            start, ended = ended + 1, reader.line_num
            if not record or not "".join(record).strip():
                continue  # a blank line
            if record[0].lstrip().startswith("#"):
                continue  # a comment or a metadata line
            if header is None:
                header, header_line = record, start
                continue
            rows.append(record)
            lines.append(start)
            if len(rows) > MAX_TABLE_ROWS:
                raise TableError(f"{shown}: more than {MAX_TABLE_ROWS} rows")
    except csv.Error as exc:
        raise TableError(f"{shown}: line {reader.line_num}: not valid CSV ({exc})") from None
    if header is None:
        if pasted:
            held = ("it is empty, or holds no text" if not text.strip()
                    else "only comment lines (#) or blank lines")
            raise TableError(f"the clipboard holds no table ({held}): copy the table's cells, "
                             "its header row of parameter names included, then paste")
        raise TableError(f"{shown}: empty file: no header row of parameter names")
    columns = _columns(shown, header, header_line)
    if not rows:
        raise TableError(f"{shown}: header only: no rows of values under it")
    for i, record in enumerate(rows):
        if len(record) != len(columns):
            raise TableError(f"{shown}: row {i + 1} (line {lines[i]}) has "
                             f"{counted(len(record), 'cell')}; the header has {len(columns)}")
    cells = tuple(tuple(c.strip() for c in column) for column in zip(*rows, strict=True))
    values = {col.name: _numbers(shown, col, column, lines)
              for col, column in zip(columns, cells, strict=True)}
    return Table(shown, columns, cells, values, tuple(lines))


def read_header(cell: str) -> tuple[str, str] | None:
    """``NAME`` or ``NAME [unit]`` -> (name, unit or ''); None when it is neither."""
    match = _HEADER.fullmatch(cell)
    return None if match is None else (match.group(1), (match.group(2) or "").strip())


def column_header(name: str, unit: str = "") -> str:
    """A column's heading as :func:`read_header` reads it back: ``NAME [unit]``, or the
    name alone for a plain number. Every table of results (the CLI's, the window's, the
    sheet's) heads an input column this way, so its numbers never lose their unit."""
    return f"{name} [{unit}]" if unit else name


def _delimiter(text: str) -> str:
    """The cells' separator: ',' (CSV), a tab (cells pasted from a spreadsheet) or ';' (the
    CSV of spreadsheets set up for a decimal comma). csv.Sniffer, limited to those three,
    reads the header and the first rows; its answer is taken only when the header holds
    it (names never contain one), else a tab in the header means tabs and anything else
    commas, the rule before ';' was read."""
    lines = [line for line in text.splitlines()[:200]
             if line.strip() and not line.lstrip().startswith("#")][:20]
    first = lines[0] if lines else ""
    try:
        sniffed = csv.Sniffer().sniff("\n".join(lines), delimiters=",;\t").delimiter
    except csv.Error:
        sniffed = ""
    if sniffed and sniffed in first:
        return sniffed
    return "\t" if "\t" in first else ","


def _columns(shown: str, header: Sequence[str], line: int) -> tuple[Column, ...]:
    columns: list[Column] = []
    for j, cell in enumerate(header):
        parsed = read_header(cell)
        where = f"{shown}: header (line {line}), column {j + 1}"
        if not cell.strip():
            raise TableError(f"{where}: empty name")
        if parsed is None:
            hint = ("; separate the columns by commas (or tabs, or semicolons throughout)"
                    if any(c in cell for c in ",;\t|") else "")
            other = _OTHER_BRACKETS.fullmatch(cell)
            if other is not None and not hint:  # 'Q (L/s)', 'Q {m}': the unit in [ ]
                hint = f"; a unit goes in square brackets: '{other[1]} [{other[2].strip()}]'"
            raise TableError(f"{where}: {cell.strip()!r} is not NAME or NAME [unit]{hint}")
        name, unit = parsed
        if any(c.name == name for c in columns):
            raise TableError(f"{where}: {name!r} appears twice")
        columns.append(Column(cell.strip(), name, unit))
    return tuple(columns)


def _numbers(shown: str, column: Column, cells: Sequence[str], lines: Sequence[int]
             ) -> np.ndarray:
    """The column as float64; TableError at its first cell that is not a finite number."""
    joined = "\n".join(cells) + "\n"
    # one C-speed pass; a quoted cell holding a line break ("1\n2") would read as two
    # numbers there, so the count of breaks must be one per cell
    if joined.count("\n") != len(cells) or not _MANY_NUMBERS.fullmatch(joined):
        for i, cell in enumerate(cells):
            if not _ONE_NUMBER.fullmatch(cell):
                where = f"{shown}: row {i + 1} (line {lines[i]}), column {column.header!r}"
                if not cell:
                    raise TableError(f"{where}: missing value")
                hint = comma_hint(cell)
                raise TableError(f"{where}: {cell[:40]!r} is not a plain number{hint}")
    values = np.array(cells, dtype=np.float64)
    bad = np.flatnonzero(~np.isfinite(values))
    if bad.size:
        i = int(bad[0])
        raise TableError(f"{shown}: row {i + 1} (line {lines[i]}), column {column.header!r}: "
                         f"{cells[i][:40]!r} is beyond double precision")
    return values


# ----------------------------------------------------------------- results


@dataclass(frozen=True)
class TableResults:
    """A solved table or sweep as documents are handed it: the inputs as read (names,
    arrays, headers and cells as written), what solved them (a
    :class:`solvers.batch.TableSolve`), ``kind`` ("table" or "sweep") and the column the
    design chart runs along."""

    names: tuple[str, ...]
    columns: tuple[np.ndarray, ...]
    headers: tuple[str, ...]
    cells: tuple[Sequence[str], ...]
    done: Any
    kind: str = "table"
    against: int = 0



def results_of(inputs: Any, done: Any) -> TableResults:
    """A worksheet's table (:class:`solvers.worksheet.TableInputs`) and what solved it, as
    documents are handed them (cells written with ``repr``, round-trip exact)."""
    names = tuple(name for name, _ in inputs.columns)
    columns = tuple(np.asarray(values, dtype=np.float64) for _, values in inputs.columns)
    headers = tuple(column_header(name, inputs.unit_of(j)) for j, name in enumerate(names))
    cells = tuple(tuple(repr(float(v)) for v in values) for _, values in inputs.columns)
    return TableResults(names, columns, headers, cells, done, inputs.kind)


def table_metadata(equation_text: str, equation: Any, batch: Any,
                   constants: Mapping[str, Any], extra: Mapping[str, str] | None = None
                   ) -> dict[str, str]:
    """The ``#`` lines of a table's results: the constants as entered (a value with a unit:
    its number here, the unit and SI value from ``equation.units``), the method's settings,
    the unknown's unit and the dimension-check remark."""
    from app.documents.export import metadata

    units = {k: c for k, c in equation.units.items() if k in constants}
    return metadata(equation=equation_text, unknown=equation.unknown,
                    parameters=constants_as_entered(equation, constants),
                    settings={"method": batch.method, **batch.settings,
                              **common_starts(batch)}, extra=extra,
                    units=units, unknown_unit=equation.unknown_unit, remarks=equation.remarks,
                    residual_unit=equation.residual_unit())


def common_starts(batch: Any) -> dict[str, float]:
    """The start values every row was given alike (``x0``, ``x1``, ``bracket_a``,
    ``bracket_b``, in the unknown's unit), for the settings line: without them a checker
    could not run the table again. A start value that differs by row is in its column; a
    sweep's rows start from the root before them, and its ``x0`` is the first row's."""
    out = {}
    sweep = "swept" in batch.settings
    for key, name in (("x0", "x0"), ("x1", "x1"), ("a", "bracket_a"), ("b", "bracket_b")):
        value = batch.starts.get(key)
        if value is None or np.size(value) == 0:
            continue
        if np.ndim(value) == 0:
            out[name] = float(value)
        elif sweep:
            out[name] = float(np.asarray(value).flat[0])
    return out


def constants_as_entered(equation: Any, constants: Mapping[str, Any]) -> dict[str, float]:
    """Each constant's number as typed (a value with a unit: its magnitude)."""
    return {k: equation.units[k].value if k in equation.units else v
            for k, v in constants.items()}


def constants_in_si(equation: Any, constants: Mapping[str, Any]) -> dict[str, float]:
    """Each constant's SI value (the number the solve used), as ``solve --json`` gives its
    ``parameters``: the value as typed and its unit are in ``parameter_units``."""
    return {k: equation.units[k].si_value if k in equation.units else float(v)
            for k, v in constants.items()}


def note_lines(batch: Any, label: str = "row") -> dict[str, str]:
    """Metadata lines for the summary and each note ('row N' counted from 1)."""
    meta = {"summary": batch_summary(batch)}
    for i, (index, code) in enumerate(batch.notes):
        meta[f"note {i + 1}"] = f"{label} {index + 1}: {batch_note_text(code)}"
    return meta


def results_csv(batch: Any, headers: Sequence[str], cells: Sequence[Sequence[str]],
                target: str | os.PathLike[str] | IO[str], *, meta: Mapping[str, str],
                overwrite: bool = False) -> None:
    """Write the table of results: input columns (``headers`` and their ``cells`` as text,
    one sequence per column) then RESULT_COLUMNS, one row per case (see module notes).

    The result columns keep their plain names (``root``, ``residual``) whatever the units:
    they are the file's fixed columns, read by name by whatever program takes the table
    next. Their units are the ``# unknown unit:`` and ``# residual unit:`` lines above
    (the window's table and the sheet, read by people, head them ``root [mm]``)."""
    buffer = io.StringIO()
    _write_metadata(buffer, {**meta, **note_lines(batch)})
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow([*headers, *RESULT_COLUMNS])
    roots = [number(v) if v == v else "" for v in batch.root.reshape(-1).tolist()]
    residuals = [number(v) if v == v else "" for v in batch.residual.reshape(-1).tolist()]
    converged = ["True" if c else "False" for c in batch.converged.reshape(-1).tolist()]
    writer.writerows(zip(*cells, roots, converged, batch.reason.reshape(-1).tolist(),
                         [str(k) for k in batch.iterations.reshape(-1).tolist()], residuals,
                         strict=True))
    _emit(target, buffer.getvalue(), overwrite)


def results_json(batch: Any, names: Sequence[str], columns: Sequence[np.ndarray], *,
                 equation: str, unknown: str, parameters: Mapping[str, float],
                 label: str = "row") -> dict[str, Any]:
    """The results as one JSON document: inputs and results per row, notes, caution."""
    rows = []
    flat = [np.asarray(c, dtype=np.float64).reshape(-1).tolist() for c in columns]
    root = batch.root.reshape(-1).tolist()
    residual = batch.residual.reshape(-1).tolist()
    for i in range(batch.size):
        row: dict[str, Any] = {n: _json_float(c[i]) for n, c in zip(names, flat, strict=True)}
        row.update(root=_json_float(root[i]) if root[i] == root[i] else None,
                   converged=bool(batch.converged.flat[i]), reason=batch.reason_at(i),
                   iterations=int(batch.iterations.flat[i]),
                   evaluations=int(batch.evaluations.flat[i]),
                   residual=_json_float(residual[i]) if residual[i] == residual[i] else None)
        rows.append(row)
    return {
        "equation": equation,
        "unknown": unknown,
        "method": batch.method,
        "settings": {k: (_json_float(v) if isinstance(v, float) else v)
                     for k, v in batch.settings.items()},
        "parameters": {k: _json_float(v) for k, v in parameters.items()},
        "columns": list(names),
        "rows": rows,
        "notes": [{label: i + 1, "code": c, "text": batch_note_text(c)}
                  for i, c in batch.notes],
        "summary": batch_summary(batch),
        "reasons": {r: reason_text(r) for r in sorted(set(batch.reason.reshape(-1).tolist()))},
        "caution": CAUTION,
    }
