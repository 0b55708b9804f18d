"""Units at the input boundary: engineers' spellings converted to heatloom's canonical units.

Tables from plants and simulators write units the way engineers type them: ``°C``, ``C``, ``degF``,
``kW/m2K``, ``W/m²·K``, ``Btu/h/F``, ``MMBtu/h``.  A plain unit parser misreads several of these: it
takes bare ``C`` for the coulomb and ``F`` for the farad, it does not know ``m2``, and it reads
``W/m²K`` as ``W·K/m²``.  This module reads them the engineers' way and checks the result against the
quantity the column holds, so a wrong unit is an error, never a silent factor of a thousand.

Rules
-----
* ``C``, ``°C``, ``degC``, ``oC``, ``F``, ``°F``, ``degF``, ``K``, ``°R``, ``degR`` are temperatures.  A
  unit that is a single temperature is an absolute temperature when the column holds one and a
  temperature *difference* otherwise; a temperature inside a compound unit (``kW/°C``,
  ``Btu/h/ft²/°F``) is always a difference.
* Everything written after a ``/`` up to the next ``/`` is in the denominator, whether the factors
  are juxtaposed (``m2K``, ``m² °C``), dotted (``m2.K``), hyphenated (``h-ft2-F``) or starred:
  ``W/m2K`` = ``W/m2.K`` = ``W/m2/K`` = ``W/(m2 K)``.  The strict left-to-right reading of ``*`` is
  tried as well and kept only if it alone gives the expected quantity.
* ``m2``, ``m²``, ``m^2``, ``m**2`` are powers; ``m-2``, ``m⁻²`` negative powers.
* ``Btu`` is the International Table Btu (1055.05585262 J), ``kcal``/``Gcal`` the International Table
  kilo/gigacalorie (4186.8 J per kcal), ``MMBtu`` a million Btu, ``TR`` the ton of refrigeration
  (12 000 Btu/h).  ``MBtu`` is refused as ambiguous (thousand or million, depending on the writer).
* Prices (:attr:`QuantityKind.COST_RATE`) are money per kW·year: a currency sign or code (``$``,
  ``€``, ``£``, ``USD``, ``EUR``..., ``k€`` for thousands) over a power and a year.  Prices per
  energy (``$/MWh``) are refused: they need the operating hours per year, which only the user knows.

Canonical units (DESIGN.md): °C, K for differences, kW, kW/K, kW/(m²·K), m², money per kW·year.

All conversions are affine maps applied to whole numpy arrays; no per-value unit objects are built.
One module-level pint registry, :data:`UNIT_REGISTRY`, does the dimensional analysis.

References
----------
Thompson, A. and Taylor, B. N. (2008). *Guide for the Use of the International System of Units (SI)*,
NIST Special Publication 811, Appendix B.8 (conversion factors and temperature conversion formulas).
"""

from __future__ import annotations

import enum
import functools
import re
import unicodedata
from dataclasses import dataclass

import numpy as np
import pint

from ..errors import InputError

__all__ = [
    "UNIT_REGISTRY",
    "QuantityKind",
    "UnitConversion",
    "parse_unit",
    "to_canonical",
    "from_canonical",
    "currency_of",
]

UNIT_REGISTRY = pint.UnitRegistry()
"""The one pint registry of heatloom (dimensional analysis of unit texts only)."""
UNIT_REGISTRY.define("MMBtu_it = 1e6 * Btu_it")
UNIT_REGISTRY.define("refrigeration_ton_it = 12000 * Btu_it / hour")

_U = UNIT_REGISTRY


class QuantityKind(enum.Enum):
    """The physical quantity a column holds, with its canonical unit.

    Examples
    --------
    >>> QuantityKind.HEAT_CAPACITY_FLOW.canonical
    'kW/K'
    """

    TEMPERATURE = "temperature"
    TEMPERATURE_DIFFERENCE = "temperature difference"
    DUTY = "duty"
    HEAT_CAPACITY_FLOW = "heat capacity flow rate"
    FILM_COEFFICIENT = "film coefficient"
    AREA = "area"
    COST_RATE = "price per kW·year"
    MASS_FLOW = "mass flow rate"
    SPECIFIC_HEAT = "specific heat"

    @property
    def canonical(self) -> str:
        """The canonical unit, as printed in messages and headers."""
        return _KIND_INFO[self][0]

    @property
    def examples(self) -> str:
        """A few accepted spellings, for messages."""
        return _KIND_INFO[self][2]

    @property
    def dimensionality(self):
        """The pint dimensionality of the canonical unit."""
        return _U.Unit(_KIND_INFO[self][1]).dimensionality


