"""What ``zerotrace solve`` prints for a system: plain tables, words from the words package."""

from __future__ import annotations

from typing import Any

from app.terminal import _g, _labelled, _parameter, _table, caution


def print_system_solution(solution: Any, *, steps: bool, figures: int | None = None) -> None:
    from app.documents import words

    system = solution.system
    runs = solution.runs
    print("equations:")
    for i, text in enumerate(system.equations, 1):
        print(f"  ({i}) {text}")
    if system.definitions:
        print("definitions: " + ", ".join(system.definitions))
    params = ", ".join(_parameter(k, v, system.parameter_units.get(k))
                       for k, v in system.parameters.items())
    units = system.unknown_units
    print("unknowns:  " + ", ".join(_labelled(n, units.get(n)) for n in system.unknowns)
          + (f"    parameters: {params}" if params else ""))
    start = solution.worksheet.system.start()
    print("start:     " + ", ".join(f"{k} = {_g(v)}" + (f" {units[k]}" if units.get(k) else "")
                                    for k, v in start.items()))
    for note in words.remarks_text(system.remarks):
        print(f"note:      {note}")
    print(f"note:      {words.JACOBIAN_WORDS[system.jacobian_kind]}; "
          f"{words.blocks_text(system.blocks, system.unknowns)}")
    print()
    header = ["method", "converged", "reason", "iterations", "evaluations", "||F|| at the end",
              "--method"]
    print(_table(header, [[words.system_method_title(r.method),
                           "yes" if r.converged else "NO", r.reason, str(r.iterations),
                           str(r.evaluations), _g(r.residual_norm, 3), r.method]
                          for r in runs]))
    print()
    titles = [words.system_method_title(r.method) for r in runs]
    print(_table(["unknown", *titles],
                 [[_labelled(n, units.get(n)),
                   *(_g(r.root[n], figures) if r.converged else words.NOT_A_ROOT
                     for r in runs)]
                  for n in system.unknowns]))
    print()
    # each residual in its equation's SI unit (a flow balance in m^3/s beside flows in L/s)
    f_units = system.residual_units(derived=True)
    print(_table(["residual at the root", *(["unit (SI)"] if f_units else []), *titles],
                 [[words.clipped(f"({i + 1}) {text}", 48),
                   *([words.unit_cell(f_units[i])] if f_units else []),
                   *(_g(r.residuals[i], 3) for r in runs)]
                  for i, text in enumerate(system.equations)]))
    for r in runs:
        values = system.definition_values([r.root[n] for n in system.unknowns])
        where = "the root" if r.converged else f"the {words.LAST_ITERATE}"
        if values:
            print(f"\n{words.system_method_title(r.method)}, definitions at {where}: "
                  + words.definitions_line(values, figures or words.DEFAULT_FIGURES,
                                           system.definition_units(derived=True)))
    print()
    for r in runs:
        print(f"  {words.system_run_message(r)}")
        if not r.converged:  # its root column says "—": where it stopped
            print("  Its last iterate (not a root): " + ", ".join(
                f"{n} = {_g(r.root[n], figures)}" + (f" {units[n]}" if units.get(n) else "")
                for n in system.unknowns))
    if steps:
        for r in runs:
            print(f"\n{words.system_method_title(r.method)}: every iterate")
            body = [[str(s.k), str(s.block + 1), *(_g(v) for v in s.x.values()),
                     _g(s.residual_norm, 6), _g(s.step_norm, 6), _g(s.damping, 4),
                     "LM" if s.regularised else ""] for s in r.steps]
            print(_table(["k", "block", *(_labelled(n, units.get(n)) for n in system.unknowns),
                          "||F||", "||step||", "damping", ""],
                         body))
    print(f"\n{caution()}")
