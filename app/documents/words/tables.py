"""The words of tables of inputs: the notes of a batch or sweep and its summary."""

from __future__ import annotations

from typing import Any

from app.documents.words.numbers import counted

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
