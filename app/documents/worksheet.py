"""The saved document: one equation, its parameters, method settings and notes.

The file format is JSON of our own, versioned by the top-level ``format`` and
``version`` keys::

    {
      "format": "zerotrace-worksheet",
      "version": 1,
      "title": "...", "notes": "...",
      "equation": "1/sqrt(f) = -2*log10(eps/(3.7*D) + 2.51/(Re*sqrt(f)))",
      "unknown": "f",                      # or null: inferred
      "parameters": [{"name": "Re", "value": 1.2e5, "note": "..."},
                     {"name": "D", "value": 150, "unit": "mm", "note": "..."}],
      "unknown_unit": "mm",                # optional: the unit of x, x0, x1, bracket, scan
      "dimension_check": false,            # optional (default true): see below
      "settings": {"methods": ["newton", "secant", "false_position"],
                   "x0": 0.02, "x1": 0.03, "bracket": [0.005, 0.1],
                   "xtol": 1e-12, "rtol": 8.9e-16, "ftol": 0.0,
                   "max_iter": 100, "damping": 1.0},
      "scan": {"from": 0.005, "to": 0.1},   # or null
      "calc": {"number": "", "revision": "", "prepared_by": "", "checked_by": ""},
      "selection": {"root": 0.0213, "reason": "..."},  # or null
      "system": {"unknowns": [{"name": "Q1", "x0": 0.1, "unit": "L/s"}, ...],  # a system
                 "methods": ["newton", "broyden"]},
      "table": {"kind": "table", "method": "brent",    # only when there is one
                "x0": null, "x1": null, "bracket": [0.005, 0.1],
                "columns": [{"name": "Re", "values": [5e4, 2e5]}]}
    }

A parameter's ``unit`` (optional; absent or "" for a plain number) is read by pint in the
restricted way of :func:`solvers.units.read_unit` when the file is loaded, so a unit pint
does not know is a load error naming the field. ``dimension_check: false`` switches the
dimensional check off for correlations whose constants hide their units; every document of
such a worksheet says so. The three keys are written only when they are set, so a
worksheet without units is written exactly as before.
A worksheet with a "system" object holds several equations (and definitions) in
"equation"; its unknowns are listed with their start values, in the order of x, each with
an optional "unit" (its start value and root are in it; written only when set). Files
without it are one equation in one unknown, as before.

Loading validates every field and raises :class:`WorksheetError` (a ``ValueError``)
whose message names the field (``settings.xtol: must not be negative``); every
failure to load, from a missing file to a 5000-digit integer, is a ``WorksheetError``
with a one-line message. Only a regular file up to :data:`MAX_FILE_BYTES` is read
(a FIFO or ``/dev/zero`` is refused at once, see :func:`app.documents.files.read_limited`).

The limits below are the one set used everywhere: loading checks them, saving
checks them before writing (:func:`validate`), and the window's text fields stop
typing at them, so whatever can be saved can be opened again.

Saving is atomic: the text goes to a temporary file in the same folder, is flushed
and fsynced, then renamed over the target, so a crash or a full disk mid-save
leaves the previous file intact (modes and links: :mod:`app.documents.files`).
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Callable, Mapping
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

from app.documents.files import FileRefused, read_limited, write_atomic
from app.documents.words import counted
from solvers.worksheet import (
    DEFAULT_METHODS,
    METHOD_NAMES,
    SYSTEM_METHOD_NAMES,
    CalcInfo,
    Parameter,
    Selection,
    Settings,
    StartValue,
    SystemSpec,
    TableInputs,
    Worksheet,
)

__all__ = [
    "DEFAULT_METHODS", "METHOD_NAMES", "CalcInfo", "Parameter", "Selection", "Settings",
    "StartValue", "SystemSpec", "TableInputs", "Worksheet", "WorksheetError", "load", "loads",
    "save", "dumps", "validate",
    "to_dict", "from_dict", "SETTING_RULES", "setting_problem", "tolerances_problem",
]

FORMAT = "zerotrace-worksheet"
VERSION = 1

# ---- the limits (one set: load, save and the window's text fields all use these)
MAX_FILE_BYTES = 2_000_000  # a worksheet is a few kB; refuse anything absurd before parsing
MAX_TEXT = 2_000  # characters in the equation: the parser's own limit (equation.MAX_LENGTH)
MAX_EQUATION = MAX_TEXT
MAX_TITLE = 500  # characters in the title
MAX_NOTE = 100_000  # characters in free text: notes, parameter notes, why a design value
MAX_CALC_FIELD = 200  # characters in calc number, revision, prepared by, checked by
MAX_NAME = 100  # characters in a name (unknown, parameter)
MAX_PARAMETERS = 500
MAX_DIGITS = 400  # digits in a JSON integer; beyond ~309 it is past any double anyway
MAX_ITER_CAP = 100_000  # the largest iteration cap a worksheet, the CLI or the window takes
MAX_TABLE_COLUMNS = 50  # columns of a table of inputs kept in a worksheet
MAX_TABLE_CELLS = 100_000  # its numbers (about 2.4 MB of JSON at most: within the file limit)

# The rules a method setting must meet, checked alike by the worksheet loader, the CLI's
# flags and the window's fields: key -> (test of the value, what is wrong when it fails).
SETTING_RULES: dict[str, tuple[Callable[[float], bool], str]] = {
    "xtol": (lambda v: v >= 0, "must not be negative"),
    "rtol": (lambda v: v >= 0, "must not be negative"),
    "ftol": (lambda v: v >= 0, "must not be negative"),
    # the range first: an integer past the doubles (a file's -10^309) cannot be a float
    "max_iter": (lambda v: 1 <= v <= MAX_ITER_CAP and float(v).is_integer(),
                 f"must be a whole number from 1 to {MAX_ITER_CAP}"),
    "damping": (lambda v: 0 < v <= 1, "must lie in (0, 1]"),
}


def setting_problem(key: str, value: float) -> str:
    """What is wrong with ``value`` for the setting ``key`` ('' when it is fine)."""
    test, problem = SETTING_RULES[key]
    return "" if test(value) else problem


def tolerances_problem(xtol: float, rtol: float, ftol: float) -> str:
    """'' unless all three stopping tolerances are zero (then no run could stop early)."""
    if xtol == 0 and rtol == 0 and ftol == 0:
        return "xtol, rtol and ftol are all zero: no run could ever stop early"
    return ""


class WorksheetError(ValueError):
    """A worksheet file or mapping that cannot be used; the message names the field."""

    def __init__(self, message: str, field_name: str | None = None):
        super().__init__(message)
        self.field = field_name


# ----------------------------------------------------------------- to / from JSON


def to_dict(ws: Worksheet) -> dict[str, Any]:
    s = ws.settings
    data = {
        "format": FORMAT,
        "version": VERSION,
        "title": ws.title,
        "notes": ws.notes,
        "equation": ws.equation,
        "unknown": ws.unknown,
        "parameters": [_parameter_dict(p) for p in ws.parameters],
        "settings": {
            "methods": list(s.methods),
            "x0": s.x0,
            "x1": s.x1,
            "bracket": list(s.bracket) if s.bracket is not None else None,
            "xtol": s.xtol,
            "rtol": s.rtol,
            "ftol": s.ftol,
            "max_iter": s.max_iter,
            "damping": s.damping,
        },
        "scan": {"from": ws.scan[0], "to": ws.scan[1]} if ws.scan is not None else None,
        "calc": asdict(ws.calc),
        "selection": asdict(ws.selection) if ws.selection is not None else None,
        **({} if ws.system is None else {"system": {
            "unknowns": [{"name": u.name, "x0": u.x0, **({"unit": u.unit} if u.unit else {})}
                         for u in ws.system.unknowns],
            "methods": list(ws.system.methods)}}),
        # only when there is one: a worksheet without a table is written as before
        **({"table": _table_dict(ws.table)} if ws.table is not None else {}),
    }
    if ws.unknown_unit:
        data["unknown_unit"] = ws.unknown_unit
    if not ws.dimension_check:
        data["dimension_check"] = False
    return data


def _parameter_dict(p: Parameter) -> dict[str, Any]:
    data = asdict(p)
    if not p.unit:  # a plain number: the file is exactly what it was before units
        del data["unit"]
    return data


def _unit(value: Any, where: str) -> str:
    """Unit text of a field: '' when absent, else read by pint (restricted) or refused."""
    from solvers.equation import EquationError
    from solvers.units import MAX_UNIT_TEXT, read_unit

    text = _text(value, where, MAX_UNIT_TEXT).strip()
    if text:
        try:
            read_unit(text)
        except EquationError as exc:
            raise _fail(where, str(exc)) from None
    return text


def _table_dict(t: TableInputs) -> dict[str, Any]:
    return {
        "kind": t.kind,
        "method": t.method,
        "x0": t.x0,
        "x1": t.x1,
        "bracket": list(t.bracket) if t.bracket is not None else None,
        "columns": [{"name": name, **({"unit": t.unit_of(j)} if t.unit_of(j) else {}),
                     "values": list(values)} for j, (name, values) in enumerate(t.columns)],
    }


def _table(raw: Any) -> TableInputs:
    """A table of inputs from its JSON, checked field by field (names, equal lengths,
    finite numbers, the limits)."""
    t = _mapping(raw, "table")
    kind = t.get("kind", "table")
    if kind not in ("table", "sweep"):
        raise _fail("table.kind", f"must be 'table' or 'sweep', got {_shown(kind)}")
    method = t.get("method", "newton")
    if not isinstance(method, str) or method.replace("-", "_") not in METHOD_NAMES:
        raise _fail("table.method",
                    f"unknown method {_shown(method)}; choose from {', '.join(METHOD_NAMES)}")
    raw_columns = t.get("columns")
    if not isinstance(raw_columns, list) or not raw_columns:
        raise _fail("table.columns", "must be a non-empty list of {name, values}")
    if len(raw_columns) > MAX_TABLE_COLUMNS:
        raise _fail("table.columns", f"too many ({len(raw_columns)}, limit {MAX_TABLE_COLUMNS})")
    if kind == "sweep" and len(raw_columns) != 1:
        raise _fail("table.columns", "a sweep has one column: the parameter swept")
    columns: list[tuple[str, tuple[float, ...]]] = []
    units: list[str] = []
    cells = 0
    for j, raw_column in enumerate(raw_columns):
        field = _entry("table.columns", "table column", j)
        column = _mapping(raw_column, field(""))
        name = _text(column.get("name"), field("name"), MAX_NAME)
        if not _is_name(name):
            raise _fail(field("name"), f"{_shown(name)} is not a valid name")
        if any(name == other for other, _ in columns):
            raise _fail(field("name"), f"{_shown(name)} appears twice")
        field = _entry("table.columns", "table column", j, name)
        values = column.get("values")
        if not isinstance(values, list) or not values:
            raise _fail(field("values"), "must be a non-empty list of numbers")
        cells += len(values)
        if cells > MAX_TABLE_CELLS:
            raise _fail("table.columns", f"more than {MAX_TABLE_CELLS} numbers")
        if columns and len(values) != len(columns[0][1]):
            raise _fail(field("values"), f"has {counted(len(values), 'row')}; the first "
                        "column has "
                        f"{len(columns[0][1])}")
        where, who = field("values"), field("").label
        columns.append((name, tuple(
            _number(v, _Field(f"{where}[{i}]", f"{who}, row {i + 1}"))
            for i, v in enumerate(values))))
        units.append(_unit(column.get("unit"), field("unit")))
    bracket = t.get("bracket")
    return TableInputs(
        columns=tuple(columns), kind=kind, method=method.replace("-", "_"),
        x0=_optional_number(t.get("x0"), "table.x0"),
        x1=_optional_number(t.get("x1"), "table.x1"),
        bracket=_pair(bracket, "table.bracket") if bracket is not None else None,
        units=tuple(units) if any(units) else (),
    )


def dumps(ws: Worksheet) -> str:
    # allow_nan=False: a NaN or inf would make the file unreadable by strict JSON readers.
    return json.dumps(to_dict(ws), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


class _Field(str):
    """A field's place in the file as a JSON path (``parameters[1].value``: the error's
    ``field``, for programs) with the words that name it for people (``parameter "D",
    value``): an entry of a list is named by its own name once that is read, not by its
    index, which a person editing the file would have to count to."""

    label: str

    def __new__(cls, path: str, label: str) -> _Field:
        field = super().__new__(cls, path)
        field.label = label
        return field


def _entry(path: str, kind: str, index: int, name: str | None = None) -> Any:
    """The fields of one entry of a list, by key: ``kind "name", key`` once its name is
    known and valid, else ``kind N, key`` (N counted from 1, as people count)."""
    who = f'{kind} "{name}"' if name else f"{kind} {index + 1}"
    return lambda key: _Field(f"{path}[{index}].{key}" if key else f"{path}[{index}]",
                              f"{who}, {key}" if key else who)


def _fail(where: str, what: str) -> WorksheetError:
    return WorksheetError(f"{getattr(where, 'label', where)}: {what}", where)


@dataclass(frozen=True)
class _LongInteger:
    """A JSON integer with more than MAX_DIGITS digits, kept unconverted so that the
    field holding it can be named (Python refuses to convert over 4300 digits at all)."""

    digits: int

    def __repr__(self) -> str:
        return f"<integer of {self.digits} digits>"


def _json_int(text: str) -> int | _LongInteger:
    digits = len(text.lstrip("-"))
    return _LongInteger(digits) if digits > MAX_DIGITS else int(text)


def _type_name(value: Any) -> str:
    return "int" if isinstance(value, _LongInteger) else type(value).__name__


def _shown(value: Any, room: int = 40) -> str:
    """``repr`` of a value for a one-line message, shortened in the middle."""
    text = repr(value)
    return text if len(text) <= room else f"{text[: room // 2]}…{text[-(room // 2):]}"


def _number(value: Any, where: str) -> float:
    if isinstance(value, _LongInteger):
        raise _fail(where, f"number too large ({value.digits} digits)")
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise _fail(where, f"must be a number, got {_type_name(value)}")
    if isinstance(value, int) and abs(value) > 10**308:
        raise _fail(where, "number too large")
    x = float(value)
    if not math.isfinite(x):
        raise _fail(where, "must be a finite number")
    return x


def _setting(raw: Mapping[str, Any], defaults: Settings, key: str) -> float:
    """A number setting of the file, checked against :data:`SETTING_RULES`."""
    value = _number(raw.get(key, getattr(defaults, key)), f"settings.{key}")
    problem = setting_problem(key, value)
    if problem:
        raise _fail(f"settings.{key}", problem)
    return value


def _optional_number(value: Any, where: str) -> float | None:
    return None if value is None else _number(value, where)


def _text(value: Any, where: str, limit: int = MAX_NOTE) -> str:
    if value is None:
        return ""
    if not isinstance(value, str):
        raise _fail(where, f"must be text, got {_type_name(value)}")
    if len(value) > limit:
        raise _fail(where, f"too long ({len(value)} characters, limit {limit})")
    try:
        value.encode("utf-8")
    except UnicodeEncodeError as exc:  # a lone surrogate ("\\ud800"): not text, cannot be saved
        code = ord(value[exc.start])
        raise _fail(
            where, f"holds an unpaired surrogate U+{code:04X} at character {exc.start + 1}, "
            "which is not text"
        ) from None
    return value


def _mapping(value: Any, where: str) -> Mapping[str, Any]:
    if not isinstance(value, Mapping):
        raise _fail(where, f"must be an object, got {_type_name(value)}")
    return value


def _pair(value: Any, where: str) -> tuple[float, float]:
    if not isinstance(value, (list, tuple)) or len(value) != 2:
        raise _fail(where, "must be a list of two numbers [a, b]")
    label = getattr(where, "label", where)
    a = _number(value[0], _Field(f"{where}[0]", f"{label}, first end"))
    b = _number(value[1], _Field(f"{where}[1]", f"{label}, second end"))
    if a == b:
        raise _fail(where, "the two ends must differ")
    return (a, b)


def _is_name(text: str) -> bool:
    return text.isidentifier() and text.isascii() and not text.startswith("_")


def from_dict(data: Any) -> Worksheet:
    """Validate a decoded JSON object and build a :class:`Worksheet`."""
    data = _mapping(data, "worksheet")
    fmt = data.get("format")
    if fmt != FORMAT:
        raise _fail("format",
                    f"not a zerotrace worksheet (expected {FORMAT!r}, got {_shown(fmt)})")
    version = data.get("version")
    if isinstance(version, bool) or not isinstance(version, int):
        raise _fail("version", "must be a whole number")
    if version > VERSION:
        raise _fail(
            "version",
            f"file is version {_shown(version)}, written by a newer zerotrace; this one reads "
            f"up to {VERSION}",
        )
    if version < 1:
        raise _fail("version", f"unknown version {_shown(version)}")

    if "equation" not in data:
        raise _fail("equation", "missing")
    equation = _text(data["equation"], "equation", MAX_TEXT)
    if not equation.strip():
        raise _fail("equation", "is empty")
    unknown = data.get("unknown")
    if unknown is not None:
        unknown = _text(unknown, "unknown", MAX_NAME)
        if not _is_name(unknown):
            raise _fail("unknown", f"{_shown(unknown)} is not a valid name")

    raw_params = data.get("parameters", [])
    if not isinstance(raw_params, list):
        raise _fail("parameters", "must be a list")
    if len(raw_params) > MAX_PARAMETERS:
        raise _fail("parameters", f"too many ({len(raw_params)}, limit {MAX_PARAMETERS})")
    params: list[Parameter] = []
    seen: set[str] = set()
    for i, raw in enumerate(raw_params):
        field = _entry("parameters", "parameter", i)
        raw = _mapping(raw, field(""))
        name = _text(raw.get("name"), field("name"), MAX_NAME)
        if not _is_name(name):
            raise _fail(field("name"), f"{_shown(name)} is not a valid name")
        if name in seen:
            raise _fail(field("name"), f"{_shown(name)} appears twice")
        seen.add(name)
        field = _entry("parameters", "parameter", i, name)
        if "value" not in raw:
            raise _fail(field("value"), "missing")
        value = _number(raw["value"], field("value"))
        params.append(Parameter(name, value, _text(raw.get("note"), field("note")),
                                _unit(raw.get("unit"), field("unit"))))

    raw_settings = _mapping(data.get("settings") or {}, "settings")
    defaults = Settings()
    methods_raw = raw_settings.get("methods", list(defaults.methods))
    if not isinstance(methods_raw, list) or not methods_raw:
        raise _fail("settings.methods", "must be a non-empty list of method names")
    methods: list[str] = []
    for i, m in enumerate(methods_raw):
        if not isinstance(m, str) or m.replace("-", "_") not in METHOD_NAMES:
            raise _fail(
                _Field(f"settings.methods[{i}]", "settings.methods"),
                f"unknown method {_shown(m)}; choose from {', '.join(METHOD_NAMES)}",
            )
        if m.replace("-", "_") in methods:  # one lane and one column of results per method
            raise _fail(_Field(f"settings.methods[{i}]", "settings.methods"),
                        f"{m!r} is listed twice")
        methods.append(m.replace("-", "_"))
    bracket_raw = raw_settings.get("bracket")
    max_iter = raw_settings.get("max_iter", defaults.max_iter)
    if isinstance(max_iter, bool) or not isinstance(max_iter, int) or setting_problem(
            "max_iter", max_iter):
        raise _fail("settings.max_iter", SETTING_RULES["max_iter"][1])
    damping = _setting(raw_settings, defaults, "damping")
    settings = Settings(
        methods=tuple(methods),
        x0=_optional_number(raw_settings.get("x0"), "settings.x0"),
        x1=_optional_number(raw_settings.get("x1"), "settings.x1"),
        bracket=_pair(bracket_raw, "settings.bracket") if bracket_raw is not None else None,
        xtol=_setting(raw_settings, defaults, "xtol"),
        rtol=_setting(raw_settings, defaults, "rtol"),
        ftol=_setting(raw_settings, defaults, "ftol"),
        max_iter=max_iter,
        damping=damping,
    )
    problem = tolerances_problem(settings.xtol, settings.rtol, settings.ftol)
    if problem:
        raise _fail("settings", problem)

    scan_raw = data.get("scan")
    scan = None
    if scan_raw is not None:
        scan_map = _mapping(scan_raw, "scan")
        if "from" not in scan_map or "to" not in scan_map:
            raise _fail("scan", "needs both 'from' and 'to'")
        a = _number(scan_map["from"], "scan.from")
        b = _number(scan_map["to"], "scan.to")
        if not a < b:
            raise _fail("scan", "'from' must be less than 'to'")
        scan = (a, b)

    calc_raw = _mapping(data.get("calc") or {}, "calc")
    calc = CalcInfo(
        number=_text(calc_raw.get("number"), "calc.number", MAX_CALC_FIELD),
        revision=_text(calc_raw.get("revision"), "calc.revision", MAX_CALC_FIELD),
        prepared_by=_text(calc_raw.get("prepared_by"), "calc.prepared_by", MAX_CALC_FIELD),
        checked_by=_text(calc_raw.get("checked_by"), "calc.checked_by", MAX_CALC_FIELD),
    )

    sel_raw = data.get("selection")
    selection = None
    if sel_raw is not None:
        sel_map = _mapping(sel_raw, "selection")
        selection = Selection(
            root=_number(sel_map.get("root"), "selection.root"),
            reason=_text(sel_map.get("reason"), "selection.reason"),
        )

    check = data.get("dimension_check", True)
    if not isinstance(check, bool):
        raise _fail("dimension_check", f"must be true or false, got {_type_name(check)}")
    system = _system(data.get("system"))
    if system is not None:
        names = {u.name for u in system.unknowns}
        if unknown is not None and unknown not in names:
            raise _fail("unknown", f"{unknown!r} is not among system.unknowns")
        clash = [p.name for p in params if p.name in names]
        if clash:
            raise _fail("system.unknowns", f"{clash[0]!r} is also a parameter")

    return Worksheet(
        unknown_unit=_unit(data.get("unknown_unit"), "unknown_unit") or None,
        dimension_check=check,
        equation=equation,
        unknown=unknown,
        parameters=tuple(params),
        settings=settings,
        scan=scan,
        title=_text(data.get("title"), "title", MAX_TITLE),
        notes=_text(data.get("notes"), "notes"),
        calc=calc,
        selection=selection,
        system=system,
        table=_table(data["table"]) if data.get("table") is not None else None,
    )


def _system(raw: Any) -> SystemSpec | None:
    """The optional "system" object: {"unknowns": [{"name", "x0"}...], "methods": [...]}."""
    if raw is None:
        return None
    raw = _mapping(raw, "system")
    unknowns_raw = raw.get("unknowns")
    if not isinstance(unknowns_raw, list) or not unknowns_raw:
        raise _fail("system.unknowns", "must be a non-empty list of {name, x0}")
    if len(unknowns_raw) > MAX_PARAMETERS:
        raise _fail("system.unknowns", f"too many ({len(unknowns_raw)}, limit {MAX_PARAMETERS})")
    unknowns: list[StartValue] = []
    for i, item in enumerate(unknowns_raw):
        field = _entry("system.unknowns", "system unknown", i)
        item = _mapping(item, field(""))
        name = _text(item.get("name"), field("name"), MAX_NAME)
        if not _is_name(name):
            raise _fail(field("name"), f"{_shown(name)} is not a valid name")
        if any(u.name == name for u in unknowns):
            raise _fail(field("name"), f"{_shown(name)} appears twice")
        field = _entry("system.unknowns", "system unknown", i, name)
        if "x0" not in item:
            raise _fail(field("x0"), "missing (every unknown of a system needs a start value)")
        unknowns.append(StartValue(name, _number(item["x0"], field("x0")),
                                   _unit(item.get("unit"), field("unit")) or None))
    methods_raw = raw.get("methods", list(SYSTEM_METHOD_NAMES))
    if not isinstance(methods_raw, list) or not methods_raw:
        raise _fail("system.methods", "must be a non-empty list of method names")
    methods: list[str] = []
    for i, m in enumerate(methods_raw):
        if not isinstance(m, str) or m not in SYSTEM_METHOD_NAMES:
            raise _fail(_Field(f"system.methods[{i}]", "system.methods"),
                        f"unknown method {_shown(m)}; choose from "
                        + ", ".join(SYSTEM_METHOD_NAMES))
        if m in methods:
            raise _fail(_Field(f"system.methods[{i}]", "system.methods"),
                        f"{m!r} is listed twice")
        methods.append(m)
    return SystemSpec(tuple(unknowns), tuple(methods))


def loads(text: str) -> Worksheet:
    """Validate worksheet JSON text; every failure is a :class:`WorksheetError`."""
    if len(text) > MAX_FILE_BYTES:
        raise WorksheetError(f"file too large ({len(text)} characters) for a worksheet")
    try:
        data = json.loads(text, parse_constant=_refuse_constant, parse_int=_json_int)
    except WorksheetError:
        raise
    except json.JSONDecodeError as exc:
        raise WorksheetError(
            f"not valid JSON (line {exc.lineno}, column {exc.colno}): {exc.msg}"
        ) from None
    except RecursionError:
        raise WorksheetError("not a worksheet: JSON nested too deeply") from None
    except ValueError as exc:  # any other refusal of the decoder: still one line, still ours
        raise WorksheetError(f"not valid JSON: {str(exc).splitlines()[0][:200]}") from None
    return from_dict(data)


def _refuse_constant(name: str) -> Any:
    raise WorksheetError(f"not valid JSON: {name} is not allowed in a worksheet")


def load(path: str | os.PathLike[str]) -> Worksheet:
    """Read and validate a worksheet file; every failure is a :class:`WorksheetError`.

    Only a regular file of at most :data:`MAX_FILE_BYTES` is read; a FIFO, a device,
    a socket or a folder (also behind a symbolic link) is refused at once, never
    waited on. Messages are one line and name the file and, for content, the field.
    """
    p = Path(path)
    try:
        raw = read_limited(p, MAX_FILE_BYTES, what="worksheet")
    except FileRefused as exc:
        raise WorksheetError(str(exc)) from None
    except FileNotFoundError:
        raise WorksheetError(f"{p}: no such file") from None
    except IsADirectoryError:
        raise WorksheetError(f"{p}: is a folder, not a worksheet file") from None
    except OSError as exc:
        raise WorksheetError(f"{p}: cannot read ({exc.strerror or exc})") from None
    except ValueError as exc:  # a path the system cannot take (an embedded NUL)
        raise WorksheetError(f"{_shown(str(p))}: cannot read ({exc})") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise WorksheetError(f"{p.name}: not UTF-8 text (byte {exc.start})") from None
    try:
        return loads(text)
    except WorksheetError as exc:  # say which file: a user may open several from colleagues
        raise WorksheetError(f"{p.name}: {exc}", exc.field) from None


def validate(ws: Worksheet) -> bytes:
    """The bytes :func:`save` would write, after checking that :func:`load` accepts them.

    Applies exactly the checks of loading (the same limits, the same messages) to
    what would be written, so nothing is saved that cannot be opened again. Raises
    :class:`WorksheetError` naming the field (a NaN, a title over
    :data:`MAX_TITLE` characters, an unpaired surrogate, a file over
    :data:`MAX_FILE_BYTES` bytes).
    """
    try:
        text = dumps(ws)
    except ValueError:  # allow_nan=False: find the field through the loader's own checks
        text = json.dumps(to_dict(ws), indent=2, ensure_ascii=False, allow_nan=True)
    try:
        data = json.loads(text, parse_int=_json_int)
    except ValueError as exc:  # pragma: no cover - dumps wrote it
        raise WorksheetError(f"worksheet: cannot be written as JSON ({exc})") from None
    from_dict(data)  # NaN/inf, lengths, surrogates, names: the load checks, by field
    raw = text.encode("utf-8")  # from_dict refused every unpaired surrogate
    if len(raw) > MAX_FILE_BYTES:
        raise WorksheetError(
            f"worksheet: would be {len(raw)} bytes, over the {MAX_FILE_BYTES}-byte limit of a "
            "worksheet file; shorten the notes"
        )
    return raw


def save(ws: Worksheet, path: str | os.PathLike[str]) -> None:
    """Check with :func:`validate`, then write atomically (:func:`files.write_atomic`).

    Raises :class:`WorksheetError` (a ``ValueError``, naming the field) for a
    worksheet that could not be opened again, before anything is written, and
    ``OSError`` (a read-only folder, a full disk); the previous file at ``path``, if
    any, is untouched in every case and no temporary file is left.
    """
    write_atomic(path, validate(ws))
