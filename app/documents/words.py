"""Every sentence and label zerotrace prints, written once.

The numerics core (:mod:`solvers`) records codes and numbers; this module turns them
into words, and the CLI, the window and the calculation sheet all take their words
from here, so a method, a stop reason or a root reads the same in all three:

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

import math
from collections.abc import Callable, Iterable, Mapping, Sequence
from typing import Any

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

# ----------------------------------------------------------------- numbers

# Significant figures the window shows until the user chooses another count.
DEFAULT_FIGURES = 10
UNDEFINED = "undefined"  # a NaN: f or x has no value there (domain error, 0/0)


def _special(value: float) -> str | None:
    if math.isnan(value):
        return UNDEFINED
    if math.isinf(value):
        return "+inf" if value > 0 else "-inf"
    return None


def number(value: float | int | None, figures: int = DEFAULT_FIGURES, blank: str = "") -> str:
    """``value`` with ``figures`` significant figures.

    ``blank`` for None, whole numbers (and booleans) as they are, "undefined" for NaN,
    "+inf" / "-inf" for infinities.
    """
    if value is None:
        return blank
    if isinstance(value, (bool, int)):
        return str(value)
    value = float(value)
    return _special(value) or f"{value:.{figures}g}"


def exact(value: float | int | None, blank: str = "") -> str:
    """Every digit: ``repr`` of a float (reads back as the same double), with the same
    words as :func:`number` for None, NaN and infinities."""
    if value is None:
        return blank
    if isinstance(value, (bool, int)):
        return str(value)
    value = float(value)
    return _special(value) or repr(value)


def measured_text(value: Any, converted: Any,
                  show: Callable[[Any], str] | None = None) -> str:
    """A parameter's value as entered: ``150 mm (= 0.15 m)`` when it carries a unit
    (``converted``: a :class:`solvers.units.Converted`), ``350 m`` when that unit is
    already SI, the number alone without one. The SI unit is written with a derived unit
    where that is simpler (:func:`solvers.units.reading.unit_text`, ``derived``).
    ``show`` formats the numbers (every digit by default)."""
    show = show or exact
    if converted is None:
        return show(value)
    si = si_unit_text(converted)
    if converted.unit in (converted.si_unit, si):  # already in SI: nothing to convert
        return f"{show(converted.value)} {converted.unit}"
    return (f"{show(converted.value)} {converted.unit} "
            f"(= {show(si_value_shown(converted))} {si})")


def si_value_shown(converted: Any) -> float:
    """A converted value's SI magnitude as people read it, to 15 significant figures: 15 ft
    is 4.572 m, not the double nearest the product, 4.571999999999999 (that double is what
    the solve uses and the JSON keeps)."""
    return float(f"{converted.si_value:.15g}")


def si_unit_text(converted: Any) -> str:
    """The SI unit of a converted value for people: a derived unit for the compositions
    engineers use (W/(m^2*K), not kg/(s^3*K)); files keep ``converted.si_unit``, in base
    units."""
    from solvers.units.reading import unit_text

    return unit_text(converted.dimension, derived=True) or converted.si_unit


def order_text(order: float | None, blank: str = "—") -> str:
    """An observed order of convergence (2.00 quadratic, 1.62 secant, 1.00 linear)."""
    return blank if order is None else f"{order:.2f}"


def figures_word(n: int) -> str:
    return counted(n, "significant figure")


def counted(n: int, noun: str, plural: str | None = None) -> str:
    """``n`` and its noun, singular for one: "1 cell", "3 cells", "1 iteration", "2 blocks"
    (``plural`` where adding an s is wrong: "1 match", "2 matches")."""
    return f"{n} {noun if n == 1 else plural or noun + 's'}"


def sweep_text(name: str, start: float, stop: float, count: int, *, unit: str = "",
               log: bool = False) -> str:
    """What a sweep varies, for people: "p from -1 to 1 in 41 values, linear spacing".

    START and STOP as numbers a person types (15 significant figures: no float noise,
    no type names); the values themselves stay exact in the data cells."""
    u = f" {unit}" if unit else ""
    return (f"{name} from {start:.15g}{u} to {stop:.15g}{u} in {counted(count, 'value')}, "
            f"{'logarithmic' if log else 'linear'} spacing; each row starts from the "
            "previous row's root")


# ----------------------------------------------------------------- methods

# Titles, as a heading, a legend entry or a table cell names a method.
METHOD_TITLES: dict[str, str] = {
    "newton": "Newton–Raphson",  # en dash
    "secant": "Secant",
    "false_position": "False position",
    "illinois": "Illinois",
    "bisection": "Bisection",
    "brent": "Brent",
}
# Methods named after people keep their capital inside a sentence.
_PROPER = frozenset({"newton", "illinois", "brent"})


def method_title(name: str) -> str:
    """The method's name as a title ("Newton–Raphson", "Secant", "False position")."""
    title = METHOD_TITLES.get(name, name.replace("_", " "))
    return title[:1].upper() + title[1:]


def method_label(name: str) -> str:
    """The method's name inside a sentence ("… the secant and Newton–Raphson")."""
    title = method_title(name)
    return title if name in _PROPER else title.lower()


