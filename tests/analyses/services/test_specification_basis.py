"""The FFA basis a specification line carries (analyses/services/specifications.py) and the
results entered against it (analyses/services/results.py).

Conventional basis (plugins/codex.py; AOCS Ca 5a-40 from memory, partly seen in copies): palm oils
as palmitic, coconut and palm kernel as lauric, the rest as oleic. Factors, AOCS Ca 5a-40 (found):
28.2 oleic, 25.6 palmitic, 20.0 lauric.
"""
from __future__ import annotations

import pytest

from analyses.errors import InvalidInput
from analyses.models import AuditEntry, Test
from analyses.services.assignments import test_assign_bulk
from analyses.services.lots import lot_create
from analyses.services.results import result_record
from analyses.services.samples import sample_receive, sample_register
from analyses.services.specifications import specification_approve, specification_create, specification_revise
from tests.analyses.lab_setup import entry
from tests.factories import ProductFactory

pytestmark = pytest.mark.django_db


def draft(users, oil_type: str, lines: list[dict]):
    product = ProductFactory(oil_type=oil_type, created_by=users["manager"])
    return specification_create(users["manager"], product, effective_from="2024-01-01", lines=lines)


def ffa_line(specification):
    return specification.lines.get(method_code="ffa")


@pytest.mark.parametrize(
    ("oil_type", "line", "basis"),
    [
        ("soybean", {"maximum": "0.1"}, "oleic"),
        ("palm", {"maximum": "0.1"}, "palmitic"),  # the product's oil type decides
        ("coconut", {"maximum": "0.1"}, "lauric"),
        ("palm_kernel", {"maximum": "0.1"}, "lauric"),
        ("palm", {"maximum": "0.1", "basis": "oleic"}, "oleic"),  # a basis given is kept
        ("soybean", {"maximum": "0.1", "basis": "Palmitic"}, "palmitic"),
        ("palm", {"codex_oil_type": "olive_refined"}, "oleic"),  # the Codex oil type comes first
    ],
)
def test_the_line_carries_the_basis_and_its_unit_follows(users, oil_type, line, basis):
    specification = draft(users, oil_type, [{"method": "ffa", **line}])
    stored = ffa_line(specification)
    assert stored.basis == basis
    assert stored.unit == f"% as {basis}"
    entry = AuditEntry.objects.get(object_type="analyses.specificationline", object_id=str(stored.pk))
    assert entry.changes["basis"][1] == basis


def test_a_revision_keeps_the_basis(users):
    specification = draft(users, "palm", [{"method": "ffa", "maximum": "0.1"}])
    specification_approve(users["qa"], specification)
    revision = specification_revise(users["manager"], specification, effective_from="2025-01-01")
    assert (ffa_line(revision).basis, ffa_line(revision).unit) == ("palmitic", "% as palmitic")


@pytest.mark.parametrize(
    "line",
    [
        {"method": "ffa", "maximum": "0.1", "basis": "stearic"},
        {"method": "pv", "maximum": "10", "basis": "oleic"},  # PV has no basis to choose
    ],
)
def test_a_basis_the_method_does_not_have_is_refused_by_name(users, line):
    with pytest.raises(InvalidInput) as refused:
        draft(users, "palm", [line])
    assert list(refused.value.fields) == ["lines.0.basis"]


@pytest.fixture
def palm_ffa_test(users) -> Test:
    """An FFA test on refined palm oil against an invented limit of 0.1 % as palmitic."""
    specification = draft(users, "palm", [{"method": "ffa", "maximum": "0.1"}])
    specification_approve(users["qa"], specification)
    lot = lot_create(users["manager"], code="PO-1", product=specification.product, origin="production")
    sample = sample_receive(
        users["manager"], sample_register(users["manager"], lot, label="PO-1-A"), condition="sealed", storage_place="shelf 1"
    )
    (test,) = test_assign_bulk(users["manager"], list(sample.tests.all()), assignee=users["analyst"])
    return test


def test_a_result_without_a_basis_takes_the_line_s(users, palm_ffa_test):
    # 56.4 g with 0.1 mol/L NaOH (Ca 5a-40 table, found), 2.0 mL: 2.0 x 0.1 x 25.6 / 56.4 = 0.0908 % as palmitic
    inputs = {"sample_mass": "56.4", "sample_volume": "2.0", "titrant_concentration": "0.1"}
    keywords = entry("ffa", inputs)  # the 0.1 mol/L NaOH comes from a standardised lot (issue 9)
    result = result_record(users["analyst"], palm_ffa_test, **keywords)
    assert result.unit == "% as palmitic"
    assert result.value == pytest.approx(2.0 * 0.1 * 25.6 / 56.4, rel=1e-12)
    assert result.reported == "0.09" and result.verdict == "pass"
    assert result.inputs == keywords["inputs"]  # kept as entered: no basis added


def test_a_result_on_another_basis_is_refused(users, palm_ffa_test):
    inputs = {"sample_mass": "56.4", "sample_volume": "2.0", "titrant_concentration": "0.1", "fatty_acid_basis": "oleic"}
    with pytest.raises(InvalidInput) as refused:
        result_record(users["analyst"], palm_ffa_test, **entry("ffa", inputs))
    assert "% as oleic" in refused.value.fields["inputs"][0] and "% as palmitic" in refused.value.fields["inputs"][0]
    named = {**inputs, "fatty_acid_basis": "palmitic"}
    assert result_record(users["analyst"], palm_ffa_test, **entry("ffa", named)).unit == "% as palmitic"
