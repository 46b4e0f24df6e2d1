"""Verdicts against limits by ASTM E29: the absolute method and the rounding method.

ASTM E29 (shared/references.md, found): results are compared with limits either by the
absolute method or by the rounding method, and the specification names which. It rounds
half to even (21.45 -> 21.4); that this rule is E29's own is memory.
"""
from __future__ import annotations

from decimal import Decimal

import pytest

from analyses.models import Test, Verdict
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create
from analyses.services.products import product_create
from analyses.services.results import result_record
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from analyses.services.verdicts import limit_places, verdict_for
from tests.analyses.lab_setup import entry

PASS, OOS = Verdict.PASS, Verdict.OUT_OF_SPECIFICATION


# ASTM E29 rounding method: round to "the last right-hand place used in expressing the limit"
# (the method is found, shared/references.md; this wording is from memory). Limits are stored
# in plain notation, so "10" is written to units.
@pytest.mark.parametrize(
    ("limit", "places"), [("0.6", 1), ("0.60", 2), ("189", 0), ("10.0", 1), ("10", 0), ("0.0000001", 7)]
)
def test_limit_places_are_the_places_the_limit_is_written_to(limit, places):
    assert limit_places(Decimal(limit)) == places


@pytest.mark.django_db
@pytest.mark.parametrize(
    ("written", "stored", "places"),
    [("1E+1", "10", 0), ("0.0000001", "0.0000001", 7), ("1E-7", "0.0000001", 7), ("1.50E+2", "150", 0), ("0.60", "0.60", 2)],
)
def test_a_limit_is_stored_in_plain_notation_and_rounds_to_its_last_written_place(users, written, stored, places):
    product = product_create(users["manager"], code="PLN", name="Invented plain-notation oil", oil_type="soybean")
    draft = specification_create(
        users["manager"], product, effective_from="2020-01-01",
        lines=[{"method": "av", "maximum": written, "comparison": "rounding"}],
    )
    line = draft.lines.get()
    assert line.maximum == stored
    assert limit_places(line.maximum_decimal) == places


@pytest.mark.parametrize(
    ("value", "maximum", "absolute", "rounding"),
    [
        (0.6, "0.6", PASS, PASS),  # at the limit: conforms either way
        (0.64, "0.6", OOS, PASS),  # rounding: 0.64 -> 0.6 at the limit's one place
        (0.65, "0.6", OOS, PASS),  # half to even: 0.65 -> 0.6 (ASTM E29, found)
        (0.75, "0.6", OOS, OOS),  # half to even: 0.75 -> 0.8
        (0.6500001, "0.6", OOS, OOS),  # above the half: 0.7
        (21.45, "21.4", OOS, PASS),  # E29's own example, 21.45 -> 21.4 (found; "E29's own": memory)
        (0.604, "0.60", OOS, PASS),  # two places written: 0.604 -> 0.60
        (0.605, "0.60", OOS, PASS),  # 0.605 -> 0.60 (half to even)
        (0.606, "0.60", OOS, OOS),
    ],
)
def test_maximum_absolute_versus_rounding_method(value, maximum, absolute, rounding):
    limit = Decimal(maximum)
    assert verdict_for(value, minimum=None, maximum=limit, comparison="absolute") == absolute
    assert verdict_for(value, minimum=None, maximum=limit, comparison="rounding") == rounding


@pytest.mark.parametrize(
    ("value", "absolute", "rounding"),
    [
        (189.0, PASS, PASS),
        (188.6, OOS, PASS),  # rounding to units: 189
        (188.5, OOS, OOS),  # half to even: 188
    ],
)
def test_minimum_absolute_versus_rounding_method(value, absolute, rounding):
    # Codex CXS 210 saponification value of soybean oil, 189-195 mg KOH/g (found)
    low, high = Decimal("189"), Decimal("195")
    assert verdict_for(value, minimum=low, maximum=high, comparison="absolute") == absolute
    assert verdict_for(value, minimum=low, maximum=high, comparison="rounding") == rounding


def test_half_to_even_at_an_upper_limit_written_in_units():
    high = Decimal("195")
    # 195.5 -> 196 (6 is even): out; 194.5 -> 194: in (ASTM E29 half to even, found)
    assert verdict_for(195.5, minimum=None, maximum=high, comparison="rounding") == OOS
    assert verdict_for(195.4, minimum=None, maximum=high, comparison="rounding") == PASS
    assert verdict_for(195.4, minimum=None, maximum=high, comparison="absolute") == OOS