# How each method works, in one line (the window's tooltips).
METHOD_SUMMARIES: dict[str, str] = {
    "newton": "tangent steps from x0, using the derivative shown under the equation",
    "secant": "chord steps from x0 and x1, no derivative needed",
    "false_position": "keeps a bracket [a, b] with a sign change; chord inside it",
    "illinois": "false position that halves the stale end's value, so neither end sticks",
    "bisection": "halves the bracket each step: slow, never fails on a sign change",
    "brent": "inverse quadratic steps inside the bracket, bisection as a safeguard",
}


def method_summary(name: str) -> str:
    return METHOD_SUMMARIES.get(name, "")


def method_flag(name: str) -> str:
    """The method as the ``--method`` flag spells it: ``false-position``."""
    return name.replace("_", "-")


def method_names(methods: Iterable[str]) -> str:
    """In-sentence labels joined: "Newton–Raphson, secant and false position"."""
    labels = [method_label(m) for m in methods]
    if len(labels) <= 1:
        return "".join(labels)
    return ", ".join(labels[:-1]) + " and " + labels[-1]


# ----------------------------------------------------------------- stop reasons

def residual_name(unknown: str) -> str:
    """The letter for the residual lhs - rhs: f, or F when the unknown itself is called f
    (a friction factor), so nothing reads "f(f)"."""
    return "F" if unknown == "f" else "f"


# The columns of an iteration table (keys are Step fields), as each front end prints them:
# "screen" for the window's tables, "sheet" with a subscript k for the calculation sheet,
# "ascii" for a terminal. {u} is the unknown's name, {f} the residual's letter.
_ITERATE_HEADINGS: dict[str, dict[str, str]] = {
    "screen": {"k": "k", "x": "{u}", "fx": "{f}({u})", "dfx": "{f}′({u})",
               "dx": "Δ{u}", "lo": "lo", "hi": "hi"},
    "sheet": {"k": "k", "x": "{u}ₖ", "fx": "{f}({u}ₖ)", "dfx": "{f}′({u}ₖ)",
              "dx": "Δ{u}ₖ = {u}ₖ − {u}ₖ₋₁",
              "lo": "bracket lo", "hi": "bracket hi"},
    "ascii": {"k": "k", "x": "{u}", "fx": "{f}({u})", "dfx": "{f}'({u})", "dx": "d{u}",
              "lo": "lo", "hi": "hi"},
}


def iterate_headings(unknown: str, style: str = "screen",
                     unit: str | None = None) -> dict[str, str]:
    """Headings of an iteration table's columns (keys: k, x, fx, dfx, dx, lo, hi) in the
    unknown's own name: a friction factor's table reads f, F(f), F′(f). With the unknown's
    ``unit``, the columns in that unit say it: ``D [mm]``, ``dD [mm]``."""
    fill = {"u": unknown or "x", "f": residual_name(unknown)}
    headings = {key: head.format(**fill) for key, head in _ITERATE_HEADINGS[style].items()}
    if unit:
        for key in IN_UNKNOWN_UNIT:
            headings[key] = f"{headings[key]} [{unit}]"
    return headings


IN_UNKNOWN_UNIT = ("x", "dx", "lo", "hi")  # iterate columns in the unknown's unit


# One line for each value of Run.reason (solvers.records.REASONS).
REASON_TEXT: dict[str, str] = {
    "x_tolerance": "step below tolerance |dx| <= xtol + rtol*|x|",
    "f_tolerance": "residual below tolerance |f| <= ftol",
    "exact_zero": "f(x) is exactly zero",
    "max_iterations": "iteration cap reached before the tolerances were met",
    "zero_derivative": "derivative zero or vanishing: Newton step undefined",
    "not_finite": "f or x became infinite or NaN (domain error or overflow), or f underflowed "
    "to 0",
    "no_sign_change": "f has the same sign at both bracket ends",
    "discontinuity": "the bracket closed on a jump of f, not a root: f changes sign there "
    "without passing through zero",
    # a sweep's row only (solvers.batch.OUTSIDE_RANGE)
    "outside_range": "the method converged to a root outside the range given for the "
    "unknown: not this branch's root, so the row has none",
}


# A few words for each value of Run.reason, where a table cell or a lane's first line
# has no room for the sentence (the sentence goes in the tooltip).
REASON_SHORT: dict[str, str] = {
    "x_tolerance": "step within tolerance",
    "f_tolerance": "residual within tolerance",
    "exact_zero": "residual exactly zero",
    "max_iterations": "iteration cap",
    "zero_derivative": "zero derivative",
    "not_finite": "not finite",
    "no_sign_change": "no sign change",
    "discontinuity": "jump, not a root",
    "outside_range": "root outside the range",
}


def reason_text(reason: str) -> str:
    return REASON_TEXT.get(reason, reason.replace("_", " "))


def reason_short(reason: str) -> str:
    """A few words for a stop reason (a table cell); :func:`reason_text` is the sentence."""
    return REASON_SHORT.get(reason, reason.replace("_", " "))