# kind -> (canonical unit as displayed, canonical unit for pint, examples for messages)
_KIND_INFO: dict[QuantityKind, tuple[str, str, str]] = {
    QuantityKind.TEMPERATURE: ("°C", "degC", "°C, C, degC, K, °F, F, degF, °R"),
    QuantityKind.TEMPERATURE_DIFFERENCE: ("K", "kelvin", "K, °C, °F"),
    QuantityKind.DUTY: ("kW", "kW", "kW, MW, W, kJ/s, Btu/h, MMBtu/h, kcal/h"),
    QuantityKind.HEAT_CAPACITY_FLOW: ("kW/K", "kW/K", "kW/K, MW/K, kW/°C, MW/C, Btu/h/°F"),
    QuantityKind.FILM_COEFFICIENT: ("kW/(m²·K)", "kW/(m**2*K)",
                                    "kW/m²K, W/m2K, W/(m2 K), kW/m2/°C, Btu/h/ft²/°F"),
    QuantityKind.AREA: ("m²", "m**2", "m², m2, ft2"),
    QuantityKind.COST_RATE: ("money/(kW·year)", "1/(kW*year)", "€/kW/yr, $/(kW·a), USD/MW/y"),
    QuantityKind.MASS_FLOW: ("kg/s", "kg/s", "kg/s, kg/h, t/h, lb/h"),
    QuantityKind.SPECIFIC_HEAT: ("kJ/(kg·K)", "kJ/(kg*K)", "kJ/(kg·K), kJ/kg.K, J/(kg K), kcal/(kg °C), Btu/(lb °F)"),
}

# Temperature spellings -> scale letter.  Absolute and difference units per letter below.
_TEMPERATURE_ATOMS = {
    **dict.fromkeys(("C", "degC", "oC", "deg_C", "degc", "celsius", "Celsius", "degree_Celsius",
                     "degrees_Celsius", "degreeC"), "C"),
    **dict.fromkeys(("F", "degF", "oF", "deg_F", "degf", "fahrenheit", "Fahrenheit",
                     "degree_Fahrenheit", "degrees_Fahrenheit", "degreeF"), "F"),
    **dict.fromkeys(("K", "kelvin", "Kelvin", "kelvins", "degK", "deg_K"), "K"),
    **dict.fromkeys(("degR", "oR", "deg_R", "rankine", "Rankine", "degree_Rankine"), "R"),
}
_DELTA_ATOMS = {"delta_degC": "C", "delta_degF": "F", "delta_degR": "R", "delta_degK": "K"}
_ABSOLUTE_UNIT = {"C": "degC", "F": "degF", "K": "kelvin", "R": "degR"}
_DIFFERENCE_UNIT = {"C": "delta_degC", "F": "delta_degF", "K": "kelvin", "R": "degR"}
# (subtract, divide, add): t [°C] = (x - subtract) / divide + add
# NIST SP 811 (2008) App. B.8: t/°C = (t/°F - 32)/1.8; t/°C = T/K - 273.15; T/K = (T/°R)/1.8.
_ABSOLUTE_AFFINE = {"C": (0.0, 1.0, 0.0), "K": (0.0, 1.0, -273.15), "F": (32.0, 1.8, 0.0),
                    "R": (0.0, 1.8, -273.15)}
_DIFFERENCE_DIVISOR = {"C": 1.0, "K": 1.0, "F": 1.8, "R": 1.8}

