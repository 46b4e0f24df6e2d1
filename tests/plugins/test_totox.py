"""TOTOX = 2 PV + AnV (found, shared/references.md), a method of its own derived from the two."""
from __future__ import annotations

from decimal import Decimal

import pytest

from plugins.anisidine import AnisidineValue
from plugins.contract import MethodInputError
from plugins.peroxide import PeroxideValue
from plugins.registry import get_registry

TOTOX = get_registry().get("totox")


def test_totox_is_registered_as_derived_from_pv_and_anv():
    assert TOTOX.derived_from == {"peroxide_value": "pv", "anisidine_value": "anv"}
    assert TOTOX.replicates == 1 and not TOTOX.instruments and not TOTOX.titrants


def test_totox_from_known_values_exactly():
    # TOTOX = 2 x PV + AnV (found): PV 5.0 meq O2/kg and AnV 3.5 -> 13.5, in exact decimals
    assert TOTOX.calculate({"peroxide_value": "5.0", "anisidine_value": "3.5"}).judged == Decimal("13.5")
    assert TOTOX.calculate({"peroxide_value": "0", "anisidine_value": "0"}).judged == 0


def test_totox_from_the_two_plugins():
    # PV by AOCS Cd 8b-90 (found): (3.1 - 0.05) mL x 0.002 mol/L x 1000 / 5.0 g = 1.22 meq O2/kg;
    # AnV 26.0 from its definition case (found); TOTOX = 2 x 1.22 + 26.0 = 28.44
    pv = PeroxideValue().calculate({"sample_mass": "5.0", "sample_volume": "3.1", "blank_volume": "0.05", "titrant_concentration": "0.002"})
    anv = AnisidineValue().calculate({"sample_mass": "0.25", "absorbance_unreacted": "0.100", "absorbance_reacted": "0.300"})
    assert TOTOX.calculate({"peroxide_value": pv.judged, "anisidine_value": anv.judged}).judged == Decimal("28.44")


@pytest.mark.parametrize(
    ("peroxide_value", "anisidine_value", "field"),
    [(-1.0, 3.5, "peroxide_value"), ("5 percent", 3.5, "peroxide_value"), (5.0, -0.1, "anisidine_value"),
     (5.0, float("nan"), "anisidine_value"), (5.0, "high", "anisidine_value")],
)
def test_totox_refuses_bad_values_by_name(peroxide_value, anisidine_value, field):
    with pytest.raises(MethodInputError) as refused:
        TOTOX.calculate({"peroxide_value": peroxide_value, "anisidine_value": anisidine_value})
    assert refused.value.field == field
