"""Specifications: Codex defaults, field-named line errors, approval, and versioning
(an approved specification is never edited; a change is a new version)."""
from __future__ import annotations

import datetime as dt

import pytest

from analyses.errors import Conflict, InvalidInput
from analyses.models import AuditEntry, Specification, SpecificationLine, SpecificationStatus
from analyses.selectors.specifications import specification_effective
from analyses.services.specifications import (
    specification_approve,
    specification_create,
    specification_lines_replace,
    specification_revise,
)

pytestmark = pytest.mark.django_db


def test_lines_adopt_the_plugins_codex_defaults(users, product):
    draft = specification_create(
        users["manager"], product, effective_from="2024-01-01",
        lines=[
            {"method": "sv", "codex_oil_type": "soybean", "release_critical": False},
            {"method": "av", "codex_oil_type": "refined"},
        ],
    )
    sv, av = draft.lines.order_by("position")
    # Codex CXS 210, soybean oil: SV 189-195 mg KOH/g (found)
    assert (sv.minimum, sv.maximum, sv.unit) == ("189", "195", "mg KOH/g")
    assert "CXS 210" in sv.limits_source and "soybean" in sv.limits_source
    assert sv.release_critical is False
    # CXS 210 appendix / CXS 19: acid value of refined oils at most 0.6 mg KOH/g (found)
    assert (av.minimum, av.maximum) == ("", "0.6")
    assert draft.status == SpecificationStatus.DRAFT and draft.version == 1


@pytest.mark.parametrize(
    ("line", "field"),
    [
        ({"method": "xx", "maximum": "1"}, "lines.0.method"),
        ({"method": "av"}, "lines.0.minimum"),
        ({"method": "av", "minimum": "0.6", "maximum": "0.1"}, "lines.0.maximum"),
        ({"method": "av", "maximum": "abc"}, "lines.0.maximum"),
        ({"method": "av", "maximum": "0." + "1" * 40}, "lines.0.maximum"),  # 42 characters: more than a line keeps
        ({"method": "av", "maximum": "1" * 41}, "lines.0.maximum"),
        ({"method": "av", "maximum": "1E-999999999"}, "lines.0.maximum"),  # written out: a billion characters
        ({"method": "av", "minimum": "1E+999999999"}, "lines.0.minimum"),
        ({"method": "av", "maximum": "1E-39"}, "lines.0.maximum"),  # 41 characters written out
        ({"method": "av", "codex_oil_type": "soybean"}, "lines.0.codex_oil_type"),  # no AV default for soybean
        ({"method": "av", "codex_oil_type": "refined", "maximum": "1"}, "lines.0.codex_oil_type"),
        ({"method": "av", "maximum": "1", "comparison": "nearest"}, "lines.0.comparison"),
        ({"method": "av", "maximum": "1", "turnaround_days": -1}, "lines.0.turnaround_days"),
        ({"method": "av", "maximum": "1", "colour": "red"}, "lines.0.colour"),
    ],
)
def test_a_bad_line_names_its_field_and_nothing_is_written(users, product, line, field):
    before = (Specification.objects.count(), AuditEntry.objects.count())
    with pytest.raises(InvalidInput) as caught:
        specification_create(users["manager"], product, effective_from="2024-01-01", lines=[line])
    assert list(caught.value.fields) == [field]
    assert (Specification.objects.count(), AuditEntry.objects.count()) == before


def test_a_method_appears_once_and_a_specification_needs_lines(users, product):
    with pytest.raises(InvalidInput) as caught:
        specification_create(
            users["manager"], product, effective_from="2024-01-01",
            lines=[{"method": "av", "maximum": "1"}, {"method": "av", "maximum": "2"}],
        )
    assert list(caught.value.fields) == ["lines.1.method"]
    with pytest.raises(InvalidInput) as caught:
        specification_create(users["manager"], product, effective_from="2024-01-01", lines=[])
    assert list(caught.value.fields) == ["lines"]
    with pytest.raises(InvalidInput) as caught:
        specification_create(users["manager"], product, effective_from="last tuesday", lines=[{"method": "av", "maximum": "1"}])
    assert list(caught.value.fields) == ["effective_from"]


def test_an_approved_specification_is_never_edited(users, specification):
    assert specification.status == SpecificationStatus.APPROVED
    assert specification.approved_by == users["qa"]
    with pytest.raises(Conflict, match="already approved"):
        specification_approve(users["qa"], specification)
    with pytest.raises(Conflict, match="revise"):
        specification_lines_replace(users["manager"], specification, lines=[{"method": "av", "maximum": "5"}])
    # the model refuses too, whoever calls it
    specification.note = "quietly changed"
    with pytest.raises(Conflict):
        specification.save()
    line = specification.lines.get(method_code="av")
    line.maximum = "5"
    with pytest.raises(Conflict):
        line.save()
    with pytest.raises(Conflict):
        line.delete()
    with pytest.raises(Conflict):
        SpecificationLine.objects.create(specification=specification, method_code="sv", unit="mg KOH/g", maximum="1")
    stored = Specification.objects.get(pk=specification.pk)
    assert stored.note == ""
    assert stored.lines.get(method_code="av").maximum == "0.6"


def test_a_revision_is_a_new_version_and_the_old_one_stays(users, specification):
    revision = specification_revise(users["manager"], specification, effective_from="2030-01-01", note="tighter PV")
    assert revision.version == 2
    assert revision.revised_from == specification
    assert revision.status == SpecificationStatus.DRAFT
    assert [(l.method_code, l.maximum) for l in revision.lines.order_by("position")] == [("av", "0.6"), ("pv", "10.0")]
    specification_lines_replace(
        users["manager"], revision,
        lines=[{"method": "av", "codex_oil_type": "refined"}, {"method": "pv", "maximum": "5.0", "comparison": "rounding"}],
    )
    specification_approve(users["qa"], revision)
    assert Specification.objects.get(pk=specification.pk).lines.get(method_code="pv").maximum == "10.0"
    assert Specification.objects.get(pk=revision.pk).lines.get(method_code="pv").maximum == "5.0"
    # each is in effect from its own date
    assert specification_effective(specification.product, dt.date(2029, 12, 31)) == specification
    assert specification_effective(specification.product, dt.date(2030, 1, 1)) == revision
    with pytest.raises(Conflict, match="draft"):
        specification_revise(users["manager"], specification_create(
            users["manager"], specification.product, effective_from="2031-01-01", lines=[{"method": "av", "maximum": "1"}]
        ), effective_from="2031-01-01")