@pytest.mark.django_db
def test_results_take_the_comparison_their_specification_line_names(users):
    """AV by the absolute method, PV by the rounding method, through result entry."""
    manager, qa, analyst = users["manager"], users["qa"], users["analyst"]
    product = product_create(manager, code="RPO", name="Refined palm olein", oil_type="palm_olein")
    draft = specification_create(
        manager, product, effective_from="2020-01-01",
        lines=[
            {"method": "av", "maximum": "0.6", "comparison": "absolute"},
            {"method": "pv", "maximum": "10.0", "comparison": "rounding"},
        ],
    )
    specification_approve(qa, draft)
    lot = lot_create(manager, code="RPO-1", product=product, origin="production")
    sample = sample_receive(manager, sample_register(manager, lot), condition="ok", storage_place="shelf")
    tests = {t.method_code: t for t in Test.objects.filter(sample=sample)}
    test_assign_bulk(manager, list(tests.values()), assignee=analyst)

    # AV = 2.14 mL * 0.1 mol/L * 56.1 / 20.0 g = 0.600270 (ISO 660 formula by hand): reported 0.60,
    # but the absolute method compares the unrounded value, which exceeds 0.6.
    av_inputs = {"sample_mass": "20.0", "sample_volume": "2.14", "titrant_concentration": "0.1"}
    first = result_record(analyst, tests["av"], **entry("av", av_inputs))
    assert first.reported == "0.60"
    assert first.verdict == OOS
    result_record(analyst, tests["av"], **entry("av", av_inputs))
    assert Test.objects.get(pk=tests["av"].pk).verdict == OOS

    # PV = 5.02 mL * 0.01 mol/L * 1000 / 5.0 g = 10.04 meq/kg (AOCS Cd 8b-90 formula by hand): by the
    # rounding method it is rounded to the limit's one place, 10.0, which conforms.
    pv_inputs = {"sample_mass": "5.0", "sample_volume": "5.02", "blank_volume": "0", "titrant_concentration": "0.01"}
    first = result_record(analyst, tests["pv"], **entry("pv", pv_inputs))
    assert first.reported == "10.0"
    assert first.verdict == PASS
    result_record(analyst, tests["pv"], **entry("pv", pv_inputs))
    assert Test.objects.get(pk=tests["pv"].pk).verdict == PASS


# The audit's five exact-at-limit reproducers (issue 7), entered as results against specification
# lines that carry the Codex defaults (CXS 210 maize SV min 187, palm IV min 50.0, refined AV max 0.6
# and PV max 10; found) and, for FFA, our own test limit of 0.3 % as oleic.
EXACT_AT_LIMIT = {
    "sv": ({"codex_oil_type": "maize"}, {"sample_mass": "1.965", "sample_volume": "11.90", "blank_volume": "25.00", "titrant_concentration": "0.5"}, "187.0"),
    "av": ({"codex_oil_type": "refined"}, {"sample_mass": "9.35", "sample_volume": "1.00", "titrant_concentration": "0.1"}, "0.60"),
    "iv": ({"codex_oil_type": "palm"}, {"sample_mass": "0.2538", "sample_volume": "40.0", "blank_volume": "50.0", "titrant_concentration": "0.1"}, "50.0"),
    "pv": ({"codex_oil_type": "refined"}, {"sample_mass": "4.97", "sample_volume": "4.97", "blank_volume": "0", "titrant_concentration": "0.01"}, "10.0"),
    "ffa": ({"maximum": "0.3"}, {"sample_mass": "9.4", "sample_volume": "1.00", "titrant_concentration": "0.1"}, "0.30"),
}


@pytest.mark.django_db
@pytest.mark.parametrize("comparison", ["absolute", "rounding"])
def test_results_exactly_at_a_limit_pass_and_their_test_passes(users, comparison):
    manager, qa, analyst = users["manager"], users["qa"], users["analyst"]
    product = product_create(manager, code="XAL", name="Invented exact-limit oil", oil_type="maize")
    draft = specification_create(
        manager, product, effective_from="2020-01-01",
        lines=[{"method": code, "comparison": comparison, **limits} for code, (limits, _, _) in EXACT_AT_LIMIT.items()],
    )
    specification_approve(qa, draft)
    lot = lot_create(manager, code="XAL-1", product=product, origin="production")
    sample = sample_receive(manager, sample_register(manager, lot), condition="ok", storage_place="shelf")
    tests = {t.method_code: t for t in Test.objects.filter(sample=sample)}
    test_assign_bulk(manager, list(tests.values()), assignee=analyst)
    for code, (_, inputs, reported) in EXACT_AT_LIMIT.items():
        first = result_record(analyst, tests[code], **entry(code, inputs))
        assert (first.reported, first.verdict) == (reported, PASS), code
        assert Decimal(first.value_exact) == Decimal(reported), code
        result_record(analyst, tests[code], **entry(code, {k: float(v) for k, v in inputs.items()}))  # as JSON numbers
        test = Test.objects.get(pk=tests[code].pk)
        assert (test.reported, test.verdict) == (reported, PASS), code
        assert Decimal(test.value_exact) == Decimal(reported), code


@pytest.mark.django_db
def test_duplicates_whose_mean_is_the_limit_pass_exactly(users):
    """Two replicates either side of the limit average to it exactly: 0.59 and 0.61 -> 0.6 (ISO 660)."""
    manager, qa, analyst = users["manager"], users["qa"], users["analyst"]
    product = product_create(manager, code="XAM", name="Invented mean-at-limit oil", oil_type="soybean")
    specification_approve(qa, specification_create(
        manager, product, effective_from="2020-01-01", lines=[{"method": "av", "maximum": "0.6"}]
    ))
    lot = lot_create(manager, code="XAM-1", product=product, origin="production")
    sample = sample_receive(manager, sample_register(manager, lot), condition="ok", storage_place="shelf")
    test = Test.objects.get(sample=sample)
    test_assign_bulk(manager, [test], assignee=analyst)
    # AV = V x 0.1 x 56.1 / m: 0.59 from 1.00 mL on 9.508474... is not writable; use the mass 5.61 g:
    # 0.59 mL -> 0.59, 0.61 mL -> 0.61 (ISO 660 formula, 0.1 x 56.1 / 5.61 = 1 per mL)
    assert result_record(analyst, test, **entry("av", {"sample_mass": "5.61", "sample_volume": "0.59", "titrant_concentration": "0.1"})).verdict == PASS
    assert result_record(analyst, test, **entry("av", {"sample_mass": "5.61", "sample_volume": "0.61", "titrant_concentration": "0.1"})).verdict == OOS
    test.refresh_from_db()
    assert Decimal(test.value_exact) == Decimal("0.6")
    assert test.verdict == PASS