def _underflow(v: Sequence[Any]) -> str:
    return (f"f(x) = 0.0 at x = {exact(v[0])} only because f underflowed (f is also 0.0 "
            "beside it): not a confirmed root")


# Words for each solvers.records.Detail code, from its values (see solvers.methods).
DETAIL_TEXT: dict[str, Callable[[Sequence[Any]], str]] = {
    "raised": lambda v: f"{v[0]} raised {v[1]} at x = {exact(v[2])}",
    "many_values": lambda v: f"{v[0]} returned {v[1]} values at x = {exact(v[2])}, not one",
    "complex": lambda v: f"{v[0]} is complex ({complex(v[1], v[2])!r}) at x = {exact(v[3])}",
    "unusable": lambda v: f"{v[0]} gave an unusable value ({v[1]}) at x = {exact(v[2])}",
    "not_a_number": lambda v: f"{v[0]} returned {v[1]}, not a number, at x = {exact(v[2])}",
    "f_value": lambda v: f"f(x) = {exact(v[0])} at x = {exact(v[1])}",
    "derivative_value": lambda v: f"f'(x) = {exact(v[0])} at x = {exact(v[1])}",
    "derivative_zero": lambda v: f"f'(x) = 0 at x = {exact(v[0])}",
    "derivative_tiny": lambda v: (f"f'(x) = {exact(v[0])} is vanishingly small at x = "
                                  f"{exact(v[1])}: the step overflows"),
    "step_overflows": lambda v: f"the next iterate overflows from x = {exact(v[0])}",
    "start_not_finite": lambda v: (f"starting point {v[0] + ' = ' if v[0] else ''}"
                                   f"{exact(v[1])} is not finite"),
    "end_not_finite": lambda v: f"bracket end {exact(v[0])} is not finite",
    "secant_flat": lambda v: f"secant slope is zero: f({exact(v[0])}) == f({exact(v[1])})",
    "secant_overflows": lambda v: f"the secant step from x = {exact(v[0])} overflows",
    "step_small": lambda v: (f"step |dx| {number(v[0], 3)} <= xtol + rtol*|x| = "
                             f"{number(v[1], 3)}"),
    "width_small": lambda v: (f"bracket width {number(v[0], 3)} <= xtol + rtol*|x| = "
                              f"{number(v[1], 3)}"),
    "same_sign": lambda v: (f"f({exact(v[0])}) = {exact(v[1])} and f({exact(v[2])}) = "
                            f"{exact(v[3])} have the same sign: no bracket"),
    "adjacent_doubles": lambda v: (f"bracket [{exact(v[0])}, {exact(v[1])}] is two adjacent "
                                   "doubles: no finer step exists"),
    "underflow": _underflow,
    "underflow_ends": lambda v: _underflow(v) + " at either bracket end",
    "underflow_stretch": lambda v: (_underflow(v) + "; f underflows from there on, and the "
                                    "sign change lies somewhere in that stretch, not "
                                    "located by f"),
    "underflow_inside": lambda v: (_underflow(v) + f"; inside the bracket [{exact(v[1])}, "
                                   f"{exact(v[2])}], f cannot say on which side of it the "
                                   "sign change lies"),
    "pole": lambda v: (f"|f| grew from {number(v[0], 3)} at the bracket ends to "
                       f"{number(v[1], 3)} as the bracket closed on x = {exact(v[2])}: a pole "
                       "(f -> +-inf) there, not a root"),
    "jump": lambda v: (f"f changes sign from {number(v[0], 6)} to {number(v[1], 6)} across "
                       f"[{exact(v[2])}, {exact(v[3])}] (width {number(v[4], 3)}) without "
                       f"approaching 0, and |f| stays that size {number(v[5], 3)} further "
                       "out: a jump of f there, not a root"),
    "midpoint_steps": lambda v: (f"{counted(int(v[0]), 'midpoint step')} where rounding put "
                                 "the chord's zero on a bracket end"),
    "no_bracket": lambda v: "no bracket: give one, or a scan range, or an x0 near a sign change",
}


def detail_text(detail: Any) -> str:
    """Words for a :class:`solvers.records.Detail` ('' for None, the code if unknown)."""
    if detail is None:
        return ""
    words = DETAIL_TEXT.get(detail.code)
    return words(detail.values) if words is not None else detail.code.replace("_", " ")


def run_account(run: Any) -> str:
    """What stopped the run: its detail in words, else the reason's words."""
    return detail_text(run.detail) or reason_text(run.reason)


def run_message(run: Any, unknown: str = "x", unit: str | None = None) -> str:
    """The run in one line: method, verdict, counts, what stopped it, and any note; the
    root named as the unknown (``D = 144.9 mm``)."""
    title = method_title(run.method)
    counts = (f"{counted(run.iterations, 'iteration')}, "
              f"{counted(run.evaluations, 'evaluation')}")
    value = f"{unknown or 'x'} = {exact(run.root)}" + (f" {unit}" if unit else "")
    if run.converged:
        text = f"{title} converged to {value} ({counts}): {run_account(run)}"
    else:
        text = (f"{title} did not converge ({counts}): {run_account(run)}; "
                f"last {value}")
    note = detail_text(getattr(run, "note", None))
    return text + (f"; {note}" if note else "")