# Other spellings pint does not read the way engineers mean them.
_ATOM_ALIASES = {
    **dict.fromkeys(("Btu", "BTU", "btu", "Btu_IT", "BTU_IT", "Btu_it"), "Btu_it"),
    **dict.fromkeys(("kBtu", "kBTU", "kbtu"), "kBtu_it"),
    **dict.fromkeys(("MMBtu", "MMBTU", "mmBtu", "MMbtu", "mmbtu"), "MMBtu_it"),
    **dict.fromkeys(("kcal", "Kcal", "kCal", "KCAL", "kcal_IT", "kcal_it"), "kcal_it"),
    **dict.fromkeys(("cal", "cal_IT"), "cal_it"),
    **dict.fromkeys(("Mcal", "MCal"), "Mcal_it"),
    **dict.fromkeys(("Gcal", "GCal", "gcal", "GCAL"), "Gcal_it"),
    **dict.fromkeys(("TR", "RT", "tonR"), "refrigeration_ton_it"),
    **dict.fromkeys(("KW", "Kw", "kw"), "kW"),
    "w": "W",
    **dict.fromkeys(("kj", "KJ", "Kj"), "kJ"),
    **dict.fromkeys(("HR", "Hr", "hrs", "Hrs"), "hour"),
    **dict.fromkeys(("y", "yrs", "Yr", "YR", "annum", "jaar", "Jahr"), "year"),
    **dict.fromkeys(("sqm",), "m**2"),
}
_AMBIGUOUS_ATOMS = {
    "MBtu": "write kBtu for a thousand or MMBtu for a million Btu",
    "MBTU": "write kBtu for a thousand or MMBtu for a million Btu",
    "MBH": "write kBtu/h for a thousand or MMBtu/h for a million Btu per hour",
    "R": "write °R or degR for degrees Rankine",
}
_YEAR_UNITS = {"year"}
_CURRENCY = re.compile(r"^(?P<k>k)?(?:[$€£¥₹]|[A-Z]{3}|money|currency)$")

_TOKEN = re.compile(
    r"""
      (?P<space>\s+)
    | (?P<open>[(\[{])
    | (?P<close>[)\]}])(?P<cexp>(?:\*\*|\^)[+-]?\d+)?
    | (?P<div>/)
    | (?P<atom>[A-Za-z_$€£¥₹Δ]+)(?P<exp>(?:\*\*|\^)[+-]?\d+|-?\d+)?
    | (?P<one>1(?![\d.]))
    | (?P<mul>\*|\.|-)
    | (?P<other>.)
    """,
    re.VERBOSE,
)

_EXPLICIT_MUL = ("*", ".")


@dataclass(frozen=True)
class UnitConversion:
    """An affine map from a user's unit to the canonical unit of a quantity.

    The canonical value is :math:`c = (x - s)\\,m/d + a` with ``subtract`` :math:`s`, ``multiply``
    :math:`m`, ``divide`` :math:`d` and ``add`` :math:`a` (a pure factor has :math:`s = a = 0`).

    Examples
    --------
    >>> parse_unit("degF", QuantityKind.TEMPERATURE).to_canonical([32.0, 212.0])
    array([  0., 100.])
    """

    text: str
    kind: QuantityKind
    unit: pint.Unit | None
    subtract: float = 0.0
    multiply: float = 1.0
    divide: float = 1.0
    add: float = 0.0

    @property
    def is_identity(self) -> bool:
        """True when values are already in the canonical unit."""
        return self.subtract == 0.0 and self.multiply == 1.0 and self.divide == 1.0 and self.add == 0.0

    def to_canonical(self, values) -> np.ndarray:
        """Values in this unit → canonical unit (a new float array)."""
        x = np.array(values, dtype=float)
        if self.subtract:
            x -= self.subtract
        if self.multiply != 1.0:
            x *= self.multiply
        if self.divide != 1.0:
            x /= self.divide
        if self.add:
            x += self.add
        return x

    def from_canonical(self, values) -> np.ndarray:
        """Canonical values → this unit (a new float array)."""
        x = np.array(values, dtype=float)
        if self.add:
            x -= self.add
        if self.divide != 1.0:
            x *= self.divide
        if self.multiply != 1.0:
            x /= self.multiply
        if self.subtract:
            x += self.subtract
        return x


def _error(text: str, kind: QuantityKind, why: str) -> InputError:
    return InputError(f"{why} (expected a {kind.value} unit such as {kind.examples})")


def _normalise(text: str) -> str:
    s = unicodedata.normalize("NFKC", text).strip()
    s = s.replace("−", "-").replace("μ", "u").replace("µ", "u")
    for ch in "·⋅∙•×":
        s = s.replace(ch, "*")
    s = re.sub(r"(?i)\s+per\s+|^per\s+", "/", s)
    s = re.sub(r"[°º˚]\s*([CFRK])\b", r" deg\1", s)
    s = re.sub(r"(?i)\bdeg(?:ree)?s?[\s_]*(C|F|R|K)\b", lambda m: "deg" + m.group(1).upper(), s)
    s = re.sub(r"(?i)\bdeg(?:ree)?s?[\s_]+(celsius|fahrenheit|rankine|kelvin)\b",
               lambda m: "deg" + m.group(1)[0].upper(), s)
    s = re.sub(r"(?i)\b(?:delta|Δ)[\s_]*(?:deg[\s_]*)?([CFRK])\b", lambda m: "delta_deg" + m.group(1).upper(), s)
    s = s.replace("Δ", "delta_")
    return s


