"""The lexer: a whitelist tokenizer, the limits and the refusal type.

Anything outside ASCII numbers, ASCII names, ``+ - * / ^ **``, parentheses, commas and
one ``=`` is refused with its position; common look-alikes pasted from documents get a
hint saying what to type instead.
"""

from __future__ import annotations

import keyword
import re
import unicodedata
from dataclasses import dataclass

MAX_LENGTH = 2000  # characters; a long design equation is a few hundred
MAX_DEPTH = 100  # nesting levels: parentheses, signs and exponents together
MAX_NAME = 40  # characters in one name
MAX_KINK_DEPTH = 20  # deeper abs/min/max nesting is refused (sympy's checks grow ~depth^4)


class EquationError(ValueError):
    """Equation text that cannot be used. ``position``: 0-based offset into the text, or None."""

    def __init__(self, message: str, position: int | None = None):
        super().__init__(message)
        self.position = position


_COMMA_NUMBER = re.compile(r"([-+]?)([0-9]+)((?:,[0-9]+)+)(\.[0-9]*)?")


def comma_hint(text: str) -> str:
    """How to write a number typed with commas, for a refusal (' (...)'; '' when ``text``
    is no such number). '1,5' is a decimal comma; '1,200,000' and '12,500.5' a thousands
    separator;
    '1,200' may be either (1.2 in much of Europe, 1200 in the US and UK), and a hint that
    took one reading would turn the other into a value 1000 times off: both are named."""
    match = _COMMA_NUMBER.fullmatch(text.strip())
    if match is None:
        return ""
    sign, head, rest, tail = match.groups()
    groups = rest[1:].split(",")
    said = []
    if len(head) <= 3 and all(len(g) == 3 for g in groups):
        said.append(f"a thousands separator? write {sign}{head}{''.join(groups)}{tail or ''}")
    if len(groups) == 1 and not tail:
        said.append(f"a decimal comma? write {sign}{head}.{groups[0]}")
    return f" ({'; or '.join(said)})" if said else ""


# ---------------------------------------------------------------------------------------------
# Tokens
# ---------------------------------------------------------------------------------------------

_TOKEN_RE = re.compile(
    r"(?P<ws>[ \t\r\n]+)"
    r"|(?P<num>(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)"
    r"|(?P<name>[A-Za-z_][A-Za-z0-9_]*)"
    r"|(?P<op>\*\*|[-+*/^(),=;])",
    re.ASCII,
)


@dataclass(frozen=True)
class _Token:
    kind: str  # "num", "name", "op", "end"
    text: str
    pos: int
    end: int


# Common non-ASCII characters pasted from documents, and what to type instead.
_UNICODE_HINTS = {
    "\u2212": "-",  # minus sign
    "\u2013": "-",  # en dash
    "\u2014": "-",  # em dash
    "\u00d7": "*",  # multiplication sign
    "\u00b7": "*",  # middle dot
    "\u22c5": "*",  # dot operator
    "\u2219": "*",  # bullet operator
    "\u00f7": "/",
    "\u2044": "/",  # fraction slash
    "\u00b2": "^2",
    "\u00b3": "^3",
    "\u00b9": "^1",
    "\u00bd": "(1/2)",
    "\u03c0": "pi",
    "\u221a": "sqrt(...)",
    "\u00b0": "deg",
    "\u00a0": "a plain space",
    "\u2009": "a plain space",
    "\u202f": "a plain space",
    "\u2018": "nothing (no strings)",
    "\u2019": "nothing (no strings)",
    "\u201c": "nothing (no strings)",
    "\u201d": "nothing (no strings)",
    "\u2264": "an equation with '=' (no inequalities)",
    "\u2265": "an equation with '=' (no inequalities)",
    "\u03bb": "lam",  # 'lambda' is a Python keyword, so the spelled-out name is refused too
}

_CHAR_HINTS = {
    "'": "strings are not allowed",
    '"': "strings are not allowed",
    ".": "a '.' belongs only in a decimal number such as 0.5; no attribute access",
    "!": "factorials are not supported",
    "[": "use ( ) for grouping",
    "]": "use ( ) for grouping",
    "{": "use ( ) for grouping",
    "}": "use ( ) for grouping",
    "%": "write /100 for a percentage",
    "<": "an equation needs '=', not a comparison",
    ">": "an equation needs '=', not a comparison",
    "#": "comments are not supported",
}

