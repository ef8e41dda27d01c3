"""The values an equation is given and the name it solves for.

Parameter values are checked (finite floats, or float64 arrays of finite values) before
anything is compiled; the unknown is the name asked for, or the one name left without a
value, and a refusal names what is missing with hints for a name typed close to it
(``esp`` for ``eps``) or a unit typed into the equation (``2.5mm``). Shared by one
equation (:mod:`solvers.equation.parsing`) and systems (:mod:`solvers.systems.model`).
"""

from __future__ import annotations

import difflib
import math
import re
from collections.abc import Collection, Iterable, Mapping, Sequence
from numbers import Real
from typing import Any

import numpy as np

from solvers.equation.lexer import CONSTANT_NAMES, EquationError, _fail


def _value(name: str, value: Any) -> Any:
    """A float, or a float64 array of finite values; EquationError naming ``name`` if not."""
    if value.__class__ is float:
        if value - value == 0.0:  # finite (inf - inf and nan - nan are nan)
            return value
        raise EquationError(f"parameter {name!r} must be finite, got {value!r}")
    if isinstance(value, np.ndarray):  # rows of values; a list is refused (type confusion)
        arr = np.asarray(value)
        if arr.dtype.kind not in "iuf" or arr.dtype == np.bool_:
            raise EquationError(f"parameter {name!r} must be real numbers, "
                                f"got an array of {arr.dtype}")
        arr = arr.astype(np.float64)
        if not np.isfinite(arr).all():
            raise EquationError(f"parameter {name!r} must be finite in every row")
        return float(arr) if arr.ndim == 0 else arr
    if isinstance(value, bool) or not isinstance(value, (Real, np.number)) or \
            isinstance(value, complex | np.complexfloating):
        raise EquationError(f"parameter {name!r} must be a real number, "
                            f"got {type(value).__name__}")
    v = float(value)
    if not math.isfinite(v):
        raise EquationError(f"parameter {name!r} must be finite, got {v!r}")
    return v


def validate_parameters(parameters: Mapping[str, Any] | None) -> dict[str, Any]:
    """Parameter values by name, each a float or a float64 array of finite values;
    EquationError naming the parameter for anything else (a constant's name, a string,
    a complex number, a list, a value that is not finite)."""
    if parameters is None:
        return {}
    if not isinstance(parameters, Mapping):
        raise EquationError("parameters must be a mapping of name to number")
    values: dict[str, Any] = {}
    for name, value in parameters.items():
        if not isinstance(name, str):
            raise EquationError(f"parameter name {name!r} is not a string")
        if name in CONSTANT_NAMES:
            # the text's 'pi' or 'deg' is always the constant: a value would be dropped unseen
            meaning = "pi = 3.14159..." if name == "pi" else "deg = pi/180"
            raise EquationError(f"parameter '{name}' has the name of the constant {meaning}; "
                                "give the parameter another name")
        values[name] = _value(name, value)
    return values


def misnamed_hint(missing: Sequence[str], given: Iterable[str],
                  used: Collection[str] = ()) -> str:
    """' (did you mean 'a'? 'A' is not in the equation)' for each given name the equation
    does not use (``used``: the names it does) that is close to a name it lacks a value for
    ('' when none is).

    Close: the same name in another case, or difflib's ratio >= 0.6 on the lower-case
    names (esp for eps, hf for h), each missing name suggested once.
    """
    names = set(missing)
    lower = {n.lower(): n for n in missing}
    said, taken = [], set()
    for name in given:
        if not isinstance(name, str) or name in names or name in used:
            continue
        close = difflib.get_close_matches(name.lower(), list(lower), n=1, cutoff=0.6)
        if close and lower[close[0]] not in taken:
            taken.add(lower[close[0]])
            said.append(f"did you mean '{lower[close[0]]}'? '{name}' is not in the equation")
    return f" ({'; '.join(said)})" if said else ""


def choose_unknown(text: str, names: list[str], unknown: Any, values: Mapping[str, Any],
                   first_pos: Mapping[str, int], require_values: bool = True) -> str:
    """The name to solve for among ``names`` (in order of first appearance): ``unknown``
    when given (a name of the equation), else the one name without a value. Raises
    EquationError, with hints, when none or several are left, or when a name other than
    the unknown has no value (unless not ``require_values``: the caller binds them later).
    An unknown that also has a value is the caller's remark."""
    if not names:
        raise EquationError("the equation has no unknown (it contains no names)", None)
    if unknown is None:
        open_names = [n for n in names if n not in values]
        if len(open_names) == 1:
            return open_names[0]
        if not open_names:
            raise EquationError("no unknown: every name has a value ("
                                + ", ".join(names) + "); say which one to solve for", None)
        hint = ""
        if "e" in open_names:
            hint = " ('e' is an ordinary name; write exp(...) for the exponential)"
        raise _fail(text, "cannot tell the unknown: " + ", ".join(
            f"'{n}'" for n in open_names) + " have no value; name the unknown or give "
            "values for the others" + hint + misnamed_hint(open_names, values, names),
            None)
    if not isinstance(unknown, str):
        raise EquationError(f"the unknown must be a name, got {type(unknown).__name__}")
    if unknown not in names:
        raise EquationError(f"the unknown '{unknown}' does not appear in the equation "
                            "(names: " + ", ".join(names) + ")", None)
    missing = [n for n in names if n != unknown and n not in values]
    if missing and require_values:
        raise _fail(text, "no value for " + ", ".join(f"'{n}'" for n in missing)
                    + f" (the unknown is '{unknown}')" + misnamed_hint(missing, values, names)
                    + _glued_unit_hint(text, missing, first_pos), first_pos[missing[0]])
    return unknown


def _glued_unit_hint(text: str, missing: Sequence[str], first_pos: Mapping[str, int]) -> str:
    """' ('mm' right after 2.5 ...)' when a name without a value stands right after a number
    (2.5mm reads as 2.5*mm) and is a unit: a unit typed into the equation; '' otherwise.
    pint is asked only on this way to a refusal."""
    for name in missing:
        at = first_pos.get(name)
        if at is None or at == 0 or not (text[at - 1].isdigit() or text[at - 1] == "."):
            continue
        try:
            from solvers.units.reading import read_unit

            read_unit(name)
        except Exception:  # noqa: BLE001 - not a unit: no hint
            continue
        number = re.search(r"[0-9.]+(?:[eE][+-]?[0-9]+)?$", text[:at])
        return (f" ('{name}' right after {number.group(0) if number else 'a number'} is "
                f"read as a product; '{name}' is also a unit: if a unit was meant, a number "
                "with a unit goes in as a parameter's value, never in the equation)")
    return ""