# What a method needs before it can start (solvers.methods.registry's "needs").
NEED_TEXT: dict[str, str] = {
    "x0": "a start value x0",
    "x1": "a second start value x1",
    "bracket": "a bracket a, b",
}


def method_needs_text(method: str, needs: Sequence[str]) -> str:
    """"Newton–Raphson needs a start value x0": the method by its title, what is missing."""
    return f"{method_title(method)} needs " + " and ".join(NEED_TEXT.get(n, n) for n in needs)


NOT_A_ROOT = "—"  # the root cell of a run that did not converge: it has no root


def root_cell(run: Any, show: Callable[[Any], str]) -> str:
    """A run's root in a results table: the number when it converged, else "—" (its last
    iterate is not a root; :func:`last_iterate_line` says where it stopped)."""
    return show(run.root) if run.converged else NOT_A_ROOT


def last_iterate_line(run: Any, unknown: str = "x", unit: str | None = None,
                      show: Callable[[Any], str] | None = None) -> str:
    """Where a run that did not converge stopped: "Brent did not converge: last iterate
    x = 3.0 (not a root)." ('' for a converged run)."""
    if run.converged:
        return ""
    value = (show or exact)(run.root) + (f" {unit}" if unit else "")
    return (f"{method_title(run.method)} did not converge: last iterate "
            f"{unknown or 'x'} = {value} (not a root).")


def reason_legend(codes: Iterable[str], system: bool = False) -> str:
    """What each stop-reason code in a table means, one after another, in the order given
    (each once): "x_tolerance: step below tolerance ...; max_iterations: ..."."""
    text = system_reason_text if system else reason_text
    seen = dict.fromkeys(str(c) for c in codes)
    return "; ".join(f"{c}: {text(c)}" for c in seen)


def stop_line(run: Any) -> str:
    """"Title reason: reason words." with the run's detail after it, one line."""
    detail = detail_text(run.detail)
    note = detail_text(getattr(run, "note", None))
    extra = "; ".join(t for t in (detail, note) if t)
    return (f"{method_title(run.method)} {run.reason}: {reason_text(run.reason)}."
            + (f" Record: {extra}." if extra else ""))


# ----------------------------------------------------------------- start values

# Why a root of the quick scan was taken (the last number of an x0_scan_root choice).
_WHY = {0: "the first from the left", 1: "the one nearest the typed x0",
        2: "the first inside the typed bracket"}


def _g6(x: float) -> str:
    return number(x, 6)


def _scan_root_text(n: Sequence[float]) -> str:
    x, index, count, a, b, why = n[0], int(n[1]), int(n[2]), n[3], n[4], int(n[5])
    if count == 1:
        return f"x0 = {_g6(x)}: the one sign change a quick scan of [{_g6(a)}, {_g6(b)}] found"
    return (f"x0 = {_g6(x)}: sign change {index} of {count} (from the left) in a quick scan "
            f"of [{_g6(a)}, {_g6(b)}], taken as {_WHY.get(why, 'chosen')}; solve again with "
            "another x0 or bracket for the others")


# How each start value that was not typed got its number (solvers.pipeline.StartChoice).
START_TEXT: dict[str, Callable[[Sequence[float]], str]] = {
    "x0_scan_root": _scan_root_text,
    "x0_scan_min": lambda n: (f"x0 = {_g6(n[0])}: a quick scan of [{_g6(n[1])}, {_g6(n[2])}] "
                              "found no sign change; x0 is where |f| was smallest"),
    "x0_bracket_midpoint": lambda n: f"x0 = {_g6(n[0])}: the midpoint of the bracket",
    "x0_scan_midpoint": lambda n: f"x0 = {_g6(n[0])}: the midpoint of the scan range",
    "x0_default": lambda n: "x0 not given and no scan range: 1.0 used",
    "x1_scan": lambda n: (f"x1 = {_g6(n[0])}: the end nearer x0 of the scan's sign change "
                          f"[{_g6(n[1])}, {_g6(n[2])}]"),
    "x1_nudged": lambda n: f"x1 = {_g6(n[0])}: x0 nudged by 1e-4 (relative)",
    "bracket_scan_cell": lambda n: (f"bracket [{_g6(n[0])}, {_g6(n[1])}]: the scan's sign "
                                    "change"),
    "bracket_scan_range": lambda n: (f"bracket [{_g6(n[0])}, {_g6(n[1])}]: the scan range "
                                     "(f changes sign between its ends)"),
    "bracket_grown": lambda n: (f"bracket [{_g6(n[0])}, {_g6(n[1])}]: grown around x0 until "
                                "f changed sign"),
    "bracket_none": lambda n: "no bracket given and no sign change found",
}


def start_text(choice: Any) -> str:
    """Words for one :class:`solvers.pipeline.StartChoice`."""
    words = START_TEXT.get(choice.code)
    return words(choice.numbers) if words is not None else choice.code


def start_notes(start: Any) -> tuple[str, ...]:
    """How every start value that was not typed was chosen, one sentence each."""
    return tuple(start_text(c) for c in getattr(start, "choices", ()))


