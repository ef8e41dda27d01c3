"""Unit text -> a checked unit (factor and offset to SI base units, dimension), with pint.

User text is read in a restricted way: at most :data:`MAX_UNIT_TEXT` characters from a
whitelist (letters, digits, spaces, ``* / ^ ** ( ) . - _ %``, ``µ``, ``°``, ``Ω``),
then pint's own unit parser (which builds units from its registry by name and never
evaluates Python). A name pint does not know is an :class:`EquationError` naming it, with
the closest names of the registry as suggestions. Exponents are bounded and every
factor must be a finite, non-zero double.

pint is imported, and its registry built (about 0.4 s + 0.4 s), on the first unit read,
never at start-up; readings are cached by text. The registry adds a few trade
abbreviations (:data:`TRADE_UNITS`: gpm, cfs, cfm, MGD, lbm, psia, bara, lbmol, MMBtu,
MBH, TR, rev); a pressure marked gauge (psig, barg, kPa(g)) and MBtu (a thousand or a
million Btu?) are refused with what to type.

Offset temperatures: ``degC`` and ``degF`` (``°C``, ``°F``) standing alone are absolute
temperatures, converted with their offset (25 degC -> 298.15 K). In a compound unit
(``J/(kg*degC)``, ``degC/m``) pint reads them as a temperature difference, and so do we;
a difference on its own is typed ``delta_degC`` / ``delta_degF`` (or ``K``).
"""

from __future__ import annotations

import difflib
import math
import re
import threading
from collections.abc import Callable
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from solvers.equation.lexer import EquationError

MAX_UNIT_TEXT = 60  # characters of one unit; 'kg*m^2/(s^3*A)' is 14
MAX_UNIT_EXPONENT = 12  # |exponent| of any unit in a unit text (m^3, s^-2 ... never m^99)

_ALLOWED = re.compile(r"[A-Za-z0-9 µμΩ°%*/^().\-_]*")
_ALLOWED_ONE = re.compile(r"[A-Za-z0-9 µμΩ°%*/^().\-_]")

Dimension = tuple[tuple[str, float], ...]  # sorted (pint base dimension, exponent) pairs
DIMENSIONLESS: Dimension = ()

_lock = threading.Lock()
_registry: list[Any] = []


def registry() -> Any:
    """The one pint UnitRegistry (built on first use; thread-safe)."""
    if not _registry:
        with _lock:
            if not _registry:
                import pint

                # offsets never autoconvert: 25 degC * 2 is refused by pint, not guessed
                reg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
                for definition in TRADE_UNITS:
                    reg.define(definition)
                _registry.append(reg)
    return _registry[0]


# Abbreviations US hydraulic and mechanical engineers type first, which pint does not know
# (gpm was answered "did you mean 'rpm'?") or reads as something else entirely (cfm as a
# centi-fermi, 1e-17 m), defined from pint's own exact US gallon, foot and pound
# (NIST SP 811: 1 gal = 231 in^3, 1 ft = 0.3048 m, 1 lb = 0.45359237 kg).
TRADE_UNITS = (
    "gpm = gallon / minute",
    "cfs = foot ** 3 / second",
    "cfm = foot ** 3 / minute",
    "MGD = 1e6 * gallon / day = mgd",
    "lbm = pound",
    # an absolute pressure, as US process datasheets mark it: the same unit (every
    # pressure zerotrace reads is absolute, or a difference); gauge ones are refused below
    "psia = psi",
    "bara = bar",
    # US process and HVAC practice (NIST SP 811: 1 lb = 0.45359237 kg exactly, so a
    # pound-mole is 453.59237 mol); M is a thousand there (MBH), MM a million (MMBtu);
    # a ton of refrigeration, TR, is 12 000 Btu_IT/h (pint read TR as tera x R)
    "lbmol = 453.59237 * mol = lb_mol = lbmole",
    "MMBtu = 1e6 * Btu",
    "MBH = 1e3 * Btu / hour",
    "TR = ton_of_refrigeration",
    # a revolution as shaft speeds are written, rev/min and rev/s (pint knows revolution,
    # turn, rpm and rps, and answered rev with 'rhe', 'rem')
    "rev = revolution",
)

