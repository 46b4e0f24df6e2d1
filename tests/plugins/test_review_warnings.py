"""Method scope and blanks (plugins/review_warnings.py, plugins/blanks.py): warnings, never refusals.

Sources of the declared facts (each also named in the plugin):
- ISO 3960 scope: peroxide values from 0 to 30 meq/kg (found, in the abstract of ISO 3960:2007 and 2017);
- AOCS Cd 8b-90: erratic results at peroxide values of 70 or more (found, in copies of the method);
- AOCS Cd 1d-92: iodine values in the range 18-165 (found, in a copy of the method);
- Commission Regulation (EEC) No 2568/91, Annex III: a blank with every series; a blank above 0.05 mL of
  0.01 mol/L thiosulfate means impure reagents (found).
"""
from __future__ import annotations

import json

import pytest

from plugins.acid import AcidValue
from plugins.contract import MethodInputError, MethodScope
from plugins.free_fatty_acids import FreeFattyAcids
from plugins.iodine import IodineValueWijs
from plugins.peroxide import PeroxideValue
from plugins.registry import get_registry
from plugins.review_warnings import review_warnings, scope_warnings

PV = PeroxideValue()
IV = IodineValueWijs()


def pv_reading(value: float, **extra) -> dict:
    """Thiosulfate titre for ``value`` meq O2/kg on 5.0 g with 0.01 mol/L: value x 5.0 / (0.01 x 1000) mL."""
    return {"sample_mass": 5.0, "sample_volume": value * 5.0 / 10.0, "titrant_concentration": 0.01, "blank_volume": 0.0, **extra}


def warnings_for(plugin, inputs) -> list[str]:
    result = plugin.calculate(inputs)
    return review_warnings(plugin, result.inputs, result.value, result.unit)


@pytest.mark.parametrize("value", [0.0, 4.98, 30.0])
def test_peroxide_value_within_iso_3960_has_no_warning(value):
    assert warnings_for(PV, pv_reading(value)) == []


def test_peroxide_value_above_30_is_outside_iso_3960_but_still_computed():
    result = PV.calculate(pv_reading(31.0))
    assert str(result.reported) == "31.0"  # computed and reported as usual: a warning, not a refusal
    warnings = review_warnings(PV, result.inputs, result.value, result.unit)
    assert len(warnings) == 1
    assert "31.0 meq O2/kg" in warnings[0] and "0 to 30" in warnings[0] and "ISO 3960" in warnings[0]


def test_peroxide_value_of_70_is_also_outside_cd_8b_90():
    # Cd 8b-90 (found): erratic at PV >= 70, so 70 itself is outside; 69.9 is only outside ISO 3960
    assert len(warnings_for(PV, pv_reading(69.9))) == 1
    warnings = warnings_for(PV, pv_reading(70.0))
    assert len(warnings) == 2
    assert "AOCS Cd 8b-90" in warnings[1] and "erratic" in warnings[1] and "below 70" in warnings[1]


@pytest.mark.parametrize(("iv", "outside"), [(17.9, True), (18.0, False), (131.8, False), (165.0, False), (165.1, True)])
def test_iodine_value_outside_cd_1d_92_range_is_flagged(iv, outside):
    # Cd 1d-92 (found): 18-165. Scope is checked on the value as computed.
    warnings = scope_warnings(IV, iv)
    assert bool(warnings) is outside
    if outside:
        assert "18 to 165" in warnings[0] and "AOCS Cd 1d-92" in warnings[0] and "ISO 3961" in warnings[0]


def test_free_fatty_acids_above_100_percent_is_flagged():
    assert scope_warnings(FreeFattyAcids(), 100.0) == []
    assert "100" in scope_warnings(FreeFattyAcids(), 100.5)[0]


def test_a_scope_bound_is_inclusive_unless_said_otherwise():
    assert MethodScope("x", minimum=1.0, maximum=2.0).contains(2.0)
    assert not MethodScope("x", maximum=2.0, maximum_inclusive=False).contains(2.0)
    assert not MethodScope("x", minimum=1.0).contains(0.999)