_ASCII_LOOKALIKES = {
    # Cyrillic and Greek letters that look like Latin ones.
    "\u0430": "a", "\u0435": "e", "\u043e": "o", "\u0440": "p", "\u0441": "c", "\u0443": "y",
    "\u0445": "x", "\u0410": "A", "\u0412": "B", "\u0415": "E", "\u041a": "K", "\u041c": "M",
    "\u041d": "H", "\u041e": "O", "\u0420": "P", "\u0421": "C", "\u0422": "T", "\u0425": "X",
    "\u0391": "A", "\u0392": "B", "\u0395": "E", "\u0396": "Z", "\u0397": "H", "\u0399": "I",
    "\u039a": "K", "\u039c": "M", "\u039d": "N", "\u039f": "O", "\u03a1": "P", "\u03a4": "T",
    "\u03a5": "Y", "\u03a7": "X", "\u03bf": "o",
}  # fmt: skip


def _where(text: str, pos: int) -> str:
    """'column N' (1-based), or 'line L, column N' for text of several lines."""
    line = text.count("\n", 0, pos)
    column = pos - (text.rfind("\n", 0, pos) + 1)
    if line or "\n" in text.rstrip():  # text of several lines: always say which line
        return f"line {line + 1}, column {column + 1}"
    return f"column {column + 1}"


def _fail(text: str, message: str, pos: int | None) -> EquationError:
    if pos is None:
        return EquationError(message, None)
    return EquationError(f"{message} at {_where(text, pos)}", pos)


def _non_ascii_message(ch: str) -> str:
    name = unicodedata.name(ch, f"U+{ord(ch):04X}")
    hint = _UNICODE_HINTS.get(ch) or _ASCII_LOOKALIKES.get(ch)
    if hint is None and 0xFF01 <= ord(ch) <= 0xFF5E:  # fullwidth forms of ASCII
        hint = chr(ord(ch) - 0xFEE0)
    if hint is None and name.startswith("GREEK "):
        hint = name.split()[-1].lower()  # "GREEK SMALL LETTER ALPHA" -> alpha
    text = f"non-ASCII character {ch!r} ({name})"
    if hint:
        quoted = hint if " " in hint or "(" in hint else f"'{hint}'"
        text += f"; type {quoted} instead"
    return text


def tokenize(text: str) -> list[_Token]:
    """Whitelist tokenizer; anything outside the whitelist is refused with its position."""
    tokens: list[_Token] = []
    pos, n = 0, len(text)
    match = _TOKEN_RE.match
    while pos < n:
        m = match(text, pos)
        if m is None:
            ch = text[pos]
            if ord(ch) > 127:
                raise _fail(text, _non_ascii_message(ch), pos)
            if ch.isprintable():
                hint = _CHAR_HINTS.get(ch)
                message = f"character {ch!r} is not allowed" + (f" ({hint})" if hint else "")
            else:
                message = f"control character U+{ord(ch):04X} is not allowed"
            raise _fail(text, message, pos)
        kind = m.lastgroup
        if kind != "ws":
            tokens.append(_Token(kind, m.group(), pos, m.end()))  # type: ignore[arg-type]
        pos = m.end()
    tokens.append(_Token("end", "", n, n))
    return tokens



CONSTANT_NAMES = ("pi", "deg")
_AMBIGUOUS = {
    "log": "bare 'log' is ambiguous: write ln(...) for the natural log or log10(...) for base 10",
}
_TRIG = ("sin", "cos", "tan")


def _check_name(text: str, token: _Token) -> None:
    name = token.text
    if name.startswith("_") or "__" in name:
        raise _fail(text, f"name {name!r} is not allowed (names start with a letter and "
                    "contain no '__')", token.pos)
    if keyword.iskeyword(name):
        raise _fail(text, f"{name!r} is a reserved word; choose another name", token.pos)
    if len(name) > MAX_NAME:
        raise _fail(text, f"name longer than {MAX_NAME} characters", token.pos)