# A pressure marked gauge (psig, barg, kPa(g)) is measured from the local atmosphere,
# which no unit can know; pint would read 'kPa(g)' as kPa times a gram and 'bar(a)' as
# bar times a year. Such text is refused with what to type instead.
_PRESSURES = r"(?:psi|bar|[kM]?Pa|atm|mmHg|inHg|kgf/cm\^?2)"
_GAUGE = re.compile(r"(?<![A-Za-z])(" + _PRESSURES + r")(?:g|\s*\(\s*g\s*\))(?![A-Za-z])")
_ABSOLUTE = re.compile(r"(?<![A-Za-z])(" + _PRESSURES + r")(?:a|\s*\(\s*a\s*\))(?![A-Za-z])")


_THOUSAND_BTU = re.compile(r"(?<![A-Za-z_])MBtu(?:_it)?(?![A-Za-z_])")


def _marked_pressure(text: str) -> str:
    """The refusal of a pressure marked gauge or absolute, or of MBtu ('' for other
    text): MBtu is a mega-Btu to SI and to pint, a thousand Btu in much US practice (MBH,
    MMBtu for a million), a factor 1000 either way."""
    mbtu = _THOUSAND_BTU.search(text)
    if mbtu:
        return (f"unit '{mbtu.group(0)}' is ambiguous: a million Btu by the SI prefix, a "
                "thousand in much US practice; write kBtu for a thousand, MMBtu for a "
                "million")
    gauge = _GAUGE.search(text)
    if gauge:
        unit = gauge.group(1)
        return (f"unit '{gauge.group(0)}' is a gauge pressure, measured from the local "
                f"atmosphere: type the absolute pressure in {unit} (gauge plus the local "
                "atmospheric pressure; the standard atmosphere is 101.325 kPa, 1.01325 "
                f"bar, 14.696 psi), or {unit} for a pressure difference")
    absolute = _ABSOLUTE.search(text)
    if absolute and absolute.group(0) not in ("psia", "bara"):
        unit = absolute.group(1)
        return (f"unit '{absolute.group(0)}': a pressure in {unit} is absolute already; "
                f"type {unit}")
    return ""


@dataclass(frozen=True)
class Unit:
    """A read unit: ``si = value * factor + offset`` in SI base units of ``dimension``.

    ``offset`` is non-zero only for an absolute temperature (degC, degF standing alone).
    ``text`` is the unit as the user typed it (stripped).
    """

    text: str
    factor: float
    offset: float
    dimension: Dimension
    si_text: str = "1"  # the SI unit of the converted value (ASCII, readable back)


def _normalised(exponent: float) -> float:
    r = round(float(exponent), 9)
    return float(int(r)) if r == int(r) else r


def dimension_of(container: Any) -> Dimension:
    """pint dimensionality -> our sorted tuple of (name, exponent)."""
    return tuple(sorted((str(k), _normalised(v)) for k, v in dict(container).items()
                        if _normalised(v) != 0.0))


_PREFIXES = ("k", "m", "c", "M", "G", "µ", "u", "n")


def _suggest(name: str, reg: Any) -> str:
    names = [n for n in reg if isinstance(n, str)]
    names += [p + n for n in names if len(n) <= 3 for p in _PREFIXES]  # mm, kPa, MPa ...
    close = difflib.get_close_matches(name, names, n=3, cutoff=0.6)
    if not close:
        close = difflib.get_close_matches(name.lower(), [n.lower() for n in names], n=3,
                                          cutoff=0.6)
    return (" (did you mean " + ", ".join(f"'{c}'" for c in close) + "?)") if close else ""


_GLUED_POWER = re.compile(r"([A-Za-zµ]+?)([2-4])([A-Za-z]*)")


def _power_hint(name: str, text: str) -> str:
    """' (a power is written with ^: W/(m^2*K), not W/m2K)' when an unknown name is a
    known unit with a power glued on, as handbooks print W/m2K or m3/h; '' otherwise (a
    close name would mislead there: 'mK' for 'm2K'). A glued product after '/' is put in
    parentheses: W/m^2*K would be W*K/m^2."""
    match = _GLUED_POWER.fullmatch(name)
    if match is None:
        return ""
    base, power, rest = match.groups()
    reg = registry()
    try:
        reg.parse_units(base)
        if rest:
            reg.parse_units(rest)
    except Exception:  # noqa: BLE001 - not a unit with a power glued on: no hint
        return ""
    meant = f"{base}^{power}" + (f"*{rest}" if rest else "")
    if rest and re.search(r"/\s*" + re.escape(name) + r"(?![A-Za-z0-9])", text):
        meant = f"({meant})"
    whole = re.sub(r"(?<![A-Za-z0-9])" + re.escape(name) + r"(?![A-Za-z0-9])",
                   lambda _m: meant, text, count=1)
    return f" (a power is written with ^: {whole}, not {text})"


