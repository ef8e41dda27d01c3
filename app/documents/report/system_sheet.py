"""The calculation sheet of a system of equations (several unknowns).

Handed the worksheet and its :class:`solvers.systems.pipeline.SystemSolution` (the sheet never
solves), it writes the same kind of A4 PDF as for one equation, with the same title block,
caution, page furniture and all-or-nothing write: the equations and definitions as entered,
the parameters, the settings and start values, the Jacobian's structure (which unknowns each
equation uses, the block order, symbolic or by differences), each method's result with the
residual of every equation at its root and every definition's value there, the convergence
figure (||F|| and step length per iterate) and every iterate. The CSV beside it is
:func:`app.documents.system_export.system_csv` of the same runs.
"""

from __future__ import annotations

import io
import os
from collections.abc import Callable
from datetime import datetime, timezone
from pathlib import Path
from types import SimpleNamespace
from typing import Any
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.units import mm
from reportlab.platypus import (
    CondPageBreak,
    Flowable,
    KeepTogether,
    Paragraph,
    Spacer,
    Table,
    TableStyle,
)

from app.documents import export, system_export, words
from app.documents.files import write_group
from app.documents.report.layout import (
    FAIL_FILL,
    FAIL_INK,
    MARGIN_BOTTOM,
    MARGIN_TOP,
    MARGIN_X,
    MAX_TABLE_ROWS,
    PAGE_SIZE,
    TEXT_WIDTH,
    TOOL_NAME,
    ReportResult,
    _boxed,
    _fitted_widths,
    _grid_style,
    _heading,
    _key_value_table,
    _num,
    _register_fonts,
    _styles,
    _text,
)
from app.documents.report.pages import _canvas_maker, _furniture, _SheetTemplate
from app.documents.report.sections import _calc_number, _Context, _title, _title_block
from app.documents.report.typeset import _figure, _math
from app.documents.report.writing import (
    _check_target,
    _prepare_csv_dir,
    _remove_empty,
    _worksheet_identity,
)
from app.documents.system_figures import draw_system_convergence
from app.documents.worksheet import Worksheet
from solvers.equation.typeset import lines_latex


def _title_of(solution: Any) -> Any:
    # the shared title block and page header name the unknown(s) when there is no title
    return SimpleNamespace(equation=SimpleNamespace(
        unknown=", ".join(solution.system.unknowns)))


def _labelled(system: Any, name: str) -> str:
    """``Q1 [L/s]``: an unknown with the unit its start value and root are in."""
    unit = system.unknown_units.get(name)
    return f"{name} [{unit}]" if unit else name


def _parameter_value(p: Any, converted: Any) -> str:
    """``150 mm (= 0.15 m)`` for a parameter with a unit, the number alone without."""
    return words.measured_text(p.value, converted, _num)


def _mono(text: str, st: dict, style: str = "cell") -> Paragraph:
    return Paragraph(f"<font name='ZT-Mono'>{_text(text)}</font>", st[style])


def _typeset_lines(text: str, equations: Any, st: dict) -> Table | None:
    """Each line typeset as typed, the equations numbered as in the residual tables, the
    definitions not; a line mathtext cannot set legibly stays text. One row a line, under
    the label "Typeset" in the key column: a long system breaks across a page between its
    lines (held in one cell, twelve typeset lines moved whole to the next page and left
    half of page 1 blank)."""
    lines = lines_latex(text)
    if not lines:
        return None
    math_width = TEXT_WIDTH - 44 * mm - 12 * mm
    numbers = iter(range(1, len(equations) + 1))
    # compared with their whitespace collapsed, as System.equations keeps them (a line
    # broken over two, or a double space, is still that equation)
    pending = [" ".join(e.split()) for e in equations]
    data = []
    for line, tex in lines:
        label = ""
        if pending and " ".join(line.split()) == pending[0]:
            pending.pop(0)
            label = f"({next(numbers)})"
        image = (_math(tex, math_width, 11.0) if tex else None) or _mono(line, st)
        data.append([Paragraph(_text("Typeset") if not data else "", st["label"]),
                     Paragraph(label, st["cell"]), image])
    table = Table(data, colWidths=[44 * mm, 10 * mm, TEXT_WIDTH - 44 * mm - 10 * mm],
                  hAlign="LEFT")
    table.setStyle(TableStyle([("VALIGN", (1, 0), (-1, -1), "MIDDLE"),
                               ("VALIGN", (0, 0), (0, -1), "TOP"),
                               ("LEFTPADDING", (0, 0), (0, -1), 3),
                               ("LEFTPADDING", (1, 0), (-1, -1), 0),
                               ("TOPPADDING", (0, 0), (-1, -1), 2),
                               ("BOTTOMPADDING", (0, 0), (-1, -1), 2),
                               ("LINEBELOW", (0, -1), (-1, -1), 0.25,
                                colors.HexColor("#d0d5db"))]))
    return table


