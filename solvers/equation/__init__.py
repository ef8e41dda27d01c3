r"""Equation text -> checked sympy expression -> fast real-valued callables f and f'.

The user's text is untrusted. It is never handed to ``eval``, ``sympify`` or
``parse_expr``: a whitelist tokenizer splits it (ASCII numbers, ASCII names, the
operators ``+ - * / ^ **``, parentheses, commas and one ``=``), and a small
recursive-descent parser builds sympy objects directly from the tokens. Code that
``lambdify`` generates contains no user string: the unknown is renamed to an
internal symbol and parameters become fixed argument names (``_p0, _p1, ...``).

Parse once, bind late: parameters stay symbols; f(x, *params) and f'(x, *params) are
compiled once; ``Equation.bind(values)`` gives new callables with no re-parse or
re-compile, and values may be numpy arrays that broadcast.

Modules: lexer (tokens, limits, EquationError), functions (the callable vocabulary),
parser (tokens -> sympy, parameter-only checks), calculus (derivatives, Jacobians, size
limits), compile (printers; any expression list as code of (x..., *params)), typeset
(LaTeX strings), record (Equation, bind, parse_equation).

Syntax (what an engineer types)
-------------------------------
* ``lhs = rhs``, or a bare expression meaning ``expr = 0``. Several lines are allowed
  (line breaks are spaces).
* ``^`` and ``**`` are powers, right-associative, binding tighter than a leading
  minus: ``-x^2`` is ``-(x^2)``, ``2^3^2`` is ``2^9``.
* Implicit multiplication only where a number is written directly against a name or
  ``(``: ``2x``, ``3(x+1)``, ``30deg``, ``2.5e-3x`` (``1e5`` is a number; ``2e-x`` is
  ``2*e - x``). ``2x^2`` is ``2*(x^2)``. Nothing riskier: ``2 x``, ``x y``,
  ``(a)(b)``, ``k(x)`` are errors, and so are the ambiguous ``1/2x`` and ``x^2y``
  (write ``1/(2*x)`` or ``x/2``; ``x^(2*y)`` or ``x^2*y``).
* Functions: sqrt exp ln log10 log2 sin cos tan asin acos atan atan2(y, x) sinh cosh
  tanh asinh acosh atanh abs min max (two or more arguments). Angles are radians.
  Constants: ``pi`` and ``deg`` (= pi/180, so ``sin(30deg)`` is 0.5).
* Bare ``log`` is refused with a message saying to write ``ln`` (natural) or
  ``log10`` (base 10): engineers' handbooks use both meanings (a Colebrook equation
  with the wrong one gives a wrong friction factor with no warning), so zerotrace
  never guesses.
* Every other name is an ordinary name: single letters engineers use (e, g, R, k, E,
  I, S, N, Q, C, O) are plain parameters, never Euler's number or the imaginary
  unit (write ``exp(1)`` for e). Names are ASCII letters, digits and ``_``, start
  with a letter, contain no ``__``, are not Python keywords and are at most
  ``MAX_NAME`` characters.

Units
-----
Parameter values may carry units (``"150 mm"``, :class:`solvers.units.Measured`), and the
unknown a unit (``unknown_unit``): values are converted once at bind time and the
dimensions checked over the parsed parts (:mod:`solvers.units`); names in the text never
carry units.

Limits and refusals
-------------------
Every refusal is an :class:`EquationError` (a ``ValueError``) with a one-line message;
``.position`` is the 0-based offset into the text where it applies (messages count
columns from 1, as editors do). The text is at most ``MAX_LENGTH`` characters and
nests at most ``MAX_DEPTH`` levels (parentheses, signs, exponents; abs/min/max at most
``MAX_KINK_DEPTH``, since sympy's sign checks on such chains grow steeply). Constant parts
are evaluated in double precision as they are read (parts with parameters when the
values are bound, naming the same part): a constant that overflows,
divides by zero or has no real value (``10^400``, ``1/0``, ``sqrt(-1)``, ``ln(0)``,
``9^9^9^9``) is refused where it stands, before sympy sees it. In ``expr`` (and
``symbolic_expr``) every constant part is then one double and only constant
exponents stay exact integers (so ``x^2`` stays real for negative x): sympy rewrites
such as ``exp(n*ln(c*x)) -> c^n x^n`` therefore never build giant exact integers.
The typeset form (``latex``) is built as a string straight from the tokens, in the
order typed (``2^{10}``, ``\pi``, ``\mathrm{deg}``, ``\ln``), mathtext-safe and
linear in the text.

The derivative comes from a chain rule of our own over the node types the parser
builds (abs' = sign, max(a, b)' = H(a - b) a' + H(b - a) b' with H(0) = 1/2): sympy's
diff goes through re/im/conjugate for abs/min/max, which is slow and cannot be
compiled. A derivative estimated at more than ``2*MAX_DERIVATIVE_NODES`` nodes, or
under abs/min/max nested more than ``MAX_KINK_NESTING`` deep, is not built: ``fprime``
is None and ``notes`` says Newton differentiates numerically.

Known effects of sympy's automatic simplification, left as they are: ``x - x`` is 0,
``sqrt(x)^2`` is x and ``exp(ln(x))`` is x (so these are defined for x < 0 too), and
``(3x)^n`` becomes ``3^n x^n`` (which can give nan instead of inf where both factors
overflow/underflow).

Evaluation
----------
``f`` and ``fprime`` are compiled once per text and unknown. Arrays in give float64
arrays of the same shape out (of the broadcast shape, with array parameter values); a
Python/numpy scalar in gives a Python ``float`` out. Real arithmetic:
a domain error gives NaN (``sqrt(-1)``, ``x^0.5`` for x < 0, ``acos(2)``), poles give
inf (``ln(0)`` is -inf); evaluation never raises on such values and never warns.
Scalars take a ``math``-module path (much faster than numpy on one float); any
exception there falls back to the numpy path, which gives the nan/inf.
"""

from __future__ import annotations

from solvers.equation.lexer import (
    CONSTANT_NAMES,
    MAX_DEPTH,
    MAX_KINK_DEPTH,
    MAX_LENGTH,
    MAX_NAME,
    EquationError,
)
from solvers.equation.lines import free_names, one_line
from solvers.equation.parsing import parse_equation
from solvers.equation.record import Equation
from solvers.equation.typeset import MAX_TYPESET_CHARS, MAX_TYPESET_NODES

constants = CONSTANT_NAMES  # the names that are constants, never parameters: pi, deg

__all__ = [
    "CONSTANT_NAMES",
    "MAX_DEPTH",
    "MAX_KINK_DEPTH",
    "MAX_LENGTH",
    "MAX_NAME",
    "MAX_TYPESET_CHARS",
    "MAX_TYPESET_NODES",
    "Equation",
    "EquationError",
    "constants",
    "free_names",
    "one_line",
    "parse_equation",
]
