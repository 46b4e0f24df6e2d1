"""Codex default limits (plugins/codex.py), each traced to shared/references.md.

The table below is copied from references.md, row by row, with its tag: "found" rows were read
in copies of the standard, "memory" rows were recalled and not confirmed. The plugin must carry
the same value and say the same about its evidence.

A transcription guard: it checks the copy of references.md, not the standard itself.
"""
from __future__ import annotations

import pytest

from plugins import codex
from plugins.acid import AcidValue
from plugins.free_fatty_acids import FreeFattyAcids
from plugins.insoluble_impurities import InsolubleImpurities
from plugins.iodine import IodineValueWijs
from plugins.moisture import MoistureVolatileMatter
from plugins.peroxide import PeroxideValue
from plugins.saponification import SaponificationValue
from plugins.slip_melting_point import SlipMeltingPoint
from plugins.soap import SoapContent
from plugins.unsaponifiable import UnsaponifiableMatter

PLUGINS = {
    "sv": SaponificationValue, "iv": IodineValueWijs, "av": AcidValue, "pv": PeroxideValue, "ffa": FreeFattyAcids,
    "mv": MoistureVolatileMatter, "insol": InsolubleImpurities, "soap": SoapContent, "unsap": UnsaponifiableMatter,
    "smp": SlipMeltingPoint,
}
EVIDENCE = {"found": "found", "memory": "from memory"}

# (method, oil type, minimum, maximum, tag in references.md, standard the source must name)
TABLE = [
    # Identity ranges, Codex CXS 210 (named vegetable oils)
    ("sv", "soybean", 189, 195, "found", "CXS 210"),
    ("iv", "soybean", 124, 139, "found", "CXS 210"),
    ("sv", "maize", 187, 195, "found", "CXS 210"),
    ("iv", "maize", 103, 135, "found", "CXS 210"),
    ("sv", "palm", 190, 209, "found", "CXS 210"),
    ("iv", "palm", 50.0, 55.0, "found", "CXS 210"),
    ("sv", "rapeseed_low_erucic", 182, 193, "found", "CXS 210"),
    ("iv", "rapeseed_low_erucic", 105, 126, "found", "CXS 210"),
    ("sv", "coconut", 248, 265, "found", "CXS 210"),
    ("iv", "coconut", 6.3, 10.6, "found", "CXS 210"),
    ("sv", "sunflowerseed", 187, 194, "found", "CXS 210"),  # amended from 188-194
    ("iv", "sunflowerseed", 118, 141, "memory", "CXS 210"),
    ("sv", "sunflowerseed_high_oleic", 182, 194, "found", "CXS 210"),
    ("iv", "sunflowerseed_high_oleic", 78, 90, "found", "CXS 210"),
    ("sv", "palm_olein", 194, 202, "memory", "CXS 210"),
    ("iv", "palm_olein", 56, None, "memory", "CXS 210"),
    ("sv", "palm_kernel", 230, 254, "memory", "CXS 210"),
    ("iv", "palm_kernel", 14.1, 21.0, "memory", "CXS 210"),
    ("sv", "groundnut", 187, 196, "memory", "CXS 210"),
    ("iv", "groundnut", 86, 107, "memory", "CXS 210"),
    # Quality limits, CXS 210 appendix and CXS 19
    ("av", "refined", None, 0.6, "found", "CXS 19"),
    ("av", "cold_pressed", None, 4.0, "found", "CXS 19"),
    ("av", "virgin_palm", None, 10.0, "found", "CXS 19"),
    ("pv", "refined", None, 10.0, "found", "CXS 19"),
    ("pv", "cold_pressed", None, 15.0, "found", "CXS 19"),
    # Olive oils, CXS 33: free acidity as oleic (found); PV "virgin <= 20, refined <= 5" (memory),
    # read as covering extra virgin too, since extra virgin is a grade of virgin olive oil.
    ("ffa", "olive_extra_virgin", None, 0.8, "found", "CXS 33"),
    ("ffa", "olive_virgin", None, 2.0, "found", "CXS 33"),
    ("ffa", "olive_refined", None, 0.3, "found", "CXS 33"),
    ("pv", "olive_extra_virgin", None, 20.0, "memory", "CXS 33"),
    ("pv", "olive_virgin", None, 20.0, "memory", "CXS 33"),
    ("pv", "olive_refined", None, 5.0, "memory", "CXS 33"),
    # Other quality factors of refined oils, CXS 210 appendix: volatile matter at 105 degC <= 0.2 % (found);
    # insoluble impurities <= 0.05 %, soap <= 0.005 % = 50 mg/kg (memory)
    ("mv", "refined", None, 0.2, "found", "CXS 19"),
    ("insol", "refined", None, 0.05, "memory", "CXS 19"),
    ("soap", "refined", None, 50, "memory", "CXS 19"),
    # Unsaponifiable matter, CXS 210, g/kg written as % (15 g/kg = 1.5 %): not in references.md, memory
    ("unsap", "soybean", None, 1.5, "memory", "CXS 210"),
    ("unsap", "maize", None, 2.8, "memory", "CXS 210"),
    ("unsap", "palm", None, 1.2, "memory", "CXS 210"),
    ("unsap", "rapeseed_low_erucic", None, 2.0, "memory", "CXS 210"),
    ("unsap", "coconut", None, 1.5, "memory", "CXS 210"),
    ("unsap", "sunflowerseed", None, 1.5, "memory", "CXS 210"),
    ("unsap", "palm_kernel", None, 1.0, "memory", "CXS 210"),
    ("unsap", "groundnut", None, 1.0, "memory", "CXS 210"),
    # Slip melting point (degC), CXS 210 palm oils: not in references.md, memory
    ("smp", "palm", 33.0, 39.0, "memory", "CXS 210"),
    ("smp", "palm_olein", 19.0, 24.0, "memory", "CXS 210"),
    ("smp", "palm_kernel", 25.0, 28.0, "memory", "CXS 210"),
]


