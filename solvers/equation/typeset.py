"""The typeset form: LaTeX strings for matplotlib's mathtext (pure string building).

The equation's LaTeX is built straight from the tokens (after the checked parse has
accepted them), in the order typed (``2^{10}``, ``\\pi``, ``\\mathrm{deg}``, ``\\ln``),
mathtext-safe and linear in the text. Derivatives are printed by sympy's LaTeX printer
restricted to what mathtext renders. Both set a name of several letters upright as one
symbol (``\\mathrm{cp}``) and separate the factors of a product holding one by ``\\cdot``;
constants are printed in their shortest digits, never padded with zeros. Whether mathtext
really renders a string is checked in the app (app.documents.typesetting.mathtext): the core
never imports matplotlib.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from decimal import Decimal
from typing import Any

import sympy as sp
from sympy.printing.conventions import split_super_sub
from sympy.printing.latex import LatexPrinter, translate

from solvers.equation.calculus import _node_count
from solvers.equation.compile import floatify_big
from solvers.equation.lexer import _Token, tokenize

# Typesetting budget: LaTeX longer than this is not typeset (mathtext takes ~0.4 s per
# 1,000 characters and the result is unreadable on a strip or a page anyway), and a
# derivative of more nodes than this is not even printed to LaTeX. Callers show "too
# large to typeset" instead.
MAX_TYPESET_CHARS = 2_000
MAX_TYPESET_NODES = 1_500


# A name of several letters is set upright as one symbol (\mathrm{cp}, \mathrm{Re}) so it
# cannot be read as a product of one-letter names; within a product that has such a name
# among its factors (or as the base of a factor's power), the factors are separated by
# \cdot ("m \cdot \mathrm{cp}", not "m cp"). Greek names (alpha -> \alpha) and the
# subscripts sympy splits off (x1 -> x_{1}, T_hi -> T_{hi}) keep sympy's form. The token
# typesetter and the printer of derivatives share this rule (the strip and the sheet show
# one convention).
_MULTI_LETTER = re.compile(r"[A-Za-z]{2,}")
_NAME_DOT = r" \cdot "


def _named_factor(factor: Any) -> bool:
    """Whether a factor of a product is a multi-letter name or a power of one, or the
    name d (set apart by \\cdot as they are)."""
    base = factor.base if isinstance(factor, sp.Pow) else factor
    if not isinstance(base, sp.Symbol):
        return False
    name, _, _ = split_super_sub(base.name)
    # a lone d beside another factor reads as a differential: the derivative of a
    # linkage's K1*cos(t4) with K1 = d/a was set "d sin(t4)/a", d(sin t4) to the eye
    # (d^2, a diameter squared, reads as one: "pi d^2/4" stays as it was)
    if base.name == "d":
        return not isinstance(factor, sp.Pow)
    return bool(_MULTI_LETTER.fullmatch(translate(name)))


class _MathtextLatexPrinter(LatexPrinter):
    """sympy LaTeX restricted to what matplotlib's mathtext renders, multi-letter names
    upright and set apart by \\cdot in products (the token typesetter's convention)."""

    def _deal_with_super_sub(self, string: str, style: str = "plain") -> str:
        tex = super()._deal_with_super_sub(string, style=style)
        name, _, _ = self._split_super_sub(string)
        if name and _MULTI_LETTER.fullmatch(name):
            return r"\mathrm{" + name + "}" + tex[len(name):]
        return tex

    def _print_Mul(self, expr: Any) -> str:
        if not any(_named_factor(f) for f in expr.args):
            return super()._print_Mul(expr)
        saved = self._settings["mul_symbol_latex"]
        self._settings["mul_symbol_latex"] = _NAME_DOT
        try:
            return super()._print_Mul(expr)
        finally:
            self._settings["mul_symbol_latex"] = saved

    def _named(self, name: str, expr: Any, exp: Any) -> str:
        args = ", ".join(self._print(a) for a in expr.args)
        tex = name + r"\left(" + args + r"\right)"
        return tex if exp is None else r"\left(" + tex + r"\right)^{" + str(exp) + "}"

    def _print_log10(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\log_{10}", expr, exp)

    def _print_log2(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\log_{2}", expr, exp)

    def _print_Heaviside(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\mathrm{H}", expr, exp)

    def _print_sign(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\mathrm{sgn}", expr, exp)

    def _print_atan2(self, expr: Any, exp: Any = None) -> str:
        return self._named(r"\mathrm{atan2}", expr, exp)

    def _print_Float(self, expr: Any) -> str:
        # Constants are doubles here: print the shortest text that reads back as the same
        # double (2.0 as 2, 0.1 as 0.1), not sympy's 15 digits; see _float_tex.
        try:
            v = float(expr)
        except OverflowError:
            return super()._print_Float(expr)
        if not math.isfinite(v):
            return super()._print_Float(expr)
        return _float_tex(v)


def _float_tex(v: float) -> str:
    """A finite double as LaTeX: its shortest round-tripping digits, never padded.

    From 10^-4 up to 10^6 the plain decimal (2, 0.1, 273.15); outside it mantissa and power
    of ten (4.05285 \\cdot 10^{15}, 10^{-6}): repr writes 4.05285e15 as 4052850000000000.0,
    sixteen digits of which ten are padding that claim a precision the value does not have.
    """
    if v == 0:
        return "0"
    if 1e-4 <= abs(v) < 1e6:
        return str(int(v)) if v == int(v) else repr(v)
    sign, digits, exponent = Decimal(repr(v)).normalize().as_tuple()
    text = "".join(map(str, digits))
    power = exponent + len(text) - 1  # v = +-d.ddd * 10^power
    mantissa = text[0] + ("." + text[1:] if len(text) > 1 else "")
    mantissa = ("-" if sign else "") + mantissa
    if mantissa in ("1", "-1"):
        return mantissa[:-1] + "10^{" + str(power) + "}"
    return mantissa + r" \cdot 10^{" + str(power) + "}"


_LATEX_SETTINGS = {"ln_notation": True}  # a printer per call: printers keep state while printing


def latex(expr: Any) -> str:
    """sympy LaTeX of ``expr``, restricted to what matplotlib's mathtext renders."""
    # The printer asks sign questions of every exponent (is it negative? is it constant?)
    # to decide what goes under a fraction bar; with real symbols, exp(-exp(-...(x)))
    # answers them by simplifying, which took time exponential in the depth (133 s for 14
    # levels). The same names without assumptions print the same text and answer at once.
    plain = {s: sp.Symbol(s.name) for s in getattr(expr, "free_symbols", ())
             if isinstance(s, sp.Symbol) and s.assumptions0}
    if plain:
        expr = expr.xreplace(plain)
    # A double that is an integer (the scale 1.0 of a unit, the exponent -1.0) as an
    # integer: sympy then writes 1.0*T as T, -1.0*m as -m and x**-1.0 as a fraction,
    # where the printed "1" of 1.0 stood in front of the factors (- 1 cp m).
    whole = {c: sp.Integer(int(c)) for c in getattr(expr, "atoms", lambda *_: ())(sp.Float)
             if math.isfinite(float(c)) and float(c) == int(c) and abs(float(c)) < 1e6}
    if whole:
        expr = expr.xreplace(whole)
    printer = _MathtextLatexPrinter(_LATEX_SETTINGS)
    try:
        tex = printer.doprint(expr)
    except ValueError:  # an integer too long for str(): show it as a float
        tex = printer.doprint(floatify_big(expr))
    # mathtext has no \operatorname in older matplotlib; \mathrm looks the same.
    return tex.replace(r"\operatorname{", r"\mathrm{")


# The typeset form is built as a string straight from the tokens (after the checked parse
# has accepted them), in the order typed: linear in the text, and nothing for sympy's
# printer to simplify or to slow down on (its printing of unevaluated nested trees can be
# exponential).
_SUM, _NEG, _PROD, _FRAC, _POW, _ATOM = range(6)

_TEX_FUNCTIONS = {
    "ln": r"\ln", "log10": r"\log_{10}", "log2": r"\log_{2}", "sin": r"\sin", "cos": r"\cos",
    "tan": r"\tan", "asin": r"\arcsin", "acos": r"\arccos", "atan": r"\arctan",
    "sinh": r"\sinh", "cosh": r"\cosh", "tanh": r"\tanh", "asinh": r"\mathrm{asinh}",
    "acosh": r"\mathrm{acosh}", "atanh": r"\mathrm{atanh}", "atan2": r"\mathrm{atan2}",
    "min": r"\min", "max": r"\max", "erf": r"\mathrm{erf}", "erfc": r"\mathrm{erfc}",
    **{f"{kind}{order}": f"{kind}_{{{order}}}" for kind in "JYIK" for order in (0, 1)},
}


@dataclass(frozen=True)
class _Tex:
    tex: str
    prec: int
    number: bool = False  # a bare number (a product writes \cdot before it)
    named: bool = False  # a multi-letter name or a power of one (\cdot in its product)


def _paren(node: _Tex, below: int) -> str:
    return rf"\left({node.tex}\right)" if node.prec < below else node.tex


class _Typesetter:
    """Recursive descent over tokens the checked parse accepted, producing LaTeX."""

    def __init__(self, tokens: list[_Token]):
        self.tokens = tokens
        self.i = 0
        self.symbols: dict[str, str] = {}

    @property
    def tok(self) -> _Token:
        return self.tokens[self.i]

    def advance(self) -> _Token:
        self.i += 1
        return self.tokens[self.i - 1]

    def equation(self) -> str:
        lhs = self.sum().tex
        if self.tok.text == "=":
            self.advance()
            return f"{lhs} = {self.sum().tex}"
        return f"{lhs} = 0"

    def sum(self) -> _Tex:
        first = self.product()
        parts = [first.tex]
        while self.tok.text in ("+", "-"):
            op = self.advance().text
            parts.append(f"{op} {_paren(self.product(), _PROD)}")
        return first if len(parts) == 1 else _Tex(" ".join(parts), _SUM)

    def product(self) -> _Tex:
        top, bottom = [self.signed()], []
        while self.tok.text in ("*", "/"):
            (top if self.advance().text == "*" else bottom).append(self.signed())
        if len(top) == 1 and not bottom:
            return top[0]
        negative = top[0].prec == _NEG and bool(bottom)
        if negative:  # -a/b is typeset as - a/b, the sign before the fraction
            top[0] = _Tex(top[0].tex[2:], top[0].prec + 1)
        numerator = self.juxtapose(top)
        if not bottom:
            return _Tex(numerator, _PROD)
        tex = rf"\frac{{{numerator}}}{{{self.juxtapose(bottom)}}}"
        return _Tex("- " + tex, _NEG) if negative else _Tex(tex, _FRAC)

    @staticmethod
    def juxtapose(factors: list[_Tex]) -> str:
        # The printer's rule (_MathtextLatexPrinter._print_Mul): \cdot between all the
        # factors of a product that holds a multi-letter name, else a space (and \cdot
        # before a number, which would otherwise run into the digits before it).
        named = any(f.named for f in factors)
        tex = _paren(factors[0], _NEG) if len(factors) > 1 else factors[0].tex
        for f in factors[1:]:
            dot = named or f.number or f.tex[:1].isdigit()
            tex += (_NAME_DOT if dot else " ") + _paren(f, _FRAC)
        return tex

    def signed(self) -> _Tex:
        if self.tok.text in ("+", "-"):
            op = self.advance().text
            inner = self.signed()
            return inner if op == "+" else _Tex("- " + _paren(inner, _PROD), _NEG)
        return self.power()

    def power(self) -> _Tex:
        base = self.primary()
        if self.tok.text not in ("^", "**"):
            return base
        self.advance()
        exponent = self.signed()
        return _Tex(f"{_paren(base, _ATOM)}^{{{exponent.tex}}}", _POW,
                    named=base.named and base.tex != "d")  # d^2 is no differential

    def primary(self) -> _Tex:
        t = self.advance()
        if t.kind == "num":
            number = _Tex(_tex_number(t.text), _ATOM, number=True)
            nxt = self.tok
            if nxt.pos == t.end and (nxt.kind == "name" or nxt.text == "("):
                rest = self.power()
                joint = _NAME_DOT if rest.named or rest.tex[:1].isdigit() else " "
                return _Tex(number.tex + joint + _paren(rest, _FRAC), _PROD)
            return number
        if t.text == "(":
            inner = self.sum()
            self.advance()  # ')'
            return inner
        if self.tok.text == "(":  # a function call
            self.advance()
            args = []
            while self.tok.text != ")":
                args.append(self.sum().tex)
                if self.tok.text == ",":
                    self.advance()
            self.advance()  # ')'
            return self.call(t.text, args)
        if t.text == "pi":
            return _Tex(r"\pi", _ATOM)
        if t.text == "deg":
            return _Tex(r"\mathrm{deg}", _ATOM)
        tex = self.symbols.get(t.text)
        if tex is None:
            tex = self.symbols[t.text] = latex(sp.Symbol(t.text))
        return _Tex(tex, _ATOM, named=tex.startswith(r"\mathrm{") or t.text == "d")

    @staticmethod
    def call(name: str, args: list[str]) -> _Tex:
        joined = ", ".join(args)
        if name == "sqrt":
            return _Tex(rf"\sqrt{{{joined}}}", _ATOM)
        if name == "exp":
            return _Tex(rf"e^{{{joined}}}", _POW)
        if name == "abs":
            return _Tex(rf"\left|{joined}\right|", _ATOM)
        return _Tex(rf"{_TEX_FUNCTIONS[name]}\left({joined}\right)", _ATOM)


def _tex_number(text: str) -> str:
    mantissa, _, exponent = text.lower().partition("e")
    if not exponent:
        return text
    power = rf"10^{{{int(exponent)}}}"
    return power if mantissa in ("1", "1.", "1.0") else rf"{mantissa} \cdot {power}"


def typeset(text: str, lhs: Any, rhs: Any | None) -> str:
    """LaTeX of the equation in the order it was typed (parameters by name); if that
    cannot be built, sympy's printing of the checked expression."""
    try:
        return _Typesetter(tokenize(text)).equation()
    except Exception:  # noqa: BLE001 - cosmetic path: fall back to the checked expression
        sides = [lhs] if rhs is None else [lhs, rhs]
        tex = [latex(side.expr) for side in sides]
        return " = ".join(tex) + (" = 0" if len(tex) == 1 else "")



def lines_latex(text: str) -> tuple[tuple[str, str], ...]:
    """Each line of a text of several lines (definitions and equations, ``;`` or line
    breaks between them) as (the line as typed, its LaTeX in typed order, or '' where it
    cannot be typeset); () when the text cannot be split into lines."""
    from solvers.equation.lines import split_lines

    try:
        lines = split_lines(text, tokenize(text))
    except Exception:  # noqa: BLE001 - cosmetic path: the text as entered governs
        return ()
    out = []
    for line in lines:
        piece = text[line.start:line.end]
        try:
            tex = _Typesetter(tokenize(piece)).equation()
        except Exception:  # noqa: BLE001 - as above
            tex = ""
        # the one equation's budget, per line: past it the text as entered is clearer
        out.append((piece, tex if len(tex) <= MAX_TYPESET_CHARS else ""))
    return tuple(out)


def derivative_latex(d: Any) -> str:
    """LaTeX (mathtext-safe) of a derivative, parameters by name; '' for None, or when it
    is over the typesetting budget (MAX_TYPESET_NODES nodes, MAX_TYPESET_CHARS characters).

    Constants folded while differentiating (1/3.7 -> 0.27027027027027) are shown to six
    significant figures: the typeset form is for reading; f' itself is exact.
    """
    if d is None or _node_count(d, MAX_TYPESET_NODES) > MAX_TYPESET_NODES:
        return ""
    short = {c: sp.Float(float(f"{float(c):.6g}")) for c in d.atoms(sp.Float)}
    tex = latex(d.xreplace(short) if short else d)
    return tex if len(tex) <= MAX_TYPESET_CHARS else ""
