"""Dimensions as unit text for people and for the records: the SI text of a dimension
(``kg/(m*s^2)``, with named coherent units such as N, Pa, J, W where they fit), the text of
a unit written in SI (torque as N*m, radians kept in N*m/rad and rad/s), what counts turns,
cycles or degrees, and words for common quantities. Units are read in
:mod:`solvers.units.reading`.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Any

from solvers.units.reading import Dimension, registry

_SYMBOLS = {"[length]": "m", "[mass]": "kg", "[time]": "s", "[temperature]": "K",
            "[substance]": "mol", "[current]": "A", "[luminosity]": "cd"}

# Coherent SI units with names (factor 1 from base units), used when a dimension matches.
_NAMED: dict[Dimension, str] = {
    (("[length]", 1.0), ("[mass]", 1.0), ("[time]", -2.0)): "N",
    (("[length]", -1.0), ("[mass]", 1.0), ("[time]", -2.0)): "Pa",
    (("[length]", 2.0), ("[mass]", 1.0), ("[time]", -2.0)): "J",
    (("[length]", 2.0), ("[mass]", 1.0), ("[time]", -3.0)): "W",
}

_SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


def _power_text(value: float, pretty: bool) -> str:
    value = float(value)
    if value == int(value):
        n = int(value)
        if n == 1:
            return ""
        return str(n).translate(_SUPERSCRIPT) if pretty else f"^{n}"
    from fractions import Fraction

    frac = Fraction(value).limit_denominator(12)
    if abs(float(frac) - value) < 1e-9:
        return f"^({frac.numerator}/{frac.denominator})"
    return f"^{value:g}"


def unit_text(dimension: Dimension, pretty: bool = False, derived: bool = False) -> str:
    """SI units of a dimension: ``m^3/s``, ``kg/(m*s)``, ``Pa`` ('' when dimensionless).

    ``pretty`` writes powers as superscripts and products with '·' (for messages).
    ``derived`` (text for people; see :func:`_with_derived`) writes the compositions
    engineers use with a derived unit: ``W/(m^2*K)`` for kg/(s^3*K), ``J/(kg*K)``,
    ``Pa*s``; any other dimension stays in base units. Without it the text is in base units
    (what files and JSON keep).
    """
    if dimension in _NAMED:
        return _NAMED[dimension]
    parts = [(_SYMBOLS.get(n, n.strip("[]")), float(e)) for n, e in dimension]
    if derived:
        parts = _with_derived(dimension, parts)
    return _join_units(parts, pretty)


# pint's names of the coherent SI units (SI Brochure, 9th ed., Tables 2 and 4; NIST SP 811,
# Tables 1 and 3) and their symbols: a factor of one of these, with or without a prefix, is
# that unit times a power of ten (the gram's coherent unit is the kilogram). A kelvin-sized
# difference (delta_degC, degC inside a compound unit) is a kelvin.
_COHERENT: dict[str, str] = {
    "meter": "m", "gram": "kg", "second": "s", "kelvin": "K", "mole": "mol",
    "ampere": "A", "candela": "cd", "joule": "J", "watt": "W", "newton": "N",
    "pascal": "Pa", "volt": "V", "ohm": "ohm", "delta_degree_Celsius": "K",
}


@lru_cache(maxsize=512)
def coherent_text(text: str) -> str | None:
    """The coherent SI unit of unit text written in its own composition: each factor a
    (prefixed) coherent SI unit replaced by that unit, ``kJ/kg`` -> ``J/kg``,
    ``kW/(m^2*K)`` -> ``W/(m^2*K)``, ``mPa*s`` -> ``Pa*s``, ``MJ/kmol`` -> ``J/mol``;
    ``W/(m^2*K^4)`` stays as it is. The value in that unit is the SI base-unit value (a
    coherent unit's factor is exactly 1), so only the words change: what the user wrote,
    an energy per mass, is not read back as a velocity squared (m^2/s^2).

    None when a factor is not a coherent SI unit with a prefix (ft, L, h, bar, degC alone,
    %), when the text reads as dimensionless, or when it cannot be read: the caller then
    names the dimension's SI unit (:func:`unit_text`)."""
    try:
        reg = registry()
        units = dict(reg.parse_units(text.replace("μ", "µ"))._units)
        parts: dict[str, float] = {}
        for name, power in units.items():
            readings = {_COHERENT.get(unit) for _prefix, unit, _suffix in
                        reg.parse_unit_name(name)}
            if len(readings) != 1 or None in readings:
                return None
            symbol = readings.pop()
            parts[symbol] = parts.get(symbol, 0.0) + float(power)
    except Exception:  # noqa: BLE001 - any unit pint will not read has no coherent text
        return None
    # in the order typed (J/(mol*K) stays so), numerator then denominator
    up = "*".join(n + _power_text(e, False) for n, e in parts.items() if e > 0)
    down = [n + _power_text(-e, False) for n, e in parts.items() if e < 0]
    if not up and not down:
        return None
    bottom = "*".join(down)
    return (up or "1") + ("" if not down else f"/({bottom})" if len(down) > 1
                          else f"/{bottom}")


_FORCE: Dimension = (("[length]", 1.0), ("[mass]", 1.0), ("[time]", -2.0))
_LENGTH: Dimension = (("[length]", 1.0),)


@lru_cache(maxsize=256)
def moment_text(text: str) -> str | None:
    """``N*m`` for unit text that is a force times a length (``lbf*ft``, ``kgf*m``,
    ``ozf*in``: a torque or a moment, also a work), else None. Its dimension is an
    energy's, whose SI unit alone would read ``J``; the newton metre (SI Brochure, 9th
    ed., Table 4: J = N m) says what was typed and suits a torque and a work alike."""
    try:
        reg = registry()
        units = dict(reg.parse_units(text.replace("μ", "µ"))._units)
        if len(units) != 2 or any(float(p) != 1.0 for p in units.values()):
            return None
        dims = sorted(tuple(sorted((str(n), float(e)) for n, e in
                                   reg.get_dimensionality(name).items()))
                      for name in units)
    except Exception:  # noqa: BLE001 - not a unit pint reads: no moment text
        return None
    return "N*m" if dims == sorted([_FORCE, _LENGTH]) else None


@lru_cache(maxsize=256)
def is_angle(text: str) -> bool:
    """Whether a unit text is a plane angle (deg, rad, arcmin, turn): dimensionless, as
    every angle is in SI, yet counted in radians; False for a pure ratio (%, ppm) and for
    text that is not a unit."""
    try:
        reg = registry()
        units = reg.Quantity(1.0, reg.parse_units(text)).to_root_units().units
    except Exception:  # noqa: BLE001 - not a unit: not an angle
        return False
    return dict(units._units) == {"radian": 1}


@lru_cache(maxsize=256)
def counts_turns(text: str) -> bool:
    """Whether unit text that is not itself a plane angle holds an angle counted in turns
    or degrees (``rpm``, ``rev/s``, ``deg/s``, ``N*m/deg``): its SI value, in radians,
    carries a factor 2π/60, 2π or π/180 that a formula written for the unit's own number
    would apply again (see :mod:`solvers.units.turns`). False for ``Hz`` (1/s, no 2π),
    for ``rad/s`` and ``N*m/rad`` (radians already), for a plain angle (``deg``: see
    :func:`is_angle`) and for text that is not a unit."""
    if is_angle(text):
        return False
    try:
        reg = registry()
        names = dict(reg.parse_units(text.replace("μ", "µ"))._units)
        return any(name != "radian" and "radian" in dict(
            reg.Quantity(1.0, name).to_root_units().units._units) for name in names)
    except Exception:  # noqa: BLE001 - not a unit pint reads: counts nothing
        return False


@lru_cache(maxsize=256)
def counts_cycles(text: str) -> bool:
    """Whether unit text is a frequency typed in hertz (Hz, kHz, MHz): 1/s in SI, cycles
    per second with no 2π (see :mod:`solvers.units.turns`); False for 1/s, rpm and text
    that is not a unit."""
    try:
        reg = registry()
        names = dict(reg.parse_units(text.replace("μ", "µ"))._units)
    except Exception:  # noqa: BLE001 - not a unit pint reads
        return False
    return names.keys() and all(n.endswith("hertz") for n in names) and all(
        float(e) == 1.0 for e in names.values()) or False


@lru_cache(maxsize=256)
def radian_text(text: str) -> tuple[str | None, int]:
    """Unit text that holds an angle, split for people: ``("kilonewton*meter", -1)`` for
    ``kN*m/rad`` (a rotational stiffness: the factors that are no angle, and the power of
    the radian the SI value is per), ``(None, 1)`` for ``rpm`` or ``deg/s`` where one
    factor mixes a turn with a time, ``(None, 0)`` where the text holds no angle (Hz,
    N*m), is a plain angle (deg: see :func:`is_angle`) or is not a unit."""
    if is_angle(text):
        return None, 0
    try:
        reg = registry()
        names = dict(reg.parse_units(text.replace("μ", "µ"))._units)
        roots = {n: dict(reg.Quantity(1.0, n).to_root_units().units._units) for n in names}
    except Exception:  # noqa: BLE001 - not a unit pint reads: no angle
        return None, 0
    power = sum(float(r.get("radian", 0)) * float(names[n]) for n, r in roots.items())
    if power != int(power) or not power:
        return None, 0
    if any("radian" in r and len(r) > 1 for r in roots.values()):
        return None, int(power)
    kept = {n: float(e) for n, e in names.items() if "radian" not in roots[n]}
    up = "*".join(n + _power_text(e, False) for n, e in kept.items() if e > 0)
    down = "*".join(n + _power_text(-e, False) for n, e in kept.items() if e < 0)
    if not up:
        return None, int(power)
    return (up + (f"/({down})" if "*" in down else f"/{down}" if down else "")), int(power)


def unit_size(dimension: Dimension) -> tuple[float, float, int]:
    """How involved a dimension's SI unit is, for ranking which unit is the likelier one:
    the sum of |exponents| of its base units, then of its factors with a derived unit
    counted as one where simpler (kg/(m*s) 3, 2 as Pa*s; kg/m^2 3, 3), then 0 for a named
    quantity (a length, a pressure) and 1 for any other."""
    parts = [(_SYMBOLS.get(n, n.strip("[]")), float(e)) for n, e in dimension]
    key = tuple((n, float(e)) for n, e in dimension)
    return (sum(abs(e) for _n, e in parts),
            sum(abs(e) for _n, e in _with_derived(dimension, parts)),
            0 if key in _QUANTITIES else 1)


def _join_units(parts: list[tuple[str, float]], pretty: bool) -> str:
    dot = "·" if pretty else "*"
    order = {"kg": 1, "m": 2, "s": 3, "K": 4, "mol": 5, "A": 6, "cd": 7}  # derived first
    up = sorted(((n, e) for n, e in parts if e > 0), key=lambda p: order.get(p[0], 0))
    down = sorted(((n, -e) for n, e in parts if e < 0), key=lambda p: order.get(p[0], 0))

    def join(group: list[tuple[str, float]]) -> str:
        return dot.join(s + _power_text(e, pretty) for s, e in group)

    if not up and not down:
        return ""
    top = join(up) if up else "1"
    if not down:
        return top
    bottom = join(down)
    return f"{top}/({bottom})" if len(down) > 1 else f"{top}/{bottom}"


# Coherent derived SI units for text for people (SI Brochure, 9th ed., Tables 4 and 5;
# NIST SP 811, Tables 3 and 4: W = J/s = m^2*kg*s^-3, J = N*m = m^2*kg*s^-2, N = m*kg*s^-2,
# Pa = N/m^2, V = W/A, ohm = V/A), and the compositions engineers write with them: each
# entry is used exactly where its dimension matches, nothing is searched for, so a mass
# flux stays kg/(m^2*s) and a velocity squared m^2/s^2 (never "Pa*s/m" or "J/kg").
_DERIVED_UNITS: dict[str, dict[str, float]] = {
    "W": {"[length]": 2.0, "[mass]": 1.0, "[time]": -3.0},
    "J": {"[length]": 2.0, "[mass]": 1.0, "[time]": -2.0},
    "N": {"[length]": 1.0, "[mass]": 1.0, "[time]": -2.0},
    "Pa": {"[length]": -1.0, "[mass]": 1.0, "[time]": -2.0},
    "V": {"[length]": 2.0, "[mass]": 1.0, "[time]": -3.0, "[current]": -1.0},
    "ohm": {"[length]": 2.0, "[mass]": 1.0, "[time]": -3.0, "[current]": -2.0},
}
_PREFERRED_PARTS: tuple[tuple[tuple[str, float], ...], ...] = (
    (("Pa", 1.0), ("s", 1.0)),                  # dynamic viscosity
    (("W", 1.0), ("m", -2.0), ("K", -1.0)),     # heat transfer coefficient
    (("W", 1.0), ("m", -1.0), ("K", -1.0)),     # thermal conductivity
    (("J", 1.0), ("kg", -1.0), ("K", -1.0)),    # specific heat capacity
    (("J", 1.0), ("K", -1.0)),                  # heat capacity
    (("W", 1.0), ("K", -1.0)),                  # thermal conductance (UA)
    (("W", 1.0), ("m", -2.0)),                  # heat flux
    (("W", 1.0), ("m", -3.0)),                  # volumetric heat source
    (("N", 1.0), ("m", -1.0)),                  # surface tension, line load, stiffness
    (("Pa", 1.0), ("m", -1.0)),                 # pressure gradient
    (("Pa", -1.0),),                            # compressibility
    (("J", 1.0), ("mol", -1.0)),                # molar enthalpy, activation energy
    (("J", 1.0), ("mol", -1.0), ("K", -1.0)),   # molar heat capacity, gas constant
    (("Pa", 1.0), ("m", 6.0), ("mol", -2.0)),   # a cubic equation of state's a
    (("V", 1.0),),
    (("ohm", 1.0),),
)


def _parts_dimension(parts: tuple[tuple[str, float], ...]) -> Dimension:
    base = {symbol: name for name, symbol in _SYMBOLS.items()}
    total: dict[str, float] = {}
    for symbol, power in parts:
        unit = _DERIVED_UNITS.get(symbol) or {base[symbol]: 1.0}
        for name, e in unit.items():
            total[name] = total.get(name, 0.0) + power * e
    return tuple(sorted((n, e) for n, e in total.items() if e))


_PREFERRED: dict[Dimension, tuple[tuple[str, float], ...]] = {
    _parts_dimension(parts): parts for parts in _PREFERRED_PARTS}


def _with_derived(dimension: Dimension, parts: list[tuple[str, float]]
                  ) -> list[tuple[str, float]]:
    """The factors of a unit written with a derived SI unit where the dimension is one of
    the compositions engineers use (:data:`_PREFERRED_PARTS`: Pa*s, W/(m^2*K), J/(kg*K),
    ...), else ``parts`` as they are (base units; a named unit alone, Pa or J, is found
    before this by the dimension's name)."""
    key = tuple(sorted((n, float(e)) for n, e in dimension if e))
    preferred = _PREFERRED.get(key)
    return list(preferred) if preferred is not None else parts


# Names of common quantities (common practice; ISO 80000 names), for messages that say
# what a parameter is and what the equation needs: "a pressure (Pa)".
_L, _M, _T, _K = "[length]", "[mass]", "[time]", "[temperature]"
_QUANTITIES: dict[Dimension, str] = {
    ((_L, 1.0),): "a length", ((_L, 2.0),): "an area", ((_L, 3.0),): "a volume",
    ((_M, 1.0),): "a mass", ((_T, 1.0),): "a time", ((_K, 1.0),): "a temperature",
    ((_L, 1.0), (_T, -1.0)): "a velocity", ((_L, 1.0), (_T, -2.0)): "an acceleration",
    ((_L, 3.0), (_T, -1.0)): "a volume flow", ((_M, 1.0), (_T, -1.0)): "a mass flow",
    ((_L, -3.0), (_M, 1.0)): "a density", ((_T, -1.0),): "a frequency",
    ((_L, 1.0), (_M, 1.0), (_T, -2.0)): "a force",
    ((_L, -1.0), (_M, 1.0), (_T, -2.0)): "a pressure",
    ((_L, 2.0), (_M, 1.0), (_T, -2.0)): "an energy",
    ((_L, 2.0), (_M, 1.0), (_T, -3.0)): "a power",
    ((_L, -1.0), (_M, 1.0), (_T, -1.0)): "a dynamic viscosity",
    ((_L, 2.0), (_T, -1.0)): "a kinematic viscosity",
}


def is_common_quantity(dimension: Dimension) -> bool:
    """Whether a dimension is one of the common quantities named in messages (a length,
    a pressure, ...)."""
    return tuple((n, float(e)) for n, e in dimension) in _QUANTITIES


def quantity_words(dimension: Dimension) -> str:
    """'a pressure (Pa)' for a common quantity, else its SI unit ('m^3/kg'), or
    'dimensionless'."""
    key = tuple((n, float(e)) for n, e in dimension)
    name = _QUANTITIES.get(key)
    unit = unit_text(key, pretty=True, derived=True) or "dimensionless"
    return f"{name} ({unit})" if name else unit


def needs_words(dimension: Dimension) -> str:
    """'as a length (m)' for a common quantity, else 'in m^3/kg' (or 'dimensionless')."""
    key = tuple((n, float(e)) for n, e in dimension)
    if key in _QUANTITIES:
        return "as " + quantity_words(key)
    return "in " + unit_text(key, pretty=True, derived=True) if key else "dimensionless"


# Dimensions carried in a remark's numbers: the exponents of these, in this order.
BASE_DIMENSIONS = ("[length]", "[mass]", "[time]", "[temperature]", "[substance]",
                   "[current]", "[luminosity]")


def dimension_numbers(dimension: Dimension) -> tuple[float, ...]:
    """A dimension as its exponents of :data:`BASE_DIMENSIONS` (a remark's numbers)."""
    d = dict(dimension)
    return tuple(float(d.get(n, 0.0)) for n in BASE_DIMENSIONS)


def numbers_dimension(numbers: Any) -> Dimension:
    """:func:`dimension_numbers` read back."""
    return tuple(sorted((n, float(e)) for n, e in zip(BASE_DIMENSIONS, numbers, strict=True)
                        if e))


def dimension_words(dimension: Dimension) -> str:
    """A dimension for a one-line message: its SI unit, or 'dimensionless'."""
    # base units: a mismatch reads best in them (v^2/2 is m²/s², not J/kg)
    return unit_text(dimension, pretty=True) or "dimensionless"
