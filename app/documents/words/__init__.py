"""Every sentence and label zerotrace prints, written once.

The numerics core (:mod:`solvers`) records codes and numbers; this package turns them
into words, and the CLI, the window and the calculation sheet all take their words
from here (``from app.documents import words``; every name below is one of the
package's), so a method, a stop reason or a root reads the same in all three. The
caution is here, in this file and nowhere else; the rest is kept by subject:
:mod:`.numbers`, :mod:`.runs` (one solve), :mod:`.scans`, :mod:`.remarks` (the
equation's remarks, units), :mod:`.systems` (and definitions), :mod:`.tables`.

* the caution (:data:`CAUTION`, and :data:`CAUTION_LINE` for the status bar);
* method titles and in-sentence labels (:func:`method_title`, :func:`method_label`);
* stop reasons (:data:`REASON_TEXT`), the detail of a run (:func:`detail_text`) and a
  run's one-line account (:func:`run_message`);
* how each start value was chosen (:func:`start_text`, :func:`start_notes`);
* the agreement of the converged methods (:func:`agreement_text`);
* the words for the codes of :mod:`solvers.residual` (:data:`RESIDUAL_WORDS`);
* what a scan found worth a warning (:func:`scan_warnings`, from ``Scan.details``), how it
  confirmed each root (:func:`confirmed_text`) and what located it (:func:`located_text`);
* one number-formatting family: :func:`number` (``figures`` significant figures, the
  setting the user chooses) and :func:`exact` (every digit, ``repr``), both writing a
  NaN as "undefined" and an infinity as "+inf" / "-inf". Machine files (CSV, JSON)
  keep Python's exact ``repr`` (see :mod:`app.documents.export`).

The caution's full text has no comma, so its CSV metadata line stays a plain
``# caution: ...`` line (a line with a comma must be quoted to stay one spreadsheet cell).
"""

from __future__ import annotations

from app.documents.words.numbers import (
    DEFAULT_FIGURES,
    UNDEFINED,
    clipped,
    counted,
    exact,
    figures_word,
    measured_text,
    not_a_number,
    number,
    order_text,
    si_measure_text,
    si_unit_text,
    si_value_shown,
    significant,
    sweep_text,
)
from app.documents.words.remarks import (
    DIMENSIONS_CHECKED,
    DIMENSIONS_UNCHECKED,
    HELP_UNITS,
    NO_DERIVATIVE_WORDS,
    REMARK_WORDS,
    SUSPECT_REMARKS,
    UNIT_REMARKS,
    offset_sums_text,
    remark_text,
    remarks_text,
    unit_notes,
)
from app.documents.words.runs import (
    DETAIL_TEXT,
    IN_UNKNOWN_UNIT,
    METHOD_SUMMARIES,
    METHOD_TITLES,
    NEED_TEXT,
    NOT_A_ROOT,
    NUMERICAL_DERIVATIVE_NOTE,
    REASON_SHORT,
    REASON_TEXT,
    RESIDUAL_WORDS,
    START_TEXT,
    SYSTEM_REASON_TEXT,
    agreement_text,
    derivative_heading,
    detail_text,
    iterate_headings,
    last_iterate_line,
    method_flag,
    method_label,
    method_names,
    method_needs_text,
    method_summary,
    method_title,
    polish_note,
    reason_legend,
    reason_short,
    reason_text,
    residual_name,
    residual_units,
    root_cell,
    root_row_text,
    run_account,
    run_message,
    start_notes,
    start_text,
    stop_line,
    system_reason_text,
)
from app.documents.words.scans import (
    CONFIRMED_WORDS,
    LOCATOR_LABELS,
    SCAN_DETAIL_TEXT,
    confirmed_text,
    left_out_text,
    located_text,
    scan_detail_text,
    scan_warnings,
)
from app.documents.words.systems import (
    EVALUATIONS_OF,
    JACOBIAN_WORDS,
    LAST_ITERATE,
    SYSTEM_METHOD_SUMMARIES,
    SYSTEM_METHOD_TITLES,
    blocks_text,
    definitions_line,
    result_column,
    system_method_title,
    system_run_message,
    unit_cell,
)
from app.documents.words.tables import (
    BATCH_NOTE_TEXT,
    batch_note_text,
    batch_summary,
    shared_bracket_advice,
)

CAUTION = (
    "zerotrace gives a numerical solution of the equation exactly as it was entered; it "
    "does not show that the equation is the right one for the design. Check the equation "
    "and every input and its units before relying on the result. The result must be "
    "reviewed by a qualified engineer; local codes and licensed engineering practice govern."
)

# The status bar's one-line form: the same three demands, no more.
CAUTION_LINE = (
    "Check the equation, inputs and units. Results need review by a qualified engineer; "
    "local codes and licensed engineering practice govern."
)

__all__ = [
    "CAUTION",
    "CAUTION_LINE",
    "DEFAULT_FIGURES",
    "UNDEFINED",
    "clipped",
    "counted",
    "exact",
    "figures_word",
    "measured_text",
    "not_a_number",
    "number",
    "significant",
    "order_text",
    "si_unit_text",
    "si_value_shown",
    "si_measure_text",
    "sweep_text",
    "DETAIL_TEXT",
    "IN_UNKNOWN_UNIT",
    "METHOD_SUMMARIES",
    "METHOD_TITLES",
    "NEED_TEXT",
    "NOT_A_ROOT",
    "NUMERICAL_DERIVATIVE_NOTE",
    "REASON_SHORT",
    "REASON_TEXT",
    "RESIDUAL_WORDS",
    "START_TEXT",
    "SYSTEM_REASON_TEXT",
    "agreement_text",
    "detail_text",
    "iterate_headings",
    "last_iterate_line",
    "method_flag",
    "method_label",
    "method_names",
    "method_needs_text",
    "method_summary",
    "method_title",
    "reason_legend",
    "reason_short",
    "reason_text",
    "residual_name",
    "residual_units",
    "derivative_heading",
    "root_cell",
    "root_row_text",
    "run_account",
    "run_message",
    "polish_note",
    "start_notes",
    "start_text",
    "stop_line",
    "system_reason_text",
    "CONFIRMED_WORDS",
    "LOCATOR_LABELS",
    "SCAN_DETAIL_TEXT",
    "confirmed_text",
    "left_out_text",
    "located_text",
    "scan_detail_text",
    "scan_warnings",
    "DIMENSIONS_CHECKED",
    "DIMENSIONS_UNCHECKED",
    "HELP_UNITS",
    "NO_DERIVATIVE_WORDS",
    "REMARK_WORDS",
    "SUSPECT_REMARKS",
    "UNIT_REMARKS",
    "offset_sums_text",
    "remark_text",
    "remarks_text",
    "unit_notes",
    "EVALUATIONS_OF",
    "JACOBIAN_WORDS",
    "LAST_ITERATE",
    "SYSTEM_METHOD_SUMMARIES",
    "SYSTEM_METHOD_TITLES",
    "blocks_text",
    "definitions_line",
    "result_column",
    "system_method_title",
    "system_run_message",
    "unit_cell",
    "BATCH_NOTE_TEXT",
    "batch_note_text",
    "batch_summary",
    "shared_bracket_advice",
]