# ----------------------------------------------------------------- agreement


def agreement_text(solution: Any, figures: int = 8) -> str:
    """How the converged runs of a :class:`solvers.pipeline.Solution` compare, in words.

    Different roots are listed (each with ``figures`` significant figures and the
    methods that found it); one root found by several methods gives the significant
    figures they share; fewer than two converged runs say there is no cross-check.
    """
    converged = [r for r in solution.runs if r.converged]
    groups = solution.agreement.groups
    digits = solution.agreement_digits
    if len(groups) > 1:
        found = "; ".join(f"{number(x, figures)} by {method_names(ms)}" for x, ms in groups)
        return f"The converged methods found different roots: {found}."
    if digits is not None:
        return (f"The {len(converged)} converged methods "
                f"({method_names(r.method for r in converged)}) agree to "
                f"{figures_word(digits)}.")
    if len(converged) == 1:
        return (f"Only {method_label(converged[0].method)} converged: no second method to "
                "agree with; try other start values.")
    return "No method converged: check the equation, start values and bracket."


# ----------------------------------------------------------------- residuals

# Words for the codes of solvers.residual (the module returns codes, never prose).
RESIDUAL_WORDS = {
    "no_finite_root": "— (no finite root)",
    "not_real": "not a real number there (outside the domain)",
    "infinite": "infinite (a pole)",
    "overflow": "beyond the double range",
    "not_computable": "not computable at this precision",
    "time_budget": "not computed (time budget exceeded)",
}

NUMERICAL_DERIVATIVE_NOTE = (
    "No symbolic derivative was available: Newton–Raphson used a numerical "
    "(finite-difference) derivative of f, and its f′ column shows those estimates."
)


# ----------------------------------------------------------------- scans

# What made a re-scan with 64x the samples necessary, by the cross-check that ran.
_RESCAN_WHY = {
    "chebyshev": "cross-check: f not smooth enough for the Chebyshev proxy",
    "derivative": "f oscillates faster than 64x the sampling (f' contradicts f's differences)",
}


def _rescan_why(mode: Any) -> str:
    return _RESCAN_WHY.get(str(mode), f"cross-check {mode}")


def _rescan_where(v: Sequence[Any]) -> str:
    """"<why> on 3 intervals in [a, b]": what a re-scan record's numbers say first."""
    return (f"{_rescan_why(v[0])} on {counted(int(v[1]), 'interval')} in "
            f"[{_g6(v[2])}, {_g6(v[3])}]")


def _g12(x: float) -> str:
    return number(x, 12)


def _g3(x: float) -> str:
    return number(x, 3)


def _noise_band_text(v: Sequence[Any]) -> str:
    u, w_hi, level, centre, half, mult, inside = v
    text = (f"f is rounding noise on [{_g12(u)}, {_g12(w_hi)}] (|f| <= {_g3(level)}): one root "
            f"cluster reported at x = {_g12(centre)} +/- {_g3(half)}, multiplicity {int(mult)}")
    if inside:
        text += (f"; {int(inside)} more sign change(s), touch(es), pole(s) or jump(s) inside "
                 "were noise")
    return text


# Words for each code of Scan.details (solvers.scan.records.SCAN_DETAIL_CODES).
SCAN_DETAIL_TEXT: dict[str, Callable[[Sequence[Any]], str]] = {
    "many_sign_changes": lambda v: (f"more than {v[0]} sign changes in [{_g6(v[1])}, "
                                    f"{_g6(v[2])}]: roots refined only up to x = {_g6(v[3])}; "
                                    "scan a narrower range for the rest"),
    "undefined_inside": lambda v: (f"f undefined somewhere inside [{_g6(v[0])}, {_g6(v[1])}] "
                                   "between two samples of opposite sign"),
    "zero_run": lambda v: (f"f is exactly zero at consecutive samples in [{_g6(v[0])}, "
                           f"{_g6(v[1])}]; not counted as isolated roots"),
    "bounded_oscillation": lambda v: (f"f oscillates, bounded, ever faster near x = "
                                      f"{_g12(v[0])}: a sign change there was not resolved "
                                      "into roots (no pole)"),
    "fast_oscillation": lambda v: (f"f oscillates faster than 64x the sampling on "
                                   f"[{_g6(v[0])}, {_g6(v[1])}]; roots there may be missed: "
                                   "raise samples"),
    "proxy_rough": lambda v: (f"cross-check: f is not smooth enough for the Chebyshev proxy on "
                              f"{counted(int(v[0]), 'interval')} in [{_g6(v[1])}, "
                              f"{_g6(v[2])}] that no pole, jump or gap explains (rough f, or "
                              "oscillation faster than the sampling): roots there rest on "
                              "sampling alone"),
    "rescanned": lambda v: f"{_rescan_where(v)}; re-scanned there with 64x the samples",
    "rescan_budget": lambda v: (f"{_rescan_where(v)}, beyond the re-scan budget: roots there "
                                "rest on sampling alone; raise samples"),
    "proxy_unconfirmed": lambda v: (f"cross-check: the Chebyshev proxy has a zero near x = "
                                    f"{_g12(v[0])} (|f| = {_g3(v[1])}) that the scan could not "
                                    "confirm"),
    "proxy_only_roots": lambda v: (f"cross-check: {counted(len(v), 'root')} located only by the "
                                   "Chebyshev proxy and then confirmed: "
                                   + ", ".join(_g12(x) for x in v)),
    "sampling_only_root": lambda v: (f"cross-check: root at x = {_g12(v[0])} found by sampling, "
                                     f"not by the Chebyshev proxy on [{_g6(v[1])}, "
                                     f"{_g6(v[2])}]"),
    "pole_dip": lambda v: (f"beside the pole at x = {_g12(v[0])}, |f| dips to {_g3(v[1])} "
                           f"within {_g3(v[2])} without a sign change: a pair of roots may "
                           "hide there"),
    "noise_band": _noise_band_text,
}


