"""The words of tables of inputs: the notes of a batch or sweep and its summary."""

from __future__ import annotations

from typing import Any

from app.documents.words.numbers import counted, number

# ----------------------------------------------------------------- tables of inputs

# Words for each code of solvers.batch.NOTE_CODES (Batch.notes: one row each).
BATCH_NOTE_TEXT: dict[str, str] = {
    "bad_parameters": "the row's parameter values give part of the equation no finite real "
                      "value: not solved",
    "failed": "did not converge from the last root, nor by following the branch through "
              "intermediate values: the branch may end before this value (a turning point) "
              "or turn too sharply for this spacing; a scan at this value shows its roots",
    "restart_last_good": "started again from the last converged root (the previous row failed)",
    "restart_x0": "started again from x0 (no row had converged yet)",
    "branch_jump": "the root lies off the branch followed so far, and shorter steps could not "
                   "follow that branch to this value (it ends at a turning point, or another "
                   "root was found): check which root you need here",
    "turning_point": "f' at the root changed sign from the previous row's, so this root is on "
                     "another branch (the one followed turned back at a turning point between "
                     "the two values, and shorter steps could not follow it): check which root "
                     "you need here",
    "at_fold": "f' at the root is zero up to rounding (a double root): the branch followed "
               "turns back at this value (a turning point) and ends here; the next row's "
               "root lies on another branch",
    "left_range": "the method converged to a root outside the range given for the unknown: "
                  "it is not taken as this branch's root (the row has none), and the next "
                  "row starts from the last root inside the range",
    "fixed_bracket": "every row uses the same bracket (a bracketing method needs no "
                     "continuation)",
    "restart_scan": "the sweep was resumed here from a root chosen from a scan at this value",
    "continued": "the step from the previous row was too long to stay on the branch in one "
                 "solve: the branch was followed through intermediate values (each row's "
                 "start is the last of them)",
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


def shared_bracket_advice(batch: Any) -> str:
    """Plain advice when one bracket given to every row failed on most of them ("" else).

    A bracket every row shares (the ``a`` and ``b`` of :attr:`Batch.starts` single
    numbers, not columns) on which f keeps one sign in more than half the rows does not
    enclose those rows' roots: the table is not wrong, its bracket is (a narrow bracket
    around one row's root, say). The values are in the unknown's unit.
    """
    starts = getattr(batch, "starts", {})
    a, b = starts.get("a"), starts.get("b")
    if not isinstance(a, float) or not isinstance(b, float):
        return ""
    missed = batch.counts().get("no_sign_change", 0)
    if 2 * missed <= batch.size:
        return ""
    unit = getattr(batch.equation, "unknown_unit", None)
    u = f" {unit}" if unit else ""
    return (f"f has the same sign at both ends of the bracket [{number(a, 6)}, "
            f"{number(b, 6)}]{u} on {missed} of {counted(batch.size, 'row')}: that bracket, "
            "shared by every row, does not enclose their roots. Widen it to the range the "
            "roots can lie in, give each row its own (columns bracket_a and bracket_b), or "
            "use an open method from x0.")
