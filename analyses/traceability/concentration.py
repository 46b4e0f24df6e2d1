"""A nominal concentration as the lab writes it ("0.5 mol/L", "0.1 N", "100 mmol/L") in mol/L.

Normality counts equivalents per litre, so N = c · z with z the equivalents per mole of the
solute (1 for KOH, HCl and thiosulfate; 2 for H2SO4). pint converts every molar unit; "N"
(which pint reads as newton) and "eq/L" are read as equivalents per litre and divided by z.
"""
from __future__ import annotations

import re
from decimal import Decimal, InvalidOperation, localcontext

from plugins.contract import exact_context
from plugins.units import UnitProblem, exact_registry, to_decimal, to_magnitude

_NORMALITY = re.compile(r"^\s*(?P<number>[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(?:N|eq\s*/\s*L)\s*$")


def molarity(text: str, equivalents_per_mole: int) -> Decimal:
    """``text`` in mol/L; UnitProblem when it is not a concentration."""
    if not isinstance(text, str) or len(text) > 64:
        raise UnitProblem("give a concentration such as \"0.5 mol/L\" or \"0.1 N\"")
    match = _NORMALITY.match(text)
    if match:
        try:
            number = Decimal(match["number"])
        except InvalidOperation:
            raise UnitProblem("is not a number") from None
        normal = exact_registry().Quantity(number, "mol/L")  # equivalents per litre
        with localcontext(exact_context()):
            value = (normal / Decimal(equivalents_per_mole)).to("mol/L").magnitude
    else:
        to_magnitude(text, "mol/L")  # checks the number and the unit's dimension
        value = to_decimal(text, "mol/L")
    if not value.is_finite() or value <= 0:
        raise UnitProblem("must be a positive concentration")
    return value