def _refuse(text: str, what: str) -> EquationError:
    return EquationError(f"unit '{text}': {what}")


@lru_cache(maxsize=1)
def _constants() -> frozenset[str]:
    """The names of the physical constants pint defines as units (speed_of_light, c;
    elementary_charge, e; boltzmann_constant, k ...), read from its constants file."""
    import pint

    try:
        text = (Path(pint.__file__).parent / "constants_en.txt").read_text(encoding="utf-8")
    except OSError:  # another layout of pint: no constants known, nothing refused
        return frozenset()
    return frozenset(m.group(1) for m in re.finditer(r"^(\w+)\s*=", text, re.MULTILINE))


def _prefixed_constant(text: str, reg: Any) -> tuple[str, str, str] | None:
    """(name as typed, prefix, constant) for a name in unit ``text`` that pint reads as
    a prefix on a physical constant: 'ac' (an acre, to many) is atto x speed of light,
    'mc' milli x speed of light, 'ke' kilo x elementary charge. No engineer means those;
    None if there is none."""
    constants = _constants()
    # a name is a run of letters, digits, _ and the symbols units begin with (°Re, µm)
    for name in re.findall(r"[^\W\d][\w°]*|°\w+", text):
        try:
            readings = reg.parse_unit_name(name)
        except Exception:  # noqa: BLE001 - read as a whole already; no reading, no slip
            continue
        if any(not prefix for prefix, _base, _suffix in readings):
            continue  # a unit of its own name (cc, pc, pk): pint reads it so
        for prefix, base, _suffix in readings:
            if prefix and base in constants:
                return name, prefix, base
    return None


@lru_cache(maxsize=512)
def _read_cached(text: str) -> Unit:
    marked = _marked_pressure(text)
    if marked:
        raise EquationError(marked)
    reg = registry()
    try:
        units = reg.parse_units(text.replace("μ", "µ"))  # Greek mu typed for the micro sign
    except Exception as exc:  # noqa: BLE001 - pint raises many kinds; each is one line here
        names = getattr(exc, "unit_names", None)
        if names:
            name = names[0] if isinstance(names, (list, tuple)) else str(names)
            inside = "" if name == text else f" in '{text}'"
            raise EquationError(f"unknown unit '{name}'{inside}"
                                + (_power_hint(name, text) or _suggest(name, reg))) from None
        raise _refuse(text, "cannot be read as a unit") from None
    slip = _prefixed_constant(text, reg)
    if slip is not None:
        name, prefix, constant = slip
        raise EquationError(
            f"unit '{name}'" + ("" if name == text else f" in '{text}'")
            + f" reads as {prefix} x {constant.replace('_', ' ')} (a physical constant), "
            "surely not what was meant: write the unit by its full name (an acre is 'acre')")
    for name, power in dict(units._units).items():
        if abs(float(power)) > MAX_UNIT_EXPONENT:
            raise _refuse(text, f"the power of {name} is beyond ±{MAX_UNIT_EXPONENT}")
    try:
        dimension = dimension_of(units.dimensionality)
        zero = float(reg.Quantity(0.0, units).to_base_units().magnitude)
        one = float(reg.Quantity(1.0, units).to_base_units().magnitude)
    except Exception:  # noqa: BLE001 - an offset unit pint will not convert: one line
        raise _refuse(text, "cannot be converted to SI base units") from None
    for name, power in dimension:  # W^5 is s^-15: bound the dimension's powers too
        if abs(power) > MAX_UNIT_EXPONENT:
            raise _refuse(text, f"its power of {name} is beyond ±{MAX_UNIT_EXPONENT}")
    factor = one - zero
    if not (math.isfinite(zero) and math.isfinite(factor) and factor != 0.0):
        raise _refuse(text, "its size is beyond double precision")
    if zero != 0.0:  # an absolute temperature: its scale from the difference unit, not
        # from subtracting two offsets (degF: 5/9 to the last bit, not 0.55555555555554)
        try:
            (name, power), = dict(units._units).items()
            delta = reg.parse_units(f"delta_{name}")
            factor = float(reg.Quantity(1.0, delta).to_base_units().magnitude)
        except Exception:  # noqa: BLE001 - keep the subtraction's value
            pass
    from solvers.units.si_text import unit_text  # (it imports this module)

    return Unit(text=text, factor=factor, offset=zero, dimension=dimension,
                si_text=unit_text(dimension) or "1")