@pytest.mark.parametrize(("method", "oil_type", "minimum", "maximum", "tag", "standard"), TABLE, ids=[f"{r[0]}-{r[1]}" for r in TABLE])
def test_limit_equals_references_and_carries_its_tag(method, oil_type, minimum, maximum, tag, standard):
    limit = PLUGINS[method]().limits_for(oil_type)
    assert limit is not None, f"{method} has no limit for {oil_type}"
    assert limit.minimum == minimum
    assert limit.maximum == maximum
    assert limit.evidence == EVIDENCE[tag]
    assert standard in limit.source


@pytest.mark.parametrize("method", sorted(PLUGINS))
def test_plugin_has_no_limit_missing_from_references(method):
    traced = {oil_type for m, oil_type, *_ in TABLE if m == method}
    assert {limit.oil_type for limit in PLUGINS[method].spec_limits} == traced
    assert PLUGINS[method].spec_limits == codex.limits_for(method)


def test_every_limit_names_a_codex_standard_and_a_known_oil_type():
    for method in PLUGINS:
        for limit in codex.limits_for(method):
            assert any(name in limit.source for name in ("CXS 210", "CXS 19", "CXS 33")), limit
            assert limit.oil_type in codex.OIL_TYPES, limit


def test_identity_ranges_are_ordered():
    for method in ("sv", "iv"):
        for limit in codex.limits_for(method):
            if limit.minimum is not None and limit.maximum is not None:
                assert limit.minimum < limit.maximum, limit


def test_method_without_codex_limits_gets_none():
    assert codex.limits_for("anv") == ()
    assert codex.limits_for("osi") == ()  # Codex sets no oxidative stability limit


def test_conventional_ffa_basis_names_known_oil_types_and_bases():
    # plugins/codex.py: palm oils as palmitic, lauric oils as lauric (Ca 5a-40, from memory; partly seen in copies)
    from plugins.free_fatty_acids import BASIS_FACTORS, FreeFattyAcids

    assert set(codex.FFA_BASIS_BY_OIL_TYPE) <= set(codex.OIL_TYPES)
    assert set(codex.FFA_BASIS_BY_OIL_TYPE.values()) <= set(BASIS_FACTORS)
    assert codex.FFA_BASIS_BY_OIL_TYPE["palm"] == "palmitic" and codex.FFA_BASIS_BY_OIL_TYPE["coconut"] == "lauric"
    assert FreeFattyAcids.basis.by_oil_type is codex.FFA_BASIS_BY_OIL_TYPE
    # the Codex FFA limits (CXS 33, olive oils) are all "as oleic", the default for oil types not listed
    assert all(limit.oil_type not in codex.FFA_BASIS_BY_OIL_TYPE for limit in codex.limits_for("ffa"))
