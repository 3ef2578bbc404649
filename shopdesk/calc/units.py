"""The one unit registry of ShopDesk, form-input parsing and input checks.

Every calculator takes and returns quantities of this registry. Nothing else in
the project creates a ``pint.UnitRegistry``: quantities of two registries cannot
be mixed.

Unit definitions follow NIST SP 811 Appendix B (as pint ships them): 1 psi is
0.45359237 kg x 9.80665 m/s^2 / (0.0254 m)^2, 1 bar is 100 000 Pa exactly.
"""

from __future__ import annotations

import math
import re
import tokenize
from typing import Any

import pint

from shopdesk.calc.errors import CalcInputError

ureg: pint.UnitRegistry = pint.UnitRegistry(cache_folder=None)
ureg.formatter.default_format = "~P"
Q_ = ureg.Quantity
Quantity = pint.Quantity

# Spellings a shop types that pint reads differently or not at all.
# "fl oz" alone would parse as femtolitre x ounce.
_SPELLINGS: tuple[tuple[re.Pattern[str], str], ...] = (
    (re.compile(r"\bfl\.?\s*oz\b", re.IGNORECASE), "fluid_ounce"),
    (re.compile(r"\bcc\b", re.IGNORECASE), "cm**3"),
    (re.compile(r"\bml\b"), "mL"),
    (re.compile(r"\bnm\b"), "N*m"),  # torque: nobody at a bench means nanometres
    (re.compile(r"\bN\s*·\s*m\b"), "N*m"),
    (re.compile(r"°\s*C\b"), "degC"),
    (re.compile(r"°\s*F\b"), "degF"),
    (re.compile(r"\bcSt\b"), "mm**2/s"),
)
_NUMBER_ONLY = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")
_LEADING_NUMBER = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(.*)$")


def _normalise(text: str) -> str:
    text = text.strip()
    # Decimal comma ("0,15 mm"): a comma between digits is a decimal point.
    # Thousands separators are not accepted; "1,500" means one and a half.
    text = re.sub(r"(?<=\d),(?=\d)", ".", text)
    for pattern, replacement in _SPELLINGS:
        text = pattern.sub(replacement, text)
    return text


def parse_quantity(text: str, *, default_unit: str, dimension: str) -> pint.Quantity:
    """Read a value typed into a form, with or without a unit.

    ``"85"`` takes ``default_unit``; ``"85 psi"``, ``"5.9bar"``, ``"120 cc"``,
    ``"4 fl oz"`` and ``"0,15 mm"`` (decimal comma) carry their own.
    ``dimension`` is pint's notation: ``"[pressure]"``, ``"[volume]"``,
    ``"[length]"``, ``"[mass]"``. A unit of another kind ("85 kg" for a
    pressure), an empty or unreadable text, NaN or infinity raises
    :class:`CalcInputError`.
    """
    if not isinstance(text, str):
        raise CalcInputError(f"Expected text to read as a {_kind(dimension)}, got {type(text).__name__}.")
    cleaned = _normalise(text)
    if not cleaned:
        raise CalcInputError(f"Enter a {_kind(dimension)}.")
    match = _LEADING_NUMBER.match(cleaned)
    if not match:
        raise CalcInputError(f"“{text.strip()}” does not start with a number.")
    number_text, unit_text = match.group(1), match.group(2).strip()
    magnitude = float(number_text)
    if not math.isfinite(magnitude):
        raise CalcInputError(f"“{text.strip()}” is not a finite number.")
    unit = unit_text or default_unit
    try:
        quantity = Q_(magnitude, ureg.parse_units(unit))
    except (
        pint.errors.PintError,
        AttributeError,
        TypeError,
        ValueError,
        SyntaxError,
        # pint's unit parser also fails with these on unbalanced or stray characters
        AssertionError,
        tokenize.TokenError,
        KeyError,
        IndexError,
    ):
        raise CalcInputError(f"“{unit_text}” is not a unit ShopDesk knows.") from None
    if not quantity.check(dimension):
        raise CalcInputError(
            f"“{text.strip()}” is not a {_kind(dimension)}: use a unit such as {_examples(dimension)}."
        )
    return quantity