def _equations_section(c: _Context, sol: Any) -> list[Flowable]:
    st, system = c.st, sol.system
    entered = _key_value_table([("As entered", _mono(c.ws.equation, st, "cellmono"))], st)
    typeset = _typeset_lines(c.ws.equation, system.equations, st)
    rows: list[tuple[str, Any]] = []
    rows.append(("Equations", [_mono(f"({i}) {t}", st) for i, t in
                               enumerate(system.equations, 1)]))
    rows.append(("Unknowns", _mono(", ".join(_labelled(system, n) for n in system.unknowns),
                                   st)))
    unchecked = any(r.code == "dimensions_unchecked" for r in system.remarks)
    if system.parameter_units or any(system.unknown_units.values()) or unchecked:
        rows.append(("Dimensions", Paragraph(_text(
            words.DIMENSIONS_UNCHECKED if unchecked else words.DIMENSIONS_CHECKED),
            st["cell"])))
    notes = [n for n in words.remarks_text(system.remarks)
             if not n.startswith("dimensions ")]  # the switch has its own row above
    if notes:
        rows.append(("Notes", [Paragraph(_text(n), st["cell"]) for n in notes]))
    rows.append(("Definitions", _mono(", ".join(system.definitions), st) if system.definitions
                 else Paragraph("none", st["cell"])))
    out = [*_heading("1  Equations and definitions", st, "h1"), entered,
           *([] if typeset is None else [typeset]), _key_value_table(rows, st),
           Paragraph("Residual of equation i: its left side minus its right side (an equation "
                     "written without '=' is its expression). Definitions are written out into "
                     "the equations before F and its Jacobian are formed.", st["small"])]
    out += _heading("2  Parameters", st, "h1")
    params = c.ws.parameters
    if not params:
        out.append(Paragraph("The equations have no named parameters.", st["body"]))
    else:
        converted = system.parameter_units
        data = [["Name", "Value", "Note"]] + [
            [_mono(p.name, st), Paragraph(escape(_parameter_value(p, converted.get(p.name))),
                                          st["cellmono"]),
             Paragraph(_text(p.note), st["cell"])] for p in params]
        out.append(Table(data, colWidths=[30 * mm, 46 * mm, TEXT_WIDTH - 76 * mm],
                         repeatRows=1, hAlign="LEFT", style=TableStyle(_grid_style())))
    return out


def _settings_section(c: _Context, sol: Any) -> list[Flowable]:
    st, s = c.st, c.ws.settings
    methods = ", ".join(words.system_method_title(m) for m in c.ws.system.methods)
    rows = [
        ("Methods", Paragraph(escape(methods), st["cell"])),
        ("Step tolerance", _mono(f"|dx_i| <= xtol + rtol*|x_i|, xtol = {_num(s.xtol)}, "
                                 f"rtol = {_num(s.rtol)}", st)),
        ("Residual tolerance", _mono(f"max |F_i| <= ftol = {_num(s.ftol)}"
                                     + (" (off)" if s.ftol == 0 else ""), st)),
        ("Iteration cap", _mono(f"{s.max_iter} per block", st)),
    ]
    out = [*_heading("3  Settings and start values", st, "h1"), _key_value_table(rows, st),
           Spacer(1, 4)]
    data = [["Unknown", "Start value"]] + [
        [_mono(_labelled(sol.system, u.name), st), _mono(_num(u.x0), st)]
        for u in c.ws.system.unknowns]
    out.append(Table(data, colWidths=[40 * mm, 60 * mm], hAlign="LEFT",
                     style=TableStyle(_grid_style())))
    for m in c.ws.system.methods:
        out.append(Paragraph(f"<b>{escape(words.system_method_title(m))}</b>: "
                             f"{escape(words.SYSTEM_METHOD_SUMMARIES.get(m, ''))}.",
                             st["small"]))
    return out


