"""The words of one solve: method titles, stop reasons and details (one equation's and a
system's), iteration-table headings, how start values were chosen, the agreement of the
methods, the residual codes."""

from __future__ import annotations

from collections.abc import Callable, Iterable, Sequence
from typing import Any

from app.documents.words.numbers import counted, exact, figures_word, number

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


def derivative_heading(unknown: str) -> str:
    """d(residual)/d(unknown) in mathtext, the window's and the sheet's: df/dx, dF/df when
    the unknown is f, and df/d(dT) for a name that itself starts with d (a difference,
    dT, dV, dp: "ddT" reads as a second derivative)."""
    shown = f"({unknown})" if unknown.startswith("d") else unknown
    return rf"\frac{{d{residual_name(unknown)}}}{{d{shown}}}"


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
                     unit: str | None = None, f_unit: str | None = None) -> dict[str, str]:
    """Headings of an iteration table's columns (keys: k, x, fx, dfx, dx, lo, hi) in the
    unknown's own name: a friction factor's table reads f, F(f), F′(f). With the unknown's
    ``unit``, the columns in that unit say it: ``D [mm]``, ``dD [mm]``. With the residual's
    unit ``f_unit`` (:meth:`solvers.equation.Equation.residual_unit`; '' dimensionless,
    None unknown) f and f′ say theirs: ``f(T) [W]``, ``f′(T) [W/degC]``."""
    fill = {"u": unknown or "x", "f": residual_name(unknown)}
    headings = {key: head.format(**fill) for key, head in _ITERATE_HEADINGS[style].items()}
    if unit:
        for key in IN_UNKNOWN_UNIT:
            headings[key] = f"{headings[key]} [{unit}]"
    for key, shown in residual_units(f_unit, unit).items():
        headings[key] = f"{headings[key]} [{shown}]"
    return headings


def residual_units(f_unit: str | None, unit: str | None) -> dict[str, str]:
    """The units of the columns fx and dfx: f in ``f_unit``, f′ in ``f_unit`` per the
    unknown's ``unit`` ({} when the residual's unit is not known; a dimensionless f has
    none, its f′ is 1/unit)."""
    if f_unit is None:
        return {}
    out = {"fx": f_unit} if f_unit else {}
    if unit:
        per = f"({unit})" if any(c in unit for c in "*/") else unit
        out["dfx"] = f"{f_unit or '1'}/{per}"
    elif f_unit:
        out["dfx"] = f_unit
    return out


IN_UNKNOWN_UNIT = ("x", "dx", "lo", "hi")  # iterate columns in the unknown's unit