def _tokens(s: str, text: str, kind: QuantityKind) -> list[tuple[str, str, int]]:
    out: list[tuple[str, str, int]] = []
    for m in _TOKEN.finditer(s):
        if m.group("space"):
            out.append(("mul", " ", 0))
        elif m.group("atom"):
            exp = m.group("exp")
            out.append(("atom", m.group("atom"), int(exp.lstrip("*^")) if exp else 1))
        elif m.group("close"):
            exp = m.group("cexp")
            out.append(("close", ")", int(exp.lstrip("*^")) if exp else 1))
        elif m.group("open"):
            out.append(("open", "(", 0))
        elif m.group("div"):
            out.append(("div", "/", 0))
        elif m.group("one"):
            out.append(("one", "1", 0))
        elif m.group("mul"):
            out.append(("mul", m.group("mul"), 0))
        else:
            raise _error(text, kind, f"cannot read unit '{text}': unexpected '{m.group(0)}'")
    return out


class _Parser:
    """Recursive descent: expr := group ('/' group)*; group := factor (sep? factor)*."""

    def __init__(self, tokens, text, kind):
        self.t = [t for i, t in enumerate(tokens)
                  if not (t[0] == "mul" and t[1] == " " and (i == 0 or i == len(tokens) - 1))]
        self.i = 0
        self.text = text
        self.kind = kind

    def fail(self, why: str) -> InputError:
        return _error(self.text, self.kind, f"cannot read unit '{self.text}': {why}")

    def peek(self):
        return self.t[self.i] if self.i < len(self.t) else (None, None, 0)

    def expr(self):
        groups = [self.group(first=True)]
        while self.peek()[0] == "div":
            self.i += 1
            groups.append(self.group(first=False))
        return groups

    def group(self, first: bool):
        factors: list[tuple[str | None, tuple]] = []
        sep = " "
        while True:
            kind, value, exp = self.peek()
            if kind == "mul":
                if value in _EXPLICIT_MUL:
                    sep = value
                self.i += 1
                continue
            if kind == "atom":
                self.i += 1
                factors.append((sep, ("atom", value, exp)))
            elif kind == "open":
                self.i += 1
                sub = self.expr()
                k, _, cexp = self.peek()
                if k != "close":
                    raise self.fail("unbalanced brackets")
                self.i += 1
                factors.append((sep, ("group", sub, cexp)))
            elif kind == "one" and first and not factors:
                self.i += 1
                factors.append((sep, ("one", None, 1)))
            else:
                break
            sep = " "
        if not factors and not first:
            raise self.fail("nothing after '/'")
        return factors


def _flatten(groups, strict: bool, power: int = 1) -> list[tuple[str, int]]:
    """Atoms with their net powers; every group after '/' divides (engineers) unless `strict`."""
    out: list[tuple[str, int]] = []
    for gi, group in enumerate(groups):
        sign = power if gi == 0 else -power
        back = False
        for fi, (sep, factor) in enumerate(group):
            if strict and gi > 0 and fi > 0 and sep in _EXPLICIT_MUL:
                back = True
            p = power if back else sign
            what, value, exp = factor
            if what == "atom":
                out.append((value, p * exp))
            elif what == "group":
                out.extend(_flatten(value, strict, p * exp))
    return out


