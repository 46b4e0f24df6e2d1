"""The OSI's temperature as the basis of its specification line and results (plugins/oxidative_stability.py,
analyses/services/specifications.py). AOCS Cd 12b-92 (found): runs at 100-140 degC, results state the
temperature ("OSI 11.7 hr at 110 degC")."""
from __future__ import annotations

import pytest

from analyses.errors import InvalidInput
from analyses.models import Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create
from analyses.services.results import result_record
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create
from tests.factories import ProductFactory, usable_instrument

pytestmark = pytest.mark.django_db


def osi_spec(users, line):
    product = ProductFactory(code="HOS", oil_type="sunflowerseed_high_oleic", created_by=users["manager"])
    return product, specification_create(users["manager"], product, effective_from="2024-01-01", lines=[line])


def test_a_line_without_a_temperature_is_refused_by_name(users):
    with pytest.raises(InvalidInput) as refused:
        osi_spec(users, {"method": "osi", "minimum": "10"})
    assert "lines.0.basis" in refused.value.fields
    assert "110" in str(refused.value.fields["lines.0.basis"])


def test_the_line_and_its_results_carry_the_temperature(users):
    product, draft = osi_spec(users, {"method": "osi", "minimum": "10", "basis": "110"})
    line = draft.lines.get()
    assert (line.basis, line.unit) == ("110", "h at 110 °C")
    specification_approve(users["qa"], draft)
    lot = lot_create(users["manager"], code="HOS-1", product=product, origin="production")
    sample = sample_receive(users["manager"], sample_register(users["manager"], lot, label="HOS-1-A"), condition="sealed", storage_place="shelf")
    [test] = test_assign_bulk(users["manager"], list(Test.objects.filter(sample=sample)), assignee=users["analyst"])
    usable_instrument("BAL-OSI", "balance", by=users["manager"])
    usable_instrument("OSI-1", "oxidative_stability", by=users["manager"])
    instruments = ["BAL-OSI", "OSI-1"]
    # a run at another temperature is no result on this line
    with pytest.raises(InvalidInput) as refused:
        result_record(users["analyst"], test, inputs={"induction_time": "9.5", "temperature": "120"}, instruments=instruments)
    assert "h at 110 °C" in str(refused.value.fields)
    # the temperature is taken from the line when the analyst leaves it out
    result_record(users["analyst"], test, inputs={"induction_time": "11.7"}, instruments=instruments)
    result_record(users["analyst"], test, inputs={"induction_time": "702 min", "temperature": "110"}, instruments=instruments)
    test = Test.objects.get(pk=test.pk)
    assert (test.reported, test.unit, test.verdict) == ("11.7", "h at 110 °C", "pass")