_KINDS = {
    "[pressure]": ("pressure", "psi, bar or kPa"),
    "[volume]": ("volume", "mL, cc or fl oz"),
    "[length]": ("length", "mm or in"),
    "[mass]": ("mass", "g or kg"),
    "[force]": ("force", "N or lbf"),
    "[temperature]": ("temperature", "degC or degF"),
    "[time]": ("time", "s, min or h"),
    "[length] / [time]": ("speed", "m/s or mm/s"),
    "[length] ** 2": ("surface area", "mm**2 or cm**2"),
    "[length] ** 2 / [time]": ("kinematic viscosity", "mm**2/s (cSt)"),
    "[mass] / [length] ** 3": ("density", "kg/m**3 or g/mL"),
    "[mass] / [time] ** 2": ("spring rate", "N/mm or lbf/in"),
    "[length] * [mass] / [time] ** 2": ("force", "N or lbf"),
}


def _kind(dimension: str) -> str:
    return _KINDS.get(dimension, (dimension, ""))[0]


def _examples(dimension: str) -> str:
    return _KINDS.get(dimension, ("", "a unit of that kind"))[1]


def check_quantity(
    value: Any,
    *,
    name: str,
    dimension: str,
    unit: str,
    minimum: float | None = 0.0,
    maximum: float | None = None,
    allow_minimum: bool = False,
) -> float:
    """Check one calculator input and return its magnitude in ``unit``.

    ``value`` must be a quantity of this registry with the given ``dimension``
    and a finite magnitude. ``minimum`` and ``maximum`` are in ``unit``; the
    minimum is exclusive unless ``allow_minimum`` (so the default refuses zero
    and negatives). Every failure raises :class:`CalcInputError` naming
    ``name`` and the allowed range.
    """
    if not isinstance(value, pint.Quantity) or value._REGISTRY is not ureg:
        raise CalcInputError(
            f"{name} must be a {_kind(dimension)} with a unit (for example {_examples(dimension)}), "
            f"got {value!r}."
        )
    if not value.check(dimension):
        raise CalcInputError(f"{name} must be a {_kind(dimension)} ({_examples(dimension)}), got {value:~P}.")
    try:
        magnitude = value.to(unit).magnitude
    except pint.errors.PintError as error:  # offset units in a product, and the like
        raise CalcInputError(f"{name}: {error}") from None
    return check_number(
        magnitude, name=name, unit=unit, minimum=minimum, maximum=maximum, allow_minimum=allow_minimum
    )


def check_number(
    value: Any,
    *,
    name: str,
    unit: str = "",
    minimum: float | None = 0.0,
    maximum: float | None = None,
    allow_minimum: bool = False,
    allow_maximum: bool = True,
) -> float:
    """Check a plain number (a magnitude or a dimensionless input) and return it as float."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        try:
            import numpy as np

            if isinstance(value, np.generic) and np.ndim(value) == 0:
                value = value.item()
            else:
                raise TypeError
        except TypeError:
            raise CalcInputError(f"{name} must be a number, got {value!r}.") from None
    number = float(value)
    suffix = f" {unit}" if unit else ""
    if not math.isfinite(number):
        raise CalcInputError(f"{name} must be a finite number, got {number}.")
    if minimum is not None and (number < minimum or (number == minimum and not allow_minimum)):
        bound = "at least" if allow_minimum else "more than"
        raise CalcInputError(f"{name} must be {bound} {minimum:g}{suffix}, got {number:g}{suffix}.")
    if maximum is not None and (number > maximum or (number == maximum and not allow_maximum)):
        bound = "at most" if allow_maximum else "less than"
        raise CalcInputError(f"{name} must be {bound} {maximum:g}{suffix}, got {number:g}{suffix}.")
    return number


STANDARD_ATMOSPHERE = Q_(101_325.0, "Pa")  # ISO 2533, exact by definition