def scan_detail_text(detail: Any) -> str:
    """Words for one :class:`solvers.records.Detail` of ``Scan.details``."""
    words = SCAN_DETAIL_TEXT.get(detail.code)
    return words(detail.values) if words is not None else detail.code.replace("_", " ")


def scan_warnings(scan: Any) -> list[str]:
    """What a checker should know about a scan, one sentence per detail, in scan order."""
    return [scan_detail_text(d) for d in getattr(scan, "details", ()) or ()]


def _brent_stopped(root: Any) -> str:
    run = getattr(root, "run", None)
    return f" (stopped: {run.reason})" if run is not None else " (stopped)"


def _noise_cluster_text(root: Any) -> str:
    d = getattr(root, "detail", None)
    if d is None or d.code != "noise_cluster":
        return ("root cluster within rounding noise; multiplicity from the slope of log|f| "
                "outside")
    level, u, v, half = d.values
    return (f"root cluster within rounding noise: |f| <= {_g3(level)} (its evaluation noise) "
            f"on [{_g12(u)}, {_g12(v)}]; x uncertain by +/-{_g3(half)}; multiplicity from the "
            "slope of log|f| outside")


# How a scan confirmed a root (solvers.scan.records.CONFIRMED_CODES): the first code's
# words, then each later code's words appended (a refinement or a qualification).
CONFIRMED_WORDS: dict[str, Callable[[Any], str]] = {
    "anderson_bjorck": lambda r: "sign change, Anderson-Bjorck bracketing",
    "zero_at_iterate": lambda r: "sign change; f exactly zero at an iterate",
    "zero_at_bisection": lambda r: "sign change; f exactly zero at a bisection point",
    "brent": lambda r: "sign change, Brent",
    "brent_stopped": _brent_stopped,
    "brent_left": lambda r: "sign change, bisection (Brent left the bracket)",
    "newton_polish": lambda r: ", Newton polish with f'",
    "bracket_in_noise": lambda r: "; the bracket closed where f is rounding noise",
    "touch_golden": lambda r: "touch: |f| minimum (golden section) at noise level",
    "touch_fprime": lambda r: "touch: f' sign change, bracketing on f'; |f| at noise level",
    "zero_at_sample": lambda r: "f exactly zero at a sample",
    "zero_at_range_end": lambda r: "f exactly zero at the range end",
    "range_end_noise": lambda r: "range end: |f| at noise level",
    "domain_edge_zero": lambda r: "domain edge: f = 0 at the last defined point",
    "domain_edge_limit": lambda r: "domain edge: f -> 0 at the last defined point",
    "zero_near_proxy": lambda r: "f exactly zero (near a Chebyshev proxy root)",
    "noise_cluster": _noise_cluster_text,
}

# Labels of Root.located_by codes (kept short: they fill a table column).
LOCATOR_LABELS: dict[str, str] = {"sampling": "sampling", "chebyshev": "chebyshev"}


def confirmed_text(root: Any) -> str:
    """How the scan confirmed ``root``, in words ('' when it carries no codes)."""
    parts = []
    for code in getattr(root, "confirmed", ()) or ():
        words = CONFIRMED_WORDS.get(code)
        parts.append(words(root) if words is not None else code.replace("_", " "))
    return "".join(parts)


def located_text(root: Any) -> str:
    """Which locator(s) found ``root``: "sampling + chebyshev"."""
    return " + ".join(LOCATOR_LABELS.get(c, c) for c in getattr(root, "located_by", ()) or ())


# --------------------------------------------------------------- equation remarks
# What the equation core reports as codes (``Equation.remarks``: code, subject, numbers).

# Why there is no symbolic derivative, by the reason code of solvers.equation.calculus.
NO_DERIVATIVE_WORDS: dict[str, Callable[[tuple[float, ...]], str]] = {
    "too_large": lambda n: f"more than {n[0]:g} terms",
    "kinks_nested": lambda n: f"abs/min/max nested more than {n[0]:g} deep",
    "unevaluated": lambda n: "sympy left it unevaluated",
    "not_finite": lambda n: "it is not real or not finite",
    "too_deep": lambda n: "expression too deep",
    "not_handled": lambda n: "a function not handled",
    "not_compiled": lambda n: "it cannot be compiled",
}