def _resolve(atoms: list[tuple[str, int]], kind: QuantityKind, text: str):
    """pint unit, temperature letter of a lone temperature, scale, and whether a year divides."""
    lone = len(atoms) == 1 and atoms[0][1] == 1
    unit = _U.dimensionless
    scale = 1.0
    letter = None
    per_year = False
    for atom, p in atoms:
        if atom in _AMBIGUOUS_ATOMS:
            where = "" if atom == text.strip() else f" in '{text}'"
            raise _error(text, kind, f"unit '{atom}'{where} is ambiguous: {_AMBIGUOUS_ATOMS[atom]}")
        if atom in _TEMPERATURE_ATOMS:
            letter = _TEMPERATURE_ATOMS[atom]
            absolute = lone and kind is QuantityKind.TEMPERATURE
            name = (_ABSOLUTE_UNIT if absolute else _DIFFERENCE_UNIT)[letter]
        elif atom in _DELTA_ATOMS:
            letter = _DELTA_ATOMS[atom]
            if lone and kind is QuantityKind.TEMPERATURE:
                raise _error(text, kind, f"unit '{text}' is a temperature difference, not a temperature")
            name = _DIFFERENCE_UNIT[letter]
        elif kind is QuantityKind.COST_RATE and (m := _CURRENCY.match(atom)) and atom not in _ATOM_ALIASES:
            if p < 0:
                raise _error(text, kind, f"currency '{atom}' in '{text}' must be in the numerator")
            scale *= (1000.0 if m.group("k") else 1.0) ** p
            continue
        else:
            name = _ATOM_ALIASES.get(atom, atom)
            if name in _YEAR_UNITS or atom in ("a", "yr", "year", "years"):
                per_year = per_year or p < 0
        try:
            u = _U.Unit(name)
        except (pint.UndefinedUnitError, pint.DefinitionSyntaxError, ValueError, AttributeError,
                TypeError):
            where = "" if atom == text.strip() else f" in '{text}'"
            raise _error(text, kind, f"unknown unit '{atom}'{where}") from None
        if not lone:
            letter = None
        unit = unit * u**p
    return unit, letter, scale, per_year


_DIM_NAMES: dict[str, str] = {}


def _describe(dim) -> str:
    if not _DIM_NAMES:
        for k in QuantityKind:
            _DIM_NAMES.setdefault(str(k.dimensionality), k.value)
        for unit, name in (("kg/s", "mass flow rate"), ("J", "energy"), ("s", "time"), ("m", "length"),
                           ("kg", "mass"), ("W/(m*K)", "thermal conductivity"), ("J/(kg*K)", "specific heat"),
                           ("m**3/s", "volume flow rate"), ("coulomb", "electric charge"),
                           ("farad", "capacitance"), ("dimensionless", "pure number")):
            _DIM_NAMES.setdefault(str(_U.Unit(unit).dimensionality), name)
        _DIM_NAMES[str(QuantityKind.TEMPERATURE.dimensionality)] = "temperature"
    return _DIM_NAMES.get(str(dim), f"quantity of dimension {dim}")


def _round15(x: float) -> float:
    return float(f"{x:.15g}")


_CURRENCY_SIGNS = {"$": "USD", "€": "EUR", "£": "GBP", "¥": "JPY", "₹": "INR"}


def currency_of(text: str | None) -> str | None:
    """The currency a price unit names (``"EUR"`` for ``€/MWh``, ``"USD"`` for ``$/kW/yr`` or
    ``kUSD/MW/y``), or None when it names none (``money/(kW·year)``, no unit).

    Examples
    --------
    >>> currency_of("EUR/MWh"), currency_of("[€/kW/yr]"), currency_of("k$/MW/y"), currency_of("money/(kW·year)")
    ('EUR', 'EUR', 'USD', None)
    """
    if not text:
        return None
    for atom in re.split(r"[\s/*·.()\[\]{}^-]+|per", str(text)):
        m = _CURRENCY.match(atom)
        if m and atom not in _ATOM_ALIASES and not atom.lower().endswith(("money", "currency")):
            code = atom[1:] if m.group("k") else atom
            return _CURRENCY_SIGNS.get(code, code)
    return None


