"""Expressions printed in zerotrace's own equation syntax, the one the parser reads.

sympy's own text form is not ours: it writes ``**`` for powers, ``log`` for the
natural logarithm (a checker can read ``log(10)`` as 1), ``Abs``, ``Heaviside`` and
``sign``. A derivative printed on a calculation sheet must read the way the engineer
typed the equation, and must say the same thing when typed back in. :func:`equation_text`
therefore prints

* powers with ``^`` (``sqrt(u)`` for u^(1/2), ``u^(3/2)`` with the exponent exact),
* ``ln`` for the natural logarithm, ``log10`` and ``log2`` as typed, ``abs``, ``min``,
  ``max``, ``atan2``, ``exp``, ``pi`` and ``exp(1)`` for Euler's number,
* every floating-point constant as the shortest decimal that reads back as the same
  double (Python's ``repr``), and
* the kink functions a derivative of ``abs``/``min``/``max`` brings in, which the
  parser has no name for, in words it has: ``sign(u)`` as ``(u/abs(u))`` and the unit
  step ``H(u)`` as ``((1 + u/abs(u))/2)``. These agree with zerotrace's derivative
  everywhere except at u = 0 itself, where the derivative does not exist (zerotrace's
  compiled f' takes the mean of the one-sided slopes there, the printed form is
  undefined).

``parse_equation(equation_text(e))`` gives back an expression with the same values as
``e`` (the parser folds constant parts such as ``ln(10)`` into one double as it reads,
so the trees may differ by such folding and by term order), which
tests/test_documents.py checks. :func:`breakable` spaces the operators of a printed
expression so a page can break a long one between terms and factors, never inside a
number or a name.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from typing import Any

import sympy as sp
from sympy.printing.precedence import PRECEDENCE, precedence
from sympy.printing.str import StrPrinter

# sympy function name -> our name, for functions the parser knows by another name.
_RENAMED: dict[str, str] = {
    "log": "ln",
    "Abs": "abs",
    "Min": "min",
    "Max": "max",
}


def _sign_text(p: _ZerotracePrinter, e: Any) -> str:
    u = p.parenthesize(e.args[0], PRECEDENCE["Mul"], strict=True)
    return f"({u}/abs({p.doprint(e.args[0])}))"


def _step_text(p: _ZerotracePrinter, e: Any) -> str:
    u = p.parenthesize(e.args[0], PRECEDENCE["Mul"], strict=True)
    return f"((1 + {u}/abs({p.doprint(e.args[0])}))/2)"


def _reciprocal(name: str) -> Callable[[_ZerotracePrinter, Any], str]:
    def text(p: _ZerotracePrinter, e: Any) -> str:
        return f"(1/{name}({p.doprint(e.args[0])}))"

    return text


def _bessel(letter: str) -> Callable[[_ZerotracePrinter, Any], str]:
    """sympy's besselj(n, u) and kin as our J0(u), J1(u) (orders 0 and 1, all the parser
    and the derivative build)."""

    def text(p: _ZerotracePrinter, e: Any) -> str:
        order, u = e.args
        return f"{letter}{order}({p.doprint(u)})"

    return text


# sympy functions with no name in our syntax -> an equal expression in names it has.
_REWRITTEN: dict[str, Callable[[_ZerotracePrinter, Any], str]] = {
    "besselj": _bessel("J"),
    "bessely": _bessel("Y"),
    "besseli": _bessel("I"),
    "besselk": _bessel("K"),
    "sign": _sign_text,
    "Heaviside": _step_text,
    "sec": _reciprocal("cos"),
    "csc": _reciprocal("sin"),
    "cot": _reciprocal("tan"),
}


class _ZerotracePrinter(StrPrinter):
    """sympy's StrPrinter (precedence, signs, numerator/denominator) with our spelling."""

    def _print_Float(self, expr: Any) -> str:
        value = float(expr)
        if not math.isfinite(value):
            return super()._print_Float(expr)
        if value == int(value) and abs(value) < 1e15:
            return str(int(value))
        return repr(value)

    def _print_Pow(self, expr: Any, rational: bool = False) -> str:
        base, exp = expr.args
        text = super()._print_Pow(expr, rational=rational)
        if text.startswith("sqrt(") or text.startswith("1/"):  # u^(1/2), u^(-1/2), 1/u
            return text
        prec = precedence(expr)
        if exp.is_Rational and exp.q != 1 or exp.is_Number and exp < 0:
            exponent = f"({self._print(exp)})"  # ^ binds tighter than / and unary minus
        else:
            exponent = self.parenthesize(exp, prec, strict=False)
        return f"{self.parenthesize(base, prec, strict=True)}^{exponent}"

    def _print_Function(self, expr: Any) -> str:
        name = expr.func.__name__
        rewrite = _REWRITTEN.get(name)
        if rewrite is not None:
            return rewrite(self, expr)
        args = ", ".join(self.doprint(a) for a in expr.args)
        return f"{_RENAMED.get(name, name)}({args})"

    # sympy gives these their own printing methods; route them through the table above.
    _print_log = _print_Function
    _print_Abs = _print_Function
    _print_Min = _print_Function
    _print_Max = _print_Function
    _print_sign = _print_Function
    _print_Heaviside = _print_Function
    _print_exp = _print_Function
    _print_besselj = _print_Function
    _print_bessely = _print_Function
    _print_besseli = _print_Function
    _print_besselk = _print_Function
    _print_erf = _print_Function
    _print_erfc = _print_Function

    def _print_Exp1(self, expr: Any) -> str:
        return "exp(1)"

    def _print_Pi(self, expr: Any) -> str:
        return "pi"