# The dimensional check switched off (a worksheet's dimension_check, --no-dimension-check):
# said on every document of such a worksheet, never a silent pass.
DIMENSIONS_UNCHECKED = ("not checked (switched off for this worksheet): every unit is "
                        "converted but whether the equation is consistent is yours to verify")

# The remarks about units (every document that lists an equation's remarks shows these)
UNIT_REMARKS = frozenset({"dimensions_unchecked", "absolute_temperature",
                          "unknown_dimension_free", "unknown_dimension_fractional",
                          "system_dimension_free", "unit_suspect"})

DIMENSIONS_CHECKED = ("checked: both sides and every term of each sum have one dimension; "
                      "function arguments and exponents are dimensionless")

REMARK_WORDS: dict[str, Callable[[Any], str]] = {
    "unknown_has_value": lambda r: f"'{r.subject}' is the unknown: its parameter value is "
                                   "not used",
    "no_derivative": lambda r: "no symbolic derivative ("
                               + NO_DERIVATIVE_WORDS[r.subject](r.numbers)
                               + "): Newton uses a numerical one",
    "degrees": lambda r: "deg = pi/180: angles in degrees become radians",
    "radians": lambda r: "sin, cos and tan take radians (multiply by deg for degrees)",
    "kinks": lambda r: "abs/min/max have a kink: the derivative there uses sign/step values",
    "no_dependence": lambda r: f"the equation does not depend on '{r.subject}' once simplified",
    "e_notation": lambda r: "numbers such as 2e3 are read as 2000, not as 2*e*3",
    "dimensions_unchecked": lambda r: f"dimensions {DIMENSIONS_UNCHECKED}",
    "absolute_temperature": lambda r: f"'{r.subject}' in degC/degF is an absolute temperature, "
                                      "converted to kelvin with the offset (type delta_degC "
                                      "or delta_degF for a difference)",
    "unknown_dimension_free": lambda r: f"the equation does not fix the dimension of "
                                        f"'{r.subject}': it is taken as dimensionless",
    "system_dimension_free": lambda r: f"the equations do not fix the dimension of "
                                       f"'{r.subject}': it is taken as dimensionless",
    "unknown_dimension_fractional": lambda r: f"the dimensions give '{r.subject}' fractional "
                                              "powers of units: if a constant of the equation "
                                              "hides its unit (Manning's n, a Hazen–Williams "
                                              "coefficient) give it its unit or switch the "
                                              "dimension check off",
    "unit_suspect": lambda r: _unit_suspect(r.subject, r.numbers),
}


def _unit_suspect(name: str, numbers: Sequence[float]) -> str:
    """A parameter whose unit alone explains the unknown's fractional dimension; numbers:
    the unknown's meant dimension, the parameter's and the one it needs (7 each)."""
    from solvers.units.reading import needs_words, numbers_dimension, quantity_words

    meant, now, needed = (numbers_dimension(numbers[i:i + 7]) for i in (0, 7, 14))
    what = f"is {quantity_words(now)}" if now else "has no unit"
    return (f"most likely the unit of '{name}' is wrong: it {what}; with the unknown "
            f"{needs_words(meant)} the equation needs '{name}' {needs_words(needed)}")


def remark_text(remark: Any) -> str:
    """One remark (``code``, ``subject``, ``numbers``) as a sentence; unknown codes as is."""
    words = REMARK_WORDS.get(remark.code)
    return words(remark) if words else remark.code.replace("_", " ")


def remarks_text(remarks: Iterable[Any]) -> tuple[str, ...]:
    """Every remark of an equation (``Equation.remarks``) as sentences, in order."""
    return tuple(remark_text(r) for r in remarks)


# ----------------------------------------------------------------- systems and definitions

# Titles of the methods for systems (solvers.systems.SYSTEM_METHODS).
SYSTEM_METHOD_TITLES: dict[str, str] = {
    "newton": "Newton–Raphson",  # on the Jacobian: the same name as for one equation
    "broyden": "Broyden",
}

SYSTEM_METHOD_SUMMARIES: dict[str, str] = {
    "newton": "Newton steps on the symbolic Jacobian, shortened by a line search on ||F||",
    "broyden": "Broyden's rank-one updates of a difference Jacobian, no derivatives, same "
               "line search",
}

# The stop reasons of a system solve, where they read differently from one equation's.
SYSTEM_REASON_TEXT: dict[str, str] = {
    "x_tolerance": "full step below tolerance |dx_i| <= xtol + rtol*|x_i| for every unknown",
    "f_tolerance": "every residual below tolerance |F_i| <= ftol",
    "exact_zero": "every residual is exactly zero",
    "max_iterations": "iteration cap reached before the tolerances were met",
    "zero_derivative": "Jacobian singular where ||F|| stopped decreasing: a minimum of ||F|| "
                       "that is not a root (the equations may have no common solution there)",
    "not_finite": "F or its Jacobian is infinite or NaN at the start or along every step "
                  "(domain error or overflow)",
}

JACOBIAN_WORDS: dict[str, str] = {
    "symbolic": "symbolic Jacobian (sympy), compiled once",
    "differences": "Jacobian by forward differences",
}