def _structure_section(c: _Context, sol: Any) -> list[Flowable]:
    st, system = c.st, sol.system
    n = len(system.unknowns)
    head = ["Equation", *system.unknowns]
    body = [[f"({i + 1})", *("x" if on else "·" for on in row)]
            for i, row in enumerate(system.incidence)]
    widths, size = _fitted_widths([head, *body], ["ZT-Mono"] * (n + 1),
                                  min(TEXT_WIDTH, 22 * mm + 18 * mm * n), 8)
    style = _grid_style() + [("FONTNAME", (0, 0), (-1, -1), "ZT-Mono"),
                             ("FONTSIZE", (0, 0), (-1, -1), size),
                             ("ALIGN", (1, 0), (-1, -1), "CENTER")]
    out = [*_heading("4  Structure of the Jacobian", st, "h1"),
           Paragraph(escape(words.JACOBIAN_WORDS[system.jacobian_kind]) + ". An x marks an "
                     "unknown the equation uses (a Jacobian entry that is not identically "
                     "zero).", st["body"]),
           Table([head, *body], colWidths=widths, repeatRows=1, hAlign="LEFT",
                 style=TableStyle(style)),
           Spacer(1, 4),
           Paragraph(escape(words.blocks_text(system.blocks, system.unknowns)) + ".",
                     st["body"])]
    if len(system.blocks) > 1:
        data = [["Block", "Equations", "Unknowns"]] + [
            [str(b + 1), ", ".join(f"({i + 1})" for i in eqs),
             ", ".join(system.unknowns[j] for j in cols)]
            for b, (eqs, cols) in enumerate(system.blocks)]
        out.append(Table(data, colWidths=[20 * mm, 60 * mm, TEXT_WIDTH - 80 * mm],
                         hAlign="LEFT", style=TableStyle(_grid_style(mono_from_col=1))))
    return out


def _results_section(c: _Context, sol: Any) -> list[Flowable]:
    st, system, runs = c.st, sol.system, list(sol.runs)
    head = ["Method", "Conv.", "Stop reason", "Iter.", "Evals", "||F|| at the end"]
    data: list[list[Any]] = [head] + [
        [Paragraph(escape(words.system_method_title(r.method)), st["cell"]),
         "yes" if r.converged else "NO",
         Paragraph(escape(words.reason_short(r.reason)), st["cell"]),  # words, not the code
         str(r.iterations), str(r.evaluations),
         words.number(r.residual_norm, 4)] for r in runs]
    style = _grid_style() + [("FONTNAME", (3, 1), (-1, -1), "ZT-Mono"),
                             ("ALIGN", (3, 0), (-1, -1), "RIGHT")]
    for i, r in enumerate(runs, start=1):
        if not r.converged:
            style.append(("TEXTCOLOR", (1, i), (2, i), FAIL_INK))
    out = [*_heading("5  Results", st, "h1"),
           Table(data, colWidths=[34 * mm, 14 * mm, 36 * mm, 14 * mm, 16 * mm,
                                  TEXT_WIDTH - 114 * mm],
                 repeatRows=1, hAlign="LEFT", style=TableStyle(style)), Spacer(1, 4)]
    for r in runs:
        if not r.converged:
            out += [_boxed(Paragraph(
                f"<b>{escape(words.system_method_title(r.method))} did not converge.</b> "
                f"Stop reason <font name='ZT-Mono'>{escape(r.reason)}</font>: "
                f"{escape(words.system_reason_text(r.reason))}. Its last iterate is not a "
                "root.", st["body"]), FAIL_INK, FAIL_FILL), Spacer(1, 3)]
        else:
            out.append(Paragraph(escape(words.system_run_message(r)), st["small"]))
    # a run that did not converge has no root: its columns say where the values are
    titles = [words.result_column(words.system_method_title(r.method), r.converged)
              for r in runs]

    def grid(header: list[str], rows: list[list[str]], text_columns: int = 1) -> Table:
        """Names (and units) in the first ``text_columns`` columns, left-aligned; numbers
        after them right-aligned under right-aligned headers."""
        widths, size = _fitted_widths([header, *rows], ["ZT-Mono"] * len(header), TEXT_WIDTH,
                                      7.8)
        style = _grid_style() + [("FONTNAME", (0, 1), (-1, -1), "ZT-Mono"),
                                 ("FONTSIZE", (0, 0), (-1, -1), size),
                                 ("ALIGN", (text_columns, 0), (-1, -1), "RIGHT")]
        return Table([header, *rows], colWidths=widths, repeatRows=1, hAlign="LEFT",
                     style=TableStyle(style))

    out += _heading("Root", st, "h2")
    out.append(grid(["Unknown", *titles],
                    [[_labelled(system, n), *(_num(r.root[n]) for r in runs)]
                     for n in system.unknowns]))
    out += _heading("Residual of each equation at the root", st, "h2")
    f_units = system.residual_units(derived=True)
    out.append(grid(["Equation", *(["Unit (SI)"] if f_units else []), *titles],
                    [[f"({i + 1})", *([words.unit_cell(f_units[i])] if f_units else []),
                      *(_num(r.residuals[i]) for r in runs)]
                     for i in range(len(system.equations))], 1 + bool(f_units)))
    out.append(Paragraph("Each equation's left side minus its right side at the method's "
                         "root, in double precision, in that equation's own units (SI base "
                         "units when parameters carry units).",
                         st["small"]))
    if system.definitions:
        values = [system.definition_values([r.root[n] for n in system.unknowns])
                  for r in runs]
        out += _heading("Definitions at the root", st, "h2")
        units = system.definition_units(derived=True)
        if units:
            out.append(grid(["Name", "Unit (SI)", *titles],
                            [[d, words.unit_cell(units.get(d)), *(_num(v[d]) for v in values)]
                             for d in system.definitions], text_columns=2))
            out.append(Paragraph("Defined quantities are in SI base units.", st["small"]))
        else:
            out.append(grid(["Name", *titles],
                            [[d, *(_num(v[d]) for v in values)] for d in system.definitions]))
    return out