def equation_text(expr: Any) -> str:
    """``expr`` (a sympy expression) in zerotrace's equation syntax.

    Parameters
    ----------
    expr
        A sympy expression built by :func:`solvers.parse_equation` or differentiated
        from one (``Equation.expr``, ``.derivative``, ``.symbolic_derivative``).

    Returns
    -------
    str
        Text the parser reads back to an equal expression: floating-point constants
        exactly (shortest round-trip decimal), ``^`` for powers, ``ln`` for the natural
        logarithm. Never raises for an expression sympy can print at all; a node with
        no spelling in our syntax keeps sympy's name (it would not parse back).
    """
    return _ZerotracePrinter().doprint(expr)


# A number (with its exponent: the '-' of 1e-05 is no operator) or any other character.
_TOKEN = re.compile(r"(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?|[A-Za-z_][A-Za-z0-9_]*|\s+|.")
# An exact exponent such as ^(3/2) or ^(-2) stays tight: it reads as one number.
_TIGHT_EXPONENT = re.compile(r"\^\(-?\d+(?:/\d+)?\)")


def breakable(text: str) -> str:
    """``text`` with one space each side of ``*`` and ``/`` (``+`` and ``-`` already have
    them), so a narrow column can break a long expression between factors. Numbers, names
    and exact exponents such as ``^(3/2)`` are never split. Parses to the same expression.
    """
    out: list[str] = []
    pos = 0
    for tight in _TIGHT_EXPONENT.finditer(text):
        out.append(_space_operators(text[pos:tight.start()]))
        out.append(tight.group())
        pos = tight.end()
    out.append(_space_operators(text[pos:]))
    return "".join(out)


def _space_operators(text: str) -> str:
    pieces = []
    for token in _TOKEN.findall(text):
        pieces.append(f" {token} " if token in ("*", "/") else token)
    return re.sub(r" {2,}", " ", "".join(pieces))


def latex_terms(expr: Any, digits: int = 6) -> list[str]:
    """The terms of ``expr`` as mathtext-safe LaTeX, each with its sign ("- a", "+ b"; the
    first without "+"), for typesetting a long sum over several lines.

    Floating-point constants are shown to ``digits`` significant figures (the typeset
    form is for reading; :func:`equation_text` gives the exact one). Empty for None.
    """
    if expr is None:
        return []
    from solvers.equation.typeset import latex as _latex  # the typeset form the window shows

    short = {c: sp.Float(float(f"{float(c):.{digits}g}")) for c in expr.atoms(sp.Float)}
    if short:
        expr = expr.xreplace(short)
    terms = []
    for i, term in enumerate(expr.as_ordered_terms()):
        negative = term.could_extract_minus_sign()
        body = _latex(-term if negative else term)
        terms.append(("- " if negative else ("" if i == 0 else "+ ")) + body)
    return terms