# One line for each value of Run.reason (solvers.records.REASONS).
REASON_TEXT: dict[str, str] = {
    "x_tolerance": "step below tolerance |dx| <= xtol + rtol*|x|",
    "f_tolerance": "residual below tolerance |f| <= ftol",
    "exact_zero": "f(x) is exactly zero",
    "max_iterations": "iteration cap reached before the tolerances were met",
    "zero_derivative": "derivative zero or vanishing: Newton step undefined",
    # a pole too: a table's row whose bracket closed on one (a column's eigen-equation
    # with tan) has this reason and no sentence of its own, where a single solve's record
    # says "a pole"
    "not_finite": "f or x became infinite or NaN (domain error, overflow, or a bracket "
    "closed on a pole), or f underflowed to 0",
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

def system_reason_text(reason: str) -> str:
    return SYSTEM_REASON_TEXT.get(reason, reason_text(reason))


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
    "pole_capped": lambda v: (f"|f| grew from {number(v[0], 3)} at the bracket ends to "
                              f"{number(v[1], 3)} on both sides as the bracket narrowed onto "
                              f"x = {exact(v[2])}, and the iteration cap came first: a pole "
                              "(f -> +-inf) there, not a root"),
    "zero_in_noise": lambda v: (f"f is 0.0 beside x too, and {number(v[1], 3)} at "
                                f"{number(v[0], 3)} from it, a few units of the rounding of "
                                "its terms: x is a zero of f's rounding noise (as around a "
                                "multiple root typed out as a polynomial); where the root lies "
                                "within that noise this does not say: a scan of the range "
                                "gives the stretch"),
    "zero_between_noise": lambda v: (f"f is 0.0 at x, and {number(v[1], 3)} at the bracket "
                                     f"end {number(v[0], 3)} from it, a few units of the "
                                     "rounding of its terms: x is a zero of f's rounding "
                                     "noise (as around an odd multiple root typed out as a "
                                     "polynomial); where the root lies within that noise this "
                                     "does not say: a scan of the range gives the stretch"),
    "end_held": lambda v: (f"the bracket end x = {exact(v[0])} stood still for the last "
                           f"{int(v[1])} iterations: plain false position stalls so on a convex "
                           "or concave f (every chord lands on the same side of the root); "
                           "Illinois or Brent on the same bracket moves both ends"),
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


def root_row_text(run: Any) -> str:
    """Where a converged run's root is not its last iterate (a bracketing method returns
    the end of the closed bracket where |f| is smaller, and its last step may be the
    check that closed it), which iterate it is; '' otherwise."""
    steps = getattr(run, "steps", ())
    if not run.converged or not steps or steps[-1].x == run.root:
        return ""
    k = next((s.k for s in reversed(steps) if s.x == run.root), None)
    if k is None:
        return ""
    return (f"the root is iterate k = {k}, where |f| is smaller than at the rows after it "
            "(they are the steps that closed the bracket on it)")


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
    extra = "; ".join(t for t in (root_row_text(run), detail_text(getattr(run, "note", None)))
                      if t)
    return text + (f"; {extra}" if extra else "")


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
    where = root_row_text(run)
    return (f"{method_title(run.method)} {run.reason}: {reason_text(run.reason)}."
            + (f" Record: {extra}." if extra else "")
            + (f" {where[0].upper()}{where[1:]}." if where else ""))


# ----------------------------------------------------------------- start values

# Why a root of the quick scan was taken (the last number of an x0_scan_root choice).
_WHY = {0: "the first from the left", 1: "the one nearest the typed x0",
        2: "the first inside the typed bracket"}


def _g6(x: float) -> str:
    return number(x, 6)


def _scan_root_text(n: Sequence[float], u: str = "") -> str:
    x, index, count, a, b, why = n[0], int(n[1]), int(n[2]), n[3], n[4], int(n[5])
    if count == 1:
        return (f"x0 = {_g6(x)}{u}: the one sign change a quick scan of "
                f"[{_g6(a)}, {_g6(b)}]{u} found")
    return (f"x0 = {_g6(x)}{u}: sign change {index} of {count} (from the left) in a quick "
            f"scan of [{_g6(a)}, {_g6(b)}]{u}, taken as {_WHY.get(why, 'chosen')}; solve again "
            "with another x0 or bracket for the others")


# How each start value that was not typed got its number (solvers.pipeline.StartChoice):
# each takes the choice's numbers and ``u``, the unknown's unit after a space (" mm"; ""
# without one), since every number here is a value of the unknown.
START_TEXT: dict[str, Callable[[Sequence[float], str], str]] = {
    "x0_scan_root": _scan_root_text,
    "x0_scan_min": lambda n, u="": (f"x0 = {_g6(n[0])}{u}: a quick scan of [{_g6(n[1])}, "
                                    f"{_g6(n[2])}]{u} found no sign change; x0 is where |f| "
                                    "was smallest"),
    "x0_bracket_midpoint": lambda n, u="": f"x0 = {_g6(n[0])}{u}: the midpoint of the bracket",
    "x0_scan_midpoint": lambda n, u="": f"x0 = {_g6(n[0])}{u}: the midpoint of the scan range",
    "x0_default": lambda n, u="": f"x0 not given and no scan range: 1.0{u} used",
    "x1_scan": lambda n, u="": (f"x1 = {_g6(n[0])}{u}: the end nearer x0 of the scan's sign "
                                f"change [{_g6(n[1])}, {_g6(n[2])}]{u}"),
    "x1_scan_far": lambda n, u="": (f"x1 = {_g6(n[0])}{u}: the end of the scan's sign change "
                                    f"[{_g6(n[1])}, {_g6(n[2])}]{u} away from x0 (x0 sits at "
                                    "the other end)"),
    # x1 = x0 (1 + 1e-4) +- 1e-4 (solvers.pipeline): relative and absolute both, so that
    # x0 = 0 moves too; "1e-4 (relative)" alone misdescribed x1 = 1.0002 from x0 = 1
    "x1_nudged": lambda n, u="": (f"x1 = {_g6(n[0])}{u}: x0 moved away from 0 by 1e-4 of "
                                  f"itself plus 1e-4{u}"),
    "bracket_scan_cell": lambda n, u="": (f"bracket [{_g6(n[0])}, {_g6(n[1])}]{u}: the scan's "
                                          "sign change"),
    "bracket_scan_range": lambda n, u="": (f"bracket [{_g6(n[0])}, {_g6(n[1])}]{u}: the scan "
                                           "range (f changes sign between its ends)"),
    "bracket_grown": lambda n, u="": (f"bracket [{_g6(n[0])}, {_g6(n[1])}]{u}: grown around x0 "
                                      "until f changed sign"),
    "bracket_none": lambda n, u="": "no bracket given and no sign change found",
}


def start_text(choice: Any, unit: str | None = None) -> str:
    """Words for one :class:`solvers.pipeline.StartChoice`, its values of the unknown in
    ``unit`` when it has one (x1 = 0.66835 in)."""
    words = START_TEXT.get(choice.code)
    return words(choice.numbers, f" {unit}" if unit else "") if words is not None \
        else choice.code


def start_notes(start: Any, unit: str | None = None) -> tuple[str, ...]:
    """How every start value that was not typed was chosen, one sentence each; the values
    in the unknown's ``unit`` (the worksheet's, when it gives one)."""
    return tuple(start_text(c, unit) for c in getattr(start, "choices", ()))


def polish_note(settings: Any, unit: str | None = None) -> str:
    """What a polish of one root started from, and that the typed start values stand.

    ``settings`` are the polish's own (x0 at the root, a bracket a few millionths wide
    around it, grown until f changes sign); ``unit`` the unknown's.
    """
    u = f" {unit}" if unit else ""
    started = f"x0 = {number(settings.x0, 10)}{u}"  # every digit is in the lanes' tables
    if settings.bracket is not None:
        a, b = settings.bracket
        started += f", bracket [{number(a, 10)}, {number(b, 10)}]{u}"
    return (f"Polish of the root near {_g6(settings.x0)}{u}: every method started at it "
            f"({started}). The start values and bracket you typed are kept: Solve and the "
            "tables of inputs start from them.")


# ----------------------------------------------------------------- agreement


def agreement_text(solution: Any, figures: int = 8) -> str:
    """How the converged runs of a :class:`solvers.pipeline.Solution` compare, in words.

    Different roots are listed (each with ``figures`` significant figures and the
    methods that found it); one root found by several methods gives the significant
    figures they share; fewer than two converged runs say there is no cross-check (one
    method run alone is told apart from several of which only one converged: advice to
    change the start values is for the second case only).
    """
    converged = [r for r in solution.runs if r.converged]
    return _agreement(solution, converged, figures) + _below_absolute_zero(
        solution, converged, figures)


def _below_absolute_zero(solution: Any, converged: list[Any], figures: int) -> str:
    """' The root of Newton–Raphson and secant, -451.2 degC (-178 K), is below absolute
    zero: …' when converged roots are temperatures below 0 K ('' when none is)."""
    eq = getattr(solution, "equation", None)
    kelvin = getattr(eq, "in_kelvin", None)
    if kelvin is None:
        return ""
    below = [(r, t) for r in converged
             if (t := kelvin(r.root)) is not None and t < 0.0]
    if not below:
        return ""
    unit = eq.unknown_unit
    (first, t) = below[0]
    shown = number(first.root, figures) + ("" if unit == "K" else f" {unit}")
    kelvins = "" if unit == "K" else f" ({number(t, figures)} K)"
    return (f" The root of {method_names(r.method for r, _t in below)}, {shown}{kelvins}, "
            "is below absolute zero: no temperature; check the equation's temperature "
            "scale (see the notes on degC).")


def _agreement(solution: Any, converged: list[Any], figures: int) -> str:
    groups = solution.agreement.groups
    digits = solution.agreement_digits
    if len(groups) > 1:
        found = "; ".join(f"{number(x, figures)} by {method_names(ms)}" for x, ms in groups)
        return f"The converged methods found different roots: {found}."
    if digits is not None:
        return (f"The {len(converged)} converged methods "
                f"({method_names(r.method for r in converged)}) agree to "
                f"{figures_word(digits)}.")
    if len(converged) == 1 and len(solution.runs) == 1:
        # one method asked for: nothing failed, so start values are not what to change
        return (f"{method_label(converged[0].method)} alone was run: no second method "
                "cross-checks its root; choose another method (a bracketing one) to compare.")
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