def _figure_section(c: _Context, sol: Any) -> list[Flowable]:
    st = c.st
    caption = ("Figure 1. Convergence: ||F|| (solid) and the length of the step taken "
               "(dotted) against iterate k for every method (log scale); a system solved in "
               "blocks starts each block again.")
    try:
        image: Flowable = _figure(lambda ax: draw_system_convergence(ax, list(sol.runs)),
                                  TEXT_WIDTH, 74 * mm)
    except Exception as exc:  # a figure must never cost the checker the numbers
        image = Paragraph(f"(figure could not be drawn: {escape(str(exc))[:200]})", st["small"])
    return [*_heading("6  Convergence", st, "h1"),
            KeepTogether([image, Paragraph(escape(caption), st["caption"])])]


def _iteration_table(run: Any, system: Any, st: dict) -> list[Flowable]:
    header = ["k", "block", *(_labelled(system, n) for n in system.unknowns), "||F||",
              "||step||", "damping"]
    steps = list(run.steps)
    omitted = 0
    if len(steps) > MAX_TABLE_ROWS:
        half = MAX_TABLE_ROWS // 2
        omitted = len(steps) - 2 * half
        steps = steps[:half] + steps[-half:]
    body = [[str(s.k), str(s.block + 1), *(_num(v) for v in s.x.values()),
             words.number(s.residual_norm, 6), words.number(s.step_norm, 6),
             words.number(s.damping, 4) + (" LM" if s.regularised else "")] for s in steps]
    widths, size = _fitted_widths([header, *body], ["ZT-Mono"] * len(header), TEXT_WIDTH, 7.8)
    banner = (f"{words.system_method_title(run.method)} — "
              f"{words.counted(len(run.steps), 'point')} recorded, "
              f"{words.counted(run.iterations, 'iteration')}, stop: "
              f"{words.reason_short(run.reason)}"
              + (f"; {omitted} middle iterates left out here (the CSV holds every one)"
                 if omitted else ""))
    style = _grid_style(header_rows=2) + [
        ("SPAN", (0, 0), (-1, 0)), ("FONTNAME", (0, 2), (-1, -1), "ZT-Mono"),
        ("FONTSIZE", (0, 0), (-1, -1), size), ("ALIGN", (0, 1), (-1, -1), "RIGHT"),
        ("ALIGN", (0, 0), (-1, 0), "LEFT")]
    if not run.converged:
        style.append(("TEXTCOLOR", (0, 0), (-1, 0), FAIL_INK))
    return [Table([[banner] + [""] * (len(header) - 1), header, *body], colWidths=widths,
                  repeatRows=2, hAlign="LEFT", style=TableStyle(style))]