def system_method_title(name: str) -> str:
    return SYSTEM_METHOD_TITLES.get(name, name.replace("_", " "))


def system_reason_text(reason: str) -> str:
    return SYSTEM_REASON_TEXT.get(reason, reason_text(reason))


def system_run_message(run: Any) -> str:
    """A system run in one sentence: converged or not, why, and at what cost."""
    title = system_method_title(run.method)
    verdict = "converged" if run.converged else "did not converge"
    # the reason in words only: the code is for scripts (JSON, CSV, a table's column)
    return (f"{title} {verdict} after {counted(run.iterations, 'iteration')} and "
            f"{counted(run.evaluations, 'evaluation')} of F and J: "
            f"{system_reason_text(run.reason)}.")


def blocks_text(blocks: Sequence[Any], unknowns: Sequence[str]) -> str:
    """The block-triangular order in words: "solved in 2 blocks: (Q1) then (Q2, H)"."""
    if len(blocks) <= 1:
        return "solved as one block (every equation couples with the others)"
    parts = ["(" + ", ".join(unknowns[j] for j in cols) + ")" for _, cols in blocks]
    return f"solved in {len(blocks)} blocks, in this order: " + " then ".join(parts)


def unit_cell(unit: str | None) -> str:
    """A defined quantity's SI unit in a table cell: the unit, "dimensionless", or "—"
    where none can be named (the dimension check off, or a mixed dimension)."""
    return "—" if unit is None else unit or "dimensionless"


LAST_ITERATE = "last iterate (not a root)"


def result_column(title: str, converged: bool) -> str:
    """The heading of a run's column of values at its root: the method's title, or for a
    run that did not converge "Brent: last iterate (not a root)" (as the terminal says
    "definitions at the last iterate (not a root)")."""
    return title if converged else f"{title}: {LAST_ITERATE}"


def definitions_line(values: Mapping[str, float], figures: int = DEFAULT_FIGURES,
                     units: Mapping[str, str | None] | None = None) -> str:
    """Defined quantities at the root: "A = 0.0314 m^2, v = 3.18 m/s" (``units``: each
    one's SI unit, '' or None for none)."""
    units = units or {}
    return ", ".join(f"{name} = {number(v, figures)}"
                     + (f" {units[name]}" if units.get(name) else "")
                     for name, v in values.items())


# ----------------------------------------------------------------- help (F1)

# The help page's paragraph on units (HTML; app/window/dialogs.py sets it in the page).
HELP_UNITS = (
    "<p><b>Units.</b> A parameter takes its unit in the <i>unit</i> column of the parameters "
    "table, or typed after its number (<code>150 mm</code>, <code>2.5 m/s</code>, "
    "<code>20 degC</code>); it is converted once to SI. The <b>Unit</b> box beside the "
    "unknown gives the unit of the unknown, its start values, scan range and roots (blank: "
    "the SI unit its dimensions give it). <b>Check dimensions</b> (on by default) checks that "
    "both sides and every term agree; clear it only for a correlation whose constants hide "
    "their units, and every document then says the dimensions were not checked. The system "
    "window has the same: a <i>unit</i> column in its unknowns table, units on its "
    "parameters and its own Check dimensions switch.</p>"
)

# ----------------------------------------------------------------- tables of inputs

# Words for each code of solvers.batch.NOTE_CODES (Batch.notes: one row each).
BATCH_NOTE_TEXT: dict[str, str] = {
    "bad_parameters": "the row's parameter values give part of the equation no finite real "
                      "value: not solved",
    "failed": "did not converge: the branch followed so far ends before this value",
    "restart_last_good": "started again from the last converged root (the previous row failed)",
    "restart_x0": "started again from x0 (no row had converged yet)",
    "branch_jump": "the root jumped off the branch followed so far (a turning point was "
                   "passed, or another root was found): check which root you need here",
    "turning_point": "f' changed sign at the root: the sweep went round a turning point",
    "left_range": "the method converged to a root outside the range given for the unknown: "
                  "it is not taken as this branch's root (the row has none), and the next "
                  "row starts from the last root inside the range",
    "fixed_bracket": "every row uses the same bracket (a bracketing method needs no "
                     "continuation)",
    "restart_scan": "the sweep was resumed here from a root chosen from a scan at this value",
}


def batch_note_text(code: str) -> str:
    return BATCH_NOTE_TEXT.get(code, code.replace("_", " "))


# How batch_summary counts the rows of a reason that is not "stopped on" something.
_SUMMARY_STOPS: dict[str, str] = {
    "outside_range": "{c} converged outside the range of the unknown (no root taken)",
}


def batch_summary(batch: Any) -> str:
    """One line: how many rows converged, and why the others stopped."""
    total = batch.size
    good = int(batch.converged.sum())
    failed = {r: c for r, c in batch.counts().items()
              if r not in ("x_tolerance", "f_tolerance", "exact_zero")}
    text = f"{counted(total, 'row')}: {good} converged"
    if failed:
        text += "; " + "; ".join(_SUMMARY_STOPS.get(r, "{c} stopped on {r}").format(
            c=c, r=r.replace("_", " ")) for r, c in sorted(failed.items()))
    return text