def test_peroxide_blank_is_required_and_named():
    inputs = pv_reading(5.0)
    del inputs["blank_volume"]
    with pytest.raises(MethodInputError) as refused:
        PV.calculate(inputs)
    assert refused.value.field == "blank_volume"
    assert "2568/91" in refused.value.reason and "blank_not_run" in refused.value.reason


@pytest.mark.parametrize("flag", [True, "true", "yes", "1", "TRUE"])
def test_a_blank_declared_not_run_is_accepted_with_a_warning(flag):
    inputs = pv_reading(5.0)
    del inputs["blank_volume"]
    result = PV.calculate({**inputs, "blank_not_run": flag})
    assert result.value == pytest.approx(5.0, abs=1e-9)  # no blank correction
    assert result.inputs["blank_not_run"] == "true"
    warnings = review_warnings(PV, result.inputs, result.value, result.unit)
    assert len(warnings) == 1 and "no blank was run" in warnings[0] and "2568/91" in warnings[0]


def test_a_blank_and_blank_not_run_together_are_refused():
    with pytest.raises(MethodInputError) as refused:
        PV.calculate(pv_reading(5.0, blank_not_run=True))
    assert refused.value.field == "blank_not_run"


@pytest.mark.parametrize("flag", ["maybe", "2", "n/a"])
def test_blank_not_run_must_be_a_yes_or_no(flag):
    with pytest.raises(MethodInputError) as refused:
        PV.calculate({**pv_reading(5.0), "blank_not_run": flag})
    assert refused.value.field == "blank_not_run"


@pytest.mark.parametrize(
    ("blank", "concentration", "too_large"),
    [
        (0.05, 0.01, False),  # Reg. 2568/91 Annex III (found): 0.05 mL of 0.01 mol/L is the limit itself
        (0.06, 0.01, True),
        (0.25, 0.002, False),  # the same 0.0005 mmol with the weaker titrant
        (0.26, 0.002, True),
    ],
)
def test_a_blank_above_the_annex_iii_limit_is_flagged(blank, concentration, too_large):
    inputs = {"sample_mass": 5.0, "sample_volume": 10.0, "blank_volume": blank, "titrant_concentration": concentration}
    warnings = warnings_for(PV, inputs)
    assert bool(warnings) is too_large
    if too_large:
        assert "more than the 0.0005 mmol" in warnings[0]


def test_acid_value_and_ffa_blanks_stay_optional():
    # ISO 660 neutralises its solvent (found); Ca 5a-40 its alcohol (from memory): no prescribed blank
    assert AcidValue.blank is not None and AcidValue.blank.prescribed is False
    assert FreeFattyAcids.blank is not None and FreeFattyAcids.blank.prescribed is False
    no_blank = {"sample_mass": 10.0, "sample_volume": 2.0, "titrant_concentration": 0.1}
    assert warnings_for(AcidValue(), no_blank) == []
    assert warnings_for(FreeFattyAcids(), no_blank) == []


@pytest.mark.parametrize("plugin", get_registry().all(), ids=lambda p: p.code)
def test_every_declaration_names_its_source_and_is_described(plugin):
    for scope in plugin.scope:
        assert scope.source.strip() and scope.evidence in {"found", "from memory"}
        assert scope.minimum is not None or scope.maximum is not None
    if plugin.blank is not None:
        assert plugin.blank.source.strip() and plugin.blank.evidence in {"found", "from memory"}
    if plugin.basis is not None:
        assert plugin.basis.input_name in {spec.name for spec in plugin.inputs}
        assert plugin.basis.source.strip()
    description = json.loads(json.dumps(plugin.describe()))
    assert len(description["scope"]) == len(plugin.scope)
    assert (description["blank"] is None) is (plugin.blank is None)
    assert (description["basis"] is None) is (plugin.basis is None)