def read_unit(text: Any) -> Unit:
    """Read unit text (``"mm"``, ``"m^3/s"``, ``"mPa*s"``, ``"degC"``) into a :class:`Unit`.

    Raises :class:`EquationError` (one line) for text that is too long, holds a character
    outside the whitelist, names a unit pint does not know (with close names suggested),
    has an exponent beyond ±``MAX_UNIT_EXPONENT`` or a size beyond double precision.
    """
    problem = unit_text_problem(text)
    if problem:
        raise EquationError(problem)
    return _read_cached(" ".join(text.split()))


def converter(from_text: str, to_text: str | None) -> Callable[[float], float] | None:
    """The conversion of an absolute value from one unit to another of the same dimension
    (``to_text`` None or blank: the SI unit of that dimension), as a function of the
    value; None where either text is no unit or the dimensions differ. An absolute
    temperature keeps its offset (20 degC is 293.15 K and 68 degF); a speed in turns
    goes to Hz counting a revolution as a cycle (3000 rpm is 50 Hz: :func:`turns_to_cycles`)."""
    try:
        source = read_unit(from_text)
        target = read_unit(to_text) if to_text and to_text.strip() else \
            read_unit(source.si_text)
    except EquationError:
        return None
    if source.dimension != target.dimension:
        return None
    # a speed between turns and cycles (rpm and Hz): one revolution is one cycle, 3000 rpm
    # is 50 Hz, as an engineer converts a speed; SI's reading (rpm in rad/s, Hz in 1/s)
    # would make it 314.16 Hz
    turns = 2.0 * math.pi if turns_to_cycles(from_text, target.text) else \
        1.0 / (2.0 * math.pi) if turns_to_cycles(target.text, from_text) else 1.0

    def convert(value: float) -> float:
        return (value * source.factor / turns + source.offset - target.offset) / target.factor

    return convert


def turns_to_cycles(from_text: str, to_text: str) -> bool:
    """Whether a conversion goes from a rate counted in turns or degrees (rpm, rev/s,
    deg/s: rad/s in SI) to one in Hz (cycles per second, 1/s in SI), where a revolution
    is taken as one cycle (:func:`converter`)."""
    from solvers.units.si_text import counts_cycles, counts_turns, radian_text

    return (counts_turns(from_text) and radian_text(from_text)[1] == 1
            and counts_cycles(to_text))


# a pound beside a length in a product (lb*in, ft*lb, lbs*ft): a moment written US-style
_POUND = re.compile(r"(?<![A-Za-z_])lbs?(?![A-Za-z_])")
_POUND_LENGTH = re.compile(r"(?<![A-Za-z_/])(?:lbs?\*(?:in|ft)|(?:in|ft)\*lbs?)(?![A-Za-z_])")


def unit_text_problem(text: Any) -> str:
    """What is wrong with unit text before pint reads it ('' if nothing): type, length,
    characters. Cheap and without pint, for checks while typing."""
    if not isinstance(text, str):
        return f"a unit must be text, got {type(text).__name__}"
    stripped = " ".join(text.split())
    if not stripped:
        return "the unit is empty"
    if len(stripped) > MAX_UNIT_TEXT:
        return f"unit text longer than {MAX_UNIT_TEXT} characters ({len(stripped)})"
    if not _ALLOWED.fullmatch(stripped):
        bad = next(c for c in stripped if not _ALLOWED_ONE.fullmatch(c))
        return (f"unit '{stripped}': character {bad!r} is not allowed in a unit "
                "(letters, digits, spaces and * / ^ ( ) . - only)")
    if "__" in stripped or _depth(stripped) > 3:
        return f"unit '{stripped}': cannot be read as a unit"
    if _HYPHEN.search(stripped):  # US practice writes ft-lbf, Btu/lb-degF
        meant = _HYPHEN.sub(lambda m: m.group(1) + "*" + m.group(2), stripped)
        grouped = _PRODUCT_AFTER_SLASH.search(meant)
        if grouped:
            names = [grouped.group(1), *re.findall(_UNIT_NAME, grouped.group(2))]
            meant = (meant[:grouped.start()] + "/(" + "*".join(names) + ")"
                     + meant[grouped.end():])
        if _POUND_LENGTH.search(meant):
            # lb-in, ft-lb: a torque or a work in US practice, where lb is the pound-force
            # (read as typed it is the pound mass, and the check refuses it further on)
            meant = _POUND.sub("lbf", meant)
            return (f"unit '{stripped}': a hyphen is no product sign, and lb alone is the "
                    f"pound mass; for a torque or a work write {meant}")
        return f"unit '{stripped}': a hyphen is no product sign; write {meant}"
    product = _PRODUCT_AFTER_SLASH.search(stripped)
    if product:
        below = product.group(1)
        rest = re.findall(_UNIT_NAME, product.group(2))
        head = stripped[:product.start()]
        head = head if re.fullmatch(_UNIT_NAME, head) else f"({head})"
        meant = (stripped[:product.start()] + "/(" + "*".join([below, *rest]) + ")"
                 + stripped[product.end():])
        return (f"unit '{stripped}': a factor multiplied after '{below}' stands on top, "
                f"not below: it reads as {'*'.join([head, *rest])}/{below}; write {meant} "
                "if it is below too")
    # Powers only of a name or a group, by one small number or fraction, never chained:
    # pint computes number powers exactly, so 9^9^9^9 would never finish.
    powers = stripped.replace("**", "^")
    for m in re.finditer(r"\^", powers):
        before = powers[:m.start()].rstrip()
        after = _EXPONENT.match(powers, m.end())
        if after is None or not before or before[-1].isdigit() or before[-1] == "." \
                or powers[after.end():].lstrip().startswith("^"):
            return (f"unit '{stripped}': a power must be a unit to a small number "
                    "(m^3, s^-2, m^(1/3))")
    return ""


