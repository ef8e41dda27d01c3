"""The numbered sections of the calculation sheet, each built from results it is handed:
title block, equation, settings, results, scan, figures and iterations."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from datetime import datetime
from typing import Any
from xml.sax.saxutils import escape

from reportlab.lib import colors
from reportlab.lib.enums import TA_RIGHT
from reportlab.lib.styles import ParagraphStyle
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

from app.documents import printing, words
from app.documents.report.layout import (
    CAUTION_EDGE,
    CAUTION_FILL,
    FAIL_FILL,
    FAIL_INK,
    HEAD_FILL,
    INK,
    MAX_TABLE_ROWS,
    RESIDUAL_DIGITS,
    RULE,
    TEXT_WIDTH,
    TOOL_NAME,
    _boxed,
    _fitted_widths,
    _grid_style,
    _heading,
    _key_value_table,
    _label,
    _num,
    _text,
)
from app.documents.report.tables import (
    _iteration_table,
    _relative_last_step,
    _residual_mp,
)
from app.documents.report.typeset import (
    _figure,
    _math,
    _math_lines,
)
from app.documents.words import CAUTION, NUMERICAL_DERIVATIVE_NOTE
from app.documents.worksheet import Worksheet
from solvers.records import Run

# ------------------------------------------------------------------- sections


@dataclass(frozen=True)
class _Context:
    ws: Worksheet
    solution: Any
    scan: Any
    file_name: str
    sha256: str
    hash_basis: str
    when: datetime
    version: str
    st: dict
    table: Any = None  # a solved table of inputs (app.documents.tables.TableResults)


def _calc_number(ws: Worksheet) -> str:
    return ws.calc.number.strip() or "(not assigned)"


def _title(ws: Worksheet, equation: Any) -> str:
    if ws.title.strip():
        return ws.title.strip()
    from solvers.equation.lines import one_line

    text = one_line(ws.equation)  # its lines joined by "; ", as the CSV files write it
    text = text if len(text) <= 80 else text[:79] + "…"
    return f"Root of {text} for {equation.unknown}"


def _title_block(c: _Context) -> list[Flowable]:
    st, ws = c.st, c.ws
    lab = st["label"]

    def cell(text: str, style: str = "cell") -> Paragraph:
        return Paragraph(_text(text), st[style])

    data = [
        [cell("Calculation sheet", "label"), Paragraph(_text(_title(ws, c.solution.equation)),
                                                      st["title"]), "", "", "", ""],
        [Paragraph("Calc no.", lab), cell(_calc_number(ws)), Paragraph("Revision", lab),
         cell(ws.calc.revision or "—"), Paragraph("Date", lab), cell(c.when.date().isoformat())],
        [Paragraph("Prepared by", lab), cell(ws.calc.prepared_by), Paragraph("Signature", lab),
         "", Paragraph("Date", lab), ""],
        [Paragraph("Checked by", lab), cell(ws.calc.checked_by), Paragraph("Signature", lab),
         "", Paragraph("Date", lab), ""],
        [Paragraph("Tool", lab), cell(f"{TOOL_NAME} {c.version}"), Paragraph("Worksheet", lab),
         cell(c.file_name, "cellmono"), "", ""],
        [Paragraph("SHA-256", lab), cell(c.sha256, "cellmono"), "", "", "", ""],
        [Paragraph("", lab), cell(c.hash_basis + "; generated "
                                  + c.when.strftime("%Y-%m-%d %H:%M UTC"), "small"),
         "", "", "", ""],
    ]
    widths = [25 * mm, 43 * mm, 23 * mm, 41 * mm, 12 * mm, 26 * mm]
    # Signature rows keep at least 24 pt of writing room and grow with long names.
    table = Table(data, colWidths=widths, minRowHeights=[0, 0, 24, 24, 0, 0, 0])
    table.setStyle(
        TableStyle(
            [
                ("SPAN", (1, 0), (-1, 0)),
                ("SPAN", (3, 4), (-1, 4)),
                ("SPAN", (1, 5), (-1, 5)),
                ("SPAN", (1, 6), (-1, 6)),
                ("BOX", (0, 0), (-1, -1), 1.0, INK),
                ("INNERGRID", (0, 0), (-1, -1), 0.3, RULE),
                ("BACKGROUND", (0, 0), (-1, 0), HEAD_FILL),
                ("VALIGN", (0, 0), (-1, -1), "MIDDLE"),
                ("VALIGN", (0, 2), (-1, 3), "TOP"),
                ("TOPPADDING", (0, 0), (-1, -1), 3),
                ("BOTTOMPADDING", (0, 0), (-1, -1), 3),
                ("TOPPADDING", (0, 0), (-1, 0), 6),
                ("BOTTOMPADDING", (0, 0), (-1, 0), 7),
            ]
        )
    )
    out: list[Flowable] = [table, Spacer(1, 8)]
    out.append(
        _boxed(Paragraph(f"<b>Caution.</b> {escape(CAUTION)}", st["body"]), CAUTION_EDGE,
               CAUTION_FILL)
    )
    if ws.notes.strip():
        out += [*_heading("Purpose and notes", st, "h2"), Paragraph(_text(ws.notes), st["body"])]
    return out


def _equation_section(c: _Context) -> list[Flowable]:
    st, eq = c.st, c.solution.equation
    math_width = TEXT_WIDTH - 44 * mm - 8
    typeset = _math(getattr(eq, "latex", ""), math_width)
    rows: list[tuple[str, Any]] = [
        ("As entered", Paragraph(_text(c.ws.equation), st["cellmono"])),
        ("Typeset", typeset or Paragraph(
            "(mathtext cannot typeset this form legibly; the text as entered governs)",
            st["small"])),
        ("Unknown", Paragraph(f"<font name='ZT-Mono'>{escape(eq.unknown)}</font>"
                              + (f", in <font name='ZT-Mono'>{escape(eq.unknown_unit)}</font> "
                                 "(start values, scan range and roots)"
                                 if getattr(eq, "unknown_unit", None) else ""), st["cell"])),
    ]
    units_used = bool(getattr(eq, "units", None)) or bool(getattr(eq, "unknown_unit", None))
    unchecked = any(r.code == "dimensions_unchecked" for r in getattr(eq, "remarks", ()))
    if units_used or unchecked:
        rows.append(("Dimensions", Paragraph(_text(
            words.DIMENSIONS_UNCHECKED if unchecked else words.DIMENSIONS_CHECKED),
            st["cell"])))
    definitions = getattr(eq, "definition_records", ())
    if definitions:  # lines name = expression before the equation, written out into f
        rows.insert(2, ("Definitions", [Paragraph(
            f"<font name='ZT-Mono'>{_text(' '.join(c.ws.equation[d.start:d.end].split()))}"
            "</font>", st["cell"]) for d in definitions]))
    newton_runs = [r for r in c.solution.runs if r.method == "newton"]
    numerical = getattr(eq, "fprime", None) is None or any(
        r.derivative == "numerical" for r in newton_runs
    )
    if numerical:
        rows.append(("Derivative used by Newton", Paragraph(NUMERICAL_DERIVATIVE_NOTE, st["cell"])))
    else:
        lead = "" if newton_runs else "Newton–Raphson not run; symbolic derivative for reference: "
        # typeset in the quantities as typed (no unit's scale factors: the strip's form);
        # the numbers below are f' of the unknown's number in its unit, as Newton takes it
        used = getattr(eq, "symbolic_derivative", None)
        typed = getattr(eq, "quantity_derivative", used)
        terms = printing.latex_terms(typed)
        images = (_math_lines(f"{words.derivative_heading(eq.unknown)} =", terms, math_width)
                  if terms else None)
        if images is None:
            lead += "(too long to typeset legibly) "
        # Our own syntax (ln, log10, ^), spaced between factors so a line breaks there and
        # never inside a number.
        formula = printing.breakable(printing.equation_text(eq.derivative))
        values = "with the parameter values"
        if typed is not used and getattr(eq, "unknown_unit", None):
            values += (f", and {eq.unknown} as its number in {eq.unknown_unit} (as Newton "
                       "takes it)")
        text = Paragraph(
            _text(f"{lead}{values}: ") + f"<font name='ZT-Mono'>"
            f"{_text(formula)}</font>", st["formula"]
        )
        rows.append(("Derivative used by Newton", [*images, text] if images else text))
    notes = tuple(getattr(eq, "notes", ()) or ()) + words.unit_notes(
        getattr(eq, "remarks", ()))
    if notes:
        rows.append(("Reading of the text", Paragraph(_text("; ".join(notes)), st["cell"])))
    out: list[Flowable] = [*_heading("1  Equation", st, "h1"), _key_value_table(rows, st)]

    out += _heading("2  Parameters", st, "h1")
    params = c.ws.parameters
    converted = getattr(eq, "units", None) or {}
    if not params:
        out.append(Paragraph("The equation has no named parameters.", st["body"]))
    elif any(p.unit for p in params):
        # as entered, and as the equation used it (SI, a derived unit where simpler:
        # W/(m^2*K) rather than kg/(s^3*K)), side by side
        def si(p: Any) -> str:
            got = converted.get(p.name)
            if got is None:
                return ""
            return words.si_measure_text(got, _num)

        data = [["Name", "Value", "Unit", "In SI units", "Note"]] + [
            [Paragraph(f"<font name='ZT-Mono'>{escape(p.name)}</font>", st["cell"]),
             Paragraph(escape(_num(p.value)), st["cellmono"]),
             Paragraph(escape(p.unit or "(none)"), st["cellmono"]),
             Paragraph(escape(si(p)), st["cellmono"]),
             Paragraph(_text(p.note), st["cell"])]
            for p in params
        ]
        widths = [24 * mm, 34 * mm, 22 * mm, 40 * mm, TEXT_WIDTH - 120 * mm]
    else:
        data = [["Name", "Value", "Note"]] + [
            [Paragraph(f"<font name='ZT-Mono'>{escape(p.name)}</font>", st["cell"]),
             Paragraph(escape(_num(p.value)), st["cellmono"]),
             Paragraph(_text(p.note), st["cell"])]
            for p in params
        ]
        widths = [30 * mm, 46 * mm, TEXT_WIDTH - 76 * mm]
    if params:
        out.append(Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT",
                         style=TableStyle(_grid_style())))
    return out


def _settings_section(c: _Context) -> list[Flowable]:
    # The settings the runs actually used (a polished solution carries its own).
    st, s, sv = c.st, c.solution.worksheet.settings, c.solution.start

    def value(v: Any, entered: Any) -> Paragraph:
        text = escape(_num(v) if not isinstance(v, tuple) else f"[{_num(v[0])}, {_num(v[1])}]")
        how = "as entered" if entered is not None else "chosen by the program (see notes)"
        return Paragraph(f"<font name='ZT-Mono'>{text}</font>  <i>{how}</i>", st["cell"])

    def mono(text: str) -> Paragraph:
        return Paragraph(f"<font name='ZT-Mono'>{escape(text)}</font>", st["cell"])

    kinds = _method_kinds(s.methods)
    unit = getattr(c.solution.equation, "unknown_unit", None)
    in_unit = f" [{unit}]" if unit else ""  # start values and the range are in x's unit
    rows: list[tuple[str, Any]] = [
        ("Methods", Paragraph(escape(", ".join(_label(m) for m in s.methods)), st["cell"])),
    ]
    if kinds & {"open", "two_point"}:
        rows.append((f"Initial guess x0{in_unit}", value(sv.x0, s.x0)))
    if "two_point" in kinds:
        rows.append((f"Second point x1 (secant){in_unit}", value(sv.x1, s.x1)))
    if "bracket" in kinds or sv.bracket is not None:
        rows.append((f"Bracket [a, b]{in_unit}",
                     value(sv.bracket, s.bracket) if sv.bracket is not None
                     else Paragraph("none: bracketing methods could not start", st["cell"])))
    rows += [
        (f"Scan range{in_unit}", mono(f"[{_num(c.ws.scan[0])}, {_num(c.ws.scan[1])}]")
         if c.ws.scan else Paragraph("not set", st["cell"])),
        ("Step tolerance xtol", mono(_num(s.xtol))),
        ("Relative tolerance rtol", mono(_num(s.rtol))),
        ("Residual tolerance ftol", mono(_num(s.ftol) + ("  (test off)" if s.ftol == 0 else ""))),
        ("Maximum iterations", mono(str(s.max_iter))),
        ("Newton damping", mono(_num(s.damping) + ("  (full Newton step)" if s.damping == 1
                                                  else "  (fraction of the Newton step)"))),
        ("Stopping rule", Paragraph(
            "A run stops when |Δx| ≤ xtol + rtol·|x|, when |f(x)| ≤ ftol, when f(x) = 0 "
            "exactly, or after the maximum number of iterations (then it has not converged).",
            st["cell"])),
    ]
    notes = words.start_notes(sv, getattr(c.solution.equation, "unknown_unit", None))
    if notes:
        rows.append(("Start value notes", Paragraph(_text("; ".join(notes)), st["cell"])))
    return [*_heading("3  Method settings", st, "h1"), _key_value_table(rows, st)]


def _method_kinds(methods: Sequence[str]) -> set[str]:
    from solvers.methods import METHODS

    return {METHODS[m].kind for m in methods if m in METHODS}


def _results_section(c: _Context) -> list[Flowable]:
    st, sol = c.st, c.solution
    runs = list(sol.runs)
    unit = getattr(sol.equation, "unknown_unit", None)
    head = ["Method", f"Root x [{unit}]" if unit else "Root x", "Conv.", "Stop reason", "Iter.",
            "Evals", "Order"]
    data: list[list[Any]] = [head]
    for r in runs:
        order = r.order
        data.append([
            Paragraph(escape(_label(r.method)), st["cell"]),
            words.root_cell(r, _num),  # "—" where it did not converge (box below)
            "yes" if r.converged else "NO",
            # words, not the code (the code stands in the line under the table)
            Paragraph(escape(words.reason_short(r.reason)), st["cell"]),
            str(r.iterations),
            str(r.evaluations),
            words.order_text(order),
        ])
    widths = [30 * mm, 47 * mm, 17 * mm, 31 * mm, 13 * mm, 13 * mm, 19 * mm]
    widths[-1] += TEXT_WIDTH - sum(widths)
    style = _grid_style()
    style += [
        ("FONTNAME", (1, 1), (1, -1), "ZT-Mono"),
        ("ALIGN", (4, 0), (-1, -1), "RIGHT"),
    ]
    for i, r in enumerate(runs, start=1):
        if not r.converged:
            style += [("TEXTCOLOR", (2, i), (3, i), FAIL_INK),
                      ("FONTNAME", (2, i), (2, i), "ZT-Sans-Bold")]
    out: list[Flowable] = [
        *_heading("4  Results", st, "h1"),
        Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT", style=TableStyle(style)),
        Spacer(1, 4),
    ]
    for r in runs:
        if not r.converged:
            detail = words.detail_text(r.detail)
            detail = f" {detail}." if detail else ""
            out += [Spacer(1, 3), _boxed(Paragraph(
                f"<b>{escape(_label(r.method))} did not converge.</b> Stop reason "
                f"<font name='ZT-Mono'>{escape(r.reason)}</font>: "
                f"{escape(words.reason_text(r.reason))}.{_text(detail)} Its last iterate "
                f"<font name='ZT-Mono'>{escape(_num(r.root))}</font> is not a root.",
                st["body"]), FAIL_INK, FAIL_FILL)]
    out.append(Spacer(1, 4))
    for r in runs:
        account = "; ".join(t for t in (words.detail_text(r.detail),
                                        words.detail_text(r.note)) if t)
        out.append(Paragraph(
            f"<b>{escape(_label(r.method))}</b> <font name='ZT-Mono'>{escape(r.reason)}</font>: "
            f"{escape(words.reason_text(r.reason))}."
            + (f" <i>Record:</i> {_text(account)}." if account else ""),
            ParagraphStyle("reason", parent=st["small"], spaceAfter=1.5, leftIndent=8,
                           firstLineIndent=-8)))

    out += _heading("Verification of each root", st, "h2")
    # f's unit on both residual columns, as the iteration tables head f(x_k)
    in_f = _unit_suffix(sol.equation.residual_unit(derived=True))
    vhead = [Paragraph(escape(t), st["label"]) for t in (
        "Method", f"f(root){in_f}, double precision, as the method computed it",
        f"f(root){in_f} evaluated at {RESIDUAL_DIGITS} digits (mpmath)",
        "last step |Δx| / |x|")]
    vdata: list[list[Any]] = [vhead]
    for r in runs:
        vdata.append([Paragraph(escape(_label(r.method)), st["cell"]), _num(r.residual),
                      _residual_mp(sol.equation, r.root), _relative_last_step(r)])
    vwidths = [30 * mm, 48 * mm, 56 * mm, TEXT_WIDTH - 134 * mm]
    vstyle = _grid_style() + [("FONTNAME", (1, 1), (-1, -1), "ZT-Mono"),
                              ("FONTSIZE", (0, 0), (-1, 0), 7.6)]
    out.append(Table(vdata, colWidths=vwidths, repeatRows=1, hAlign="LEFT",
                     style=TableStyle(vstyle)))
    out.append(Paragraph(
        f"The {RESIDUAL_DIGITS}-digit residual is f evaluated again at the returned double by "
        "arbitrary-precision arithmetic, independent of the floating-point evaluation each "
        "method used; a residual at rounding level of f confirms the root to double precision.",
        st["small"]))

    converged = [r for r in runs if r.converged and math.isfinite(r.root)]
    if sol.agreement_digits is not None:
        spread = max(r.root for r in converged) - min(r.root for r in converged)
        unit = getattr(sol.equation, "unknown_unit", None)  # the roots' unit, said once
        agree = (
            f"<b>Agreement.</b> {escape(words.agreement_text(sol))} Largest difference "
            f"between their roots: <font name='ZT-Mono'>{escape(_num(spread))}</font>"
            f"{escape(' ' + unit if unit else '')}."
        )
    else:
        agree = f"<b>Agreement.</b> {escape(words.agreement_text(sol))}"
    out += [Spacer(1, 4), Paragraph(agree, st["body"])]
    if getattr(sol.equation, "definitions", ()):
        out += _heading("Definitions at each root", st, "h2")
        values = [sol.equation.definition_values(r.root) for r in runs]
        units = sol.equation.definition_units(derived=True)  # {} when the equation has no units
        unit_column = ["Unit (SI)"] if units else []
        texts = 1 + len(unit_column)  # name (and unit) columns, left; numbers right
        body = [[name, *([words.unit_cell(units.get(name))] if units else []),
                 *(_num(v[name]) for v in values)] for name in sol.equation.definitions]
        # widths for the method's title and the numbers (every header measured in bold)
        widths, size = _fitted_widths([["Name", *unit_column, *(_label(r.method) for r in runs)],
                                       *body], ["ZT-Mono"] * (texts + len(runs)), TEXT_WIDTH,
                                      8)
        # a run that did not converge has no root: its column says where the values are,
        # wrapped under the method's title
        right = ParagraphStyle("head_right", parent=st["label"], alignment=TA_RIGHT,
                               textColor=INK, fontSize=8, leading=9.8)
        head = ["Name", *unit_column,
                *(Paragraph(escape(words.result_column(_label(r.method), r.converged)), right)
                  for r in runs)]
        style = _grid_style(mono_from_col=0) + [("FONTSIZE", (0, 1), (-1, -1), size),
                                                ("ALIGN", (texts, 0), (-1, -1), "RIGHT")]
        out.append(Table([head, *body], colWidths=widths, repeatRows=1, hAlign="LEFT",
                         style=TableStyle(style)))
        if units:
            out.append(Paragraph("Defined quantities are in SI base units.", st["small"]))
    return out


def _unit_suffix(unit: str | None) -> str:
    """' [unit]' after a heading or a number for a unit that is known, '' for none (a
    dimensionless residual, plain numbers, the dimension check off)."""
    return f" [{unit}]" if unit else ""


# Poles, jumps and gaps are listed in one table cell; reportlab splits a cell across pages
# slowly (34,000 gaps of log10(cos x) on a range 1e200 wide: minutes, 1,000: 50 s)
MAX_LISTED = 100


def _shown_indices(count: int, limit: int | None = None) -> list[int | None]:
    """The entries of a list of ``count`` the sheet shows: all up to ``limit`` (default
    MAX_TABLE_ROWS), else the first and last half of that with None between them, where
    the rest is said to be left out (reportlab lays out a table of 10^5 rows over tens
    of minutes: a scan of a wide range finds up to 100,000 roots)."""
    limit = MAX_TABLE_ROWS if limit is None else limit
    if count <= limit:
        return list(range(count))
    half = limit // 2
    return [*range(half), None, *range(count - half, count)]


def _scan_section(c: _Context) -> list[Flowable]:
    st, sc, ws = c.st, c.scan, c.ws
    out: list[Flowable] = [*_heading("5  Roots in the scan range", st, "h1")]
    if sc is None:
        why = ("<b>No scan range was set in the worksheet</b>" if ws.scan is None else
               "<b>The scan of the worksheet's range was not run for this sheet</b>")
        out.append(_boxed(Paragraph(
            f"{why}, so no search for other roots was made: the methods' roots above may "
            "not be the only ones.", st["body"]), CAUTION_EDGE, CAUTION_FILL))
    else:
        samples = getattr(sc, "samples", None)
        sampled = f" with {samples} samples" if samples else ""
        x_unit = getattr(c.solution.equation, "unknown_unit", None)
        in_unit = escape(f" {x_unit}" if x_unit else "")  # each end with it: [0.01 in, 4 in]
        out.append(Paragraph(
            f"The range [<font name='ZT-Mono'>{escape(_num(sc.a))}</font>{in_unit}, "
            f"<font name='ZT-Mono'>{escape(_num(sc.b))}</font>{in_unit}] was scanned{sampled} "
            f"for every real root: {len(sc.roots)} found.", st["body"]))
        out.append(Spacer(1, 4))
        if sc.roots:
            unit = getattr(c.solution.equation, "unknown_unit", None)
            f_unit = c.solution.equation.residual_unit(derived=True)
            data: list[list[Any]] = [["#", f"Root x{_unit_suffix(unit)}",
                                      f"Residual f(x){_unit_suffix(f_unit)}", "Mult.",
                                      "Confirmed by"]]
            gap_row = None
            for i in _shown_indices(len(sc.roots)):
                if i is None:  # a scan of a wide range: the middle roots are in the CSV
                    gap_row = len(data)
                    data.append([words.left_out_text(len(sc.roots) - MAX_TABLE_ROWS, "root"),
                                 "", "", "", ""])
                    continue
                root = sc.roots[i]
                how = words.confirmed_text(root)
                located = words.located_text(root)
                if located:
                    how = f"{how} (located by {located})" if how else f"located by {located}"
                data.append([str(i + 1), _num(root.x), _num(root.residual),
                             str(root.multiplicity), Paragraph(_text(how or "—"), st["small"])])
            widths = [8 * mm, 44 * mm, 44 * mm, 12 * mm]
            widths.append(TEXT_WIDTH - sum(widths))
            style = _grid_style() + [("FONTNAME", (1, 1), (2, -1), "ZT-Mono"),
                                     ("ALIGN", (3, 0), (3, -1), "RIGHT")]
            if gap_row is not None:
                style += [("SPAN", (0, gap_row), (-1, gap_row)),
                          ("ALIGN", (0, gap_row), (-1, gap_row), "CENTER"),
                          ("FONTNAME", (0, gap_row), (-1, gap_row), "ZT-Sans-Oblique")]
            out.append(Table(data, colWidths=widths, repeatRows=1, hAlign="LEFT",
                             style=TableStyle(style)))
        rows: list[tuple[str, Any]] = []

        def xs(values: Sequence[float], what: str) -> Paragraph:
            limit = 2 * (MAX_LISTED // 2)
            shown = [words.left_out_text(len(values) - limit, what) if i is None
                     else _num(values[i]) for i in _shown_indices(len(values), MAX_LISTED)]
            return Paragraph(escape(", ".join(shown) if shown else "none"), st["cellmono"])

        in_x = _unit_suffix(x_unit)  # where poles, jumps and gaps lie: the unknown's unit
        rows.append((f"Poles{in_x}", xs(list(sc.poles), "pole")))
        rows.append((f"Jumps (discontinuities){in_x}",
                     xs(list(getattr(sc, "discontinuities", [])), "jump")))
        gaps = list(getattr(sc, "gaps", []))
        shown_gaps = [words.left_out_text(len(gaps) - 2 * (MAX_LISTED // 2), "gap")
                      if i is None else f"[{_num(gaps[i][0])}, {_num(gaps[i][1])}]"
                      for i in _shown_indices(len(gaps), MAX_LISTED)]
        rows.append((f"Gaps (f undefined){in_x}", Paragraph(escape(
            "; ".join(shown_gaps) if gaps else "none"), st["cellmono"])))
        warnings = words.scan_warnings(sc)
        if warnings:
            rows.append(("Scan warnings", Paragraph(_text("; ".join(warnings)), st["cell"])))
        out += [Spacer(1, 4), _key_value_table(rows, st)]

    out += _heading("Design value", st, "h2")
    sel = ws.selection
    if sel is None:
        out.append(Paragraph(
            "No root was selected as the design value in the worksheet: the checker must "
            "confirm which root applies.", st["body"]))
    else:
        reason = _text(sel.reason) if sel.reason.strip() else "<i>no reason given</i>"
        # the design value is the sheet's answer: it says its unit, as the window's does
        unit = getattr(c.solution.equation, "unknown_unit", None)
        in_unit = escape(f" {unit}" if unit else "")
        where = ""
        if sc is not None and sc.roots:
            nearest = min(range(len(sc.roots)), key=lambda i: abs(sc.roots[i].x - sel.root))
            where = (f" It is nearest scanned root #{nearest + 1} "
                     f"(difference <font name='ZT-Mono'>"
                     f"{escape(_num(sel.root - sc.roots[nearest].x))}</font>{in_unit}).")
        out.append(_boxed(Paragraph(
            f"<b>Selected design value:</b> {escape(c.solution.equation.unknown)} = "
            f"<font name='ZT-Mono'>{escape(_num(sel.root))}</font>{in_unit}.{where}<br/>"
            f"<b>Reason:</b> {reason}", st["body"]), INK, colors.white))
    return out


def _path_run(solution: Any, ws: Worksheet) -> Run | None:
    """The run whose path the function figure shows: the converged run nearest the design
    value (or the first converged run), else the first run with iterates."""
    runs = [r for r in solution.runs if r.steps]
    converged = [r for r in runs if r.converged and math.isfinite(r.root)]
    if converged and ws.selection is not None:
        return min(converged, key=lambda r: abs(r.root - ws.selection.root))
    if converged:
        return converged[0]
    return runs[0] if runs else None


def _plot_range(c: _Context, run: Run | None) -> tuple[float, float]:
    if c.scan is not None:
        return float(c.scan.a), float(c.scan.b)
    if c.solution.start.bracket is not None:
        # with every converged root: an open method may converge outside the bracket
        # (as the window's plot does; the bracket alone left that root off the figure)
        roots = [r.root for r in c.solution.runs if r.converged and math.isfinite(r.root)]
        a, b = c.solution.start.bracket
        if all(a <= x <= b for x in roots):
            return a, b
        lo, hi = min(a, b, *roots), max(a, b, *roots)
        pad = 0.1 * (hi - lo)
        return lo - pad, hi + pad
    xs = [s.x for s in (run.steps if run else []) if math.isfinite(s.x)]
    if xs:
        lo, hi = min(xs), max(xs)
        pad = 0.1 * (hi - lo) or 0.1 * max(abs(lo), 1.0)
        return lo - pad, hi + pad
    return -1.0, 1.0


def _figures_section(c: _Context) -> list[Flowable]:
    from app.documents import figures

    st, sol = c.st, c.solution
    out: list[Flowable] = [CondPageBreak(95 * mm), *_heading("6  Figures", st, "h1")]
    run = _path_run(sol, c.ws)
    a, b = _plot_range(c, run)
    f, unknown = sol.equation.f, sol.equation.unknown
    where = ("the scan range" if c.scan is not None
             else "the bracket and the roots, or the iterates' span")
    path = f" and the path of {_label(run.method)}" if run is not None else ""
    unit = getattr(sol.equation, "unknown_unit", None)
    in_unit = f" {unit}" if unit else ""  # the range in the axis's unit, as its label says
    captions = (
        f"Figure 1. The function whose root is sought (left side minus right side) against "
        f"{sol.equation.unknown}, over {where} [{_num(a)}, {_num(b)}]{in_unit}, with the "
        "roots, poles and "
        f"jumps the scan found{path}.",
        f"Figure 2. Convergence: {figures.convergence_label('residual', unknown)} against "
        "iterate k for every method (log scale).",
    )
    draws = (
        lambda ax: figures.draw_function(ax, f, a, b, scan=c.scan, run=run, unknown=unknown,
                                         unit=getattr(sol.equation, "unknown_unit", None),
                                         f_unit=sol.equation.residual_unit(derived=True)),
        lambda ax: figures.draw_convergence(ax, list(sol.runs), unknown=unknown,
                                            unit=getattr(sol.equation, "unknown_unit", None),
                                            f_unit=sol.equation.residual_unit(derived=True)),
    )
    for caption, draw in zip(captions, draws, strict=True):
        try:
            image: Flowable = _figure(draw, TEXT_WIDTH, 74 * mm)
        except Exception as exc:  # a figure must never cost the checker the numbers
            image = Paragraph(f"(figure could not be drawn: {escape(str(exc))[:200]})",
                              st["small"])
        out.append(KeepTogether([image, Paragraph(escape(caption), st["caption"])]))
    return out


def _iterations_section(c: _Context) -> list[Flowable]:
    st = c.st
    out: list[Flowable] = [
        CondPageBreak(60 * mm),
        *_heading("7  Iteration tables", st, "h1"),
        Paragraph(
            "Every point each method evaluated, at full double precision (the same digits as "
            "the runs CSV). k = 0 (and k = 1 for the two-point and bracketing methods) are the "
            "starting points; Δx is the step that produced the iterate; bracket lo/hi are the "
            "ends held after it.", st["small"]),
        Spacer(1, 4),
    ]
    for run in c.solution.runs:
        out.append(CondPageBreak(40 * mm))  # never a banner and one row at a page foot
        out += _iteration_table(run, st, c.solution.equation.unknown,
                                getattr(c.solution.equation, "unknown_unit", None),
                                c.solution.equation.residual_unit(derived=True))
        out.append(Spacer(1, 10))
    return out
