"""What ``zerotrace solve`` and ``zerotrace scan`` print in a terminal: plain tables.

Every number and sentence comes from :mod:`app.documents.words`, so the shell says what
the window and the calculation sheet say, the same way.
"""

from __future__ import annotations

from collections.abc import Sequence


def caution() -> str:
    """The caution line every terminal output ends with."""
    from app.documents.words import CAUTION

    return f"Caution: {CAUTION}"


def _g(value: float | None, figures: int | None = None) -> str:
    """A number in the words module's one format: every digit, or ``figures`` of them."""
    from app.documents import words

    if figures is None:
        return words.exact(value, blank="-")
    return words.number(value, figures, blank="-")


def _asked(value: float | None, figures: int | None = None) -> str:
    """A root to the ``--figures`` asked for, trailing zeros kept (they are figures
    too), or every digit."""
    from app.documents import words

    if figures is None:
        return words.exact(value, blank="-")
    return words.significant(value, figures, blank="-")


def _table(header: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    widths = [max([len(h), *(len(r[i]) for r in rows)]) for i, h in enumerate(header)]
    line = "  ".join(h.ljust(w) for h, w in zip(header, widths, strict=True)).rstrip()
    rule = "  ".join("-" * w for w in widths)
    body = ["  ".join(c.ljust(w) for c, w in zip(r, widths, strict=True)).rstrip() for r in rows]
    return "\n".join([line, rule, *body])


def print_solution(solution, *, steps: bool, figures: int | None = None) -> None:
    from app.documents import words

    eq = solution.equation
    print(f"equation: {solution.worksheet.equation}")
    params = ", ".join(_parameter(k, v, eq.units.get(k)) for k, v in eq.parameters.items())
    unknown = f"{eq.unknown} [{eq.unknown_unit}]" if eq.unknown_unit else eq.unknown
    print(f"unknown:  {unknown}" + (f"    parameters: {params}" if params else ""))
    from app.documents.words import remarks_text

    for note in (*remarks_text(eq.remarks), *words.start_notes(solution.start, eq.unknown_unit)):
        print(f"note:     {note}")
    print()
    rows = []
    for r in solution.runs:
        rows.append(
            [
                words.method_title(r.method),
                words.root_cell(r, lambda v: _asked(v, figures)),
                "yes" if r.converged else "NO",
                r.reason,
                str(r.iterations),
                str(r.evaluations),
                words.order_text(r.order, "-"),
                words.method_flag(r.method),
            ]
        )
    header = ["method", _labelled("root", eq.unknown_unit), "converged", "reason", "iterations",
              "evaluations", "order", "--method"]
    print(_table(header, rows))
    print()
    for r in solution.runs:
        print(f"  {words.stop_line(r)}")
    for r in solution.runs:  # the root column says "—" for these: where they stopped
        if not r.converged:
            line = words.last_iterate_line(r, eq.unknown, eq.unknown_unit,
                                           lambda v: _asked(v, figures))
            print(f"  {line}")
    print(f"\n{words.agreement_text(solution)}")
    if eq.definitions:
        # one line per distinct text: methods that agree to the figures shown share it
        lines: dict[tuple[str, str], list[str]] = {}
        for r in solution.runs:
            values = eq.definition_values(r.root)
            where = "the root" if r.converged else f"the {words.LAST_ITERATE}"
            text = words.definitions_line(values, figures or words.DEFAULT_FIGURES,
                                          eq.definition_units(derived=True))
            lines.setdefault((where, text), []).append(r.method)
        for (where, text), methods in lines.items():
            names = words.method_names(methods)
            print(f"{names[:1].upper()}{names[1:]}, definitions at {where}: {text}")
    if steps:
        for r in solution.runs:
            print(f"\n{words.method_title(r.method)}: every iterate")
            body = [
                [str(s.k), _g(s.x), _g(s.fx), _g(s.dfx), _g(s.dx), _g(s.lo), _g(s.hi)]
                for s in r.steps
            ]
            print(_table(list(words.iterate_headings(
                eq.unknown, "ascii", eq.unknown_unit,
                eq.residual_unit(derived=True)).values()), body))
    print(f"\n{caution()}")


def _labelled(column: str, unit: str | None) -> str:
    """A column heading in the unknown's unit: ``root [mm]``."""
    return f"{column} [{unit}]" if unit else column


def _parameter(name: str, value: float, converted) -> str:
    """``D = 150 mm (= 0.15 m)`` for a value with a unit, ``Re = 120000`` without."""
    from app.documents.words import measured_text

    return f"{name} = {measured_text(value, converted, _g)}"


def print_scan(scan, unknown: str, unit: str | None = None,
               f_unit: str | None = None) -> None:
    from app.documents import words

    # The range as typed: 15 figures show any typed decimal whole, without a ".0".
    shown = f"{unknown} [{unit}]" if unit else unknown
    print(f"scan of [{_g(scan.a, 15)}, {_g(scan.b, 15)}] for {shown}: "
          f"{words.counted(len(scan.roots), 'root')}, {words.counted(scan.samples, 'sample')}")
    if scan.roots:
        rows = [
            [
                str(i + 1),
                _g(r.x),
                _g(r.residual, 3),
                str(r.multiplicity),
                words.confirmed_text(r),
                words.located_text(r),
            ]
            for i, r in enumerate(scan.roots)
        ]
        residual = words.residual_units(f_unit, unit).get("fx")
        print(_table(["#", _labelled("x", unit), _labelled("residual", residual),
                      "multiplicity", "confirmed by",
                      "located by"], rows))
    # in the unknown's unit, as the roots' column: a pole of a load in kN is no pole in N
    at = f" {unit}" if unit else ""
    for x in scan.poles:
        print(f"pole (not a root) near {unknown} = {_g(x)}{at}")
    for x in scan.discontinuities:
        print(f"jump (not a root) at {unknown} = {_g(x)}{at}")
    for a, b in scan.gaps:
        print(f"undefined for {unknown} in [{_g(a)}, {_g(b)}]{at}")
    for w in words.scan_warnings(scan):
        print(f"warning: {w}")
    print(f"\n{caution()}")