def _iterations_section(c: _Context, sol: Any) -> list[Flowable]:
    out: list[Flowable] = [
        CondPageBreak(60 * mm), *_heading("7  Iteration tables", c.st, "h1"),
        Paragraph("Every iterate of each method at full double precision (the CSV also holds "
                  "every equation's residual at each). ||F|| is the Euclidean norm of the "
                  "residuals of the block being solved; damping is the fraction of the full "
                  "step taken (LM: a Levenberg–Marquardt step where the Jacobian was "
                  "singular).", c.st["small"]), Spacer(1, 4)]
    for run in sol.runs:
        out.append(CondPageBreak(40 * mm))
        out += _iteration_table(run, sol.system, c.st)
        out.append(Spacer(1, 10))
    return out


def _render(c: _Context, sol: Any) -> tuple[bytes, int]:
    buffer = io.BytesIO()
    doc = _SheetTemplate(
        buffer, pagesize=PAGE_SIZE, leftMargin=MARGIN_X, rightMargin=MARGIN_X,
        topMargin=MARGIN_TOP, bottomMargin=MARGIN_BOTTOM,
        title=f"{_calc_number(c.ws)} {_title(c.ws, c.solution.equation)}",
        author=c.ws.calc.prepared_by,
        subject="Calculation sheet: numerical solution of a system of design equations",
        creator=f"{TOOL_NAME} {c.version}")
    story: list[Flowable] = list(_title_block(c))
    for section in (_equations_section, _settings_section, _structure_section,
                    _results_section, _figure_section, _iterations_section):
        story += section(c, sol)
    pages: list[int] = []
    doc.build(story, canvasmaker=_canvas_maker(_furniture(c), pages))
    return buffer.getvalue(), pages[-1]


def write_system_report(
    ws: Worksheet,
    pdf_path: str | os.PathLike[str],
    *,
    solution: Any,
    csv_dir: str | os.PathLike[str] | None = None,
    worksheet_path: str | os.PathLike[str] | None = None,
    overwrite: bool = False,
    progress: Callable[[float], None] | None = None,
) -> ReportResult:
    """Write the calculation sheet of a system (and ``<pdf stem>-runs.csv`` in ``csv_dir``).

    The same checks and failure behaviour as :func:`app.documents.report.write_report`:
    ReportError for a path that cannot be written (before any work), all or nothing.
    """
    _register_fonts()
    pdf = _check_target(Path(pdf_path), overwrite)
    created: list[Path] = []
    try:
        targets: list[Path] = []
        if csv_dir is not None:
            folder = Path(csv_dir)
            created += _prepare_csv_dir(folder)
            targets = [_check_target(folder / f"{pdf.stem}-runs.csv", overwrite)]
        file_name, sha, basis = _worksheet_identity(ws, worksheet_path)
        if progress:
            progress(0.0)
        context = _Context(ws=ws, solution=_title_of(solution), scan=None,
                           file_name=file_name, sha256=sha, hash_basis=basis,
                           when=datetime.now(timezone.utc), version=export.tool_version(),
                           st=_styles())
        data, pages = _render(context, solution)
        files: list[tuple[Path, bytes]] = []
        for target in targets:
            text = io.StringIO()
            system_export.system_csv(solution, text)
            files.append((target, text.getvalue().encode("utf-8")))
        files.append((pdf, data))
        try:
            write_group(files, overwrite=overwrite)
        except OSError as exc:
            from app.documents.report.layout import ReportError

            raise ReportError(f"cannot write the report: {exc}") from None
        if progress:
            progress(1.0)
    except BaseException:
        _remove_empty(created)
        raise
    return ReportResult(pdf_path=pdf, csv_paths=tuple(targets), pages=pages, sha256=sha)