@functools.lru_cache(maxsize=1024)
def parse_unit(text: str | None, kind: QuantityKind, *, hours_per_year: float | None = None) -> UnitConversion:
    """Read a unit as engineers write it and check it measures `kind`.

    Parameters
    ----------
    text : str or None
        The unit as written (``"°C"``, ``"kW/m2K"``, ``"Btu/h/F"``...); brackets around it are
        allowed.  ``None``, an empty text or ``"-"`` mean the canonical unit.
    kind : QuantityKind
        What the values measure.
    hours_per_year : float, optional
        Operating hours per year [h/year]: lets a price per energy (``$/kWh``, ``€/MWh``) become a
        price per kW·year (price × hours); without it such a price is refused.

    Returns
    -------
    UnitConversion
        The affine map to the canonical unit of `kind`.

    Raises
    ------
    InputError
        Unknown or ambiguous unit, or a unit of another quantity; the message names the unit and
        what was expected.

    Examples
    --------
    >>> parse_unit("W/m²K", QuantityKind.FILM_COEFFICIENT).multiply
    0.001
    >>> parse_unit("MW/C", QuantityKind.HEAT_CAPACITY_FLOW).multiply
    1000.0
    """
    if text is None:
        return UnitConversion("", kind, None)
    raw = str(text).strip()
    s = raw
    while len(s) >= 2 and s[0] + s[-1] in ("[]", "()", "{}") and _balanced(s[1:-1]):
        s = s[1:-1].strip()
    if s in ("", "-", "–", "—"):
        return UnitConversion(raw, kind, None)
    parser = _Parser(_tokens(_normalise(s), raw, kind), raw, kind)
    groups = parser.expr()
    if parser.i != len(parser.t):
        raise parser.fail(f"unexpected '{parser.t[parser.i][1]}'")
    expected = kind.dimensionality
    first = None
    for strict in (False, True):
        atoms = _flatten(groups, strict)
        if not atoms and kind is not QuantityKind.COST_RATE:
            raise parser.fail("no unit found")
        unit, letter, scale, per_year = _resolve(atoms, kind, raw)
        if first is None:
            first = unit
        if unit.dimensionality != expected:
            continue
        if kind is QuantityKind.TEMPERATURE:
            if letter is None:
                raise _error(raw, kind, f"unit '{raw}' is not a temperature scale heatloom reads")
            sub, div, add = _ABSOLUTE_AFFINE[letter]
            return UnitConversion(raw, kind, unit, subtract=sub, divide=div, add=add)
        if kind is QuantityKind.TEMPERATURE_DIFFERENCE and letter is not None:
            return UnitConversion(raw, kind, unit, divide=_DIFFERENCE_DIVISOR[letter])
        if kind is QuantityKind.COST_RATE and not per_year:
            if hours_per_year is None:
                raise _error(raw, kind, f"price unit '{raw}' is not per year: a price per energy needs the "
                             "operating hours per year (give them with --hours-per-year, or give money per "
                             "kW·year)")
            # money per energy × operating hours per year = money per kW·year
            factor = (1.0 * unit).to("1/(kW*hour)").magnitude * scale * float(hours_per_year)
            return UnitConversion(raw, kind, unit, multiply=_round15(float(factor)))
        factor = (1.0 * unit).to(_KIND_INFO[kind][1]).magnitude * scale
        return UnitConversion(raw, kind, unit, multiply=_round15(float(factor)))
    assert first is not None
    if kind is QuantityKind.TEMPERATURE and first.dimensionality == expected:
        why = f"unit '{raw}' is not a single temperature unit"
    else:
        why = f"unit '{raw}' measures a {_describe(first.dimensionality)}"
    raise _error(raw, kind, why)


def _balanced(s: str) -> bool:
    depth = 0
    for ch in s:
        if ch in "([{":
            depth += 1
        elif ch in ")]}":
            depth -= 1
            if depth < 0:
                return False
    return depth == 0


def to_canonical(values, unit: str | None, kind: QuantityKind) -> np.ndarray:
    """Convert an array of values written in `unit` to the canonical unit of `kind`.

    Parameters
    ----------
    values : array_like
        Numbers in `unit` [unit].
    unit : str or None
        The unit as written; ``None`` or empty for the canonical unit.
    kind : QuantityKind
        What the values measure.

    Returns
    -------
    numpy.ndarray
        A new float array in the canonical unit of `kind` (°C, K, kW, kW/K, kW/(m²·K), m²,
        money/(kW·year)).

    Notes
    -----
    Temperatures follow NIST SP 811 (2008), Appendix B.8: t/°C = (t/°F − 32)/1.8,
    t/°C = T/K − 273.15, T/K = (T/°R)/1.8.  Absolute zero is not checked here.

    Examples
    --------
    >>> to_canonical([1.0, 2.0], "Btu/h", QuantityKind.DUTY)
    array([0.00029307, 0.00058614])
    >>> to_canonical([373.15], "K", QuantityKind.TEMPERATURE)
    array([100.])
    """
    return parse_unit(unit, kind).to_canonical(values)


def from_canonical(values, unit: str | None, kind: QuantityKind) -> np.ndarray:
    """Convert canonical values of `kind` to `unit` (the inverse of :func:`to_canonical`).

    Examples
    --------
    >>> from_canonical([100.0], "°F", QuantityKind.TEMPERATURE)
    array([212.])
    """
    return parse_unit(unit, kind).from_canonical(values)