# '/', a unit (with its power), then a product with another unit: '*', a '.' or a space
# before a name, as handbooks print kJ/kg.K or W/m^2 K and mean kJ/(kg*K); pint reads
# them (as math does) with the second factor on top: kJ*K/kg, a silently wrong unit.
_UNIT_NAME = r"[A-Za-zµ°Ω_][A-Za-z0-9_µ°Ω]*(?:\s*(?:\^|\*\*)\s*-?[0-9]+(?:\.[0-9]+)?)?"
_PRODUCT = r"(?:\s*\*(?!\*)\s*|\s*\.(?=\s*[A-Za-zµ°Ω])\s*|\s+(?=[A-Za-zµ°Ω]))"
_PRODUCT_AFTER_SLASH = re.compile(
    r"/\s*(" + _UNIT_NAME + r")((?:" + _PRODUCT + _UNIT_NAME + r")+)")

# a hyphen between two names (or a name and a parenthesis): a product as US texts print
# it (ft-lbf, Btu/hr-ft^2-degF); pint cannot read it, and said only "cannot be read"
_HYPHEN = re.compile(r"([A-Za-zµ°Ω_)]|\^\d+)\s*-\s*([A-Za-zµ°Ω_(])")

_EXPONENT = re.compile(r"\s*(?:[+-]?[0-9]{1,2}(?:\.[0-9]{1,4})?(?![0-9.])|"
                       r"\(\s*[+-]?[0-9]{1,2}(?:\.[0-9]{1,4})?(?:\s*/\s*[0-9]{1,2})?\s*\))")


def _depth(text: str) -> int:
    depth = deepest = 0
    for c in text:
        depth += (c == "(") - (c == ")")
        deepest = max(deepest, depth)
    return deepest


# ---------------------------------------------------------------------------------------------
# Value strings: "150 mm", "-5 delta_degC", "1.2e5"
# ---------------------------------------------------------------------------------------------

_NUMBER = re.compile(r"\s*([+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)(.*)",
                     re.ASCII | re.DOTALL)


def split_value(text: str) -> tuple[float, str]:
    """``"150 mm"`` -> ``(150.0, "mm")``; ``"2.5"`` -> ``(2.5, "")``.

    The number is ASCII decimal (as in an equation: no ``1_000``, no fullwidth digits);
    it must be finite and not underflow to zero. Raises :class:`EquationError`.
    """
    m = _NUMBER.match(text)
    if m is None:
        shown = text.strip()[:40]
        raise EquationError(f"'{shown}' does not start with a number")
    number_text, rest = m.group(1), m.group(2)
    value = float(number_text)
    if not math.isfinite(value):
        raise EquationError(f"number {number_text} is beyond double precision")
    if value == 0 and any(c in "123456789" for c in number_text.lower().split("e")[0]):
        raise EquationError(f"number {number_text} underflows to zero in double precision")
    unit = rest.strip()
    if unit.startswith("*"):  # "150*mm" reads as "150 mm"
        unit = unit[1:].strip()
    if rest and not rest[0].isspace() and not rest.startswith("*") and \
            not (rest[0].isalpha() or rest[0] in "µμ°%Ω"):
        raise EquationError(f"'{text.strip()[:40]}' is not a number followed by a unit")
    return value, unit
